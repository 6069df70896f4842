"""`Estimator`: chunks on one object, or on fresh objects with the snapshot carried between
them, give one pass bit for bit; the state record is the core's (88 bytes, [pub] the core's
documented layout) and round-trips; a bad batch, snapshot or record is refused with a message
and changes nothing."""

import numpy as np
import pytest

import clampwise as cw
from conftest import BRAKE, CLUTCH


def concat(parts):
    return {k: np.concatenate([p[k] for p in parts]) for k in parts[0]}


def assert_same(a, b):
    assert list(a) == list(b)
    for k in a:
        if a[k].dtype == object:
            assert a[k].tolist() == b[k].tolist(), k
        else:
            np.testing.assert_array_equal(a[k], b[k], err_msg=k)


@pytest.mark.parametrize("config,trace", [(BRAKE, "brake_trace"), (CLUTCH, "clutch_trace")])
def test_chunks_equal_one_pass(config, trace, request):
    trace = request.getfixturevalue(trace)
    samples = cw.read_trace(config, trace)
    one = cw.Estimator(config).step_batch(samples)
    # The file replay is the reference for the one pass.
    frame = cw.replay(config, trace)
    for k in one:
        if k in ("state", "flags"):
            assert one[k].tolist() == frame[k].astype(str).tolist()
        else:
            np.testing.assert_array_equal(one[k], frame[k].to_numpy(), err_msg=k)
    est = cw.Estimator(config)
    rng = np.random.default_rng(5)
    cuts = np.sort(rng.choice(np.arange(1, len(samples)), size=40, replace=False))
    edges = [0, 1, *cuts.tolist(), len(samples)]
    parts = [est.step_batch(samples.iloc[a:b]) for a, b in zip(edges, edges[1:]) if b > a]
    parts.append(est.step_batch(samples.iloc[0:0]))  # an empty batch is no step
    assert_same(concat(parts), one)


def test_lines_continue_across_batches():
    est = cw.Estimator(BRAKE)
    batch = {"t_s": [0.0, 0.001], "omega_in_rad_s": [0.0, 0.0],
             **{f"force_{k}_N": [1000.0, 1000.0] for k in (1, 2, 3)}}
    assert est.step_batch(batch)["line"].tolist() == [1, 2]
    assert est.step_batch(batch)["line"].tolist() == [3, 4]
    assert est.next_line == 5


@pytest.mark.parametrize("config,trace", [(BRAKE, "brake_trace"), (CLUTCH, "clutch_trace")])
def test_snapshot_between_fresh_estimators_equals_one_pass(config, trace, request):
    # The identity the snapshot promises [calc]: save → a fresh Estimator → restore between
    # every chunk changes no row.
    trace = request.getfixturevalue(trace)
    samples = cw.read_trace(config, trace)
    assert "line" in samples.columns  # the rows keep their file lines across objects
    one = cw.Estimator(config).step_batch(samples)
    rng = np.random.default_rng(11)
    cuts = np.sort(rng.choice(np.arange(1, len(samples)), size=30, replace=False))
    edges = [0, *cuts.tolist(), len(samples)]
    parts, snapshot = [], None
    for n, (a, b) in enumerate(zip(edges, edges[1:])):
        if n % 2:
            est = cw.Estimator(config)
            est.restore(snapshot)
        else:
            est = cw.Estimator(config, snapshot)
        parts.append(est.step_batch(samples.iloc[a:b]))
        snapshot = est.save()
        assert snapshot[:4] == b"CWSN" and snapshot != est.save_record()
    assert_same(concat(parts), one)


def test_bad_snapshot_is_refused_and_changes_nothing(brake_trace):
    samples = cw.read_trace(BRAKE, brake_trace)
    est = cw.Estimator(BRAKE)
    est.step_batch(samples.iloc[:500])
    snapshot = est.save()
    with pytest.raises(cw.UsageError, match="snapshot refused: snapshot has 3 force channels"):
        cw.Estimator(CLUTCH, snapshot)
    for at in (0, 5, 30, len(snapshot) - 1):
        broken = bytearray(snapshot)
        broken[at] ^= 0x04
        with pytest.raises(cw.UsageError, match="snapshot refused"):
            est.restore(bytes(broken))
    with pytest.raises(cw.UsageError, match="snapshot refused"):
        est.restore(snapshot[:-1])
    with pytest.raises(cw.UsageError, match="snapshot refused: not an estimator snapshot"):
        est.restore(est.save_record())
    with pytest.raises(cw.UsageError, match="not both"):
        cw.Estimator(BRAKE, snapshot, record=est.save_record())
    assert est.save() == snapshot  # nothing changed


def test_state_record_round_trips(brake_trace):
    samples = cw.read_trace(BRAKE, brake_trace)
    est = cw.Estimator(BRAKE)
    est.step_batch(samples)
    record = est.save_record(sequence=7)
    assert isinstance(record, bytes) and len(record) == cw.RECORD_LEN == 88
    assert record[:4] == b"CWST"  # the core's record magic
    fresh = cw.Estimator(BRAKE, record=record)
    assert fresh.save_record(sequence=7) == record
    other = cw.Estimator(BRAKE)
    other.restore_record(record)
    assert other.save_record(sequence=7) == record
    # The slow state carried over: the restored estimator starts from the heated, bedded
    # lining, a fresh one from the config's initial state.
    tail = samples.iloc[-200:]
    warm = cw.Estimator(BRAKE, record=record).step_batch(tail)
    cold = cw.Estimator(BRAKE).step_batch(tail)
    assert warm["bedding"][0] > cold["bedding"][0] or warm["lining_temp_C"][0] != cold["lining_temp_C"][0]


def test_record_of_another_config_is_refused():
    record = cw.Estimator(BRAKE).save_record()
    with pytest.raises(cw.UsageError, match="state record refused"):
        cw.Estimator(CLUTCH, record=record)
    broken = bytearray(record)
    broken[20] ^= 0xFF
    est = cw.Estimator(BRAKE)
    with pytest.raises(cw.UsageError, match="state record refused"):
        est.restore_record(bytes(broken))
    with pytest.raises(cw.UsageError, match="state record refused"):
        est.restore_record(record[:40])
    assert est.save_record() == record  # nothing changed


def test_bad_batch_is_refused_and_changes_nothing():
    est = cw.Estimator(BRAKE)
    good = {"t_s": [0.0, 0.001, 0.002], "omega_in_rad_s": [1.0, 1.0, 1.0],
            **{f"force_{k}_N": [20_000.0] * 3 for k in (1, 2, 3)}}
    with pytest.raises(cw.UsageError, match="missing array 'force_3_N'"):
        est.step_batch({k: v for k, v in good.items() if k != "force_3_N"})
    bad = dict(good, omega_in_rad_s=[1.0, float("nan"), 1.0])
    with pytest.raises(cw.UsageError, match=r"row 1 of the batch \(line 2\): 'omega_in_rad_s' is NaN"):
        est.step_batch(bad)
    with pytest.raises(cw.UsageError, match="has 2 values but 't_s' has 3"):
        est.step_batch(dict(good, temp_C=[1.0, 2.0]))
    with pytest.raises(cw.UsageError, match="not a whole number of ADC counts"):
        est.step_batch({**{k: v for k, v in good.items() if not k.startswith("force")},
                        **{f"force_{k}_counts": [1.5, 2, 3] for k in (1, 2, 3)}})
    assert est.next_line == 1
    assert est.step_batch(good)["line"].tolist() == [1, 2, 3]
    with pytest.raises(cw.UsageError, match="omega_out_rad_s"):
        cw.Estimator(CLUTCH).step_batch(good)
