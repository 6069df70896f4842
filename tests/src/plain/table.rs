//! Plain table lookups: a 64-bit division per axis, every corner interpolated, saturating
//! arithmetic throughout. The definition the core's division-free lookups
//! ([`clampwise_core::table`]) must match bit for bit; written from the interpolation formula,
//! sharing no code with the core.

// Indices come from `locate`, bounded by the axis lengths; a panic in a test is a failure we
// want to see.
#![allow(clippy::indexing_slicing, clippy::unwrap_used)]

use fixed::FixedI32;
use fixed::types::extra::LeEqU32;

struct Position {
    lo: usize,
    hi: usize,
    frac_q31: i64,
    clamped: bool,
}

fn locate<F: LeEqU32>(axis: &[FixedI32<F>], x: FixedI32<F>) -> Position {
    let x = i64::from(x.to_bits());
    let last = axis.len() - 1;
    let bits = |i: usize| i64::from(axis[i].to_bits());
    if x <= bits(0) {
        return Position {
            lo: 0,
            hi: 0,
            frac_q31: 0,
            clamped: x < bits(0),
        };
    }
    if x >= bits(last) {
        return Position {
            lo: last,
            hi: last,
            frac_q31: 0,
            clamped: x > bits(last),
        };
    }
    let lo = axis
        .windows(2)
        .position(|w| x < i64::from(w[1].to_bits()))
        .unwrap();
    let (x0, x1) = (bits(lo), bits(lo + 1));
    Position {
        lo,
        hi: lo + 1,
        frac_q31: ((x - x0) << 31) / (x1 - x0),
        clamped: false,
    }
}

fn lerp(a: i64, b: i64, t: i64) -> i64 {
    a.saturating_add(
        b.saturating_sub(a)
            .saturating_mul(t)
            .saturating_add(1 << 30)
            >> 31,
    )
}

fn narrow(v: i64) -> i32 {
    i32::try_from(v).unwrap_or(if v < 0 { i32::MIN } else { i32::MAX })
}

/// 1-D lookup: (raw value, clamped).
pub fn lookup1<XF: LeEqU32, YF: LeEqU32>(
    x: &[FixedI32<XF>],
    y: &[FixedI32<YF>],
    at: FixedI32<XF>,
) -> (i32, bool) {
    let p = locate(x, at);
    let v = |i: usize| i64::from(y[i].to_bits());
    (narrow(lerp(v(p.lo), v(p.hi), p.frac_q31)), p.clamped)
}

/// 2-D lookup on a row-major grid: (raw value, clamped).
pub fn lookup2<XF: LeEqU32, YF: LeEqU32, ZF: LeEqU32, R: AsRef<[FixedI32<ZF>]>>(
    x: &[FixedI32<XF>],
    y: &[FixedI32<YF>],
    z: &[R],
    at_x: FixedI32<XF>,
    at_y: FixedI32<YF>,
) -> (i32, bool) {
    let px = locate(x, at_x);
    let py = locate(y, at_y);
    let v = |i: usize, j: usize| i64::from(z[i].as_ref()[j].to_bits());
    let along_y = |i: usize| lerp(v(i, py.lo), v(i, py.hi), py.frac_q31);
    (
        narrow(lerp(along_y(px.lo), along_y(px.hi), px.frac_q31)),
        px.clamped || py.clamped,
    )
}
