//! Division by a divisor fixed when the configuration is built, by a multiply: the Q30 ratio
//! of a [`Reciprocal`] and the 32-bit segment fraction of the lookup tables
//! ([`fraction_q31`]). The one target switch is the pointer width: 64-bit targets test the
//! remainder in one 64-bit multiply, 32-bit targets in a 32-bit one where the span allows.
//! A divisor known only in the sample (the adaptation's gain) goes through
//! [`ratio_q30_down`]: one 32-bit division and one Newton step, never a 64-bit division.
//!
//! A 64-bit division costs 20–90 cycles on a desktop core and a library call of several hundred
//! instructions on a Cortex-M (a Cortex-M0+ has no divider at all, a Cortex-M3/M4 only a 32-bit
//! one); a divisor that never changes is replaced by its reciprocal, computed once (a
//! `const fn`: at compile time for a configuration in flash), and a division becomes a multiply
//! and one remainder test [pub: T. Granlund and P. L. Montgomery, "Division by invariant
//! integers using multiplication", PLDI 1994, §4; the variant with a correction step]. The
//! arguments are beside each form; each is checked against the plain division by the tests.

/// A divisor `d` (1 ..= 2³² − 1) fixed with the configuration, with its reciprocal, for the
/// exact Q30 ratio ⌊n·2³⁰/d⌋ of any `n < 2³²` without a division.
///
/// `m = ⌊2⁶³/d⌋` (at most 2⁶³); the estimate ⌊n·m/2³³⌋ takes two 32 × 32 → 64-bit multiplies
/// (one instruction each on a Cortex-M3/M4) and is the quotient q or q − 1: with
/// m = 2⁶³/d − ε, 0 ≤ ε < 1, it is ⌊n·2³⁰/d − n·ε/2³³⌋ and n·ε/2³³ < ½. The remainder
/// n·2³⁰ − q̂·d then lies in [0, 2d) and one test makes the quotient exact [pub: T. Granlund and
/// P. L. Montgomery, "Division by invariant integers using multiplication", PLDI 1994, §4, the
/// variant with a correction step]. Checked against the plain division by the tests below.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Reciprocal {
    divisor: u32,
    magic: u64,
}

impl Reciprocal {
    /// The reciprocal of `divisor`; `0` is taken as 1 (callers validate their divisors).
    pub(crate) const fn new(divisor: u32) -> Self {
        let d = if divisor == 0 { 1 } else { divisor };
        // 2⁶³/d ≤ 2⁶³ fits u64.
        #[allow(clippy::cast_possible_truncation)]
        let magic = ((1u128 << 63) / d as u128) as u64;
        Self { divisor: d, magic }
    }

    /// ⌊n·2³⁰/d⌋, exactly.
    #[inline]
    pub(crate) fn ratio_q30(self, n: u32) -> u64 {
        let n = u64::from(n);
        // n·m = hi·2³² + lo; hi ≤ (2³² − 1)·2³¹ and hi + lo/2³² < 2⁶³ + 2³²: no overflow.
        let hi = n * (self.magic >> 32);
        let lo = n * (self.magic & 0xFFFF_FFFF);
        let estimate = (hi + (lo >> 32)) >> 1;
        // estimate·d ≤ n·2³⁰ < 2⁶²: the remainder is exact in u64, and below 2d.
        let divisor = u64::from(self.divisor);
        let remainder = (n << 30).wrapping_sub(estimate.wrapping_mul(divisor));
        estimate + u64::from(remainder >= divisor)
    }

    /// n·2³⁰/d rounded toward zero, as Rust's `/` on `(n << 30) / d`, for |n| < 2³² (larger
    /// magnitudes are taken as 2³² − 1).
    #[inline]
    pub(crate) fn ratio_q30_toward_zero(self, n: i64) -> i64 {
        let magnitude = u32::try_from(n.unsigned_abs()).unwrap_or(u32::MAX);
        // ≤ (2³² − 1)·2³⁰ < 2⁶²: the cast is exact.
        #[allow(clippy::cast_possible_wrap)]
        let q = self.ratio_q30(magnitude) as i64;
        if n < 0 { -q } else { q }
    }
}

/// Spans of table segments: the fraction of a segment an input has covered, r/d in Q0.31,
/// by a multiply with the span's reciprocal (the same scheme as [`Reciprocal`], narrowed to
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

/// n·2³⁰/d rounded down, within 2⁻²⁶ of it (relative) plus one unit, for any `n` and `d ≥ 1`
/// (`d = 0` is taken as 1), **never above** it; without a 64-bit division.
///
/// A 64-bit division is a library routine on every 32-bit core (≈ 200 instructions on a
/// Cortex-M4, more on a Cortex-M0+). Here: `d` is normalised to D ∈ [2³¹, 2³²] (its top 32
/// bits, plus one so that D is never below the exact scaled divisor), a 16-bit reciprocal of D
/// comes from one 32-bit division (a single instruction on Cortex-M3/M4 and RISC-V M), and one
/// Newton step x₁ = x₀ + x₀·(2⁶² − D·x₀)/2⁶² squares its relative error, ≤ 2⁻¹⁴, to ≤ 2⁻²⁸
/// [pub: the Newton–Raphson reciprocal, e.g. D. E. Knuth, *The Art of Computer Programming*
/// vol. 2, 3rd ed., §4.3.3]. A Newton step from below stays below 1/D, and every truncation
/// lowers it further, so the quotient n·x₁ is a lower bound; the test `ratio_from_below`
/// checks both sides against the exact u128 quotient.
#[inline]
pub(crate) fn ratio_q30_down(n: u32, d: u64) -> u64 {
    let d = d.max(1);
    let z = d.leading_zeros(); // 0 ..= 63
    // d·2^z ∈ [2⁶³, 2⁶⁴): its top 32 bits plus one, D ∈ (2³¹, 2³²], is ≥ d·2^(z−32).
    let scaled = ((d << z) >> 32) + 1;
    // (D >> 16) + 1 ∈ (2¹⁵, 2¹⁶ + 1] fits u32, and exceeds D/2¹⁶: r₀ < 2⁴⁸/D.
    #[allow(clippy::cast_possible_truncation)]
    let head = (scaled >> 16) as u32 + 1;
    let x0 = u64::from(u32::MAX / head) << 14; // < 2⁶²/D ≤ 2³¹
    // D·x₀ < 2⁶²; the error term is below 2⁶²·2⁻¹⁴ = 2⁴⁸, so x₀·(e >> 16) < 2³¹·2³² fits.
    let e = (1u64 << 62) - scaled * x0;
    let x1 = x0 + ((x0 * (e >> 16)) >> 46); // ≤ 2⁶²/D ≤ 2³¹
    // n/d ≈ n·x₁·2^(z−94), so n·2³⁰/d ≈ n·x₁ / 2^(64−z); n·x₁ < 2³²·2³¹.
    (u64::from(n) * x1).checked_shr(64 - z).unwrap_or(0)
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// The exact ⌊n·2³⁰/d⌋ (u128 division, Rust's `core`): the reference for `ratio_q30_down`.
    fn exact_ratio(n: u32, d: u64) -> u128 {
        (u128::from(n) << 30) / u128::from(d.max(1))
    }

    fn check_ratio(n: u32, d: u64) -> Result<(), TestCaseError> {
        let got = u128::from(ratio_q30_down(n, d));
        let want = exact_ratio(n, d);
        prop_assert!(got <= want, "n {n} d {d}: {got} above {want}");
        // Within 2⁻²⁶ of the exact quotient, plus one unit.
        prop_assert!(
            want - got <= (want >> 26) + 1,
            "n {n} d {d}: {got} vs {want}"
        );
        Ok(())
    }

    proptest! {
        #[test]
        fn ratio_from_below(n in any::<u32>(), d in 1u64..) {
            check_ratio(n, d)?;
        }

        // The adaptation's range: d = λ + φ²P in [0.9, 9) (Q30), n = |P·φ| < 4 (Q30).
        #[test]
        fn ratio_from_below_in_the_adaptation_range(
            n in any::<u32>(),
            d in 966_367_641u64..(9u64 << 30),
        ) {
            check_ratio(n, d)?;
        }
    }

    #[test]
    fn ratio_at_the_edges() {
        for (n, d) in [
            (0, 1),
            (u32::MAX, 1),
            (u32::MAX, 0),
            (1, u64::MAX),
            (u32::MAX, u64::MAX),
            (u32::MAX, 1 << 63),
            (u32::MAX, (1 << 32) - 1),
            (u32::MAX, 1 << 32),
            (1 << 30, 1 << 30),
            (3, 3),
        ] {
            check_ratio(n, d).unwrap();
        }
    }

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

        // Reference: the compiler-runtime u128 division.
        #[test]
        fn ratio_same_as_division(d in 1u32.., n in any::<u32>()) {
            let c = Reciprocal::new(d);
            prop_assert_eq!(u128::from(c.ratio_q30(n)), (u128::from(n) << 30) / u128::from(d));
        }

        #[test]
        fn signed_ratio_same_as_division(d in 1u32.., n in -(1i64 << 32) + 1..(1i64 << 32)) {
            let c = Reciprocal::new(d);
            prop_assert_eq!(c.ratio_q30_toward_zero(n), (n << 30) / i64::from(d));
        }

        #[test]
        fn small_divisors_and_numerators_near_multiples(d in 1u32..1000, q in 0u64..(1 << 22), r in 0u64..3) {
            let c = Reciprocal::new(d);
            let n = u32::try_from((q * u64::from(d)).saturating_add(r).saturating_sub(1)).unwrap();
            prop_assert_eq!(c.ratio_q30(n), (u64::from(n) << 30) / u64::from(d));
        }
    }

    #[test]
    fn at_the_edges() {
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
            let c = Reciprocal::new(d);
            let dd = u64::from(d);
            for n in [
                0u32,
                1,
                d - 1,
                d,
                d.saturating_add(1),
                u32::MAX,
                u32::MAX - 1,
                u32::MAX - d,
            ] {
                assert_eq!(c.ratio_q30(n), (u64::from(n) << 30) / dd, "{n}·2³⁰ / {d}");
            }
            for n in [-(1i64 << 32) + 1, -1, 0, 1, (1 << 32) - 1] {
                assert_eq!(
                    c.ratio_q30_toward_zero(n),
                    (n << 30) / i64::from(d),
                    "{n}·2³⁰ / {d}"
                );
            }
            // Magnitudes beyond u32 are taken as 2³² − 1.
            assert_eq!(
                c.ratio_q30_toward_zero(i64::MIN),
                -c.ratio_q30_toward_zero((1 << 32) - 1)
            );
        }
        assert_eq!(Reciprocal::new(0), Reciprocal::new(1));
    }
}
