"""The disc program's output folders: written whole and swapped into place, never mixed, nothing
left behind by an interrupted run (docs/limits.md, "Output folders")."""
import fcntl
import json
import os
import signal
import subprocess
import time

from conftest import need_cli

# A small supply; the second differs in title and in the number of plot files, so a folder
# mixing the two runs would show.
SUPPLY = """title "{title}"
voltage VIN in gnd sine rms=10V frequency=50Hz
resistor RS in p 7.6k
stack D1 p plus type=cuox-3mm-instrument
{extra}resistor RL plus gnd 100ohm
output plus gnd load=RL kind=resistive
run transient stop={stop}
"""


def netlist(folder, name, title, stop="0.1s", extra=""):
    path = folder / name
    path.write_text(SUPPLY.format(title=title, stop=stop, extra=extra))
    return str(path)


def leftovers(folder):
    """Temporary folders and files of a run beside its output folder."""
    return [n for n in os.listdir(folder) if ".tmp-" in n or ".old-" in n or n.endswith(".part")]


def prepared(parent):
    """The folders of runs into parent/out that have written all their files and their
    manifest, and wait for their swap."""
    return [n for n in os.listdir(parent)
            if n.startswith(".out.tmp-") and (parent / n / "disc-manifest.txt").exists()]


def whole(folder):
    """The folder holds exactly what its manifest lists; returns report.json's title."""
    listed = [line for line in (folder / "disc-manifest.txt").read_text().splitlines()
              if line and not line.startswith("#")]
    assert sorted(os.listdir(folder)) == sorted(listed + ["disc-manifest.txt"])
    return json.loads((folder / "report.json").read_text())["title"]


def test_two_runs_into_one_folder_take_turns(tmp_path):
    cli = need_cli()
    one = netlist(tmp_path, "one.disc", "run one")
    two = netlist(tmp_path, "two.disc", "run two",
                  extra="stack D2 p plus type=cuox-3mm-instrument\n")
    out = tmp_path / "out"
    # Both runs are made to reach their swap together: the lock they take on the parent folder
    # is held here until both have prepared their files (their manifests are written).
    parent = os.open(tmp_path, os.O_RDONLY)
    fcntl.flock(parent, fcntl.LOCK_EX)
    procs = [subprocess.Popen([cli, "run", "-q", f, "-o", str(out)]) for f in (one, two)]
    deadline = time.time() + 120
    while len(prepared(tmp_path)) < 2:
        assert time.time() < deadline, "the runs did not prepare their folders"
        assert all(p.poll() is None for p in procs), "a run ended before its swap"
        time.sleep(0.01)
    fcntl.flock(parent, fcntl.LOCK_UN)
    os.close(parent)
    assert [p.wait(timeout=120) for p in procs] == [0, 0]
    assert whole(out) in ("run one", "run two")
    assert leftovers(tmp_path) == []


def test_stale_file_of_an_earlier_run_is_gone(tmp_path):
    cli = need_cli()
    out = tmp_path / "out"
    two = netlist(tmp_path, "two.disc", "two stacks",
                  extra="stack D2 p plus type=cuox-3mm-instrument\n")
    subprocess.run([cli, "run", "-q", two, "-o", str(out)], check=True)
    first = set(os.listdir(out))
    one = netlist(tmp_path, "one.disc", "one stack")
    subprocess.run([cli, "run", "-q", one, "-o", str(out)], check=True)
    assert whole(out) == "one stack"
    assert set(os.listdir(out)) <= first
    assert leftovers(tmp_path) == []


def test_foreign_file_refuses_the_folder_before_the_run(tmp_path):
    cli = need_cli()
    out = tmp_path / "out"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    # A long run: refused at once (exit 2), not after simulating.
    slow = netlist(tmp_path, "slow.disc", "slow", stop="60s")
    start = time.time()
    r = subprocess.run([cli, "run", "-q", slow, "-o", str(out)], capture_output=True, text=True)
    assert r.returncode == 2
    assert "'notes.txt'" in r.stderr and "disc-manifest.txt" in r.stderr
    assert time.time() - start < 20
    assert os.listdir(out) == ["notes.txt"]


def test_symlink_planted_in_the_folder_is_not_followed(tmp_path):
    cli = need_cli()
    out = tmp_path / "out"
    one = netlist(tmp_path, "one.disc", "one")
    subprocess.run([cli, "run", "-q", one, "-o", str(out)], check=True)
    victim = tmp_path / "victim.txt"
    victim.write_text("precious")
    (out / "report.json").unlink()
    (out / "report.json").symlink_to(victim)
    subprocess.run([cli, "run", "-q", one, "-o", str(out)], check=True)
    assert victim.read_text() == "precious"
    assert not (out / "report.json").is_symlink()
    assert whole(out) == "one"


def test_sigint_while_simulating_leaves_nothing(tmp_path):
    cli = need_cli()
    out = tmp_path / "out"
    # 600 s of mains takes tens of seconds even on a fast, idle machine (60 s took under one).
    slow = netlist(tmp_path, "slow.disc", "slow", stop="600s")
    p = subprocess.Popen([cli, "run", "-q", slow, "-o", str(out)])
    time.sleep(1.0)
    assert p.poll() is None, "the run ended before it could be interrupted"
    p.send_signal(signal.SIGINT)
    assert p.wait(timeout=60) == -signal.SIGINT
    assert not out.exists()
    assert leftovers(tmp_path) == []


def test_sigint_while_streaming_keeps_the_earlier_run(tmp_path):
    # A long transient streams its CSV into the prepared folder as it goes; interrupted there,
    # the prepared folder goes and the earlier run's folder stays as it was.
    cli = need_cli()
    out = tmp_path / "out"
    one = netlist(tmp_path, "one.disc", "first")
    subprocess.run([cli, "run", "-q", one, "-o", str(out)], check=True)
    before = {n: (out / n).read_bytes() for n in os.listdir(out)}
    slow = netlist(tmp_path, "slow.disc", "slow", stop="60s")
    p = subprocess.Popen([cli, "run", "-q", slow, "-o", str(out)])
    deadline = time.time() + 120
    while True:
        streaming = [tmp_path / n / "transient-1.csv" for n in os.listdir(tmp_path)
                     if n.startswith(".out.tmp-")]
        if streaming and streaming[0].exists() and streaming[0].stat().st_size > 1 << 16:
            break
        assert time.time() < deadline and p.poll() is None, "the run never streamed its rows"
        time.sleep(0.01)
    p.send_signal(signal.SIGINT)
    assert p.wait(timeout=60) == -signal.SIGINT
    assert leftovers(tmp_path) == []
    assert {n: (out / n).read_bytes() for n in os.listdir(out)} == before


def test_sigint_while_writing_removes_the_prepared_folder(tmp_path):
    cli = need_cli()
    out = tmp_path / "out"
    one = netlist(tmp_path, "one.disc", "first")
    subprocess.run([cli, "run", "-q", one, "-o", str(out)], check=True)
    before = {n: (out / n).read_bytes() for n in os.listdir(out)}
    # The run is held at its swap (the lock on the parent folder), its files written, and
    # interrupted there: the earlier run's folder stays as it was, nothing else is left.
    two = netlist(tmp_path, "two.disc", "second")
    parent = os.open(tmp_path, os.O_RDONLY)
    fcntl.flock(parent, fcntl.LOCK_EX)
    try:
        p = subprocess.Popen([cli, "run", "-q", two, "-o", str(out)])
        deadline = time.time() + 120
        while True:
            prepared = [n for n in os.listdir(tmp_path) if n.startswith(".out.tmp-")]
            if prepared and (tmp_path / prepared[0] / "disc-manifest.txt").exists():
                break
            assert time.time() < deadline and p.poll() is None, "the run never reached its swap"
            time.sleep(0.01)
        p.send_signal(signal.SIGINT)
        assert p.wait(timeout=60) == -signal.SIGINT
    finally:
        fcntl.flock(parent, fcntl.LOCK_UN)
        os.close(parent)
    assert leftovers(tmp_path) == []
    assert {n: (out / n).read_bytes() for n in os.listdir(out)} == before
