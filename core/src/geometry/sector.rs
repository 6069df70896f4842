//! An annular sector pad: the usual caliper pad, spanning an angle Δθ ∈ (0, 2π] between two
//! radii of the disc's rubbing band.
//!
//! Area integrals in closed form: A = ½·Δθ·(Ro² − Ri²), ∫ r dA = ⅓·Δθ·(Ro³ − Ri³),
//! ∫ (1/r) dA = Δθ·(Ro − Ri). The angle cancels from both effective radii, which are those of
//! the full annulus [pub: Shigley ch. 16]; it sets the area, the pressure and where the
//! resultant acts.

use core::f64::consts::TAU;

use super::Disc;
use super::error::{self, GeometryError, Parameter};
use super::pressure::{EffectiveRadii, PadIntegrals};

/// An annular sector pad from `inner_radius_m` to `outer_radius_m` (metres) spanning
/// `angle_rad` ∈ (0, 2π] (a 2π sector is a full annulus).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SectorPad {
    inner_radius_m: f64,
    outer_radius_m: f64,
    angle_rad: f64,
}

impl SectorPad {
    /// A sector pad on `disc`'s rubbing band.
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`], [`GeometryError::Negative`],
    /// [`GeometryError::InnerNotBelowOuter`], [`GeometryError::SectorAngleOutOfRange`], or
    /// [`GeometryError::PadLeavesDisc`] when the pad's radii leave the band.
    ///
    /// ```
    /// use clampwise_core::geometry::{Disc, SectorPad};
    /// let disc = Disc::new(0.050, 0.150)?;
    /// let pad = SectorPad::new(&disc, 0.090, 0.140, 60f64.to_radians())?;
    /// let r = pad.effective_radii();
    /// assert!((r.uniform_wear_m - 0.115).abs() < 1e-12); // (Ro + Ri)/2
    /// assert!(SectorPad::new(&disc, 0.090, 0.160, 1.0).is_err()); // leaves the disc
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(
        disc: &Disc,
        inner_radius_m: f64,
        outer_radius_m: f64,
        angle_rad: f64,
    ) -> Result<Self, GeometryError> {
        let (inner_radius_m, outer_radius_m) = error::radii(
            Parameter::InnerRadius,
            inner_radius_m,
            Parameter::OuterRadius,
            outer_radius_m,
        )?;
        let angle_rad = error::finite(Parameter::SectorAngle, angle_rad)?;
        if !(angle_rad > 0.0 && angle_rad <= TAU) {
            return Err(GeometryError::SectorAngleOutOfRange { angle_rad });
        }
        disc.check_span(
            Parameter::InnerRadius,
            inner_radius_m,
            Parameter::OuterRadius,
            outer_radius_m,
        )?;
        Ok(Self {
            inner_radius_m,
            outer_radius_m,
            angle_rad,
        })
    }

    /// A sector pad covering the whole width of `disc`'s band.
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`] or [`GeometryError::SectorAngleOutOfRange`] for the angle.
    pub fn across_band(disc: &Disc, angle_rad: f64) -> Result<Self, GeometryError> {
        Self::new(
            disc,
            disc.inner_radius_m(),
            disc.outer_radius_m(),
            angle_rad,
        )
    }

    /// Inner radius Ri, m.
    pub fn inner_radius_m(&self) -> f64 {
        self.inner_radius_m
    }

    /// Outer radius Ro, m.
    pub fn outer_radius_m(&self) -> f64 {
        self.outer_radius_m
    }

    /// Angle spanned, rad.
    pub fn angle_rad(&self) -> f64 {
        self.angle_rad
    }

    /// r_e under both pressure models, m: ∫ r dA / A and A / ∫ (1/r) dA from the closed-form
    /// integrals, so the angle cancels numerically rather than by construction.
    pub fn effective_radii(&self) -> EffectiveRadii {
        self.integrals().effective_radii()
    }

    /// Area and radial moments of the pad (closed form).
    pub fn integrals(&self) -> PadIntegrals {
        sector_integrals(self.inner_radius_m, self.outer_radius_m, self.angle_rad)
    }
}

/// Closed-form integrals over a sector; differences of powers factored to avoid cancellation.
pub(crate) fn sector_integrals(ri: f64, ro: f64, angle: f64) -> PadIntegrals {
    let width = ro - ri;
    PadIntegrals {
        area_m2: 0.5 * angle * width * (ro + ri),
        radius_moment_m3: angle / 3.0 * width * (ro * ro + ro * ri + ri * ri),
        inverse_radius_moment_m: angle * width,
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;
    use crate::geometry::annulus::annulus_radii;

    #[test]
    fn angle_cancels_from_the_radii() {
        let disc = Disc::new(0.0, 1.0).unwrap();
        let want = annulus_radii(0.2, 0.5);
        for angle in [1e-3, 0.5, 1.0, 3.0, TAU] {
            let r = SectorPad::new(&disc, 0.2, 0.5, angle)
                .unwrap()
                .effective_radii();
            assert!((r.uniform_pressure_m - want.uniform_pressure_m).abs() < 1e-15);
            assert!((r.uniform_wear_m - want.uniform_wear_m).abs() < 1e-15);
        }
    }

    #[test]
    fn rejects_bad_angles() {
        let disc = Disc::new(0.0, 1.0).unwrap();
        for angle in [0.0, -1.0, TAU + 1e-9] {
            assert!(matches!(
                SectorPad::new(&disc, 0.2, 0.5, angle),
                Err(GeometryError::SectorAngleOutOfRange { .. })
            ));
        }
    }
}
