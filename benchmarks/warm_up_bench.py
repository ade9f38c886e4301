#!/usr/bin/env python3
"""Warm-up benchmark: the table radio's per-plate selenium stack warmed for 1 h and 10 h with
`run warm-up`, against a brute-force transient that integrates every mains cycle.

The brute force runs a shorter span (--brute, default 300 s) and its wall time is scaled
linearly to the warm-up's duration: its cost per simulated second is constant once the switch-on
is over (the step count per mains cycle does not change as the plates warm). The figures are
compared at the end of the brute-force span: a warm-up of the same duration against the last
mains cycle of the transient.

Usage: /usr/bin/python3 benchmarks/warm_up_bench.py [--build build-release] [--brute 300]
                                                   [--reltol 1e-3]
Prints a Markdown table (the figures in docs/performance.md).
"""
import argparse
import csv
import os
import sys
import tempfile

from child_usage import measure

HERE = os.path.dirname(os.path.abspath(__file__))
SOURCE = os.path.join(HERE, "..", "netlists", "table-radio-warm-up.disc")


def circuit_lines():
    """The example's circuit without its output and run statements."""
    with open(SOURCE, encoding="utf-8") as f:
        return [l for l in f if not l.startswith(("run ", "output "))]


def timed(cmd):
    """(wall s, peak RSS MiB) of one command in a fresh process."""
    wall, _, rss = measure(cmd)
    return wall, rss


def columns(path):
    with open(path, newline="", encoding="utf-8") as f:
        rows = list(csv.reader(f))
    head = [h.split(" [")[0] for h in rows[0]]
    data = [[float(x) for x in r] for r in rows[1:]]
    return {h: [r[k] for r in data] for k, h in enumerate(head)}


def warm_up(cli, tmp, duration):
    path = os.path.join(tmp, f"warm-{duration}.disc")
    with open(path, "w", encoding="utf-8") as f:
        f.writelines(circuit_lines())
        f.write(f"record v:c\nrun warm-up duration={duration}s\n")
    out = os.path.join(tmp, f"out-warm-{duration}")
    wall, rss = timed([cli, "run", "-q", path, "-o", out])
    c = columns(os.path.join(out, "warm-up-1.csv"))
    return wall, rss, c["v:c"][-1], c["temp:SR1"][-1]


def brute(cli, tmp, stop, reltol):
    path = os.path.join(tmp, "brute.disc")
    with open(path, "w", encoding="utf-8") as f:
        f.writelines(circuit_lines())
        f.write(f"record v:c temp:SR1\nrun transient stop={stop}s reltol={reltol}\n")
    out = os.path.join(tmp, "out-brute")
    wall, rss = timed([cli, "run", "-q", path, "-o", out])
    c = columns(os.path.join(out, "transient-1.csv"))
    t, v = c["time"], c["v:c"]
    t0 = t[-1] - 1.0 / 60.0  # the last mains cycle
    return wall, rss, window_mean(t, v, t0), c["temp:SR1"][-1]


def window_mean(t, v, t0):
    """Mean of the piecewise-linear v(t) over exactly [t0, t[-1]] (v interpolated at t0), so the
    window is one whole period whatever the sample times."""
    area = 0.0
    for k in range(1, len(t)):
        a, b = t[k - 1], t[k]
        if b <= t0:
            continue
        va = v[k - 1]
        if a < t0:  # the sample interval that straddles t0: start at t0
            va = v[k - 1] + (v[k] - v[k - 1]) * (t0 - a) / (b - a)
            a = t0
        area += 0.5 * (va + v[k]) * (b - a)
    return area / (t[-1] - t0)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--build", default=os.path.join(HERE, "..", "build-release"))
    ap.add_argument("--brute", type=float, default=300.0)
    ap.add_argument("--reltol", type=float, default=1e-3, help="of the brute-force transient")
    a = ap.parse_args()
    cli = os.path.join(a.build, "bindings", "cli", "disc")
    with tempfile.TemporaryDirectory() as tmp:
        bw, brss, bv, bt = brute(cli, tmp, a.brute, a.reltol)
        ew, erss, ev, et = warm_up(cli, tmp, a.brute)
        print("| span | method | wall s | peak RSS MiB | v:c mean V | hottest plate K |")
        print("|---|---|---|---|---|---|")
        print(f"| {a.brute:g} s | brute-force transient, reltol {a.reltol:g} | {bw:.2f} | {brss:.0f} | {bv:.3f} | {bt:.2f} |")
        print(f"| {a.brute:g} s | warm-up | {ew:.2f} | {erss:.0f} | {ev:.3f} | {et:.2f} |")
        print(f"\noutput difference {100 * abs(ev - bv) / bv:.3f} %, "
              f"temperature difference {abs(et - bt):.3f} K")
        for hours in (1, 10):
            w, rss, v, t = warm_up(cli, tmp, 3600 * hours)
            scaled = bw / a.brute * 3600 * hours
            print(f"| {hours} h | warm-up | {w:.2f} | {rss:.0f} | {v:.3f} | {t:.2f} | "
                  f"brute force scaled: {scaled:.0f} s, ratio {scaled / w:.0f}x")
    return 0


if __name__ == "__main__":
    sys.exit(main())
