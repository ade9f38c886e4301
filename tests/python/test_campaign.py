"""Campaigns from Python: the generator against numpy's Philox, the table as a pandas DataFrame,
the summary, and a Dask LocalCluster of two worker processes giving the local run's table."""
import pathlib

import numpy as np
import pytest

import disc
from conftest import need_module

NETLISTS = pathlib.Path(__file__).resolve().parents[2] / "netlists"
SIGNALLING = NETLISTS / "signalling-parallel-stacks.disc"
MC = dict(builds=4, seed=11, tolerance=["C1 capacitance -20% +50%", "MAINS rms 10%"], stop=0.06)


def test_philox_matches_numpy():
    # numpy.random.Philox is Philox4x64-10 (Salmon et al., SC 2011); it increments its counter
    # before each block, so a generator set to counter c - 1 yields the block of counter c.
    rng = np.random.default_rng(2)
    for _ in range(20):
        counter = [int(x) for x in rng.integers(1, 2**63, size=4, dtype=np.uint64)]
        key = [int(x) for x in rng.integers(0, 2**63, size=2, dtype=np.uint64)]
        before = [counter[0] - 1] + counter[1:]
        g = np.random.Philox(key=np.array(key, dtype=np.uint64),
                             counter=np.array(before, dtype=np.uint64))
        assert disc._disc.philox4x64(counter, key) == [int(x) for x in g.random_raw(4)]


def test_table_is_a_dataframe_with_units_and_a_summary(tmp_path):
    need_module("pandas")
    res = disc.campaign(SIGNALLING, threads=1, **MC)
    df = res.table
    assert list(df.index) == [0, 1, 2, 3]
    assert (df["status"] == "ok").all()
    assert df.attrs["units"]["C1.capacitance"] == "F"
    assert df["C1.capacitance"].between(0.8 * 4700e-6, 1.5 * 4700e-6).all()
    assert df["MAINS.rms"].between(0.9 * 230, 1.1 * 230).all()
    np.testing.assert_allclose(df["SR1.arm1.share"] + df["SR1.arm2.share"], 1.0, rtol=1e-9)
    assert res.reading[0].startswith("In 4 builds with typical plate spread, column")
    assert res.text.index("READING") < res.text.index("SHARING")
    assert {s["stack"] for s in res.summary["sharing"]} == {"SR1", "SR2", "SR3", "SR4"}
    files = res.write(tmp_path / "mc")
    assert sorted(pathlib.Path(f).name for f in files) == [
        "campaign.csv", "campaign.html", "campaign.json", "disc-manifest.txt"]
    # The CSV reads back into the same numbers (17 significant digits).
    import pandas as pd

    back = pd.read_csv(tmp_path / "mc" / "campaign.csv", float_precision="round_trip")
    np.testing.assert_array_equal(back["output.mean [V]"].to_numpy(), df["output.mean"].to_numpy())


def test_threads_and_text_give_the_same_table():
    need_module("pandas")
    a = disc.campaign(SIGNALLING, threads=1, **MC).table
    b = disc.campaign(SIGNALLING.read_text(), threads=2, **MC).table
    assert a.drop(columns=[]).equals(b)


def test_bad_statements_are_netlist_errors():
    with pytest.raises(disc.NetlistError, match="did you mean 'capacitance'"):
        disc.campaign(SIGNALLING, tolerance=["C1 capacitanse 10%"])


def test_dask_local_cluster_gives_the_local_table():
    need_module("pandas")
    distributed = need_module("distributed")
    local = disc.campaign(SIGNALLING, threads=1, **MC).table
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        seen = []
        remote = disc.campaign(SIGNALLING, client=client, chunk=1,
                               progress=lambda d, t: seen.append((d, t)), **MC).table
    assert remote.equals(local)
    assert seen == [(1, 4), (2, 4), (3, 4), (4, 4)]  # one call per returned chunk


def test_periodic_basis_on_a_dask_cluster_gives_the_local_table():
    # Each worker finds the nominal circuit's settled period itself and starts its variants'
    # shooting from it, as the local run does: the same rows, number for number.
    need_module("pandas")
    distributed = need_module("distributed")
    pss = dict(MC, basis="periodic")
    del pss["stop"]
    local = disc.campaign(SIGNALLING, threads=2, **pss).table
    assert (local["basis"] == "periodic").all()
    assert local["SR1.surge_peak"].isna().all()  # a settled period has no switch-on
    assert (local["output.settled"] == 1).all()
    with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                  dashboard_address=None) as cluster, \
            distributed.Client(cluster) as client:
        remote = disc.campaign(SIGNALLING, client=client, chunk=1, **pss).table
    assert remote.equals(local)
    with pytest.raises(ValueError, match="basis must be"):
        disc.campaign(SIGNALLING, **dict(pss, basis="steady"))


def test_progress_reports_and_cancels():
    calls = []
    disc.campaign(SIGNALLING, threads=1, progress=lambda d, t: calls.append((d, t)), **MC)
    assert calls and calls[-1] == (4, 4)  # the last variant always reports
    with pytest.raises(KeyboardInterrupt, match="cancelled"):
        disc.campaign(SIGNALLING, threads=1, progress=lambda d, t: False, **MC)


def test_a_circuit_runs_locally_but_not_on_a_cluster():
    need_module("pandas")
    c = disc.load(SIGNALLING)
    c["RRELAYS"].resistance = 80.0  # the file no longer describes it
    res = disc.campaign(c, threads=1, **MC)
    t = res.table  # the changed load (Ohm's law), not the file's 60 ohm
    np.testing.assert_allclose(t["output.load_current"], t["output.mean"] / 80.0, rtol=1e-6)
    with pytest.raises(ValueError, match="not a Circuit"):
        disc.campaign(c, client=object(), **MC)
