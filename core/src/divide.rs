//! Division by a divisor fixed when the configuration is built, by a multiply: a general
//! 64-bit [`ConstDivisor`] and the 32-bit segment fraction of the lookup tables
//! ([`fraction_q31`]). The one target switch is the pointer width: 64-bit targets test the
//! remainder in one 64-bit multiply, 32-bit targets in a 32-bit one where the span allows.
//!
//! A 64-bit division costs 20–90 cycles on a desktop core and a library call of several hundred
//! on a Cortex-M0+, which has no divider at all; a divisor that never changes can be replaced by
//! its reciprocal. [`ConstDivisor::new`] computes `m = ⌊(2^(64+k) − 1)/d⌋` with `2^k ≤ d < 2^(k+1)`
//! once (a `const fn`: at compile time for a configuration in flash); a division is then the
//! high half of `n·m` shifted by `k`, which is ⌊n/d⌋ or one less for every `n ≤ 2⁶³`, and one
//! remainder test makes it exact [pub: T. Granlund and P. L. Montgomery, "Division by invariant
//! integers using multiplication", PLDI 1994, §4; this is the variant with a correction step].
//!
//! Why one correction suffices: `m > (2^(64+k) − 1)/d − 1`, so for `n ≤ 2⁶³`
//! `n·m / 2^(64+k) > n/d − n·(d + 1)/(d·2^(64+k)) ≥ n/d − (d + 1)/(d·2^(k+1)) ≥ n/d − 1`
//! (the first inequality strict), and `n·m / 2^(64+k) ≤ n/d`. Checked against the plain
//! division by the tests below.

/// A divisor `d` (1 ..= 2³² − 1) with its reciprocal, for exact ⌊n/d⌋ without a division.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct ConstDivisor {
    divisor: u64,
    magic: u64,
    shift: u8,
}

impl ConstDivisor {
    /// The reciprocal of `divisor`; `0` is taken as 1 (callers validate their divisors).
    pub(crate) const fn new(divisor: u32) -> Self {
        let d = if divisor == 0 { 1 } else { divisor as u64 };
        let k = 63 - d.leading_zeros(); // 2^k ≤ d < 2^(k+1), k ≤ 31
        // (2^(64+k) − 1)/d < 2^(64+k)/2^k = 2⁶⁴: the quotient fits u64.
        #[allow(clippy::cast_possible_truncation)]
        let magic = (((1u128 << (64 + k)) - 1) / d as u128) as u64;
        #[allow(clippy::cast_possible_truncation)]
        let shift = k as u8;
        Self {
            divisor: d,
            magic,
            shift,
        }
    }

    /// ⌊n / d⌋ for `n ≤ 2⁶³` (larger `n` may come out one short).
    pub(crate) fn div(self, n: u64) -> u64 {
        // The high half of a 64 × 64-bit product: one instruction on a 64-bit core.
        #[allow(clippy::cast_possible_truncation)]
        let estimate = (crate::wide::mul_u64(n, self.magic) >> 64) as u64 >> self.shift;
        // estimate ∈ {q − 1, q}: q̂·d ≤ n, and the remainder is below 2d.
        let remainder = n.wrapping_sub(estimate.wrapping_mul(self.divisor));
        estimate + u64::from(remainder >= self.divisor)
    }

    /// `n / d` rounded toward zero, as Rust's `/` on i64 (`d` ≥ 1, so it cannot overflow),
    /// for every `n`.
    pub(crate) fn div_toward_zero(self, n: i64) -> i64 {
        // |n| ≤ 2⁶³; only ⌊2⁶³/1⌋ leaves i64, and wraps to i64::MIN, which negated (wrapping)
        // is i64::MIN = i64::MIN / 1.
        #[allow(clippy::cast_possible_wrap)]
        let q = self.div(n.unsigned_abs()) as i64;
        if n < 0 { q.wrapping_neg() } else { q }
    }
}

/// Spans of table segments: the fraction of a segment an input has covered, r/d in Q0.31,
/// by a multiply with the span's reciprocal (the same scheme as [`ConstDivisor`], narrowed to
/// 32 bits because a fraction never exceeds 1).
/// `(⌊(2^(32+L) − 1) / d⌋, L + 1)` for a span d ≥ 1, `L = ⌊log₂ d⌋` (d = 0 gives `(0, 0)`; a
/// validated axis has no such segment).
pub(crate) const fn segment_constants(d: u32) -> (u32, u8) {
    if d == 0 {
        return (0, 0);
    }
    let l = 31 - d.leading_zeros();
    // (2^(32+L) − 1) / d < 2^(32+L) / 2^L = 2³², and L + 1 ≤ 32: both casts are exact.
    #[allow(clippy::cast_possible_truncation)]
    ((((1u64 << (32 + l)) - 1) / d as u64) as u32, (l + 1) as u8)
}

/// ⌊r·2³¹ / d⌋ for 0 ≤ r ≤ d < 2³², from the segment's constants `recip`, `shift` (see the table's
/// `Divisors`); equal to the plain division for every input (property test
/// `fraction_matches_division`, and the argument below).
///
/// With `m = recip = (2^(32+L) − 1 − ρ) / d`, 0 ≤ ρ < d, write m = 2^(32+L)/d − ε with
/// 0 < ε = (1 + ρ)/d ≤ 1. Then r·m / 2^(L+1) = r·2³¹/d − r·ε/2^(L+1), and
/// 0 ≤ r·ε/2^(L+1) ≤ d/2^(L+1) < 1 (d < 2^(L+1)), so the estimate `q̂ = ⌊r·m / 2^(L+1)⌋` is
/// the quotient q or q − 1. The remainder r·2³¹ − q̂·d lies in [0, 2d) and decides: q = q̂ + 1
/// exactly when it is ≥ d. r·m < 2⁶⁴ fits u64; q̂ < 2³¹ and q ≤ 2³¹ fit u32.
#[inline]
pub(crate) fn fraction_q31(r: u32, d: u32, recip: u32, shift: u8) -> u32 {
    // r·m < d·2^(32+L)/d = 2^(32+L), so the estimate is below 2³¹: the cast is exact.
    #[allow(clippy::cast_possible_truncation)]
    let estimate = u64::from(r)
        .wrapping_mul(u64::from(recip))
        .wrapping_shr(u32::from(shift)) as u32;
    estimate.wrapping_add(u32::from(remainder_reaches(r, d, estimate)))
}

/// Whether r·2³¹ − q̂·d ≥ d, for the estimate q̂ of [`fraction_q31`] (remainder in [0, 2d)).
#[cfg(target_pointer_width = "64")]
#[inline]
fn remainder_reaches(r: u32, d: u32, estimate: u32) -> bool {
    remainder_reaches_wide(r, d, estimate)
}

/// Whether r·2³¹ − q̂·d ≥ d, for the estimate q̂ of [`fraction_q31`] (remainder in [0, 2d)).
#[cfg(not(target_pointer_width = "64"))]
#[inline]
fn remainder_reaches(r: u32, d: u32, estimate: u32) -> bool {
    remainder_reaches_narrow(r, d, estimate)
}

/// The remainder test in u64: r·2³¹ < 2⁶³ and q̂·d ≤ r·2³¹, so it is exact (one multiply on a
/// 64-bit target).
#[inline]
pub(crate) fn remainder_reaches_wide(r: u32, d: u32, estimate: u32) -> bool {
    let rem = (u64::from(r) << 31).wrapping_sub(u64::from(estimate).wrapping_mul(u64::from(d)));
    rem >= u64::from(d)
}

/// The remainder test for 32-bit targets, where a 64-bit multiply is a library call: for
/// d ≤ 2³¹ the remainder is below 2d ≤ 2³², so it is exact modulo 2³² (one 32-bit multiply);
/// only wider segments take the 64-bit form.
#[cfg_attr(target_pointer_width = "64", allow(dead_code))]
#[inline]
pub(crate) fn remainder_reaches_narrow(r: u32, d: u32, estimate: u32) -> bool {
    if d <= 1 << 31 {
        let rem = (r << 31).wrapping_sub(estimate.wrapping_mul(d));
        rem >= d
    } else {
        remainder_reaches_wide(r, d, estimate)
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// ⌊r·2³¹/d⌋ by the plain division, the definition the reciprocal form must reproduce.
    fn division(r: u32, d: u32) -> u32 {
        u32::try_from((u64::from(r) << 31) / u64::from(d)).unwrap()
    }

    fn check_fraction(r: u32, d: u32) {
        let (m, s) = segment_constants(d);
        let want = division(r, d);
        let estimate = u32::try_from((u64::from(r) * u64::from(m)) >> s).unwrap();
        assert!(
            estimate == want || estimate + 1 == want,
            "estimate r={r} d={d}"
        );
        assert_eq!(fraction_q31(r, d, m, s), want, "r={r} d={d}");
        // Both remainder tests (64-bit host form and 32-bit target form) agree with it.
        for reaches in [remainder_reaches_wide, remainder_reaches_narrow] {
            assert_eq!(
                estimate + u32::from(reaches(r, d, estimate)),
                want,
                "r={r} d={d}"
            );
        }
    }

    #[test]
    fn fraction_matches_division_at_the_edges() {
        // Every span length class, its ends and neighbours, each with the extreme numerators
        // (r = d gives exactly 2³¹: the clamped upper end).
        for l in 0..32u32 {
            let p = 1u64 << l;
            for d in [
                p,
                p + 1,
                p + 2,
                2 * p - 1,
                2 * p - 2,
                p + p / 2,
                p * 3 / 2 + 1,
            ] {
                let Ok(d) = u32::try_from(d) else { continue };
                if u64::from(d) < p {
                    continue;
                }
                for r in [0, 1, 2, d / 3, d / 2, d - 1, d.saturating_sub(2), d] {
                    if r <= d {
                        check_fraction(r, d);
                    }
                }
            }
        }
        assert_eq!(
            fraction_q31(u32::MAX, u32::MAX, segment_constants(u32::MAX).0, 32),
            1 << 31
        );
    }

    #[test]
    fn fraction_matches_division_exhaustively_for_small_spans() {
        for d in 1..=300u32 {
            for r in 0..=d {
                check_fraction(r, d);
            }
        }
    }

    proptest! {
        // The reciprocal form against the floor division over the whole input range: spans of
        // every bit length (uniform exponent) and numerators 0 ..= d.
        #[test]
        fn fraction_matches_division(bits in 0u32..32, raw in any::<u32>(), num in any::<u64>()) {
            let d = ((raw >> (31 - bits)) | (1 << bits)).max(1);
            let r = u32::try_from(num % (u64::from(d) + 1)).unwrap();
            check_fraction(r, d);
        }

        // Reference: the hardware (or compiler-runtime) division.
        #[test]
        fn same_as_division(d in 1u32.., n in 0u64..(1 << 63)) {
            let c = ConstDivisor::new(d);
            prop_assert_eq!(c.div(n), n / u64::from(d));
        }

        #[test]
        fn same_as_signed_division(d in 1u32.., n in any::<i64>()) {
            let c = ConstDivisor::new(d);
            prop_assert_eq!(c.div_toward_zero(n), n / i64::from(d));
        }

        #[test]
        fn small_divisors_and_numerators_near_multiples(d in 1u32..1000, q in 0u64..(1 << 40), r in 0u64..3) {
            let c = ConstDivisor::new(d);
            let n = (q * u64::from(d)).saturating_add(r).saturating_sub(1);
            prop_assert_eq!(c.div(n), n / u64::from(d));
        }
    }

    #[test]
    fn at_the_edges() {
        let top = (1u64 << 63) - 1;
        for d in [
            1u32,
            2,
            3,
            5,
            7,
            641,
            1 << 30,
            (1 << 30) + 1,
            (1 << 31) - 1,
            1 << 31,
            u32::MAX - 1,
            u32::MAX,
        ] {
            let c = ConstDivisor::new(d);
            let dd = u64::from(d);
            for n in [
                0u64,
                1,
                dd - 1,
                dd,
                dd + 1,
                2 * dd - 1,
                top,
                top - 1,
                top - dd,
            ] {
                assert_eq!(c.div(n), n / dd, "{n} / {d}");
            }
            assert_eq!(c.div(1 << 63), (1u64 << 63) / dd, "2⁶³ / {d}");
            for n in [i64::MIN, i64::MIN + 1, i64::MAX, -1, 0] {
                assert_eq!(c.div_toward_zero(n), n / i64::from(d), "{n} / {d}");
            }
        }
        assert_eq!(ConstDivisor::new(0), ConstDivisor::new(1));
    }
}
