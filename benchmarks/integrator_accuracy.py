#!/usr/bin/python3
"""Each integration method's report figures at a tolerance, against a converged solution.

For every bundled example netlist that runs a transient, and for a stiff half-wave rectifier
(an exponential diode with n Vt = 1.3 mV, written below), runs `disc run` with the run
statement's method= and reltol= replaced, reads report.json and gives, per method, the worst
relative error over every figure the report prints (DC mean, ripple, load current, powers and
losses, stack currents, surge, dissipation; temperatures as their rise above ambient) and the
engine's wall time. The converged solution is the engine itself at reltol 1e-7 (abstol 1e-10)
with the trapezoidal rule; how far it is converged is shown by the same run with BDF2 (the two
differ by about the reference's own error). For the stiff half-wave, SciPy's Radau IIA
(Debian's python3-scipy, rtol 1e-10) integrates the circuit's equations, written here
independently, as a second reference of the output mean, the ripple and the diode's peak
current.

Usage: benchmarks/integrator_accuracy.py [--cli build-release/bindings/cli/disc]
       [--reltol 1e-3] [--methods trapezoidal,bdf2,tr-bdf2] [--only NAME] [--repeat 3]
"""
import argparse
import csv
import json
import math
import os
import re
import shutil
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)

# Stiff half-wave rectifier: 120 V rms, 60 Hz straight into an exponential diode (Is 1e-12 A,
# ideality 0.05: n Vt = 1.29 mV at 300.15 K, no series resistance, no charge) feeding 100 uF
# and 500 ohm (invented values; the circuit `disc example half-wave` builds).
STIFF = """title "Stiff exponential diode, half-wave"
voltage V1 in gnd sine rms=120V frequency=60Hz
diode D1 in out saturation-current=1e-12 ideality=0.05 series-resistance=0 junction-capacitance=0 breakdown-voltage=0 temperature=300.15K
capacitor C1 out gnd 100uF
resistor RL out gnd 500ohm
output out gnd load=RL
record i:D1
run transient stop=1s
"""

# Fields of report.json that are not figures of the circuit.
SKIP = re.compile(r"^(run\.|schema|generator|frequency_Hz|cycles|window_s|settled|ambient_K)|"
                  r"(limit|rating|_rated|destruction).*$|verdicts|\.value$")


def figures(report, prefix=""):
    """Flattens the numeric leaves of report.json into {path: value}."""
    out = {}
    if isinstance(report, dict):
        for k, v in report.items():
            out.update(figures(v, f"{prefix}{k}."))
    elif isinstance(report, list):
        for i, v in enumerate(report):
            name = v.get("name", str(i)) if isinstance(v, dict) else str(i)
            out.update(figures(v, f"{prefix}{name}."))
    elif isinstance(report, (int, float)) and not isinstance(report, bool):
        out[prefix[:-1]] = float(report)
    return out


def run(cli, text, method, reltol, tmp, name):
    """Runs the netlist with the run statement's method and reltol set; (figures, wall, csv)."""
    lines = []
    for line in text.splitlines():
        if line.startswith("run transient"):
            line = re.sub(r"\s(method|reltol|abstol)=\S+", "", line)
            line += f" method={method} reltol={reltol:g}"
            if reltol < 1e-6:
                line += f" abstol={reltol * 1e-3:g}"
        lines.append(line)
    src = os.path.join(tmp, f"{name}.disc")
    with open(src, "w") as f:
        f.write("\n".join(lines) + "\n")
    out = os.path.join(tmp, f"out-{name}-{method}-{reltol:g}")
    if os.path.isdir(out):
        shutil.rmtree(out)
    res = subprocess.run([cli, "run", src, "-o", out, "-q"], capture_output=True, text=True,
                         cwd=os.path.dirname(src))
    if res.returncode not in (0, 4):
        raise RuntimeError(f"{name} {method} {reltol}: exit {res.returncode}: {res.stderr}")
    with open(os.path.join(out, "report.json")) as f:
        rep = json.load(f)
    fig = {k: v for k, v in figures(rep).items() if not SKIP.search(k)}
    ambient = rep.get("ambient_K", 0.0)
    for k in list(fig):
        if k.endswith("_K"):
            fig[k] -= ambient  # temperatures as rises
    peak = None
    csvs = [p for p in os.listdir(out) if p.startswith("transient") and p.endswith(".csv")]
    if csvs:
        with open(os.path.join(out, csvs[0])) as f:
            rows = csv.reader(f)
            head = next(rows)
            col = [k for k, h in enumerate(head) if h.startswith("i:D1 ")]
            if col:
                stop = float(re.search(r"stop=(\S+)s", text).group(1))
                values = [float(r[col[0]]) for r in rows if float(r[0]) >= stop - 1 / 60]
                peak = max(values)  # the largest sample of the last cycle
    return fig, rep["run"], peak


def unit(key):
    return key.rsplit("_", 1)[-1] if "_" in key.rsplit(".", 1)[-1] else key


def errors(fig, ref):
    """Relative error per figure. Figures below 1 % of the largest figure of their unit are
    left out (a capacitor's mean power, zero when settled, or a reverse dissipation of
    microwatts beside watts forward): their relative error says nothing of the supply."""
    largest = {}
    for k, r in ref.items():
        largest[unit(k)] = max(largest.get(unit(k), 0.0), abs(r))
    err = {}
    for k, r in ref.items():
        if k not in fig or not math.isfinite(r) or abs(r) <= 1e-2 * largest[unit(k)]:
            continue
        err[k] = abs(fig[k] - r) / abs(r)
    return err


def stiff_radau():
    """SciPy Radau IIA on C v' = Is (exp((vin - v)/nVt) - 1) + 1e-12 (vin - v) - v/R."""
    import numpy as np
    from scipy.integrate import solve_ivp
    kB, qe = 1.380649e-23, 1.602176634e-19  # exact SI
    nvt, i_s, g_shunt = 0.05 * kB * 300.15 / qe, 1e-12, 1e-12
    c, r, amp, f, stop = 100e-6, 500.0, 120.0 * math.sqrt(2.0), 60.0, 1.0

    def diode(v):
        e = np.exp(np.minimum(v / nvt, 700.0))
        return i_s * (e - 1.0) + g_shunt * v, i_s * e / nvt + g_shunt

    def rhs(t, y):
        i, _ = diode(amp * math.sin(2 * math.pi * f * t) - y[0])
        return [(i - y[0] / r) / c]

    def jac(t, y):
        _, g = diode(amp * math.sin(2 * math.pi * f * t) - y[0])
        return [[(-g - 1.0 / r) / c]]

    sol = solve_ivp(rhs, (0.0, stop), [0.0], method="Radau", jac=jac, rtol=1e-10, atol=1e-13,
                    max_step=2e-5, dense_output=True)
    assert sol.success, sol.message
    t = np.linspace(stop - 1 / f, stop, 400001)
    v = sol.sol(t)[0]
    i = diode(amp * np.sin(2 * math.pi * f * t) - v)[0]
    mean = np.trapz(v, t) / (t[-1] - t[0])
    return {"output.mean_V": mean, "output.ripple_pp_V": v.max() - v.min(),
            "output.ripple_rms_V": math.sqrt(np.trapz((v - mean) ** 2, t) / (t[-1] - t[0])),
            "peak i:D1": float(i.max())}


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--cli", default=os.path.join(ROOT, "build-release/bindings/cli/disc"))
    ap.add_argument("--reltol", type=float, default=1e-3)
    ap.add_argument("--ref-reltol", type=float, default=1e-7, help="the reference runs' reltol")
    ap.add_argument("--methods", default="trapezoidal,bdf2,tr-bdf2")
    ap.add_argument("--only", default="", help="comma-separated case names")
    ap.add_argument("--repeat", type=int, default=3, help="runs per method (fastest wall kept)")
    ap.add_argument("--json", default="", help="write the measurements to this file too")
    a = ap.parse_args()
    cases = {"stiff-half-wave": STIFF}
    for p in sorted(os.listdir(os.path.join(ROOT, "netlists"))):
        if p.endswith(".disc"):
            text = open(os.path.join(ROOT, "netlists", p)).read()
            if re.search(r"^run transient", text, re.M):
                cases[p[:-5]] = text.replace('"traces/', f'"{ROOT}/netlists/traces/')
    methods = a.methods.split(",")
    results = {}
    with tempfile.TemporaryDirectory() as tmp:
        for p in os.listdir(os.path.join(ROOT, "netlists")):  # included files, data
            if os.path.isfile(os.path.join(ROOT, "netlists", p)):
                shutil.copy(os.path.join(ROOT, "netlists", p), tmp)
        if os.path.isdir(os.path.join(ROOT, "netlists", "traces")):
            shutil.copytree(os.path.join(ROOT, "netlists", "traces"), os.path.join(tmp, "traces"))
        for name, text in cases.items():
            if a.only and name not in a.only.split(","):
                continue
            t0 = time.time()
            ref, _, ref_peak = run(a.cli, text, "trapezoidal", a.ref_reltol, tmp, name)
            alt, _, alt_peak = run(a.cli, text, "bdf2", a.ref_reltol, tmp, name)
            if ref_peak is not None:
                ref["peak i:D1"], alt["peak i:D1"] = ref_peak, alt_peak
            spread_err = errors(alt, ref)
            spread = max(spread_err.values(), default=0.0)
            row = {"reference_spread": spread, "figures": len(ref), "methods": {}}
            if name == "stiff-half-wave":
                rad = stiff_radau()
                row["radau"] = {k: abs(ref[k] - v) / abs(v) for k, v in rad.items()}
            for m in methods:
                best = None
                try:
                    for _ in range(a.repeat):
                        fig, stats, peak = run(a.cli, text, m, a.reltol, tmp, name)
                        if best is None or stats["wall_s"] < best[1]["wall_s"]:
                            best = (fig, stats, peak)
                except RuntimeError as e:
                    row["methods"][m] = {"failed": str(e).strip().splitlines()[-1]}
                    continue
                fig, stats, peak = best
                if peak is not None:
                    fig["peak i:D1"] = peak
                err = errors(fig, ref)
                worst = max(err, key=err.get) if err else ""
                row["methods"][m] = {
                    "worst": err.get(worst, 0.0), "worst_figure": worst,
                    "over_1e-3": sum(1 for e in err.values() if e > 1e-3),
                    "wall_s": stats["wall_s"], "accepted": stats["accepted_steps"],
                    "rejected": stats["rejected_steps"], "errors": err}
            results[name] = row
            print(f"{name}: {len(ref)} figures, reference spread {spread:.1e} "
                  f"({max(spread_err, key=spread_err.get) if spread_err else ''}) "
                  f"({time.time() - t0:.0f} s)", file=sys.stderr)
            if "radau" in row:
                print("  reference against Radau: " + ", ".join(
                    f"{k} {v:.1e}" for k, v in row["radau"].items()), file=sys.stderr)
    print(f"\nreltol {a.reltol:g}: worst relative error over the report's figures "
          f"(figures off by more than 1e-3), wall ms, accepted/rejected steps\n")
    print("| example | " + " | ".join(methods) + " |")
    print("|---|" + "---|" * len(methods))
    for name, row in results.items():
        cells = []
        for m in methods:
            r = row["methods"][m]
            if "failed" in r:
                cells.append("failed")
                continue
            cells.append(f"{r['worst']:.1e} ({r['over_1e-3']}), {r['wall_s'] * 1e3:.0f} ms, "
                         f"{r['accepted']}/{r['rejected']}")
        print(f"| {name} | " + " | ".join(cells) + " |")
    print("\nworst figure per method:")
    for name, row in results.items():
        print(f"  {name}: " + "; ".join(
            f"{m} {row['methods'][m].get('worst_figure', row['methods'][m].get('failed'))}"
            for m in methods))
    if a.json:
        with open(a.json, "w") as f:
            json.dump(results, f, indent=1)


if __name__ == "__main__":
    main()
