//! Pressure models over a pad and the bedding blend between them.
//!
//! With the clamp force F spread over the pad by a pressure p(r), the friction torque per face
//! is μ·∫ r·p dA = μ·F·r_e. Two limits bound a real lining [pub: Shigley ch. 16; Ugural ch. 13]:
//!
//! * **uniform pressure** (new, rigid lining): p = F/A, so r_e = ∫ r dA / A;
//! * **uniform wear** (bedded in, wear ∝ p·v so p·r = const): p = c/r, so r_e = A / ∫ (1/r) dA.
//!
//! A bedding fraction b ∈ [0, 1] shares the same clamp force between the two distributions,
//! p = (1 − b)·p_up + b·p_uw, so r_e(b) = (1 − b)·r_up + b·r_uw exactly.

use super::error::{self, GeometryError, Parameter};

/// Which pressure distribution is assumed over the pad.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum PressureModel {
    /// p = const: a new, rigid lining (bedding 0).
    UniformPressure,
    /// p·r = const: a lining bedded in under uniform wear (bedding 1).
    UniformWear,
}

/// The effective friction radius of one face under each pressure model, metres.
///
/// For every pad in this module `uniform_wear_m ≤ uniform_pressure_m` (Chebyshev's inequality
/// on r and 1/r), both lie between the pad's smallest and largest radius.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct EffectiveRadii {
    /// r_e under uniform pressure, m.
    pub uniform_pressure_m: f64,
    /// r_e under uniform wear, m.
    pub uniform_wear_m: f64,
}

impl EffectiveRadii {
    /// r_e under one pressure model, m.
    pub fn get(&self, model: PressureModel) -> f64 {
        match model {
            PressureModel::UniformPressure => self.uniform_pressure_m,
            PressureModel::UniformWear => self.uniform_wear_m,
        }
    }

    /// r_e at bedding fraction `bedding` (0 = new, uniform pressure; 1 = bedded, uniform wear):
    /// (1 − b)·r_up + b·r_uw, metres. Exact at both ends; monotonic in b to within rounding
    /// (a few ulps).
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`] or [`GeometryError::BeddingOutOfRange`] for `bedding`
    /// outside [0, 1].
    ///
    /// ```
    /// use clampwise_core::geometry::EffectiveRadii;
    /// let r = EffectiveRadii { uniform_pressure_m: 0.0816, uniform_wear_m: 0.0800 };
    /// assert!((r.at_bedding(0.5)? - 0.0808).abs() < 1e-12);
    /// assert!(r.at_bedding(1.5).is_err());
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn at_bedding(&self, bedding: f64) -> Result<f64, GeometryError> {
        let b = error::bedding(Parameter::Bedding, bedding)?;
        Ok((1.0 - b) * self.uniform_pressure_m + b * self.uniform_wear_m)
    }
}

/// The area integrals over one pad face that fix its effective radii (origin on the disc axis).
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct PadIntegrals {
    /// A = ∫ dA, m².
    pub area_m2: f64,
    /// ∫ r dA, m³ (first radial moment).
    pub radius_moment_m3: f64,
    /// ∫ (1/r) dA, m (inverse radial moment; finite even when the pad reaches the axis).
    pub inverse_radius_moment_m: f64,
}

impl PadIntegrals {
    /// r_up = ∫ r dA / A and r_uw = A / ∫ (1/r) dA, metres.
    pub fn effective_radii(&self) -> EffectiveRadii {
        EffectiveRadii {
            uniform_pressure_m: self.radius_moment_m3 / self.area_m2,
            uniform_wear_m: self.area_m2 / self.inverse_radius_moment_m,
        }
    }

    /// Peak pressure under a pressure model for clamp force `clamp_force_n` (Pa), given the
    /// pad's smallest radius `min_radius_m` (where uniform wear puts its peak).
    /// Uniform pressure: F/A; uniform wear: F / (r_min·∫ (1/r) dA). Returns +∞ for uniform
    /// wear on a pad that reaches the axis (r_min = 0), where p ∝ 1/r has no finite peak.
    ///
    /// ```
    /// use clampwise_core::geometry::{Annulus, PressureModel};
    /// use std::f64::consts::PI;
    /// // Uniform wear on an annulus \[pub: Shigley ch. 16\]: F = 2π·p_max·Ri·(Ro − Ri).
    /// let (ri, ro, force) = (0.06, 0.10, 10_000.0);
    /// let i = Annulus::new(ri, ro)?.integrals();
    /// let p_max = i.peak_pressure_pa(PressureModel::UniformWear, force, ri);
    /// assert!((p_max - force / (2.0 * PI * ri * (ro - ri))).abs() < 1e-6);
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn peak_pressure_pa(
        &self,
        model: PressureModel,
        clamp_force_n: f64,
        min_radius_m: f64,
    ) -> f64 {
        match model {
            PressureModel::UniformPressure => clamp_force_n / self.area_m2,
            PressureModel::UniformWear => {
                clamp_force_n / (min_radius_m * self.inverse_radius_moment_m)
            }
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    #[test]
    fn blend_is_exact_at_both_ends() {
        let r = EffectiveRadii {
            uniform_pressure_m: 0.3,
            uniform_wear_m: 0.1,
        };
        assert_eq!(r.at_bedding(0.0).unwrap(), 0.3);
        assert_eq!(r.at_bedding(1.0).unwrap(), 0.1);
        assert!((r.at_bedding(0.25).unwrap() - 0.25).abs() < 1e-15);
        assert!(r.at_bedding(-0.01).is_err());
        assert!(r.at_bedding(f64::NAN).is_err());
        assert_eq!(r.get(PressureModel::UniformWear), 0.1);
    }
}
