//! The fast path for plain decimal cells: read straight from their bytes, bit for bit what
//! `str::parse::<f64>` gives (see [`plain_decimal`]).

/// Powers of ten exact in f64 (5²² < 2⁵³).
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// The value of a cell written as a plain decimal, `[+-]?digits[.digits]` with no blanks, at
/// most 19 characters after the sign, the digits below 2⁵³ as an integer: bit for bit what `str::parse::<f64>` gives; `None` for anything else (the caller then takes
/// `str::parse`, which also gives the located error).
///
/// Exact because the digits form an integer m < 2⁵³ and the divisor 10ᵏ (k ≤ 22) is exact in
/// f64, so the one IEEE division rounds the true quotient m / 10ᵏ correctly, as `str::parse`
/// does [pub: Clinger, "How to read floating point numbers accurately", PLDI 1990]. The sign
/// is applied after, so `-0` is −0.0 as in `str::parse`.
#[inline]
pub fn plain_decimal(cell: &[u8]) -> Option<f64> {
    plain_decimal_with::<b'.'>(cell)
}

/// [`plain_decimal`] with a decimal comma (`-12,345`): the same bits as `str::parse::<f64>`
/// of the text with its comma replaced by a point; `None` for anything else (a point
/// included).
#[inline]
pub fn plain_decimal_comma(cell: &[u8]) -> Option<f64> {
    plain_decimal_with::<b','>(cell)
}

#[inline(always)]
fn plain_decimal_with<const MARK: u8>(cell: &[u8]) -> Option<f64> {
    let (negative, body) = match cell.split_first()? {
        (b'-', rest) => (true, rest),
        (b'+', rest) => (false, rest),
        _ => (false, cell),
    };
    // At most 19 characters, so at most 19 digits: below 10¹⁹ < 2⁶⁴, no overflow below.
    if body.len() > 19 {
        return None;
    }
    let mut mantissa: u64 = 0;
    let mut point: Option<usize> = None;
    for (i, &b) in body.iter().enumerate() {
        let digit = b.wrapping_sub(b'0');
        if digit <= 9 {
            mantissa = mantissa * 10 + u64::from(digit);
        } else if b == MARK && point.is_none() {
            point = Some(i);
        } else {
            return None;
        }
    }
    let fraction_digits = match point {
        // `str::parse` also takes `1.` and `.5`, but not `.` nor an empty string: cells with
        // an empty part are left to it, which keeps this grammar a strict subset of its.
        Some(0) => return None,
        Some(at) if at + 1 == body.len() => return None,
        Some(at) => body.len() - at - 1,
        None if body.is_empty() => return None,
        None => 0,
    };
    if mantissa >= 1 << 53 {
        return None;
    }
    let divisor = *POW10.get(fraction_digits)?;
    // mantissa < 2⁵³: exact as f64.
    #[allow(clippy::cast_precision_loss)]
    let m = mantissa as f64;
    let v = m / divisor;
    Some(if negative { -v } else { v })
}
