"""Result CSV files follow RFC 4180 (IETF, "Common Format and MIME Type for Comma-Separated
Values (CSV) Files", 2005): Python's csv module and pandas read them back column for column."""
import csv
import pathlib
import subprocess

import numpy as np
import pytest
from conftest import need_cli, need_module

import disc

NETLISTS = pathlib.Path(__file__).resolve().parents[2] / "netlists"


def small_run():
    # Signal names with commas ("v:a,b") and a colon: the header fields that need quoting.
    c = disc.parse("voltage V1 a gnd sine amplitude=10V frequency=50Hz\nresistor R1 a b 1k\n"
                   "resistor R2 b gnd 2k\n")
    return c.run_transient(stop=0.02, record=["v:a,b", "i:R1", "v:b"])


def test_csv_module_reads_every_column(tmp_path):
    r = small_run()
    path = tmp_path / "run.csv"
    r.to_csv(path)
    raw = path.read_bytes()
    assert raw.count(b"\r\n") == len(r.time) + 1  # RFC 4180 2.1: every record ends in CRLF
    assert raw.count(b"\n") == raw.count(b"\r\n")
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    header, body = rows[0], rows[1:]
    assert header == ["time [s]"] + [f"{n} [{r.unit(n)}]" for n in r.signals]
    assert "v:a,b [V]" in header
    assert len(body) == len(r.time)
    assert all(len(row) == len(header) for row in body)
    col = header.index("v:a,b [V]")
    np.testing.assert_allclose([float(row[col]) for row in body], r["v:a,b"], rtol=1e-9,
                               atol=1e-12)


def test_pandas_reads_the_same_table(tmp_path):
    pd = need_module("pandas")
    r = small_run()
    path = tmp_path / "run.csv"
    r.to_csv(path)
    frame = pd.read_csv(path)
    assert list(frame.columns) == ["time [s]"] + [f"{n} [{r.unit(n)}]" for n in r.signals]
    np.testing.assert_allclose(frame["time [s]"].to_numpy(), r.time, rtol=1e-11)
    np.testing.assert_allclose(frame["i:R1 [A]"].to_numpy(), r["i:R1"], rtol=1e-9, atol=1e-15)


def test_report_run_csv_has_one_field_per_column(tmp_path):
    # The table radio records node-pair voltages ("v:b,gnd") among its report signals.
    pd = need_module("pandas")
    subprocess.run([need_cli(), "run", "-q", str(NETLISTS / "table-radio-half-wave.disc"), "-o",
                    str(tmp_path)], check=True)
    path = tmp_path / "transient-1.csv"
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    assert any("," in field for field in rows[0])
    assert {len(row) for row in rows} == {len(rows[0])}
    frame = pd.read_csv(path)
    assert frame.shape == (len(rows) - 1, len(rows[0]))
    assert not frame.isna().any().any()
