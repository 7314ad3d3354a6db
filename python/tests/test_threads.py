"""The GIL is released while the library works, and Ctrl-C interrupts a
long computation. No timing is asserted here (speed is measured by
python/bench/bench.py and reported in the README)."""

import _thread
import pathlib
import threading

import numpy as np
import pytest

import canonode

RW = pathlib.Path("samples/regge_wheeler.ode")
DEMO = pathlib.Path("samples/demo_tamarind_halo.ode")


def test_two_threads_give_the_sequential_results():
    jobs = [dict(at={"M": 1, "l": 2, "s": 2}, overtones=(0, 3)), dict(at={"M": 1, "l": 3, "s": 2}, overtones=(0, 3))]
    alone = [canonode.spectrum(RW, **j).omega for j in jobs]
    out = [None, None]

    def work(i):
        out[i] = canonode.spectrum(RW, **jobs[i]).omega

    ts = [threading.Thread(target=work, args=(i,)) for i in range(2)]
    for t in ts:
        t.start()
    for t in ts:
        t.join()
    for a, b in zip(alone, out):
        assert np.array_equal(a, b)


def test_python_runs_while_the_library_works():
    # If the call held the GIL, this thread could not run at all until it
    # returned. The call is a 100-point scan (a few tenths of a second), long
    # enough that the counting thread, waking every millisecond, ticks many
    # times however fast a single spectrum becomes.
    done = threading.Event()
    ticks = []

    def count():
        while not done.is_set():
            ticks.append(1)
            done.wait(0.001)

    t = threading.Thread(target=count)
    before = len(ticks)
    t.start()
    try:
        canonode.scan(DEMO, "h", np.linspace(0, 2, 100), at={"M": 1, "l": 2}, overtones=(0, 2))
        during = len(ticks)
    finally:
        done.set()
        t.join()
    assert during - before > 3


def test_ctrl_c_interrupts_a_long_scan():
    # A scan of 400 points runs for many seconds; the simulated Ctrl-C
    # (the SIGINT handler of the main thread) arrives after a moment.
    timer = threading.Timer(0.5, _thread.interrupt_main)
    timer.start()
    try:
        with pytest.raises(KeyboardInterrupt):
            canonode.scan(DEMO, "h", np.linspace(0, 2, 400), at={"M": 1, "l": 2}, overtones=(0, 2))
    finally:
        timer.cancel()


def _lowest(at):
    return canonode.spectrum(RW, at=at).omega[0]


def test_process_pools_and_pickling():
    import concurrent.futures
    import pickle

    ats = [{"M": 1, "l": 2, "s": 2}, {"M": 1, "l": 3, "s": 2}]
    with concurrent.futures.ProcessPoolExecutor(max_workers=2) as pool:
        got = list(pool.map(_lowest, ats))
    assert got == [_lowest(a) for a in ats]
    s = canonode.spectrum(RW, at=ats[0])
    assert np.array_equal(pickle.loads(pickle.dumps(s)).omega, s.omega)
    try:
        canonode.reduce("var z\node w'' + * = 0\n")
    except canonode.InputError as e:
        back = pickle.loads(pickle.dumps(e))
        assert (back.line, back.column, str(back)) == (e.line, e.column, str(e))
