//! Long pivoted shoes on a drum, internal (expanding) or external (contracting).
//!
//! The shoe turns about a pin at distance a from the drum centre; θ is measured from the
//! centre–pin line. A rigid shoe wears in proportion to its normal displacement, so the pressure
//! follows p = p_a·sin θ / sin θ_a, θ_a being where sin θ peaks on the lining
//! [mem: Shigley ch. 16, internal expanding rim brakes]. With q = p_a·b·r / sin θ_a:
//!
//! ```text
//! M_f = μ·q·I_f,  I_f = ∫ sin θ (r − a cos θ) dθ = r(cos θ₁ − cos θ₂) − (a/2)(sin²θ₂ − sin²θ₁)
//! M_N =   q·a·I_N, I_N = ∫ sin²θ dθ             = (θ₂ − θ₁)/2 − (sin 2θ₂ − sin 2θ₁)/4
//! T   = μ·q·r·K,   K   = cos θ₁ − cos θ₂
//! F·c = M_N ∓ M_f   (− leading, + trailing)
//! g(μ) = T/F = c·r·K·μ / (a·I_N ∓ μ·|I_f|),  leading shoe locks at μ = a·I_N / |I_f|
//! ```
//!
//! External shoes obey the same integrals (the friction moment arm about the pin is still
//! r − a cos θ); which of a pair leads follows the drum's direction of rotation.

use core::f64::consts::{FRAC_PI_2, PI};

use super::error::{self, BrakeError, BrakeParameter};
use super::fractional::FractionalGain;
use super::gain::TorqueGain;

/// Where the shoe sits relative to the drum.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Mounting {
    /// An expanding shoe inside the drum: its pin lies inside the rubbing radius (a < r).
    Internal,
    /// A contracting shoe outside the drum: its pin lies outside the rubbing radius (a > r).
    External,
}

/// How the drum's rotation loads a shoe.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ShoeAction {
    /// Self-energising: the friction moment about the pin adds to the actuating moment.
    Leading,
    /// De-energising: the friction moment about the pin opposes the actuating moment.
    Trailing,
}

impl ShoeAction {
    /// +1 for a leading shoe, −1 for a trailing one: the sign of the friction term in the
    /// lever balance's denominator, B − sign·μ·C.
    fn energising_sign(self) -> f64 {
        match self {
            Self::Leading => 1.0,
            Self::Trailing => -1.0,
        }
    }
}

/// Geometry of one long pivoted shoe, SI units.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ShoeGeometry {
    /// `drum_radius_m`: r, radius of the drum's rubbing surface, m.
    pub drum_radius_m: f64,
    /// `pin_distance_m`: a, drum centre to pivot pin, m.
    pub pin_distance_m: f64,
    /// `arc_start_rad`: θ₁, lining start from the centre–pin line, 0 ≤ θ₁ < θ₂, rad.
    pub arc_start_rad: f64,
    /// `arc_end_rad`: θ₂, lining end, θ₁ < θ₂ < π, rad.
    pub arc_end_rad: f64,
    /// `face_width_m`: b, axial width of the lining, m (sets the pressure, not g).
    pub face_width_m: f64,
    /// `actuation_arm_m`: c, lever arm of the actuating force about the pin, m.
    pub actuation_arm_m: f64,
}

/// Moments about the pin, torque and actuating force of one shoe at a given peak pressure.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ShoeMoments {
    /// M_f: moment of the friction forces about the pin, N·m (always ≥ 0 here; its direction
    /// is what makes a shoe leading or trailing).
    pub friction_moment_nm: f64,
    /// M_N: moment of the normal forces about the pin, N·m.
    pub normal_moment_nm: f64,
    /// T: braking torque on the drum, N·m.
    pub torque_nm: f64,
    /// F: actuating force at lever arm c, N.
    pub actuating_force_n: f64,
}

/// A validated long pivoted shoe.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PivotedShoe {
    geometry: ShoeGeometry,
    mounting: Mounting,
    action: ShoeAction,
    sin_peak: f64,
    friction_integral: f64,
    normal_integral: f64,
    arc_cosine_span: f64,
}

impl PivotedShoe {
    /// Validates the geometry and precomputes the moment integrals.
    ///
    /// # Errors
    /// [`BrakeError`] naming the parameter: lengths must be finite and above zero; the pin
    /// must lie inside the drum for [`Mounting::Internal`] (0 < a < r) and outside it for
    /// [`Mounting::External`] (a > r); 0 ≤ θ₁ < θ₂ < π, so the pressure sin θ is positive
    /// over the lining.
    ///
    /// ```
    /// use clampwise_core::geometry::brake::{
    ///     Mounting, PivotedShoe, ShoeAction, ShoeGeometry, TorqueGain,
    /// };
    /// // A fictional internal expanding shoe, 300 mm drum, lining 10°…130°.
    /// let shoe = PivotedShoe::new(
    ///     ShoeGeometry {
    ///         drum_radius_m: 0.150,
    ///         pin_distance_m: 0.115,
    ///         arc_start_rad: 10f64.to_radians(),
    ///         arc_end_rad: 130f64.to_radians(),
    ///         face_width_m: 0.040,
    ///         actuation_arm_m: 0.210,
    ///     },
    ///     Mounting::Internal,
    ///     ShoeAction::Leading,
    /// )?;
    /// let g = shoe.torque_per_force(0.35)?;
    /// assert!(g > 0.35 * 0.150 && shoe.sensitivity(0.35)? > 1.0);
    /// assert!(shoe.torque_per_force(shoe.locking_coefficient().unwrap()).is_err());
    /// # Ok::<(), clampwise_core::geometry::brake::BrakeError>(())
    /// ```
    pub fn new(
        geometry: ShoeGeometry,
        mounting: Mounting,
        action: ShoeAction,
    ) -> Result<Self, BrakeError> {
        let r = error::positive(BrakeParameter::DrumRadius, geometry.drum_radius_m)?;
        let a = match mounting {
            Mounting::Internal => {
                error::between(BrakeParameter::PinDistance, geometry.pin_distance_m, 0.0, r)?
            }
            Mounting::External => error::between(
                BrakeParameter::PinDistance,
                geometry.pin_distance_m,
                r,
                f64::INFINITY,
            )?,
        };
        let start = error::finite(BrakeParameter::ArcStart, geometry.arc_start_rad)?;
        if start < 0.0 {
            return Err(BrakeError::Negative {
                parameter: BrakeParameter::ArcStart,
                value: start,
            });
        }
        let end = error::between(BrakeParameter::ArcEnd, geometry.arc_end_rad, 0.0, PI)?;
        if end <= start {
            return Err(BrakeError::ArcEndNotAfterStart {
                start_rad: start,
                end_rad: end,
            });
        }
        error::positive(BrakeParameter::FaceWidth, geometry.face_width_m)?;
        error::positive(BrakeParameter::ActuationArm, geometry.actuation_arm_m)?;

        let (s1, c1) = (libm::sin(start), libm::cos(start));
        let (s2, c2) = (libm::sin(end), libm::cos(end));
        let sin_peak = if start <= FRAC_PI_2 && end >= FRAC_PI_2 {
            1.0
        } else {
            s1.max(s2)
        };
        Ok(Self {
            geometry,
            mounting,
            action,
            sin_peak,
            friction_integral: r * (c1 - c2) - 0.5 * a * (s2 * s2 - s1 * s1),
            normal_integral: 0.5 * (end - start)
                - 0.25 * (libm::sin(2.0 * end) - libm::sin(2.0 * start)),
            arc_cosine_span: c1 - c2,
        })
    }

    /// The geometry it was built from.
    pub fn geometry(&self) -> ShoeGeometry {
        self.geometry
    }

    /// Internal or external.
    pub fn mounting(&self) -> Mounting {
        self.mounting
    }

    /// Leading or trailing.
    pub fn action(&self) -> ShoeAction {
        self.action
    }

    /// I_f = ∫θ₁..θ₂ sin θ (r − a cos θ) dθ, m: friction moment about the pin per unit
    /// μ·p_a·b·r / sin θ_a.
    pub fn friction_moment_integral_m(&self) -> f64 {
        self.friction_integral
    }

    /// I_N = ∫θ₁..θ₂ sin²θ dθ: normal moment about the pin per unit p_a·b·r·a / sin θ_a.
    pub fn normal_moment_integral(&self) -> f64 {
        self.normal_integral
    }

    /// sin θ_a, the largest sin θ over the lining (where the peak pressure p_a acts).
    pub fn sin_peak_angle(&self) -> f64 {
        self.sin_peak
    }

    fn fractional(&self) -> FractionalGain {
        let g = &self.geometry;
        FractionalGain {
            torque_arm: g.actuation_arm_m * g.drum_radius_m * self.arc_cosine_span,
            base: g.pin_distance_m * self.normal_integral,
            energising: self.action.energising_sign() * libm::fabs(self.friction_integral),
        }
    }

    /// M_f, M_N, T and F at μ `mu` and peak lining pressure `max_pressure_pa`, Pa.
    ///
    /// # Errors
    /// [`BrakeError`] naming `max_pressure_pa` unless it is finite and above zero, or the
    /// errors of [`TorqueGain::gain_and_slope`].
    pub fn moments(&self, mu: f64, max_pressure_pa: f64) -> Result<ShoeMoments, BrakeError> {
        let p_a = error::positive(BrakeParameter::MaxPressure, max_pressure_pa)?;
        let denominator = self.denominator(mu)?;
        let g = &self.geometry;
        let q = p_a * g.face_width_m * g.drum_radius_m / self.sin_peak;
        Ok(ShoeMoments {
            friction_moment_nm: mu * q * libm::fabs(self.friction_integral),
            normal_moment_nm: q * g.pin_distance_m * self.normal_integral,
            torque_nm: mu * q * g.drum_radius_m * self.arc_cosine_span,
            actuating_force_n: q * denominator / g.actuation_arm_m,
        })
    }

    /// p_a / F: peak lining pressure per unit actuating force at μ, Pa/N.
    ///
    /// # Errors
    /// As [`TorqueGain::gain_and_slope`].
    pub fn max_pressure_per_force(&self, mu: f64) -> Result<f64, BrakeError> {
        let denominator = self.denominator(mu)?;
        let g = &self.geometry;
        Ok(g.actuation_arm_m * self.sin_peak / (g.face_width_m * g.drum_radius_m * denominator))
    }

    /// a·I_N ∓ μ·|I_f| (F·c per unit q), validated against self-locking.
    fn denominator(&self, mu: f64) -> Result<f64, BrakeError> {
        self.fractional().denominator(mu)
    }
}

impl TorqueGain for PivotedShoe {
    fn gain_and_slope(&self, mu: f64) -> Result<(f64, f64), BrakeError> {
        self.fractional().gain_and_slope(mu)
    }

    fn locking_coefficient(&self) -> Option<f64> {
        self.fractional().locking_coefficient()
    }
}
