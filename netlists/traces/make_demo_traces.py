"""Writes the demo traces of this folder: INVENTED data for demonstrations only (never a check
value). An imaginary 8-plate stack of 25 mm selenium plates, stored for decades: its leakage
is several times a healthy plate's and its bulk resistance has risen. The traces are what the
libdisc model of that imaginary stack gives, with seeded measurement noise.

    PYTHONPATH=build-release/python /usr/bin/python3 netlists/traces/make_demo_traces.py
"""
import pathlib

import numpy as np

import disc

HERE = pathlib.Path(__file__).resolve().parent
PLATES = 8
rng = np.random.default_rng(1952)
stack = disc.plate_type("se-25mm-36v").derive(
    "imaginary-stored-plate",
    {"gsh_S_per_cm2": 1.2e-4, "rs_ohm_cm2": 14.0, "js0_A_per_cm2": 1.5e-5, "ideality": 2.8})


def noisy(current):
    floor = 1e-3 * np.max(np.abs(current))
    return current + (0.01 * np.abs(current) + floor) * rng.standard_normal(current.size)


# A slow sweep with a variac, a 100 ohm series resistor and two meters, at 22 degC.
volts = np.concatenate([np.linspace(0.4, 13.0, 36), -np.linspace(4.0, 280.0, 36)])
static = disc.trace(volts, np.zeros_like(volts))
amps = disc.model_current(stack, static, PLATES, temperature_c=22.0)
with open(HERE / "stored-stack-sweep.csv", "w") as f:
    f.write("# INVENTED demo data: an imaginary stored 8-plate selenium stack, slow sweep\n")
    f.write("voltage [V], current [mA]\n")
    for v, i in zip(volts, noisy(np.asarray(amps))):
        f.write(f"{v:.4f}, {1e3 * i:.5f}\n")

# The same stack on a 50 Hz curve tracer (series resistor holds the forward half near 1 V per
# plate), three cycles at 100 samples per cycle, from a two-channel oscilloscope.
t = np.arange(301) / (100 * 50.0)
s = np.sin(2 * np.pi * 50.0 * t)
v = np.where(s > 0, 8.8 * s, 200.0 * s)
timed = disc.trace(v, np.zeros_like(v), time=t)
amps = disc.model_current(stack, timed, PLATES, temperature_c=22.0)
with open(HERE / "stored-stack-loops.csv", "w") as f:
    f.write("# INVENTED demo data: the same imaginary stack on a 50 Hz curve tracer\n")
    f.write("time [ms], voltage [V], current [mA]\n")
    for tk, vk, ik in zip(t, v, noisy(np.asarray(amps))):
        f.write(f"{1e3 * tk:.3f}, {vk:.4f}, {1e3 * ik:.5f}\n")
