"""The Python module: every public function, zero-copy results, errors with locations, parity
with the command-line program, parameter sweeps and threads."""
import json
import math
import os
import pathlib
import subprocess
import threading

import numpy as np
import pytest
from conftest import need_cli, need_module

import disc

NETLISTS = pathlib.Path(__file__).resolve().parents[2] / "netlists"
EXAMPLES = sorted(p.name for p in NETLISTS.glob("*.disc") if p.name != "charger-common.disc")


def small_supply():
    c = disc.Circuit()
    c.mains("MAINS", "line", "gnd", rms=120, frequency=60, resistance=0.5)
    c.resistor("RSURGE", "line", "a", 22)
    c.stack("SR1", "a", "b", type="se-25mm-36v", plates=8)
    c.capacitor("C1", "b", "gnd", 50e-6)
    c.resistor("RL", "b", "gnd", "3.3k")
    c.output("b", "gnd", load="RL")
    return c


def test_results_are_read_only_views_of_the_engine_buffers():
    r = small_supply().run_transient(stop=0.2, record=["v:b"])
    v = r["v:b"]
    assert isinstance(v, np.ndarray) and v.dtype == np.float64
    assert v.base is not None  # a view, not a copy
    assert not v.flags.writeable
    with pytest.raises(ValueError):
        v[0] = 1.0
    assert len(r.time) == len(v)
    assert r.unit("v:b") == "V"
    assert "v:b" in r.signals
    # The same buffer each time: O(1), no copy.
    assert r["v:b"].__array_interface__["data"][0] == v.__array_interface__["data"][0]


def test_report_fields_match_report_json():
    r = small_supply().run_transient(stop=1.0)
    rep = r.report()
    assert rep["schema"] == 1
    assert rep["output"]["mean_V"] > 100
    assert rep["stacks"][0]["name"] == "SR1"
    assert any("selenium" in c for c in rep["cautions"])
    assert "OUTPUT" in r.report_text()


def test_a_run_too_short_for_the_report_says_so_in_the_netlist_words():
    # At 60 Hz the report's two whole cycles need 33.3 ms; the samples are still there to read.
    r = small_supply().run_transient(stop=0.02, record=["v:b"])
    assert len(r["v:b"]) > 0
    with pytest.raises(disc.InputError, match=r"stop=0.02 s covers 1.2 cycles of 'MAINS' "
                                              r"\(60 Hz\).*give stop=0.0333333 s or more"):
        r.report()
    with pytest.raises(disc.InputError, match=r"stop=0.03 s with record-from=0.01\d* s records 1.\d+ cycles"):
        small_supply().run_transient(stop=0.03, record_from=0.01).report()
    assert small_supply().run_transient(stop=0.034).report()["frequency_Hz"] == 60


@pytest.mark.parametrize("name", EXAMPLES)
def test_parity_with_the_command_line(name, tmp_path):
    # The same figures to the last digit of the JSON.
    cli = need_cli()
    subprocess.run([cli, "run", "-q", str(NETLISTS / name), "-o", str(tmp_path)], check=True)
    from_cli = json.loads((tmp_path / "report.json").read_text())
    _, from_python = disc.load(NETLISTS / name).run()
    for d in (from_cli, from_python):
        d["run"].pop("wall_s")
    assert from_python == from_cli


def test_errors_carry_file_line_and_column(tmp_path):
    with pytest.raises(disc.NetlistError) as e:
        disc.parse("voltage V1 a gnd dc=10V\nresistor R1 a gnd 1q\n", "mine.disc")
    assert (e.value.file, e.value.line, e.value.column) == ("mine.disc", 2, 19)
    assert isinstance(e.value, ValueError)
    bad = tmp_path / "bad.disc"
    bad.write_text("capacitor C1 a gnd -1u\n")
    with pytest.raises(disc.NetlistError) as e:
        disc.load(bad)
    assert e.value.file == str(bad) and e.value.line == 1
    c = disc.Circuit()
    with pytest.raises(disc.NetlistError, match="must be positive"):
        c.resistor("R1", "a", "gnd", -5)
    with pytest.raises(disc.NetlistError, match="did you mean 'capacitance'"):
        c._add("capacitor", "C9", ("a", "gnd"), capacitence=1e-6)


def test_simulation_errors_are_typed():
    c = disc.Circuit()
    # The source's resistance keeps it from closing an ideal loop with the capacitors (refused
    # before any run); node b then has no DC path, which only the operating point finds.
    c.voltage("V1", "a", "gnd", dc=1, resistance=1)
    c.capacitor("C1", "a", "b", 1e-6)
    c.capacitor("C2", "b", "gnd", 1e-6)
    with pytest.raises(disc.SimulationError, match="no DC path"):
        c.run_operating_point()


def test_parameters_by_name_drive_a_sweep_without_reparsing():
    c = small_supply()
    assert c["SR1"].plates == 8
    means = []
    for r_load in (2200, 3300, 4700):
        c["RL"].resistance = r_load
        means.append(c.run_transient(stop=0.5, record=["v:b"])["v:b"][-200:].mean())
    assert means[0] < means[1] < means[2]  # lighter load, higher voltage
    with pytest.raises(ValueError, match="did you mean 'plates'"):
        c["SR1"].platez = 3
    assert "stored_years" in c["SR1"].parameters


def test_diode_keywords_are_the_netlist_names():
    c = disc.Circuit()
    c.voltage("V1", "a", "gnd", dc=1.0)
    d = c.diode("D1", "a", "k", saturation_current="5n", ideality=1.8, series_resistance=0.05,
                junction_capacitance="33p", built_in_potential=0.65, grading_exponent=0.33,
                transit_time=2e-6, breakdown_voltage=600, breakdown_current=1e-5,
                thermal_resistance=50, heat_capacity=0.2, temperature=313.15)
    c.resistor("RK", "k", "gnd", 1000)
    assert d.parameters == ["saturation_current", "ideality", "series_resistance",
                            "junction_capacitance", "built_in_potential", "grading_exponent",
                            "transit_time", "breakdown_voltage", "breakdown_current",
                            "thermal_resistance", "heat_capacity", "temperature",
                            "reference_temp"]
    assert d.saturation_current == pytest.approx(5e-9)
    assert d.junction_capacitance == pytest.approx(33e-12)
    d.series_resistance = 0.1
    assert d.series_resistance == pytest.approx(0.1)
    # The retired short names are errors that name the new word.
    with pytest.raises(ValueError, match="'n' is now called 'ideality'"):
        d.n = 2.0
    with pytest.raises(ValueError, match="'is' is now called 'saturation-current'"):
        c.statement("diode D2 a k is=5n")


def test_names_of_the_naming_pass_and_their_old_spellings():
    # The switch's resistances by their own names: closed, 2 ohm into 2 ohm halves 1 V (Ohm's
    # law); the old short names, the old method word and run_op() are errors naming the new one.
    c = disc.Circuit()
    c.voltage("V1", "a", "gnd", dc=1)
    c.switch("S1", "a", "b", open=1.0, on_resistance=2, off_resistance=1e6)
    c.resistor("R1", "b", "gnd", 2)
    assert c.run_operating_point(record=["v:b"])["v:b"][0] == pytest.approx(0.5, rel=1e-9)
    with pytest.raises(TypeError, match="'ron' is now called 'on_resistance'"):
        c.switch("S2", "a", "b", open=1.0, ron=2)
    with pytest.raises(TypeError, match="'roff' is now called 'off_resistance'"):
        c.switch("S2", "a", "b", open=1.0, roff=1e6)
    with pytest.raises(TypeError, match="unexpected keyword argument 'closed'"):
        c.switch("S2", "a", "b", closed=1.0)
    with pytest.raises(TypeError, match="'nominal_temperature' is now called 'reference_temp'"):
        c.diode("D1", "a", "gnd", nominal_temperature=300)
    with pytest.raises(ValueError, match="'ron' is now called 'on-resistance'"):
        c.statement("switch S3 a b open=1s ron=1")
    with pytest.raises(AttributeError, match=r"run_op\(\) is now called .*run_operating_point"):
        c.run_op()
    with pytest.raises(ValueError, match="'trap' is now called 'trapezoidal'"):
        c.run_transient(stop=1e-3, method="trap")
    assert c.run_transient(stop=1e-3, method="trapezoidal").stats["method"] == "trapezoidal"


def test_clone_is_independent():
    a = small_supply()
    b = a.clone()
    b["C1"].capacitance = 200e-6
    assert a["C1"].capacitance == pytest.approx(50e-6)
    ra = a.run_transient(stop=0.5).report()
    rb = b.run_transient(stop=0.5).report()
    assert rb["output"]["ripple_pp_V"] < ra["output"]["ripple_pp_V"]


def test_operating_point_and_csv(tmp_path):
    c = disc.parse("voltage V1 in gnd dc=12V\nresistor R1 in mid 1k\nresistor R2 mid gnd 2k\n")
    r = c.run_operating_point(record=["v:mid"])
    assert r["v:mid"][0] == pytest.approx(8.0, rel=1e-6)
    r.to_csv(tmp_path / "op.csv")
    assert (tmp_path / "op.csv").read_text().startswith("time [s],v:mid [V]")


def test_plate_types_read_derive_and_save(tmp_path):
    names = [t.name for t in disc.plate_types()]
    assert "se-25mm-square" in names and "cuox-12mm-meter" in names
    se = disc.plate_type("se-25mm-square")
    assert se.get("rms_reverse_resistive_V") == 26.0
    assert se.rated_current() == pytest.approx(0.15)
    worn = se.derive("worn", {"rs_ohm_cm2": 20.0})
    path = tmp_path / "worn.json"
    worn.save(str(path))
    loaded = disc.load_plate_types(path)
    assert loaded[0].get("rs_ohm_cm2") == 20.0
    c = small_supply()
    c.statement(f'use "{path}"')
    c.stack("SR2", "a", "b2", type="worn", plates=8)
    assert c["SR2"].plates == 8


def test_threads_give_the_same_answers_as_one_after_the_other():
    circuits = [small_supply(), small_supply()]
    circuits[1]["RL"].resistance = 2200
    serial = [c.run_transient(stop=0.3, record=["v:b"])["v:b"].copy() for c in circuits]
    out = [None, None]

    def work(k):
        out[k] = circuits[k].run_transient(stop=0.3, record=["v:b"])["v:b"].copy()

    threads = [threading.Thread(target=work, args=(k,)) for k in range(2)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    for k in range(2):
        np.testing.assert_array_equal(out[k], serial[k])


def test_plot_helpers_return_figures():
    matplotlib = need_module("matplotlib")

    matplotlib.use("Agg")
    from disc import plot

    c = small_supply()
    r = c.run_transient(stop=0.5, record=["v:b"])
    for fig in (plot.waveforms(r, ["v:b"]), plot.settled_cycle(r, ["v:b"], frequency=60),
                plot.plate_iv(r, "SR1"), plot.temperatures(r, ["SR1"]),
                plot.arm_shares(r, "SR1")):
        assert fig.axes


def test_an_interrupt_stops_a_long_run_cleanly():
    import signal
    import time

    def interrupt(*_):
        raise KeyboardInterrupt

    previous = signal.signal(signal.SIGALRM, interrupt)
    try:
        signal.setitimer(signal.ITIMER_REAL, 0.3)
        t0 = time.perf_counter()
        with pytest.raises(KeyboardInterrupt):
            small_supply().run_transient(stop=1000.0)
        assert time.perf_counter() - t0 < 10.0
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous)
    # The module is still usable afterwards.
    assert small_supply().run_transient(stop=0.05).stats["accepted_steps"] > 0


def test_absolute_tolerance_reaches_the_engine():
    # abstol tightens the absolute floors of voltages and currents (docs/engine.md): the run
    # takes more steps and settles on the same output within the default tolerance.
    loose = small_supply().run_transient(stop=0.2, record=["v:b"], reltol=1e-6)
    tight = small_supply().run_transient(stop=0.2, record=["v:b"], reltol=1e-6, abstol=1e-10)
    assert tight.stats["accepted_steps"] > loose.stats["accepted_steps"]
    assert tight["v:b"][-1] == pytest.approx(loose["v:b"][-1], rel=1e-3)


def test_reference_temperature_and_temperature_tolerance():
    # Shockley's law at the reference temperature: with the device at that temperature the
    # saturation current is the one given, so V = n kT/q ln(I/Is + 1) (A. S. Sedra and K. C.
    # Smith, Microelectronic Circuits, the diode equation). Given at 300.15 K but run at 300 K,
    # the current source's voltage differs.
    k_over_q = 1.380649e-23 / 1.602176634e-19
    volts = []
    for reference in (300.0, None):
        c = disc.Circuit()
        c.current("I1", "gnd", "a", dc=1e-3)
        c.diode("D1", "a", "gnd", saturation_current=1e-9, ideality=1.0, series_resistance=0,
                temperature=300.0, reference_temp=reference)
        r = c.run_transient(stop=1e-3, start="operating-point", record=["v:a"],
                            temperature_abstol=1e-6)
        volts.append(r["v:a"][-1])
    assert volts[0] == pytest.approx(k_over_q * 300.0 * math.log(1e-3 / 1e-9 + 1.0), rel=1e-4)
    assert abs(volts[1] - volts[0]) > 1e-4


def test_a_runaway_plate_ends_the_run_with_its_failure_events():
    # A fully deformed selenium plate in reverse across a stiff 30 V source heats faster than
    # it cools (its leakage rises with temperature): the run stops where it is destroyed.
    c = disc.Circuit()
    c.voltage("V1", "a", "gnd", dc=30, resistance=0.01)
    c.stack("SR1", "gnd", "a", type="se-25mm-square", plates=1, forming=0)
    r = c.run_transient(stop=600, record=["temp:SR1"])
    assert r.failed
    kinds = [e["kind"] for e in r.failures]
    assert kinds == ["runaway", "destroyed"]
    destroyed = r.failures[-1]
    se = disc.plate_type("se-25mm-square")
    assert destroyed["destruction_K"] == pytest.approx(se.get("destruction_temp_C") + 273.15)
    assert destroyed["fails_to"] == se.fails_to == "short"
    assert destroyed["verdict"].startswith("plate SR1#1 would fail after ")
    assert r.time[-1] < 600
    assert np.all(r["temp:SR1"] < destroyed["destruction_K"] + 15)

def test_lamp_valve_load_and_schedule_from_code():
    c = disc.Circuit()
    c.voltage("V1", "a", "gnd", dc=230, schedule=[(0, 0), ("10ms", 115), ("20ms", 230)])
    lamp = c.lamp("L1", "a", "gnd", rated_power=60, rated_voltage="230V")
    valves = c.valve_load("VL", "a", "gnd", rated_current="60mA", rated_voltage=250,
                          warm_up="20ms")
    assert lamp.time_constant == pytest.approx(0.05)
    assert "filament_temp" in lamp.parameters and "warm_up" in valves.parameters
    r = c.run_transient(stop=0.5, record=["v:a", "p:L1", "warm:VL"], reltol=1e-5)
    # The schedule's corner is a time point, its ramp linear (half way at 5 ms: 57.5 V).
    t = r.time
    assert np.isclose(t, 0.01, rtol=4e-16, atol=0).any()  # recorded at its left limit
    assert np.interp(0.005, t, r["v:a"]) == pytest.approx(57.5, rel=1e-6)
    # At its rated voltage the lamp settles at its rated power (the bulb's rating).
    assert r["p:L1"][-1] == pytest.approx(60.0, rel=1e-3)
    # The warm-up from cold: 1 - exp(-t / 20 ms) (closed form of the first-order lag).
    assert np.interp(0.1, t, r["warm:VL"]) == pytest.approx(1.0 - np.exp(-0.1 / 0.02), rel=1e-4)


def test_periodic_and_warm_up_from_python():
    # The table radio's settled period: first and last rows agree (a periodic state), and an
    # hour of warm-up raises the plates' temperature above the 30 degC ambient.
    c = disc.load(NETLISTS / "table-radio-warm-up.disc")
    p = c.run_periodic(record=["v:c"])
    v = p["v:c"]
    assert abs(v[0] - v[-1]) < 1e-3 * abs(v[0])
    assert p.time[-1] == pytest.approx(1 / 60, rel=1e-9)
    r, stopped, failures = c.run_warm_up(3600.0, record=["temp:SR1", "v:c"])
    assert stopped == "" and failures == []
    t = r["temp:SR1"]
    assert t[0] == pytest.approx(303.15, abs=0.5)
    assert t[-1] > t[0] + 5.0
    assert r.time[-1] == pytest.approx(3600.0)


def test_stack_storage_temperature_and_starting_age():
    # Deforming in storage and ageing are both Arrhenius in their temperature
    # (docs/plate-model.md, laws 8 and 9): F = exp(-(years / tau) w(T_store)) and the weighted
    # hours H w(T_age), w(T) = exp((E/k)(1/T0 - 1/T)), with the type's 0.5 eV and T0 = 300 K.
    se = disc.plate_type("se-25mm-square")
    k = 8.617333262e-5  # Boltzmann constant, eV/K (CODATA 2018)

    def w(kelvin, ev):
        return math.exp(ev / k * (1 / 300.0 - 1 / kelvin))

    c = disc.Circuit()
    c.resistor("R1", "a", "gnd", "1M")
    c.stack("SR1", "a", "gnd", type="se-25mm-square", stored_years=20, stored_temp="35degC",
            hours=15000, age_temp="45degC")
    r = c.run_transient(stop=1e-3, record=["form:SR1", "hours:SR1"])
    tau = se.get("storage_tau_years")
    assert r["form:SR1"][0] == pytest.approx(
        math.exp(-20 / tau * w(308.15, se.get("storage_activation_eV"))), rel=1e-9)
    assert r["hours:SR1"][0] == pytest.approx(
        15000 * w(318.15, se.get("age_activation_eV")), rel=1e-9)


def test_meter_report_from_python():
    # A mean-responding meter's sweeps reach Python through the report dict (docs/report.md).
    _, report = disc.load(NETLISTS / "meter-rectifier-cuox.disc").run()
    meter = report["meter"]
    assert meter["movement"] == "RMETER"
    assert meter["range_V"] == 10.0
    assert len(meter["levels"]) == 6
    by_f = {p["frequency_Hz"]: p for p in meter["frequencies"]}
    assert by_f[10000.0]["reading_V"] < by_f[50.0]["reading_V"]
    assert [p["kind"] for p in report["parts"]] == ["meter"]


def test_example_path_finds_the_bundled_netlists_from_anywhere(tmp_path, monkeypatch):
    # The package carries the repository's netlists/ (and its traces), the same files byte for
    # byte, so a notebook opened in any folder finds them.
    monkeypatch.chdir(tmp_path)
    folder = disc.example_path()
    assert folder.is_dir() and folder.name == "examples"
    for p in NETLISTS.glob("*.disc"):
        assert (folder / p.name).read_bytes() == p.read_bytes()
    sweep = disc.example_path("traces/stored-stack-sweep.csv")
    assert sweep.read_bytes() == (NETLISTS / "traces" / "stored-stack-sweep.csv").read_bytes()
    radio = disc.load(disc.example_path("table-radio-half-wave.disc"))
    assert "SR1" in radio.elements
    with pytest.raises(FileNotFoundError, match="table-radio-half-wave.disc"):
        disc.example_path("no-such-radio.disc")   # the message lists what there is


def test_waveform_parameters_set_like_any_other():
    # A first-order RC low-pass in its periodic steady state: the capacitor's peak voltage is
    # V_peak / sqrt(1 + (w R C)^2) (phasor analysis; J. W. Nilsson and S. A. Riedel, Electric
    # Circuits, chapter 9). The source's rms and frequency are changed from Python only.
    c = disc.parse("voltage VIN in gnd rms=10V frequency=50Hz\n"
                   "resistor R1 in out 1k\ncapacitor C1 out gnd 1u\n")

    def settled_peak():
        v = c.run_periodic(record=["v:out"], reltol=1e-7)["v:out"]
        return (v.max() - v.min()) / 2

    def expected(rms, f):
        return rms * math.sqrt(2) / math.sqrt(1 + (2 * math.pi * f * 1e3 * 1e-6) ** 2)

    # The recorded period's points miss the crest by at most 1 - cos(pi / points): well under
    # 1e-3 for the hundreds of points a tight tolerance takes per period.
    assert settled_peak() == pytest.approx(expected(10, 50), rel=1e-3)
    c["VIN"].rms = 5
    c["VIN"].frequency = 500
    assert c["VIN"].rms == pytest.approx(5) and c["VIN"].frequency == pytest.approx(500)
    assert settled_peak() == pytest.approx(expected(5, 500), rel=1e-3)
    c["VIN"].amplitude = 5  # a peak value: the same source as rms = 5 / sqrt(2)
    assert c["VIN"].rms == pytest.approx(5 / math.sqrt(2))
    with pytest.raises(ValueError):
        c["VIN"].frequency = -1


def test_heat_nodes_from_code_and_in_the_report():
    # Two stacks on one heat sink that a transformer's loss also heats, built in code. The
    # sink's steady rise is all its heat times its resistance to the ambient (thermal circuits,
    # Incropera and DeWitt, Fundamentals of Heat and Mass Transfer, section 3.1).
    c = disc.Circuit()
    c.statement("ambient 30degC")
    c.mains("MAINS", "a", "gnd", rms=120, frequency=60, resistance=5)
    c.stack("SR1", "a", "c", type="se-25mm-36v", plates=8, heat_node="SINK")
    c.stack("SR2", "a", "c", type="se-25mm-36v", plates=8, heat_node="SINK")
    c.capacitor("C1", "c", "gnd", "100uF")
    c.resistor("RL", "c", "gnd", 800)
    c.output("c", "gnd", load="RL")
    # Declared before the path that joins it to the ambient: checked when the circuit runs.
    sink = c.heat_node("SINK", capacity="60J/K")
    skin = c.heat_path("SKIN", "SINK", "ambient", "2.5K/W")
    c.heat_source("T1", "SINK", power=5)
    assert sink.kind == "heat node" and sink.capacity == pytest.approx(60.0)
    assert skin.resistance == pytest.approx(2.5)
    r = c.run_transient(stop=0.4, record=["temp:SINK", "flow:SKIN"])
    assert r.unit("temp:SINK") == "K"
    rep = r.report()
    stacks = sum(s["dissipation_forward_W"] + s["dissipation_reverse_W"] for s in rep["stacks"])
    (node,) = rep["heat_nodes"]
    assert node["name"] == "SINK"
    assert node["heat_in_W"] == pytest.approx(stacks + 5.0, rel=1e-12)
    assert node["temperature_steady_estimate_K"] == pytest.approx(
        303.15 + (stacks + 5.0) * 2.5, rel=1e-12)
    assert node["temperature_end_K"] == pytest.approx(r["temp:SINK"][-1])
    assert "T1" not in rep["output"]["losses_W"]
    assert "HEAT NODES" in r.report_text()
    # Parameters set by name like any other element's.
    skin.resistance = 4.0
    rep = c.run_transient(stop=0.4).report()
    stacks = sum(s["dissipation_forward_W"] + s["dissipation_reverse_W"] for s in rep["stacks"])
    assert rep["heat_nodes"][0]["temperature_steady_estimate_K"] == pytest.approx(
        303.15 + (stacks + 5.0) * 4.0, rel=1e-12)
    with pytest.raises(disc.NetlistError, match="no heat node named 'SNK'"):
        c.stack("SR3", "a", "c", type="se-25mm-36v", plates=8, heat_node="SNK")
        c.check()


def test_heat_node_warm_up_trend_from_the_bundled_example():
    w = disc.load(NETLISTS / "shared-chassis-field-supply.disc").warm_up(3600.0)
    trend = {t["what"]: t for t in w.trends}
    chassis = trend["CHASSIS: heat node temperature"]
    assert chassis["unit"] == "degC"
    assert chassis["start"] == pytest.approx(30.0, abs=0.01)
    assert chassis["end"] > chassis["start"] + 5.0
    assert w.series["temp:CHASSIS"][-1] - 273.15 == pytest.approx(chassis["end"], abs=1e-9)
