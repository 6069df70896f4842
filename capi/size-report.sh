#!/usr/bin/env bash
# Flash and RAM of a C example image, from its ELF, its link map and its QEMU log.
#
# * flash = .vector_table + .text + .rodata + .data (initial values); static RAM = .data + .bss
# * C API library = every input section the linker kept from the static library (the core, the
#   C API, compiler_builtins) and from libgcc (integer helpers): step, device build, records.
# * core + tables = as the Rust firmware's size report counts it: the code reachable by direct
#   calls from `cw_estimator_step` (the core's whole step, the C API's input and output
#   conversion, the runtime helpers they call; found from the disassembly by the Rust
#   firmware's `fw_reachable`) plus the device description in flash (`clampwise_device_desc`
#   and the exact-size table arrays it points to: all tables and coefficients of one device).
#   The run-time device build (`cw_device_init`) and the state records
#   (`cw_estimator_save`/`_restore`) are reported beside it.
# * RAM of the API: `cw_device` (the device configuration built at init, with its tables) and
#   `cw_estimator` (the state), as the image's "#target" line reports them; stack measured by
#   painting: the device build and estimator start, then the steps and the state records.
#
# Usage: size-report.sh ELF QEMU_LOG [--check]
#   --check: fail unless core + tables < 16 KiB (the target of the C API on thumbv6m)
set -euo pipefail
elf="$1"
qemu_log="$2"
check="${3:-}"
map="$elf.map"
CAPI="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
TARGET_CORE_TABLES=16384

# Bytes of code reachable from the C functions named ROOT_REGEX (the Rust firmware's analysis).
reachable() {
  (source "$CAPI/../firmware-example/fw-common.sh" && fw_reachable "$elf" "$1") | awk '{ print $1 }'
}

section() { arm-none-eabi-size -A "$elf" | awk -v n="$1" '$1 == n { print $2; f = 1 } END { if (!f) print 0 }'; }
symbol() { local hex; hex="$(arm-none-eabi-nm -S "$elf" | awk -v n="$1" '$4 == n { print $2 }')"; echo $((16#${hex:-0})); }
# Summed bytes of the symbols whose names match REGEX.
symbols() {
  arm-none-eabi-nm -S "$elf" | awk -v re="$1" '
    function hex(h,   k, b) { b = 0; for (k = 1; k <= length(h); k++) b = b * 16 + index("0123456789abcdef", tolower(substr(h, k, 1))) - 1; return b }
    NF == 4 && $4 ~ re { s += hex($2) }
    END { print s + 0 }'
}
field() { grep '^#target' "$qemu_log" | tr ',' '\n' | awk -F= -v n="$1" '$1 == n { print $2 }'; }

# Bytes of the kept input sections from archives matching REGEX whose names match SECTIONS.
from_archive() {
  awk -v lib="$1" -v sec="$2" '
    function hex(h,   k, b) { sub(/^0x/, "", h); b = 0; for (k = 1; k <= length(h); k++) b = b * 16 + index("0123456789abcdef", tolower(substr(h, k, 1))) - 1; return b }
    /^Linker script and memory map/ { on = 1; next }
    !on { next }
    NF == 1 && $1 ~ /^\./ { pending = $1; next }
    NF == 4 && $1 ~ /^\./ && $2 ~ /^0x/ { name = $1; size = $3; file = $4 }
    NF == 3 && $1 ~ /^0x/ && pending != "" { name = pending; size = $2; file = $3 }
    { pending = "" }
    name != "" && file ~ lib && name ~ sec { total += hex(size) }
    { name = "" }
    END { print total + 0 }' "$map"
}

text=$(section .text); rodata=$(section .rodata); data=$(section .data); bss=$(section .bss)
vectors=$(section .vector_table)
flash=$((vectors + text + rodata + data))
ram=$((data + bss))
lib_flash=$(from_archive '(libclampwise_capi|[.]plain|[.]panic-check)[.]a[(]' '^\.(text|rodata|data)')
gcc_flash=$(from_archive 'libgcc\.a' '^\.(text|rodata|data)')
# The description and the table arrays it points to (`clampwise_device_desc_radius_*`, `_mu_*`).
desc=$(symbols '^clampwise_device_desc(_(radius|mu)_[a-z0-9_]+)?$')
trace=$(symbol clampwise_trace)
step=$(reachable '^cw_estimator_step$')
init=$(reachable '^cw_device_init$')
records=$(reachable '^cw_estimator_(save|restore)$')
core_tables=$((step + desc))

printf '%-28s %8s\n' "$(basename "$elf")" bytes
printf '  %-26s %8d\n' "flash total" "$flash" ".text" "$text" ".rodata" "$rodata" \
  "static RAM (.data + .bss)" "$ram" \
  "C API library (flash)" "$lib_flash" "libgcc helpers" "$gcc_flash" \
  "step code" "$step" "device description" "$desc" "core + tables" "$core_tables" \
  "device build (init) code" "$init" "record save+restore code" "$records" "demo trace" "$trace" \
  "cw_device (RAM)" "$(field device_storage)" "cw_estimator (RAM)" "$(field estimator_storage)" \
  "stack, device build + start" "$(field init_bytes)" \
  "stack, steps + records" "$(field steps_and_records_bytes)"
if [[ $core_tables -lt $TARGET_CORE_TABLES ]]; then
  echo "[capi] core + tables $core_tables B: within the 16 KiB target" >&2
else
  echo "[capi] core + tables $core_tables B: $((core_tables - TARGET_CORE_TABLES)) B over the 16 KiB target" >&2
fi
if [[ "$check" == --check && $core_tables -ge $TARGET_CORE_TABLES ]]; then
  echo "[capi] FAIL: core + tables $core_tables B is not within the 16 KiB target" >&2
  exit 1
fi
