//! Cone engagement with the axial friction term.
//!
//! [`super::super::ConeAngle`] and [`super::super::Contact`] give the running torque
//! T = μ·F·r_e / sin α, which neglects friction along the cone's generatrix. While the cone
//! slides axially that friction adds to (engaging) or subtracts from (withdrawing) the axial
//! load: F = N·(sin α ± μ·cos α) with T = μ·N·r_e
//! [mem: cone clutches in machine-design texts, e.g. Juvinall & Marshek; Norton]. So
//!
//! ```text
//! engaging:     g = μ·r_e / (sin α + μ·cos α)   ≤ μ·r_e / sin α, S ≤ 1
//! withdrawing:  g = μ·r_e / (sin α − μ·cos α)   ≥ μ·r_e / sin α, S ≥ 1
//! self-locking: μ ≥ tan α — once pressed in, the cone stays jammed with no axial force
//! ```

use super::super::cone::ConeAngle;
use super::error::{self, BrakeError, BrakeParameter};
use super::fractional::FractionalGain;
use super::gain::TorqueGain;

/// Which way the cone slides axially while the torque is measured.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ConePhase {
    /// Being pressed in: axial friction resists the engaging force.
    Engaging,
    /// Backing out under a falling axial force: axial friction holds the cone in.
    Withdrawing,
}

/// A cone contact evaluated with the axial friction term.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ConeEngagement {
    angle: ConeAngle,
    mean_radius_m: f64,
    phase: ConePhase,
}

impl ConeEngagement {
    /// A cone of half-angle `angle` and effective (projected) friction radius
    /// `mean_radius_m`, e.g. from [`super::super::Contact::effective_radius`].
    ///
    /// # Errors
    /// [`BrakeError`] naming `mean_radius_m` unless it is finite and above zero.
    ///
    /// ```
    /// use clampwise_core::geometry::ConeAngle;
    /// use clampwise_core::geometry::brake::{ConeEngagement, ConePhase, TorqueGain};
    /// let alpha = ConeAngle::new(12f64.to_radians())?;
    /// let cone = ConeEngagement::new(alpha, 0.1, ConePhase::Engaging).unwrap();
    /// let g = cone.torque_per_force(0.3).unwrap();
    /// let (s, c) = (12f64.to_radians().sin(), 12f64.to_radians().cos());
    /// assert!((g - 0.3 * 0.1 / (s + 0.3 * c)).abs() < 1e-15);
    /// assert!((cone.self_locking_coefficient() - 12f64.to_radians().tan()).abs() < 1e-15);
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(angle: ConeAngle, mean_radius_m: f64, phase: ConePhase) -> Result<Self, BrakeError> {
        let mean_radius_m = error::positive(BrakeParameter::MeanRadius, mean_radius_m)?;
        Ok(Self {
            angle,
            mean_radius_m,
            phase,
        })
    }

    /// tan α: at or above this μ the cone holds itself in once pressed home.
    pub fn self_locking_coefficient(&self) -> f64 {
        libm::tan(self.angle.half_angle_rad())
    }

    /// N/F: normal force on the cone face per unit axial force at μ.
    ///
    /// # Errors
    /// As [`TorqueGain::gain_and_slope`].
    pub fn normal_force_per_force(&self, mu: f64) -> Result<f64, BrakeError> {
        let d = self.fractional().denominator(mu)?;
        Ok(1.0 / d)
    }

    fn fractional(&self) -> FractionalGain {
        let alpha = self.angle.half_angle_rad();
        let sign = match self.phase {
            ConePhase::Engaging => -1.0,
            ConePhase::Withdrawing => 1.0,
        };
        FractionalGain {
            torque_arm: self.mean_radius_m,
            base: libm::sin(alpha),
            energising: sign * libm::cos(alpha),
        }
    }
}

impl TorqueGain for ConeEngagement {
    fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        self.fractional().gain_and_slope(mu)
    }

    fn locking_coefficient(&self) -> Option<f64> {
        self.fractional().locking_coefficient()
    }
}
