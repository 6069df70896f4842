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
//! The actuator does not reach its force at once (a spring pack behind a release cylinder, a
//! motor and gear): `response_time` τ adds a first-order lag after the hysteresis, discretised
//! step-invariant, y += (x − y)·(1 − e^(−T/τ)) [calc: the exact response of τ·ẏ = x − y to an
//! input held over each sample], so that the prediction follows the force through an apply or
//! a release instead of running ahead of it. 0 s means no lag.
//!
//! The same prediction checks the force from the channels: a voted force farther from it than
//! the channels' own uncertainty plus the model's band (`uncertainty + hysteresis`) is
//! implausible — every channel may be wrong the same way (a bridge excitation fault, a shared
//! gain error), which no vote among them can see.
//!
//! ```
//! use clampwise_core::sensor::{ActuatorLag, ActuatorModel, ActuatorTransfer, NewtonsPerCommand};
//! use clampwise_core::units::{Newtons, Seconds};
//! use fixed::types::I16F16;
//!
//! // Fictional winch brake: 2 kN per ampere, 1 kN hysteresis band.
//! let tr = ActuatorTransfer {
//!     gain: NewtonsPerCommand::from_num(2000),
//!     offset: Newtons::ZERO,
//!     hysteresis: Newtons::from_num(1000),
//!     uncertainty: Newtons::from_num(3000),
//!     response_time: Seconds::ZERO,
//! };
//! let lag = ActuatorLag::NONE;
//! let mut m = ActuatorModel::new();
//! m.update(&tr, lag, I16F16::from_num(5)); // primes at the centre line, 10 kN
//! let rising = m.update(&tr, lag, I16F16::from_num(6)).force;
//! assert_eq!(rising, Newtons::from_num(11_500)); // 12 kN − 0.5 kN
//! let falling = m.update(&tr, lag, I16F16::from_num(5.9)).force;
//! assert_eq!(falling, Newtons::from_num(11_500)); // inside the band: stays
//! ```

use super::error::{Problem, SensorError};
use super::{ActuatorCommand, NewtonsPerCommand};
use crate::units::{Newtons, Seconds};

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
    /// First-order time constant of the actuator from command to clamp force (s, ≥ 0; 0 = the
    /// force follows the command at once).
    pub response_time: Seconds,
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
        if self.response_time.to_bits() < 0 {
            return Err(err("fallback.response_time", Problem::Negative));
        }
        // τ below 2¹⁶ s: far beyond any actuator, and τ·f_s stays exact in the lag's u128 work.
        if self.response_time.to_bits() >= 1 << 48 {
            return Err(err("fallback.response_time", Problem::OutOfRange));
        }
        Ok(())
    }

    /// The plausibility band of the model (±N): `uncertainty + hysteresis`, the whole
    /// hysteresis band because the branch the actuator is on may not be known.
    pub const fn plausibility_band(&self) -> Newtons {
        Newtons::from_bits(
            self.uncertainty
                .to_bits()
                .saturating_add(self.hysteresis.to_bits()),
        )
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

/// The actuator's first-order lag for one sample rate: the coefficient 1 − e^(−T/τ) in Q31,
/// fixed at configuration.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ActuatorLag {
    alpha_q31: i32,
}

/// Extra fractional bits of the lag state beyond those of [`Newtons`].
const LAG_EXTRA: u32 = 16;

impl ActuatorLag {
    /// No lag: the prediction is the hysteresis output itself.
    pub const NONE: Self = Self { alpha_q31: 0 };

    /// The lag of time constant `response_time` (s; 0 or less: no lag) at `sample_rate_hz`:
    /// α = 1 − e^(−T/τ), the step-invariant (zero-order-hold) discretisation of the first-order
    /// lag \[calc\], in Q31 rounded to nearest, at least 2⁻³¹. `const`: e^x is summed as its
    /// series in 128-bit integers (x = T/τ ≤ 16 in the sum; beyond, α rounds to 1 − 2⁻³¹).
    pub const fn new(response_time: Seconds, sample_rate_hz: u32) -> Self {
        let tau = response_time.to_bits();
        if tau <= 0 || sample_rate_hz == 0 {
            return Self::NONE;
        }
        // τ·f_s in Q32: 0 < τ < 2⁶³ (Q32 bits, checked above) times f_s < 2³², below 2⁹⁵.
        #[allow(clippy::cast_sign_loss)]
        let tau_fs_q32 = (tau as u128) * (sample_rate_hz as u128);
        // x = T/τ = 1/(τ·f_s) in Q32.
        // The divisions below are checked although no divisor can be zero: `new` runs at start-up
        // in a C build, whose link-time check admits no division-by-zero panic path.
        let Some(x_q32) = (1u128 << 64).checked_div(tau_fs_q32) else {
            return Self::NONE;
        };
        if x_q32 > 16 << 32 {
            return Self {
                alpha_q31: i32::MAX,
            };
        }
        // e^x in Q64 by its series: each term t_k = t_(k−1)·x/k; with x ≤ 16 the terms stay
        // below e¹⁶·2⁶⁴ < 2⁸⁸ and t·x below 2¹²⁵. Truncation per term: far below 2⁻³².
        let mut sum: u128 = 1 << 64;
        let mut term: u128 = 1 << 64;
        let mut k: u128 = 1;
        while k < 120 {
            term = match (term * x_q32).checked_div(k << 32) {
                Some(t) => t,
                None => 0,
            };
            if term == 0 {
                break;
            }
            sum += term;
            k += 1;
        }
        // e^(−x) in Q64 (sum ≥ 2⁶⁴, so the quotient is at most 2⁶⁴).
        let decay_q64 = match u128::MAX.checked_div(sum) {
            Some(d) => d,
            None => 1 << 64,
        };
        let decay_q64 = if decay_q64 > 1 << 64 {
            1 << 64
        } else {
            decay_q64
        };
        let alpha_q64 = (1u128 << 64) - decay_q64;
        let alpha = (alpha_q64 + (1 << 32)) >> 33;
        #[allow(clippy::cast_possible_truncation, clippy::cast_possible_wrap)]
        let alpha_q31 = if alpha == 0 {
            1
        } else if alpha > i32::MAX as u128 {
            i32::MAX
        } else {
            alpha as i32
        };
        Self { alpha_q31 }
    }
}

/// State of the actuator model (the branch of the hysteresis band it is on, and the lagged
/// force).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ActuatorModel {
    primed: bool,
    force: i32,
    /// The lagged force in newtons with [`LAG_EXTRA`] more fractional bits (Q24).
    lagged: i64,
}

impl ActuatorModel {
    /// Not primed: the first command starts on the centre line.
    pub const fn new() -> Self {
        Self {
            primed: false,
            force: 0,
            lagged: 0,
        }
    }

    /// The last prediction, `None` before the first command.
    pub fn last(&self) -> Option<Newtons> {
        self.primed.then_some(Newtons::from_bits(self.force))
    }

    /// Predict the force for `command` (command units) through the hysteresis and then the
    /// `lag`. O(1), integers only, any input.
    pub fn update(
        &mut self,
        tr: &ActuatorTransfer,
        lag: ActuatorLag,
        command: ActuatorCommand,
    ) -> Predicted {
        let primed = self.primed;
        let hysteresis = self.hysteresis(tr, command);
        if lag.alpha_q31 == 0 {
            return hysteresis;
        }
        let target = i64::from(hysteresis.force.to_bits()) << LAG_EXTRA;
        self.lagged = if primed {
            // The distance to the target in Q8 N (its extra bits dropped, below 1 LSB of the
            // force): |d| < 2³³, clamped below 2³², times α < 2³¹ stays below 2⁶³, one plain
            // 64-bit multiply; back to Q24 rounded to nearest. |step| ≤ |d|·2¹⁶: the state
            // moves toward the target and never past it.
            let d = ((target - self.lagged) >> LAG_EXTRA).clamp(-(1 << 32) + 1, (1 << 32) - 1);
            let step = (d * i64::from(lag.alpha_q31) + (1 << 14)) >> 15;
            self.lagged + step
        } else {
            target
        };
        let rounded = (self.lagged + (1 << (LAG_EXTRA - 1))) >> LAG_EXTRA;
        // Between two i32 values (the old state and the target): exact.
        let bits = i32::try_from(rounded).unwrap_or(hysteresis.force.to_bits());
        Predicted {
            force: Newtons::from_bits(bits),
            saturated: hysteresis.saturated,
        }
    }

    /// The play operator: the force on the hysteresis band's branch for `command`.
    fn hysteresis(&mut self, tr: &ActuatorTransfer, command: ActuatorCommand) -> Predicted {
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

// Part of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for ActuatorModel {
    const LEN: usize = 1 + 4 + 8;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.bool(self.primed);
        w.i32(self.force);
        w.i64(self.lagged);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        let primed = r.bool("actuator.primed")?;
        let force = r.i32()?;
        let lagged = r.i64()?;
        // Between past targets, all i32 forces (see `update`), which its plain sums rely on.
        let range = i64::from(i32::MIN) << LAG_EXTRA..=i64::from(i32::MAX) << LAG_EXTRA;
        r.check(range.contains(&lagged), "actuator.lagged")?;
        Some(Self {
            primed,
            force,
            lagged,
        })
    }
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
            response_time: Seconds::ZERO,
        }
    }

    #[test]
    fn hysteresis_loop_follows_both_branches() {
        // [calc] play operator of half-width 400 N around F = 250·p − 500.
        let t = tr();
        let mut m = ActuatorModel::new();
        let f = |m: &mut ActuatorModel, p: f64| {
            m.update(&t, ActuatorLag::NONE, ActuatorCommand::from_num(p))
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
        assert!(
            m.update(&t, ActuatorLag::NONE, ActuatorCommand::MAX)
                .saturated
        );
        assert_eq!(
            m.update(&t, ActuatorLag::NONE, ActuatorCommand::MIN).force,
            Newtons::MIN
        );
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
        let negative_lag = ActuatorTransfer {
            response_time: Seconds::from_num(-0.01),
            ..tr()
        };
        assert!(negative_lag.validate(Newtons::ZERO).is_err());
    }

    #[test]
    fn lag_follows_a_step_as_a_first_order_system() {
        // [calc] the step-invariant lag reproduces the continuous response 1 − e^(−t/τ) at the
        // sample instants: τ = 50 ms at 1 kHz, after 100 samples (t = 2τ) 1 − e^(−2) = 0.864665.
        let t = ActuatorTransfer {
            hysteresis: Newtons::ZERO,
            offset: Newtons::ZERO,
            response_time: Seconds::from_num(0.05),
            ..tr()
        };
        let lag = ActuatorLag::new(t.response_time, 1000);
        let mut m = ActuatorModel::new();
        m.update(&t, lag, ActuatorCommand::ZERO);
        let mut y = 0.0;
        for _ in 0..100 {
            y = m
                .update(&t, lag, ActuatorCommand::from_num(100))
                .force
                .to_num::<f64>();
        }
        let want = 25_000.0 * (1.0 - (-2.0f64).exp());
        assert!((y - want).abs() < 0.05, "{y} vs {want}");
    }

    #[test]
    fn lag_coefficient_against_libm() {
        // Reference: libm's exp, over time constants from a tenth of a sample to 10⁵ samples.
        for (tau, rate) in [
            (1e-4, 1000),
            (1e-3, 1000),
            (0.05, 1000),
            (0.05, 10_000),
            (100.0, 1000),
            (2.0, 50),
        ] {
            let tau_q32 = Seconds::from_num(tau);
            let lag = ActuatorLag::new(tau_q32, rate);
            // τ as stored (Q32 s), so only the coefficient's own arithmetic is measured.
            let want = -libm::expm1(-1.0 / (tau_q32.to_num::<f64>() * f64::from(rate)));
            let got = f64::from(lag.alpha_q31) / 2_147_483_648.0;
            assert!(
                (got - want).abs() <= 1.5 / 2_147_483_648.0,
                "{tau} s at {rate} Hz: {got} vs {want}"
            );
        }
        assert_eq!(ActuatorLag::new(Seconds::ZERO, 1000), ActuatorLag::NONE);
    }
}
