#!/usr/bin/env bash
# Link-time panic check of the firmware image (method: undefined panic handler).
#
# The `panic-check` feature replaces the panic handler with one that calls a symbol defined
# nowhere (`clampwise_panic_path_is_reachable`). The image is built with `--profile firmware`
# (opt-level z, fat LTO, one codegen unit, panic = abort), so the linker only keeps code
# reachable from the reset vector. If any panic path survives optimisation anywhere in the
# image — the per-sample step, the ADC driver, the control loop, the HAL stub, the output —
# the handler is kept, its call to the undefined symbol is kept, and the link fails.
# A clean link therefore proves that no `core::panicking` path is reachable from the step.
#
# The default image (`semihosting`, the one QEMU runs) is then checked directly: it must hold no
# panic handler (`rust_begin_unwind`) and no `core::panicking` function. The linker keeps only
# what is reachable (--gc-sections, fat LTO), so their absence means no panic path survived in
# the image that ships. (The two images are usually byte-identical too; the optimiser may place
# the same functions in another order, so that is reported, not required.)
#
# Negative controls: `panic-canary` plants one reachable panic; with `panic-check` that build
# must fail to link with the symbol named (on every target), and without it the image must show
# the panic symbols (first target), or the checks themselves are broken.
#
# The defmt image is checked by walking its call graph instead (see the end of this script).
# The conformance image (step, save, restore and snapshot on five device shapes, on all four
# targets including riscv32imac) has the same link-time check in conformance/check.sh.
#
# What it does not prove: the firmware profile turns overflow checks off (as shipped), so
# wrapping arithmetic is not a panic path here. The core's saturating arithmetic is tested on
# the host with overflow checks on (release profile).
#
# Usage: panic-check.sh [TARGET...]   (default: thumbv7em, thumbv7m and thumbv6m)
source "$(dirname "$0")/fw-common.sh"

targets=("$@")
[[ ${#targets[@]} -gt 0 ]] || targets=("${FW_TARGETS[@]}")
panic_re='rust_begin_unwind|core::panicking|panic_fmt|panic_bounds_check|unwrap_failed'

for t in "${targets[@]}"; do
  elf="$(fw_build "$t" panic-check)"
  # Captured first: with pipefail, `nm | grep -q` can fail on SIGPIPE and hide a match.
  syms="$("$LLVM_BIN/llvm-nm" -C "$elf")"
  if grep -qE "$panic_re" <<<"$syms"; then
    fw_fail "$t: a panic symbol is linked into the image"
  fi
  fw_log "$t: panic-free image links ($(basename "$elf"))"
  shipped="$(fw_build "$t" semihosting)"
  syms="$("$LLVM_BIN/llvm-nm" -C "$shipped")"
  if grep -qE "$panic_re" <<<"$syms"; then
    fw_fail "$t: the default image holds a panic path: $(grep -E "$panic_re" <<<"$syms" | tr '\n' ' ')"
  fi
  paths="$(fw_panic_paths "$shipped")"
  [[ -z "$paths" ]] || fw_fail "$t: the call graph of the default image reaches a panic from: $paths"
  "$LLVM_BIN/llvm-objcopy" -O binary "$elf" "$elf.bin"
  "$LLVM_BIN/llvm-objcopy" -O binary "$shipped" "$shipped.bin"
  if cmp -s "$elf.bin" "$shipped.bin"; then
    fw_log "$t: the default image holds no panic path (and is byte-identical to the proven one)"
  else
    fw_log "$t: the default image holds no panic path (same size: $(wc -c <"$shipped.bin") vs $(wc -c <"$elf.bin") B; functions placed differently)"
  fi
done

for t in "${targets[@]}"; do
  canary_log="$FW_OUT/$t.panic-canary.log"
  # shellcheck disable=SC2046 # the feature arguments are meant to split
  if cargo build -p "$FW_PKG" --bin "$FW_BIN" --target "$t" --profile "$(fw_profile "$t")" \
    $(fw_cargo_features panic-canary) >"$canary_log" 2>&1; then
    fw_fail "$t: negative control: the image with a planted panic linked, so the check proves nothing"
  fi
  grep -q 'undefined symbol: clampwise_panic_path_is_reachable' "$canary_log" \
    || fw_fail "$t: negative control failed for another reason; see $canary_log"
  fw_log "$t: negative control: planted panic is caught at link time"
done
canary="$(fw_build "${targets[0]}" canary-shipped)"
syms="$("$LLVM_BIN/llvm-nm" -C "$canary")"
grep -qE "$panic_re" <<<"$syms" \
  || fw_fail "negative control: a planted panic left no panic symbol in the default image"
grep -q canary <<<"$(fw_panic_paths "$canary")" \
  || fw_fail "negative control: the call-graph walk did not name the planted panic"
fw_log "negative control: planted panic shows in the default image's symbols and call graph (${targets[0]})"

# The defmt (probe) image, thumbv7em. Its logger, defmt-rtt, panics by design when it is taken
# re-entrantly ("defmt logger taken reentrantly", in `_defmt_acquire` / `_defmt_release`), so
# the link-time method cannot apply (with `panic-check` that build fails on the logger alone).
# Instead the call graph is walked back from every panic (fw_panic_paths): apart from those two
# logger functions, no function may reach one: not the step, the saved-state store and restore,
# the ADC driver or the loop. Negative control: a planted panic must be named.
if [[ -z "${FW_SKIP_DEFMT:-}" ]]; then
  logger='^_defmt_(acquire|release)$'
  elf="$(fw_build thumbv7em-none-eabihf defmt)"
  paths="$(fw_panic_paths "$elf" "$logger")"
  [[ -z "$paths" ]] || fw_fail "defmt image: panic reachable from: $(tr '\n' ' ' <<<"$paths")"
  [[ -n "$(fw_panic_paths "$elf")" ]] \
    || fw_fail "defmt image: the logger's own panic is gone; tighten this check to the link-time one"
  fw_log "defmt image (thumbv7em): no panic reachable but defmt-rtt's re-entrance guard"
  elf="$(fw_build thumbv7em-none-eabihf defmt-canary)"
  paths="$(fw_panic_paths "$elf" "$logger")"
  grep -q 'canary' <<<"$paths" \
    || fw_fail "defmt negative control: a planted panic was not found (got: $paths)"
  fw_log "defmt negative control: the planted panic is named ($(grep -m1 canary <<<"$paths"))"
fi
