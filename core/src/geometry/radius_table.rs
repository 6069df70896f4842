//! The friction-radius table: lever arm per face against clamp force and bedding, in fixed
//! point, built once from a [`Contact`] and kept in flash.
//!
//! The table holds, at each (clamp force, bedding) breakpoint, the lever arm of one face per
//! unit μ·F (r_e, already divided by sin α for a cone) as [`Metres`]. The estimator computes
//! torque = faces · μ · F · table(F, bedding). From geometry alone the table is flat in force;
//! the force axis is there so that measured centre-of-pressure shifts can be loaded later.
//! Because r_e is linear in bedding, the bilinear lookup reproduces the model between bedding
//! breakpoints too, up to rounding; two bedding breakpoints (0 and 1) are enough for a purely
//! geometric table.
//!
//! ## Accuracy (measured)
//!
//! Against the f64 model ([`Contact::lever_arm`] at the same, fixed-point-quantised inputs)
//! over the envelope — 390 contacts: annuli and solid discs, sectors, button pads (both
//! models), polygon pads and cones of 8°–60°, outer radii from 10 mm to 1 m; bedding at 1001
//! points across [0, 1]; clamp force at 8 points across 0 … 200 kN, between and on the
//! breakpoints; tables of 5 × 5 and 2 × 2 breakpoints — the largest relative error of a lookup
//! is **9.7·10⁻⁶ (0.00097 %)**, on the smallest radius (a 10 mm solid disc, uniform wear
//! r_e = 5 mm). `tests/tests/geometry_radius_table.rs` measures it and fails above 1·10⁻⁵
//! (the project's bound is 0.05 %). The error is the storage of the lever arm in I8F24
//! (½ LSB = 30 nm) plus the rounding of the bilinear step (≤ 1 LSB), so it scales as
//! 1/r_e: about 1·10⁻⁷ at r_e = 0.5 m.
//!
//! [`Metres`]: crate::units::Metres
//!
//! ```
//! use clampwise_core::geometry::{build_radius_table, Annulus, Contact};
//! use clampwise_core::units::{Newtons, Ratio};
//!
//! let clutch = Contact::new(Annulus::new(0.060, 0.100)?, 6, None)?;
//! let table = build_radius_table(&clutch, &[0.0, 50_000.0], &[0.0, 1.0])?;
//! let half_bedded = table.lookup(Newtons::from_num(10_000), Ratio::from_num(0.5));
//! assert!(!half_bedded.clamped);
//! let r: f64 = half_bedded.value.to_num();
//! assert!((r - 0.080_833).abs() < 1e-6); // midway between 81.667 mm and 80.000 mm
//! # Ok::<(), clampwise_core::geometry::GeometryError>(())
//! ```

use fixed::types::extra::{U8, U24, U30};

use super::Contact;
use super::error::{self, GeometryError, Parameter};
use crate::table::Table2;

/// Lever arm per face ([`Metres`]) against clamp force ([`Newtons`]) × bedding ([`Ratio`]),
/// `NF` force breakpoints by `NB` bedding breakpoints.
///
/// [`Metres`]: crate::units::Metres
/// [`Newtons`]: crate::units::Newtons
/// [`Ratio`]: crate::units::Ratio
pub type RadiusTable<const NF: usize, const NB: usize> = Table2<U8, U30, U24, NF, NB>;

/// Build the friction-radius table of `contact` on the given breakpoints, at their exact size
/// (host, build script or start-up; never the per-sample path).
///
/// `force_breakpoints_n`: clamp force, N, non-negative and strictly increasing (up to 8.4 MN);
/// `bedding_breakpoints`: strictly increasing within [0, 1]. Each cell holds
/// [`Contact::lever_arm`] at its bedding value, rounded to the nearest I8F24 (the values are
/// the same along the force axis).
///
/// # Errors
/// [`GeometryError::NotFinite`] or [`GeometryError::Negative`] naming a force breakpoint;
/// [`GeometryError::NotFinite`] or [`GeometryError::BeddingOutOfRange`] naming a bedding
/// breakpoint; [`GeometryError::Table`] when breakpoints do not increase, or a lever arm
/// exceeds the I8F24 range (128 m: a cone angle close to 0).
///
/// ```
/// use clampwise_core::geometry::{build_radius_table, Annulus, Contact, GeometryError};
/// let disc = Contact::new(Annulus::new(0.1, 0.2)?, 2, None)?;
/// assert!(matches!(
///     build_radius_table(&disc, &[0.0, 1000.0], &[0.0, 1.2]),
///     Err(GeometryError::BeddingOutOfRange { .. })
/// ));
/// # Ok::<(), GeometryError>(())
/// ```
pub fn build_radius_table<const NF: usize, const NB: usize>(
    contact: &Contact<'_>,
    force_breakpoints_n: &[f64; NF],
    bedding_breakpoints: &[f64; NB],
) -> Result<RadiusTable<NF, NB>, GeometryError> {
    build_radius_table_from_slices(contact, force_breakpoints_n, bedding_breakpoints)
}

/// [`build_radius_table`] for breakpoints of any length up to a table capacity of `NF` × `NB`
/// (a host that reads the table sizes at run time; see [`Table2`]).
///
/// # Errors
/// As [`build_radius_table`], and [`GeometryError::Table`] when more breakpoints are given
/// than the capacity.
pub fn build_radius_table_from_slices<const NF: usize, const NB: usize>(
    contact: &Contact<'_>,
    force_breakpoints_n: &[f64],
    bedding_breakpoints: &[f64],
) -> Result<RadiusTable<NF, NB>, GeometryError> {
    for (i, &f) in force_breakpoints_n.iter().enumerate() {
        error::length(Parameter::ForceBreakpoint(i), f)?;
    }
    let mut arms = [0.0; NB];
    for (j, &b) in bedding_breakpoints.iter().enumerate() {
        let b = error::bedding(Parameter::BeddingBreakpoint(j), b)?;
        if let Some(arm) = arms.get_mut(j) {
            *arm = contact.lever_arm(b)?;
        }
    }
    let row = arms.get(..bedding_breakpoints.len()).unwrap_or(&arms);
    let rows = [row; NF];
    let rows = rows.get(..force_breakpoints_n.len()).unwrap_or(&rows);
    Ok(RadiusTable::from_slices(
        force_breakpoints_n,
        bedding_breakpoints,
        rows,
    )?)
}
