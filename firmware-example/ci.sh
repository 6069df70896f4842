#!/usr/bin/env bash
# Every firmware check CI runs, in one script (called by .ci/run; exits non-zero on failure):
#   1. panic check: panic-free images link for thumbv7em, thumbv7m, thumbv6m (+ a negative
#      control per target), and the defmt image reaches no panic but its logger's guard;
#      this is also the build of the three targets with --profile firmware
#   2. QEMU runs on thumbv7m (lm3s6965evb), thumbv7em (mps2-an386) and thumbv6m (lm3s6965evb),
#      each compared line by line with the host replay of the same trace
#   3. no soft-float routine in the thumbv6m image
#   4. the defmt (probe) build links
#   5. size report (flash, static RAM, stack) per target, and the size targets on thumbv6m:
#      core + one device's tables < 16 KiB flash, estimator state < 1 KiB RAM
#   6. a drum device (sim/configs/example-crane-drum-brake.toml, torque not linear in μ):
#      QEMU vs host replay on thumbv6m and thumbv7em, and the size targets on thumbv6m
#   7. conformance (conformance/check.sh): five device shapes, 10⁵ seeded samples each (every
#      contact state, every sensor fault kind, arbitrary input bits, save/restore and snapshot
#      cuts), host = QEMU on thumbv6m, thumbv7m, thumbv7em and riscv32imac by block hashes,
#      each image panic-free at link time with a negative control per target
# Opt-in (when .ci/run does not already cover them):
#   FW_HOST_TESTS=1  the crate's host unit tests and doctests (`cargo test --workspace` has them)
#   FW_CLIPPY=1      clippy on the target-only code (entry point, sinks, stack probe)
# Installs qemu-system-arm and qemu-system-misc (apt) and the pinned toolchain's targets
# (rustup) when missing.
set -uo pipefail
FW_SCRIPTS="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
cd "$FW_SCRIPTS/.."
started=$(date +%s)

for qemu in qemu-system-arm:qemu-system-arm qemu-system-riscv32:qemu-system-misc; do
  if ! command -v "${qemu%%:*}" >/dev/null; then
    echo "[firmware] installing ${qemu#*:}"
    if [[ $(id -u) -eq 0 ]]; then
      (apt-get update -qq && apt-get install -y -qq "${qemu#*:}") >/dev/null \
        || { echo "[firmware] FAIL: cannot install ${qemu#*:}"; exit 1; }
    else
      echo "[firmware] FAIL: ${qemu%%:*} is missing and this is not root"; exit 1
    fi
  fi
done
installed="$(rustup target list --installed 2>/dev/null || true)"
for t in thumbv7em-none-eabihf thumbv7m-none-eabi thumbv6m-none-eabi riscv32imac-unknown-none-elf; do
  if ! grep -qx "$t" <<<"$installed"; then
    echo "[firmware] installing the pinned toolchain and its targets"
    rustup toolchain install >/dev/null 2>&1 || { echo "[firmware] FAIL: rustup toolchain install"; exit 1; }
    break
  fi
done
rm -rf "${CARGO_TARGET_DIR:-target}/fw-check"

passed=0
failed=0
names_failed=()
check() { # check NAME COMMAND...
  local name="$1" t0
  shift
  t0=$(date +%s)
  echo "[firmware] --- $name"
  if "$@"; then
    passed=$((passed + 1))
    echo "[firmware] ok: $name ($(( $(date +%s) - t0 )) s)"
  else
    failed=$((failed + 1))
    names_failed+=("$name")
    echo "[firmware] FAILED: $name"
  fi
}

defmt_build() {
  # shellcheck source=fw-common.sh
  (source "$FW_SCRIPTS/fw-common.sh"
   elf="$(fw_build thumbv7em-none-eabihf defmt)"
   syms="$("$LLVM_BIN/llvm-nm" "$elf")"
   grep -q '_SEGGER_RTT' <<<"$syms" || fw_fail "defmt image has no RTT control block"
   fw_log "defmt build links with an RTT control block ($(basename "$elf"))")
}

if [[ -n "${FW_HOST_TESTS:-}" ]]; then
  check "host tests" cargo test -q -p clampwise-firmware-example --release
fi
if [[ -n "${FW_CLIPPY:-}" ]]; then
  check "clippy (thumbv7m target code)" cargo clippy -q -p clampwise-firmware-example --no-deps \
    --target thumbv7m-none-eabi --profile firmware -- -D warnings
fi
check "panic check (link-time)" bash "$FW_SCRIPTS/panic-check.sh"
check "QEMU vs host replay" bash "$FW_SCRIPTS/qemu-check.sh" \
  thumbv7m-none-eabi thumbv7em-none-eabihf thumbv6m-none-eabi
check "no soft-float on thumbv6m" bash "$FW_SCRIPTS/softfloat-check.sh" thumbv6m-none-eabi
check "defmt build" defmt_build
check "size report (targets on thumbv6m)" bash "$FW_SCRIPTS/size-report.sh" --check
drum_device() ( # a subshell: the device's environment stays inside
  export CLAMPWISE_FW_CONFIG=../sim/configs/example-crane-drum-brake.toml FW_REBUILD=1
  bash "$FW_SCRIPTS/qemu-check.sh" thumbv6m-none-eabi thumbv7em-none-eabihf \
    && bash "$FW_SCRIPTS/size-report.sh" --check thumbv6m-none-eabi
)
check "drum device: QEMU vs host replay, size targets" drum_device
check "conformance: 5 shapes x 10^5 samples, host = QEMU on 4 targets, panic-free links + controls" \
  bash "$FW_SCRIPTS/../conformance/check.sh"

echo "[firmware] $(( $(date +%s) - started )) s in all"
if [[ $failed -gt 0 ]]; then
  echo "[firmware] failed: ${names_failed[*]}"
fi
echo "firmware: $passed passed, $failed failed"
[[ $failed -eq 0 ]]
