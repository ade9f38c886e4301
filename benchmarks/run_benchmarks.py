#!/usr/bin/env python3
"""Runs libdisc's benchmarks and the SciPy comparison; prints a Markdown report.

Usage: /usr/bin/python3 benchmarks/run_benchmarks.py [--build build-release] [--quick]
"""
import argparse
import json
import os
import platform
import subprocess
import sys
import time

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)


def cpu_name():
    try:
        with open("/proc/cpuinfo") as f:
            for line in f:
                if line.startswith("model name"):
                    return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or "unknown"


def peak_rss(cmd):
    """Peak RSS (KiB) that a `disc example ... --json` run reports for itself."""
    out = subprocess.run(cmd, check=True, capture_output=True, text=True).stdout
    return int(json.loads(out)["peak_rss_kib"])


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--build", default="build-release")
    ap.add_argument("--quick", action="store_true", help="skip the 10,000-diode ladder and SciPy")
    args = ap.parse_args()
    bench = os.path.join(args.build, "benchmarks", "disc_bench")
    cli = os.path.join(args.build, "bindings", "cli", "disc")

    print(f"# libdisc benchmark report\n\nMachine: {cpu_name()}, {os.cpu_count()} cores, "
          f"{platform.system()} {platform.release()}; {time.strftime('%Y-%m-%d')}\n")

    filt = "Bridge|Ladder/(10|100|1000)$" if args.quick else "."
    out = subprocess.run([bench, f"--benchmark_filter={filt}", "--benchmark_format=json"],
                         check=True, capture_output=True, text=True).stdout
    data = json.loads(out)["benchmarks"]

    print("## One second of the 50 Hz bridge supply (cold switch-on, reltol 1e-3)\n")
    print("| method | wall ms | accepted | rejected | Newton its | steps/s | peak RSS KiB |")
    print("|---|---|---|---|---|---|---|")
    walls = {}
    for b in data:
        if not b["name"].startswith("BridgeOneSecond"):
            continue
        method = b["label"]
        rss = peak_rss([cli, "example", "bridge", "--method", method, "--json"])
        walls[method] = b["real_time"] / 1e3
        print(f"| {method} | {b['real_time']:.1f} | {b['accepted']:.0f} | {b['rejected']:.0f} | "
              f"{b['newton']:.0f} | {b['steps_per_s']:.0f} | {rss} |")

    print("\n## Diode ladder scaling (BDF2, 20 ms)\n")
    print("| diodes | unknowns | wall ms | steps | us/step | us/Newton | peak RSS KiB |")
    print("|---|---|---|---|---|---|---|")
    ladder = {}
    for b in data:
        if not b["name"].startswith("Ladder/"):
            continue
        n = int(b["name"].split("/")[1])
        rss = peak_rss([cli, "example", f"ladder-{n}", "--stop", "0.02", "--method", "bdf2",
                        "--json"])
        ladder[n] = (b["us_per_step"], b["us_per_newton"], rss)
        print(f"| {n} | {b['unknowns']:.0f} | {b['real_time']:.1f} | {b['accepted']:.0f} | "
              f"{b['us_per_step']:.1f} | {b['us_per_newton']:.1f} | {rss} |")
    ns = sorted(ladder)
    for a, b in zip(ns, ns[1:]):
        print(f"\n{a} -> {b} diodes: time per step x{ladder[b][0] / ladder[a][0]:.2f}, "
              f"per Newton iteration x{ladder[b][1] / ladder[a][1]:.2f}")
    if len(ns) >= 2:
        lo, hi = ns[0], ns[-1]
        per = (ladder[hi][2] - ladder[lo][2]) * 1024 / (hi - lo)
        print(f"\nMemory per diode (peak RSS difference {lo} -> {hi}): {per:.0f} bytes")

    if args.quick:
        return
    print("\n## SciPy solve_ivp (Radau) on the same bridge supply\n")
    import scipy_bridge as sb
    t0 = time.perf_counter()
    ref = sb.solve(1.0, rtol=1e-6, atol=1e-9)
    ref_wall = time.perf_counter() - t0
    ref_mean, ref_ripple = sb.output_figures(ref, 1.0)
    disc_json = json.loads(subprocess.run([cli, "example", "bridge", "--method", "trap", "--json"],
                                          check=True, capture_output=True, text=True).stdout)
    disc_err = abs(disc_json["output_mean_V"] - ref_mean) / ref_mean
    print(f"Reference (Radau rtol 1e-6, {ref_wall:.0f} s): mean {ref_mean:.5f} V, "
          f"ripple {ref_ripple:.5f} V\n")
    print("| solver | rtol | wall s | mean V | error vs reference |")
    print("|---|---|---|---|---|")
    print(f"| libdisc trap | 1e-3 | {walls.get('trap', float('nan')):.3f} | "
          f"{disc_json['output_mean_V']:.5f} | {disc_err:.2e} |")
    best = None
    for rtol in (1e-3, 1e-4):
        t0 = time.perf_counter()
        sol = sb.solve(1.0, rtol=rtol, atol=rtol * 1e-3)
        wall = time.perf_counter() - t0
        mean, _ = sb.output_figures(sol, 1.0)
        err = abs(mean - ref_mean) / ref_mean
        print(f"| SciPy Radau | {rtol:g} | {wall:.2f} | {mean:.5f} | {err:.2e} |")
        if best is None and err <= max(disc_err, 1e-4):
            best = wall
    if best is not None and "trap" in walls:
        print(f"\nAt matched accuracy (first SciPy tolerance at least as accurate as libdisc): "
              f"libdisc is {best / walls['trap']:.0f} times faster.")


if __name__ == "__main__":
    main()
