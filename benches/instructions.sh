#!/usr/bin/env bash
# Instructions per step on the host, repeatable on a noisy machine: runs `step_count` under
# `valgrind --tool=callgrind` for N and 2N steps of each variant and reports
# (I(2N) − I(N)) / N, so the set-up (configuration, input generation, process start) cancels.
# Add --hot to list the hottest functions inside one step of each fixed-point variant.
#
# Usage: benches/instructions.sh [--hot] [N]   (default N = 20480 = 5 passes over the 4096
# inputs, so N and 2N cover whole passes and see the same mix of operating points)
# Needs valgrind (callgrind_annotate for --hot). Builds with the `bench` profile (as criterion).
set -euo pipefail

hot=0
if [[ "${1:-}" == "--hot" ]]; then hot=1; shift; fi
n="${1:-20480}"
root="$(cd "$(dirname "$0")/.." && pwd)"
cd "$root"
command -v valgrind >/dev/null || { echo "instructions.sh: valgrind is not installed" >&2; exit 1; }

cargo build -q --profile bench -p clampwise-benches --bin step_count
bin="${CARGO_TARGET_DIR:-$root/target}/release/step_count"
out="${CARGO_TARGET_DIR:-$root/target}/instructions"
mkdir -p "$out"

count() { # count VARIANT STEPS -> total instructions of the run
  local f="$out/$1.$2.callgrind"
  valgrind --tool=callgrind --callgrind-out-file="$f" "$bin" "$1" "$2" >/dev/null 2>"$f.log" \
    || { echo "instructions.sh: valgrind run of $1 $2 failed (see $f.log)" >&2; exit 1; }
  awk '/^summary:/ { print $2; exit }' "$f"
}

printf '%-15s %12s %14s %14s %12s\n' variant N "I(N)" "I(2N)" "instr/step"
for v in fixed-full f32-full fixed-minimal f32-minimal; do
  a=$(count "$v" "$n"); b=$(count "$v" $((2 * n)))
  per=$(awk -v a="$a" -v b="$b" -v n="$n" 'BEGIN { printf "%.1f", (b - a) / n }')
  printf '%-15s %12d %14d %14d %12s\n' "$v" "$n" "$a" "$b" "$per"
done

if [[ $hot -eq 1 ]]; then
  for v in fixed-full fixed-minimal; do
    echo
    echo "== $v: inclusive instructions per step by function (2N run, divided by 2N) =="
    callgrind_annotate --inclusive=yes "$out/$v.$((2 * n)).callgrind" 2>/dev/null \
      | grep -E '^ *[0-9,]+ .*(clampwise_core|__udivti3|__divti3|__multi3|__muloti4)' \
      | grep -vE 'clampwise_benches|step_count::main' \
      | sed -E 's/\[[^]]*\]$//' \
      | awk -v n=$((2 * n)) '{ gsub(",", "", $1); fn = $0; sub(/^ *[0-9,]+ +\([ 0-9.%]+\) +/, "", fn);
          sub(/^[^:]*:/, "", fn); printf "%8.1f  %s\n", $1 / n, fn }' \
      | sed -E 's/ \([0-9,]+x\)//' | awk '$1 >= 0.5 && !seen[$2]++' | head -25
  done
fi
