//! The one question every non-linear contact answers: torque per unit measured actuating force
//! as a function of μ, its slope, and where (if anywhere) it locks.

use super::error::BrakeError;

/// Torque per unit actuating force g(μ) = T/F of a brake or clutch whose torque is not
/// linear in μ, m (N·m per N).
///
/// Every model here has g(0) = 0 and g′(0) > 0, so the sensitivity tends to 1 as μ → 0.
pub trait TorqueGain {
    /// (g, dg/dμ) at `mu`: g in m, dg/dμ in m per unit μ.
    ///
    /// # Errors
    /// [`BrakeError::NotFinite`] or [`BrakeError::Negative`] for a bad μ;
    /// [`BrakeError::SelfLocking`] when μ reaches [`Self::locking_coefficient`].
    fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError>;

    /// The μ at which the brake locks (actuating force needed falls to zero), if it can lock.
    fn locking_coefficient(&self) -> Option<f64>;

    /// g(μ) = T/F, m.
    ///
    /// # Errors
    /// As [`Self::gain_and_slope`].
    fn torque_per_force(&self, mu: f64) -> Result<f64, BrakeError> {
        self.gain_and_slope(mu).map(|(g, _)| g)
    }

    /// S(μ) = (dg/dμ)·μ/g: a relative error δμ/μ in the friction coefficient becomes
    /// S·δμ/μ in the torque. S > 1 for a self-energising contact, S < 1 for a de-energising
    /// one, S = 1 when torque is linear in μ. Taken as its limit 1 at μ = 0.
    ///
    /// # Errors
    /// As [`Self::gain_and_slope`].
    fn sensitivity(&self, mu: f64) -> Result<f64, BrakeError> {
        let (g, slope) = self.gain_and_slope(mu)?;
        Ok(if g > 0.0 { slope * mu / g } else { 1.0 })
    }
}
