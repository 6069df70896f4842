#!/usr/bin/env bash
# No soft-float routine in the ARMv6-M image (no FPU there: any float op would link one).
# Lists every compiler-runtime helper in the image and fails on the float ones: the AEABI
# names (__aeabi_f*, __aeabi_d*: fadd, dmul, f2iz, d2f, fcmp…) and the libgcc/compiler-rt names
# (__addsf3, __muldf3, __fixsfsi, __floatsidf, __extendsfdf2, __truncdfsf2, __eqsf2, …).
# Integer helpers (__aeabi_ldivmod, __aeabi_uidiv, __aeabi_lmul, …) are expected and allowed.
#
# Usage: softfloat-check.sh [TARGET]   (default: thumbv6m-none-eabi)
source "$(dirname "$0")/fw-common.sh"

t="${1:-thumbv6m-none-eabi}"
elf="$(fw_elf "$t" semihosting)"
syms="$("$LLVM_BIN/llvm-nm" "$elf" | awk '{print $NF}')"
float_re='^(__aeabi_[fd][a-z0-9]+|__(add|sub|mul|div|neg|pow[i]?)[sdt]f[23]|__(fix|fixuns)[sdt]f[sdt]i|__float(un)?[sdt]i[sdt]f|__extend[sdh]f[sdt]f2|__trunc[sdt]f[sdh]f2|__(eq|ne|lt|le|gt|ge|unord|cmp)[sdt]f2|__aeabi_[fd]cmp[a-z]+)$'
# Self-test of the pattern, so a typo cannot make the check vacuous.
for name in __aeabi_fadd __aeabi_dmul __aeabi_f2iz __aeabi_d2f __aeabi_dcmpeq __addsf3 __muldf3 \
  __powidf2 __fixsfsi __fixunsdfsi __floatsisf __floatundidf __extendsfdf2 __truncdfsf2 __eqsf2; do
  grep -qE "$float_re" <<<"$name" || fw_fail "pattern misses soft-float routine $name"
done
for name in __aeabi_memcpy __aeabi_ldivmod __aeabi_uidiv __aeabi_lmul __udivmoddi4 __divmoddi4; do
  ! grep -qE "$float_re" <<<"$name" || fw_fail "pattern flags integer helper $name"
done
helpers="$(grep -E '^__(aeabi_[a-z0-9]+|u?(div|mod|divmod)[sdt]i[0-9]|[a-z]+[sdt]f[0-9])$' <<<"$syms" | sort -u | tr '\n' ' ' || true)"
fw_log "$t: runtime helpers linked: ${helpers:-none}"
floats="$(grep -E "$float_re" <<<"$syms" || true)"
[[ -z "$floats" ]] || fw_fail "$t: soft-float routines linked: $(tr '\n' ' ' <<<"$floats")"
fw_log "$t: no soft-float routine linked"
