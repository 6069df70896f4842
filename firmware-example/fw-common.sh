# shellcheck shell=bash disable=SC2034
# Shared helpers for the firmware scripts (sourced, not run).
# Builds go to the workspace's target/ directory; copies of each image and each run's output go
# to target/fw-check/, so a later step never picks up an image another variant overwrote.

set -euo pipefail

FW_DIR="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
REPO_ROOT="$(cd "$FW_DIR/.." && pwd)"
FW_TARGET_DIR="${CARGO_TARGET_DIR:-$REPO_ROOT/target}"
FW_OUT="$FW_TARGET_DIR/fw-check"
FW_PKG="clampwise-firmware-example"
FW_BIN="clampwise-fw"
FW_TARGETS=(thumbv7em-none-eabihf thumbv7m-none-eabi thumbv6m-none-eabi)
LLVM_BIN="$(rustc --print sysroot)/lib/rustlib/$(rustc -vV | sed -n 's/^host: //p')/bin"
[[ -x "$LLVM_BIN/llvm-nm" ]] || { echo "[firmware] FAIL: llvm-tools missing (rustup component add llvm-tools)" >&2; exit 1; }
mkdir -p "$FW_OUT"
cd "$REPO_ROOT"

fw_log() { printf '[firmware] %s\n' "$*" >&2; }
fw_fail() { printf '[firmware] FAIL: %s\n' "$*" >&2; exit 1; }

# fw_cargo_features VARIANT -> the cargo feature arguments of a build variant.
fw_cargo_features() {
  case "$1" in
    semihosting) echo "" ;;
    panic-check) echo "--features panic-check" ;;
    panic-canary) echo "--features panic-check,panic-canary" ;;
    canary-shipped) echo "--features panic-canary" ;;
    defmt) echo "--no-default-features --features defmt" ;;
    defmt-canary) echo "--no-default-features --features defmt,panic-canary" ;;
    *) fw_fail "unknown variant $1" ;;
  esac
}

# fw_profile TARGET -> the cargo profile of the target's images (scripts/firmware-profile.sh:
# `firmware`, opt-level z, on thumbv6m; `firmware-speed`, opt-level s, elsewhere).
fw_profile() { "$REPO_ROOT/scripts/firmware-profile.sh" "$1"; }

# fw_build TARGET VARIANT -> builds with the target's profile (fw_profile), copies the image to
# $FW_OUT/TARGET.VARIANT.elf and prints that path. Fails the script if the build fails.
fw_build() {
  local target="$1" variant="$2" elf="$FW_OUT/$1.$2.elf"
  # shellcheck disable=SC2046
  cargo build -q -p "$FW_PKG" --bin "$FW_BIN" --target "$target" --profile "$(fw_profile "$target")" \
    $(fw_cargo_features "$variant") >&2 || fw_fail "build $target ($variant)"
  cp "$FW_TARGET_DIR/$target/$(fw_profile "$target")/$FW_BIN" "$elf"
  echo "$elf"
}

# fw_elf TARGET VARIANT -> the saved image, building it first if it is not there yet.
fw_elf() {
  local elf="$FW_OUT/$1.$2.elf"
  if [[ -f "$elf" && -z "${FW_REBUILD:-}" ]]; then echo "$elf"; else fw_build "$1" "$2"; fi
}

# fw_reachable ELF ROOT_REGEX -> bytes of code reachable by direct calls and branches from the
# functions whose (mangled) names match ROOT_REGEX, the roots included: every function the
# disassembly shows one of them branching to, and so on. Indirect calls are not followed (the
# core makes none). Conditional branches are not followed either: the compiler keeps them inside
# their function, and a literal pool after a return can disassemble as one, pointing anywhere.
# Prints "<bytes> <functions>".
fw_reachable() {
  local elf="$1" root="$2" tmp
  tmp="$(mktemp -d)"
  "$LLVM_BIN/llvm-nm" -S "$elf" | awk 'NF == 4 { print $4, $2 }' >"$tmp/sizes"
  "$LLVM_BIN/llvm-objdump" -d --no-show-raw-insn "$elf" | awk '
    /^[0-9a-f]+ <.*>:$/ { f = substr($2, 2, length($2) - 3); next }
    /\t(bl|blx|b|b\.w)\t0x[0-9a-f]+ </ {
      if (match($0, /<[^>]*>/)) {
        t = substr($0, RSTART + 1, RLENGTH - 2); sub(/\+0x[0-9a-f]+$/, "", t)
        if (t != f) print f, t
      }
    }' | sort -u >"$tmp/edges"
  awk -v root="$root" '
    function hex(h,   k, b) { b = 0; for (k = 1; k <= length(h); k++) b = b * 16 + index("0123456789abcdef", substr(h, k, 1)) - 1; return b }
    FILENAME ~ /sizes$/ { size[$1] = $2; next }
    { adj[$1] = adj[$1] " " $2 }
    END {
      n = 0; for (s in size) if (s ~ root) { q[n++] = s; seen[s] = 1 }
      for (i = 0; i < n; i++) { m = split(adj[q[i]], a, " "); for (j = 1; j <= m; j++) if (!(a[j] in seen)) { seen[a[j]] = 1; q[n++] = a[j] } }
      total = 0; for (s in seen) total += hex(size[s]); print total, n
    }' "$tmp/sizes" "$tmp/edges"
  rm -rf "$tmp"
}

# fw_panic_paths ELF [ALLOW_REGEX] -> the functions outside the standard library from which a
# panic can be reached by direct calls and branches (one per line; nothing when the image is
# panic-free). Walks the call graph backwards from `core::panicking::*`, the panic handler and
# the standard library's panicking helpers; the walk stops at functions matching ALLOW_REGEX
# (demangled names), which are not reported. Used where a link-time check cannot be (the defmt
# image, whose logger has a panic of its own) and to name the culprits when one fails.
fw_panic_paths() {
  local elf="$1" allow="${2:-^\$}"
  "$LLVM_BIN/llvm-objdump" -d --no-show-raw-insn -C "$elf" | awk -v allow="$allow" '
    /^[0-9a-f]+ <.*>:$/ { f = substr($0, index($0, "<") + 1); f = substr(f, 1, length(f) - 2); next }
    /\t(bl|blx|b|b\.w|j|jal|call|tail)\t/ {
      s = $0; i = 0
      while ((j = index(substr(s, i + 1), "<")) > 0) i += j
      if (i == 0) next
      t = substr(s, i + 1); sub(/>.*$/, "", t); sub(/\+0x[0-9a-f]+$/, "", t)
      if (t != f) { callers[t] = callers[t] "\n" f }
    }
    END {
      n = 0
      for (t in callers) if (t ~ /^core::panicking::|rust_begin_unwind|^core::option::(unwrap|expect)_failed|^core::result::unwrap_failed|slice_index_fail|slice_error_fail|len_mismatch_fail|slice_end_index_len_fail|slice_start_index_len_fail|slice_index_order_fail/) { q[n++] = t; seen[t] = 1 }
      for (k = 0; k < n; k++) {
        m = split(callers[q[k]], a, "\n")
        for (j = 1; j <= m; j++) {
          c = a[j]; if (c == "" || (c in seen)) continue
          seen[c] = 1
          if (c ~ allow) continue
          if (c !~ /^(core::|<core::|_\$LT\$core|compiler_builtins::|__aeabi)/) print c
          q[n++] = c
        }
      }
    }' | sort -u
}
