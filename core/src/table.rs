//! Fixed-point lookup tables: 1-D linear and 2-D bilinear interpolation, clamped ends.
//!
//! Breakpoints are validated strictly increasing when the table is built, so a lookup can never
//! divide by zero or walk off the end. Tables are `const`-constructible: a firmware keeps them in
//! flash as `const` items (the simulator's table emitter writes exactly that).
//!
//! Interpolation runs in 64-bit integers on the raw bits: the position inside a segment is a
//! Q0.31 fraction, and each linear step rounds to nearest, so a 1-D lookup is within ½ LSB of the
//! exact linear interpolant of the stored values, and a 2-D lookup within 1 LSB. A lookup at a
//! breakpoint returns the stored value exactly.
//!
//! ```
//! use clampwise_core::table::Table1;
//! use clampwise_core::units::{Celsius, Ratio};
//! use fixed::types::extra::{U16, U30};
//!
//! // μ against lining temperature, kept in flash.
//! const MU_VS_TEMP: Table1<U16, U30, 3> = match Table1::new(
//!     [Celsius::lit("0"), Celsius::lit("200"), Celsius::lit("400")],
//!     [Ratio::lit("0.40"), Ratio::lit("0.38"), Ratio::lit("0.30")],
//! ) {
//!     Ok(t) => t,
//!     Err(_) => panic!("breakpoints must increase"), // evaluated at compile time only
//! };
//!
//! let hot = MU_VS_TEMP.lookup(Celsius::lit("300"));
//! assert_eq!(hot.value, Ratio::lit("0.34"));
//! assert!(!hot.clamped);
//! assert!(MU_VS_TEMP.lookup(Celsius::lit("900")).clamped);
//! ```

use core::fmt;

use fixed::FixedI32;
use fixed::types::extra::LeEqU32;

/// The result of a table lookup: the value and whether an input lay outside the breakpoints
/// (the value is then the clamped end value, not an extrapolation).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Lookup<T> {
    /// Interpolated (or clamped) value.
    pub value: T,
    /// True when an input was below the first or above the last breakpoint.
    pub clamped: bool,
}

/// Which axis of a table an error refers to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Axis {
    /// The first (or only) input axis.
    X,
    /// The second input axis of a 2-D table.
    Y,
}

/// Why a table could not be built.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum TableError {
    /// An axis has no breakpoints.
    Empty {
        /// The axis concerned.
        axis: Axis,
    },
    /// Breakpoint `index` is not greater than the one before it.
    NotIncreasing {
        /// The axis concerned.
        axis: Axis,
        /// Index of the offending breakpoint.
        index: usize,
    },
    /// A value given as a float is NaN, infinite or outside the Q format's range.
    NotRepresentable {
        /// The axis, or `None` for the table's values.
        axis: Option<Axis>,
        /// Index of the offending entry (row-major for 2-D values).
        index: usize,
    },
}

impl fmt::Display for TableError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Empty { axis } => write!(f, "table axis {axis:?} has no breakpoints"),
            Self::NotIncreasing { axis, index } => write!(
                f,
                "table axis {axis:?}: breakpoint {index} is not greater than breakpoint {}",
                index.saturating_sub(1)
            ),
            Self::NotRepresentable {
                axis: Some(axis),
                index,
            } => write!(
                f,
                "table axis {axis:?}: breakpoint {index} is not finite or is out of range"
            ),
            Self::NotRepresentable { axis: None, index } => {
                write!(f, "table value {index} is not finite or is out of range")
            }
        }
    }
}

impl core::error::Error for TableError {}

/// Check an axis at compile time or start-up: non-empty and strictly increasing.
const fn validate_axis<F: LeEqU32>(axis: Axis, x: &[FixedI32<F>]) -> Result<(), TableError> {
    if x.is_empty() {
        return Err(TableError::Empty { axis });
    }
    // Slice patterns rather than indexing: const-evaluable and panic-free.
    let mut rest = x;
    let mut index = 1;
    while let [previous, next, ..] = rest {
        if next.to_bits() <= previous.to_bits() {
            return Err(TableError::NotIncreasing { axis, index });
        }
        rest = match rest {
            [_, tail @ ..] => tail,
            [] => break,
        };
        index += 1;
    }
    Ok(())
}

/// Where an input falls on an axis: the lower breakpoint index, the upper one, and the
/// fraction between them as Q0.31 (0 ..= 2³¹).
#[derive(Clone, Copy, Debug)]
struct Position {
    lo: usize,
    hi: usize,
    frac_q31: i64,
    clamped: bool,
}

const ONE_Q31: i64 = 1 << 31;

fn locate<F: LeEqU32>(axis: &[FixedI32<F>], x: FixedI32<F>) -> Position {
    let x = i64::from(x.to_bits());
    let last = axis.len().saturating_sub(1);
    let bits = |i: usize| axis.get(i).map_or(0, |v| i64::from(v.to_bits()));
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
    // bits(0) < x < bits(last): a segment with x0 <= x < x1 exists. Linear scan: tables are
    // short (tens of breakpoints) and the loop is bounded by the const length.
    let lo = axis
        .windows(2)
        .position(|w| match w {
            [_, x1] => x < i64::from(x1.to_bits()),
            _ => false,
        })
        .unwrap_or(0);
    let hi = lo.saturating_add(1);
    let (x0, x1) = (bits(lo), bits(hi));
    // 0 <= x − x0 < x1 − x0 < 2³², so the shifted numerator stays below 2⁶³.
    // Saturating and checked forms are exact here; they only make the absence of overflow and
    // division panics visible to the compiler (the firmware's link-time panic check).
    let span = x1.saturating_sub(x0).max(1);
    let frac_q31 = x
        .saturating_sub(x0)
        .saturating_mul(ONE_Q31)
        .checked_div(span)
        .unwrap_or(0);
    Position {
        lo,
        hi,
        frac_q31,
        clamped: false,
    }
}

/// Round-to-nearest linear step between two raw values: a + (b − a)·t, t in Q0.31.
fn lerp_bits(a: i64, b: i64, frac_q31: i64) -> i64 {
    // |b − a| < 2³² and t <= 2³¹, so the product stays below 2⁶³.
    let step = b
        .saturating_sub(a)
        .saturating_mul(frac_q31)
        .saturating_add(ONE_Q31 >> 1)
        >> 31;
    a.saturating_add(step)
}

/// Narrow an interpolated value back to 32 bits. It lies between two stored i32 values, so this
/// never saturates in practice; saturating keeps it panic-free by construction.
fn narrow(v: i64) -> i32 {
    i32::try_from(v).unwrap_or(if v < 0 { i32::MIN } else { i32::MAX })
}

fn to_fixed_checked<F: LeEqU32>(v: f64) -> Option<FixedI32<F>> {
    if v.is_finite() {
        FixedI32::<F>::checked_from_num(v)
    } else {
        None
    }
}

/// A 1-D table y(x) with `N` breakpoints, linear between them, clamped at the ends.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Table1<XF: LeEqU32, YF: LeEqU32, const N: usize> {
    x: [FixedI32<XF>; N],
    y: [FixedI32<YF>; N],
}

impl<XF: LeEqU32, YF: LeEqU32, const N: usize> Table1<XF, YF, N> {
    /// Build a table from breakpoints `x` (strictly increasing) and values `y`.
    ///
    /// # Errors
    /// [`TableError::Empty`] for `N == 0`, [`TableError::NotIncreasing`] naming the first
    /// breakpoint that is not above its predecessor.
    pub const fn new(x: [FixedI32<XF>; N], y: [FixedI32<YF>; N]) -> Result<Self, TableError> {
        match validate_axis(Axis::X, &x) {
            Ok(()) => Ok(Self { x, y }),
            Err(e) => Err(e),
        }
    }

    /// Build a table from f64 breakpoints and values (host, build script or start-up; never the
    /// per-sample path). Values are rounded to the nearest representable fixed-point number.
    ///
    /// # Errors
    /// [`TableError::NotRepresentable`] for NaN, infinite or out-of-range entries, then as
    /// [`Table1::new`].
    pub fn from_f64(x: &[f64; N], y: &[f64; N]) -> Result<Self, TableError> {
        let mut xs = [FixedI32::<XF>::ZERO; N];
        let mut ys = [FixedI32::<YF>::ZERO; N];
        for (index, ((xo, yo), (&xi, &yi))) in xs
            .iter_mut()
            .zip(ys.iter_mut())
            .zip(x.iter().zip(y.iter()))
            .enumerate()
        {
            *xo = to_fixed_checked(xi).ok_or(TableError::NotRepresentable {
                axis: Some(Axis::X),
                index,
            })?;
            *yo = to_fixed_checked(yi).ok_or(TableError::NotRepresentable { axis: None, index })?;
        }
        Self::new(xs, ys)
    }

    /// The breakpoints.
    pub const fn breakpoints(&self) -> &[FixedI32<XF>; N] {
        &self.x
    }

    /// The values at the breakpoints.
    pub const fn values(&self) -> &[FixedI32<YF>; N] {
        &self.y
    }

    /// Interpolate at `x`; outside the breakpoints the end value is returned and flagged.
    pub fn lookup(&self, x: FixedI32<XF>) -> Lookup<FixedI32<YF>> {
        let p = locate(&self.x, x);
        let y = |i: usize| self.y.get(i).map_or(0, |v| i64::from(v.to_bits()));
        let bits = lerp_bits(y(p.lo), y(p.hi), p.frac_q31);
        Lookup {
            value: FixedI32::from_bits(narrow(bits)),
            clamped: p.clamped,
        }
    }
}

/// A 2-D table z(x, y) on an `NX` × `NY` grid, bilinear between breakpoints, clamped at the
/// edges. `z[i][j]` is the value at `(x[i], y[j])`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Table2<XF: LeEqU32, YF: LeEqU32, ZF: LeEqU32, const NX: usize, const NY: usize> {
    x: [FixedI32<XF>; NX],
    y: [FixedI32<YF>; NY],
    z: [[FixedI32<ZF>; NY]; NX],
}

impl<XF: LeEqU32, YF: LeEqU32, ZF: LeEqU32, const NX: usize, const NY: usize>
    Table2<XF, YF, ZF, NX, NY>
{
    /// Build a table from breakpoints `x`, `y` (each strictly increasing) and the grid `z`.
    ///
    /// # Errors
    /// [`TableError::Empty`] or [`TableError::NotIncreasing`] naming the axis and breakpoint.
    pub const fn new(
        x: [FixedI32<XF>; NX],
        y: [FixedI32<YF>; NY],
        z: [[FixedI32<ZF>; NY]; NX],
    ) -> Result<Self, TableError> {
        if let Err(e) = validate_axis(Axis::X, &x) {
            return Err(e);
        }
        match validate_axis(Axis::Y, &y) {
            Ok(()) => Ok(Self { x, y, z }),
            Err(e) => Err(e),
        }
    }

    /// Build a table from f64 breakpoints and grid values (never the per-sample path).
    ///
    /// # Errors
    /// [`TableError::NotRepresentable`] for NaN, infinite or out-of-range entries (values are
    /// indexed row-major, `i * NY + j`), then as [`Table2::new`].
    pub fn from_f64(x: &[f64; NX], y: &[f64; NY], z: &[[f64; NY]; NX]) -> Result<Self, TableError> {
        let mut xs = [FixedI32::<XF>::ZERO; NX];
        let mut ys = [FixedI32::<YF>::ZERO; NY];
        let mut zs = [[FixedI32::<ZF>::ZERO; NY]; NX];
        for (index, (o, &v)) in xs.iter_mut().zip(x.iter()).enumerate() {
            *o = to_fixed_checked(v).ok_or(TableError::NotRepresentable {
                axis: Some(Axis::X),
                index,
            })?;
        }
        for (index, (o, &v)) in ys.iter_mut().zip(y.iter()).enumerate() {
            *o = to_fixed_checked(v).ok_or(TableError::NotRepresentable {
                axis: Some(Axis::Y),
                index,
            })?;
        }
        let cells = zs
            .iter_mut()
            .flat_map(|r| r.iter_mut())
            .zip(z.iter().flat_map(|r| r.iter()));
        for (index, (o, &v)) in cells.enumerate() {
            *o = to_fixed_checked(v).ok_or(TableError::NotRepresentable { axis: None, index })?;
        }
        Self::new(xs, ys, zs)
    }

    /// The breakpoints of the first axis.
    pub const fn x_breakpoints(&self) -> &[FixedI32<XF>; NX] {
        &self.x
    }

    /// The breakpoints of the second axis.
    pub const fn y_breakpoints(&self) -> &[FixedI32<YF>; NY] {
        &self.y
    }

    /// The grid values, `values()[i][j]` at `(x[i], y[j])`.
    pub const fn values(&self) -> &[[FixedI32<ZF>; NY]; NX] {
        &self.z
    }

    /// Interpolate at `(x, y)`; outside the grid the edge value is returned and flagged.
    pub fn lookup(&self, x: FixedI32<XF>, y: FixedI32<YF>) -> Lookup<FixedI32<ZF>> {
        let px = locate(&self.x, x);
        let py = locate(&self.y, y);
        let z = |i: usize, j: usize| {
            self.z
                .get(i)
                .and_then(|row| row.get(j))
                .map_or(0, |v| i64::from(v.to_bits()))
        };
        let along_y = |i: usize| lerp_bits(z(i, py.lo), z(i, py.hi), py.frac_q31);
        let bits = lerp_bits(along_y(px.lo), along_y(px.hi), px.frac_q31);
        Lookup {
            value: FixedI32::from_bits(narrow(bits)),
            clamped: px.clamped || py.clamped,
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::indexing_slicing)]
mod tests {
    use super::*;
    use fixed::types::extra::{U8, U16, U24};
    use proptest::prelude::*;

    type T1 = Table1<U16, U24, 4>;
    type T2 = Table2<U8, U16, U24, 3, 2>;

    fn t1() -> T1 {
        T1::from_f64(&[0.0, 10.0, 20.0, 50.0], &[1.0, 2.0, -3.0, 4.0]).unwrap()
    }

    #[test]
    fn breakpoints_are_reproduced_exactly() {
        let t = t1();
        for (x, y) in t.breakpoints().iter().zip(t.values()) {
            let l = t.lookup(*x);
            assert_eq!(l.value, *y);
            assert!(!l.clamped);
        }
    }

    #[test]
    fn ends_are_clamped_and_flagged() {
        let t = t1();
        let lo = t.lookup(FixedI32::from_num(-1));
        assert_eq!((lo.value, lo.clamped), (FixedI32::<U24>::from_num(1), true));
        let hi = t.lookup(FixedI32::from_num(51));
        assert_eq!((hi.value, hi.clamped), (FixedI32::<U24>::from_num(4), true));
        let extreme = t.lookup(FixedI32::MIN);
        assert!(extreme.clamped);
        assert_eq!(t.lookup(FixedI32::MAX).value, FixedI32::<U24>::from_num(4));
    }

    #[test]
    fn rejects_non_increasing_and_non_finite() {
        let e = T1::from_f64(&[0.0, 1.0, 1.0, 2.0], &[0.0; 4]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotIncreasing {
                axis: Axis::X,
                index: 2
            }
        );
        let e = T1::from_f64(&[0.0, 1.0, f64::NAN, 2.0], &[0.0; 4]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotRepresentable {
                axis: Some(Axis::X),
                index: 2
            }
        );
        let e = T1::from_f64(&[0.0, 1.0, 2.0, 3.0], &[0.0, 1e300, 0.0, 0.0]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotRepresentable {
                axis: None,
                index: 1
            }
        );
        let e = T2::from_f64(&[0.0, 1.0, 2.0], &[5.0, 4.0], &[[0.0; 2]; 3]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotIncreasing {
                axis: Axis::Y,
                index: 1
            }
        );
        assert_eq!(
            Table1::<U16, U16, 0>::new([], []).unwrap_err(),
            TableError::Empty { axis: Axis::X }
        );
    }

    #[test]
    fn single_breakpoint_is_a_constant() {
        let t = Table1::<U16, U16, 1>::from_f64(&[3.0], &[7.5]).unwrap();
        assert_eq!(
            t.lookup(FixedI32::from_num(3)).value,
            FixedI32::<U16>::from_num(7.5)
        );
        assert!(t.lookup(FixedI32::from_num(4)).clamped);
    }

    #[test]
    fn bilinear_matches_hand_value() {
        // z = x + 10·y on the grid is reproduced exactly inside a cell (bilinear is exact for
        // functions linear in each variable).
        let t = T2::from_f64(
            &[0.0, 1.0, 3.0],
            &[0.0, 2.0],
            &[[0.0, 20.0], [1.0, 21.0], [3.0, 23.0]],
        )
        .unwrap();
        let l = t.lookup(FixedI32::from_num(2), FixedI32::from_num(0.5));
        assert_eq!(l.value, FixedI32::<U24>::from_num(7));
        assert!(!l.clamped);
        assert!(
            t.lookup(FixedI32::from_num(2), FixedI32::from_num(2.5))
                .clamped
        );
    }

    proptest! {
        // Against the f64 linear interpolant of the stored values: within ½ LSB plus the
        // rounding of the Q0.31 fraction.
        #[test]
        fn interpolation_matches_f64(x in -10.0f64..60.0) {
            let t = t1();
            let xs: [f64; 4] = t.breakpoints().map(|v| v.to_num());
            let ys: [f64; 4] = t.values().map(|v| v.to_num());
            let xq = FixedI32::<U16>::from_num(x);
            let xf: f64 = xq.to_num();
            let expected = if xf <= xs[0] { ys[0] } else if xf >= xs[3] { ys[3] } else {
                let i = xs.windows(2).position(|w| xf < w[1]).unwrap();
                ys[i] + (ys[i + 1] - ys[i]) * (xf - xs[i]) / (xs[i + 1] - xs[i])
            };
            let got: f64 = t.lookup(xq).value.to_num();
            let lsb = 1.0 / f64::from(1u32 << 24);
            prop_assert!((got - expected).abs() <= 0.5 * lsb + 1e-9, "{got} vs {expected}");
        }

        #[test]
        fn lookup_never_leaves_value_range(bits in any::<i32>(), ybits in any::<i32>()) {
            let t = T2::from_f64(&[0.0, 1.0, 3.0], &[0.0, 2.0], &[[0.0, 20.0], [1.0, -21.0], [3.0, 23.0]])
                .unwrap();
            let v: f64 = t.lookup(FixedI32::from_bits(bits), FixedI32::from_bits(ybits)).value.to_num();
            prop_assert!((-21.0..=23.0).contains(&v));
        }
    }
}
