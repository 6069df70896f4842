//! Fallback force from the actuator command, for when no force channel is healthy.
//!
//! The transfer from command to clamp force is a straight line with a hysteresis band
//! (friction in the mechanism or the seals): the force on a rising command lies on the lower
//! branch, `gain · command + offset − hysteresis/2`, on a falling command on the upper branch,
//! and in between the force stays where it was (a play operator of half-width hysteresis/2).
//! The same model predicts the force that breaks a tie between disagreeing channels.
//!
//! Stated uncertainty of a fallback force: `uncertainty + hysteresis/2` (the branch is not
//! known after start-up, and a reversal may not have been seen); construction requires
//! `uncertainty` larger than a healthy channel's.
//!
//! ```
//! use clampwise_core::sensor::{ActuatorModel, ActuatorTransfer, NewtonsPerCommand};
//! use clampwise_core::units::Newtons;
//! use fixed::types::I16F16;
//!
//! // Fictional winch brake: 2 kN per ampere, 1 kN hysteresis band.
//! let tr = ActuatorTransfer {
//!     gain: NewtonsPerCommand::from_num(2000),
//!     offset: Newtons::ZERO,
//!     hysteresis: Newtons::from_num(1000),
//!     uncertainty: Newtons::from_num(3000),
//! };
//! let mut m = ActuatorModel::new();
//! m.update(&tr, I16F16::from_num(5)); // primes at the centre line, 10 kN
//! let rising = m.update(&tr, I16F16::from_num(6)).force;
//! assert_eq!(rising, Newtons::from_num(11_500)); // 12 kN − 0.5 kN
//! let falling = m.update(&tr, I16F16::from_num(5.9)).force;
//! assert_eq!(falling, Newtons::from_num(11_500)); // inside the band: stays
//! ```

use super::error::{Problem, SensorError};
use super::{ActuatorCommand, NewtonsPerCommand};
use crate::units::Newtons;

/// Transfer from actuator command to clamp force (configuration input).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ActuatorTransfer {
    /// Newtons of clamp force per command unit (N/unit, non-zero).
    pub gain: NewtonsPerCommand,
    /// Force at zero command on the centre line (N).
    pub offset: Newtons,
    /// Full width of the hysteresis band between the rising and falling branches (N, ≥ 0).
    pub hysteresis: Newtons,
    /// Uncertainty (±N) of the centre-line-with-hysteresis model itself, larger than a healthy
    /// channel's; the reported fallback uncertainty adds half the band to it.
    pub uncertainty: Newtons,
}

const fn err(field: &'static str, problem: Problem) -> SensorError {
    SensorError::Field { field, problem }
}

impl ActuatorTransfer {
    pub(crate) const fn validate(&self, channel_uncertainty: Newtons) -> Result<(), SensorError> {
        if self.gain.to_bits() == 0 {
            return Err(err("fallback.gain", Problem::Zero));
        }
        if self.hysteresis.to_bits() < 0 {
            return Err(err("fallback.hysteresis", Problem::Negative));
        }
        if self.uncertainty.to_bits() <= channel_uncertainty.to_bits() {
            return Err(err("fallback.uncertainty", Problem::UncertaintyNotLarger));
        }
        Ok(())
    }

    /// Reported uncertainty of a fallback force: `uncertainty + hysteresis/2` (±N).
    pub const fn stated_uncertainty(&self) -> Newtons {
        Newtons::from_bits(
            self.uncertainty
                .to_bits()
                .saturating_add(self.hysteresis.to_bits() / 2),
        )
    }
}

/// A force predicted from the actuator command.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Predicted {
    /// Predicted clamp force (N).
    pub force: Newtons,
    /// The centre line left the range of [`Newtons`] and was clamped.
    pub saturated: bool,
}

/// State of the actuator model (the branch of the hysteresis band it is on).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ActuatorModel {
    primed: bool,
    force: i32,
}

impl ActuatorModel {
    /// Not primed: the first command starts on the centre line.
    pub const fn new() -> Self {
        Self {
            primed: false,
            force: 0,
        }
    }

    /// The last prediction, `None` before the first command.
    pub fn last(&self) -> Option<Newtons> {
        self.primed.then_some(Newtons::from_bits(self.force))
    }

    /// Predict the force for `command` (command units). O(1), integers only, any input.
    pub fn update(&mut self, tr: &ActuatorTransfer, command: ActuatorCommand) -> Predicted {
        let line = centre_line_q8(command.to_bits(), tr.gain.to_bits())
            .wrapping_add(i64::from(tr.offset.to_bits()));
        // |line| < 2⁵⁵ (below): the band edges and the result stay far inside i64.
        let half = i64::from(tr.hysteresis.to_bits() / 2);
        let f = i64::from(self.force);
        let next = if !self.primed {
            line
        } else if line - half > f {
            line - half
        } else if line + half < f {
            line + half
        } else {
            f
        };
        let bits = i32::try_from(next).unwrap_or(if next < 0 { i32::MIN } else { i32::MAX });
        self.primed = true;
        self.force = bits;
        Predicted {
            force: Newtons::from_bits(bits),
            saturated: i64::from(bits) != next,
        }
    }
}

/// round(c·g / 2⁴⁰), half up: Q16 command times Q32 gain to Q8 newtons, exactly, in 64-bit
/// work (|result| ≤ 2⁵⁴).
///
/// With g = h·2³² + l (h = g >> 32, 0 ≤ l < 2³²) and P = c·l = P_h·2³² + P_l (0 ≤ P_l < 2³²):
/// c·g + 2³⁹ = (c·h + P_h + 2⁷)·2³² + P_l, and as P_l < 2³² cannot carry into the bits from
/// 2⁴⁰ on, ⌊(c·g + 2³⁹)/2⁴⁰⌋ = ⌊(c·h + P_h + 2⁷)/2⁸⌋. |c·h| ≤ 2⁶², |P| < 2⁶³, |P_h| < 2³¹:
/// every term is exact in i64.
fn centre_line_q8(command: i32, gain: i64) -> i64 {
    let c = i64::from(command);
    let high = gain >> 32;
    let low = gain & 0xffff_ffff;
    let p = c * low;
    (c * high + (p >> 32) + (1 << 7)) >> 8
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    fn tr() -> ActuatorTransfer {
        ActuatorTransfer {
            gain: NewtonsPerCommand::from_num(250),
            offset: Newtons::from_num(-500),
            hysteresis: Newtons::from_num(800),
            uncertainty: Newtons::from_num(2000),
        }
    }

    #[test]
    fn hysteresis_loop_follows_both_branches() {
        // [calc] play operator of half-width 400 N around F = 250·p − 500.
        let t = tr();
        let mut m = ActuatorModel::new();
        let f = |m: &mut ActuatorModel, p: f64| {
            m.update(&t, ActuatorCommand::from_num(p))
                .force
                .to_num::<f64>()
        };
        assert_eq!(f(&mut m, 0.0), -500.0);
        assert_eq!(f(&mut m, 10.0), 2000.0 - 400.0); // rising: lower branch
        assert_eq!(f(&mut m, 100.0), 24_500.0 - 400.0);
        assert_eq!(f(&mut m, 97.0), 24_100.0); // reversal inside the band: held
        assert_eq!(f(&mut m, 90.0), 22_000.0 + 400.0); // falling: upper branch
        assert_eq!(t.stated_uncertainty(), Newtons::from_num(2400));
    }

    proptest::proptest! {
        // The 64-bit centre line against the product formed in i128.
        #[test]
        fn centre_line_is_the_rounded_product(
            c in proptest::num::i32::ANY,
            g in proptest::num::i64::ANY,
        ) {
            let want = (i128::from(c) * i128::from(g) + (1i128 << 39)) >> 40;
            proptest::prop_assert_eq!(i128::from(centre_line_q8(c, g)), want);
        }
    }

    #[test]
    fn any_command_is_safe() {
        let t = ActuatorTransfer {
            gain: NewtonsPerCommand::MAX,
            ..tr()
        };
        let mut m = ActuatorModel::new();
        assert!(m.update(&t, ActuatorCommand::MAX).saturated);
        assert_eq!(m.update(&t, ActuatorCommand::MIN).force, Newtons::MIN);
    }

    #[test]
    fn fallback_must_be_less_certain_than_a_channel() {
        assert!(tr().validate(Newtons::from_num(100)).is_ok());
        assert!(tr().validate(Newtons::from_num(2000)).is_err());
        let zero = ActuatorTransfer {
            gain: NewtonsPerCommand::ZERO,
            ..tr()
        };
        assert!(zero.validate(Newtons::ZERO).is_err());
    }
}
