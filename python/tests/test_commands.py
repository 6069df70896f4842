"""compare, fit and synth from Python against the CLI run at test time: the same JSON summary,
the same files ([practice] the CLI is the reference)."""

import filecmp

import pytest

import clampwise as cw
from conftest import BRAKE, cli_json, run_cli


@pytest.fixture(scope="module")
def brake_estimate(brake_trace, workdir):
    out = workdir / "cmp.estimate.csv"
    run_cli("replay", "-q", "-c", BRAKE, brake_trace, "-o", out)
    return out


def test_compare_is_the_clis(brake_estimate):
    _, want = cli_json("compare", brake_estimate, "-c", BRAKE)
    got = cw.compare(brake_estimate, config=BRAKE)
    assert "CAUTION" in got.pop("human")
    assert got == want
    assert got["files"][0]["report"]["gated"]["n"] > 0


def test_compare_gate_breach(brake_estimate):
    code, want = cli_json("compare", brake_estimate, "--max-rms-nm", "0.001", check=False)
    assert code == 3
    got = cw.compare([brake_estimate], max_rms_nm=0.001)
    got.pop("human")
    assert got == want and got["ok"] is False
    with pytest.raises(cw.ThresholdError, match="RMS"):
        cw.compare(brake_estimate, max_rms_nm=0.001, raise_on_breach=True)


def test_fit_is_the_clis(workdir):
    trace = workdir / "fit-sweep.csv"
    run_cli("synth", "-q", "-c", BRAKE, "-o", trace, "--scenario", "sweep", "--mu-scale", "0.9", "--seed", "11")
    out = workdir / "fitted-cli.toml"
    _, want = cli_json("fit", "-c", BRAKE, trace, "--out", out, "--min-coverage", "50")
    got = cw.fit(BRAKE, trace, min_coverage=50.0)
    assert got["report"] == want["report"]
    assert got["config_text"] == out.read_text(encoding="utf-8")
    table = got["table"]
    assert len(table) == len(want["report"]["cells"])
    assert {"temperature_c", "slip_speed_rad_s", "prior", "fitted"} <= set(table.columns)
    # The sweep's true μ is 0.9 × the table's: the reached cells move down ([calc] of the
    # synth option's meaning).
    reached = table[table["reached"]]
    assert len(reached) > 0 and (reached["fitted"] < reached["prior"]).mean() > 0.8


def test_synth_is_the_clis(workdir):
    a, b = workdir / "synth-cli.csv", workdir / "synth-py.csv"
    _, want = cli_json("synth", "-c", BRAKE, "-o", a, "--scenario", "steady", "--rows", "1500", "--seed", "4", "--fault", "spike:1@0.5..0.6=5000")
    got = cw.synth(BRAKE, b, scenario="steady", rows=1500, seed=4, faults=["spike:1@0.5..0.6=5000"])
    assert filecmp.cmp(a, b, shallow=False)
    for doc in (want, got):
        doc["summary"].pop("elapsed_s")
        doc["summary"].pop("output")
    got.pop("human")
    assert got == want
