#!/usr/bin/env python3
"""Fit benchmark: `disc fit` on traces of a million rows (the length of a scope export).

The traces are INVENTED demo data written by this script: one 25 mm selenium plate described
by the Shockley diode equation with a series resistance and a shunt across the junction (the
junction voltage solved by bisection), a barrier capacitance of 0.15 uF charged by the sweep's
dV/dt, and seeded noise of 1 % of the reading plus 1e-3 of the largest. Two traces:

- static: a sweep from 0 to 1.9 V forward and from 0 to -25 V reverse, 500 000 rows each;
- timed: a curve tracer at 50 Hz sampled at 1 MS/s for 1 s (50 periods), the plate driven to
  1.1 V forward and 25 V reverse, a time column in ms.

Each is fitted by `disc fit -q` in a fresh process (default binning, docs/fitting.md "Long
traces"); the wall time includes reading the CSV. The machine's load average is printed
before and after.

Usage: /usr/bin/python3 benchmarks/fit_bench.py [--build build-release] [--rows 1000000]
Prints a Markdown table (the figures in docs/performance.md).
"""
import argparse
import json
import os
import platform
import sys
import tempfile

import numpy as np

from child_usage import measure

K_BOLTZMANN = 1.380649e-23  # J/K, exact (SI 2019)
Q_ELECTRON = 1.602176634e-19  # C, exact (SI 2019)

AREA = 5.0  # cm2
IS, N, RS, G, C = 2.5e-5 * AREA, 2.6, 14.0 / AREA, 3e-5 * AREA, 0.15e-6
KELVIN = 298.15


def static_current(v):
    """Shockley's diode with series resistance and shunt, at terminal voltages v (array)."""
    nvt = N * K_BOLTZMANN * KELVIN / Q_ELECTRON
    lo, hi = np.minimum(v, 0.0), np.maximum(v, 0.0)
    for _ in range(60):  # bisection on the junction voltage: u + RS I(u) rises with u
        u = 0.5 * (lo + hi)
        low = u + RS * (IS * np.expm1(u / nvt) + G * u) < v
        lo, hi = np.where(low, u, lo), np.where(low, hi, u)
    u = 0.5 * (lo + hi)
    return IS * np.expm1(u / nvt) + G * u


def noisy(i, rng):
    return i + (0.01 * np.abs(i) + 1e-3 * np.max(np.abs(i))) * rng.standard_normal(i.size)


def write_static(path, rows, rng):
    half = rows // 2
    v = np.concatenate([1.9 * np.arange(1, half + 1) / half,
                        -25.0 * np.arange(1, rows - half + 1) / (rows - half)])
    i = noisy(static_current(v), rng)
    with open(path, "w", encoding="utf-8") as f:
        f.write("# INVENTED demo data (benchmarks/fit_bench.py): a static sweep\n")
        f.write("voltage [V], current [mA]\n")
        np.savetxt(f, np.column_stack([v, 1e3 * i]), fmt="%.6g", delimiter=", ")


def write_timed(path, rows, rng):
    t = np.arange(rows) / rows  # 1 s at `rows` samples per second
    s = np.sin(2 * np.pi * 50.0 * t)
    v = np.where(s > 0, 1.1 * s, 25.0 * s)
    i = noisy(static_current(v) + C * np.gradient(v, t), rng)
    with open(path, "w", encoding="utf-8") as f:
        f.write("# INVENTED demo data (benchmarks/fit_bench.py): a 50 Hz curve-tracer export\n")
        f.write("time [ms], voltage [V], current [mA]\n")
        np.savetxt(f, np.column_stack([1e3 * t, v, 1e3 * i]), fmt="%.9g", delimiter=", ")


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--build", default="build-release")
    ap.add_argument("--rows", type=int, default=1000000)
    args = ap.parse_args()
    cli = os.path.join(args.build, "bindings", "cli", "disc")
    rng = np.random.default_rng(1949)
    print(f"Machine: {platform.processor() or platform.machine()}, {os.cpu_count()} cores; "
          f"load average before: {os.getloadavg()[0]:.2f}\n")
    print("| trace | rows | file MB | points fitted | wall s | CPU s | peak RSS MiB |")
    print("|---|---|---|---|---|---|---|")
    with tempfile.TemporaryDirectory() as tmp:
        for name, write in (("static", write_static), ("timed", write_timed)):
            path = os.path.join(tmp, f"{name}.csv")
            write(path, args.rows, rng)
            out = os.path.join(tmp, f"out-{name}")
            wall, cpu, rss = measure([cli, "fit", "-q", path, "--temperature", "25",
                                      "--name", f"bench-{name}", "-o", out])
            with open(os.path.join(out, "fit-report.json"), encoding="utf-8") as f:
                report = json.load(f)
            print(f"| {name} | {args.rows} | {os.path.getsize(path) / 1e6:.0f} | "
                  f"{report['points']} | {wall:.1f} | {cpu:.1f} | {rss:.0f} |")
            for line in report["binning"]:
                print(f"\n{name}: binned {line}", file=sys.stderr)
    print(f"\nLoad average after: {os.getloadavg()[0]:.2f}")


if __name__ == "__main__":
    main()
