#!/usr/bin/env bash
# Size report of the firmware image per target: flash and static RAM by section (llvm-size),
# the parts that belong to the estimation (the per-sample step's code, the radius table, the
# trace) by symbol (llvm-nm), and the stack use measured in QEMU by painting (the image's
# `#target stack` line: `total` = deepest point of the whole program from the top of RAM,
# `step` = deepest point of one processing step below its call site).
#
# flash = .vector_table + .text + .rodata + .data (its initial values live in flash)
# RAM   = .data + .bss + .uninit (static); the stack comes on top.
#
# Usage: size-report.sh [--markdown] [TARGET...]   (default: all three thumb targets)
# Uses the images and QEMU logs qemu-check.sh left in target/fw-check/, building or running
# what is missing.
source "$(dirname "$0")/fw-common.sh"

markdown=0
if [[ "${1:-}" == "--markdown" ]]; then markdown=1; shift; fi
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
stack_field() { # stack_field LOG NAME
  grep '^#target stack' "$1" | tr ',' '\n' | awk -F= -v n="$2" '$1 == n { print $2 }'
}

if [[ $markdown -eq 1 ]]; then
  echo "| target | flash total | .text | .rodata | static RAM | step code | radius table | trace | stack (whole program) | stack (one step) |"
  echo "|---|---|---|---|---|---|---|---|---|---|"
else
  printf '%-22s %8s %8s %8s %6s %10s %9s %9s %7s %12s %11s\n' target flash .text .rodata RAM \
    step-code table trace stack step-stack proc-bytes
fi
for t in "${targets[@]}"; do
  elf="$(fw_elf "$t" semihosting)"
  log="$FW_OUT/$t.qemu.txt"
  if [[ ! -s "$log" ]]; then
    cargo run -q -p "$FW_PKG" --bin "$FW_BIN" --target "$t" --profile firmware >"$log" 2>/dev/null \
      || fw_fail "$t: QEMU run for the stack measurement failed"
  fi
  vt=$(section "$elf" .vector_table); text=$(section "$elf" .text); ro=$(section "$elf" .rodata)
  data=$(section "$elf" .data); bss=$(section "$elf" .bss); un=$(section "$elf" .uninit)
  flash=$((vt + text + ro + data)); ram=$((data + bss + un))
  # The step: the processing step and the core functions it calls that the optimiser kept apart.
  # shellcheck disable=SC2016 # a regex, not an expansion
  step=$(symbols "$elf" ' [tT] .*(processor(::|\.\.)ForceRadius(\$LT\$|<)|clampwise_core::)')
  table=$(symbols "$elf" ' [rRdD] .*RADIUS_TABLE')
  trace=$(symbols "$elf" ' [rRdD] .*generated::TRACE(::h[0-9a-f]+)?$')
  total=$(stack_field "$log" total_bytes); one=$(stack_field "$log" step_bytes)
  proc=$(stack_field "$log" processor_bytes)
  if [[ $markdown -eq 1 ]]; then
    echo "| $t | $flash B | $text B | $ro B | $ram B | $step B | $table B | $trace B | $total B | $one B |"
  else
    printf '%-22s %8d %8d %8d %6d %10d %9d %9d %7s %12s %11s\n' "$t" "$flash" "$text" "$ro" "$ram" \
      "$step" "$table" "$trace" "$total" "$one" "$proc"
  fi
done
