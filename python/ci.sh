#!/usr/bin/env bash
# The Python package `clampwise`: a virtual environment under target/py-venv with pinned
# versions, the abi3 wheel built by maturin (release), installed, and the pytest suite run
# against the `clampwise` binary built by cargo. Exits non-zero on any failure.
set -euo pipefail
cd "$(dirname "$0")/.."
root=$PWD
venv=$root/target/py-venv

[ -x "$venv/bin/python" ] || python3 -m venv "$venv"
"$venv/bin/python" -m pip install --quiet --disable-pip-version-check -r python/requirements-ci.txt

# The reference the tests compare against.
cargo build -p clampwise-sim --release --locked --bin clampwise

rm -rf target/wheels/clampwise-*.whl
(cd python && "$venv/bin/maturin" build --release --locked --quiet --out "$root/target/wheels")
"$venv/bin/python" -m pip install --quiet --disable-pip-version-check --force-reinstall --no-deps target/wheels/clampwise-*.whl

# From the repository root, so that the installed package is imported, not python/clampwise.
CLAMPWISE_BIN="$root/target/release/clampwise" "$venv/bin/pytest" -q python/tests
