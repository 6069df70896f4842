//! The ± uncertainty of a torque (or capacity) from the tolerances of μ, F and r_e.
//!
//! T = n·k·μ·F·r_e is a product, so with relative errors δμ and δr and a force known to ±U_F
//! the true value lies within T·(1 + δμ)(1 + δr) + T_U·(1 + δμ)(1 + δr) of zero and no farther
//! from T than
//!
//! ```text
//! worst case:  ±[ T·(δμ + δr + δμ·δr) + T_U·(1 + δμ)(1 + δr) ]     T_U = n·k·μ·U_F·r_e
//! ```
//!
//! the exact bound of (1 + δμ)(1 + δF/F)(1 + δr) − 1 for the product's upper side (the lower
//! side, 1 − (1 − δμ)(1 − δF/F)(1 − δr), is never larger) \[calc\]. The force enters as the
//! torque its uncertainty carries, T_U, rather than as δF/F: no division, and the bound stays a
//! bound at zero force or when the force uncertainty exceeds the force itself (a released
//! brake whose clamp force could still be up to U_F carries up to T_U). The first-order sum
//! δμ + δF/F + δr under-bounds the upper side (at 20 %, 5 %, 1 %: 26.0 % against 27.3 %).
//!
//! Root-sum-square, √((T·δμ)² + T_U² + (T·δr)²), is the first-order law of propagation for
//! uncorrelated errors [pub: JCGM 100:2008 (GUM) §5.1.2]: a standard-uncertainty style
//! estimate, **not** a bound. The configuration chooses; the default is worst case, the
//! conservative reading for a brake.
//!
//! Arithmetic: every product rounded up, so a bound rounded stays a bound; the root rounded up,
//! at most 1.7·10⁻⁴ of itself above the exact root (`root_sum_square_up`). All in 32- and
//! 64-bit integers, saturating at the top of [`NewtonMetres`].

use crate::units::{NewtonMetres, Ratio};

/// How relative tolerances combine.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Combination {
    /// T·(δμ + δr + δμ·δr) + T_U·(1 + δμ)(1 + δr): a bound that holds whatever the
    /// correlation.
    #[default]
    WorstCase,
    /// √((T·δμ)² + T_U² + (T·δr)²): a standard-uncertainty style estimate for independent
    /// errors; not a bound.
    RootSumSquare,
}

/// Largest torque bits (|i32|) and largest factor (Q30, 8 − 2⁻³⁰) the products take: the
/// product of the two stays below 2⁶⁴, one plain 64-bit multiply (no overflow test, which on
/// ARMv6-M is a 128-bit product); a bound that large saturates the torque format anyway.
const T_MAX: u64 = 1 << 31;
const Q_MAX: u64 = (1 << 33) - 1;

/// ⌈x·q / 2³⁰⌉ for a torque `x` (Q12 bits) and a Q30 factor `q`, both capped as above.
fn times_q30_up(x: u64, q: u64) -> u64 {
    (x.min(T_MAX) * q.min(Q_MAX) + ((1 << 30) - 1)) >> 30
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
/// multiply, no divider) the whole uncertainty costs under 200 instructions besides the δF/F
/// division, where the root of a 64-bit sum alone would cost about 1 100; the same value comes
/// out on every target.
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

/// ± uncertainty (N·m) of `magnitude` (a torque or capacity, N·m) whose force is known to
/// within the torque `force_term` (N·m: n·k·μ·U_F·r_e, or for a released contact the torque
/// at the force's upper bound), and whose μ may also lie anywhere within the torque
/// `model_term` (N·m: the span of the static-to-kinetic blend near zero slip, n·k·|μ_blend −
/// μ_k|·F·r_e), which is added like the force term.
pub(crate) fn torque_uncertainty(
    magnitude: NewtonMetres,
    force_term: NewtonMetres,
    model_term: NewtonMetres,
    mu_tolerance: Ratio,
    radius_tolerance: Ratio,
    combination: Combination,
) -> NewtonMetres {
    // Q30 tolerances, each in [0, 2³¹]; torques in Q12 bits, each in [0, 2³¹].
    let dmu = u64::from(mu_tolerance.to_bits().unsigned_abs());
    let dr = u64::from(radius_tolerance.to_bits().unsigned_abs());
    let t = u64::from(magnitude.to_bits().unsigned_abs());
    let tu = u64::from(force_term.to_bits().unsigned_abs())
        .saturating_add(u64::from(model_term.to_bits().unsigned_abs()));
    let bits = match combination {
        Combination::WorstCase => {
            // δμ + δr + δμ·δr below 2³⁴; (1 + δμ)(1 + δr) = 1 + that.
            let cross = dmu + dr + times_q30_up(dmu, dr);
            times_q30_up(t, cross).saturating_add(times_q30_up(tu, (1 << 30) + cross))
        }
        Combination::RootSumSquare => {
            let narrow = |v: u64| u32::try_from(v).unwrap_or(u32::MAX);
            root_sum_square_up(
                narrow(times_q30_up(t, dmu)),
                narrow(tu),
                narrow(times_q30_up(t, dr)),
            )
        }
    };
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
        // [calc] T = 1000 N·m, δμ = 20 %, δF/F = 200 N / 10 kN = 2 % (T_U = 20 N·m), δr = 1 %:
        // worst case (1.2)(1.02)(1.01) − 1 = 23.624 % → 236.24 N·m;
        // RSS √(200² + 20² + 10²) = 201.246 N·m.
        let t = NewtonMetres::from_num(1000);
        let tu = NewtonMetres::from_num(20);
        let (dmu, dr) = (Ratio::from_num(0.20), Ratio::from_num(0.01));
        let wc = torque_uncertainty(t, tu, NewtonMetres::ZERO, dmu, dr, Combination::WorstCase);
        // Each product rounded up: at most 3 LSB (0.75 mN·m) above.
        let excess = wc.to_num::<f64>() - 236.24;
        assert!((-0.001..0.002).contains(&excess), "{wc}");
        let rss = torque_uncertainty(
            t,
            tu,
            NewtonMetres::ZERO,
            dmu,
            dr,
            Combination::RootSumSquare,
        );
        // The root is rounded up (at most 1.7·10⁻⁴ of it, 0.034 N·m here).
        let excess = rss.to_num::<f64>() - 201.246;
        assert!((-0.001..0.035).contains(&excess), "{rss}");
    }

    #[test]
    fn worst_case_is_the_exact_product_bound() {
        // [calc] δμ = 20 %, δF/F = 5 %, δr = 1 %: (1.2)(1.05)(1.01) − 1 = 27.26 %, where the
        // first-order sum gives 26 %.
        let t = NewtonMetres::from_num(10_000);
        let u = torque_uncertainty(
            t,
            NewtonMetres::from_num(500),
            NewtonMetres::ZERO,
            Ratio::from_num(0.20),
            Ratio::from_num(0.01),
            Combination::WorstCase,
        );
        assert!((u.to_num::<f64>() - 2726.0).abs() < 0.01, "{u}");
    }

    proptest! {
        // [calc] the bound against the product formed in f64: T_true = T·(1 ± δμ)(1 ± δF/F)
        // (1 ± δr) at every corner lies within T ± U.
        #[test]
        fn worst_case_covers_every_corner(
            t in 0i32..(1 << 30),
            rel_f in 0.0f64..3.0,
            dmu in 0.0f64..1.0,
            dr in 0.0f64..0.5,
        ) {
            let tq = NewtonMetres::from_bits(t);
            let tf = tq.to_num::<f64>();
            let tu = NewtonMetres::saturating_from_num(tf * rel_f);
            let bound = torque_uncertainty(
                tq, tu, NewtonMetres::ZERO, Ratio::from_num(dmu), Ratio::from_num(dr), Combination::WorstCase,
            );
            let u = bound.to_num::<f64>();
            let (dmu, dr) = (Ratio::from_num(dmu).to_num::<f64>(), Ratio::from_num(dr).to_num::<f64>());
            let rel_f = if tf > 0.0 { tu.to_num::<f64>() / tf } else { 0.0 };
            // A bound beyond the torque format saturates at its top (and is then no tighter).
            let exact = tf * (dmu + dr + dmu * dr) + tu.to_num::<f64>() * (1.0 + dmu) * (1.0 + dr);
            if bound == NewtonMetres::MAX {
                prop_assert!(exact >= u - 1e-3, "{exact} saturated at {u}");
                return Ok(());
            }
            for sm in [-1.0, 1.0] {
                for sf in [-1.0, 1.0] {
                    for sr in [-1.0, 1.0] {
                        let truth = tf * (1.0 + sm * dmu) * (1.0 + sf * rel_f).max(0.0) * (1.0 + sr * dr);
                        prop_assert!((truth - tf).abs() <= u + 1e-6 * tf.max(1.0), "{truth} {tf} {u}");
                    }
                }
            }
        }
    }

    #[test]
    fn zero_force_gives_a_bound_from_the_force_term() {
        // A released brake: no torque reported, but the force could carry up to 10 N·m.
        let u = torque_uncertainty(
            NewtonMetres::ZERO,
            NewtonMetres::from_num(10),
            NewtonMetres::ZERO,
            Ratio::from_num(0.2),
            Ratio::ZERO,
            Combination::WorstCase,
        );
        assert!((u.to_num::<f64>() - 12.0).abs() < 0.001, "{u}");
    }

    #[test]
    fn extremes_saturate() {
        let u = torque_uncertainty(
            NewtonMetres::MAX,
            NewtonMetres::MAX,
            NewtonMetres::ZERO,
            Ratio::MAX,
            Ratio::MAX,
            Combination::WorstCase,
        );
        assert_eq!(u, NewtonMetres::MAX);
    }
}
