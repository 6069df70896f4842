#!/usr/bin/env bash
# Run the firmware in QEMU on the recorded trace and compare its output with the host replay
# of the same trace: identical, every line, every field.
#
# The host reference is the same binary built for the host (`cargo run -p
# clampwise-firmware-example --release`), which runs the same application code on the same
# generated trace and tables. Lines starting `#target` are target-only measurements (stack
# use) and are left out of the comparison; everything else must match byte for byte.
# The QEMU run goes through the runners in .cargo/config.toml (`cargo run --target …`), and
# must exit with status 0 (semihosting exit). The host replay itself is compared with the
# simulator's replay of the same trace, field by field, by the crate's host test
# `tests/simulator_replay.rs` (run by `cargo test --workspace`), so a match here is a match
# with `clampwise replay` too.
#
# Usage: qemu-check.sh [TARGET...]   (default: thumbv7m-none-eabi)
#   thumbv7m-none-eabi    on lm3s6965evb (Cortex-M3)
#   thumbv7em-none-eabihf on mps2-an386 (Cortex-M4F)
#   thumbv6m-none-eabi    on lm3s6965evb (the M3 runs the ARMv6-M subset)
source "$(dirname "$0")/fw-common.sh"

targets=("$@")
[[ ${#targets[@]} -gt 0 ]] || targets=(thumbv7m-none-eabi)

command -v qemu-system-arm >/dev/null \
  || fw_fail "qemu-system-arm not found (apt-get install -y qemu-system-arm)"

host="$FW_OUT/host.txt"
cargo run -q -p "$FW_PKG" --bin "$FW_BIN" --release >"$host" || fw_fail "host replay"
samples="$(grep -c '^est,' "$host" || true)"
[[ "$samples" -gt 0 ]] || fw_fail "host replay printed no sample lines"

for t in "${targets[@]}"; do
  out="$FW_OUT/$t.qemu.txt"
  start=$(date +%s%N)
  cargo run -q -p "$FW_PKG" --bin "$FW_BIN" --target "$t" --profile "$(fw_profile "$t")" >"$out" \
    2>"$FW_OUT/$t.qemu.stderr" || fw_fail "$t: QEMU run failed or exited non-zero (see $out)"
  ms=$(( ($(date +%s%N) - start) / 1000000 ))
  cp "$FW_TARGET_DIR/$t/$(fw_profile "$t")/$FW_BIN" "$FW_OUT/$t.semihosting.elf"
  if ! diff <(grep -v '^#target' "$out") "$host" >"$FW_OUT/$t.diff"; then
    fw_fail "$t: QEMU output differs from the host replay (see $FW_OUT/$t.diff)"
  fi
  fw_log "$t: QEMU output identical to the host replay ($samples samples, $(wc -l <"$host") lines, run+build ${ms} ms)"
  grep '^#target stack' "$out" | sed 's/^/[firmware]   /' >&2 || true
done
