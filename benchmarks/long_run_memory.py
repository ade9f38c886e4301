#!/usr/bin/env python3
"""Long-run memory benchmark: `disc run` of the bundled table radio
(netlists/table-radio-half-wave.disc, 60 Hz) as a transient of 1e2, 1e3 and 1e4 s from cold,
its rows streamed to the CSV with record-spacing=1s. Peak RSS of each run in a fresh process
(getrusage), wall time, accepted steps and the CSV's rows: the peak stays flat as the stop time
grows a hundredfold.

The 1e4 s run needs at least 1.2e7 steps, past the default step budget (docs/limits.md), so
the netlist raises it with max-steps=.

Usage: /usr/bin/python3 benchmarks/long_run_memory.py [--build build-release]
                                                      [--stops 100 1000 10000]
Prints a Markdown table (the figures in docs/performance.md).
"""
import argparse
import json
import os
import re
import tempfile

from child_usage import measure

HERE = os.path.dirname(os.path.abspath(__file__))
NETLIST = os.path.join(HERE, "..", "netlists", "table-radio-half-wave.disc")


def netlist_for(stop):
    """The example with its run statement replaced by a long, streamed, thinned one."""
    with open(NETLIST) as f:
        text = f.read()
    run = (f"run transient stop={stop:g}s method=trapezoidal max-steps=1000000000 "
           "record-spacing=1s")
    text, n = re.subn(r"^run transient .*$", run, text, flags=re.M)
    assert n == 1, "the example's run statement moved"
    return text


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--build", default="build-release")
    ap.add_argument("--stops", type=float, nargs="+", default=[100.0, 1000.0, 10000.0])
    args = ap.parse_args()
    cli = os.path.join(args.build, "bindings", "cli", "disc")
    print("| stop (s) | accepted steps | CSV rows | wall (s) | peak RSS (MiB) |")
    print("|---:|---:|---:|---:|---:|")
    for stop in args.stops:
        with tempfile.TemporaryDirectory() as tmp:
            path = os.path.join(tmp, "long.disc")
            with open(path, "w") as f:
                f.write(netlist_for(stop))
            out = os.path.join(tmp, "out")
            wall, _cpu, rss = measure([cli, "run", "-q", path, "-o", out])
            with open(os.path.join(out, "report.json")) as f:
                steps = json.load(f)["run"]["accepted_steps"]
            with open(os.path.join(out, "transient-1.csv"), "rb") as f:
                rows = sum(1 for _ in f) - 1
        print(f"| {stop:g} | {steps} | {rows} | {wall:.0f} | {rss:.0f} |", flush=True)


if __name__ == "__main__":
    main()
