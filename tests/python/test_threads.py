"""One circuit run from several Python threads: each run copies the circuit under the GIL and
works on the copy without it, so threads give the serial run's results bit for bit, a parameter
changed during a run never reaches it, and a run's progress callback takes the GIL rarely."""
import pathlib
import threading
import time

import numpy as np

import disc

NETLISTS = pathlib.Path(__file__).resolve().parents[2] / "netlists"
SIGNALS = ["v:plus", "i:SR1", "i:MAINS"]


def signalling():
    return disc.load(NETLISTS / "signalling-parallel-stacks.disc")


def run(c, **kw):
    r = c.run_transient(stop=0.06, record=SIGNALS, **kw)
    return r.time.copy(), [r[s].copy() for s in SIGNALS]


def identical(a, b):
    np.testing.assert_array_equal(a[0], b[0])
    for x, y in zip(a[1], b[1]):
        np.testing.assert_array_equal(x, y)


def test_one_circuit_from_four_threads_gives_the_serial_results_bit_for_bit():
    c = signalling()
    serial = run(c)
    out = []
    lock = threading.Lock()

    def work():
        for _ in range(2):
            r = run(c)
            with lock:
                out.append(r)

    threads = [threading.Thread(target=work) for _ in range(4)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    assert len(out) == 8
    for r in out:
        identical(serial, r)


def test_a_parameter_set_during_a_run_does_not_reach_it():
    c = signalling()
    before = run(c)
    started, changed = threading.Event(), threading.Event()

    def progress(t, stop):
        # Called with the GIL held; Event.wait releases it, so the main thread can change the
        # circuit while this run is under way.
        if not started.is_set():
            started.set()
            assert changed.wait(30)
        return True

    out = {}
    worker = threading.Thread(target=lambda: out.setdefault("r", run(c, progress=progress)))
    worker.start()
    assert started.wait(60)
    c["SR1"].plates = 3
    c["RRELAYS"].resistance = 30
    changed.set()
    worker.join()
    identical(before, out["r"])
    # The next run sees the change.
    assert run(c)[1][0][-1] != before[1][0][-1]


def test_the_progress_callback_is_called_at_most_every_tenth_of_a_second():
    c = signalling()
    calls = []
    t0 = time.perf_counter()
    r = c.run_transient(stop=0.5, record=["v:plus"], progress=lambda t, s: calls.append(t))
    wall = time.perf_counter() - t0
    # Throttled by wall time: at most one call per 0.1 s (the run takes thousands of steps).
    assert len(calls) <= wall / 0.1 + 1
    assert r.stats["accepted_steps"] > 100 * max(len(calls), 1)
    assert calls == sorted(calls) and all(0 < t <= 0.5 for t in calls)


def test_a_progress_callback_returning_false_cancels_the_run():
    c = signalling()
    try:
        c.run_transient(stop=1000.0, record=["v:plus"], progress=lambda t, s: False)
    except KeyboardInterrupt as e:
        assert "cancelled" in str(e)
    else:
        raise AssertionError("the run was not cancelled")
