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
//! ## Cost
//!
//! No division at lookup time: each segment's span has a reciprocal and a shift fixed when the
//! table is built (5 bytes per breakpoint and axis), and the fraction ⌊(x − x₀)·2³¹ / (x₁ − x₀)⌋
//! is a multiply, a shift and one remainder correction — bit for bit the floor division (proof
//! at `fraction_q31`, checked by property tests against the division and, in clampwise-tests,
//! against a plain dividing implementation). The segment is a branch-free count over the axis (O(N), bounded).
//! A 2-D table whose rows are all equal (a radius table from geometry alone) is detected at
//! construction and skips its first axis except for the clamped flag. Measured with callgrind
//! on x86-64 (`benches/instructions.sh --hot`, bench device): the 3 × 3 radius lookup ~52
//! instructions; the friction update's two μ lookups on the 6 × 5 table (one temperature search
//! for both, [`Table2::lookup_with_first_y`]) about half of its ~200. On Cortex-M0 a lookup needs
//! one `__aeabi_lmul` per axis and per linear step, and no 64-bit division.
//!
//! ```
//! use clampwise_core::table::Table1;
//! use clampwise_core::units::{Celsius, Ratio};
//! use fixed::types::extra::{U16, U30};
//!
//! // μ against lining temperature, kept in flash.
//! const MU_VS_TEMP: Table1<U16, U30, 3> = match Table1::from_bits(
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

use crate::divide::{fraction_q31, segment_constants};
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
    /// An axis has more breakpoints than the table's capacity.
    TooLong {
        /// The axis concerned.
        axis: Axis,
        /// Breakpoints given.
        len: usize,
        /// The table's capacity on that axis.
        capacity: usize,
    },
    /// The grid of values does not match the breakpoints: `row` is `None` for the number of
    /// rows (one per first-axis breakpoint), else the row whose length differs from the
    /// second axis.
    GridShape {
        /// The row concerned, or `None` for the row count.
        row: Option<usize>,
        /// Rows, or values in the row, given.
        len: usize,
        /// Rows, or values per row, expected.
        expected: usize,
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
            Self::TooLong {
                axis,
                len,
                capacity,
            } => write!(
                f,
                "table axis {axis:?} has {len} breakpoints, more than its capacity of {capacity}"
            ),
            Self::GridShape {
                row: None,
                len,
                expected,
            } => write!(
                f,
                "table has {len} rows of values for {expected} first-axis breakpoints"
            ),
            Self::GridShape {
                row: Some(row),
                len,
                expected,
            } => write!(
                f,
                "table row {row} has {len} values for {expected} second-axis breakpoints"
            ),
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

/// Per-segment division constants of one axis, fixed when the table is built, so a lookup
/// multiplies instead of dividing (on Cortex-M0 a 64-bit division is a library call of several
/// hundred instructions).
///
/// For segment `i` with span `d = x[i+1] − x[i]` (1 ≤ d < 2³², raw bits) and `L = ⌊log₂ d⌋`:
/// `recip[i] = ⌊(2^(32+L) − 1) / d⌋` (below 2³² because d ≥ 2^L) and `shift[i] = L + 1`. The
/// last entry of each array is unused (an axis of N breakpoints has N − 1 segments; stable Rust
/// cannot size an array `N − 1`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
struct Divisors<const N: usize> {
    recip: [u32; N],
    shift: [u8; N],
}

impl<const N: usize> Divisors<N> {
    /// Constants of a validated (strictly increasing) axis.
    const fn of<F: LeEqU32>(x: &[FixedI32<F>; N]) -> Self {
        Self::of_prefix(x, N)
    }

    /// Constants of the first `len` (≤ N) breakpoints of a validated axis; the rest stay 0.
    const fn of_prefix<F: LeEqU32>(x: &[FixedI32<F>; N], len: usize) -> Self {
        let mut recip = [0u32; N];
        let mut shift = [0u8; N];
        let mut i = 0;
        while i + 1 < len && i + 1 < N {
            // i + 1 < N by the loop bound; `get` is not usable in a const fn.
            #[allow(clippy::indexing_slicing)]
            let (x0, x1) = (x[i].to_bits(), x[i + 1].to_bits());
            // x1 > x0 (validated), so 1 ≤ x1 − x0 ≤ 2³² − 1: exact in u32 as a wrapping
            // difference.
            #[allow(clippy::cast_sign_loss)]
            let (m, s) = segment_constants(x1.wrapping_sub(x0) as u32);
            #[allow(clippy::indexing_slicing)]
            {
                recip[i] = m;
                shift[i] = s;
            }
            i += 1;
        }
        Self { recip, shift }
    }
}

/// Where an input falls on an axis: the segment (lower breakpoint index; 0 on a one-point
/// axis) and the fraction towards its upper breakpoint as Q0.31 (0 ..= 2³¹). An input beyond
/// the last breakpoint is placed at fraction 2³¹ of the last segment, which interpolates to the
/// last value exactly.
#[derive(Clone, Copy, Debug)]
struct Position {
    lo: usize,
    frac_q31: u32,
    clamped: bool,
}

const HALF_Q31: i64 = 1 << 30;

/// Raw bits of the first and last breakpoint (0 for an empty axis, which validation rejects).
#[inline]
fn ends<F: LeEqU32>(axis: &[FixedI32<F>]) -> (i32, i32) {
    let first = axis.first().map_or(0, |v| v.to_bits());
    let last = axis.last().map_or(0, |v| v.to_bits());
    (first, last)
}

#[inline]
fn locate<F: LeEqU32, const N: usize>(
    axis: &[FixedI32<F>],
    div: &Divisors<N>,
    x: FixedI32<F>,
) -> Position {
    let x = x.to_bits();
    let (first, last) = ends(axis);
    // Breakpoints increase, so first ≤ last and this is a clamp (`clamp` itself would carry an
    // assertion).
    let at = x.max(first).min(last);
    let clamped = at != x;
    // The segment: the number of inner breakpoints at or below the clamped input, so
    // 0 ..= len − 2. A branch-free count over a short axis, bounded by its capacity.
    let lo = axis
        .get(1..axis.len().saturating_sub(1))
        .map_or(0, |inner| {
            inner.iter().filter(|b| b.to_bits() <= at).count()
        });
    let frac_q31 = match (axis.get(lo..), div.recip.get(lo), div.shift.get(lo)) {
        (Some([x0, x1, ..]), Some(&recip), Some(&shift)) => {
            let x0 = x0.to_bits();
            // x0 ≤ at ≤ x1 and x0 < x1: both differences are exact in u32 as wrapping
            // differences of i32 bits.
            #[allow(clippy::cast_sign_loss)]
            let (r, d) = (
                at.wrapping_sub(x0) as u32,
                x1.to_bits().wrapping_sub(x0) as u32,
            );
            fraction_q31(r, d, recip, shift)
        }
        // A one-point axis: the value is the only one.
        _ => 0,
    };
    Position {
        lo,
        frac_q31,
        clamped,
    }
}

/// Whether an input lies outside an axis (below the first or above the last breakpoint).
#[inline]
fn outside<F: LeEqU32>(axis: &[FixedI32<F>], x: FixedI32<F>) -> bool {
    let (first, last) = ends(axis);
    let x = x.to_bits();
    x < first || x > last
}

/// Round-to-nearest linear step between two raw values: a + (b − a)·t, t in Q0.31 (≤ 2³¹).
#[inline]
fn lerp_bits(a: i64, b: i64, frac_q31: u32) -> i64 {
    // |b − a| ≤ 2³² − 1 (two i32 values) and t ≤ 2³¹: |(b − a)·t| + 2³⁰ < 2⁶³, so the wrapping
    // forms are exact (and a single multiply, not an overflow-checked one).
    let step = b
        .wrapping_sub(a)
        .wrapping_mul(i64::from(frac_q31))
        .wrapping_add(HALF_Q31)
        >> 31;
    a.wrapping_add(step)
}

/// Interpolate `values` at a position.
#[inline]
fn interpolate<F: LeEqU32>(values: &[FixedI32<F>], p: Position) -> i64 {
    match values.get(p.lo..) {
        Some([a, b, ..]) => lerp_bits(i64::from(a.to_bits()), i64::from(b.to_bits()), p.frac_q31),
        Some([a]) => i64::from(a.to_bits()),
        _ => 0,
    }
}

/// Narrow an interpolated value back to 32 bits: exact, because it lies between two stored
/// i32 values (the rounded step ⌊(b − a)·t/2³¹ + ½⌋ lies between 0 and b − a for 0 ≤ t ≤ 2³¹,
/// and a bilinear value between the two row values it interpolates).
#[inline]
fn narrow(v: i64) -> i32 {
    #[allow(clippy::cast_possible_truncation)]
    let bits = v as i32;
    bits
}

fn to_fixed_checked<F: LeEqU32>(v: f64) -> Option<FixedI32<F>> {
    if v.is_finite() {
        FixedI32::<F>::checked_from_num(v)
    } else {
        None
    }
}

/// A table entry given as f64 (rounded to nearest) or already as fixed-point bits.
trait TableEntry<F: LeEqU32> {
    fn to_fixed(&self) -> Option<FixedI32<F>>;
}

impl<F: LeEqU32> TableEntry<F> for f64 {
    fn to_fixed(&self) -> Option<FixedI32<F>> {
        to_fixed_checked(*self)
    }
}

impl<F: LeEqU32> TableEntry<F> for FixedI32<F> {
    fn to_fixed(&self) -> Option<FixedI32<F>> {
        Some(*self)
    }
}

/// Convert `given` into the front of `out`; a bad entry is named by `axis` (`None` for
/// values) and its index plus `first_index`.
fn convert_into<F: LeEqU32, E: TableEntry<F>>(
    out: &mut [FixedI32<F>],
    given: &[E],
    axis: Option<Axis>,
    first_index: usize,
) -> Result<(), TableError> {
    for (i, (o, v)) in out.iter_mut().zip(given).enumerate() {
        *o = v.to_fixed().ok_or(TableError::NotRepresentable {
            axis,
            index: first_index.saturating_add(i),
        })?;
    }
    Ok(())
}

/// A 1-D table y(x) with `N` breakpoints, linear between them, clamped at the ends.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Table1<XF: LeEqU32, YF: LeEqU32, const N: usize> {
    x: [FixedI32<XF>; N],
    y: [FixedI32<YF>; N],
    x_div: Divisors<N>,
}

impl<XF: LeEqU32, YF: LeEqU32, const N: usize> Table1<XF, YF, N> {
    /// Build a table from breakpoints `x` (strictly increasing) and values `y`.
    ///
    /// # Errors
    /// [`TableError::Empty`] for `N == 0`, [`TableError::NotIncreasing`] naming the first
    /// breakpoint that is not above its predecessor.
    pub const fn from_bits(x: [FixedI32<XF>; N], y: [FixedI32<YF>; N]) -> Result<Self, TableError> {
        match validate_axis(Axis::X, &x) {
            Ok(()) => Ok(Self {
                x_div: Divisors::of(&x),
                x,
                y,
            }),
            Err(e) => Err(e),
        }
    }

    /// Build a table from f64 breakpoints and values (host, build script or start-up; never the
    /// per-sample path). Values are rounded to the nearest representable fixed-point number.
    ///
    /// # Errors
    /// [`TableError::NotRepresentable`] for NaN, infinite or out-of-range entries, then as
    /// [`Table1::new`].
    pub fn new(x: &[f64; N], y: &[f64; N]) -> Result<Self, TableError> {
        let mut xs = [FixedI32::<XF>::ZERO; N];
        convert_into(&mut xs, x, Some(Axis::X), 0)?;
        let mut ys = [FixedI32::<YF>::ZERO; N];
        convert_into(&mut ys, y, None, 0)?;
        Self::from_bits(xs, ys)
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
    #[inline]
    pub fn lookup(&self, x: FixedI32<XF>) -> Lookup<FixedI32<YF>> {
        let p = locate(&self.x, &self.x_div, x);
        let bits = interpolate(&self.y, p);
        Lookup {
            value: FixedI32::from_bits(narrow(bits)),
            clamped: p.clamped,
        }
    }
}

/// A 2-D table z(x, y) on an `NX` × `NY` grid, bilinear between breakpoints, clamped at the
/// edges. `z[i][j]` is the value at `(x[i], y[j])`.
///
/// `NX` × `NY` is the table's capacity. A table built from arrays ([`Table2::from_bits`],
/// [`Table2::new`]) uses all of it; one built from slices ([`Table2::from_slices`],
/// [`Table2::from_bit_slices`]) uses the first `x.len()` × `y.len()` and holds zeros beyond. A
/// lookup, the accessors and equality see only the breakpoints in use, so a table of capacity 8
/// holding 6 breakpoints gives the same bits and the same clamped flags as the same 6
/// breakpoints in a table of capacity 6 (a host that reads table sizes at run time keeps one
/// capacity; a firmware keeps the exact size in flash).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Table2<XF: LeEqU32, YF: LeEqU32, ZF: LeEqU32, const NX: usize, const NY: usize> {
    x: [FixedI32<XF>; NX],
    y: [FixedI32<YF>; NY],
    z: [[FixedI32<ZF>; NY]; NX],
    x_div: Divisors<NX>,
    y_div: Divisors<NY>,
    /// Breakpoints in use on each axis (1 ..= capacity).
    x_len: usize,
    y_len: usize,
    /// Every row equals the first: z does not depend on x (a geometric radius table), so a
    /// lookup only compares x with the ends for the clamped flag.
    x_flat: bool,
}

impl<XF: LeEqU32, YF: LeEqU32, ZF: LeEqU32, const NX: usize, const NY: usize>
    Table2<XF, YF, ZF, NX, NY>
{
    /// Build a table from breakpoints `x`, `y` (each strictly increasing) and the grid `z`,
    /// using the whole capacity.
    ///
    /// # Errors
    /// [`TableError::Empty`] or [`TableError::NotIncreasing`] naming the axis and breakpoint.
    pub const fn from_bits(
        x: [FixedI32<XF>; NX],
        y: [FixedI32<YF>; NY],
        z: [[FixedI32<ZF>; NY]; NX],
    ) -> Result<Self, TableError> {
        Self::from_prefix(x, y, z, NX, NY)
    }

    /// The table of the first `x_len` × `y_len` breakpoints; entries beyond must be zero (the
    /// callers guarantee it, so equality compares only what is in use).
    const fn from_prefix(
        x: [FixedI32<XF>; NX],
        y: [FixedI32<YF>; NY],
        z: [[FixedI32<ZF>; NY]; NX],
        x_len: usize,
        y_len: usize,
    ) -> Result<Self, TableError> {
        if x_len > NX {
            return Err(TableError::TooLong {
                axis: Axis::X,
                len: x_len,
                capacity: NX,
            });
        }
        if y_len > NY {
            return Err(TableError::TooLong {
                axis: Axis::Y,
                len: y_len,
                capacity: NY,
            });
        }
        if let Err(e) = validate_axis(Axis::X, x.split_at(x_len).0) {
            return Err(e);
        }
        match validate_axis(Axis::Y, y.split_at(y_len).0) {
            Ok(()) => Ok(Self {
                x_div: Divisors::of_prefix(&x, x_len),
                y_div: Divisors::of_prefix(&y, y_len),
                x_flat: rows_equal(&z, x_len, y_len),
                x_len,
                y_len,
                x,
                y,
                z,
            }),
            Err(e) => Err(e),
        }
    }

    /// Build a table from breakpoints and grid rows of any length up to the capacity (`z[i]`
    /// holds `y.len()` values at `x[i]`).
    ///
    /// # Errors
    /// [`TableError::TooLong`] beyond the capacity, [`TableError::GridShape`] when `z` does
    /// not have `x.len()` rows of `y.len()` values, then as [`Table2::from_bits`].
    pub fn from_bit_slices<R: AsRef<[FixedI32<ZF>]>>(
        x: &[FixedI32<XF>],
        y: &[FixedI32<YF>],
        z: &[R],
    ) -> Result<Self, TableError> {
        let (xs, ys, zs) = Self::grid_in_capacity(x, y, z)?;
        Self::from_prefix(xs, ys, zs, x.len(), y.len())
    }

    /// Build a table from f64 breakpoints and grid values using the whole capacity (never the
    /// per-sample path). Values are rounded to the nearest representable fixed-point number.
    ///
    /// # Errors
    /// [`TableError::NotRepresentable`] for NaN, infinite or out-of-range entries (values are
    /// indexed row-major, `i * NY + j`), then as [`Table2::from_bits`].
    pub fn new(x: &[f64; NX], y: &[f64; NY], z: &[[f64; NY]; NX]) -> Result<Self, TableError> {
        Self::from_slices(x, y, z)
    }

    /// [`Table2::new`] for breakpoints and rows of any length up to the capacity (as
    /// [`Table2::from_bit_slices`]).
    ///
    /// ```
    /// use clampwise_core::table::Table2;
    /// use clampwise_core::units::{Celsius, RadPerSec};
    /// use fixed::types::extra::{U16, U30};
    ///
    /// // Two temperatures × three speeds in a table of capacity 4 × 4 …
    /// let x = [20.0, 400.0];
    /// let y = [0.0, 10.0, 100.0];
    /// let z = [[0.40, 0.39, 0.36], [0.30, 0.29, 0.26]];
    /// let within = Table2::<U16, U16, U30, 4, 4>::from_slices(&x, &y, &z)?;
    /// // … looks up as the same table at its exact size, clamped flags included.
    /// let exact = Table2::<U16, U16, U30, 2, 3>::new(&x, &y, &z)?;
    /// for (t, v) in [("200", "50"), ("500", "5"), ("20", "150")] {
    ///     let (t, v) = (Celsius::from_str(t).unwrap(), RadPerSec::from_str(v).unwrap());
    ///     assert_eq!(within.lookup(t, v), exact.lookup(t, v));
    /// }
    /// assert_eq!(within.y_breakpoints(), exact.y_breakpoints());
    /// # Ok::<(), clampwise_core::table::TableError>(())
    /// ```
    ///
    /// # Errors
    /// As [`Table2::from_bit_slices`], and [`TableError::NotRepresentable`] as [`Table2::new`]
    /// (indexed row-major, `i * y.len() + j`).
    pub fn from_slices<R: AsRef<[f64]>>(x: &[f64], y: &[f64], z: &[R]) -> Result<Self, TableError> {
        let (xs, ys, zs) = Self::grid_in_capacity(x, y, z)?;
        Self::from_prefix(xs, ys, zs, x.len(), y.len())
    }

    /// Check the shape against the capacity and convert every entry into zero-filled arrays.
    #[allow(clippy::type_complexity)]
    fn grid_in_capacity<A, B, C, R>(
        x: &[A],
        y: &[B],
        z: &[R],
    ) -> Result<
        (
            [FixedI32<XF>; NX],
            [FixedI32<YF>; NY],
            [[FixedI32<ZF>; NY]; NX],
        ),
        TableError,
    >
    where
        A: TableEntry<XF>,
        B: TableEntry<YF>,
        C: TableEntry<ZF>,
        R: AsRef<[C]>,
    {
        for (axis, len, capacity) in [(Axis::X, x.len(), NX), (Axis::Y, y.len(), NY)] {
            if len > capacity {
                return Err(TableError::TooLong {
                    axis,
                    len,
                    capacity,
                });
            }
        }
        if z.len() != x.len() {
            return Err(TableError::GridShape {
                row: None,
                len: z.len(),
                expected: x.len(),
            });
        }
        let mut xs = [FixedI32::<XF>::ZERO; NX];
        convert_into(&mut xs, x, Some(Axis::X), 0)?;
        let mut ys = [FixedI32::<YF>::ZERO; NY];
        convert_into(&mut ys, y, Some(Axis::Y), 0)?;
        let mut zs = [[FixedI32::<ZF>::ZERO; NY]; NX];
        for (row, (out, given)) in zs.iter_mut().zip(z).enumerate() {
            let given = given.as_ref();
            if given.len() != y.len() {
                return Err(TableError::GridShape {
                    row: Some(row),
                    len: given.len(),
                    expected: y.len(),
                });
            }
            convert_into(out, given, None, row.saturating_mul(y.len()))?;
        }
        Ok((xs, ys, zs))
    }
    /// The breakpoints of the first axis in use.
    pub fn x_breakpoints(&self) -> &[FixedI32<XF>] {
        self.x.get(..self.x_len).unwrap_or(&self.x)
    }

    /// The breakpoints of the second axis in use.
    pub fn y_breakpoints(&self) -> &[FixedI32<YF>] {
        self.y.get(..self.y_len).unwrap_or(&self.y)
    }

    /// The grid rows in use, row `i` holding the values at `(x[i], y[0 ..])`.
    pub fn rows(&self) -> impl Iterator<Item = &[FixedI32<ZF>]> {
        let y_len = self.y_len;
        self.z
            .iter()
            .take(self.x_len)
            .map(move |row| row.get(..y_len).unwrap_or(row))
    }

    /// The value at `(x[i], y[j])`, `None` outside the breakpoints in use.
    pub fn value(&self, i: usize, j: usize) -> Option<FixedI32<ZF>> {
        self.rows().nth(i).and_then(|row| row.get(j).copied())
    }

    /// The whole grid, zeros beyond the rows and columns in use (for `const` checks).
    pub(crate) const fn capacity_grid(&self) -> &[[FixedI32<ZF>; NY]; NX] {
        &self.z
    }

    /// The whole second axis, zeros beyond the breakpoints in use (for `const` checks).
    pub(crate) const fn capacity_y(&self) -> &[FixedI32<YF>; NY] {
        &self.y
    }

    /// Every number that defines the table, as raw bits in a fixed order: the two lengths, the
    /// breakpoints in use, then the values row by row (a configuration checksum's input).
    pub fn for_each_bits(&self, mut word: impl FnMut(i32)) {
        for len in [self.x_len, self.y_len] {
            word(i32::try_from(len).unwrap_or(i32::MAX));
        }
        self.x_breakpoints().iter().for_each(|v| word(v.to_bits()));
        self.y_breakpoints().iter().for_each(|v| word(v.to_bits()));
        self.rows().flatten().for_each(|v| word(v.to_bits()));
    }

    /// Interpolate at `(x, y)`; outside the grid the edge value is returned and flagged.
    #[inline]
    pub fn lookup(&self, x: FixedI32<XF>, y: FixedI32<YF>) -> Lookup<FixedI32<ZF>> {
        let py = locate(self.y_breakpoints(), &self.y_div, y);
        if self.x_flat {
            return Lookup {
                value: FixedI32::from_bits(narrow(self.along_y(0, py))),
                clamped: py.clamped || outside(self.x_breakpoints(), x),
            };
        }
        let px = locate(self.x_breakpoints(), &self.x_div, x);
        Lookup {
            value: FixedI32::from_bits(narrow(self.interpolate(px, py))),
            clamped: px.clamped || py.clamped,
        }
    }

    /// Interpolate at `(x, y)` and at `(x, y₀)`, y₀ the first breakpoint of the second axis,
    /// with one search of the first axis: the pair `(lookup(x, y), lookup(x, y₀))`, bit for bit.
    /// (The kinetic and the standstill μ of [`crate::friction`] at one lining temperature.)
    ///
    /// ```
    /// use clampwise_core::table::Table2;
    /// use clampwise_core::units::{Celsius, RadPerSec, Ratio};
    /// use fixed::types::extra::{U16, U30};
    ///
    /// let mu = Table2::<U16, U16, U30, 2, 2>::new(
    ///     &[0.0, 400.0], &[0.0, 100.0], &[[0.40, 0.36], [0.30, 0.26]],
    /// )?;
    /// let (t, v) = (Celsius::lit("200"), RadPerSec::lit("50"));
    /// let (running, standstill) = mu.lookup_with_first_y(t, v);
    /// assert_eq!(running, mu.lookup(t, v));
    /// assert_eq!(standstill, mu.lookup(t, RadPerSec::ZERO));
    /// // Midway between 0.40 and 0.30 at standstill, within the 1-LSB interpolation bound.
    /// assert!((standstill.value - Ratio::lit("0.35")).abs() <= Ratio::DELTA);
    /// # Ok::<(), clampwise_core::table::TableError>(())
    /// ```
    #[inline]
    pub fn lookup_with_first_y(
        &self,
        x: FixedI32<XF>,
        y: FixedI32<YF>,
    ) -> (Lookup<FixedI32<ZF>>, Lookup<FixedI32<ZF>>) {
        // No flat-x shortcut here: a μ table depends on temperature, and `locate` is exact on
        // any table.
        let px = locate(self.x_breakpoints(), &self.x_div, x);
        let py = locate(self.y_breakpoints(), &self.y_div, y);
        // y₀ itself: index 0, no fraction, not clamped.
        let p0 = Position {
            lo: 0,
            frac_q31: 0,
            clamped: false,
        };
        (
            Lookup {
                value: FixedI32::from_bits(narrow(self.interpolate(px, py))),
                clamped: px.clamped || py.clamped,
            },
            Lookup {
                value: FixedI32::from_bits(narrow(self.interpolate(px, p0))),
                clamped: px.clamped,
            },
        )
    }

    /// Row `i` interpolated along y.
    #[inline]
    fn along_y(&self, i: usize, py: Position) -> i64 {
        self.z.get(i).map_or(0, |row| interpolate(row, py))
    }

    /// Bilinear interpolation at two axis positions: along y in the two rows of the x segment,
    /// then along x.
    #[inline]
    fn interpolate(&self, px: Position, py: Position) -> i64 {
        match self.z.get(px.lo..) {
            Some([r0, r1, ..]) => lerp_bits(interpolate(r0, py), interpolate(r1, py), px.frac_q31),
            // One row (NX = 1, or row 0 of a flat table): no step along x.
            Some([r0]) => interpolate(r0, py),
            _ => 0,
        }
    }
}

/// Whether every row in use of a grid equals the first (the grid does not depend on x).
const fn rows_equal<F: LeEqU32, const NX: usize, const NY: usize>(
    z: &[[FixedI32<F>; NY]; NX],
    x_len: usize,
    y_len: usize,
) -> bool {
    let mut i = 1;
    while i < x_len && i < NX {
        let mut j = 0;
        while j < y_len && j < NY {
            // i < NX, j < NY by the loop bounds; `get` is not usable in a const fn.
            #[allow(clippy::indexing_slicing)]
            if z[i][j].to_bits() != z[0][j].to_bits() {
                return false;
            }
            j += 1;
        }
        i += 1;
    }
    true
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
        T1::new(&[0.0, 10.0, 20.0, 50.0], &[1.0, 2.0, -3.0, 4.0]).unwrap()
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
        let e = T1::new(&[0.0, 1.0, 1.0, 2.0], &[0.0; 4]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotIncreasing {
                axis: Axis::X,
                index: 2
            }
        );
        let e = T1::new(&[0.0, 1.0, f64::NAN, 2.0], &[0.0; 4]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotRepresentable {
                axis: Some(Axis::X),
                index: 2
            }
        );
        let e = T1::new(&[0.0, 1.0, 2.0, 3.0], &[0.0, 1e300, 0.0, 0.0]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotRepresentable {
                axis: None,
                index: 1
            }
        );
        let e = T2::new(&[0.0, 1.0, 2.0], &[5.0, 4.0], &[[0.0; 2]; 3]).unwrap_err();
        assert_eq!(
            e,
            TableError::NotIncreasing {
                axis: Axis::Y,
                index: 1
            }
        );
        assert_eq!(
            Table1::<U16, U16, 0>::from_bits([], []).unwrap_err(),
            TableError::Empty { axis: Axis::X }
        );
    }

    #[test]
    fn slices_beyond_the_capacity_or_off_the_grid_are_refused() {
        let too_long = T2::from_slices(&[0.0, 1.0, 2.0, 3.0], &[0.0], &[[0.0]; 4]);
        assert_eq!(
            too_long,
            Err(TableError::TooLong {
                axis: Axis::X,
                len: 4,
                capacity: 3
            })
        );
        let rows = T2::from_slices(&[0.0, 1.0], &[0.0], &[[0.0]]);
        assert!(matches!(
            rows,
            Err(TableError::GridShape {
                row: None,
                len: 1,
                expected: 2
            })
        ));
        let short_row: [&[f64]; 2] = [&[0.0, 1.0], &[0.0]];
        let row = T2::from_slices(&[0.0, 1.0], &[0.0, 1.0], &short_row);
        assert!(matches!(
            row,
            Err(TableError::GridShape {
                row: Some(1),
                len: 1,
                expected: 2
            })
        ));
        // Zero breakpoints is an empty axis, as at a fixed size.
        let empty: [[f64; 1]; 0] = [];
        assert!(matches!(
            T2::from_slices(&[], &[0.0], &empty),
            Err(TableError::Empty { axis: Axis::X })
        ));
        assert!(
            TableError::TooLong {
                axis: Axis::Y,
                len: 9,
                capacity: 8
            }
            .to_string()
            .contains("capacity of 8")
        );
    }

    #[test]
    fn single_breakpoint_is_a_constant() {
        let t = Table1::<U16, U16, 1>::new(&[3.0], &[7.5]).unwrap();
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
        let t = T2::new(
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

    /// A 2-D table whose rows are all equal skips its first axis: detected at construction
    /// for any size, and only then.
    #[test]
    fn equal_rows_are_detected() {
        let new = |z: [[i32; 2]; 3]| {
            Table2::<U8, U16, U24, 3, 2>::from_bits(
                [1, 2, 3].map(FixedI32::from_bits),
                [1, 2].map(FixedI32::from_bits),
                z.map(|r| r.map(FixedI32::from_bits)),
            )
            .unwrap()
        };
        assert!(new([[5, -7]; 3]).x_flat);
        assert!(!new([[5, -7], [5, -7], [5, -6]]).x_flat);
        assert!(!new([[5, -7], [4, -7], [5, -7]]).x_flat);
        let one_row = Table2::<U8, U16, U24, 1, 2>::from_bits(
            [FixedI32::ZERO],
            [1, 2].map(FixedI32::from_bits),
            [[3, 4].map(FixedI32::from_bits)],
        )
        .unwrap();
        assert!(one_row.x_flat);
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

        // A table held within a larger capacity looks up as the same table at its exact size:
        // values, clamped flags, accessors and checksum words, at any input (raw bits, so
        // both ends and every segment are reached).
        #[test]
        fn a_table_within_a_capacity_is_the_table_at_its_size(
            x0 in -1000i32..1000, dx in proptest::collection::vec(1i32..400, 2),
            y0 in -1000i32..1000, dy in proptest::collection::vec(1i32..400, 1),
            z in proptest::collection::vec(-5000i32..5000, 6),
            at_x in -2000i32..3000, at_y in -2000i32..3000,
        ) {
            type X = FixedI32<U8>;
            type Y = FixedI32<U16>;
            type Z = FixedI32<U24>;
            let xs = [X::from_bits(x0), X::from_bits(x0 + dx[0]), X::from_bits(x0 + dx[0] + dx[1])];
            let ys = [Y::from_bits(y0), Y::from_bits(y0 + dy[0])];
            let zs: [[Z; 2]; 3] = core::array::from_fn(|i| core::array::from_fn(|j| Z::from_bits(z[2 * i + j])));
            let exact = T2::from_bits(xs, ys, zs).unwrap();
            let within = Table2::<U8, U16, U24, 8, 5>::from_bit_slices(&xs, &ys, &zs).unwrap();
            let (ax, ay) = (X::from_bits(at_x), Y::from_bits(at_y));
            prop_assert_eq!(within.lookup(ax, ay), exact.lookup(ax, ay));
            prop_assert_eq!(within.lookup_with_first_y(ax, ay), exact.lookup_with_first_y(ax, ay));
            prop_assert_eq!(within.x_breakpoints(), exact.x_breakpoints());
            prop_assert!(within.rows().eq(exact.rows()));
            let (mut a, mut b) = (Vec::new(), Vec::new());
            within.for_each_bits(|w| a.push(w));
            exact.for_each_bits(|w| b.push(w));
            prop_assert_eq!(a, b);
        }

        #[test]
        fn lookup_never_leaves_value_range(bits in any::<i32>(), ybits in any::<i32>()) {
            let t = T2::new(&[0.0, 1.0, 3.0], &[0.0, 2.0], &[[0.0, 20.0], [1.0, -21.0], [3.0, 23.0]])
                .unwrap();
            let v: f64 = t.lookup(FixedI32::from_bits(bits), FixedI32::from_bits(ybits)).value.to_num();
            prop_assert!((-21.0..=23.0).contains(&v));
        }
    }
}
