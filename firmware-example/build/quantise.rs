//! f64 → fixed-point raw bits, rounding to nearest with ties to even: the rule of the `fixed`
//! crate's `checked_from_num`, which the core's `from_f64` uses. Shared by `build.rs` (so the
//! build script needs no `fixed` of its own) and the crate's tests, which check it against
//! `fixed` itself.

/// The raw bits of `value` in a signed 32-bit format with `frac_bits` fractional bits, or
/// `None` when `value` is not finite or does not fit.
pub fn to_bits(value: f64, frac_bits: u32) -> Option<i32> {
    if !value.is_finite() || frac_bits > 31 {
        return None;
    }
    // Scaling by a power of two is exact in f64, so the only rounding is the one below.
    let scaled = (value * f64::from(1u32 << frac_bits)).round_ties_even();
    if scaled < f64::from(i32::MIN) || scaled > f64::from(i32::MAX) {
        return None;
    }
    // In range and integral after the checks above, so the conversion is exact.
    #[allow(clippy::cast_possible_truncation)]
    Some(scaled as i32)
}
