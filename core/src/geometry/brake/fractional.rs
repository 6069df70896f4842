//! The linear-fractional gain shared by shoes, blocks and cones: g(μ) = A·μ / (B − C·μ).
//!
//! Every lever balance with one normal force N reduces to this form: the actuating force F
//! balances N·B against the friction moment ±μ·N·C, and the torque is μ·N·A/F·F. C > 0 means
//! friction helps the actuator (self-energising; locks at μ = B/C), C < 0 means it opposes it,
//! C = 0 leaves g linear in μ.

use super::error::{self, BrakeError};

/// g(μ) = A·μ / (B − C·μ) with A > 0, B > 0; C of either sign.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct FractionalGain {
    pub(crate) torque_arm: f64,
    pub(crate) base: f64,
    pub(crate) energising: f64,
}

impl FractionalGain {
    /// μ at which B − C·μ reaches zero, if C > 0.
    pub(crate) fn locking_coefficient(&self) -> Option<f64> {
        (self.energising > 0.0).then(|| self.base / self.energising)
    }

    /// B − C·μ for a validated μ, or the self-locking error when it is not above zero.
    pub(crate) fn denominator(&self, mu: f64) -> Result<f64, BrakeError> {
        let mu = error::friction_coefficient(mu)?;
        let d = self.base - self.energising * mu;
        match self.locking_coefficient() {
            Some(locking) if d <= 0.0 || mu >= locking => Err(BrakeError::SelfLocking {
                friction_coefficient: mu,
                locking_coefficient: locking,
            }),
            _ => Ok(d),
        }
    }

    /// (g, dg/dμ) at μ. dg/dμ = A·B / (B − C·μ)².
    pub(crate) fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        let d = self.denominator(mu)?;
        Ok((
            self.torque_arm * mu / d,
            self.torque_arm * self.base / (d * d),
        ))
    }
}
