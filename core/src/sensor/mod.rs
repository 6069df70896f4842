//! Clamp-force sensor conditioning: ADC counts → newtons, filtering, diagnostics with
//! debounce, voting among 1–4 redundant channels, and a fallback to the actuator command.
//!
//! ```text
//! raw counts[c], valid[c] ─► calibration ─► instantaneous checks ─┬─ accepted ─► low-pass ─┐
//!   (gain, offset, temp.)   (invalid, rail, range, rate, stuck)   └─ rejected: held ≤ H ───┤
//!                                    │ debounce (raise N / clear M)                        │
//!                                    ▼                                                     ▼
//!                           flag word per channel ──── usable channels only ──► vote ──► force
//!                                                                               ▲  │ consensus
//! actuator command ─► transfer with hysteresis ─► predicted force ── tie-break ─┘  ▼
//!                                      └──── no usable channel ──► fallback   disagreement
//! ```
//!
//! Configuration ([`SensorConfig`], validated once, immutable, `const`-constructible from fixed
//! values) is kept apart from state ([`SensorState`], integers only). [`SensorState::update`] is
//! O(1) (≤ 4 channels, ≤ 14 voting subsets), uses no floats, and cannot panic for any input
//! bit pattern: any counts, valid bits, command and temperature.
//!
//! Cost per sample, measured with callgrind on x86-64 over the benchmark's input mix
//! (`benches`): about 1 060 instructions for three temperature-compensated channels with every
//! check, the stuck check and the actuator fallback, about 250 for one channel with the rail,
//! range and rate checks. Integer work is 32- and 64-bit except the widening 64×64-bit
//! products of the filter (one per channel) and of a temperature compensation (one per channel
//! and one per evaluation, once per sample when the channels share it): no 128-bit arithmetic
//! in the checks, the vote or the uncertainty. A test (`tests/tests/sensor_equivalence.rs`)
//! compares every reading bit for bit with a plain implementation in clampwise-tests
//! (`plain::sensor`: all products in i128, one state machine per debounce, every voting subset
//! searched).
//!
//! ## Units
//!
//! | quantity | type | unit | Q format | resolution |
//! |---|---|---|---|---|
//! | force, uncertainty, limits | [`Newtons`] | N | I24F8 | 3.9 mN |
//! | raw reading | `i32` | ADC counts | integer | 1 count |
//! | gain | [`NewtonsPerCount`] | N/count | I32F32 | 2.3·10⁻¹⁰ N/count |
//! | zero temperature coefficient | [`NewtonsPerKelvin`] | N/K | I32F32 | 2.3·10⁻¹⁰ N/K |
//! | span temperature coefficient | [`PerKelvin`] | 1/K | I2F30 | 9.3·10⁻¹⁰ /K |
//! | sensor temperature | [`Celsius`] | °C | I16F16 | 15 µK |
//! | rate limit | [`NewtonsPerSecond`] | N/s | I32F32 | 2.3·10⁻¹⁰ N/s |
//! | actuator command | [`ActuatorCommand`] | command unit (A, bar, …) | I16F16 | 1.5·10⁻⁵ |
//! | command transfer | [`NewtonsPerCommand`] | N per command unit | I32F32 | 2.3·10⁻¹⁰ |
//! | stuck time | [`Seconds`](crate::units::Seconds) | s | I32F32 | 0.23 ns |
//!
//! ## What the reading promises
//!
//! - A force from the channels comes only from channels with no raised flag and not stale
//!   ([`ChannelFlags::UNUSABLE`] clear). [`Health::Ok`] means every configured channel was
//!   used, all agreed, no flag at all is set on any channel (not even
//!   [`ChannelFlags::REJECTED`]) and no sensor temperature was clamped; anything less is
//!   [`Health::Degraded`]. With no usable
//!   channel, health is [`Health::Lost`], and the force is the actuator fallback (when a
//!   transfer is configured and a command is given) or absent.
//! - Uncertainty (±N): `channel_uncertainty`, plus for a held channel the most the force can
//!   have moved since its last accepted sample (`noise_band` + `max_rate`·k·T), plus how far a
//!   used channel's filter output trails its newest sample beyond half the `noise_band` (the
//!   low-pass lags a moving force), plus the
//!   largest distance from the reported force to a *witness*: a used channel, or a channel the
//!   vote left out only for disagreeing (see `force_bound`): the ± holds as long as one
//!   witness is healthy. Where the actuator model predicts a force, a voted force beyond its
//!   band is [`ForceReading::implausible`] and the ± widens to cover the model too. For
//!   the fallback: the transfer's `uncertainty + hysteresis/2`, which construction requires to
//!   exceed `channel_uncertainty`. Without a force, [`Newtons::MAX`].
//! - Detection latencies are stated exactly in [`diagnostics`] and checked by the
//!   fault-injection tests (`tests/tests/sensor_faults.rs`).
//!
//! **Caution.** An estimate with diagnostics, not a certified safety function: validate on the
//! bench and follow the applicable functional-safety process (ISO 26262, IEC 61508,
//! ISO 13849).
//!
//! ```
//! use clampwise_core::sensor::*;
//! use clampwise_core::units::{Newtons, Seconds};
//!
//! // A fictional winch holding brake: one 24-bit load-cell channel, 1 kHz.
//! const CAL: ChannelCalibration = ChannelCalibration {
//!     gain: NewtonsPerCount::lit("0.01"), // 10 mN per count
//!     offset: Newtons::lit("-12"),
//!     rails: AdcRails { low: -8_388_608, high: 8_388_607, margin: 8 },
//!     temperature: None,
//! };
//! let limits = DiagnosticLimits {
//!     force_min: Newtons::lit("-2000"),
//!     force_max: Newtons::lit("60000"),
//!     max_rate: NewtonsPerSecond::lit("500000"),
//!     noise_band: Newtons::lit("20"),
//!     stuck: None,
//!     debounce: DebounceSet::uniform(Debounce { raise_after: 3, clear_after: 10 }),
//!     max_hold_samples: 2,
//! };
//! let voting = VotingLimits {
//!     tolerance: Newtons::lit("500"),
//!     channel_uncertainty: Newtons::lit("150"),
//! };
//! let filter = LowPass::new(50.0, 1000).unwrap();
//! let cfg = SensorConfig::new(1000, [CAL], filter, limits, voting, None).unwrap();
//! let mut state = SensorState::new();
//! let r = state.update(&cfg, &[RawChannel { counts: 1_001_200, valid: true }], None, None);
//! assert_eq!(r.force, Some(Newtons::lit("10000")));
//! assert_eq!(r.health, Health::Ok);
//! assert_eq!(r.source, ForceSource::Channels { mask: ChannelMask::from_bits(0b1) });
//! ```

pub mod calibration;
pub mod debounce;
pub mod diagnostics;
pub mod error;
pub mod fallback;
pub mod filter;
pub mod voting;
mod witness_bound;

pub use calibration::{
    AdcRails, Calibrated, ChannelCalibration, Rail, TemperatureCompensation, TwoPoint,
};
pub use debounce::{Debounce, DebounceState, Evidence};
pub use diagnostics::{ChannelFlags, DebounceSet, DiagnosticLimits, StuckCheck};
pub use error::{Problem, SensorError};
pub use fallback::{ActuatorLag, ActuatorModel, ActuatorTransfer, Predicted};
pub use filter::{LowPass, LowPassState};
pub use voting::{Agreement, Vote, VotingLimits, vote};

use diagnostics::{ChannelDiagnostics, Diagnostics};
use fixed::types::{I2F30, I16F16, I32F32};
use witness_bound::force_bound;

use crate::units::{Celsius, Newtons};

/// Actuator command (motor current, line pressure, …) in its own unit (I16F16).
pub type ActuatorCommand = I16F16;
/// Calibration gain, newtons per ADC count (I32F32).
pub type NewtonsPerCount = I32F32;
/// Zero temperature coefficient, newtons per kelvin (I32F32).
pub type NewtonsPerKelvin = I32F32;
/// Span temperature coefficient, per kelvin (I2F30).
pub type PerKelvin = I2F30;
/// Rate of change of force, newtons per second (I32F32).
pub type NewtonsPerSecond = I32F32;
/// Command-to-force transfer, newtons per command unit (I32F32).
pub type NewtonsPerCommand = I32F32;

/// Most force channels a configuration can have.
pub const MAX_CHANNELS: usize = 4;

/// One raw sample of one force channel, as acquired.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct RawChannel {
    /// ADC reading (counts, any i32).
    pub counts: i32,
    /// The acquisition's own valid bit (conversion complete, CRC good, no dropout).
    pub valid: bool,
}

/// A set of channels, bit i = channel i (i < 4).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ChannelMask(u8);

impl ChannelMask {
    /// No channel.
    pub const EMPTY: Self = Self(0);

    /// From bits; bits above the fourth are dropped.
    pub const fn from_bits(bits: u8) -> Self {
        Self(bits & 0x0f)
    }

    /// The first `count` channels (0 ..= 4; more saturates at 4).
    pub const fn first(count: usize) -> Self {
        let n = if count > MAX_CHANNELS {
            MAX_CHANNELS
        } else {
            count
        };
        Self(0x0f >> (MAX_CHANNELS - n))
    }

    /// The bits.
    pub const fn bits(self) -> u8 {
        self.0
    }

    /// Whether channel `channel` is in the set.
    pub const fn contains(self, channel: usize) -> bool {
        channel < MAX_CHANNELS && self.0 & (1 << channel) != 0
    }

    /// Number of channels in the set.
    pub const fn count(self) -> u32 {
        self.0.count_ones()
    }

    /// Whether the set is empty.
    pub const fn is_empty(self) -> bool {
        self.0 == 0
    }
}

/// How trustworthy the reported force is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Health {
    /// Every configured channel used, all agreeing, no flag set on any channel, sensor
    /// temperature inside the compensation range.
    Ok,
    /// A force from the channels, but with reduced redundancy, a held value, a tie broken by
    /// the model or unresolved, or some flag set.
    Degraded,
    /// No usable force channel; see [`ForceReading::source`] for a fallback estimate.
    Lost,
}

/// Where the reported force came from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ForceSource {
    /// From the force channels in `mask`.
    Channels {
        /// The channels used.
        mask: ChannelMask,
    },
    /// Estimated from the actuator command (no usable channel).
    ActuatorFallback,
    /// No force can be given.
    Unavailable,
}

/// The conditioned clamp force for one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ForceReading {
    /// Clamp force (N); `None` when [`ForceSource::Unavailable`].
    pub force: Option<Newtons>,
    /// Uncertainty of `force` (±N); [`Newtons::MAX`] when there is no force.
    pub uncertainty: Newtons,
    /// Health of the force.
    pub health: Health,
    /// Where the force came from.
    pub source: ForceSource,
    /// How the usable channels agreed.
    pub agreement: Agreement,
    /// Flag word of each channel; entries from the channel count on are empty.
    pub channel_flags: [ChannelFlags; MAX_CHANNELS],
    /// Each channel's filtered force (N) for logging, `None` before its first accepted
    /// sample. Values of flagged channels are shown too: use `force` for control.
    pub channel_force: [Option<Newtons>; MAX_CHANNELS],
    /// A channel was at an ADC rail, or a calibration or the actuator model saturated.
    pub saturated: bool,
    /// A sensor temperature outside a channel's compensation range was clamped.
    pub temperature_clamped: bool,
    /// The force from the channels lies farther from the actuator model's prediction than both
    /// their uncertainties allow: every channel may be wrong the same way. The uncertainty
    /// already covers the model's band as well.
    pub implausible: bool,
}

impl ForceReading {
    /// Whether the usable channels disagreed this sample (someone out-voted, or a tie).
    pub const fn disagreement(&self) -> bool {
        matches!(
            self.agreement,
            Agreement::Majority | Agreement::ModelTieBreak | Agreement::Unresolved
        )
    }
}

/// Validated, immutable configuration of the force sensing of one actuator with `C` channels
/// (1 ..= 4).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SensorConfig<const C: usize> {
    sample_rate_hz: u32,
    channels: [ChannelCalibration; C],
    filter: LowPass,
    diagnostics: Diagnostics,
    voting: VotingLimits,
    fallback: Option<ActuatorTransfer>,
    /// The actuator's lag at this sample rate (none without a fallback).
    actuator_lag: ActuatorLag,
    /// Every channel has the same temperature compensation: it is evaluated once per sample.
    shared_compensation: bool,
}

const fn field_err(field: &'static str, problem: Problem) -> SensorError {
    SensorError::Field { field, problem }
}

impl<const C: usize> SensorConfig<C> {
    /// Validate and build. `sample_rate_hz` (Hz, ≥ 1) is the rate [`SensorState::update`] is
    /// called at; `filter` must have been built for it. `fallback`: the actuator transfer, or
    /// `None` when no command is available.
    ///
    /// # Errors
    /// [`SensorError::ChannelCount`] unless 1 ≤ C ≤ 4; [`SensorError::Channel`] naming the
    /// channel and field of a bad calibration; [`SensorError::Field`] naming the field
    /// (`sample_rate_hz`, `filter`, `limits.*`, `voting.*`, `fallback.*`).
    pub const fn new(
        sample_rate_hz: u32,
        channels: [ChannelCalibration; C],
        filter: LowPass,
        limits: DiagnosticLimits,
        voting: VotingLimits,
        fallback: Option<ActuatorTransfer>,
    ) -> Result<Self, SensorError> {
        if C == 0 || C > MAX_CHANNELS {
            return Err(SensorError::ChannelCount { channels: C });
        }
        if sample_rate_hz == 0 {
            return Err(field_err("sample_rate_hz", Problem::NotPositive));
        }
        if filter.sample_rate_hz() != sample_rate_hz {
            return Err(field_err("filter", Problem::SampleRateMismatch));
        }
        let mut rest: &[ChannelCalibration] = &channels;
        let mut channel = 0;
        while let [cal, tail @ ..] = rest {
            if let Err(e) = cal.validate(channel) {
                return Err(e);
            }
            channel += 1;
            rest = tail;
        }
        let diagnostics = match Diagnostics::new(limits, sample_rate_hz) {
            Ok(d) => d,
            Err(e) => return Err(e),
        };
        if voting.tolerance.to_bits() <= 0 {
            return Err(field_err("voting.tolerance", Problem::NotPositive));
        }
        if voting.channel_uncertainty.to_bits() < 0 {
            return Err(field_err("voting.channel_uncertainty", Problem::Negative));
        }
        if let Some(tr) = &fallback
            && let Err(e) = tr.validate(voting.channel_uncertainty)
        {
            return Err(e);
        }
        let all: &[ChannelCalibration] = &channels;
        let shared_compensation = match all {
            [first, rest @ ..] => match &first.temperature {
                Some(tc) => {
                    let mut same = true;
                    let mut rest: &[ChannelCalibration] = rest;
                    while let [cal, tail @ ..] = rest {
                        same &= match &cal.temperature {
                            Some(other) => tc.same_as(other),
                            None => false,
                        };
                        rest = tail;
                    }
                    same
                }
                None => false,
            },
            [] => false,
        };
        let actuator_lag = match &fallback {
            Some(tr) => ActuatorLag::new(tr.response_time, sample_rate_hz),
            None => ActuatorLag::NONE,
        };
        Ok(Self {
            sample_rate_hz,
            channels,
            filter,
            diagnostics,
            voting,
            fallback,
            actuator_lag,
            shared_compensation,
        })
    }

    /// Sample rate (Hz).
    pub const fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }

    /// Channel calibrations.
    pub const fn channels(&self) -> &[ChannelCalibration; C] {
        &self.channels
    }

    /// The low-pass filter.
    pub const fn filter(&self) -> &LowPass {
        &self.filter
    }

    /// Diagnostic limits.
    pub const fn limits(&self) -> &DiagnosticLimits {
        &self.diagnostics.limits
    }

    /// Stuck window in samples (time · f_s, rounded, ≥ 1), `None` when the stuck check is off.
    pub const fn stuck_window_samples(&self) -> Option<u32> {
        self.diagnostics.stuck_window()
    }

    /// The rate limit per sample in Q32 newtons (`max_rate` / f_s rounded up): the rate check
    /// allows `noise_band` + k times this after k sample periods.
    pub const fn rate_per_sample_q32(&self) -> i64 {
        self.diagnostics.rate_per_sample_q32
    }

    /// Voting limits.
    pub const fn voting(&self) -> &VotingLimits {
        &self.voting
    }

    /// The actuator transfer, if any.
    pub const fn fallback(&self) -> Option<&ActuatorTransfer> {
        self.fallback.as_ref()
    }
}

/// State of one channel.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct ChannelState {
    diagnostics: ChannelDiagnostics,
    filter: LowPassState,
}

impl ChannelState {
    const NEW: Self = Self {
        diagnostics: ChannelDiagnostics::new(),
        filter: LowPassState::new(),
    };
}

/// Mutable per-sample state of the force sensing (integers only; cannot fail).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct SensorState<const C: usize> {
    channels: [ChannelState; C],
    actuator: ActuatorModel,
    /// Last sensor temperature given (°C).
    temperature: Option<Celsius>,
}

impl<const C: usize> Default for SensorState<C> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const C: usize> SensorState<C> {
    /// Start-up state: no channel has a value yet (each is primed by its first accepted
    /// sample), no flag raised, no temperature known.
    pub const fn new() -> Self {
        Self {
            channels: [ChannelState::NEW; C],
            actuator: ActuatorModel::new(),
            temperature: None,
        }
    }

    /// Condition one sample.
    ///
    /// - `raw`: one raw sample per channel (counts, valid bit).
    /// - `actuator_command`: the command in its unit, if the controller has one; it feeds the
    ///   stuck check, the tie-break and the fallback.
    /// - `sensor_temp`: the force sensor's temperature (°C), if measured; the last one given
    ///   is kept for the samples without.
    ///
    /// O(1), integers only, no panic for any input.
    ///
    /// ```
    /// use clampwise_core::sensor::*;
    /// use clampwise_core::units::{Newtons, Seconds};
    ///
    /// # const CAL: ChannelCalibration = ChannelCalibration {
    /// #     gain: NewtonsPerCount::lit("0.01"),
    /// #     offset: Newtons::ZERO,
    /// #     rails: AdcRails { low: 0, high: 16_777_215, margin: 4 },
    /// #     temperature: None,
    /// # };
    /// # let limits = DiagnosticLimits {
    /// #     force_min: Newtons::lit("-1000"),
    /// #     force_max: Newtons::lit("100000"),
    /// #     max_rate: NewtonsPerSecond::lit("1000000"),
    /// #     noise_band: Newtons::lit("10"),
    /// #     stuck: None,
    /// #     debounce: DebounceSet::uniform(Debounce { raise_after: 2, clear_after: 2 }),
    /// #     max_hold_samples: 0,
    /// # };
    /// # let voting = VotingLimits {
    /// #     tolerance: Newtons::lit("200"),
    /// #     channel_uncertainty: Newtons::lit("50"),
    /// # };
    /// // Two channels and a fallback of 500 N per ampere (fictional winch brake).
    /// let transfer = ActuatorTransfer {
    ///     gain: NewtonsPerCommand::lit("500"),
    ///     offset: Newtons::ZERO,
    ///     hysteresis: Newtons::lit("100"),
    ///     uncertainty: Newtons::lit("1000"),
    ///     response_time: Seconds::ZERO,
    /// };
    /// let filter = LowPass::new(100.0, 1000).unwrap();
    /// let cfg = SensorConfig::new(1000, [CAL; 2], filter, limits, voting, Some(transfer)).unwrap();
    /// let mut state = SensorState::new();
    /// let amps = Some(ActuatorCommand::lit("10"));
    ///
    /// let good = RawChannel { counts: 500_000, valid: true };
    /// let r = state.update(&cfg, &[good, good], amps, None);
    /// assert_eq!((r.force, r.health), (Some(Newtons::lit("5000")), Health::Ok));
    ///
    /// // Both acquisitions drop out: no channel left, the command carries the estimate.
    /// let lost = RawChannel { counts: 0, valid: false };
    /// let r = state.update(&cfg, &[lost, lost], amps, None);
    /// assert_eq!(r.source, ForceSource::ActuatorFallback);
    /// assert_eq!(r.health, Health::Lost);
    /// assert_eq!(r.uncertainty, Newtons::lit("1050")); // 1000 + 100/2
    /// assert!(r.channel_flags[0].contains(ChannelFlags::REJECTED | ChannelFlags::STALE));
    /// ```
    pub fn update(
        &mut self,
        cfg: &SensorConfig<C>,
        raw: &[RawChannel; C],
        actuator_command: Option<ActuatorCommand>,
        sensor_temp: Option<Celsius>,
    ) -> ForceReading {
        if sensor_temp.is_some() {
            self.temperature = sensor_temp;
        }
        let predicted = match (&cfg.fallback, actuator_command) {
            (Some(tr), Some(c)) => Some(self.actuator.update(tr, cfg.actuator_lag, c)),
            _ => None,
        };
        // Filled in place: a returned array struct would be copied with a `memcpy`.
        let mut pass = ChannelPass {
            values: [0; MAX_CHANNELS],
            trail: [0; MAX_CHANNELS],
            usable: 0,
            channel_force: [None; MAX_CHANNELS],
            saturated: false,
            temperature_clamped: false,
        };
        self.condition_channels(cfg, raw, actuator_command, &mut pass);
        let predicted_force = predicted.map(|p| p.force);
        let v = vote_usable::<C>(cfg, &pass, predicted_force);
        let judged = self.judge_channels(cfg, &v, &pass);

        let (force, uncertainty, health, source, implausible) = if v.used.is_empty() {
            match (&cfg.fallback, predicted_force) {
                (Some(tr), Some(p)) => (
                    Some(p),
                    tr.stated_uncertainty(),
                    Health::Lost,
                    ForceSource::ActuatorFallback,
                    false,
                ),
                _ => (
                    None,
                    Newtons::MAX,
                    Health::Lost,
                    ForceSource::Unavailable,
                    false,
                ),
            }
        } else {
            let bound = force_bound(
                cfg.voting.channel_uncertainty,
                &v,
                &pass.channel_force,
                &judged.flags,
                (judged.held, judged.trailing),
                predicted_force.zip(cfg.fallback.as_ref()),
            );
            let all_used = v.used == ChannelMask::first(C);
            let agreed = matches!(v.agreement, Agreement::Single | Agreement::Unanimous);
            // A temperature outside the compensation range leaves the calibration unproven.
            let health = if judged.clean
                && all_used
                && agreed
                && !pass.temperature_clamped
                && !bound.implausible
            {
                Health::Ok
            } else {
                Health::Degraded
            };
            (
                Some(v.force),
                bound.uncertainty,
                health,
                ForceSource::Channels { mask: v.used },
                bound.implausible,
            )
        };
        ForceReading {
            force,
            uncertainty,
            health,
            source,
            agreement: v.agreement,
            channel_flags: judged.flags,
            channel_force: pass.channel_force,
            saturated: pass.saturated || predicted.is_some_and(|p| p.saturated),
            temperature_clamped: pass.temperature_clamped,
            implausible,
        }
    }

    /// One pass over the channels: checks, filter, and the usable values for the vote, into
    /// `pass`.
    // Called once per sample: inlined, so its arrays are built in place.
    #[inline(always)]
    fn condition_channels(
        &mut self,
        cfg: &SensorConfig<C>,
        raw: &[RawChannel; C],
        actuator_command: Option<ActuatorCommand>,
        pass: &mut ChannelPass,
    ) {
        let d = &cfg.diagnostics;
        let mut compensation = None;
        for (i, ((((ch, cal), r), (out, value)), lag)) in self
            .channels
            .iter_mut()
            .zip(cfg.channels.iter())
            .zip(raw.iter())
            .zip(pass.channel_force.iter_mut().zip(pass.values.iter_mut()))
            .zip(pass.trail.iter_mut())
            .enumerate()
        {
            // A compensation every channel shares is evaluated once, for the first.
            if i == 0 || !cfg.shared_compensation {
                compensation = match (&cal.temperature, self.temperature) {
                    (Some(tc), Some(t)) => Some(tc.at(t)),
                    _ => None,
                };
            }
            let c = ch
                .diagnostics
                .check(d, cal, *r, actuator_command, compensation);
            pass.saturated |= c.saturated;
            pass.temperature_clamped |= c.temperature_clamped;
            *out = match c.accepted {
                Some(f) if c.was_stale => {
                    ch.filter.reset(f);
                    Some(f)
                }
                Some(f) => {
                    let y = ch.filter.update(&cfg.filter, f);
                    *lag = f.to_bits().abs_diff(y.to_bits());
                    Some(y)
                }
                None => ch.filter.output(),
            };
            if let Some(x) = *out
                && !ch.diagnostics.flags(d).intersects(ChannelFlags::UNUSABLE)
            {
                *value = x.to_bits();
                pass.usable |= 1 << i;
            }
        }
    }

    /// Each channel against the vote: the disagreement evidence, its flags, whether every
    /// channel is clean, and the largest hold allowance and filter trail of a used channel.
    // Called once per sample: inlined, so its arrays are built in place.
    #[inline(always)]
    fn judge_channels(&mut self, cfg: &SensorConfig<C>, v: &Vote, pass: &ChannelPass) -> Judged {
        let d = &cfg.diagnostics;
        // noise_band ≥ 0 (validated): its unsigned value is exact.
        let noise = d.limits.noise_band.to_bits().unsigned_abs() / 2;
        // tolerance > 0 (validated): its unsigned value is exact.
        let tol = cfg.voting.tolerance.to_bits().unsigned_abs();
        let reference = v.reference().map(|m| m.to_bits());
        let mut judged = Judged {
            flags: [ChannelFlags::empty(); MAX_CHANNELS],
            clean: true,
            held: 0,
            trailing: 0,
        };
        for (i, (((ch, out), flags), &trail)) in self
            .channels
            .iter_mut()
            .zip(pass.channel_force.iter())
            .zip(judged.flags.iter_mut())
            .zip(pass.trail.iter())
            .enumerate()
        {
            // One channel has no other to disagree with.
            if C > 1 {
                let evidence = match (reference, out, ch.diagnostics.accepted_now()) {
                    (Some(m), Some(x), true) => {
                        if x.to_bits().abs_diff(m) <= tol {
                            Evidence::Good
                        } else {
                            Evidence::Bad
                        }
                    }
                    _ => Evidence::None,
                };
                ch.diagnostics.disagreement(d, evidence);
            }
            *flags = ch.diagnostics.flags(d);
            judged.clean &= flags.is_empty();
            if v.used.contains(i) {
                let k = ch.diagnostics.held_for();
                if k > 0 {
                    judged.held = judged.held.max(d.allowance_q8(k, true));
                }
                judged.trailing = judged.trailing.max(trail.saturating_sub(noise));
            }
        }
        judged
    }
}

/// What one pass over the channels leaves for the vote.
struct ChannelPass {
    /// Filtered force of each usable channel (raw `Newtons` bits).
    values: [i32; MAX_CHANNELS],
    /// How far each channel's filter output trails its newest accepted sample (Q8 N; 0 when
    /// no sample was filtered in).
    trail: [u32; MAX_CHANNELS],
    /// Bit i set: channel i may vote.
    usable: u8,
    /// Each channel's filtered force, when it has one.
    channel_force: [Option<Newtons>; MAX_CHANNELS],
    saturated: bool,
    temperature_clamped: bool,
}

/// Each channel judged against the vote.
struct Judged {
    flags: [ChannelFlags; MAX_CHANNELS],
    clean: bool,
    /// Largest hold allowance of a used channel, Q8 N rounded up (saturated).
    held: u64,
    /// How far the filter trails a moving force beyond the newest sample's own noise (half
    /// the peak-to-peak `noise_band`; `channel_uncertainty` already covers the noise), largest
    /// over the used channels (Q8 N).
    trailing: u32,
}

/// The vote among the usable channels; one channel is passed through when usable
/// (tolerance > 0, validated), as the vote would.
// Called once per sample: inlined, so its arrays are built in place.
#[inline(always)]
fn vote_usable<const C: usize>(
    cfg: &SensorConfig<C>,
    pass: &ChannelPass,
    predicted: Option<Newtons>,
) -> Vote {
    if C == 1 {
        match (pass.usable, pass.values.first()) {
            (1, Some(&x)) => Vote {
                used: ChannelMask::from_bits(1),
                force: Newtons::from_bits(x),
                agreement: Agreement::Single,
                spread: Newtons::ZERO,
            },
            _ => Vote {
                used: ChannelMask::EMPTY,
                force: Newtons::ZERO,
                agreement: Agreement::NoChannels,
                spread: Newtons::ZERO,
            },
        }
    } else {
        voting::vote_among(
            &pass.values,
            pass.usable,
            cfg.voting.tolerance.to_bits(),
            predicted.map(|p| p.to_bits()),
        )
    }
}

// Parts of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for ChannelState {
    const LEN: usize = ChannelDiagnostics::LEN + LowPassState::LEN;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        self.diagnostics.write(w);
        self.filter.write(w);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        Some(Self {
            diagnostics: ChannelDiagnostics::read(r)?,
            filter: LowPassState::read(r)?,
        })
    }
}

impl<const C: usize> crate::estimator::snapshot::Snapshot for SensorState<C> {
    const LEN: usize = C * ChannelState::LEN + ActuatorModel::LEN + 5;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        for channel in &self.channels {
            channel.write(w);
        }
        self.actuator.write(w);
        w.option_i32(self.temperature.map(Celsius::to_bits));
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        let mut channels = [ChannelState::NEW; C];
        for channel in &mut channels {
            *channel = ChannelState::read(r)?;
        }
        Some(Self {
            channels,
            actuator: ActuatorModel::read(r)?,
            temperature: r.option_i32("sensor.temperature")?.map(Celsius::from_bits),
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::panic)]
mod tests {
    use super::*;
    use crate::units::Seconds;

    const CAL: ChannelCalibration = ChannelCalibration {
        gain: NewtonsPerCount::lit("0.01"),
        offset: Newtons::ZERO,
        rails: AdcRails {
            low: 0,
            high: 16_777_215,
            margin: 4,
        },
        temperature: None,
    };
    const LIMITS: DiagnosticLimits = DiagnosticLimits {
        force_min: Newtons::lit("-1000"),
        force_max: Newtons::lit("100000"),
        max_rate: NewtonsPerSecond::lit("1000000"),
        noise_band: Newtons::lit("10"),
        stuck: Some(StuckCheck {
            time: Seconds::lit("0.1"),
            command_span: ActuatorCommand::lit("0.5"),
        }),
        debounce: DebounceSet::uniform(Debounce {
            raise_after: 2,
            clear_after: 2,
        }),
        max_hold_samples: 1,
    };
    const VOTING: VotingLimits = VotingLimits {
        tolerance: Newtons::lit("200"),
        channel_uncertainty: Newtons::lit("50"),
    };
    const TRANSFER: ActuatorTransfer = ActuatorTransfer {
        gain: NewtonsPerCommand::lit("500"),
        offset: Newtons::ZERO,
        hysteresis: Newtons::lit("100"),
        uncertainty: Newtons::lit("1000"),
        response_time: Seconds::ZERO,
    };
    // α = 1/16, from a build script for instance.
    const FILTER: LowPass = match LowPass::from_bits(1 << 56, 1000) {
        Ok(f) => f,
        Err(_) => panic!("bad filter"),
    };
    // The whole configuration built at compile time: a firmware keeps it in flash.
    const CFG: SensorConfig<2> =
        match SensorConfig::new(1000, [CAL; 2], FILTER, LIMITS, VOTING, Some(TRANSFER)) {
            Ok(c) => c,
            Err(_) => panic!("bad sensor configuration"),
        };

    #[test]
    fn a_const_configuration_runs() {
        let mut s = SensorState::new();
        let raw = [RawChannel {
            counts: 500_000,
            valid: true,
        }; 2];
        let r = s.update(&CFG, &raw, Some(ActuatorCommand::lit("10")), None);
        assert_eq!(r.force, Some(Newtons::lit("5000")));
        assert_eq!(r.health, Health::Ok);
        assert_eq!(CFG.stuck_window_samples(), Some(100));
        assert_eq!(CFG.rate_per_sample_q32(), 1000 << 32);
    }

    fn build<const C: usize>(
        channels: [ChannelCalibration; C],
        filter: LowPass,
        limits: DiagnosticLimits,
        voting: VotingLimits,
        fallback: Option<ActuatorTransfer>,
    ) -> SensorError {
        SensorConfig::new(1000, channels, filter, limits, voting, fallback).unwrap_err()
    }

    fn field(field: &'static str, problem: Problem) -> SensorError {
        SensorError::Field { field, problem }
    }

    #[test]
    fn bad_configurations_name_the_field() {
        let t = Some(TRANSFER);
        assert_eq!(
            build::<0>([], FILTER, LIMITS, VOTING, t),
            SensorError::ChannelCount { channels: 0 }
        );
        assert_eq!(
            build([CAL; 5], FILTER, LIMITS, VOTING, t),
            SensorError::ChannelCount { channels: 5 }
        );
        let other_rate = LowPass::from_bits(1 << 56, 2000).unwrap();
        assert_eq!(
            build([CAL; 1], other_rate, LIMITS, VOTING, t),
            field("filter", Problem::SampleRateMismatch)
        );
        let zero_gain = ChannelCalibration {
            gain: NewtonsPerCount::ZERO,
            ..CAL
        };
        assert_eq!(
            build([CAL, zero_gain, CAL], FILTER, LIMITS, VOTING, t),
            SensorError::Channel {
                channel: 1,
                field: "gain",
                problem: Problem::Zero
            }
        );
        let inverted = DiagnosticLimits {
            force_max: Newtons::lit("-1000"),
            ..LIMITS
        };
        assert_eq!(
            build([CAL; 1], FILTER, inverted, VOTING, t),
            field("limits.force_max", Problem::NotAboveLowerBound)
        );
        let full = DiagnosticLimits {
            force_max: Newtons::MAX,
            ..LIMITS
        };
        assert_eq!(
            build([CAL; 1], FILTER, full, VOTING, t),
            field("limits.force_max", Problem::OutOfRange)
        );
        let mut no_rate_debounce = LIMITS;
        no_rate_debounce.debounce.rate.raise_after = 0;
        assert_eq!(
            build([CAL; 1], FILTER, no_rate_debounce, VOTING, t),
            field("limits.debounce.rate", Problem::NotPositive)
        );
        let instant_stuck = DiagnosticLimits {
            stuck: Some(StuckCheck {
                time: Seconds::ZERO,
                command_span: ActuatorCommand::ONE,
            }),
            ..LIMITS
        };
        assert_eq!(
            build([CAL; 1], FILTER, instant_stuck, VOTING, t),
            field("limits.stuck.time", Problem::NotPositive)
        );
        let no_tolerance = VotingLimits {
            tolerance: Newtons::ZERO,
            ..VOTING
        };
        assert_eq!(
            build([CAL; 1], FILTER, LIMITS, no_tolerance, t),
            field("voting.tolerance", Problem::NotPositive)
        );
        let confident = ActuatorTransfer {
            uncertainty: Newtons::lit("50"),
            ..TRANSFER
        };
        assert_eq!(
            build([CAL; 1], FILTER, LIMITS, VOTING, Some(confident)),
            field("fallback.uncertainty", Problem::UncertaintyNotLarger)
        );
    }

    #[test]
    fn channel_masks() {
        assert_eq!(ChannelMask::first(3).bits(), 0b111);
        assert_eq!(ChannelMask::first(9).bits(), 0b1111);
        assert_eq!(ChannelMask::first(0), ChannelMask::EMPTY);
        assert!(ChannelMask::from_bits(0b1010).contains(3));
        assert!(!ChannelMask::from_bits(0xff).contains(4));
        assert_eq!(ChannelMask::from_bits(0xff).count(), 4);
    }
}
