//! A full annular face (clutch plate, full-contact disc brake) and its solid-disc limit.
//!
//! Closed forms [pub: Shigley ch. 16; Ugural ch. 13; Orthwein]:
//! uniform pressure r_e = (2/3)·(Ro³ − Ri³)/(Ro² − Ri²), uniform wear r_e = (Ro + Ri)/2;
//! solid disc (Ri = 0): 2R/3 and R/2. The pressure formula is evaluated in the factored form
//! (2/3)·(Ro² + Ro·Ri + Ri²)/(Ro + Ri), which has no cancellation when Ri → Ro.

use core::f64::consts::TAU;

use super::Disc;
use super::error::{self, GeometryError, Parameter};
use super::pressure::{EffectiveRadii, PadIntegrals};
use super::sector::sector_integrals;

/// A full annular friction face from `inner_radius_m` to `outer_radius_m` (metres); an inner
/// radius of 0 is a solid disc.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Annulus {
    inner_radius_m: f64,
    outer_radius_m: f64,
}

impl Annulus {
    /// An annular face, metres.
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`], [`GeometryError::Negative`] or
    /// [`GeometryError::InnerNotBelowOuter`], naming `inner_radius_m` or `outer_radius_m`.
    ///
    /// ```
    /// use clampwise_core::geometry::Annulus;
    /// // Check vector [calc: r_uw = (Ro+Ri)/2, Shigley ch. 16]: Ro = 100 mm, Ri = 60 mm.
    /// let r = Annulus::new(0.060, 0.100)?.effective_radii();
    /// assert!((r.uniform_wear_m - 0.080).abs() < 1e-12);
    /// assert!((r.uniform_pressure_m - 0.081_667).abs() < 1e-6);
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(inner_radius_m: f64, outer_radius_m: f64) -> Result<Self, GeometryError> {
        let (inner_radius_m, outer_radius_m) = error::radii(
            Parameter::InnerRadius,
            inner_radius_m,
            Parameter::OuterRadius,
            outer_radius_m,
        )?;
        Ok(Self {
            inner_radius_m,
            outer_radius_m,
        })
    }

    /// A solid disc face of radius `radius_m` (inner radius 0).
    ///
    /// # Errors
    /// As [`Annulus::new`]; a radius of 0 is [`GeometryError::InnerNotBelowOuter`].
    ///
    /// ```
    /// use clampwise_core::geometry::Annulus;
    /// let r = Annulus::solid_disc(0.090)?.effective_radii();
    /// assert!((r.uniform_pressure_m - 0.060).abs() < 1e-12); // 2R/3
    /// assert!((r.uniform_wear_m - 0.045).abs() < 1e-12); // R/2
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn solid_disc(radius_m: f64) -> Result<Self, GeometryError> {
        Self::new(0.0, radius_m)
    }

    /// The whole rubbing band of `disc` as one annular face.
    pub fn from_disc(disc: &Disc) -> Self {
        Self {
            inner_radius_m: disc.inner_radius_m(),
            outer_radius_m: disc.outer_radius_m(),
        }
    }

    /// Inner radius Ri, m.
    pub fn inner_radius_m(&self) -> f64 {
        self.inner_radius_m
    }

    /// Outer radius Ro, m.
    pub fn outer_radius_m(&self) -> f64 {
        self.outer_radius_m
    }

    /// r_e under both pressure models by the closed forms above, m (exact up to rounding).
    pub fn effective_radii(&self) -> EffectiveRadii {
        annulus_radii(self.inner_radius_m, self.outer_radius_m)
    }

    /// Area and radial moments of the face (closed form).
    pub fn integrals(&self) -> PadIntegrals {
        sector_integrals(self.inner_radius_m, self.outer_radius_m, TAU)
    }
}

/// The closed-form annulus radii; shared with the sector pad, whose angle cancels.
pub(crate) fn annulus_radii(ri: f64, ro: f64) -> EffectiveRadii {
    EffectiveRadii {
        uniform_pressure_m: (2.0 / 3.0) * (ro * ro + ro * ri + ri * ri) / (ro + ri),
        uniform_wear_m: 0.5 * (ro + ri),
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn closed_form_matches_the_integrals() {
        // Two routes to the same radii: the factored closed form and ∫r dA / A, A / ∫dA/r.
        for (ri, ro) in [(0.0, 0.1), (0.06, 0.1), (0.299, 0.3), (0.5, 1.0)] {
            let a = Annulus::new(ri, ro).unwrap();
            let c = a.effective_radii();
            let i = a.integrals().effective_radii();
            assert!((c.uniform_pressure_m - i.uniform_pressure_m).abs() < 1e-14 * ro);
            assert!((c.uniform_wear_m - i.uniform_wear_m).abs() < 1e-14 * ro);
        }
    }

    #[test]
    fn rejects_bad_radii() {
        assert!(matches!(
            Annulus::new(0.1, 0.1),
            Err(GeometryError::InnerNotBelowOuter { .. })
        ));
        assert!(matches!(
            Annulus::solid_disc(-0.1),
            Err(GeometryError::Negative { .. })
        ));
    }
}
