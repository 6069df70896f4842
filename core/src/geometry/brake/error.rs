//! Why a brake or cone-engagement model could not be built or evaluated: one variant per kind of
//! mistake, each naming the offending parameter by its configuration key.

use core::fmt;

/// A parameter of a shoe, band or cone-engagement model, named as in a configuration file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum BrakeParameter {
    /// `drum_radius_m`: radius of the drum's rubbing surface.
    DrumRadius,
    /// `pin_distance_m`: distance a from the drum centre to a shoe's pivot pin.
    PinDistance,
    /// `arc_start_rad`: where the lining starts, θ₁, measured from the centre–pin line.
    ArcStart,
    /// `arc_end_rad`: where the lining ends, θ₂, measured from the centre–pin line.
    ArcEnd,
    /// `face_width_m`: axial width of the lining.
    FaceWidth,
    /// `actuation_arm_m`: lever arm of the actuating force about the pivot.
    ActuationArm,
    /// `normal_arm_m`: lever arm of a block's normal force about the lever pivot.
    NormalArm,
    /// `friction_offset_m`: lever arm of a block's friction force about the lever pivot.
    FrictionOffset,
    /// `wrap_angle_rad`: angle φ the band wraps around the drum.
    WrapAngle,
    /// `tight_end_arm_m`: lever arm of the band's tight end about the lever pivot.
    TightEndArm,
    /// `slack_end_arm_m`: lever arm of the band's slack end about the lever pivot.
    SlackEndArm,
    /// `band_arm_m`: lever arm of the band end on a simple band brake's lever.
    BandArm,
    /// `mean_radius_m`: effective friction radius of a cone.
    MeanRadius,
    /// `friction_coefficient`: the μ the model is evaluated at.
    FrictionCoefficient,
    /// `max_pressure_pa`: peak lining pressure p_a a shoe is evaluated at.
    MaxPressure,
}

impl fmt::Display for BrakeParameter {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Self::DrumRadius => "drum_radius_m",
            Self::PinDistance => "pin_distance_m",
            Self::ArcStart => "arc_start_rad",
            Self::ArcEnd => "arc_end_rad",
            Self::FaceWidth => "face_width_m",
            Self::ActuationArm => "actuation_arm_m",
            Self::NormalArm => "normal_arm_m",
            Self::FrictionOffset => "friction_offset_m",
            Self::WrapAngle => "wrap_angle_rad",
            Self::TightEndArm => "tight_end_arm_m",
            Self::SlackEndArm => "slack_end_arm_m",
            Self::BandArm => "band_arm_m",
            Self::MeanRadius => "mean_radius_m",
            Self::FrictionCoefficient => "friction_coefficient",
            Self::MaxPressure => "max_pressure_pa",
        })
    }
}

/// Why a brake model could not be built, or could not give a torque at the μ asked for.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum BrakeError {
    /// A parameter is NaN or infinite.
    NotFinite {
        /// The parameter concerned.
        parameter: BrakeParameter,
    },
    /// A length or angle that must be above zero is not.
    NotPositive {
        /// The parameter concerned.
        parameter: BrakeParameter,
        /// The value given.
        value: f64,
    },
    /// A parameter lies outside the range the model is valid for.
    OutOfRange {
        /// The parameter concerned.
        parameter: BrakeParameter,
        /// The value given.
        value: f64,
        /// Lowest value allowed (bound excluded).
        above: f64,
        /// Highest value allowed (bound excluded).
        below: f64,
    },
    /// A parameter that must not be negative is.
    Negative {
        /// The parameter concerned.
        parameter: BrakeParameter,
        /// The value given.
        value: f64,
    },
    /// The lining arc ends before it starts.
    ArcEndNotAfterStart {
        /// θ₁, rad.
        start_rad: f64,
        /// θ₂, rad.
        end_rad: f64,
    },
    /// The friction coefficient reaches the self-locking value: the brake would hold with no
    /// actuating force, so torque per unit actuating force has no finite value.
    SelfLocking {
        /// The μ asked for.
        friction_coefficient: f64,
        /// The μ at which the model locks.
        locking_coefficient: f64,
    },
}

impl fmt::Display for BrakeError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NotFinite { parameter } => write!(f, "{parameter} is not a finite number"),
            Self::NotPositive { parameter, value } => {
                write!(f, "{parameter} is {value}, it must be above zero")
            }
            Self::OutOfRange {
                parameter,
                value,
                above,
                below,
            } => write!(
                f,
                "{parameter} is {value}, it must lie strictly between {above} and {below}"
            ),
            Self::Negative { parameter, value } => {
                write!(f, "{parameter} is {value}, it must not be negative")
            }
            Self::ArcEndNotAfterStart { start_rad, end_rad } => write!(
                f,
                "{} ({end_rad} rad) must be greater than {} ({start_rad} rad)",
                BrakeParameter::ArcEnd,
                BrakeParameter::ArcStart
            ),
            Self::SelfLocking {
                friction_coefficient,
                locking_coefficient,
            } => write!(
                f,
                "{} {friction_coefficient} reaches the self-locking value {locking_coefficient}: \
                 the brake would lock, torque per unit actuating force is unbounded",
                BrakeParameter::FrictionCoefficient
            ),
        }
    }
}

impl core::error::Error for BrakeError {}

/// `value` if it is finite.
pub(crate) fn finite(parameter: BrakeParameter, value: f64) -> Result<f64, BrakeError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(BrakeError::NotFinite { parameter })
    }
}

/// `value` if it is finite and above zero.
pub(crate) fn positive(parameter: BrakeParameter, value: f64) -> Result<f64, BrakeError> {
    let value = finite(parameter, value)?;
    if value > 0.0 {
        Ok(value)
    } else {
        Err(BrakeError::NotPositive { parameter, value })
    }
}

/// `value` if it is finite and strictly between `above` and `below`.
pub(crate) fn between(
    parameter: BrakeParameter,
    value: f64,
    above: f64,
    below: f64,
) -> Result<f64, BrakeError> {
    let value = finite(parameter, value)?;
    if value > above && value < below {
        Ok(value)
    } else {
        Err(BrakeError::OutOfRange {
            parameter,
            value,
            above,
            below,
        })
    }
}

/// μ if it is finite and not below zero (zero is allowed: a dry-run or a fully glazed lining).
pub(crate) fn friction_coefficient(mu: f64) -> Result<f64, BrakeError> {
    let mu = finite(BrakeParameter::FrictionCoefficient, mu)?;
    if mu >= 0.0 {
        Ok(mu)
    } else {
        Err(BrakeError::Negative {
            parameter: BrakeParameter::FrictionCoefficient,
            value: mu,
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_the_parameter() {
        let s = positive(BrakeParameter::DrumRadius, -0.1)
            .unwrap_err()
            .to_string();
        assert!(s.contains("drum_radius_m"), "{s}");
        let s = between(BrakeParameter::WrapAngle, 7.0, 0.0, 6.3)
            .unwrap_err()
            .to_string();
        assert!(s.contains("wrap_angle_rad"), "{s}");
        let s = friction_coefficient(f64::NAN).unwrap_err().to_string();
        assert!(s.contains("friction_coefficient"), "{s}");
        assert!(friction_coefficient(-0.1).is_err());
        assert_eq!(friction_coefficient(0.0), Ok(0.0));
    }
}
