//! Two shoes on one drum driven by one actuating force (a spring or thruster pushing both
//! apart or pulling both together): the torques add, F is common.

use super::error::BrakeError;
use super::gain::TorqueGain;

/// Two shoes sharing one actuating force F: g = g₁ + g₂; the pair locks when either shoe
/// does.
///
/// ```
/// use clampwise_core::geometry::brake::{
///     BlockGeometry, BlockShoe, ShoeAction, ShoePair, TorqueGain,
/// };
/// let geometry = BlockGeometry {
///     drum_radius_m: 0.2,
///     actuation_arm_m: 0.6,
///     normal_arm_m: 0.2,
///     friction_offset_m: 0.05,
/// };
/// let pair = ShoePair::new(
///     BlockShoe::new(geometry, ShoeAction::Leading)?,
///     BlockShoe::new(geometry, ShoeAction::Trailing)?,
/// );
/// let s = pair.sensitivity(0.4)?;
/// assert!(s > 1.0 && s < pair.first().sensitivity(0.4)?);
/// # Ok::<(), clampwise_core::geometry::brake::BrakeError>(())
/// ```
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ShoePair<A, B> {
    first: A,
    second: B,
}

impl<A: TorqueGain, B: TorqueGain> ShoePair<A, B> {
    /// Two shoes actuated by the same force.
    pub fn new(first: A, second: B) -> Self {
        Self { first, second }
    }

    /// The first shoe.
    pub fn first(&self) -> &A {
        &self.first
    }

    /// The second shoe.
    pub fn second(&self) -> &B {
        &self.second
    }
}

impl<A: TorqueGain, B: TorqueGain> TorqueGain for ShoePair<A, B> {
    fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        let (g1, s1) = self.first.gain_and_slope(mu)?;
        let (g2, s2) = self.second.gain_and_slope(mu)?;
        Ok((g1 + g2, s1 + s2))
    }

    fn locking_coefficient(&self) -> Option<f64> {
        match (
            self.first.locking_coefficient(),
            self.second.locking_coefficient(),
        ) {
            (Some(a), Some(b)) => Some(a.min(b)),
            (a, b) => a.or(b),
        }
    }
}
