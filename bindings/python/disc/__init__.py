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
from . import _disc
from ._errors import NetlistError, SimulationError
from .circuit import Circuit, Element, Result

__version__ = "0.1.0"

PlateType = _disc.PlateType


def load(path):
    """Reads and checks a .disc netlist file; raises NetlistError with file, line and column."""
    return Circuit(_net=_disc.load(str(path)))


def parse(text, name="<text>"):
    """Parses netlist text."""
    return Circuit(_net=_disc.parse(text, name))


def plate_types():
    """The built-in plate types."""
    return list(_disc.builtin_plate_types())


def plate_type(name):
    """A built-in plate type by name."""
    for t in _disc.builtin_plate_types():
        if t.name == name:
            return t
    raise ValueError(f"unknown plate type '{name}'")


def reference_circuit(name):
    """A reference circuit built in code: 'bridge', 'selenium-bridge', 'half-wave', ..."""
    return Circuit(_net=_disc.reference_circuit(name))


def load_plate_types(path):
    """Plate types from a JSON file in the library's schema."""
    return list(_disc.load_plate_types(str(path)))


__all__ = ["Circuit", "Element", "Result", "PlateType", "NetlistError", "SimulationError",
           "load", "parse", "plate_types", "plate_type", "load_plate_types", "reference_circuit"]
