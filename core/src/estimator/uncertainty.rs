//! The ± uncertainty of a torque (or capacity) from the tolerances of μ, F and r_e.
//!
//! Relative tolerances combine either as a worst-case sum, δT/T = δμ + δF/F + δr, or as a
//! root-sum-square, δT/T = √(δμ² + (δF/F)² + δr²) for independent errors
//! [pub: JCGM 100:2008 (GUM) §5.1.2, law of propagation of uncertainty for a product of
//! uncorrelated factors, first order]. The configuration chooses; the default is worst case,
//! the conservative reading for a brake.
//!
//! Arithmetic: δF/F in Q30 (rounded down, 10⁻⁹); the worst-case sum exact; the root-sum-square
//! rounded up, at most 1.7·10⁻⁴ of itself above the exact root (`root_sum_square_up`); the
//! product with the torque rounded down (1 LSB, 0.25 mN·m). All in 32- and 64-bit integers.

use crate::units::{NewtonMetres, Newtons, Ratio};

/// How relative tolerances combine.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Combination {
    /// δμ + δF/F + δr: a bound that holds whatever the correlation.
    #[default]
    WorstCase,
    /// √(δμ² + (δF/F)² + δr²): a standard-uncertainty style estimate for independent errors.
    RootSumSquare,
}

/// Relative tolerance of force: δF / F in Q30, saturating at 1.99 (force near zero).
fn relative_force(force: Newtons, force_uncertainty: Newtons) -> u32 {
    let f = u64::from(force.to_bits().unsigned_abs());
    let u = u64::from(force_uncertainty.to_bits().unsigned_abs());
    let max = Ratio::MAX.to_bits().unsigned_abs();
    if f == 0 {
        return max;
    }
    // u ≤ 2³¹ so u·2³⁰ ≤ 2⁶¹; the quotient, at most `max`, fits u32.
    u32::try_from(((u << 30) / f).min(u64::from(max))).unwrap_or(max)
}

/// √(a² + b² + c²) (Q30 relative tolerances, at most 2³¹ here; any `u32` works), rounded **up**,
/// in the same scale.
///
/// In 32 bits on every target: the three terms are shifted right (rounding up) until the largest
/// has at most 15 bits, so each square is at most 2³⁰ and their sum below 2³², then the root of
/// the sum is rounded up and shifted back. Every rounding goes up, so the result is never below
/// the exact root of the inputs, and it is above by at most (√3 + 1) units of the shift, that is
/// 1.7·10⁻⁴ of the root when a shift is needed (the largest term keeps at least 2¹⁴ units), and
/// at most 1 LSB (10⁻⁹) otherwise. A ± bound rounded up stays a bound. On a Cortex-M0+ (no long
/// multiply, no divider) the whole uncertainty now costs under 200 instructions besides the δF/F
/// division, where the root of the 64-bit sum alone cost about 1 100; the same value comes out
/// on every target.
fn root_sum_square_up(a: u32, b: u32, c: u32) -> u64 {
    let largest = a.max(b).max(c);
    // largest < 2^(32 − leading_zeros); after the shift it is below 2¹⁵, and ≤ 2¹⁵ rounded up.
    let shift = 17u32.saturating_sub(largest.leading_zeros());
    let below = (1u32 << shift) - 1;
    let up = |v: u32| (v >> shift) + u32::from(v & below != 0);
    let (a, b, c) = (up(a), up(b), up(c));
    // Each term ≤ 2¹⁵: each square ≤ 2³⁰, the sum ≤ 3·2³⁰ < 2³², exact in u32.
    let sum = a * a + b * b + c * c;
    let root = isqrt(sum);
    // root ≤ ⌊√(3·2³⁰)⌋ = 56 755, so root² fits u32.
    let root = root + u32::from(root * root < sum);
    u64::from(root) << shift
}

/// ⌊√n⌋: `u32::isqrt` from `core` (table-seeded, few branches to mispredict on a host, one
/// hardware division on a Cortex-M3/M4), except on ARMv6-M, which has no divider: there the
/// digit loop below, 16 steps of shifts and compares, costs less than `core`'s division call.
/// The same value for every input (tested against `u32::isqrt`).
fn isqrt(n: u32) -> u32 {
    if crate::wide::ARMV6M {
        isqrt_digits(n)
    } else {
        n.isqrt()
    }
}

/// ⌊√n⌋, two bits per step, 16 steps.
fn isqrt_digits(n: u32) -> u32 {
    let mut rem = n;
    let mut root = 0u32;
    let mut bit = 1u32 << 30;
    while bit != 0 {
        // root + bit stays below 2³¹ (at most 1.25·2³⁰, at n = u32::MAX): no overflow; the
        // tests run it with overflow checks on, u32::MAX included.
        if rem >= root + bit {
            rem -= root + bit;
            root = (root >> 1) + bit;
        } else {
            root >>= 1;
        }
        bit >>= 2;
    }
    root
}

/// ± uncertainty of `magnitude` (a torque or capacity) in N·m.
pub(crate) fn torque_uncertainty(
    magnitude: NewtonMetres,
    force: Newtons,
    force_uncertainty: Newtons,
    mu_tolerance: Ratio,
    radius_tolerance: Ratio,
    combination: Combination,
) -> NewtonMetres {
    // Q30 terms, each in [0, 2³¹].
    let dmu = mu_tolerance.to_bits().unsigned_abs();
    let dr = radius_tolerance.to_bits().unsigned_abs();
    let df = relative_force(force, force_uncertainty);
    let rel_q30: u64 = match combination {
        // The sum is below 2³³.
        Combination::WorstCase => u64::from(dmu) + u64::from(df) + u64::from(dr),
        Combination::RootSumSquare => root_sum_square_up(dmu, df, dr),
    };
    // t ≤ 2³¹ and rel < 3·2³¹, so the product is below 2⁶⁴: exact in u64.
    let t = i64::from(magnitude.to_bits()).unsigned_abs();
    let bits = (t * rel_q30) >> 30;
    NewtonMetres::from_bits(i32::try_from(bits).unwrap_or(i32::MAX))
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// The exact root, rounded up: `u128::isqrt` from Rust's `core` as the reference.
    fn exact_root_up(a: u32, b: u32, c: u32) -> u128 {
        let sum = [a, b, c]
            .iter()
            .map(|&v| u128::from(v) * u128::from(v))
            .sum::<u128>();
        let r = sum.isqrt();
        if r * r < sum { r + 1 } else { r }
    }

    /// Never below the exact root; above it by at most 1.7·10⁻⁴ of it, or 1 LSB when small.
    fn check_root(a: u32, b: u32, c: u32) -> Result<(), TestCaseError> {
        let got = u128::from(root_sum_square_up(a, b, c));
        let exact = exact_root_up(a, b, c);
        prop_assert!(got >= exact, "{a} {b} {c}: {got} < {exact}");
        let excess = got - exact;
        prop_assert!(
            excess <= 1 || excess * 10_000 <= exact * 17 / 10,
            "{a} {b} {c}: {got} vs {exact}"
        );
        Ok(())
    }

    proptest! {
        // Reference: the standard library's integer square root.
        #[test]
        fn digit_root_is_std_isqrt(n in any::<u32>()) {
            prop_assert_eq!(isqrt_digits(n), n.isqrt());
            prop_assert_eq!(isqrt(n), n.isqrt());
        }

        #[test]
        fn root_sum_square_is_a_tight_upper_bound(
            a in any::<u32>(), b in any::<u32>(), c in any::<u32>(),
        ) {
            check_root(a, b, c)?;
        }

        // Relative tolerances as configured: below 2 (2³¹ in Q30), most of them small.
        #[test]
        fn root_sum_square_of_small_tolerances(
            a in 0u32..(1 << 24), b in 0u32..(1 << 31), c in 0u32..(1 << 16),
        ) {
            check_root(a, b, c)?;
            check_root(c, a, b)?;
        }
    }

    #[test]
    fn digit_root_at_squares_and_the_ends() {
        for r in (0u32..=65_535)
            .step_by(97)
            .chain([255, 256, 65_534, 65_535])
        {
            let sq = r * r;
            assert_eq!(isqrt_digits(sq), r, "{sq}");
            if sq > 0 {
                assert_eq!(isqrt_digits(sq - 1), r - 1, "{}", sq - 1);
            }
        }
        assert_eq!(isqrt_digits(u32::MAX), 65_535);
    }

    #[test]
    fn root_sum_square_at_the_edges() {
        for (a, b, c) in [
            (0, 0, 0),
            (1, 0, 0),
            (3, 4, 0),
            ((1 << 15) - 1, 0, 0),
            (1 << 15, 1 << 15, 1 << 15),
            ((1 << 16) - 1, 1, 1),
            (1 << 30, 1 << 30, 1 << 30),
            (u32::MAX >> 1, u32::MAX >> 1, u32::MAX >> 1),
            (u32::MAX, u32::MAX, u32::MAX),
        ] {
            check_root(a, b, c).unwrap();
        }
        // [calc] 3-4-5 and 2-3-6-7: exact roots come out exact.
        assert_eq!(root_sum_square_up(3 << 20, 4 << 20, 0), 5 << 20);
        assert_eq!(root_sum_square_up(2 << 25, 3 << 25, 6 << 25), 7 << 25);
    }

    #[test]
    fn worst_case_and_rss_against_hand_values() {
        // [calc] T = 1000 N·m, δμ = 20 %, δF/F = 200 N / 10 kN = 2 %, δr = 1 %:
        // worst case 23 % → 230 N·m; RSS √(0.04 + 0.0004 + 0.0001) = 0.201246 → 201.246 N·m.
        let args = (
            NewtonMetres::from_num(1000),
            Newtons::from_num(10_000),
            Newtons::from_num(200),
            Ratio::from_num(0.20),
            Ratio::from_num(0.01),
        );
        let wc = torque_uncertainty(
            args.0,
            args.1,
            args.2,
            args.3,
            args.4,
            Combination::WorstCase,
        );
        assert!((wc.to_num::<f64>() - 230.0).abs() < 0.01, "{wc}");
        let rss = torque_uncertainty(
            args.0,
            args.1,
            args.2,
            args.3,
            args.4,
            Combination::RootSumSquare,
        );
        // The root is rounded up (at most 1.7·10⁻⁴ of it, 0.034 N·m here) and the product
        // rounded down (at most 1 LSB, 0.25 mN·m).
        let excess = rss.to_num::<f64>() - 201.246;
        assert!((-0.001..0.035).contains(&excess), "{rss}");
    }

    #[test]
    fn zero_force_gives_a_large_not_a_crashing_bound() {
        let u = torque_uncertainty(
            NewtonMetres::from_num(10),
            Newtons::ZERO,
            Newtons::from_num(5),
            Ratio::ZERO,
            Ratio::ZERO,
            Combination::WorstCase,
        );
        assert!(u > NewtonMetres::from_num(19));
    }
}
