#!/usr/bin/env bash
# Size report of the firmware image per target.
#
# * flash = .vector_table + .text + .rodata + .data (its initial values live in flash);
#   static RAM = .data + .bss + .uninit (the stack comes on top).
# * core + tables = the code of the estimator's step — every function reachable by direct
#   calls from `EstimatorStep::step` in the disassembly (the core's pipeline, its table
#   lookups, the integer runtime helpers it uses) — plus the device configuration in flash
#   (`DEVICE_CONFIG`: all tables and coefficients of one device).
# * the trace the stub replays (demo data, not part of a real firmware).
# * stack, measured in QEMU by painting (the image's `#target stack` line): the deepest point of
#   the whole program from the top of RAM, and of one step below its call site.
# * sizes on the target (`#target sizes`): the estimator's state (RAM; it lives inside the
#   loop's frame here) and the device configuration.
#
# Usage: size-report.sh [--markdown] [--check] [TARGET...]   (default: all three thumb targets)
#   --check  fail unless, on thumbv6m-none-eabi, core + tables < 16 KiB and the estimator state
#            < 1 KiB (the targets of issue 7)
# Uses the images and QEMU logs qemu-check.sh left in target/fw-check/, building or running
# what is missing.
source "$(dirname "$0")/fw-common.sh"

markdown=0
check=0
while [[ "${1:-}" == --* ]]; do
  case "$1" in
    --markdown) markdown=1 ;;
    --check) check=1 ;;
    *) fw_fail "unknown option $1" ;;
  esac
  shift
done
targets=("$@")
[[ ${#targets[@]} -gt 0 ]] || targets=("${FW_TARGETS[@]}")

section() { # section ELF NAME -> size in bytes (0 when absent)
  "$LLVM_BIN/llvm-size" -A "$1" | awk -v n="$2" '$1 == n { print $2; found = 1 } END { if (!found) print 0 }'
}
symbols() { # symbols ELF REGEX -> summed size of the matching (demangled) symbols
  local sum=0 size
  while read -r size; do sum=$((sum + 16#$size)); done < <(
    "$LLVM_BIN/llvm-nm" -C -S --size-sort "$1" | grep -E "$2" | awk '{ print $2 }' || true)
  echo "$sum"
}
field() { # field LOG LINE-TAG NAME
  grep "^#target $2" "$1" | tr ',' '\n' | awk -F= -v n="$3" '$1 == n { print $2 }'
}

if [[ $markdown -eq 1 ]]; then
  echo "| target | flash total | .text | .rodata | static RAM | core + tables | step code | device config | trace | stack (whole program) | stack (one step) | estimator state |"
  echo "|---|---|---|---|---|---|---|---|---|---|---|---|"
else
  printf '%-22s %7s %7s %7s %5s %12s %9s %8s %7s %7s %10s %9s\n' target flash .text .rodata RAM \
    core+tables step-code config trace stack step-stack state
fi
failed=0
for t in "${targets[@]}"; do
  elf="$(fw_elf "$t" semihosting)"
  log="$FW_OUT/$t.qemu.txt"
  if [[ ! -s "$log" ]]; then
    cargo run -q -p "$FW_PKG" --bin "$FW_BIN" --target "$t" --profile "$(fw_profile "$t")" >"$log" 2>/dev/null \
      || fw_fail "$t: QEMU run for the stack measurement failed"
  fi
  vt=$(section "$elf" .vector_table); text=$(section "$elf" .text); ro=$(section "$elf" .rodata)
  data=$(section "$elf" .data); bss=$(section "$elf" .bss); un=$(section "$elf" .uninit)
  flash=$((vt + text + ro + data)); ram=$((data + bss + un))
  read -r step functions < <(fw_reachable "$elf" 'EstimatorStep.*Processor.*4step')
  [[ "$functions" -gt 0 ]] || fw_fail "$t: no EstimatorStep::step symbol in the image"
  config=$(symbols "$elf" ' [rRdD] .*generated::DEVICE_CONFIG(::h[0-9a-f]+)?$')
  [[ "$config" -gt 0 ]] || fw_fail "$t: no DEVICE_CONFIG in the image"
  trace=$(symbols "$elf" ' [rRdD] .*generated::TRACE(::h[0-9a-f]+)?$')
  core=$((step + config))
  total=$(field "$log" stack total_bytes); one=$(field "$log" stack step_bytes)
  state=$(field "$log" sizes estimator_state_bytes)
  if [[ $markdown -eq 1 ]]; then
    echo "| $t | $flash B | $text B | $ro B | $ram B | **$core B** | $step B ($functions fns) | $config B | $trace B | $total B | $one B | **$state B** |"
  else
    printf '%-22s %7d %7d %7d %5d %12d %9d %8d %7d %7s %10s %9s\n' "$t" "$flash" "$text" "$ro" \
      "$ram" "$core" "$step" "$config" "$trace" "$total" "$one" "$state"
  fi
  if [[ $check -eq 1 && "$t" == thumbv6m-none-eabi ]]; then
    if [[ $core -ge 16384 ]]; then
      fw_log "$t: core + tables = $core B, target < 16384 B"; failed=1
    fi
    if [[ -z "$state" || $state -ge 1024 ]]; then
      fw_log "$t: estimator state = ${state:-?} B, target < 1024 B"; failed=1
    fi
  fi
done
[[ $failed -eq 0 ]] || fw_fail "size targets missed"
if [[ $check -eq 1 ]]; then fw_log "thumbv6m-none-eabi: size targets met (core + tables < 16 KiB, estimator state < 1 KiB)"; fi
