//! Maths with the same bits on every machine. The platform's `ln`, `exp`, `sin` … come from
//! its C library, which differs between systems in the last bit; the simulator calls the
//! `libm` crate's instead (one Rust implementation everywhere), and takes integer powers from
//! [`powi`] rather than `f64::powi`, whose precision Rust leaves unspecified.

/// x to the integer power n by square-and-multiply: the same sequence of roundings as the
/// compiler runtime's `__powidf2` (so the values `f64::powi` gives on the usual targets), but
/// fixed here whatever the target or optimiser does.
pub fn powi(x: f64, n: i32) -> f64 {
    let mut base = x;
    let mut e = n.unsigned_abs();
    let mut r = 1.0;
    loop {
        if e & 1 == 1 {
            r *= base;
        }
        e /= 2;
        if e == 0 {
            break;
        }
        base *= base;
    }
    if n < 0 { 1.0 / r } else { r }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::float_cmp)]
    use super::*;

    #[test]
    fn integer_powers() {
        // [calc] exact small powers (every product below is exact in f64).
        assert_eq!(powi(3.0, 0), 1.0);
        assert_eq!(powi(3.0, 1), 3.0);
        assert_eq!(powi(3.0, 5), 243.0);
        assert_eq!(powi(-2.0, 3), -8.0);
        assert_eq!(powi(2.0, -3), 0.125);
        assert_eq!(powi(0.5, 10), 1.0 / 1024.0);
    }

    #[test]
    fn same_bits_as_the_compiler_runtime_here() {
        // [practice] `f64::powi` lowers to `__powidf2` on the host; with an exponent the
        // optimiser cannot see, the two give the same bits.
        let exps = std::hint::black_box([0, 1, 2, 3, 4, 7, 23, -1, -2, -5]);
        for x in [0.52, 0.68, 1.000_000_1, 2.5, -1.5, 1e-3] {
            for &k in &exps {
                assert_eq!(powi(x, k).to_bits(), x.powi(k).to_bits(), "{x}^{k}");
            }
        }
    }
}
