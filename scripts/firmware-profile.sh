#!/usr/bin/env bash
# The cargo profile a firmware image is built with for a target (one place for every script):
#   thumbv6m (Cortex-M0/M0+): `firmware`, opt-level "z": the 16 KiB flash budget binds there.
#   every other target (Cortex-M3/M4/M4F, RISC-V): `firmware-speed`, opt-level "s": about a
#   fifth fewer instructions per step for about 1 KiB more flash (BENCHMARKS.md, "Opt-level").
# FW_PROFILE overrides it for every target.
# Usage: scripts/firmware-profile.sh TARGET
set -euo pipefail
if [[ -n "${FW_PROFILE:-}" ]]; then echo "$FW_PROFILE"; exit 0; fi
case "${1:?usage: firmware-profile.sh TARGET}" in
  thumbv6m-*) echo firmware ;;
  *) echo firmware-speed ;;
esac
