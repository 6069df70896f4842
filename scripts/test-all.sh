#!/usr/bin/env bash
# The whole clampwise test suite, from a fresh machine: toolchain, QEMU, host tests (release,
# overflow checks on), doc tests, and the firmware checks (cross builds, QEMU run compared bit for
# bit with the host, panic-free and soft-float link checks, size report).
set -euo pipefail
cd "$(dirname "$0")/.."

rustup toolchain install            # reads rust-toolchain.toml: 1.95.0 + the four cross targets
# Debian packages: QEMU for the firmware and conformance runs (Arm; RISC-V in qemu-system-misc);
# Chromium to render the HTML report in a test.
# (The plots draw text with a font compiled into the program: no font packages are needed.)
need=()
command -v qemu-system-arm >/dev/null 2>&1 || need+=(qemu-system-arm)
command -v qemu-system-riscv32 >/dev/null 2>&1 || need+=(qemu-system-misc)
command -v chromium >/dev/null 2>&1 || need+=(chromium)
if [ ${#need[@]} -gt 0 ]; then
    if [ "$(id -u)" = 0 ]; then SUDO=""; else SUDO="sudo"; fi
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need[@]}" >/dev/null
fi

# The report's rendering test fails instead of skipping when Chromium is missing.
export CLAMPWISE_REQUIRE_CHROMIUM=1
cargo test --workspace --release --locked
cargo test --workspace --doc --locked
# Parquet logs and estimates: a feature of its own (the arrow/parquet build takes ~9 min here
# after the release build above; ~13 min from clean).
cargo test -p clampwise-sim --release --features parquet --locked
if [ -x firmware-example/ci.sh ]; then
    firmware-example/ci.sh
fi
# The C API: header current and strict-C99 clean, C host test and C firmware in QEMU bit for
# bit with the host replay, link-time panic check, sizes.
bash capi/ci.sh
# The Python package: a venv under target/py-venv with pinned versions, the abi3 wheel built by
# maturin, pytest against the CLI (bit-equality, chunks, errors, the Dask fleet example).
bash python/ci.sh
echo "clampwise: all tests passed"
