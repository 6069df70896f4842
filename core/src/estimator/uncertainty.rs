//! The ± uncertainty of a torque (or capacity) from the tolerances of μ, F and r_e.
//!
//! Relative tolerances combine either as a worst-case sum, δT/T = δμ + δF/F + δr, or as a
//! root-sum-square, δT/T = √(δμ² + (δF/F)² + δr²) for independent errors
//! [pub: JCGM 100:2008 (GUM) §5.1.2, law of propagation of uncertainty for a product of
//! uncorrelated factors, first order]. The configuration chooses; the default is worst case,
//! the conservative reading for a brake.

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
fn relative_force(force: Newtons, force_uncertainty: Newtons) -> i64 {
    let f = i64::from(force.to_bits()).abs();
    let u = i64::from(force_uncertainty.to_bits()).abs();
    if f == 0 {
        return i64::from(Ratio::MAX.to_bits());
    }
    // u < 2³¹ so u·2³⁰ < 2⁶¹.
    ((u << 30) / f).min(i64::from(Ratio::MAX.to_bits()))
}

/// ⌊√n⌋. On 64-bit hosts `u64::isqrt` from `core` (a table-seeded Karatsuba root: a few
/// well-predicted steps, where the digit loop below costs about 100 ns in mispredicted
/// branches); elsewhere the digit loop, a fraction of that code on a core without a hardware
/// divider or a 64-bit multiply. Both give the same value for every input (checked by the
/// tests below), so results stay bit-identical across targets.
#[cfg(target_pointer_width = "64")]
fn isqrt(n: u64) -> u64 {
    n.isqrt()
}

/// ⌊√n⌋, digit by digit (two bits per step, 32 steps).
#[cfg(not(target_pointer_width = "64"))]
fn isqrt(n: u64) -> u64 {
    isqrt_digits(n)
}

/// ⌊√n⌋, digit by digit (two bits per step, 32 steps).
#[cfg_attr(target_pointer_width = "64", allow(dead_code))]
fn isqrt_digits(n: u64) -> u64 {
    let mut rem = n;
    let mut root = 0u64;
    let mut bit = 1u64 << 62;
    while bit != 0 {
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
    let dmu = i64::from(mu_tolerance.to_bits()).abs();
    let dr = i64::from(radius_tolerance.to_bits()).abs();
    let df = relative_force(force, force_uncertainty);
    let rel_q30: i64 = match combination {
        Combination::WorstCase => dmu + df + dr,
        Combination::RootSumSquare => {
            // Each term < 2³¹, squares < 2⁶², sum of three < 2⁶⁴ as u64; isqrt → Q30.
            let sq = |v: i64| v.unsigned_abs().saturating_mul(v.unsigned_abs());
            let sum = sq(dmu).saturating_add(sq(df)).saturating_add(sq(dr));
            i64::try_from(isqrt(sum)).unwrap_or(i64::MAX)
        }
    };
    let t = i64::from(magnitude.to_bits()).abs();
    // t < 2³¹, rel < 2³³ → product < 2⁶⁴: use i128 to be exact, then narrow saturating.
    let bits = (i128::from(t) * i128::from(rel_q30)) >> 30;
    NewtonMetres::from_bits(i32::try_from(bits).unwrap_or(i32::MAX))
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    proptest! {
        // Reference: the standard library's integer square root.
        #[test]
        fn isqrt_is_std_isqrt(n in any::<u64>()) {
            prop_assert_eq!(isqrt_digits(n), n.isqrt());
            prop_assert_eq!(isqrt(n), n.isqrt());
        }
    }

    #[test]
    fn isqrt_at_the_edges() {
        for n in [
            0u64,
            1,
            2,
            3,
            4,
            15,
            16,
            17,
            u64::MAX,
            u64::MAX - 1,
            1 << 62,
            (1 << 32) - 1,
        ] {
            assert_eq!(isqrt(n), n.isqrt(), "{n}");
            assert_eq!(isqrt_digits(n), n.isqrt(), "{n}");
        }
        for r in [1u64, 2, 0xFFFF_FFFF, 3_037_000_499] {
            assert_eq!(isqrt(r * r), r);
            assert_eq!(isqrt(r * r - 1), r - 1);
        }
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
        assert!((rss.to_num::<f64>() - 201.246).abs() < 0.01, "{rss}");
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
