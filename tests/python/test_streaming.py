"""Rows streamed to a CSV file as a transient runs: the same table as the whole run kept in
memory (read with Python's csv module, RFC 4180), record_from and record_spacing keep the rows
their rule names (docs/python.md), and the supply report is unchanged by streaming."""
import csv
import os
import pathlib
import subprocess

import pytest
from conftest import need_cli

import disc

NETLISTS = pathlib.Path(__file__).resolve().parents[2] / "netlists"
TABLE_RADIO = NETLISTS / "table-radio-half-wave.disc"


def rows_of(path):
    with open(path, newline="") as f:
        return list(csv.reader(f))


def figures(report):
    # The wall time is the one figure two runs of one circuit do not share.
    report = dict(report)
    report["run"] = {k: v for k, v in report["run"].items() if k != "wall_s"}
    return report


def test_streamed_csv_equals_the_in_memory_one(tmp_path):
    c = disc.load(TABLE_RADIO)
    whole = c.run_transient(stop=1.0)
    whole.to_csv(tmp_path / "memory.csv")
    streamed = c.run_transient(stop=1.0, csv=tmp_path / "streamed.csv")
    a, b = rows_of(tmp_path / "memory.csv"), rows_of(tmp_path / "streamed.csv")
    assert len(a) == len(whole.time) + 1
    assert a == b
    # The streamed Result keeps the report's span and a spread of rows before it, and counts
    # every row it wrote.
    assert streamed.recorded_rows == len(whole.time) == len(b) - 1
    assert len(streamed.time) < len(whole.time)
    assert figures(streamed.report()) == figures(whole.report())


def test_disc_run_streams_the_csv_python_keeps_in_memory(tmp_path):
    cli = need_cli()
    subprocess.run([cli, "run", "-q", str(TABLE_RADIO), "-o", str(tmp_path / "cli")], check=True)
    results, report = disc.load(TABLE_RADIO).run()
    results[0].to_csv(tmp_path / "memory.csv")
    assert rows_of(tmp_path / "cli" / "transient-1.csv") == rows_of(tmp_path / "memory.csv")
    # The streamed CSV is committed with the rest of the folder and listed in its manifest;
    # nothing is left beside the folder.
    listed = [line for line in (tmp_path / "cli" / "disc-manifest.txt").read_text().splitlines()
              if line and not line.startswith("#")]
    assert "transient-1.csv" in listed
    assert sorted(listed + ["disc-manifest.txt"]) == sorted(os.listdir(tmp_path / "cli"))
    assert [n for n in os.listdir(tmp_path) if n.startswith(".")] == []


def test_write_files_streams_into_the_committed_folder(tmp_path):
    c = disc.load(TABLE_RADIO)
    files = c.write_files(tmp_path / "py")
    assert str(tmp_path / "py" / "transient-1.csv") in files
    results, _ = c.run()
    results[0].to_csv(tmp_path / "memory.csv")
    assert rows_of(tmp_path / "py" / "transient-1.csv") == rows_of(tmp_path / "memory.csv")
    listed = (tmp_path / "py" / "disc-manifest.txt").read_text().splitlines()
    assert "transient-1.csv" in listed


def expected_times(times, record_from, spacing):
    """The rule of docs/python.md: rows from record_from on; the first, then each at least
    `spacing` after the last kept (to one part in 1e9); the run's last row always."""
    kept = []
    for k, t in enumerate(times):
        if t < record_from:
            continue
        if not kept or t >= kept[-1] + spacing * (1 - 1e-9):
            kept.append(t)
        elif k == len(times) - 1:
            kept.append(t)
    return kept


@pytest.mark.parametrize("record_from,spacing", [(0.0, 1e-3), (0.0123, 0.0), (0.0123, 2.5e-3)])
def test_record_from_and_spacing_keep_the_documented_rows(tmp_path, record_from, spacing):
    c = disc.parse("voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor R1 a b 1k\n"
                   "capacitor C1 b gnd 10uF\n")
    full = c.run_transient(stop=0.1, record=["v:b"], max_step=2e-4)
    r = c.run_transient(stop=0.1, record=["v:b"], max_step=2e-4, record_from=record_from,
                        record_spacing=spacing, csv=tmp_path / "d.csv")
    want = expected_times(list(full.time), record_from, spacing)
    body = rows_of(tmp_path / "d.csv")[1:]
    assert [float(row[0]) for row in body] == pytest.approx(want, rel=1e-11, abs=0)
    assert len(body) == len(want)
    kept = c.run_transient(stop=0.1, record=["v:b"], max_step=2e-4, record_from=record_from,
                           record_spacing=spacing)
    assert list(kept.time) == want
    with pytest.raises(ValueError, match="record spacing"):
        c.run_transient(stop=0.1, record_spacing=-1.0)


def test_a_run_past_its_step_budget_is_refused_up_front_unless_forced():
    # 0.2 s at 50 Hz: at least 200 steps at a twentieth of a period (docs/limits.md). A budget
    # of 100 refuses it before any step, naming the estimate, the way to force it and the
    # warm-up; a budget of 100000 lets it run.
    c = disc.parse("voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor R1 a b 1k\n"
                   "capacitor C1 b gnd 10uF\n")
    with pytest.raises(ValueError, match=r"at least 200 steps.*budget of 100 steps"
                                         r".*max_steps=.*run warm-up"):
        c.run_transient(stop=0.2, record=["v:b"], max_steps=100)
    r = c.run_transient(stop=0.2, record=["v:b"], max_steps=100000)
    assert r.time[-1] == pytest.approx(0.2)
    assert 200 <= r.stats["accepted_steps"] <= 100000
    with pytest.raises(ValueError, match="max-steps must lie between 1 and"):
        c.run_transient(stop=0.2, max_steps=-5)
