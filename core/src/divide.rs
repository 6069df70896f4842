//! Division by a divisor fixed when the configuration is built, by a multiply.
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

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    proptest! {
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
