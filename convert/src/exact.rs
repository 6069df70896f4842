//! Exact conversions between f64 and the core's fixed-point types, by direct scaling.
//!
//! In: `saturating_from_num` as the `fixed` crate does it (round to nearest, ties to even; NaN
//! as 0). Out: `to_num::<f64>()` (exact for every I32-based type; an I64-based value is rounded
//! to nearest-even above 2⁵³). Both are bit-identical to the `fixed` crate's (property test
//! below), without its generic float decomposition.

use fixed::traits::Fixed;

/// The integer behind a fixed-point type, for the direct conversions below.
pub trait FixedBits: Copy {
    /// A rounded (integral) f64 to the integer, saturating, NaN → 0 (Rust's `as`).
    fn saturating_from_rounded(x: f64) -> Self;
    /// The integer as f64, rounded to nearest, ties to even (Rust's `as`; exact up to 2⁵³).
    fn to_f64(self) -> f64;
}

impl FixedBits for i32 {
    fn saturating_from_rounded(x: f64) -> Self {
        // Rust's float → int `as` saturates and maps NaN to 0: exactly the saturation wanted.
        #[allow(clippy::cast_possible_truncation)]
        let n = x as i32;
        n
    }
    fn to_f64(self) -> f64 {
        f64::from(self)
    }
}

impl FixedBits for i64 {
    fn saturating_from_rounded(x: f64) -> Self {
        // As for i32.
        #[allow(clippy::cast_possible_truncation)]
        let n = x as i64;
        n
    }
    fn to_f64(self) -> f64 {
        // Round to nearest, ties to even, as `to_num::<f64>` rounds a value of more than 53
        // significant bits.
        #[allow(clippy::cast_precision_loss)]
        let f = self as f64;
        f
    }
}

/// 2^FRAC_NBITS as f64, built from its exponent field (exact; FRAC_NBITS ≤ 128 for every
/// fixed type, far inside the normal exponent range).
fn scale<T: Fixed>() -> f64 {
    f64::from_bits((1023 + u64::from(T::FRAC_NBITS)) << 52)
}

/// `T::saturating_from_num(v)` with NaN taken as 0, by direct scaling: v · 2^F is exact (a
/// power-of-two scale; an overflow goes to ±∞ and saturates all the same), rounded to nearest
/// with ties to even as `from_num` rounds, then saturated to the integer's range. Bit-identical
/// to `saturating_from_num` (property test `direct_conversions_match_the_fixed_crate`), without
/// its generic float decomposition.
pub fn saturating_fixed<T>(v: f64) -> T
where
    T: Fixed,
    T::Bits: FixedBits,
{
    T::from_bits(T::Bits::saturating_from_rounded(
        (v * scale::<T>()).round_ties_even(),
    ))
}

/// `x.to_num::<f64>()` by direct scaling: the integer as f64 (exact for the 32-bit types,
/// rounded to nearest-even above 2⁵³ as `to_num` does) times 2^−F (exact). Bit-identical to
/// `to_num` (same property test).
pub fn fixed_to_f64<T>(x: T) -> f64
where
    T: Fixed,
    T::Bits: FixedBits,
{
    x.to_bits().to_f64() / scale::<T>()
}

#[cfg(test)]
mod tests {
    // Bit-exact comparisons are the point here.
    #![allow(clippy::unwrap_used, clippy::float_cmp)]
    use super::*;
    use clampwise_core::units::NewtonMetres;
    use fixed::types::I16F16;
    use proptest::prelude::*;

    /// The `fixed` crate's conversions: the reference the direct ones must match.
    fn via_crate<T: Fixed>(v: f64) -> T {
        T::saturating_from_num(if v.is_nan() { 0.0 } else { v })
    }

    fn same_both_ways<T>(v: f64) -> Result<(), TestCaseError>
    where
        T: Fixed,
        T::Bits: FixedBits + PartialEq + std::fmt::Debug,
    {
        let direct: T = saturating_fixed(v);
        prop_assert_eq!(
            direct.to_bits(),
            via_crate::<T>(v).to_bits(),
            "{} from {:e}",
            T::FRAC_NBITS,
            v
        );
        prop_assert_eq!(
            fixed_to_f64(direct).to_bits(),
            direct.to_num::<f64>().to_bits(),
            "{} to f64 of {:e}",
            T::FRAC_NBITS,
            v
        );
        Ok(())
    }

    /// Every fixed type the conversions meet (inputs and estimate fields), and the two I64-based
    /// ones of the core's units.
    fn all_types(v: f64) -> Result<(), TestCaseError> {
        same_both_ways::<I16F16>(v)?; // RadPerSec, Celsius, actuator command
        same_both_ways::<NewtonMetres>(v)?;
        same_both_ways::<clampwise_core::units::Newtons>(v)?;
        same_both_ways::<clampwise_core::units::Metres>(v)?;
        same_both_ways::<clampwise_core::units::Ratio>(v)?;
        same_both_ways::<clampwise_core::units::Watts>(v)?;
        same_both_ways::<clampwise_core::units::Joules>(v)?;
        Ok(())
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(20_000))]

        /// Direct scaling against `saturating_from_num` / `to_num`: any f64 bit pattern
        /// (NaN, ±∞, subnormals, huge), the ranges the traces use and well past them
        /// (saturation), and exact half-LSB ties (round to even).
        #[test]
        fn direct_conversions_match_the_fixed_crate(
            bits in any::<u64>(),
            wide in -1e15f64..1e15,
            near in -600_000.0f64..600_000.0,
            n in any::<i64>(),
            frac in prop::sample::select(vec![8u32, 12, 16, 24, 30, 32]),
        ) {
            all_types(f64::from_bits(bits))?;
            all_types(wide)?;
            all_types(near)?;
            // A tie between two steps of 2^−frac, and its neighbours.
            #[allow(clippy::cast_precision_loss)]
            let tie = ((n >> 12) as f64 + 0.5) / f64::from_bits((1023 + u64::from(frac)) << 52);
            all_types(tie)?;
            all_types(tie.next_up())?;
            all_types(tie.next_down())?;
        }
    }

    #[test]
    fn direct_conversions_at_the_edges() {
        for v in [
            0.0,
            -0.0,
            f64::NAN,
            -f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::MAX,
            f64::MIN,
            f64::MIN_POSITIVE,
            -f64::MIN_POSITIVE / 3.0,
            32_767.999_99,
            32_768.0,
            -32_768.0,
            -32_768.000_01,
            524_287.999_9,
            -524_288.000_1,
            0.5 / 65_536.0,
            1.5 / 65_536.0,
            -2.5 / 65_536.0,
        ] {
            all_types(v).unwrap();
        }
    }
}
