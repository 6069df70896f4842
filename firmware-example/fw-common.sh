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
    panic-canary) echo "--features panic-canary" ;;
    defmt) echo "--no-default-features --features defmt" ;;
    *) fw_fail "unknown variant $1" ;;
  esac
}

# fw_build TARGET VARIANT -> builds with --profile firmware, copies the image to
# $FW_OUT/TARGET.VARIANT.elf and prints that path. Fails the script if the build fails.
fw_build() {
  local target="$1" variant="$2" elf="$FW_OUT/$1.$2.elf"
  # shellcheck disable=SC2046
  cargo build -q -p "$FW_PKG" --bin "$FW_BIN" --target "$target" --profile firmware \
    $(fw_cargo_features "$variant") >&2 || fw_fail "build $target ($variant)"
  cp "$FW_TARGET_DIR/$target/firmware/$FW_BIN" "$elf"
  echo "$elf"
}

# fw_elf TARGET VARIANT -> the saved image, building it first if it is not there yet.
fw_elf() {
  local elf="$FW_OUT/$1.$2.elf"
  if [[ -f "$elf" && -z "${FW_REBUILD:-}" ]]; then echo "$elf"; else fw_build "$1" "$2"; fi
}
