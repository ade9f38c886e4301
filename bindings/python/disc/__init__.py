"""libdisc: simulate power supplies built with selenium and copper-oxide plate rectifiers.

    import disc
    c = disc.load("netlists/table-radio-half-wave.disc")
    r = c.run_transient(stop=2.0, record=["v:c"])
    r["v:c"]            # numpy array, a view of the C++ buffer
    r.report()          # the supply report as a dict (fields of report.json)

A simulation plans work; it is no substitute for local electrical codes, the maker's data or a
qualified technician. Mains, valve high voltages and charged capacitors can kill; overheated
selenium gives off toxic fumes.
"""
import pathlib

from . import _disc
from ._errors import Error, InputError, NetlistError, SimulationError, TraceError
from .campaign import CampaignResult, campaign
from .circuit import Circuit, Element, Result
from .warm_up import PowerUpPlan, WarmUp

__version__ = _disc.__version__  # the project() version in CMakeLists.txt

PlateType = _disc.PlateType
PlateCurve = _disc.PlateCurve
Trace = _disc.Trace
judge_plate_health = _disc.judge_plate_health


def load(path, sandbox=False):
    """Reads and checks a .disc netlist file; raises NetlistError with file, line and column.
    With sandbox=True, include and use read only files inside the netlist's folder (for
    netlists from other people, docs/limits.md)."""
    return Circuit(_net=_disc.load(str(path), bool(sandbox)))


def parse(text, name="<text>", sandbox=False):
    """Parses netlist text; with sandbox=True, include and use stay inside the folder of
    `name`."""
    return Circuit(_net=_disc.parse(text, name, bool(sandbox)))


def plate_types():
    """The built-in plate types."""
    return list(_disc.builtin_plate_types())


def plate_type(name):
    """A built-in plate type by name."""
    for t in _disc.builtin_plate_types():
        if t.name == name:
            return t
    raise ValueError(f"unknown plate type '{name}'")


def example_path(name=None):
    """The folder of the example netlists and traces that come with the package (a
    pathlib.Path), or the file ``name`` in it ("table-radio-half-wave.disc",
    "traces/stored-stack-sweep.csv"), so a notebook or script finds them wherever it is opened:
    from the build tree, after ``cmake --install`` or after ``pip install``."""
    folder = pathlib.Path(__file__).resolve().parent / "examples"
    if not folder.is_dir():
        raise FileNotFoundError(
            f"the disc package at {folder.parent} has no examples folder: build the _disc target "
            "(it copies netlists/ into the package) or reinstall the package")
    if name is None:
        return folder
    path = folder / name
    if not path.is_file():
        known = sorted(p.relative_to(folder).as_posix() for p in folder.rglob("*") if p.is_file())
        raise FileNotFoundError(f"no example '{name}' in {folder}; the examples are: "
                                + ", ".join(known))
    return path


def reference_circuit(name):
    """A reference circuit built in code: 'bridge', 'selenium-bridge', 'half-wave', ..."""
    return Circuit(_net=_disc.reference_circuit(name))


def load_plate_types(path):
    """Plate types from a JSON file in the library's schema."""
    return list(_disc.load_plate_types(str(path)))


def load_trace(path):
    """Reads a measured trace (CSV: a header such as 'time [ms], voltage [V], current [mA]');
    raises TraceError naming the line and column of a fault."""
    return _disc.load_trace(str(path))


def trace(voltage, current, time=None, temperature_c=None, source="<arrays>"):
    """A trace from arrays in SI units (V, A, s; temperature in degC). Raises TraceError, with
    the point numbered from 1 as its line, for columns of unequal length, a value that is not
    finite, a time that does not increase or a temperature below absolute zero."""
    import numpy as np

    def col(a):
        return [] if a is None else [float(x) for x in np.asarray(a, dtype=float).ravel()]

    kelvin = None if temperature_c is None else np.asarray(temperature_c, dtype=float) + 273.15
    return _disc.Trace(col(voltage), col(current), col(time), col(kelvin), source)


def fit_plate(traces, *, plates=1, like=None, material="selenium", area_cm2=None,
              name="fitted-plate", temperature_c=25.0, noise_relative=0.01, noise_floor=None,
              dynamic=True, fixed=(), bin_above=None, bins_per_direction=None, progress=None):
    """Fits a plate type to one or more traces of one plate or stack (docs/fitting.md).

    ``traces``: paths of CSV files or Trace objects (one, or a list). ``plates``: plates in
    series across the trace. ``like``: the healthy reference type, a name or a PlateType
    (default by ``material``). ``fixed``: parameter names held at the reference's values.
    Returns a PlateFit: ``type`` (usable at once in a Circuit), ``parameters`` with
    uncertainties, ``warnings``, ``health``, ``curves``; ``write(dir)`` saves the type JSON,
    the reports and the plots.

    Long traces are binned first (docs/fitting.md, "Long traces"): one of more than
    ``bin_above`` rows (default 4000; 0 never bins) into ``bins_per_direction`` voltage bins per
    direction (default 1000) if static, into at most ``bin_above`` consecutive groups if timed;
    ``binning`` of the result says how. ``progress(line)`` is called about every 0.2 s with what
    the fit is doing (False cancels: KeyboardInterrupt); the fit releases the GIL, and Ctrl-C
    stops it.
    """
    import os

    if isinstance(traces, (str, os.PathLike, _disc.Trace)):
        traces = [traces]
    loaded = [t if isinstance(t, _disc.Trace) else load_trace(t) for t in traces]
    reference = like if isinstance(like, _disc.PlateType) else None
    like_name = "" if reference is not None else (like or "")
    return _disc.fit_plate(loaded, plates, like_name, reference, list(fixed), material,
                           area_cm2 or 0.0, name, temperature_c + 273.15, noise_relative,
                           noise_floor or 0.0, dynamic, bin_above, bins_per_direction,
                           progress)


def model_current(type, trace, plates=1, temperature_c=25.0):
    """The current a plate type draws along a trace (a transient for timed traces), A."""
    return _disc.model_current(type, trace, plates, temperature_c + 273.15)


def replace_stacks(path, stacks, *, diode=None, loads=(0.5, 1.0, 1.2), target="formed"):
    """Designs a silicon diode and dropping resistor per stack so the supply of the netlist at
    ``path`` gives its original DC output (docs/replacement.md). ``stacks``: a name or a list.
    ``target``: "formed" (the stacks re-formed), "design" (as new), "present" (as described)
    or a value such as "240V". Returns a ReplacementDesign; ``netlist`` is the replacement
    netlist's text."""
    if isinstance(stacks, str):
        stacks = [stacks]
    return _disc.design_replacement(str(path), list(stacks), diode or "", [float(x) for x in loads],
                                    str(target))


__all__ = ["Circuit", "Element", "Result", "WarmUp", "PowerUpPlan", "PlateType", "PlateCurve",
           "Trace", "Error", "InputError", "NetlistError", "SimulationError", "TraceError", "load", "parse",
           "plate_types", "plate_type", "load_plate_types", "reference_circuit", "example_path",
           "load_trace", "trace", "fit_plate", "model_current", "judge_plate_health",
           "replace_stacks"]
