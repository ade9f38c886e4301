"""The run methods check their settings by the netlist's own table of ranges (docs/python.md):
out of range, NaN or infinite values are refused with disc.InputError (a ValueError), a signal
asked for twice is one column, and every libdisc error is a disc.Error."""
import math

import pytest

import disc

RC = ("voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor R1 a b 1k\n"
      "capacitor C1 b gnd 10uF\n")


@pytest.mark.parametrize("settings,message", [
    ({"reltol": math.nan}, "reltol must lie between 0 and 0.1"),
    ({"reltol": 0.5}, "reltol must lie between 0 and 0.1, got 0.5"),
    ({"reltol": -1e-3}, "reltol must lie between 0 and 0.1"),
    ({"abstol": 1e10}, "abstol must lie above 0 and at most 0.001"),
    ({"abstol": math.inf}, "abstol must lie above 0 and at most 0.001"),
    ({"temperature_abstol": 2.0}, r"temperature-abstol \(K\) must lie above 0 and at most 1,"),
    ({"temperature_abstol": math.nan}, r"temperature-abstol \(K\)"),
    ({"max_steps": math.nan}, "max-steps must lie between 1 and 1000000000"),
    ({"max_steps": 1e20}, "max-steps must lie between 1 and 1000000000"),
    ({"max_steps": -5}, "max-steps must lie between 1 and 1000000000"),
])
def test_run_transient_refuses_settings_out_of_range(settings, message):
    c = disc.parse(RC)
    with pytest.raises(disc.InputError, match=message) as e:
        c.run_transient(stop=0.02, record=["v:b"], **settings)
    assert isinstance(e.value, ValueError) and isinstance(e.value, disc.Error)


def test_the_other_run_methods_refuse_reltol_out_of_range():
    c = disc.parse(RC)
    for reltol in (math.nan, 0.1, 1.0):
        with pytest.raises(disc.InputError, match="reltol must lie between 0 and 0.1"):
            c.run_periodic(record=["v:b"], reltol=reltol)
        with pytest.raises(disc.InputError, match="reltol must lie between 0 and 0.1"):
            c.run_warm_up(duration=60.0, reltol=reltol)


def test_settings_in_range_are_used():
    c = disc.parse(RC)
    loose = c.run_transient(stop=0.04, record=["v:b"], reltol=1e-2)
    tight = c.run_transient(stop=0.04, record=["v:b"], reltol=1e-6, max_steps=2.5e5)
    assert tight.stats["accepted_steps"] > loose.stats["accepted_steps"]


def test_a_signal_asked_for_twice_is_one_column():
    c = disc.parse(RC)
    r = c.run_transient(stop=0.02, record=["v:b", "v:b", "i:R1", "v:b"])
    assert r.signals[:2] == ["v:b", "i:R1"]
    assert r.signals.count("v:b") == 1
    assert len(r["v:b"]) == len(r.time)


def test_every_libdisc_error_is_a_disc_error():
    assert issubclass(disc.NetlistError, disc.InputError)
    assert issubclass(disc.TraceError, disc.InputError)
    assert issubclass(disc.InputError, ValueError)
    assert issubclass(disc.SimulationError, disc.Error)
    assert issubclass(disc.SimulationError, RuntimeError)
    with pytest.raises(disc.Error):
        disc.parse("resistor R1 a gnd -5\n")


def test_a_stack_seed_past_its_range_is_refused_not_wrapped():
    c = disc.Circuit()
    c.voltage("V1", "a", "gnd", amplitude=10, frequency=50)
    for seed in (1e20, 1000000001, 2.5):
        with pytest.raises(disc.InputError, match="seed must be a whole number from 0 to"):
            c.stack("SR1", "a", "b", type="cuox-3mm-instrument", spread=0.1, seed=seed)
