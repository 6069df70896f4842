"""The fleet example on a dask.distributed LocalCluster with two workers: its merged figures
against one single-process pass over every row (counts, maxima and quantiles exactly, as the
sketches merge exactly; bias and RMS to rounding), its per-device figures against
`clampwise compare` ([practice] the CLI is the reference), and the merged quantiles against the
exact order statistics within the sketch's relative accuracy ([pub] Masson, Rim & Lee,
DDSketch, PVLDB 12(12), 2019)."""

import csv
import json
import pathlib
import subprocess
import sys

import numpy as np
import pytest

import clampwise as cw
from conftest import BRAKE, cli_json, run_cli

EXAMPLE = pathlib.Path(__file__).resolve().parents[1] / "examples" / "fleet_replay.py"


@pytest.fixture(scope="module")
def fleet(workdir):
    root = workdir / "fleet"
    for d, (seed, scale, files) in enumerate([(1, 0.9, 1), (2, 1.0, 1), (3, 1.1, 1), (4, 0.95, 2)]):
        folder = root / f"unit-{d}"
        folder.mkdir(parents=True)
        for day in range(files):
            cw.synth(BRAKE, folder / f"day-{day}.csv", scenario="hoist", rows=15_000,
                     seed=seed * 10 + day, mu_scale=scale)
    return root


def single_pass(files):
    """The rows of one device in one pass over its files in order, on one estimator."""
    est, parts = cw.Estimator(BRAKE), []
    for f in files:
        parts.append(est.step_batch(cw.read_trace(BRAKE, f)))
    record = est.save_record(sequence=len(files) - 1)
    return {k: np.concatenate([p[k] for p in parts]) for k in parts[0]}, record


def test_fleet_on_two_workers_equals_one_pass(fleet, workdir):
    out = workdir / "fleet-out"
    p = subprocess.run([sys.executable, str(EXAMPLE), "--config", str(BRAKE), "--fleet", str(fleet),
                        "--out", str(out), "--workers", "2", "--chunk-rows", "4096"],
                       capture_output=True, text=True, timeout=600)
    assert p.returncode == 0, p.stderr
    summary = json.loads((out / "fleet-summary.json").read_text(encoding="utf-8"))
    assert summary["workers"] == 2
    assert len(summary["devices"]) == 4

    everything = cw.ErrorStats(10.0)
    errors = []
    total = 0
    for d in sorted(summary["devices"], key=lambda d: d["device"]):
        rows, record = single_pass(d["files"])
        # The last state record: the same slow state after the same rows.
        assert d["state_record_hex"] == record.hex()
        total += len(rows["line"])
        gated = (rows["state"] == "slipping") & ~np.isnan(rows["torque_Nm"]) & ~np.isnan(rows["torque_ref_Nm"])
        e = (rows["torque_Nm"] - rows["torque_ref_Nm"])[gated]
        everything.add(e, rows["torque_ref_Nm"][gated])
        errors.append(e)
        if len(d["files"]) == 1:
            # One file: the device's figures are compare's on the CLI's own estimate file.
            est_file = workdir / f"{d['device']}.estimate.csv"
            run_cli("replay", "-q", "-c", BRAKE, d["files"][0], "-o", est_file)
            _, doc = cli_json("compare", est_file)
            assert d["report"] == doc["files"][0]["report"]["gated"]
    assert summary["rows"] == total
    want, got = everything.report(), summary["fleet"]
    for k in ("n", "max_abs_nm", "p95_nm", "p99_nm"):
        assert got[k] == want[k], k
    for k in ("bias_nm", "rms_nm"):
        assert got[k] == pytest.approx(want[k], rel=1e-12)
    for k in ("n", "max_abs_pct", "p95_pct", "p99_pct"):
        assert got["relative"][k] == want["relative"][k], k
    exact = np.sort(np.abs(np.concatenate(errors)))
    for q, key in ((0.95, "p95_nm"), (0.99, "p99_nm")):
        x = exact[int(np.floor(q * (len(exact) - 1)))]
        assert abs(got[key] - x) <= cw.QuantileSketch.RELATIVE_ACCURACY * x * 1.0001
    with open(out / "fleet-summary.csv", newline="", encoding="utf-8") as f:
        table = list(csv.DictReader(f))
    assert [r["device"] for r in table][-1] == "fleet" and len(table) == 5
    assert float(table[-1]["p99_nm"]) == got["p99_nm"]
