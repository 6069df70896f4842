#!/usr/bin/env bash
# Every C check of the C API, in one script (exits non-zero on any failure):
#   1. the committed header is current (cbindgen regenerates it and diffs)
#   2. the header compiles alone with gcc and arm-none-eabi-gcc under
#      -std=c99 -Wall -Wextra -Werror -pedantic, includes only <stdint.h>/<stdbool.h>, and
#      declares no variadic function
#   3. the fixture: the demo device (and the example drum brake, whose radius table runs over
#      μ) as C (`clampwise tables --emit-c`), the demo trace as C inputs and the Rust host
#      replay of it (`cargo run --example c_fixture`, which also checks every estimate against
#      `clampwise replay`'s row)
#   4. the C host test (gcc, the static library built for the host): its output identical to
#      the Rust host replay, and its checks of the API's error paths
#   5. the C example firmware for Cortex-M4F (thumbv7em-none-eabihf, QEMU mps2-an386) and
#      Cortex-M0+ (thumbv6m-none-eabi, QEMU lm3s6965evb, which runs the v6-M subset), built with
#      arm-none-eabi-gcc: its semihosting output identical to the Rust host replay, for the
#      demo device and the drum brake on both (the M4F library with every channel count and
#      both lever axes, the M0+ libraries with three channels and the one axis of the device);
#      negative control: the M0+ bedding-only library refuses the drum brake with
#      CW_ERR_LEVER_AXIS
#   6. link-time panic check of the C images' libraries (+ negative control)
#   7. size report of the thumbv6m images (the demo's library: three channels, bedding axis;
#      the drum brake's beside it): flash and RAM, and the step's call graph + the device
#      description ("core + tables"); fails unless the demo's is within 16 KiB
# Installs gcc-arm-none-eabi and qemu-system-arm (apt, as root), the pinned toolchain's targets
# (rustup) and cbindgen (cargo, into target/tools) when missing.
set -uo pipefail
CAPI="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
ROOT="$(cd "$CAPI/.." && pwd)"
TARGET_DIR="${CARGO_TARGET_DIR:-$ROOT/target}"
OUT="$TARGET_DIR/capi-check"
EX="$CAPI/c-example"
CFLAGS=(-std=c99 -Wall -Wextra -Werror -pedantic)
FW_TARGETS=(thumbv7em-none-eabihf thumbv6m-none-eabi)
cd "$ROOT"
started=$(date +%s)

log() { printf '[capi] %s\n' "$*" >&2; }
fail() { printf '[capi] FAIL: %s\n' "$*" >&2; return 1; }

install_tools() {
  local missing=()
  command -v arm-none-eabi-gcc >/dev/null || missing+=(gcc-arm-none-eabi)
  command -v qemu-system-arm >/dev/null || missing+=(qemu-system-arm)
  command -v gcc >/dev/null || missing+=(gcc)
  if [[ ${#missing[@]} -gt 0 ]]; then
    log "installing ${missing[*]}"
    [[ $(id -u) -eq 0 ]] || { fail "${missing[*]} missing and this is not root"; return 1; }
    (apt-get update -qq && apt-get install -y -qq "${missing[@]}") >/dev/null \
      || { fail "cannot install ${missing[*]}"; return 1; }
  fi
  local installed
  installed="$(rustup target list --installed 2>/dev/null || true)"
  for t in "${FW_TARGETS[@]}"; do
    grep -qx "$t" <<<"$installed" && continue
    rustup toolchain install >/dev/null 2>&1 || { fail "rustup toolchain install"; return 1; }
    break
  done
}

# The machine's flags of a target for arm-none-eabi-gcc.
cpu_flags() {
  case "$1" in
    thumbv7em-none-eabihf) echo "-mthumb -mcpu=cortex-m4 -mfloat-abi=hard -mfpu=fpv4-sp-d16" ;;
    thumbv6m-none-eabi) echo "-mthumb -mcpu=cortex-m0plus -mfloat-abi=soft" ;;
    *) return 1 ;;
  esac
}

qemu_of() {
  case "$1" in
    thumbv7em-none-eabihf) echo "-cpu cortex-m4 -machine mps2-an386" ;;
    thumbv6m-none-eabi) echo "-cpu cortex-m3 -machine lm3s6965evb" ;;
  esac
}

# The channel counts compiled in per target: thumbv6m gets only the demo device's three (a
# firmware for one known device), the others all four (the default).
channel_features() {
  case "$1" in
    thumbv6m-none-eabi) echo "channels-3" ;;
    *) echo "channels-1,channels-2,channels-3,channels-4" ;;
  esac
}

# The lever axes compiled in: "both" (read at run time) or the one axis of a known device.
axis_features() {
  case "$1" in
    both) echo "axis-bedding,axis-mu" ;;
    bedding) echo "axis-bedding" ;;
    mu) echo "axis-mu" ;;
  esac
}

# The lever axes a target's library has: thumbv6m the one of its device (bedding for the demo,
# μ for the drum brake), the others both.
target_axis() {
  case "$1" in
    thumbv6m-none-eabi) echo "${2:-bedding}" ;;
    *) echo both ;;
  esac
}

# lib TARGET VARIANT [AXIS] -> builds the static library (profile capi) and prints the path of
# a copy kept per variant (the features change what cargo writes to the same path).
lib() {
  local target="$1" variant="$2" axis="${3:-both}" features dir
  features="$(channel_features "$target"),$(axis_features "$axis")"
  case "$variant" in
    plain) ;;
    panic-check) features+=",panic-check" ;;
    panic-canary) features+=",panic-check,panic-canary" ;;
  esac
  # The static library alone (`cargo rustc --crate-type staticlib`): built beside the rlib, the
  # library keeps the rlib's Rust symbols, and LTO inlines less (+1.3 KiB of step on thumbv6m).
  local args=(-q -p clampwise-capi --lib --profile capi --no-default-features --features "$features"
    --crate-type staticlib)
  if [[ "$target" == host ]]; then dir="$TARGET_DIR/capi"; else
    args+=(--target "$target"); dir="$TARGET_DIR/$target/capi"; fi
  cargo rustc "${args[@]}" >&2 || { fail "cargo rustc $target ($variant, $axis)"; return 1; }
  mkdir -p "$OUT/lib"
  cp "$dir/libclampwise_capi.a" "$OUT/lib/$target.$axis.$variant.a"
  echo "$OUT/lib/$target.$axis.$variant.a"
}

# firmware TARGET LIB ELF [FIXTURE_DIR] -> links the C example firmware with the library.
firmware() {
  local target="$1" lib="$2" elf="$3" fx="${4:-$OUT}"
  # shellcheck disable=SC2046 # the cpu flags are meant to split
  arm-none-eabi-gcc "${CFLAGS[@]}" -Os -g -ffunction-sections -fdata-sections $(cpu_flags "$target") \
    -I"$CAPI/include" -I"$EX" "$EX"/{fw_main,replay,line,startup,semihosting}.c \
    "$fx/device.c" "$fx/trace.c" -nostdlib -nostartfiles -T "$EX/link.ld" \
    -Wl,--gc-sections -Wl,-z,noexecstack -Wl,-Map="$elf.map" "$lib" -lgcc -o "$elf"
}

passed=0
failed=0
names_failed=()
check() { # check NAME FUNCTION...
  local name="$1" t0
  shift
  t0=$(date +%s)
  log "--- $name"
  # Not in an `if`: errexit holds inside the subshell only where its status is not tested.
  ( set -e; "$@" )
  if [[ $? -eq 0 ]]; then
    passed=$((passed + 1))
    log "ok: $name ($(( $(date +%s) - t0 )) s)"
  else
    failed=$((failed + 1))
    names_failed+=("$name")
    log "FAILED: $name"
  fi
}

header_current() { bash "$CAPI/gen-header.sh" --check; }

header_alone() {
  local h="$CAPI/include/clampwise.h" includes
  includes="$(grep -E '^\s*#\s*include' "$h" | tr -d ' ' | sort | tr '\n' ' ')"
  [[ "$includes" == "#include<stdbool.h> #include<stdint.h> " ]] \
    || fail "the header includes more than <stdint.h>/<stdbool.h>: $includes"
  ! grep -nE '\.\.\.\s*\)' "$h" || fail "the header declares a variadic function"
  printf '#include "clampwise.h"\n' >"$OUT/header-alone.c"
  for cc in gcc arm-none-eabi-gcc; do
    "$cc" "${CFLAGS[@]}" -I"$CAPI/include" -c "$OUT/header-alone.c" -o "$OUT/header-alone.$cc.o" \
      || fail "$cc: the header does not compile alone"
    log "$cc ${CFLAGS[*]}: the header compiles alone"
  done
}

# fixture DIR CONFIG -> DIR/device.c, DIR/trace.c, DIR/expected.txt for the demo trace.
fixture_of() {
  local dir="$1" config="$2" trace="$ROOT/firmware-example/trace/demo.csv"
  mkdir -p "$dir"
  cargo run -q --release -p clampwise-sim --bin clampwise -- tables --config "$config" \
    --emit-c "$dir/device.c" >/dev/null
  cargo run -q --release -p clampwise-capi --example c_fixture -- "$config" "$trace" "$dir"
  log "fixture: $(grep -c '^est,' "$dir/expected.txt") samples of $(basename "$trace") on $(basename "$config")"
}

fixture() {
  fixture_of "$OUT" "$ROOT/sim/configs/demo-hoist-brake.toml"
  # A drum brake: torque not linear in μ, the radius table over μ (the API's second axis).
  fixture_of "$OUT/drum" "$ROOT/sim/configs/example-crane-drum-brake.toml"
}

# host_run DIR -> the C host test built on DIR's fixture, its output compared.
host_run() {
  local dir="$1" lib="$2" native="$3"
  # shellcheck disable=SC2086 # the native libraries are meant to split
  gcc "${CFLAGS[@]}" -O2 -I"$CAPI/include" -I"$EX" "$EX"/{host_main,replay,line}.c \
    "$dir/device.c" "$dir/trace.c" "$lib" $native -o "$dir/host-test"
  "$dir/host-test" >"$dir/host.txt"
  diff "$dir/host.txt" "$dir/expected.txt" >"$dir/host.diff" \
    || fail "C host output differs from the Rust host replay (see $dir/host.diff)"
  log "host ($(sed -n 's/.*config=\([^,]*\),.*/\1/p' "$dir/expected.txt" | head -1)): C API output identical to the Rust host replay ($(wc -l <"$dir/expected.txt") lines)"
}

host_test() {
  local lib native
  lib="$(lib host plain)"
  native="$(cargo rustc -q -p clampwise-capi --profile capi --lib --crate-type staticlib \
    -- --print native-static-libs 2>&1 | sed -n 's/.*native-static-libs: //p' | tail -1)"
  host_run "$OUT" "$lib" "$native"
  host_run "$OUT/drum" "$lib" "$native"
}

# qemu_run TARGET ELF FIXTURE_DIR NAME -> runs the image, compares with the fixture's replay.
qemu_run() {
  local t="$1" elf="$2" fx="$3" name="$4" out
  out="$OUT/$name.qemu.txt"
  # shellcheck disable=SC2046 # the machine flags are meant to split
  timeout 60 qemu-system-arm $(qemu_of "$t") -nographic \
    -semihosting-config enable=on,target=native -kernel "$elf" >"$out" 2>"$out.stderr" \
    || fail "$name: QEMU run failed or exited non-zero (see $out)"
  diff <(grep -v '^#target' "$out") "$fx/expected.txt" >"$OUT/$name.diff" \
    || fail "$name: QEMU output differs from the Rust host replay (see $OUT/$name.diff)"
  log "$name: QEMU output identical to the Rust host replay; $(grep '^#target' "$out")"
}

qemu_runs() {
  local t lib
  for t in "${FW_TARGETS[@]}"; do
    lib="$(lib "$t" plain "$(target_axis "$t")")"
    firmware "$t" "$lib" "$OUT/$t.elf"
    qemu_run "$t" "$OUT/$t.elf" "$OUT" "$t"
  done
  # The drum brake: on the M4F with the same library (both axes), on the M0+ with a library of
  # the μ axis alone.
  t="${FW_TARGETS[0]}"
  firmware "$t" "$OUT/lib/$t.both.plain.a" "$OUT/$t.drum.elf" "$OUT/drum"
  qemu_run "$t" "$OUT/$t.drum.elf" "$OUT/drum" "$t.drum"
  t="${FW_TARGETS[1]}"
  lib="$(lib "$t" plain "$(target_axis "$t" mu)")"
  firmware "$t" "$lib" "$OUT/$t.drum.elf" "$OUT/drum"
  qemu_run "$t" "$OUT/$t.drum.elf" "$OUT/drum" "$t.drum"
  # Negative control: the bedding-only library refuses the drum brake at init, by its code.
  firmware "$t" "$OUT/lib/$t.bedding.plain.a" "$OUT/$t.wrong-axis.elf" "$OUT/drum"
  # shellcheck disable=SC2046 # the machine flags are meant to split
  if timeout 60 qemu-system-arm $(qemu_of "$t") -nographic -semihosting-config enable=on,target=native \
    -kernel "$OUT/$t.wrong-axis.elf" >"$OUT/$t.wrong-axis.qemu.txt" 2>&1; then
    fail "$t: the bedding-only library started the drum brake (μ axis)"
  fi
  grep -q '^error,at=device_init,.*status=19,' "$OUT/$t.wrong-axis.qemu.txt" \
    || fail "$t: the drum brake on the bedding-only library did not fail with CW_ERR_LEVER_AXIS (see $OUT/$t.wrong-axis.qemu.txt)"
  log "$t: the bedding-only library refuses the drum brake with CW_ERR_LEVER_AXIS"
}

panic_re='rust_begin_unwind|core::panicking|panic_fmt|panic_bounds_check|unwrap_failed|clampwise_capi_panic_path_is_reachable'

panic_check() {
  local t lib elf syms axis name
  # Every library a shipped image links: per target its demo axis, and the M0+ drum's μ.
  for name in "${FW_TARGETS[0]}:both" "${FW_TARGETS[1]}:bedding" "${FW_TARGETS[1]}:mu"; do
    t="${name%%:*}" axis="${name#*:}"
    lib="$(lib "$t" panic-check "$axis")"
    elf="$OUT/$t.$axis.panic-check.elf"
    firmware "$t" "$lib" "$elf" || fail "$t ($axis): the image with the panic-check library does not link"
    syms="$(arm-none-eabi-nm -C "$elf")"
    ! grep -qE "$panic_re" <<<"$syms" || fail "$t ($axis): a panic symbol is linked into the image"
    log "$t ($axis): panic-free C image links"
  done
  for elf in "$OUT"/*.elf; do
    [[ "$elf" == *panic-check* || "$elf" == *canary* ]] && continue
    syms="$(arm-none-eabi-nm -C "$elf")"
    ! grep -qE "$panic_re" <<<"$syms" || fail "$(basename "$elf"): the shipped image holds a panic path"
  done
  log "the shipped images hold no panic symbol"
  t="${FW_TARGETS[0]}"
  lib="$(lib "$t" panic-canary)"
  if firmware "$t" "$lib" "$OUT/$t.canary.elf" 2>"$OUT/panic-canary.log"; then
    fail "negative control: the image with a planted panic linked, so the check proves nothing"
  fi
  grep -q 'undefined reference to .clampwise_capi_panic_path_is_reachable' "$OUT/panic-canary.log" || fail "negative control failed for another reason; see $OUT/panic-canary.log"
  log "negative control: a planted panic fails the link ($t)"
}

size_report() {
  bash "$CAPI/size-report.sh" "$OUT/thumbv6m-none-eabi.elf" "$OUT/thumbv6m-none-eabi.qemu.txt" --check
  # The drum brake's image beside it (its own axis; reported, not limited).
  bash "$CAPI/size-report.sh" "$OUT/thumbv6m-none-eabi.drum.elf" "$OUT/thumbv6m-none-eabi.drum.qemu.txt"
}

mkdir -p "$OUT"
check "tools" install_tools
check "header current (cbindgen)" header_current
check "header compiles alone (gcc, arm-none-eabi-gcc)" header_alone
check "fixture (device and trace as C, Rust host replay)" fixture
check "C host test vs Rust host replay" host_test
check "C firmware in QEMU vs Rust host replay (M4F, M0+)" qemu_runs
check "panic check (link-time, C images)" panic_check
check "size report (thumbv6m)" size_report

log "$(( $(date +%s) - started )) s in all"
if [[ $failed -gt 0 ]]; then
  log "failed: ${names_failed[*]}"
fi
echo "capi: $passed passed, $failed failed"
[[ $failed -eq 0 ]]
