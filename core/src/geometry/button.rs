//! A circular ("button") pad of radius R whose centre sits at distance e from the disc axis,
//! under two models kept apart on purpose:
//!
//! * [`ButtonModel::PublishedTable`]: r_e = δ·e with δ(R/e) interpolated linearly in the
//!   published design table [mem: Shigley ch. 16, after Fazekas, Trans. ASME J. Eng. Ind.
//!   94(3), 1972], R/e ∈ [0, 0.5]. The source gives one radius per row, for the bedded pad
//!   (its p_max/p_av column is δ/(1 − R/e), what p·r = const implies); this model uses that
//!   radius at every bedding state. Linear interpolation between rows adds at most about
//!   4·10⁻⁴ to δ (an eighth of the largest second difference of the rows).
//! * [`ButtonModel::Integrated`]: the pressure models of [`super::pressure`] integrated over the
//!   circle: uniform pressure r_e = ∫ r dA / A, uniform wear r_e = A / ∫ (1/r) dA.
//!
//! **The two disagree.** Integrating over the circle gives δ = 0.9987, 0.9949, 0.9885,
//! 0.9791, 0.9665 under uniform wear and δ = 1.0013, 1.0050, 1.0113, 1.0201, 1.0316 under
//! uniform pressure at R/e = 0.1 … 0.5 \[calc\], both above the table's 0.983 … 0.938. From the
//! table's row R/e = 0.1 to its last row, 0.5, the table's r_e lies below the integrated one by:
//!
//! * new linings (uniform pressure): 1.8 % to 9.1 %, rising with R/e;
//! * bedded linings (uniform wear): 1.6 % to 3.3 %, largest near R/e = 0.375.
//!
//! Below R/e = 0.1 both gaps shrink towards 0 at R = 0. The table's radius is the smaller, so
//! it gives the lower, conservative torque, by most for a new lining on a large pad. The
//! reason for the gap is not known here; each model is tested against its own reference and
//! neither is tuned to match the other. These ranges are measured against an independent
//! quadrature in `tests/tests/geometry_button.rs`, which fails if they stop matching.
//!
//! ## How the integrated model integrates
//!
//! In polar coordinates about the disc axis, the circle of radius r crosses the pad over an arc
//! of half-angle φ(r) (law of cosines in the triangle axis–pad centre–point), so
//! ∫ f(r) dA = ∫ f(r)·2φ(r)·r dr over r ∈ [e − R, e + R]. Substituting r = e − R·cos t,
//! t ∈ [0, π], removes the square-root behaviour of φ at both ends and leaves a smooth
//! integrand, which a composite Gauss–Legendre rule (8 panels × 24 points) integrates: the
//! area comes out as πR² within 1·10⁻¹³, and the three integrals agree with an independent 2-D
//! double-exponential quadrature from a general-purpose crate within 2·10⁻¹³ relative for
//! R/e from 0.01 to 0.99 (measured in `tests/tests/geometry_button.rs`). φ is computed as
//! atan2(R·sin t·√((r + e)² − R²), r² + e² − R²), which keeps full precision near the ends
//! where an arccos would not. A pad that touches the axis (R = e, possible only on a band with
//! inner radius 0) is handled: the integrand stays smooth.

use core::f64::consts::PI;

use super::Disc;
use super::error::{self, GeometryError, Parameter};
use super::pressure::{EffectiveRadii, PadIntegrals};
use super::quadrature;

/// The published design table for button pads, `(R/e, δ = r_e/e)` [mem: Shigley ch. 16,
/// after Fazekas 1972]; not re-checked against the printed page.
pub const PUBLISHED_BUTTON_TABLE: [(f64, f64); 6] = [
    (0.0, 1.000),
    (0.1, 0.983),
    (0.2, 0.969),
    (0.3, 0.957),
    (0.4, 0.947),
    (0.5, 0.938),
];

/// Which model gives a button pad's effective radius (see the module docs for how they differ).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ButtonModel {
    /// r_e = δ(R/e)·e from [`PUBLISHED_BUTTON_TABLE`], linear between rows, the same at every
    /// bedding state; R/e must lie in [0, 0.5].
    PublishedTable,
    /// Uniform pressure and uniform wear integrated numerically over the circle.
    Integrated,
}

/// A circular pad of radius `radius_m` (R) centred `centre_radius_m` (e) from the disc axis.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ButtonPad {
    radius_m: f64,
    centre_radius_m: f64,
    model: ButtonModel,
    integrals: PadIntegrals,
}

impl ButtonPad {
    /// A button pad on `disc`'s rubbing band: it must cover radii e − R ..= e + R of the band.
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`] or [`GeometryError::Negative`] for R or e,
    /// [`GeometryError::ZeroArea`] for R = 0, [`GeometryError::PadLeavesDisc`] when
    /// e − R or e + R leaves the band, and for [`ButtonModel::PublishedTable`]
    /// [`GeometryError::OutsidePublishedTable`] when R/e > 0.5.
    ///
    /// ```
    /// use clampwise_core::geometry::{ButtonModel, ButtonPad, Disc};
    /// let disc = Disc::new(0.05, 0.20)?;
    /// // R/e = 0.2: the published table gives δ = 0.969 \[mem\].
    /// let table = ButtonPad::new(&disc, 0.025, 0.125, ButtonModel::PublishedTable)?;
    /// assert!((table.effective_radii().uniform_wear_m - 0.969 * 0.125).abs() < 1e-12);
    /// // The integrated uniform-wear model gives δ = 0.9949 \[calc\].
    /// let int = ButtonPad::new(&disc, 0.025, 0.125, ButtonModel::Integrated)?;
    /// assert!((int.effective_radii().uniform_wear_m / 0.125 - 0.9949).abs() < 5e-5);
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(
        disc: &Disc,
        radius_m: f64,
        centre_radius_m: f64,
        model: ButtonModel,
    ) -> Result<Self, GeometryError> {
        let radius_m = error::length(Parameter::ButtonRadius, radius_m)?;
        let centre_radius_m = error::length(Parameter::ButtonCentreRadius, centre_radius_m)?;
        if radius_m <= 0.0 {
            return Err(GeometryError::ZeroArea {
                parameter: Parameter::ButtonRadius,
            });
        }
        disc.check_span(
            Parameter::ButtonRadius,
            centre_radius_m - radius_m,
            Parameter::ButtonRadius,
            centre_radius_m + radius_m,
        )?;
        // e ≥ R + inner > 0 from here on.
        if model == ButtonModel::PublishedTable {
            published_delta(radius_m / centre_radius_m)?;
        }
        Ok(Self {
            radius_m,
            centre_radius_m,
            model,
            integrals: button_integrals(radius_m, centre_radius_m),
        })
    }

    /// Pad radius R, m.
    pub fn radius_m(&self) -> f64 {
        self.radius_m
    }

    /// Distance e from the disc axis to the pad centre, m.
    pub fn centre_radius_m(&self) -> f64 {
        self.centre_radius_m
    }

    /// The model in use.
    pub fn model(&self) -> ButtonModel {
        self.model
    }

    /// r_e under both pressure models, m. [`ButtonModel::PublishedTable`] gives δ·e for both;
    /// [`ButtonModel::Integrated`] gives the integrals' radii (within 2·10⁻¹³ relative).
    pub fn effective_radii(&self) -> EffectiveRadii {
        match self.model {
            ButtonModel::PublishedTable => {
                // Validated at construction; the fallback of 1 is never taken.
                let delta = published_delta(self.radius_m / self.centre_radius_m).unwrap_or(1.0);
                let r = delta * self.centre_radius_m;
                EffectiveRadii {
                    uniform_pressure_m: r,
                    uniform_wear_m: r,
                }
            }
            ButtonModel::Integrated => self.integrals.effective_radii(),
        }
    }

    /// Area and radial moments of the circle, integrated numerically (both models share the
    /// geometry; only [`ButtonModel::Integrated`] derives its radius from these).
    pub fn integrals(&self) -> PadIntegrals {
        self.integrals
    }
}

/// δ = r_e/e from the published table, linear between rows.
///
/// # Errors
/// [`GeometryError::NotFinite`] or [`GeometryError::OutsidePublishedTable`] for R/e outside
/// [0, 0.5].
///
/// ```
/// use clampwise_core::geometry::published_delta;
/// assert!((published_delta(0.25)? - 0.963).abs() < 1e-12); // halfway between 0.969 and 0.957
/// assert!(published_delta(0.6).is_err());
/// # Ok::<(), clampwise_core::geometry::GeometryError>(())
/// ```
pub fn published_delta(ratio: f64) -> Result<f64, GeometryError> {
    let ratio = error::finite(Parameter::ButtonRadius, ratio)?;
    let outside = GeometryError::OutsidePublishedTable { ratio };
    if ratio < 0.0 {
        return Err(outside);
    }
    for w in PUBLISHED_BUTTON_TABLE.windows(2) {
        if let [(x0, d0), (x1, d1)] = w
            && ratio <= *x1
        {
            return Ok(d0 + (d1 - d0) * (ratio - x0) / (x1 - x0));
        }
    }
    Err(outside)
}

/// A, ∫ r dA and ∫ (1/r) dA over a circle of radius `rr` centred `e` from the axis (e ≥ rr).
pub(crate) fn button_integrals(rr: f64, e: f64) -> PadIntegrals {
    let rule = quadrature::rule::<{ quadrature::POINTS }>();
    // Integrand pieces at t: (2φ·R·sin t, r). ∫ f(r) dA = ∫₀^π f(r)·r·2φ·R·sin t dt.
    let at = |t: f64| {
        let (s, c) = (libm::sin(t), libm::cos(t));
        let r = e - rr * c;
        let k = rr * s * libm::sqrt(((r + e) * (r + e) - rr * rr).max(0.0));
        let phi = libm::atan2(k, r * r + e * e - rr * rr);
        (2.0 * phi * rr * s, r)
    };
    let inverse = quadrature::integrate(&rule, 0.0, PI, quadrature::PANELS, |t| at(t).0);
    let area = quadrature::integrate(&rule, 0.0, PI, quadrature::PANELS, |t| {
        let (w, r) = at(t);
        w * r
    });
    let moment = quadrature::integrate(&rule, 0.0, PI, quadrature::PANELS, |t| {
        let (w, r) = at(t);
        w * r * r
    });
    PadIntegrals {
        area_m2: area,
        radius_moment_m3: moment,
        inverse_radius_moment_m: inverse,
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    #[test]
    fn area_is_pi_r_squared() {
        // A = πR² [calc]: checks the quadrature, including a pad touching the axis.
        for (rr, e) in [
            (0.01, 0.1),
            (0.05, 0.1),
            (0.09, 0.1),
            (0.1, 0.1),
            (0.3, 0.9),
        ] {
            let a = button_integrals(rr, e).area_m2;
            let want = PI * rr * rr;
            assert!(
                ((a - want) / want).abs() < 1e-13,
                "R={rr} e={e}: {a} vs {want}"
            );
        }
    }

    #[test]
    fn small_pad_limit() {
        // Mean of r over a small disc: e + R²/(8e) (∇²r = 1/r in the plane), and of 1/r:
        // 1/e + R²/(8e³) (∇²(1/r) = 1/r³) [calc, second-order Taylor mean over a disc].
        let (rr, e) = (0.001, 0.1);
        let r = button_integrals(rr, e).effective_radii();
        let q = (rr / e) * (rr / e);
        assert!((r.uniform_pressure_m / e - (1.0 + q / 8.0)).abs() < 1e-9);
        assert!((r.uniform_wear_m / e - 1.0 / (1.0 + q / 8.0)).abs() < 1e-9);
    }

    #[test]
    fn published_table_covers_zero_to_half() {
        // The table's rows run from R/e = 0 to 0.5 [mem: Shigley ch. 16]; outside, no radius.
        assert!(published_delta(0.0).is_ok() && published_delta(0.5).is_ok());
        assert!(published_delta(-0.01).is_err());
        assert!(published_delta(0.5 + 1e-12).is_err());
        assert!(published_delta(f64::NAN).is_err());
    }
}
