"""`clampwise.replay` against the `clampwise replay` binary run at test time: the same columns
in the same order, every value equal ([practice] the CLI is the reference implementation the
package binds; its file is parsed here with Python's own float(), not with the package)."""

import math

import numpy as np
import pandas as pd
import pytest

import clampwise as cw
from conftest import BRAKE, CLUTCH, read_estimate_csv, run_cli, same_float


def assert_frame_equals_file(frame: pd.DataFrame, path):
    header, cols = read_estimate_csv(path)
    assert list(frame.columns) == header
    assert len(frame) == len(cols["line"])
    for name in header:
        got = frame[name].tolist()
        want = cols[name]
        if name == "line":
            assert got == [int(x) for x in want]
        elif name in ("state", "flags"):
            assert [str(x) for x in got] == want, name
        else:
            wf = [float(x) if x != "" else math.nan for x in want]
            bad = [i for i, (g, w) in enumerate(zip(got, wf)) if not same_float(g, w)]
            assert not bad, f"{name}: first difference at row {bad[0]}: {got[bad[0]]!r} vs {want[bad[0]]!r}"


@pytest.mark.parametrize("config,trace", [(BRAKE, "brake_trace"), (CLUTCH, "clutch_trace")])
def test_replay_equals_cli_estimate_file(config, trace, request, workdir):
    trace = request.getfixturevalue(trace)
    out = workdir / f"{trace.stem}.estimate.csv"
    run_cli("replay", "-q", "-c", config, trace, "-o", out)
    frame = cw.replay(config, trace)
    assert_frame_equals_file(frame, out)
    # The trace has every state of a hoist cycle and flagged rows, so every column is exercised.
    assert frame["flags"].astype(str).str.len().gt(0).any()
    assert frame.attrs["summary"]["rows"] == len(frame)


def test_replay_options_are_the_clis(brake_trace, workdir):
    # Every second row at twice the period, resampled back by zero-order hold: both sides
    # take the same options.
    half = workdir / "half-rate.csv"
    lines = open(brake_trace, encoding="utf-8").read().splitlines()
    body = [l for l in lines if not l.startswith("#")]
    half.write_text("\n".join([body[0]] + body[1::2]) + "\n", encoding="utf-8")
    out = workdir / "half-rate.estimate.csv"
    run_cli("replay", "-q", "-c", BRAKE, half, "-o", out, "--sample-period-s", "0.002", "--resample", "hold")
    frame = cw.replay(BRAKE, half, sample_period_s=0.002, resample="hold")
    assert_frame_equals_file(frame, out)


def test_dataframe_trace_equals_file(brake_trace):
    from_file = cw.replay(BRAKE, brake_trace)
    canonical = cw.read_trace(BRAKE, brake_trace)
    from_frame = cw.replay(BRAKE, canonical)
    assert list(from_frame.columns) == list(from_file.columns)
    for name in from_file.columns:
        a, b = from_file[name], from_frame[name]
        if name in ("state", "flags"):
            assert a.astype(str).tolist() == b.astype(str).tolist()
        else:
            np.testing.assert_array_equal(a.to_numpy(), b.to_numpy())


def test_dataframe_in_newtons(workdir):
    # A DataFrame with calibrated forces (N) instead of counts: the N → counts inverse is the
    # same as the CLI's for a file with force_k_N columns (mapped with --column).
    n = 3000
    t = np.arange(n) * 0.001
    ramp = np.minimum(t / 1.0, 1.0) * 25_000.0
    df = pd.DataFrame({
        "t_s": t,
        "force_1_N": ramp, "force_2_N": ramp * 1.01, "force_3_N": ramp * 0.99,
        "omega_in_rad_s": 3.0 * np.ones(n),
        "temp_C": 80.0 + t,
        "torque_ref_Nm": -ramp * 1.2,
    })
    path = workdir / "newtons.csv"
    df.to_csv(path, index=False)
    out = workdir / "newtons.estimate.csv"
    maps = [f"--column=force_{k}=force_{k}_N:N" for k in (1, 2, 3)]
    code, _, err = run_cli("replay", "-q", "-c", BRAKE, path, "-o", out, *maps, check=False)
    assert code == 0, err
    frame = cw.replay(BRAKE, df)
    header, cols = read_estimate_csv(out)
    # Line numbers differ by design: a DataFrame counts rows from 1, the file counts lines.
    assert frame["line"].tolist() == list(range(1, n + 1))
    for name in ("torque_Nm", "capacity_Nm", "clamp_force_N", "mu", "lining_temp_C"):
        want = [float(x) if x else math.nan for x in cols[name]]
        assert all(same_float(g, w) for g, w in zip(frame[name], want)), name
    assert frame["state"].astype(str).tolist() == cols["state"]
