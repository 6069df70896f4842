"""The replay and step loops release the interpreter: another Python thread keeps running
while they work ([practice] with a long switch interval, a native call that held the GIL would
keep every other Python thread stopped for its whole length, so the counter could not move)."""

import sys
import threading

import numpy as np

import clampwise as cw
from conftest import BRAKE


def count_during(call):
    state = {"n": 0, "stop": False}

    def spin():
        while not state["stop"]:
            state["n"] += 1

    old = sys.getswitchinterval()
    sys.setswitchinterval(0.5)
    t = threading.Thread(target=spin)
    t.start()
    try:
        while state["n"] == 0:
            pass
        before = state["n"]
        call()
        during = state["n"] - before
    finally:
        state["stop"] = True
        t.join()
        sys.setswitchinterval(old)
    return during


def test_native_loops_release_the_interpreter(brake_trace):
    # The native calls alone: the pure-Python layer around them would give the other thread
    # its turns at every switch interval whatever the extension did.
    assert count_during(lambda: cw._native.replay(str(BRAKE), str(brake_trace))) > 1000
    samples = cw.read_trace(BRAKE, brake_trace)
    arrays = {c: np.ascontiguousarray(samples[c], dtype=np.float64) for c in samples.columns}
    est = cw._native.Estimator(str(BRAKE))
    assert count_during(lambda: est.step_batch(arrays)) > 1000
