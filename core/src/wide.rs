//! Exact widening products and a division by 3, cheap on 32-bit cores: used by the thermal and
//! wear updates, the force filter (`mul_i64`), the temperature-compensated calibration
//! (`mul_i64_mostly_i32`), the torque chain n·k·μ·F·r_e (`mul_i64`) and the reciprocal division
//! of `divide` (`mul_u64`, high half).
//!
//! On a 64-bit host a 64 × 64 → 128-bit product is one instruction, and on a 32-bit core with a
//! long multiply (Cortex-M3/M4, RISC-V with M) the compiler builds it well from 32 × 32 → 64-bit
//! multiplies: there these are the plain operators. ARMv6-M (Cortex-M0/M0+) has no long
//! multiply, and there each 32 × 32 → 64-bit piece of a wide product is an `__aeabi_lmul` call
//! (a full 64 × 64-bit routine, 37 instructions), six of them for a signed 64-bit pair. Here, on
//! ARMv6-M, a signed product is the unsigned product of the magnitudes (four pieces) and each
//! piece four 16 × 16-bit multiplies in line (about 20 instructions): a signed 64 × 64-bit
//! product about 110 instructions instead of about 230, and a 64 × 32-bit one (out of line,
//! about 60 with the call) instead of about 150. A lone 32 × 32 → 64-bit product is left to
//! the compiler: `__aeabi_lmul` is no slower than the in-line form and far smaller. Measured on
//! the Cortex-M0+ bench (`benches/cortex-m-count.sh`), these forms took the fully featured step
//! from 12 050 to 10 576 instructions and the minimal one from 5 283 to 4 823, with 300 B less
//! code. `⌊n/3⌋` on any 32-bit core
//! is one wrapping multiply by the inverse of 3 instead of a 64-bit division routine.
//!
//! ARMv6-M is recognised as the Arm target without compare-and-swap atomics (the only one among
//! the M-profile architectures; stable Rust exposes no `cfg` for the multiplier itself).
//!
//! Every function gives the exact result on every target; the 32-bit forms are compiled on the
//! host too and property-tested there against the native operators.

/// Whether this is ARMv6-M (Cortex-M0/M0+/M1): no 32 × 32 → 64-bit multiply and no hardware
/// divider, so a division is a library call (see the module docs for how it is recognised).
pub(crate) const ARMV6M: bool = cfg!(all(target_arch = "arm", not(target_has_atomic = "32")));

/// Whether a target has a 32 × 32 → 64-bit multiply instruction: all but ARMv6-M ([`ARMV6M`];
/// `limbs` is compiled everywhere, so both arms always build and the constant picks one).
macro_rules! if_long_multiply {
    ($yes:block else $no:block) => {{
        if ARMV6M $no else $yes
    }};
}

/// `a · b` (64 × 64 → 128 bits, signed), exact, for a `b` that in practice fits i32: on
/// ARMv6-M that case takes the 64 × 32-bit form, the rest [`mul_i64`]; elsewhere the plain
/// operator (no test to pay for).
#[inline(always)]
pub(crate) fn mul_i64_mostly_i32(a: i64, b: i64) -> i128 {
    if_long_multiply!({ i128::from(a).wrapping_mul(i128::from(b)) } else {
        match i32::try_from(b) {
            Ok(b) => limbs::mul_i64_i32(a, b),
            Err(_) => limbs::mul_i64(a, b),
        }
    })
}

/// `a · b` (64 × 64 → 128 bits), exact.
#[inline(always)]
pub(crate) fn mul_u64(a: u64, b: u64) -> u128 {
    if_long_multiply!({ u128::from(a).wrapping_mul(u128::from(b)) } else { limbs::mul_u64(a, b) })
}

/// `a · b` (64 × 64 → 128 bits, signed), exact: at most 2¹²⁶ in magnitude.
#[inline(always)]
pub(crate) fn mul_i64(a: i64, b: i64) -> i128 {
    if_long_multiply!({ i128::from(a).wrapping_mul(i128::from(b)) } else { limbs::mul_i64(a, b) })
}

/// `a · b mod 2¹²⁸` for `a, b < 2⁹⁶` (exact when the caller's bounds keep the product below
/// 2¹²⁸).
#[inline(always)]
pub(crate) fn mul_u96(a: u128, b: u128) -> u128 {
    if_long_multiply!({ a.wrapping_mul(b) } else { limbs::mul_u96(a, b) })
}

/// `⌊n / 3⌋`, exact for every `n`.
#[inline(always)]
pub(crate) fn div3(n: u64) -> u64 {
    #[cfg(target_pointer_width = "64")]
    {
        n / 3
    }
    #[cfg(not(target_pointer_width = "64"))]
    {
        limbs::div3(n)
    }
}

/// The forms for cores without a long multiply, and the 32-bit division by 3 (on every target,
/// so the host tests them).
#[allow(dead_code)]
mod limbs {
    /// 32 × 32 → 64 bits from four 16 × 16 → 32-bit multiplies (none can overflow).
    #[inline(always)]
    pub(super) fn mul_u32(a: u32, b: u32) -> u64 {
        let (a0, a1) = (a & 0xFFFF, a >> 16);
        let (b0, b1) = (b & 0xFFFF, b >> 16);
        // Each partial product is below 2³²; the two middle ones may carry out of 32 bits.
        let (mid, mid_carry) = (a0 * b1).overflowing_add(a1 * b0);
        let outer = (u64::from(a1 * b1) << 32) | u64::from(a0 * b0);
        // The exact product is below 2⁶⁴, so neither addition wraps.
        outer
            .wrapping_add(u64::from(mid) << 16)
            .wrapping_add(u64::from(mid_carry) << 48)
    }

    /// Signed by unsigned, 32 × 32 → 64 bits: with `a = a_u − 2³²·[a < 0]` (`a_u` its bits
    /// read unsigned), `a·b = a_u·b − 2³²·b·[a < 0]`; the exact product fits i64, so the sum
    /// taken modulo 2⁶⁴ is it.
    #[inline(always)]
    pub(super) fn mul_i32_u32(a: i32, b: u32) -> i64 {
        let fix = if a < 0 { b } else { 0 };
        mul_u32(a.cast_unsigned(), b)
            .wrapping_sub(u64::from(fix) << 32)
            .cast_signed()
    }

    /// 64 × 32 → 96 bits, signed by unsigned: with `a = a₁·2³² + a₀` (`a₁` signed, `a₀` < 2³²),
    /// `a₁·b·2³² + a₀·b`; both terms and their sum are far inside i128.
    #[inline(always)]
    pub(super) fn mul_i64_u32(a: i64, b: u32) -> i128 {
        #[allow(clippy::cast_possible_truncation)] // the halves, by intent
        let (a0, a1) = (a.cast_unsigned() as u32, (a >> 32) as i32);
        (i128::from(mul_i32_u32(a1, b)) << 32).wrapping_add(i128::from(mul_u32(a0, b)))
    }

    /// 64 × 32 → 96 bits, signed: as [`mul_i64_u32`] with `b = b_u − 2³²·[b < 0]`. Out of line:
    /// one copy (about 95 instructions) serves every call site.
    #[inline(never)]
    pub(super) fn mul_i64_i32(a: i64, b: i32) -> i128 {
        let fix = if b < 0 { i128::from(a) << 32 } else { 0 };
        mul_i64_u32(a, b.cast_unsigned()).wrapping_sub(fix)
    }

    /// 64 × 64 → 128 bits from four 32 × 32-bit products.
    pub(super) fn mul_u64(a: u64, b: u64) -> u128 {
        #[allow(clippy::cast_possible_truncation)] // the low halves, by intent
        let (a0, b0) = (a as u32, b as u32);
        #[allow(clippy::cast_possible_truncation)] // below 2³² after the shift
        let (a1, b1) = ((a >> 32) as u32, (b >> 32) as u32);
        let (mid, mid_carry) = mul_u32(a0, b1).overflowing_add(mul_u32(a1, b0));
        let (lo, lo_carry) = mul_u32(a0, b0).overflowing_add(mid << 32);
        // The high half of a 128-bit product fits 64 bits: none of these additions wraps.
        let hi = mul_u32(a1, b1)
            .wrapping_add(mid >> 32)
            .wrapping_add(u64::from(mid_carry) << 32)
            .wrapping_add(u64::from(lo_carry));
        (u128::from(hi) << 64) | u128::from(lo)
    }

    /// `a · b mod 2¹²⁸` for `a, b < 2⁹⁶`: with `a = a₁·2⁶⁴ + a₀` (a₁ < 2³²) and likewise `b`,
    /// `a₀·b₀ + (a₁·b₀ + a₀·b₁ mod 2⁶⁴)·2⁶⁴`; `a₁·b₁` lies at 2¹²⁸ and above.
    pub(super) fn mul_u96(a: u128, b: u128) -> u128 {
        #[allow(clippy::cast_possible_truncation)] // the low halves, by intent
        let (a0, b0) = (a as u64, b as u64);
        #[allow(clippy::cast_possible_truncation)] // below 2³² by the precondition
        let (a1, b1) = ((a >> 64) as u32, (b >> 64) as u32);
        let cross = low_u64(a1, b0).wrapping_add(low_u64(b1, a0));
        mul_u64(a0, b0).wrapping_add(u128::from(cross) << 64)
    }

    /// `a · b mod 2⁶⁴` for a 32-bit `a`: one 32 × 32 → 64-bit product and one 32-bit multiply.
    fn low_u64(a: u32, b: u64) -> u64 {
        #[allow(clippy::cast_possible_truncation)] // the halves, by intent
        let (b0, b1) = (b as u32, (b >> 32) as u32);
        mul_u32(a, b0).wrapping_add(u64::from(a.wrapping_mul(b1)) << 32)
    }

    /// The product of the magnitudes (at most 2¹²⁶, so it fits i128), signed.
    pub(super) fn mul_i64(a: i64, b: i64) -> i128 {
        let m = mul_u64(a.unsigned_abs(), b.unsigned_abs()).cast_signed();
        if (a ^ b) < 0 { m.wrapping_neg() } else { m }
    }

    /// `⌊n/3⌋` by the inverse of 3 modulo 2⁶⁴: for `m` a multiple of 3, `m / 3 = m · INV
    /// mod 2⁶⁴`, and exactly then the product is at most `⌊(2⁶⁴ − 1)/3⌋`. Of `n`, `n − 1`,
    /// `n − 2` one is the multiple `n − n mod 3`; their products are `q`, `q − INV`,
    /// `q − 2·INV` (mod 2⁶⁴), so the first that lands in range is the quotient.
    pub(super) fn div3(n: u64) -> u64 {
        const INV: u64 = 0xAAAA_AAAA_AAAA_AAAB; // 3 · INV = 2⁶⁵ + 1
        const MAX: u64 = u64::MAX / 3;
        let q = n.wrapping_mul(INV);
        if q <= MAX {
            return q;
        }
        let q = q.wrapping_sub(INV);
        if q <= MAX { q } else { q.wrapping_sub(INV) }
    }
}

#[cfg(test)]
mod tests {
    use super::limbs;
    use proptest::prelude::*;

    #[test]
    fn edges() {
        for a in [
            0,
            1,
            2,
            3,
            u64::MAX / 3,
            u64::MAX - 2,
            u64::MAX - 1,
            u64::MAX,
            1 << 63,
        ] {
            assert_eq!(limbs::div3(a), a / 3, "{a}");
            for b in [0, 1, u64::MAX, 1 << 63, (1 << 32) - 1, 1 << 32] {
                assert_eq!(limbs::mul_u64(a, b), u128::from(a) * u128::from(b));
            }
        }
        for (a, b) in [
            (i64::MIN, i64::MIN),
            (i64::MIN, i64::MAX),
            (i64::MIN, -1),
            (-1, -1),
        ] {
            assert_eq!(limbs::mul_i64(a, b), i128::from(a) * i128::from(b));
        }
        for (a, b) in [
            (u32::MAX, u32::MAX),
            (0xFFFF, 0x1_0000),
            (0x8000_8000, 0x8000_8000),
        ] {
            assert_eq!(limbs::mul_u32(a, b), u64::from(a) * u64::from(b));
        }
        let signed_32 = [
            i32::MIN,
            i32::MIN + 1,
            -1,
            0,
            1,
            i32::MAX,
            -0x1_0000,
            0xFFFF,
        ];
        for a in signed_32 {
            for b in signed_32 {
                let (ub, wide_b) = (b.cast_unsigned(), i128::from(b));
                assert_eq!(limbs::mul_i32_u32(a, ub), i64::from(a) * i64::from(ub));
                for x in [i64::MIN, i64::MAX, -1, 1 << 32, -(1 << 32), i64::from(a)] {
                    assert_eq!(limbs::mul_i64_i32(x, b), i128::from(x) * wide_b, "{x} {b}");
                    assert_eq!(limbs::mul_i64_u32(x, ub), i128::from(x) * i128::from(ub));
                }
            }
        }
    }

    proptest! {
        // The 32-bit forms give the native operators' results.
        #[test]
        fn limbs_same_as_native(a in any::<u64>(), b in any::<u64>(), x in any::<i64>(),
                                y in any::<i64>(), c in any::<u32>(), d in any::<u32>()) {
            prop_assert_eq!(limbs::mul_u32(c, d), u64::from(c) * u64::from(d));
            prop_assert_eq!(limbs::mul_u64(a, b), u128::from(a) * u128::from(b));
            prop_assert_eq!(limbs::mul_i64(x, y), i128::from(x) * i128::from(y));
            prop_assert_eq!(limbs::div3(a), a / 3);
            let (e, f) = (c.cast_signed(), d.cast_signed());
            prop_assert_eq!(limbs::mul_i32_u32(e, d), i64::from(e) * i64::from(d));
            prop_assert_eq!(limbs::mul_i64_u32(x, d), i128::from(x) * i128::from(d));
            prop_assert_eq!(limbs::mul_i64_i32(x, f), i128::from(x) * i128::from(f));
            // Through the public form (the native operator on a host).
            let small = i64::from(f) >> (c % 8);
            prop_assert_eq!(super::mul_i64_mostly_i32(x, small), i128::from(x) * i128::from(small));
            prop_assert_eq!(super::mul_i64_mostly_i32(x, y), i128::from(x) * i128::from(y));
            let (p, q) = (u128::from(a) << 32 | u128::from(c), (u128::from(b) << 32 | u128::from(d)) >> (c % 96));
            prop_assert_eq!(limbs::mul_u96(p, q), p.wrapping_mul(q));
            prop_assert_eq!(limbs::div3(a >> 1), (a >> 1) / 3);
        }
    }
}
