"""Shared fixtures: the `clampwise` binary built by cargo (the reference every check runs at
test time), the demo configs, and traces synthesised by that binary."""

import csv
import json
import math
import os
import pathlib
import subprocess

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]
CONFIGS = ROOT / "sim" / "configs"
BRAKE = CONFIGS / "demo-hoist-brake.toml"
CLUTCH = CONFIGS / "demo-wet-clutch.toml"


def cli_binary() -> pathlib.Path:
    b = pathlib.Path(os.environ.get("CLAMPWISE_BIN", ROOT / "target" / "release" / "clampwise"))
    if not b.exists():
        pytest.fail(f"{b} missing: build it with `cargo build -p clampwise-sim --release --bin clampwise` (python/ci.sh does)")
    return b


def run_cli(*args, check=True):
    """Run `clampwise ARGS…`; (exit code, stdout, stderr)."""
    p = subprocess.run([str(cli_binary()), *map(str, args)], capture_output=True, text=True)
    if check and p.returncode != 0:
        raise AssertionError(f"clampwise {' '.join(map(str, args))} exited {p.returncode}: {p.stderr}")
    return p.returncode, p.stdout, p.stderr


def cli_json(*args, check=True):
    code, out, _ = run_cli("--json", "--quiet", *args, check=check)
    return code, json.loads(out)


def read_estimate_csv(path):
    """The CLI's estimate file parsed independently of the package: Python's own float()
    (correctly rounded), empty cells as None, the comment lines skipped."""
    with open(path, newline="", encoding="utf-8") as f:
        rows = [r for r in csv.reader(line for line in f if not line.startswith("#"))]
    header, data = rows[0], rows[1:]
    cols = {h: [] for h in header}
    for r in data:
        for h, cell in zip(header, r):
            cols[h].append(cell)
    return header, cols


def same_float(a, b) -> bool:
    """Bit-equal floats, NaN equal to NaN (an empty cell)."""
    if math.isnan(a) and math.isnan(b):
        return True
    return a == b and math.copysign(1.0, a) == math.copysign(1.0, b)


@pytest.fixture(scope="session")
def workdir(tmp_path_factory):
    return tmp_path_factory.mktemp("clampwise")


@pytest.fixture(scope="session")
def brake_trace(workdir):
    """30 s of the hoist cycle on the brake, with a stuck channel (flags) — invented data."""
    p = workdir / "brake-hoist.csv"
    run_cli("synth", "-q", "-c", BRAKE, "-o", p, "--scenario", "hoist", "--duration-s", "30", "--seed", "7", "--fault", "stuck:2@5..8")
    return p


@pytest.fixture(scope="session")
def clutch_trace(workdir):
    """The sweep scenario on the wet clutch (output shaft speed column) — invented data."""
    p = workdir / "clutch-sweep.csv"
    run_cli("synth", "-q", "-c", CLUTCH, "-o", p, "--scenario", "sweep", "--duration-s", "20", "--seed", "3")
    return p
