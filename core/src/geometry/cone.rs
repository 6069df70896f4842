//! Cone contacts (cone clutches, cone brakes) of half-angle α.
//!
//! With the clamp force F acting along the axis and the pad described by its projection on a
//! plane normal to the axis, the normal force on the cone surface is F/sin α, so the torque is
//! T = μ·F·r_e/sin α [pub: Shigley ch. 16, cone clutches: μF(Do³ − Di³)/(3 sin α (Do² − Di²))
//! under uniform pressure and μF(Do + Di)/(4 sin α) under uniform wear]. Uniform wear keeps
//! p·r = const on the cone as on a flat face, so r_e is that of the projected shape under
//! either pressure model, and the lever arm per unit axial force is r_e/sin α. Half-angles in
//! practice are about 8–18° \[practice\]; the model accepts any α in (0°, 90°) exclusive.

use core::f64::consts::FRAC_PI_2;

use super::error::{self, GeometryError, Parameter};

/// A validated cone half-angle α ∈ (0, π/2), radians.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ConeAngle {
    half_angle_rad: f64,
    sin: f64,
}

impl ConeAngle {
    /// A cone half-angle, radians (convert degrees with `f64::to_radians`).
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`] or [`GeometryError::ConeAngleOutOfRange`] unless
    /// 0 < α < π/2.
    ///
    /// ```
    /// use clampwise_core::geometry::ConeAngle;
    /// let a = ConeAngle::new(12f64.to_radians())?;
    /// assert!((a.lever_arm_factor() - 1.0 / 12f64.to_radians().sin()).abs() < 1e-12);
    /// assert!(ConeAngle::new(90f64.to_radians()).is_err());
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(half_angle_rad: f64) -> Result<Self, GeometryError> {
        let half_angle_rad = error::finite(Parameter::ConeHalfAngle, half_angle_rad)?;
        if !(half_angle_rad > 0.0 && half_angle_rad < FRAC_PI_2) {
            return Err(GeometryError::ConeAngleOutOfRange { half_angle_rad });
        }
        Ok(Self {
            half_angle_rad,
            sin: libm::sin(half_angle_rad),
        })
    }

    /// α, rad.
    pub fn half_angle_rad(&self) -> f64 {
        self.half_angle_rad
    }

    /// 1/sin α: lever arm per unit effective radius (> 1).
    pub fn lever_arm_factor(&self) -> f64 {
        1.0 / self.sin
    }

    /// Lever arm per unit axial force for a projected effective radius `effective_radius_m`:
    /// r_e/sin α, m.
    pub fn lever_arm_m(&self, effective_radius_m: f64) -> f64 {
        effective_radius_m / self.sin
    }
}
