#!/usr/bin/env bash
# Instructions per step on Cortex-M, counted in QEMU: the image runs with one guest instruction
# per translation block (`-singlestep`) and every block logged (`-d exec,nochain`), and the
# counter follows the log: a call starts when the PC reaches a step function's entry, and ends
# when the PC comes back to the instruction after the call site; everything in between
# (callees, runtime helpers such as __aeabi_lmul) counts. Each call's count is kept, and
# min / mean / max per function are reported. A count is of executed instructions (skipped IT
# instructions included), not cycles: QEMU does not model timing.
#
# Usage:
#   benches/cortex-m-count.sh [--hot] [TARGET...]
#       the bench image (benches/cortex-m: the four variants, 200 steps each) for each TARGET
#       (default: thumbv6m-none-eabi thumbv7em-none-eabihf); --hot also lists, per variant,
#       the functions the instructions were spent in.
#   benches/cortex-m-count.sh [--hot] --elf IMAGE --target TARGET [--symbol REGEX]
#       any image, e.g. the example firmware (default REGEX: the firmware's
#       `<… as app::Processor<_>>::step`, without the stack probe's wrapper), so the count follows
#       whatever processing step the firmware carries.
#
# thumbv6m and thumbv7m images run on QEMU's lm3s6965evb (a Cortex-M3 executes the ARMv6-M
# code unchanged, so the count is the v6-M instruction stream a Cortex-M0+ would execute);
# thumbv7em-none-eabihf runs on mps2-an386 (Cortex-M4 with FPU). The bench image is built as the
# example firmware is: `--profile firmware` (opt-level "z", fat LTO) for thumbv6m and
# `--profile firmware-speed` (the same at opt-level "s") for thumbv7m/thumbv7em; FW_PROFILE
# overrides it for every target.
set -euo pipefail

root="$(cd "$(dirname "$0")/.." && pwd)"
cd "$root"
target_dir="${CARGO_TARGET_DIR:-$root/target}"
llvm="$(rustc --print sysroot)/lib/rustlib/$(rustc -vV | sed -n 's/^host: //p')/bin"
[[ -x "$llvm/llvm-nm" ]] || { echo "cortex-m-count.sh: llvm-tools missing (rustup component add llvm-tools)" >&2; exit 1; }
command -v qemu-system-arm >/dev/null || { echo "cortex-m-count.sh: qemu-system-arm missing (apt-get install qemu-system-arm)" >&2; exit 1; }

hot=0; stages=0; elf=""; symbol=""; targets=()
while [[ $# -gt 0 ]]; do
  case "$1" in
    --hot) hot=1 ;;
    --stages) stages=1 ;;
    --elf) elf="$2"; shift ;;
    --symbol) symbol="$2"; shift ;;
    --target) targets+=("$2"); shift ;;
    -h|--help) sed -n '2,25p' "$0"; exit 0 ;;
    *) targets+=("$1") ;;
  esac
  shift
done
[[ ${#targets[@]} -gt 0 ]] || targets=(thumbv6m-none-eabi thumbv7em-none-eabihf)

machine() {
  case "$1" in
    thumbv6m-*|thumbv7m-*) echo "-cpu cortex-m3 -machine lm3s6965evb" ;;
    thumbv7em-*) echo "-cpu cortex-m4 -machine mps2-an386" ;;
    *) echo "cortex-m-count.sh: no QEMU machine for $1" >&2; exit 1 ;;
  esac
}

# demangle: Rust symbol names (legacy and v0) through c++filt when it is there, without hashes.
demangle() {
  if command -v c++filt >/dev/null; then
    c++filt | sed -E 's/::h[0-9a-f]{16}//g; s/\[[0-9a-f]{16}\]//g'
  else
    cat
  fi
}

# entries ELF REGEX EXCLUDE -> "name=hexaddr,..." for the matching text symbols.
entries() {
  "$llvm/llvm-nm" "$1" | grep -E ' [tT] ' | demangle | grep -E "$2" \
    | { if [[ -n "$3" ]]; then grep -vE "$3"; else cat; fi; } \
    | awk '{ addr = $1; $1 = ""; $2 = ""; name = substr($0, 3); gsub(/[,=]/, ";", name);
             printf "%s%s=%08x", sep, name, ("0x" addr) + 0; sep = "," }' \
    || true
}

# count TARGET ELF ENTRIES -> per-function table (and hot list with --hot)
count() {
  local t="$1" image="$2" list="$3" log pcs=""
  if [[ $stages -eq 1 ]]; then pcs="$target_dir/cortex-m-count.$t.pcs.tsv"; rm -f "$pcs"; fi
  log="$target_dir/cortex-m-count.$t.semihosting.txt"
  # shellcheck disable=SC2046 # the machine arguments are words
  timeout 900 qemu-system-arm $(machine "$t") -nographic \
      -semihosting-config enable=on,target=native -singlestep -d exec,nochain \
      -kernel "$image" 2>&1 >"$log" \
    | awk -F'/' -v ENTRIES="$list" -v HOT="$hot" -v TARGET="$t" -v PCS="$pcs" '
      function hexval(s,   i, v) { v = 0; s = tolower(s);
        for (i = 1; i <= length(s); i++) v = v * 16 + index("0123456789abcdef", substr(s, i, 1)) - 1;
        return v }
      BEGIN { n = split(ENTRIES, e, ",");
        for (i = 1; i <= n; i++) { k = index(e[i], "="); entry[substr(e[i], k + 1)] = substr(e[i], 1, k - 1) } }
      /^Trace/ {
        pc = $2
        if (inside) {
          if (pc == r2 || pc == r4) {
            calls[name]++; sum[name] += c
            if (!(name in lo) || c < lo[name]) lo[name] = c
            if (c > hi[name]) hi[name] = c
            inside = 0
          } else {
            c++
            if (HOT) { s = $4; sub(/^[^]]*] */, "", s); sub(/::h[0-9a-f]+$/, "", s); spent[name, s]++ }
            if (PCS != "") at[name, pc]++
          }
        } else if (pc in entry) {
          inside = 1; name = entry[pc]; c = 1
          p = hexval(prev); r2 = sprintf("%08x", p + 2); r4 = sprintf("%08x", p + 4)
          if (HOT) { s = $4; sub(/^[^]]*] */, "", s); sub(/::h[0-9a-f]+$/, "", s); spent[name, s]++ }
          if (PCS != "") at[name, pc]++
        }
        prev = pc
      }
      END {
        if (PCS != "") for (key in at) { split(key, kk, SUBSEP); printf "%s\t%s\t%.3f\n", kk[1], kk[2], at[key] / calls[kk[1]] > PCS }
        printf "%-22s %6s %8s %9s %8s  %s\n", "target", "calls", "min", "mean", "max", "function"
        for (nm in calls) printf "%-22s %6d %8d %9.1f %8d  %s\n", TARGET, calls[nm], lo[nm], sum[nm] / calls[nm], hi[nm], nm
        fflush()
        if (HOT) for (nm in calls) {
          printf "\n  %s on %s: instructions per call by function\n", nm, TARGET
          cmd = "sort -k1,1nr | head -12"
          fflush()
          for (key in spent) { split(key, kk, SUBSEP); if (kk[1] == nm) printf "  %9.1f  %s\n", spent[key] / calls[nm], kk[2] | cmd }
          close(cmd)
        }
      }' | demangle
  if ! grep -q . "$log"; then echo "cortex-m-count.sh: $t: the image printed nothing (see $log)" >&2; fi
  if [[ -n "$pcs" ]]; then LLVM_BIN="$llvm" python3 "$root/benches/cortex-m-stages.py" "$image" "$pcs"; fi
}

for t in "${targets[@]}"; do
  if [[ -n "$elf" ]]; then
    image="$elf"
    regex="${symbol:-Processor.*::step}"
    exclude=""; [[ -n "$symbol" ]] || exclude="StackProbe"
  else
    profile="$("$root/scripts/firmware-profile.sh" "$t")"
    cargo build -q -p clampwise-benches-cortex-m --bin clampwise-step-count --target "$t" --profile "$profile"
    image="$target_dir/$t/$profile/clampwise-step-count"
    echo "$t: --profile $profile"
    regex="${symbol:-clampwise_benches::run::step_}"
    exclude=""
  fi
  list="$(entries "$image" "$regex" "$exclude")"
  if [[ -z "$list" ]]; then
    echo "cortex-m-count.sh: $t: no function matches '$regex' in $image (inlined? mark the step #[inline(never)] or pass --symbol)" >&2
    exit 1
  fi
  count "$t" "$image" "$list"
  if [[ -z "$elf" ]]; then
    echo "  static size (bytes) of each step function as linked (callees not included):"
    "$llvm/llvm-nm" -S "$image" | grep -E ' [tT] ' | demangle | grep -E "$regex" \
      | awk '{ printf "    %6d  %s\n", ("0x" $2) + 0, $4 }'
  fi
  echo
done
