"""Mergeable statistics: the sim's quantile sketch from Python, exact merging, bytes round
trips, quantiles within the relative accuracy of the exact order statistics ([pub] Masson, Rim
& Lee, DDSketch, PVLDB 12(12), 2019: relative error α), and `ErrorStats` reporting what
`clampwise compare` reports for the same rows."""

import pickle

import numpy as np
import pytest

import clampwise as cw
from conftest import BRAKE, cli_json, run_cli


def test_quantiles_within_relative_accuracy():
    rng = np.random.default_rng(1)
    xs = rng.lognormal(mean=3.0, sigma=1.5, size=50_000)
    s = cw.QuantileSketch()
    s.add(-xs)
    srt = np.sort(xs)
    for q in (0.0, 0.5, 0.9, 0.95, 0.99, 1.0):
        exact = srt[int(np.floor(q * (len(xs) - 1)))]
        assert abs(s.quantile(q) - exact) <= cw.QuantileSketch.RELATIVE_ACCURACY * exact * 1.0001
    assert cw.QuantileSketch().quantile(0.5) is None


def test_merge_is_exact_and_bytes_round_trip():
    rng = np.random.default_rng(2)
    parts = [rng.normal(0, 50, size=n) for n in (10, 5000, 777)]
    whole = cw.QuantileSketch()
    whole.add(np.concatenate(parts))
    merged = cw.QuantileSketch()
    for p in parts:
        one = cw.QuantileSketch()
        one.add(p)
        merged.merge(cw.QuantileSketch.from_bytes(one.to_bytes()))
    assert merged.count == whole.count == 5787
    assert merged.to_bytes() == whole.to_bytes()
    assert pickle.loads(pickle.dumps(merged)).to_bytes() == whole.to_bytes()
    with pytest.raises(cw.UsageError, match="cannot decode"):
        cw.QuantileSketch.from_bytes(whole.to_bytes()[:-3])
    with pytest.raises(cw.UsageError, match="not quantile sketch"):
        cw.QuantileSketch.from_bytes(b"XXXX" + whole.to_bytes()[4:])


def test_error_stats_report_what_compare_reports(brake_trace, workdir):
    out = workdir / "stats.estimate.csv"
    run_cli("replay", "-q", "-c", BRAKE, brake_trace, "-o", out)
    _, doc = cli_json("compare", out)
    want = doc["files"][0]["report"]["gated"]
    frame = cw.replay(BRAKE, brake_trace)
    gated = (frame["state"].astype(str) == "slipping") & frame["torque_Nm"].notna() & frame["torque_ref_Nm"].notna()
    err = (frame["torque_Nm"] - frame["torque_ref_Nm"])[gated].to_numpy()
    ref = frame["torque_ref_Nm"][gated].to_numpy()
    stats = cw.ErrorStats(floor_nm=10.0)
    stats.add(err, ref)
    assert stats.report() == want
    # Split in three and merged: counts, maxima and quantiles exactly, sums to rounding.
    merged = cw.ErrorStats(10.0)
    for idx in np.array_split(np.arange(len(err)), 3):
        part = cw.ErrorStats(10.0)
        part.add(err[idx], ref[idx])
        merged.merge(cw.ErrorStats.from_bytes(part.to_bytes()))
    got = merged.report()
    for k in ("n", "max_abs_nm", "p95_nm", "p99_nm"):
        assert got[k] == want[k], k
    for k in ("bias_nm", "rms_nm"):
        assert got[k] == pytest.approx(want[k], rel=1e-12, abs=1e-12)
    with pytest.raises(cw.UsageError, match="floors differ"):
        merged.merge(cw.ErrorStats(5.0))
