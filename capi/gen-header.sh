#!/usr/bin/env bash
# Regenerate include/clampwise.h from the crate's source with cbindgen (pinned below, installed
# into target/tools on first use). `--check` compares instead of writing: exit 1 when the
# committed header is not current.
set -euo pipefail
CAPI="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
ROOT="$(cd "$CAPI/.." && pwd)"
TOOLS="${CARGO_TARGET_DIR:-$ROOT/target}/tools"
CBINDGEN_VERSION=0.29.4
cbindgen="$TOOLS/bin/cbindgen"
if ! [[ -x "$cbindgen" ]] || [[ "$("$cbindgen" --version)" != "cbindgen $CBINDGEN_VERSION" ]]; then
  echo "[capi] installing cbindgen $CBINDGEN_VERSION into $TOOLS" >&2
  cargo install -q cbindgen --locked --version "$CBINDGEN_VERSION" --root "$TOOLS" >&2
fi
fresh="$(mktemp)"
trap 'rm -f "$fresh"' EXIT
"$cbindgen" --quiet --config "$CAPI/cbindgen.toml" --crate clampwise-capi --output "$fresh" "$CAPI"
if [[ "${1:-}" == "--check" ]]; then
  if ! diff -u "$CAPI/include/clampwise.h" "$fresh"; then
    echo "[capi] include/clampwise.h is not current: run bash capi/gen-header.sh" >&2
    exit 1
  fi
else
  cp "$fresh" "$CAPI/include/clampwise.h"
fi
