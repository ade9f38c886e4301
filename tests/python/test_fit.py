"""The plate fit and the silicon replacement through the Python module.

The static model of docs/sources.md (plate-type starting values),
    I = Is (exp((V - I Rs) / (n Vt)) - 1) + (V - I Rs) Gsh,
is written here independently of libdisc and solved with SciPy's brentq; SciPy's
least_squares (trust-region reflective) fits it, as a reference for libdisc's
Levenberg-Marquardt. The "measured" plate is invented for the test.
"""
import json
import pathlib
import subprocess
import threading
import time

import numpy as np
import pytest
from conftest import need_cli
from scipy.optimize import brentq, least_squares

import disc

K_B = 1.380649e-23  # J/K, exact SI
Q_E = 1.602176634e-19  # C, exact SI
T = 300.0  # K, the plate type's reference temperature: the laws take their t0 values
VT = K_B * T / Q_E
AREA = 5.0  # cm2 (se-25mm-square)
TRUTH = {"js0_A_per_cm2": 2e-5, "ideality": 2.7, "rs_ohm_cm2": 12.0, "gsh_S_per_cm2": 4e-5}
ROOT = pathlib.Path(__file__).resolve().parents[2]


def section10_current(v, js0, n, rs_area, gsh_area):
    """The implicit static law (docs/sources.md), solved for I by bracketing."""
    i_s, rs, gsh = js0 * AREA, rs_area / AREA, gsh_area * AREA

    def f(i):
        u = v - i * rs
        return i_s * np.expm1(u / (n * VT)) + u * gsh - i

    if v == 0.0:
        return 0.0
    lo, hi = (0.0, v / rs) if v > 0 else (v * gsh * 10 - 1e-9, 0.0)
    return brentq(f, lo, hi, xtol=1e-16, rtol=1e-13)


def section10_type():
    # No image-force lowering and breakdown out of reach: the plate law reduces to section 10.
    return disc.plate_type("se-25mm-square").derive(
        "section10", dict(TRUTH, image_force_per_V4=0.0, breakdown_J0_A_per_cm2=0.0))


VOLTS = np.concatenate([np.linspace(0.05, 1.8, 40), -np.linspace(1.0, 30.0, 30)])


def test_static_curve_matches_the_section10_law_solved_by_scipy():
    curve = disc.PlateCurve(section10_type())
    ours = curve.current(VOLTS, T)
    ref = np.array([section10_current(v, *TRUTH.values()) for v in VOLTS])
    np.testing.assert_allclose(ours, ref, rtol=1e-7, atol=1e-15)


def test_fit_agrees_with_scipy_least_squares_on_the_same_data():
    rng = np.random.default_rng(7)
    clean = np.array([section10_current(v, *TRUTH.values()) for v in VOLTS])
    floor = 1e-3 * np.max(np.abs(clean))
    measured = clean + (0.01 * np.abs(clean) + floor) * rng.standard_normal(clean.size)
    # The same model on both sides: libdisc holds the image-force coefficient at 0.
    fit = disc.fit_plate(disc.trace(VOLTS, measured), like=section10_type(),
                         fixed=["image_force_per_V4"], temperature_c=T - 273.15)

    def residuals(z):
        js0, n, rs_area, gsh_area = np.exp(z[0]), z[1], np.exp(z[2]), np.exp(z[3])
        model = np.array([section10_current(v, js0, n, rs_area, gsh_area) for v in VOLTS])
        return (measured - model) / (0.01 * np.abs(model) + floor)

    z0 = [np.log(1e-5), 3.0, np.log(10.0), np.log(2e-5)]
    ref = least_squares(residuals, z0, x_scale="jac", xtol=1e-12, ftol=1e-12)
    scipy_values = {"js0_A_per_cm2": np.exp(ref.x[0]), "ideality": ref.x[1],
                    "rs_ohm_cm2": np.exp(ref.x[2]), "gsh_S_per_cm2": np.exp(ref.x[3])}
    params = {p.name: p for p in fit.parameters}
    for name, value in scipy_values.items():
        p = params[name]
        # The same optimum: along the js0-n valley the cost is flat, so agree to 0.2 %.
        assert p.value == pytest.approx(value, rel=2e-3), name
        assert p.low <= value <= p.high, (name, value, p.low, p.high)
        assert p.covers(TRUTH[name]), name


def test_a_fitted_type_runs_in_a_circuit_at_once():
    volts = VOLTS
    amps = disc.PlateCurve(section10_type()).current(volts, T)
    fit = disc.fit_plate(disc.trace(volts, amps * (1 + 0.002 * np.sin(np.arange(volts.size)))),
                         name="bench-fit", temperature_c=T - 273.15)
    c = disc.Circuit("fitted")
    c.add_plate_type(fit.type)
    c.mains("V1", "ac", "gnd", rms=20.0, frequency=50.0)
    c.stack("S1", "ac", "out", type="bench-fit", plates=1)
    c.capacitor("C1", "out", "gnd", 470e-6)
    c.resistor("RL", "out", "gnd", 200.0)
    r = c.run_transient(stop=0.1, record=["v:out"])
    # 20 V rms into a reservoir: the fitted plate rectifies, dropping about a volt.
    assert 25.0 < np.max(r["v:out"]) < 28.3
    # The verdict's forward drop at rated current (30 mA/cm2 x 5 cm2) is the section-10 law's,
    # solved here by SciPy's brentq.
    rated = 0.030 * AREA
    drop = brentq(lambda v: section10_current(v, *TRUTH.values()) - rated, 0.1, 5.0)
    assert fit.health.forward_drop == pytest.approx(drop, rel=0.01)
    report = json.loads(fit.report_json())
    assert report["kind"] == "plate-fit" and report["parameters"]


def test_bad_traces_raise_trace_error_with_line_and_column(tmp_path):
    path = tmp_path / "bench.csv"
    path.write_text("voltage [V], current [mA]\n0.5, 1.0\n0.7, twelve\n")
    with pytest.raises(disc.TraceError) as e:
        disc.load_trace(path)
    assert (e.value.line, e.value.column, e.value.column_name) == (3, 2, "current [mA]")
    path.write_text("")
    with pytest.raises(disc.TraceError, match="empty"):
        disc.load_trace(path)
    with pytest.raises(disc.TraceError, match="no reverse part"):
        disc.fit_plate(disc.trace(np.linspace(0.1, 1.5, 20), np.linspace(1e-3, 0.2, 20)))
    with pytest.raises(disc.TraceError, match="current has 1 values but voltage has 2"):
        disc.trace([1.0, 2.0], [1.0])


def test_traces_from_arrays_are_checked_as_a_file_rows_are():
    # A NaN or an infinity would otherwise reach the fit's residuals and poison every step.
    with pytest.raises(disc.TraceError, match="not a finite number") as e:
        disc.trace([0.5, 0.7, 0.9], [1e-3, np.nan, 3e-3], source="scope")
    assert (e.value.file, e.value.line, e.value.column_name) == ("scope", 2, "current")
    with pytest.raises(disc.TraceError, match="voltage inf V"):
        disc.trace([0.5, np.inf], [1e-3, 2e-3])
    with pytest.raises(disc.TraceError, match="does not increase") as e:
        disc.trace([0.5, 0.7, 0.9], [1e-3, 2e-3, 3e-3], time=[0.0, 1e-3, 1e-3])
    assert e.value.line == 3
    with pytest.raises(disc.TraceError, match="below absolute zero"):
        disc.trace([0.5], [1e-3], temperature_c=[-300.0])
    with pytest.raises(disc.TraceError, match="time has 1 values"):
        disc.trace([0.5, 0.7], [1e-3, 2e-3], time=[0.0])
    with pytest.raises(disc.TraceError, match="no points"):
        disc.trace([], [])
    good = disc.trace([0.5, 0.7], [1e-3, 2e-3], time=[0.0, 1e-3], temperature_c=[25.0, 25.0])
    assert len(good) == 2 and good.lines == [1, 2] and good.dynamic


def test_replace_through_python_matches_the_original_output():
    d = disc.replace_stacks(ROOT / "netlists" / "table-radio-half-wave.disc", "SR1", loads=[1.0])
    assert abs(d.output_exact / d.target - 1.0) <= 0.005
    assert d.silicon_alone > d.target
    assert "SR1_SI" in d.netlist
    assert len(d.rows) == 1 and d.rows[0].load_fraction == 1.0
    # The default target is the re-formed stack; the silicon parts carry verdicts.
    assert d.target_kind == "formed"
    assert [v["figure"] for v in d.verdicts][:3] == [
        "diode reverse voltage", "diode average forward current", "diode surge current"]
    assert all(v["level"] == "ok" for v in d.verdicts)
    # A value target is matched within the design's 0.5 %.
    v = disc.replace_stacks(ROOT / "netlists" / "table-radio-half-wave.disc", "SR1", loads=[1.0],
                            target="100V")
    assert v.target_kind == "value" and abs(v.output_exact / 100.0 - 1.0) <= 0.005


def test_cli_fit_on_the_demo_trace_writes_a_usable_type(tmp_path):
    out = tmp_path / "fit"
    run = subprocess.run([need_cli(), "fit", str(ROOT / "netlists" / "traces" /
                          "stored-stack-sweep.csv"), "--plates", "8", "--like", "se-25mm-36v",
                          "--name", "demo-stack", "-o", str(out), "-q"], capture_output=True,
                         text=True)
    assert run.returncode == 0, run.stderr
    types = disc.load_plate_types(out / "demo-stack.json")
    assert types[0].name == "demo-stack"
    assert (out / "fit-forward.svg").exists()


def long_trace(rows, seed):
    """A static sweep of `rows` rows of the section 10 law (the library's curve, which matches
    it above), with 1 % noise plus 1e-3 of the largest reading."""
    rng = np.random.default_rng(seed)
    v = np.concatenate([np.linspace(0.01, 1.8, rows // 2), -np.linspace(0.1, 30.0, rows - rows // 2)])
    i = disc.PlateCurve(section10_type()).current(v, T)
    i = i + (0.01 * np.abs(i) + 1e-3 * np.max(np.abs(i))) * rng.standard_normal(i.size)
    return disc.trace(v, i, source="long")


def test_long_trace_binning_options_and_report():
    tr = long_trace(6000, 11)
    fit = disc.fit_plate(tr, temperature_c=T - 273.15, bins_per_direction=100)
    assert fit.points == 200
    assert len(fit.binning) == 1 and "6000 rows into 200 points" in fit.binning[0]
    assert json.loads(fit.report_json())["binning"] == fit.binning
    small = disc.fit_plate(long_trace(600, 12), temperature_c=T - 273.15, bin_above=500,
                           bins_per_direction=50)
    assert small.points == 100
    off = disc.fit_plate(long_trace(600, 12), temperature_c=T - 273.15, bin_above=0)
    assert off.points == 600 and off.binning == []
    with pytest.raises(ValueError, match="at least 100"):
        disc.fit_plate(tr, bin_above=50)
    with pytest.raises(ValueError, match="between 50 and"):
        disc.fit_plate(tr, bins_per_direction=10)


def test_fit_progress_is_called_without_holding_the_gil_and_false_cancels():
    tr = long_trace(3000, 13)
    lines = []
    ticks = [0]
    done = threading.Event()

    def count():
        # Runs only while the fit has released the GIL.
        while not done.is_set():
            ticks[0] += 1
            time.sleep(0.001)

    other = threading.Thread(target=count)
    other.start()
    try:
        fit = disc.fit_plate(tr, temperature_c=T - 273.15, progress=lines.append)
    finally:
        done.set()
        other.join()
    assert fit.points == 3000
    assert lines[0].startswith("fit: forward stage")
    assert any("profile-likelihood intervals" in line for line in lines)
    assert ticks[0] > 20
    calls = []
    with pytest.raises(KeyboardInterrupt):
        disc.fit_plate(tr, temperature_c=T - 273.15, progress=lambda line: calls.append(line) or len(calls) < 2)
    assert len(calls) == 2


def test_fit_progress_that_raises_stops_the_fit_with_its_own_exception():
    # The second call comes from inside a model evaluation, where a failed trial point is
    # retried: the callback's exception must still stop the fit and reach the caller as itself.
    class Stop(Exception):
        pass

    tr = long_trace(3000, 13)
    calls = []

    def progress(line):
        calls.append(line)
        if len(calls) == 2:
            raise Stop("enough")
        return True

    with pytest.raises(Stop, match="enough"):
        disc.fit_plate(tr, temperature_c=T - 273.15, progress=progress)
    assert len(calls) == 2
