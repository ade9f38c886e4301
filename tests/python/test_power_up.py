"""The slow analyses from Python: a warm-up's summary and the power-up planner, checked against
the command-line program on the same netlist, and the plan's schedule run again through the
warm-up envelope."""
import json
import pathlib
import re
import subprocess

import numpy as np
import pytest
from conftest import need_cli

import disc

STORED = pathlib.Path(__file__).resolve().parents[1] / "analysis" / "stored-table-radio.disc"


@pytest.fixture(scope="module")
def plan():
    return disc.load(STORED).plan_power_up("SR1")


def test_plan_matches_the_command_line(plan):
    # The same plan to the last digit of the JSON (both read the same file by the same path).
    cli = need_cli()
    out = subprocess.run([cli, "power-up", str(STORED), "--stack", "SR1", "--json"],
                         capture_output=True, text=True)
    assert out.returncode == 0, out.stderr  # 0: a verified schedule to re-form
    assert plan.to_dict() == json.loads(out.stdout)
    text = subprocess.run([cli, "power-up", str(STORED), "--stack", "SR1"], capture_output=True,
                          text=True).stdout
    assert plan.text() == text


def test_plan_fields_and_numpy_columns(plan):
    assert plan.verdict == "re-form" and not plan.replace and plan.verified
    steps = plan.steps
    assert len(steps) >= 2 and steps[-1]["fraction"] == 1.0
    t = plan.table
    assert isinstance(t["level"], np.ndarray) and t["level"].shape == (len(steps),)
    assert t["level"][-1] == pytest.approx(plan.full_level) == pytest.approx(120.0)
    # Consecutive steps: each starts where the one before ended, the levels rise.
    assert np.allclose(t["start_s"][1:], t["start_s"][:-1] + t["duration_s"][:-1])
    assert np.all(np.diff(t["level"]) > 0)
    assert plan.total_time == pytest.approx(t["start_s"][-1] + t["duration_s"][-1])
    # Re-forming at the first step: the leakage falls over its hold (docs/power-up.md).
    assert t["leakage_end_A"][0] < t["leakage_start_A"][0]
    assert plan.go_on == {"leakage_per_min": 0.05, "temperature_K_per_min": 0.5}
    # The temperature limit is the plate type's rating, the margin on the rise above ambient.
    se = disc.plate_type("se-25mm-36v")
    tmax = se.get("max_plate_temp_C")
    temp = plan.limits[0]
    assert temp["unit"] == "degC" and temp["limit"] == pytest.approx(tmax)
    assert temp["allowed"] == pytest.approx(30.0 + 0.9 * (tmax - 30.0))
    # Cautions for the work, deferring to codes and qualified people (RULES: safety).
    cautions = " ".join(plan.cautions)
    for word in ("Mains", "charged", "selenium", "variac"):
        assert word in cautions
    assert "qualified technician" in plan.disclaimer
    assert "qualified technician" in plan.text()


def test_planned_schedule_stays_inside_every_limit_in_the_envelope(plan):
    # The schedule in netlist words, put on the mains in the file's own text and run as a
    # warm-up from Python, independently of the planner's own verification.
    text = STORED.read_text()
    mains = re.search(r"^voltage MAINS .*$", text, re.M).group(0)
    text = text.replace(mains, f'{mains} schedule="{plan.schedule}"')
    c = disc.parse(text, str(STORED))
    w = c.warm_up(plan.total_time)
    assert w.stopped_by == "" and w.failures == [] and not w.failed
    assert w.end_time == pytest.approx(plan.total_time)
    assert not any("temperature" in x["what"] for x in w.first_limits)
    s = w.series
    temp, reverse = plan.limits[0], plan.limits[1]
    plates = c["SR1"].plates
    # Each limit at the planner's margin, to the slow steps' resolution (1 K of temperature,
    # 2 % of dissipation, as tests/analysis/power_up_test.cpp derives them).
    assert np.max(s["max(temp:SR1)"]) - 273.15 <= temp["allowed"] + 1.0
    assert np.max(s["prev:SR1"]) / plates <= reverse["allowed"] * 1.02
    # The deformed stack re-forms: its forming state rises from the storage value to near 1.
    assert s["form:SR1"][0] < 0.5 and s["form:SR1"][-1] > 0.95


def test_boxed_in_stack_is_to_be_replaced():
    # The same stack with a tenth of its cooling (docs/power-up.md, "When to replace").
    c = disc.load(STORED)
    c["SR1"].cooling = 0.2
    p = c.plan_power_up("SR1", max_time=3600)
    assert p.verdict == "replace" and p.replace
    assert p.reasons and "(common practice)" in p.reasons[0]
    assert "replace" in p.text()


def test_planner_errors_and_cancel():
    c = disc.load(STORED)
    with pytest.raises(ValueError, match="'C1' is not a stack"):
        c.plan_power_up("C1")
    with pytest.raises(ValueError, match="margin"):
        c.plan_power_up("SR1", margin=1.5)
    lines = []

    def stop(line):
        lines.append(line)
        return False

    with pytest.raises(KeyboardInterrupt):
        c.plan_power_up("SR1", progress=stop)
    assert len(lines) == 1 and lines[0].startswith("power-up: trying")


def test_warm_up_summary_matches_the_command_line(tmp_path):
    # Switched straight on, the stored stack reaches a rating: the summary's first limits,
    # trends and report are those `disc run` prints and writes for `run warm-up`.
    cli = need_cli()
    netlist = tmp_path / "stored.disc"
    netlist.write_text(STORED.read_text() + "run warm-up duration=10min\n")
    out = subprocess.run([cli, "run", str(netlist), "-o", str(tmp_path / "out")],
                         capture_output=True, text=True)
    assert out.returncode in (0, 4), out.stderr
    w = disc.load(netlist).warm_up(600.0)
    # The block without its first line, which carries the wall time.
    block = w.text().splitlines()[1:]
    printed = out.stdout.splitlines()
    start = next(k for k, line in enumerate(printed) if line.startswith("WARM-UP"))
    assert printed[start + 1:start + 1 + len(block)] == block
    assert w.first_limits, "the straight switch-on reaches a rating"
    times = [x["time_s"] for x in w.first_limits]
    assert times == sorted(times) and 0.0 <= times[0] <= w.end_time
    assert w.limit_times()[w.first_limits[0]["what"]] == times[0]
    trends = {t["what"]: t for t in w.trends}
    leak = trends["SR1: mean reverse (leakage) current"]
    # Leakage falls as the plates re-form; the series holds the same figure (mA in the trend).
    assert leak["end"] < leak["start"]
    assert w.series["irev:SR1"][-1] * 1e3 == pytest.approx(leak["end"], rel=1e-12)
    report = json.loads((tmp_path / "out" / "report.json").read_text())
    mine = w.report()
    for d in (report, mine):
        d["run"].pop("wall_s")
    assert mine == report
    # A row at the start, at every accepted slow step and at every tenth of the duration that a
    # step passed over.
    assert w.stats["slow_steps"] + w.stats["interpolated_rows"] == len(w.series.time) - 1
    for k in range(1, 10):
        assert min(abs(t - 60.0 * k) for t in w.series.time) < 1e-6 * 600.0
