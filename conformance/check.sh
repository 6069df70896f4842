#!/usr/bin/env bash
# Host = target conformance and the link-time panic check of the conformance image (see
# conformance/README.md). Exits non-zero on any failure.
#
# 1. Host run (`cargo run --release`): the reference lines. Checked on their own first: every
#    shape ran 10⁵ samples with every contact state present (slipping, holding, released,
#    slip unknown, unavailable) and the sensor-fault flags raised, every injected sensor fault
#    kind seen by the core on the faulty channel (`faults,` lines), and every save/restore and
#    snapshot cut gave back the state it saved (record_diff, snapshot_diff, refused all 0).
# 2. Per target: the image built with `--features panic-check` in the target's firmware
#    profile (scripts/firmware-profile.sh: opt-level z on thumbv6m, s elsewhere; fat LTO, one
#    codegen unit, panic = abort). Its panic handler calls an undefined symbol, so
#    it links only if no panic path is reachable from the entry point, which runs step, save,
#    restore, snapshot and resume on every shape compiled in. That same image then runs in QEMU
#    and its output must equal the host's, byte for byte (the handler never runs, so the image
#    checked for panics is the one compared).
# 3. Negative control per target: `panic-check,panic-canary` plants a reachable panic; that
#    link must fail naming the undefined symbol, or the check proves nothing.
#
# Usage: check.sh [TARGET...]  (default: all four)
#   thumbv6m-none-eabi            qemu-system-arm -machine lm3s6965evb (Cortex-M3 runs ARMv6-M)
#   thumbv7m-none-eabi            qemu-system-arm -machine lm3s6965evb (Cortex-M3)
#   thumbv7em-none-eabihf         qemu-system-arm -machine mps2-an386 (Cortex-M4F)
#   riscv32imac-unknown-none-elf  qemu-system-riscv32 -machine virt -bios none
# Installs qemu-system-arm / qemu-system-misc (apt, as root) when missing.
set -euo pipefail
CONF_DIR="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
ROOT="$(cd "$CONF_DIR/.." && pwd)"
cd "$ROOT"
TARGET_DIR="${CARGO_TARGET_DIR:-$ROOT/target}"
OUT="$TARGET_DIR/conformance-check"
PKG=clampwise-conformance
BIN=clampwise-conformance
QEMU_TIMEOUT="${CONF_QEMU_TIMEOUT:-300}"
mkdir -p "$OUT"

log() { printf '[conformance] %s\n' "$*" >&2; }
fail() { printf '[conformance] FAIL: %s\n' "$*" >&2; exit 1; }

targets=("$@")
[[ ${#targets[@]} -gt 0 ]] \
  || targets=(thumbv6m-none-eabi thumbv7m-none-eabi thumbv7em-none-eabihf riscv32imac-unknown-none-elf)

need_qemu() { # need_qemu BINARY DEBIAN_PACKAGE
  command -v "$1" >/dev/null && return 0
  [[ $(id -u) -eq 0 ]] || fail "$1 is missing and this is not root (apt-get install $2)"
  log "installing $2"
  (apt-get update -qq && apt-get install -y -qq "$2") >/dev/null || fail "cannot install $2"
}
for t in "${targets[@]}"; do
  case "$t" in
    riscv32*) need_qemu qemu-system-riscv32 qemu-system-misc ;;
    thumbv*) need_qemu qemu-system-arm qemu-system-arm ;;
    *) fail "unknown target $t" ;;
  esac
done

qemu_cmd() { # qemu_cmd TARGET -> the QEMU command line before the image
  case "$1" in
    thumbv6m-none-eabi | thumbv7m-none-eabi)
      echo "qemu-system-arm -cpu cortex-m3 -machine lm3s6965evb" ;;
    thumbv7em-none-eabihf) echo "qemu-system-arm -cpu cortex-m4 -machine mps2-an386" ;;
    riscv32imac-unknown-none-elf) echo "qemu-system-riscv32 -machine virt -bios none" ;;
  esac
}

# 1. Host reference, and what it covers.
host="$OUT/host.txt"
cargo run -q -p "$PKG" --bin "$BIN" --release >"$host" || fail "host run"
shapes=$(grep -c '^shape,' "$host" || true)
[[ $shapes -ge 4 ]] || fail "host run covers $shapes device shapes, fewer than 4"
awk -F, '
  function field(name,   i, kv) { for (i = 5; i <= NF; i++) { split($i, kv, "="); if (kv[1] == name) return kv[2] } return "" }
  /^shape,/ { split($5, kv, "="); want[$2] = kv[2]; next }
  /^blk,/ {
    split("slipping holding released slip-unknown unavailable", st, " ")
    for (k in st) { c = field(st[k]); seen[$2, st[k]] += c; samples[$2] += c }
    if (field("record_diff") != 0 || field("snapshot_diff") != 0 || field("refused") != 0) {
      printf "%s block %s: a save/restore or snapshot cut did not give back the saved state\n", $2, $3; err = 1
    }
  }
  END {
    for (sh in want) {
      if (samples[sh] != want[sh] || want[sh] < 100000) { printf "%s: %d samples of %d (need >= 100000)\n", sh, samples[sh], want[sh]; err = 1 }
      split("slipping holding released slip-unknown unavailable", st, " ")
      for (k in st) if (seen[sh, st[k]] == 0) { printf "%s: no %s sample\n", sh, st[k]; err = 1 }
    }
    exit err
  }' "$host" >&2 || fail "the host run does not cover what it must (above)"
# Flags the scenario must raise on every shape (core/src/flags.rs): SENSOR_DEGRADED,
# FORCE_FALLBACK, FORCE_LOST, FORCE_SATURATED, OUT_OF_RANGE, TEMPERATURE_REJECTED, SPEED_UNKNOWN.
must=$(( 1 | 2 | 4 | 8 | 16 | 256 | 16384 ))
for shape in $(awk -F, '/^shape,/ { print $2 }' "$host"); do
  union=0
  for f in $(grep "^blk,$shape," "$host" | sed 's/.*,flags=\(0x[0-9a-f]*\),.*/\1/'); do
    union=$(( union | f ))
  done
  (( (union & must) == must )) || fail "$shape: flags $(printf 0x%04x $union) lack some of $(printf 0x%04x $must)"
done
# The thermal/wear sub-rate at 1 and at 8 among the shapes; adaptation at work (a correction
# other than 1) on every shape that has it.
for every in 1 8; do
  grep -q "^shape,.*,sub_rate=$every," "$host" || fail "no shape runs the sub-rate at $every"
done
for shape in $(awk -F, '/^shape,.*adaptation=on/ { print $2 }' "$host"); do
  adapted=$(grep "^blk,$shape," "$host" | sed 's/.*,adapted=\([0-9]*\).*/\1/' | awk '{ n += $1 } END { print n + 0 }')
  [[ $adapted -gt 0 ]] || fail "$shape: adaptation on, but the correction never left 1"
done
grep -q "adaptation=on" "$host" || fail "no shape runs with adaptation on"
# Every sensor fault kind raised its own flag (on the faulty channel) on every shape where the
# device can show it, and every kind on some shape (src/coverage.rs).
awk -F, '
  /^faults,/ { for (i = 3; i <= NF; i++) { split($i, kv, "="); kinds[kv[1]] = 1
      if (kv[2] == "0") { printf "%s: fault %s never raised its flag\n", $2, kv[1]; err = 1 }
      if (kv[2] != "n/a" && kv[2] > 0) some[kv[1]] = 1 } n++ }
  END {
    if (n < 1) { print "no faults lines"; err = 1 }
    for (k in kinds) if (!(k in some)) { printf "fault %s raised on no shape\n", k; err = 1 }
    exit err
  }' "$host" >&2 || fail "the host run does not show every sensor fault kind (above)"
samples=$(awk -F, '/^shape,/ { split($5, s, "="); n += s[2] } END { print n }' "$host")
log "host: $shapes shapes, $samples samples, every contact state, estimate flag and sensor fault kind present, every cut restored"

for t in "${targets[@]}"; do
  # 2. Panic-free link, then the same image in QEMU.
  t0=$(date +%s)
  profile="$(scripts/firmware-profile.sh "$t")"
  cargo build -q -p "$PKG" --bin "$BIN" --target "$t" --profile "$profile" --features panic-check \
    >"$OUT/$t.build.log" 2>&1 || fail "$t: the panic-check image does not link (a panic path is reachable; see $OUT/$t.build.log)"
  elf="$OUT/$t.panic-check.elf"
  cp "$TARGET_DIR/$t/$profile/$BIN" "$elf"
  built=$(( $(date +%s) - t0 ))
  log "$t: panic-free image links (--profile $profile; step, save, restore, snapshot on $shapes shapes; ${built} s)"
  t0=$(date +%s)
  out="$OUT/$t.qemu.txt"
  # shellcheck disable=SC2046 # the QEMU command is meant to split
  timeout "$QEMU_TIMEOUT" $(qemu_cmd "$t") -nographic -semihosting-config enable=on,target=native \
    -kernel "$elf" >"$out" 2>"$OUT/$t.qemu.stderr" || fail "$t: QEMU run failed or exited non-zero (see $out)"
  ran=$(( $(date +%s) - t0 ))
  diff "$out" "$host" >"$OUT/$t.diff" || fail "$t: output differs from the host's (see $OUT/$t.diff)"
  log "$t: QEMU output identical to the host's ($samples samples, $(grep -c '^blk,' "$host") block hashes; run ${ran} s)"

  # 3. Negative control.
  canary_log="$OUT/$t.canary.log"
  if cargo build -p "$PKG" --bin "$BIN" --target "$t" --profile "$profile" \
    --features panic-check,panic-canary >"$canary_log" 2>&1; then
    fail "$t: negative control: the image with a planted panic linked, so the check proves nothing"
  fi
  grep -q 'undefined symbol: clampwise_panic_path_is_reachable' "$canary_log" \
    || fail "$t: negative control failed for another reason; see $canary_log"
  log "$t: negative control: the planted panic fails the link"
done
echo "conformance: ${#targets[@]} targets identical to the host, panic-free, controls caught"
