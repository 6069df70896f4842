#!/usr/bin/env bash
# The whole clampwise test suite, from a fresh machine: toolchain, QEMU, host tests (release,
# overflow checks on), doc tests, and the firmware checks (cross builds, QEMU run compared bit for
# bit with the host, panic-free and soft-float link checks, size report).
set -euo pipefail
cd "$(dirname "$0")/.."

rustup toolchain install            # reads rust-toolchain.toml: 1.95.0 + the four cross targets
# Debian packages: QEMU for the firmware run; fontconfig headers and a font for the plots.
need=()
command -v qemu-system-arm >/dev/null 2>&1 || need+=(qemu-system-arm)
dpkg -s libfontconfig1-dev >/dev/null 2>&1 || need+=(libfontconfig1-dev pkg-config)
dpkg -s fonts-dejavu-core >/dev/null 2>&1 || need+=(fonts-dejavu-core)
if [ ${#need[@]} -gt 0 ]; then
    if [ "$(id -u)" = 0 ]; then SUDO=""; else SUDO="sudo"; fi
    $SUDO apt-get update -qq
    DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq "${need[@]}" >/dev/null
fi

cargo test --workspace --release --locked
cargo test --workspace --doc --locked
if [ -x firmware-example/ci.sh ]; then
    firmware-example/ci.sh
fi
echo "clampwise: all tests passed"
