//! Band brakes: a flexible band wrapped over an angle φ, tensions related by the capstan
//! equation P₁ = P₂·e^{μφ} (P₁ tight side) [pub: capstan (Euler–Eytelwein) equation], torque
//! T = (P₁ − P₂)·r.
//!
//! ```text
//! simple, slack end on the lever:  F·L = P₂·s  →  g = (L/s)·r·(e^{μφ} − 1)      S ≥ 1
//! simple, tight end on the lever:  F·L = P₁·s  →  g = (L/s)·r·(1 − e^{−μφ})     S ≤ 1
//! differential, tight end aids F:  F·L = P₂·s₂ − P₁·s₁
//!                                  →  g = L·r·(e^{μφ} − 1)/(s₂ − s₁·e^{μφ})
//!                                  locks at e^{μφ} = s₂/s₁, μ = ln(s₂/s₁)/φ
//! differential, tight end opposes: F·L = P₁·s₁ − P₂·s₂
//!                                  →  g = L·r·(e^{μφ} − 1)/(s₁·e^{μφ} − s₂), s₁ > s₂
//! ```
//!
//! (s₁ = `tight_end_arm_m`, s₂ = `slack_end_arm_m`, L = `actuation_arm_m`.) As φ → 0 every
//! form tends to g ≈ k·r·μ·φ with k the lever ratio (L/s for the simple band, L/|s₂ − s₁|
//! for the differential band). e^{μφ} − 1 is evaluated with `expm1`, so that limit keeps its
//! precision.

use core::f64::consts::TAU;

use super::error::{self, BrakeError, BrakeParameter};
use super::gain::TorqueGain;

/// Which end of a simple band is fixed to the lever (the other sits at the lever pivot).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum LeverEnd {
    /// The slack end: the actuator sets P₂ and the wrap multiplies it (self-energising).
    Slack,
    /// The tight end: the actuator sets P₁ directly (de-energising).
    Tight,
}

/// Whether the tight end's moment about the lever pivot helps or resists the actuator.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum TightEndMoment {
    /// Helps apply the band (the self-energising direction; can lock).
    AidsActuator,
    /// Resists the actuator (the reverse direction of rotation).
    OpposesActuator,
}

/// Drum radius and wrap angle, validated.
fn drum_and_wrap(drum_radius_m: f64, wrap_angle_rad: f64) -> Result<(f64, f64), BrakeError> {
    let r = error::positive(BrakeParameter::DrumRadius, drum_radius_m)?;
    // A band must leave the drum at both ends: at most one turn.
    let phi = error::between(BrakeParameter::WrapAngle, wrap_angle_rad, 0.0, TAU)?;
    Ok((r, phi))
}

/// e^{μφ} − 1 and e^{μφ} for a validated μ; an error when e^{μφ} overflows.
fn wrap_factor(mu: f64, phi: f64) -> Result<(f64, f64), BrakeError> {
    let mu = error::friction_coefficient(mu)?;
    let growth = libm::expm1(mu * phi);
    if growth.is_finite() {
        Ok((growth, growth + 1.0))
    } else {
        Err(BrakeError::OutOfRange {
            parameter: BrakeParameter::FrictionCoefficient,
            value: mu,
            above: 0.0,
            below: 709.0 / phi,
        })
    }
}

/// A simple band brake: one end at the lever pivot, the other on the lever at arm s.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SimpleBand {
    drum_radius_m: f64,
    wrap_angle_rad: f64,
    lever_ratio: f64,
    lever_end: LeverEnd,
}

impl SimpleBand {
    /// r (`drum_radius_m`), φ (`wrap_angle_rad`, 0 < φ < 2π), L (`actuation_arm_m`), s
    /// (`band_arm_m`), and which end is on the lever.
    ///
    /// # Errors
    /// [`BrakeError`] naming the parameter unless lengths are finite and above zero and φ is
    /// in range.
    ///
    /// ```
    /// use clampwise_core::geometry::brake::{LeverEnd, SimpleBand, TorqueGain};
    /// let band = SimpleBand::new(0.225, 270f64.to_radians(), 0.5, 0.1, LeverEnd::Slack)?;
    /// let g = band.torque_per_force(0.25)?;
    /// let expected = 5.0 * 0.225 * ((0.25 * 270f64.to_radians()).exp() - 1.0);
    /// assert!((g - expected).abs() < 1e-12 && band.sensitivity(0.25)? > 1.0);
    /// # Ok::<(), clampwise_core::geometry::brake::BrakeError>(())
    /// ```
    pub fn new(
        drum_radius_m: f64,
        wrap_angle_rad: f64,
        actuation_arm_m: f64,
        band_arm_m: f64,
        lever_end: LeverEnd,
    ) -> Result<Self, BrakeError> {
        let (drum_radius_m, wrap_angle_rad) = drum_and_wrap(drum_radius_m, wrap_angle_rad)?;
        let l = error::positive(BrakeParameter::ActuationArm, actuation_arm_m)?;
        let s = error::positive(BrakeParameter::BandArm, band_arm_m)?;
        Ok(Self {
            drum_radius_m,
            wrap_angle_rad,
            lever_ratio: l / s,
            lever_end,
        })
    }

    /// Tight- and slack-side tensions (P₁, P₂) per unit actuating force at μ.
    ///
    /// # Errors
    /// As [`TorqueGain::gain_and_slope`].
    pub fn tensions_per_force(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        let (_, e) = wrap_factor(mu, self.wrap_angle_rad)?;
        let lever = self.lever_ratio;
        Ok(match self.lever_end {
            LeverEnd::Slack => (lever * e, lever),
            LeverEnd::Tight => (lever, lever / e),
        })
    }
}

impl TorqueGain for SimpleBand {
    fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        let (growth, e) = wrap_factor(mu, self.wrap_angle_rad)?;
        let k = self.lever_ratio * self.drum_radius_m;
        let phi = self.wrap_angle_rad;
        Ok(match self.lever_end {
            LeverEnd::Slack => (k * growth, k * phi * e),
            LeverEnd::Tight => (k * growth / e, k * phi / e),
        })
    }

    fn locking_coefficient(&self) -> Option<f64> {
        None
    }
}

/// A differential band brake: both ends on the lever, on opposite sides of its pivot.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DifferentialBand {
    drum_radius_m: f64,
    wrap_angle_rad: f64,
    actuation_arm_m: f64,
    tight_end_arm_m: f64,
    slack_end_arm_m: f64,
    tight_end: TightEndMoment,
}

impl DifferentialBand {
    /// r, φ, L, s₁ (`tight_end_arm_m`), s₂ (`slack_end_arm_m`) and the sense of the tight
    /// end's moment.
    ///
    /// # Errors
    /// [`BrakeError`] naming the parameter unless lengths are finite and above zero, φ is in
    /// range, and at μ = 0 the actuator has to pull: s₁ < s₂ when the tight end aids it,
    /// s₁ > s₂ when it opposes (otherwise the band would apply itself with no friction, or
    /// never).
    ///
    /// ```
    /// use clampwise_core::geometry::brake::{DifferentialBand, TightEndMoment, TorqueGain};
    /// let band = DifferentialBand::new(
    ///     0.25, 225f64.to_radians(), 0.75, 0.03, 0.12, TightEndMoment::AidsActuator,
    /// )?;
    /// let locking = band.locking_coefficient().unwrap();
    /// assert!((locking - 4f64.ln() / 225f64.to_radians()).abs() < 1e-15);
    /// assert!(band.torque_per_force(locking).is_err());
    /// # Ok::<(), clampwise_core::geometry::brake::BrakeError>(())
    /// ```
    pub fn new(
        drum_radius_m: f64,
        wrap_angle_rad: f64,
        actuation_arm_m: f64,
        tight_end_arm_m: f64,
        slack_end_arm_m: f64,
        tight_end: TightEndMoment,
    ) -> Result<Self, BrakeError> {
        let (drum_radius_m, wrap_angle_rad) = drum_and_wrap(drum_radius_m, wrap_angle_rad)?;
        let actuation_arm_m = error::positive(BrakeParameter::ActuationArm, actuation_arm_m)?;
        let s2 = error::positive(BrakeParameter::SlackEndArm, slack_end_arm_m)?;
        let s1 = match tight_end {
            TightEndMoment::AidsActuator => {
                error::between(BrakeParameter::TightEndArm, tight_end_arm_m, 0.0, s2)?
            }
            TightEndMoment::OpposesActuator => error::between(
                BrakeParameter::TightEndArm,
                tight_end_arm_m,
                s2,
                f64::INFINITY,
            )?,
        };
        Ok(Self {
            drum_radius_m,
            wrap_angle_rad,
            actuation_arm_m,
            tight_end_arm_m: s1,
            slack_end_arm_m: s2,
            tight_end,
        })
    }

    /// The lever balance's denominator (F·L per unit P₂), validated against self-locking.
    fn denominator(&self, mu: f64, e: f64) -> Result<f64, BrakeError> {
        let (s1, s2) = (self.tight_end_arm_m, self.slack_end_arm_m);
        match self.tight_end {
            TightEndMoment::AidsActuator => {
                let d = s2 - s1 * e;
                match self.locking_coefficient() {
                    Some(locking) if d <= 0.0 || mu >= locking => Err(BrakeError::SelfLocking {
                        friction_coefficient: mu,
                        locking_coefficient: locking,
                    }),
                    _ => Ok(d),
                }
            }
            TightEndMoment::OpposesActuator => Ok(s1 * e - s2),
        }
    }

    /// Tight- and slack-side tensions (P₁, P₂) per unit actuating force at μ.
    ///
    /// # Errors
    /// As [`TorqueGain::gain_and_slope`].
    pub fn tensions_per_force(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        let (_, e) = wrap_factor(mu, self.wrap_angle_rad)?;
        let slack = self.actuation_arm_m / self.denominator(mu, e)?;
        Ok((slack * e, slack))
    }
}

impl TorqueGain for DifferentialBand {
    fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        let (growth, e) = wrap_factor(mu, self.wrap_angle_rad)?;
        let d = self.denominator(mu, e)?;
        let k = self.actuation_arm_m * self.drum_radius_m;
        // d/dμ of (e − 1)/d is φ·e·|s₂ − s₁|/d² in both senses.
        let spread = libm::fabs(self.slack_end_arm_m - self.tight_end_arm_m);
        Ok((
            k * growth / d,
            k * self.wrap_angle_rad * e * spread / (d * d),
        ))
    }

    fn locking_coefficient(&self) -> Option<f64> {
        match self.tight_end {
            TightEndMoment::AidsActuator => {
                Some(libm::log(self.slack_end_arm_m / self.tight_end_arm_m) / self.wrap_angle_rad)
            }
            TightEndMoment::OpposesActuator => None,
        }
    }
}
