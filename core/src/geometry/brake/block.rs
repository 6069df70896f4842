//! Short (block) shoes: a rigid block on a lever, short enough that the normal force acts at
//! one point.
//!
//! Moments about the lever pivot: F·a = N·b ∓ μ·N·c, so N = F·a / (b ∓ μ·c) and
//! T = μ·N·r [pub: Norton, Machine Design – An Integrated Approach, short-shoe drum brakes,
//! N/F = a/(b − μc)]. The minus sign is the leading case (friction moment about the pivot adds to the
//! actuating moment); it locks at μ = b/c.

use super::error::{self, BrakeError, BrakeParameter};
use super::fractional::FractionalGain;
use super::gain::TorqueGain;
use super::shoe::ShoeAction;

/// Lever geometry of a block shoe, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct BlockGeometry {
    /// `drum_radius_m`: r, m.
    pub drum_radius_m: f64,
    /// `actuation_arm_m`: a, lever arm of the actuating force about the lever pivot, m.
    pub actuation_arm_m: f64,
    /// `normal_arm_m`: b, lever arm of the block's normal force about the lever pivot, m.
    pub normal_arm_m: f64,
    /// `friction_offset_m`: c ≥ 0, distance from the lever pivot to the line of the friction
    /// force (the drum tangent at the block), m. Zero: friction has no moment, g is linear.
    pub friction_offset_m: f64,
}

/// A validated block shoe.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BlockShoe {
    geometry: BlockGeometry,
    action: ShoeAction,
}

impl BlockShoe {
    /// Validates the geometry.
    ///
    /// # Errors
    /// [`BrakeError`] naming the parameter: r, a, b finite and above zero, c finite and not
    /// negative.
    ///
    /// ```
    /// use clampwise_core::geometry::brake::{BlockGeometry, BlockShoe, ShoeAction, TorqueGain};
    /// let geometry = BlockGeometry {
    ///     drum_radius_m: 0.2,
    ///     actuation_arm_m: 0.6,
    ///     normal_arm_m: 0.2,
    ///     friction_offset_m: 0.05,
    /// };
    /// let block = BlockShoe::new(geometry, ShoeAction::Leading)?;
    /// // N = F·a/(b − μc) = 0.6/(0.2 − 0.3·0.05) per newton; T = μ·N·r.
    /// let expected = 0.3 * 0.6 / (0.2 - 0.3 * 0.05) * 0.2;
    /// assert!((block.torque_per_force(0.3)? - expected).abs() < 1e-12);
    /// assert_eq!(block.locking_coefficient(), Some(4.0));
    /// # Ok::<(), clampwise_core::geometry::brake::BrakeError>(())
    /// ```
    pub fn new(geometry: BlockGeometry, action: ShoeAction) -> Result<Self, BrakeError> {
        error::positive(BrakeParameter::DrumRadius, geometry.drum_radius_m)?;
        error::positive(BrakeParameter::ActuationArm, geometry.actuation_arm_m)?;
        error::positive(BrakeParameter::NormalArm, geometry.normal_arm_m)?;
        let c = error::finite(BrakeParameter::FrictionOffset, geometry.friction_offset_m)?;
        if c < 0.0 {
            return Err(BrakeError::Negative {
                parameter: BrakeParameter::FrictionOffset,
                value: c,
            });
        }
        Ok(Self { geometry, action })
    }

    /// The geometry it was built from.
    pub fn geometry(&self) -> BlockGeometry {
        self.geometry
    }

    /// N/F = a / (b ∓ μ·c): normal force on the block per unit actuating force.
    ///
    /// # Errors
    /// As [`TorqueGain::gain_and_slope`].
    pub fn normal_force_per_force(&self, mu: f64) -> Result<f64, BrakeError> {
        let d = self.fractional().denominator(mu)?;
        Ok(self.geometry.actuation_arm_m / d)
    }

    fn fractional(&self) -> FractionalGain {
        let g = &self.geometry;
        let sign = match self.action {
            ShoeAction::Leading => 1.0,
            ShoeAction::Trailing => -1.0,
        };
        FractionalGain {
            torque_arm: g.drum_radius_m * g.actuation_arm_m,
            base: g.normal_arm_m,
            energising: sign * g.friction_offset_m,
        }
    }
}

impl TorqueGain for BlockShoe {
    fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        self.fractional().gain_and_slope(mu)
    }

    fn locking_coefficient(&self) -> Option<f64> {
        self.fractional().locking_coefficient()
    }
}
