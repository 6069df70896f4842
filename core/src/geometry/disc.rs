//! The disc's rubbing band: the annulus a pad may occupy.

use super::error::{self, GeometryError, Parameter};

/// The rubbing band of a brake disc or clutch plate: the annulus between `inner_radius_m` and
/// `outer_radius_m` (metres, measured from the axis) that pads may occupy. A solid disc has an
/// inner radius of 0.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Disc {
    inner_radius_m: f64,
    outer_radius_m: f64,
}

impl Disc {
    /// Relative tolerance of the band edges when checking that a pad stays on the band, so that
    /// vertices placed on an edge by trigonometry (a few ulps off) are accepted: 1·10⁻¹².
    pub const TOLERANCE: f64 = 1e-12;

    /// A rubbing band from `inner_radius_m` to `outer_radius_m`, metres.
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`], [`GeometryError::Negative`] or
    /// [`GeometryError::InnerNotBelowOuter`], naming `disc.inner_radius_m` or
    /// `disc.outer_radius_m`.
    ///
    /// ```
    /// use clampwise_core::geometry::Disc;
    /// let disc = Disc::new(0.060, 0.140)?;
    /// assert_eq!(disc.outer_radius_m(), 0.140);
    /// assert!(Disc::new(0.140, 0.060).is_err());
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(inner_radius_m: f64, outer_radius_m: f64) -> Result<Self, GeometryError> {
        let (inner_radius_m, outer_radius_m) = error::radii(
            Parameter::DiscInnerRadius,
            inner_radius_m,
            Parameter::DiscOuterRadius,
            outer_radius_m,
        )?;
        Ok(Self {
            inner_radius_m,
            outer_radius_m,
        })
    }

    /// Inner edge of the band, m (≥ 0).
    pub fn inner_radius_m(&self) -> f64 {
        self.inner_radius_m
    }

    /// Outer edge of the band, m (> inner).
    pub fn outer_radius_m(&self) -> f64 {
        self.outer_radius_m
    }

    /// Check that a pad spanning radii `min_m ..= max_m` stays on the band; `min_part` and
    /// `max_part` name the pad dimensions reported if it does not.
    pub(crate) fn check_span(
        &self,
        min_part: Parameter,
        min_m: f64,
        max_part: Parameter,
        max_m: f64,
    ) -> Result<(), GeometryError> {
        if self.below_band(min_m) {
            return Err(self.leaves(min_part, min_m));
        }
        if self.above_band(max_m) {
            return Err(self.leaves(max_part, max_m));
        }
        Ok(())
    }

    /// `r_m` lies inside the inner edge by more than rounding ([`Disc::TOLERANCE`]).
    pub(crate) fn below_band(&self, r_m: f64) -> bool {
        r_m < self.inner_radius_m * (1.0 - Self::TOLERANCE)
    }

    /// `r_m` lies beyond the outer edge by more than rounding ([`Disc::TOLERANCE`]).
    pub(crate) fn above_band(&self, r_m: f64) -> bool {
        r_m > self.outer_radius_m * (1.0 + Self::TOLERANCE)
    }

    pub(crate) fn leaves(&self, parameter: Parameter, radius_m: f64) -> GeometryError {
        GeometryError::PadLeavesDisc {
            parameter,
            radius_m,
            disc_inner_radius_m: self.inner_radius_m,
            disc_outer_radius_m: self.outer_radius_m,
        }
    }
}
