"""Pythonic front of the netlist: keyword arguments, element views, results as numpy arrays."""
import json
import math

from . import _disc
from .warm_up import PowerUpPlan, WarmUp


def _text(value):
    """A parameter value as the netlist language writes it (SI units, full precision)."""
    if isinstance(value, bool):
        return "1" if value else "0"
    if isinstance(value, (int, float)):
        if not math.isfinite(value):
            raise ValueError(f"parameter values must be finite, got {value}")
        return repr(float(value)) if isinstance(value, float) else str(value)
    return str(value)


def _pairs(pairs):
    """(time, value) pairs as the language's "t v, t v" list; strings pass unchanged."""
    if pairs is None or isinstance(pairs, str):
        return pairs
    return ", ".join(f"{_text(t)} {_text(v)}" for t, v in pairs)


def _params(**kwargs):
    """Keyword arguments to netlist parameters: None is left out, '_' becomes '-'."""
    return [(k.replace("_", "-"), _text(v)) for k, v in kwargs.items() if v is not None]


def _refuse_retired(method, given, renamed):
    """A keyword argument by a name the language no longer uses: a TypeError naming the new one."""
    for old in given:
        if old in renamed:
            raise TypeError(f"{method}(): '{old}' is now called '{renamed[old]}'")
        raise TypeError(f"{method}() got an unexpected keyword argument '{old}'")


# Circuit methods renamed in the naming pass (docs/netlist.md, "Names").
_RETIRED_METHODS = {"run_op": "run_operating_point"}


class Element:
    """One element of a circuit; its parameters read and set as attributes (netlist names with
    '_' for '-'), e.g. ``c["SR1"].plates = 6`` or ``c["RL"].resistance = 1200``."""

    def __init__(self, circuit, name):
        object.__setattr__(self, "_circuit", circuit)
        object.__setattr__(self, "name", name)

    @property
    def kind(self):
        return self._circuit._net.element_kind(self.name)

    @property
    def parameters(self):
        """Names of the settable parameters."""
        return [p.replace("-", "_") for p in self._circuit._net.parameter_names(self.name)]

    def __getattr__(self, key):
        if key.startswith("_"):
            raise AttributeError(key)
        return self._circuit._net.parameter(self.name, key.replace("_", "-"))

    def __setattr__(self, key, value):
        self._circuit._net.set_parameter(self.name, key.replace("_", "-"), float(value))

    def __repr__(self):
        values = ", ".join(f"{p}={getattr(self, p)!r}" for p in self.parameters)
        return f"<{self.kind} {self.name}: {values}>"


class Result:
    """Time points and recorded signals of one analysis.

    ``result.time`` and ``result["v:out"]`` are read-only numpy arrays that view the C++
    buffers without copying.
    """

    def __init__(self, circuit, result):
        self._circuit = circuit
        self._result = result

    @property
    def time(self):
        """Time points, s."""
        return self._result.time

    def __getitem__(self, signal):
        return self._result[signal]

    def __contains__(self, signal):
        return signal in self._result

    @property
    def signals(self):
        """Names of the recorded signals."""
        return list(self._result.signals)

    def unit(self, signal):
        """Unit symbol of a signal ("V", "A", "W", "K", ...)."""
        return self._result.unit(signal)

    @property
    def recorded_rows(self):
        """Rows the run recorded, kept or not: len(time) unless it was decimated or streamed
        to a CSV file."""
        return self._result.recorded_rows

    @property
    def stats(self):
        """Work counters: steps, Newton iterations, wall time."""
        return self._result.stats

    @property
    def failures(self):
        """Runaways and destructions, in order of time: dicts with the keys of report.json's
        ``failures`` (kind, body, time_s, temperature_K, fails_to, cause, verdict, ...)."""
        return self._result.failures

    @property
    def failed(self):
        """True when a plate was destroyed; the run ended at that step."""
        return self._result.failed

    def report(self):
        """The supply report as a dict with the fields of report.json (docs/report.md)."""
        return json.loads(self._circuit._net.report_json(self._result))

    def report_text(self):
        """The supply report as printed by ``disc run``."""
        return self._circuit._net.report_text(self._result)

    def to_csv(self, path):
        """Writes every signal to a CSV file (header 'name [unit]')."""
        self._result.to_csv(str(path))

    def __repr__(self):
        return f"<Result: {len(self.time)} points, signals {self.signals}>"


class Circuit:
    """A supply: elements, output, plate types and analyses.

    Build it in code with the netlist language's names and checks, or get one from
    :func:`disc.load` / :func:`disc.parse`. Values are in SI units (V, A, ohm, F, H, s, K);
    strings with units are accepted too ("4.7k", "100uF", "30degC").
    """

    def __init__(self, name="<python>", _net=None):
        self._net = _net if _net is not None else _disc.Netlist(name)

    # -- elements -------------------------------------------------------------------------
    def _add(self, kind, name, nodes, **params):
        self._net.add(kind, name, list(nodes), _params(**params))
        return Element(self, name)

    def resistor(self, name, a, b, resistance):
        """Resistor between nodes a and b; resistance in ohm."""
        return self._add("resistor", name, (a, b), resistance=resistance)

    def capacitor(self, name, a, b, capacitance):
        """Capacitor; capacitance in F."""
        return self._add("capacitor", name, (a, b), capacitance=capacitance)

    def inductor(self, name, a, b, inductance, resistance=None):
        """Inductor; inductance in H, winding resistance in ohm."""
        return self._add("inductor", name, (a, b), inductance=inductance, resistance=resistance)

    def coupling(self, name, first, second, k):
        """Magnetic coupling 0 < k <= 1 between two inductors (by name)."""
        return self._add("coupling", name, (first, second), k=k)

    def transformer(self, name, p1, n1, p2, n2, ratio, r1=None, r2=None, leakage1=None,
                    leakage2=None, magnetizing=None):
        """Two-winding transformer; ratio = N1/N2; resistances in ohm, inductances in H."""
        return self._add("transformer", name, (p1, n1, p2, n2), ratio=ratio, r1=r1, r2=r2,
                         leakage1=leakage1, leakage2=leakage2, magnetizing=magnetizing)

    def voltage(self, name, p, n, dc=None, amplitude=None, rms=None, frequency=None, phase=None,
                offset=None, points=None, on=None, off=None, resistance=None, inductance=None,
                schedule=None):
        """Voltage source: dc=V, or a sine (amplitude= or rms=, frequency= Hz, phase= deg,
        offset=), or points=[(t, v), ...]; optional on=/off= times and source impedance.
        schedule=[(t, level), ...] turns a dc=, amplitude= or rms= source up like a variac: the
        level (in the sense given: rms, peak or dc) at each time, linear in between."""
        return self._add("voltage", name, (p, n), dc=dc, amplitude=amplitude, rms=rms,
                         frequency=frequency, phase=phase, offset=offset, points=_pairs(points),
                         on=on, off=off, resistance=resistance, inductance=inductance,
                         schedule=_pairs(schedule))

    def mains(self, name, p, n, rms, frequency, resistance=None, inductance=None, on=None,
              schedule=None):
        """Mains supply: rms volts at frequency Hz behind its source impedance; schedule=
        [(t, rms), ...] for a variac between it and the set."""
        return self.voltage(name, p, n, rms=rms, frequency=frequency, resistance=resistance,
                            inductance=inductance, on=on, schedule=schedule)

    def current(self, name, p, n, dc=None, amplitude=None, rms=None, frequency=None, phase=None,
                offset=None, points=None, on=None, off=None, schedule=None):
        """Current source from p through the source to n; same waveforms as voltage()."""
        return self._add("current", name, (p, n), dc=dc, amplitude=amplitude, rms=rms,
                         frequency=frequency, phase=phase, offset=offset, points=_pairs(points),
                         on=on, off=off, schedule=_pairs(schedule))

    def battery(self, name, p, n, emf, resistance=None):
        """Battery: EMF in V behind its internal resistance in ohm."""
        return self._add("battery", name, (p, n), emf=emf, resistance=resistance)

    def diode(self, name, anode, cathode, saturation_current=None, ideality=None,
              series_resistance=None, junction_capacitance=None, built_in_potential=None,
              grading_exponent=None, transit_time=None, breakdown_voltage=None,
              breakdown_current=None, thermal_resistance=None, heat_capacity=None,
              temperature=None, reference_temp=None, **retired):
        """Silicon diode: saturation current (A), ideality, series resistance (ohm), zero-bias
        junction capacitance (F), built-in potential (V), grading exponent, transit time (s),
        reverse breakdown voltage (V) and the current there (A), junction-to-ambient thermal
        resistance (K/W) and heat capacity (J/K), temperature (K; default the ambient), and the
        reference temperature the saturation current is given at (K; default 300.15)."""
        _refuse_retired("diode", retired, {"nominal_temperature": "reference_temp"})
        return self._add("diode", name, (anode, cathode), saturation_current=saturation_current,
                         ideality=ideality, series_resistance=series_resistance,
                         junction_capacitance=junction_capacitance,
                         built_in_potential=built_in_potential, grading_exponent=grading_exponent,
                         transit_time=transit_time, breakdown_voltage=breakdown_voltage,
                         breakdown_current=breakdown_current,
                         thermal_resistance=thermal_resistance, heat_capacity=heat_capacity,
                         temperature=temperature, reference_temp=reference_temp)

    def stack(self, name, anode, cathode, type, plates=None, parallel=None, mode=None,
              spread=None, seed=None, forming=None, stored_years=None, stored_temp=None,
              hours=None, age_temp=None, cooling=None, heat_node=None, **spreads):
        """Plate stack: plates in series per arm, parallel arms; mode 'per-plate' or 'lumped';
        lognormal spread (or spread_js, spread_rs, spread_gsh) drawn with seed; initial forming
        or stored_years at stored_temp; ageing hours at age_temp; cooling factor; heat_node,
        the heat node (by name) its plates lose their heat to instead of the ambient."""
        return self._add("stack", name, (anode, cathode), type=type, plates=plates,
                         parallel=parallel, mode=mode, spread=spread, seed=seed, forming=forming,
                         stored_years=stored_years, stored_temp=stored_temp, hours=hours,
                         age_temp=age_temp,
                         cooling=cooling, heat_node=heat_node, **spreads)

    def heat_node(self, name, capacity, to_ambient=None):
        """A heat node (a heat sink, a chassis, a cabinet's air): heat capacity (J/K) and thermal
        resistance straight to the ambient (K/W; None: none). Probes temp, loss, stored."""
        return self._add("heat-node", name, (), capacity=capacity, to_ambient=to_ambient)

    def heat_path(self, name, first, second, resistance):
        """A thermal resistance (K/W) between two heat nodes; second may be "ambient". Probe
        flow (W from first to second)."""
        return self._add("heat-path", name, (first, second), resistance=resistance)

    def heat_source(self, name, node, power):
        """A steady heat input (W) into a heat node: a valve's heaters, a transformer's core
        loss. Heat, not an electrical loss: the report leaves it out of the losses."""
        return self._add("heat-source", name, (node,), power=power)

    def lamp(self, name, a, b, rated_power, rated_voltage, filament_temp=None, exponent=None,
             time_constant=None, conduction=None):
        """Tungsten filament lamp (a series current limiter) rated rated_power W at
        rated_voltage V; filament_temp (K at the rating), exponent (R ~ T^exponent),
        time_constant (s) and conduction (fraction not radiated) as in docs/netlist.md."""
        return self._add("lamp", name, (a, b), rated_power=rated_power,
                         rated_voltage=rated_voltage, filament_temp=filament_temp,
                         exponent=exponent, time_constant=time_constant, conduction=conduction)

    def valve_load(self, name, plus, minus, rated_current, rated_voltage, exponent=None,
                   warm_up=None, on=None, warmth=None):
        """HT load of warming valves: rated_current A at rated_voltage V when warm, i ~
        v^exponent (1.5: space-charge law); warm_up time constant (s), heaters on at on (s),
        starting warm-up state warmth (0 cold to 1 warm)."""
        return self._add("valve-load", name, (plus, minus), rated_current=rated_current,
                         rated_voltage=rated_voltage, exponent=exponent, warm_up=warm_up, on=on,
                         warmth=warmth)

    def thermistor(self, name, a, b, resistance, b_constant, reference_temp=None,
                   dissipation=None, time_constant=None, max_current=None):
        """NTC surge thermistor: resistance (ohm) at reference_temp (K, default 25 degC),
        B constant (K), dissipation constant (W/K), thermal time constant (s), rated current
        (A rms) as in docs/netlist.md."""
        return self._add("thermistor", name, (a, b), resistance=resistance,
                         b_constant=b_constant, reference_temp=reference_temp,
                         dissipation=dissipation, time_constant=time_constant,
                         max_current=max_current)

    def electrolytic(self, name, plus, minus, capacitance, rated_voltage, esr=None,
                     ripple_current=None, leakage=None, deformed_leakage=None,
                     forming_time=None, forming=None, stored_years=None, storage_years=None):
        """Electrolytic capacitor with ESR (ohm), working voltage (V), ripple-current rating
        (A rms), leakage (A), and an oxide forming state (docs/netlist.md)."""
        return self._add("electrolytic", name, (plus, minus), capacitance=capacitance,
                         rated_voltage=rated_voltage, esr=esr, ripple_current=ripple_current,
                         leakage=leakage, deformed_leakage=deformed_leakage,
                         forming_time=forming_time, forming=forming, stored_years=stored_years,
                         storage_years=storage_years)

    def switch(self, name, a, b, close=None, open=None, on_resistance=None, off_resistance=None,
               **retired):
        """Switch closing and/or opening at the given times (s); its resistance closed and open
        (ohm; default 1 mohm and 1 Gohm)."""
        _refuse_retired("switch", retired, {"ron": "on_resistance", "roff": "off_resistance"})
        return self._add("switch", name, (a, b), close=close, open=open,
                         on_resistance=on_resistance, off_resistance=off_resistance)

    # -- circuit-level statements --------------------------------------------------------
    def output(self, positive, negative, load, kind=None):
        """Names the supply's DC output and its load element (enables the supply report)."""
        text = f"output {positive} {negative} load={load}"
        if kind:
            text += f" kind={kind}"
        self._net.statement(text)

    def add_plate_type(self, plate_type):
        """Makes a PlateType (for example ``fit.type`` from fit_plate) usable by name in
        ``stack(..., type=name)``."""
        self._net.add_plate_type(plate_type)
        return self

    def statement(self, text):
        """Adds any statement of the netlist language (plate-type, ambient, record, ...)."""
        self._net.statement(text)

    def __getitem__(self, name):
        if name not in self._net.element_names():
            raise KeyError(f"no element named '{name}'")
        return Element(self, name)

    @property
    def elements(self):
        return list(self._net.element_names())

    @property
    def nodes(self):
        return list(self._net.nodes())

    def clone(self):
        """A deep copy with the same parameters, to change and run independently."""
        return Circuit(_net=self._net.clone())

    def check(self):
        """Whole-circuit checks (dangling nodes, floating parts, voltage loops)."""
        self._net.check()

    # -- analyses -------------------------------------------------------------------------
    def run_transient(self, stop, record=None, method="trapezoidal", start="cold", max_step=0.0,
                      reltol=0.0, abstol=0.0, temperature_abstol=0.0, progress=None,
                      record_from=0.0, record_spacing=0.0, csv=None, max_steps=0):
        """Transient from 0 to stop (s). method: 'trapezoidal', 'bdf2', 'tr-bdf2' or 'ida';
        start: 'cold' or 'operating-point'; reltol (default 1e-3), abstol (volts and amperes, default 1e-6) and
        temperature_abstol (kelvin, default 1e-4), 0 for the defaults. The run works on a copy
        of the circuit taken at the call and releases the GIL; Ctrl-C stops it. progress(time,
        stop), if given, is called at most every 0.1 s of wall time; returning False cancels the
        run (KeyboardInterrupt).

        record_from (s): rows from this time on; record_spacing (s): a row only when at least
        this long after the last one kept (the first and the last row always; 0: every step).
        csv: a path the rows are written to as the run goes; the Result then keeps only the
        end the supply report reads and a few thousand rows before it (bounded memory on any
        stop time; ``Result.recorded_rows`` counts them all).

        max_steps: the step budget (0: the default, docs/limits.md). A run that cannot reach
        its stop within it is refused before it starts (ValueError with the estimate); raise
        it to force the run, or use run_warm_up for minutes to hours of warming."""
        res = self._net.run_transient(float(stop), list(record or []), method, start,
                                      float(max_step), float(reltol), float(abstol),
                                      float(temperature_abstol), progress,
                                      record_from=float(record_from),
                                      record_spacing=float(record_spacing),
                                      csv=str(csv) if csv is not None else "",
                                      max_steps=max_steps)
        return Result(self, res)

    def run_periodic(self, record=None, reltol=0.0, at=0.0):
        """The periodic steady state: one settled mains period (times from 0), found by Newton
        shooting with the slow states (temperatures, forming) held. reltol defaults to 1e-5
        (0 for the default); at is the slow clock (s) where schedules and valve warm-up are
        read."""
        return Result(self, self._net.run_periodic(list(record or []), float(reltol), float(at)))

    def run_warm_up(self, duration, record=None, reltol=0.0, progress=None):
        """The slow-state envelope over duration (s): one row per slow step, with each recorded
        signal's period mean under its own name and "min(...)"/"max(...)" over the period
        (record empty: every slow state). Returns (result, stopped_by, failures): why it ended
        early ("" when it ran to the end) and the failure verdicts (a destroyed plate ends it).
        progress(time, duration) as for run_transient."""
        res, stopped, failures = self._net.run_warm_up(float(duration), list(record or []),
                                                       float(reltol), progress)
        return Result(self, res), stopped, list(failures)

    def warm_up(self, duration, record=None, reltol=0.0, progress=None):
        """A warm-up over duration (s) as the netlist's ``run warm-up`` makes it: a WarmUp with
        the series (record plus the run's own signals and every stack's temperature, forming,
        leakage and dissipation), the trends, the time each rating is first reached
        (``first_limits``), the failures and the supply report at the end. progress as for
        run_transient."""
        res, summary, report = self._net.warm_up(float(duration), list(record or []),
                                                 float(reltol), progress)
        return WarmUp(Result(self, res), summary, report)

    def plan_power_up(self, stack, source=None, *, margin=None, first_level=None,
                      smallest_step=None, turn=None, min_hold=None, max_hold=None,
                      settle_leakage=None, settle_temperature=None, max_time=None,
                      max_steps=None, max_slow_step=None, progress=None):
        """Plans the variac schedule that brings ``stack`` up (docs/power-up.md), as
        ``disc power-up`` does: a PowerUpPlan. ``source``: the variac-fed voltage source
        (default: the one sine source). Options left at None keep the library's defaults:
        margin (fraction of each limit used, 0.9), first_level (0.1) and smallest_step (0.05)
        as fractions of full, turn (10 s), min_hold (60 s), max_hold (1800 s), settle_leakage
        (0.05 per minute), settle_temperature (0.5 K per minute), max_time (s, 8 h: not up by
        then, replace), max_steps (12), max_slow_step (60 s). progress(line) is called before
        each envelope run; returning False cancels (KeyboardInterrupt)."""
        return PowerUpPlan(_disc.plan_power_up(
            self._net, stack, source or "", margin=margin, first_level=first_level,
            smallest_step=smallest_step, turn=turn, min_hold=min_hold, max_hold=max_hold,
            settle_leakage=settle_leakage, settle_temperature=settle_temperature,
            max_total=max_time, max_steps=max_steps, max_slow_step=max_slow_step,
            progress=progress))

    def run_operating_point(self, record=None):
        """DC operating point (one time point)."""
        return Result(self, self._net.run_operating_point(list(record or [])))

    def __getattr__(self, key):
        # Only reached for names the class lacks: a renamed method's old name says the new one.
        if key in _RETIRED_METHODS:
            raise AttributeError(f"Circuit.{key}() is now called Circuit.{_RETIRED_METHODS[key]}()")
        raise AttributeError(f"'Circuit' object has no attribute '{key}'")

    def run(self, progress=None):
        """Runs the analyses the netlist names; returns (results, report dict or None).
        progress as for run_transient."""
        results, report = self._net.run(progress)
        return [Result(self, r) for r in results], (json.loads(report) if report else None)

    def write_files(self, folder):
        """Runs the netlist and writes report.json, report.html, CSV and SVG files."""
        return list(self._net.write_files(str(folder)))

    def __repr__(self):
        return f"<Circuit {self._net.path!r}: {len(self.elements)} elements>"
