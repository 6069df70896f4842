//! Per-channel diagnostics: acquisition invalid bit, ADC rails, force range, rate of change,
//! stuck signal, and (fed from the vote) disagreement with the other channels.
//!
//! Every sample, each check gives [`Evidence`] that is debounced on its own ([`DebounceSet`]);
//! the seven debounces of a channel share one bank of counters, so a sample whose evidence
//! agrees with every flag's state (a healthy channel passing its checks) costs a few bit
//! operations, not seven state machines.
//! Independently of the debounce, a sample that fails an *instantaneous* check (invalid bit,
//! rail, out of range, rate) is **rejected**: it never enters the channel's filter, and the
//! channel's last accepted value may stand in for at most `max_hold_samples` samples (the
//! reading is then at best degraded). A channel with any raised flag, or stale for longer, is
//! not used at all.
//!
//! | check | evidence `Bad` when | `None` (no evidence) when |
//! |---|---|---|
//! | invalid | the acquisition's valid bit is false | never |
//! | rail low / high | counts ≤ `low + margin` / ≥ `high − margin` | sample invalid |
//! | range | calibrated force outside `force_min ..= force_max` | invalid, at a rail |
//! | rate | \|F − F_last accepted\| > `noise_band` + `max_rate` · k · T, k samples since it | as above, or nothing accepted yet |
//! | stuck | F within `noise_band` of the window's first sample for ≥ `time` **and** the actuator command spanned ≥ `command_span` in that window | as above, window not yet full, or command still |
//! | disagreement | the filtered value is beyond `tolerance` from the vote's consensus | sample rejected, one channel, no consensus |
//!
//! Stated latencies (samples from the first faulty sample to the flag, exactly; `N` is the
//! check's `raise_after`):
//! - a sample failing an instantaneous check is rejected in that same sample (latency 0);
//!   the channel then stands on its last accepted value for at most `max_hold_samples`.
//! - invalid, rail, range: `N`.
//! - rate, for a step of S newtons after a settled signal: bad for the k = 1, 2, … with
//!   S > noise + r·k (r = `max_rate`/f_s), i.e. K = ⌈(S − noise)/r⌉ − 1 samples; raised at
//!   sample `N` if K ≥ `N`, else never (the step is then accepted after K samples).
//!   A one-sample spike is rejected for one sample and raised only if `N` = 1.
//! - stuck: W + `N` − 1 samples after the window's first sample, W = `time`·f_s rounded, when the
//!   command had already spanned `command_span` by then.
//! - disagreement: from the first sample at which the *filtered* value is beyond the
//!   tolerance, `N` samples.
//!
//! Clearing takes `M` (`clear_after`) good samples in the same way. The checks on the sample
//! run before the vote, so a channel whose invalid/rail/range/rate/stuck flag clears is used in
//! that same sample; the disagreement evidence comes from the vote, so a channel whose
//! disagreement flag clears rejoins the vote in the next sample. A channel that returns to the
//! truth with a jump (a liar coming back, a sensor un-sticking) is rate-checked like any other
//! jump: rejected until the allowance covers it, then its filter restarts from the sample if
//! its hold had run out.

use bitflags::bitflags;

use super::calibration::{ChannelCalibration, Compensation, Rail};
use super::debounce::{Debounce, DebounceBank, Evidence};
use super::error::{Problem, SensorError, si_field};
use super::{ActuatorCommand, NewtonsPerSecond, RawChannel};
use crate::units::{Newtons, Seconds};

bitflags! {
    /// Flag word of one channel for one sample.
    ///
    /// Bits 0–6 are debounced diagnostics (raised after N bad samples, cleared after M good);
    /// bits 8–9 describe this sample. A channel is used in the vote only when bits 0–6 and
    /// `STALE` are all clear.
    #[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
    pub struct ChannelFlags: u16 {
        /// Debounced: the acquisition marked the samples invalid (dropout, CRC, not ready).
        const INVALID = 1 << 0;
        /// Debounced: counts at the low ADC rail (open or short circuit, by the front end).
        const RAIL_LOW = 1 << 1;
        /// Debounced: counts at the high ADC rail (open or short circuit, overload).
        const RAIL_HIGH = 1 << 2;
        /// Debounced: calibrated force outside the configured plausible range.
        const OUT_OF_RANGE = 1 << 3;
        /// Debounced: force changed faster than the actuator can change it.
        const RATE = 1 << 4;
        /// Debounced: force did not move beyond the noise band while the command moved.
        const STUCK = 1 << 5;
        /// Debounced: the channel disagrees with the consensus of the other channels.
        const DISAGREE = 1 << 6;
        /// This sample failed an instantaneous check and was not used; the channel's value
        /// is its last accepted one.
        const REJECTED = 1 << 8;
        /// No accepted sample yet, or none for more than `max_hold_samples`: the channel's
        /// value is too old to use.
        const STALE = 1 << 9;
    }
}

impl ChannelFlags {
    /// The debounced diagnostic bits.
    pub const FAULTS: Self = Self::INVALID
        .union(Self::RAIL_LOW)
        .union(Self::RAIL_HIGH)
        .union(Self::OUT_OF_RANGE)
        .union(Self::RATE)
        .union(Self::STUCK)
        .union(Self::DISAGREE);

    /// Bits that keep a channel out of the vote.
    pub const UNUSABLE: Self = Self::FAULTS.union(Self::STALE);
}

/// The debounced diagnostics as bits of a [`DebounceBank`]: the same bits as their flags, so
/// the bank's raised set is the low byte of the flag word.
mod bit {
    pub(super) const INVALID: u8 = 1 << 0;
    pub(super) const RAIL_LOW: u8 = 1 << 1;
    pub(super) const RAIL_HIGH: u8 = 1 << 2;
    pub(super) const RANGE: u8 = 1 << 3;
    pub(super) const RATE: u8 = 1 << 4;
    pub(super) const STUCK: u8 = 1 << 5;
    pub(super) const DISAGREE: u8 = 1 << 6;
}

const _: () = {
    let flags = [
        (ChannelFlags::INVALID, bit::INVALID),
        (ChannelFlags::RAIL_LOW, bit::RAIL_LOW),
        (ChannelFlags::RAIL_HIGH, bit::RAIL_HIGH),
        (ChannelFlags::OUT_OF_RANGE, bit::RANGE),
        (ChannelFlags::RATE, bit::RATE),
        (ChannelFlags::STUCK, bit::STUCK),
        (ChannelFlags::DISAGREE, bit::DISAGREE),
    ];
    let mut rest: &[(ChannelFlags, u8)] = &flags;
    while let [(flag, bit), tail @ ..] = rest {
        assert!(flag.bits() == *bit as u16);
        rest = tail;
    }
    assert!(ChannelFlags::FAULTS.bits() == 0x7f);
};

/// The counts of diagnostic `i` of a channel's [`DebounceBank`] (bit order of [`bit`]).
fn debounce_of(set: &DebounceSet, i: usize) -> Debounce {
    match i {
        0 => set.invalid,
        1 | 2 => set.rail,
        3 => set.range,
        4 => set.rate,
        5 => set.stuck,
        _ => set.disagreement,
    }
}

#[cfg(feature = "defmt")]
impl defmt::Format for ChannelFlags {
    fn format(&self, f: defmt::Formatter<'_>) {
        defmt::write!(f, "ChannelFlags({=u16:#x})", self.bits());
    }
}

/// Debounce counts of each diagnostic.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DebounceSet {
    /// Acquisition invalid bit.
    pub invalid: Debounce,
    /// ADC rails (low and high each).
    pub rail: Debounce,
    /// Force range.
    pub range: Debounce,
    /// Rate of change.
    pub rate: Debounce,
    /// Stuck signal.
    pub stuck: Debounce,
    /// Disagreement with the other channels.
    pub disagreement: Debounce,
}

impl DebounceSet {
    /// The same counts for every diagnostic.
    pub const fn uniform(d: Debounce) -> Self {
        Self {
            invalid: d,
            rail: d,
            range: d,
            rate: d,
            stuck: d,
            disagreement: d,
        }
    }

    const fn validate(&self) -> Result<(), SensorError> {
        let all = [
            (self.invalid, "limits.debounce.invalid"),
            (self.rail, "limits.debounce.rail"),
            (self.range, "limits.debounce.range"),
            (self.rate, "limits.debounce.rate"),
            (self.stuck, "limits.debounce.stuck"),
            (self.disagreement, "limits.debounce.disagreement"),
        ];
        let mut rest: &[(Debounce, &'static str)] = &all;
        while let [(d, field), tail @ ..] = rest {
            if let Err(e) = d.validate(field) {
                return Err(e);
            }
            rest = tail;
        }
        Ok(())
    }
}

/// Stuck-signal check.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StuckCheck {
    /// How long the force must stay within the noise band (s, > 0); rounded to the nearest
    /// whole number of samples, at least one.
    pub time: Seconds,
    /// How far the actuator command must move in that time for "no change" to be a fault
    /// (command units, > 0). Set it above the command's own noise.
    pub command_span: ActuatorCommand,
}

/// Limits of the per-channel diagnostics (configuration input; validated by
/// [`super::SensorConfig::new`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DiagnosticLimits {
    /// Lowest plausible clamp force (N); above [`Newtons::MIN`].
    pub force_min: Newtons,
    /// Highest plausible clamp force (N); above `force_min`, below [`Newtons::MAX`].
    pub force_max: Newtons,
    /// Fastest change of clamp force the actuator can produce (N/s, > 0).
    pub max_rate: NewtonsPerSecond,
    /// Peak-to-peak noise of a healthy channel (N, ≥ 0): the rate check's allowance and the
    /// stuck check's band.
    pub noise_band: Newtons,
    /// Stuck-signal check, or `None` to leave it out.
    pub stuck: Option<StuckCheck>,
    /// Debounce of each diagnostic.
    pub debounce: DebounceSet,
    /// Samples for which a channel's last accepted value may stand in for rejected samples
    /// (0 ..= 65 535; 0: a rejected sample takes the channel out of the vote at once).
    pub max_hold_samples: u16,
}

impl DiagnosticLimits {
    /// Limits from SI values with the usual settings for the rest \[practice\]: each
    /// diagnostic raised after 3 samples in a row and cleared after 10, a rejected sample held
    /// for at most 2 samples, no stuck check. `force_min_n` … `force_max_n` is the plausible
    /// clamp force (N), `max_rate_n_per_s` the fastest change the actuator can make (N/s) and
    /// `noise_band_n` a healthy channel's peak-to-peak noise (N).
    ///
    /// # Errors
    /// [`SensorError::Field`] naming a value that is not finite or not representable; the
    /// relations between them are checked by [`super::SensorConfig::new`].
    pub fn new(
        force_min_n: f64,
        force_max_n: f64,
        max_rate_n_per_s: f64,
        noise_band_n: f64,
    ) -> Result<Self, SensorError> {
        Ok(Self {
            force_min: si_field(force_min_n, "limits.force_min")?,
            force_max: si_field(force_max_n, "limits.force_max")?,
            max_rate: si_field(max_rate_n_per_s, "limits.max_rate")?,
            noise_band: si_field(noise_band_n, "limits.noise_band")?,
            stuck: None,
            debounce: DebounceSet::uniform(Debounce {
                raise_after: 3,
                clear_after: 10,
            }),
            max_hold_samples: 2,
        })
    }
}

/// Validated limits with the per-sample constants derived from the sample rate.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct Diagnostics {
    pub(crate) limits: DiagnosticLimits,
    /// `max_rate` / f_s in Q32 newtons per sample, rounded up.
    pub(crate) rate_per_sample_q32: i64,
    /// Whole Q8 newtons of `rate_per_sample_q32` (its bits from 24 on), at most `u32::MAX`:
    /// a larger rate allows any change after one sample anyway.
    rate_q8: u32,
    /// The bits of `rate_per_sample_q32` below Q8 (< 2²⁴).
    rate_fraction: u32,
    /// Stuck window in samples (≥ 1), 0 when the check is off.
    stuck_window: u32,
}

const fn field_err(field: &'static str, problem: Problem) -> SensorError {
    SensorError::Field { field, problem }
}

impl Diagnostics {
    pub(crate) const fn new(
        limits: DiagnosticLimits,
        sample_rate_hz: u32,
    ) -> Result<Self, SensorError> {
        let (lo, hi) = (limits.force_min.to_bits(), limits.force_max.to_bits());
        if lo == i32::MIN {
            return Err(field_err("limits.force_min", Problem::OutOfRange));
        }
        if hi == i32::MAX {
            return Err(field_err("limits.force_max", Problem::OutOfRange));
        }
        if hi <= lo {
            return Err(field_err("limits.force_max", Problem::NotAboveLowerBound));
        }
        if limits.max_rate.to_bits() <= 0 {
            return Err(field_err("limits.max_rate", Problem::NotPositive));
        }
        if limits.noise_band.to_bits() < 0 {
            return Err(field_err("limits.noise_band", Problem::Negative));
        }
        if let Err(e) = limits.debounce.validate() {
            return Err(e);
        }
        if sample_rate_hz == 0 {
            return Err(field_err("sample_rate_hz", Problem::NotPositive));
        }
        let fs = sample_rate_hz as i64;
        let rate = limits.max_rate.to_bits();
        let rate_per_sample_q32 = (rate + fs - 1) / fs;
        let stuck_window = match &limits.stuck {
            None => 0,
            Some(s) => {
                if s.time.to_bits() <= 0 {
                    return Err(field_err("limits.stuck.time", Problem::NotPositive));
                }
                if s.command_span.to_bits() <= 0 {
                    return Err(field_err("limits.stuck.command_span", Problem::NotPositive));
                }
                // time · f_s from Q32 seconds, rounded to the nearest sample: a decimal time
                // such as 0.05 s is not exact in binary, and rounding up would add a sample.
                let w = ((s.time.to_bits() as i128) * (fs as i128) + (1i128 << 31)) >> 32;
                let w = if w < 1 { 1 } else { w };
                if w > u32::MAX as i128 {
                    return Err(field_err("limits.stuck.time", Problem::OutOfRange));
                }
                // 1 ≤ w ≤ u32::MAX checked just above (`try_from` is not const).
                #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
                let w = w as u32;
                w
            }
        };
        // rate ≥ 1 (validated), so rate_per_sample_q32 ≥ 1 and the shift and mask below are of
        // a positive value.
        let whole = rate_per_sample_q32 >> 24;
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let rate_q8 = if whole > u32::MAX as i64 {
            u32::MAX
        } else {
            whole as u32
        };
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let rate_fraction = (rate_per_sample_q32 & ((1 << 24) - 1)) as u32;
        Ok(Self {
            limits,
            rate_per_sample_q32,
            rate_q8,
            rate_fraction,
            stuck_window,
        })
    }

    /// Stuck window in samples, `None` when the check is off.
    pub(crate) const fn stuck_window(&self) -> Option<u32> {
        if self.stuck_window == 0 {
            None
        } else {
            Some(self.stuck_window)
        }
    }

    /// Largest change a healthy channel can show over `samples` (≥ 1) sample periods,
    /// A = `noise_band` + `max_rate`·k·T (Q32 N), as Q8 newtons rounded down (`round_up`
    /// false) or up; saturated to `u64::MAX`, it is never below the exact value's when that
    /// exceeds `u32::MAX`, so comparisons with any i32 difference and sums clamped to i32
    /// are unchanged.
    ///
    /// With r = `rate_per_sample_q32` = h·2²⁴ + l (l < 2²⁴), A/2²⁴ = noise + h·k + l·k/2²⁴:
    /// h ≤ 2³² − 1 (clamped, see `rate_q8`) and k < 2³² make h·k ≤ 2⁶⁴ − 2³³ + 1 and
    /// l·k < 2⁵⁶, so everything is 32×32→64-bit work, exact.
    #[inline]
    pub(crate) fn allowance_q8(&self, samples: u32, round_up: bool) -> u64 {
        let noise = u64::from(self.limits.noise_band.to_bits().unsigned_abs());
        if samples == 1 && !round_up {
            // The sample after an accepted one, the usual case: l < 2²⁴ adds nothing.
            return noise + u64::from(self.rate_q8);
        }
        let k = u64::from(samples);
        let fraction = u64::from(self.rate_fraction) * k + if round_up { (1 << 24) - 1 } else { 0 };
        (u64::from(self.rate_q8) * k)
            .saturating_add(noise)
            .saturating_add(fraction >> 24)
    }
}

/// Stuck-signal window of one channel.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
struct StuckWindow {
    primed: bool,
    /// Force at the start of the window (Q8 bits).
    reference: i32,
    /// Samples since the start of the window.
    quiet: u32,
    /// Command range seen in the window (Q16 bits); `lo > hi` (empty) while no command has
    /// been seen, so a first command sets both through the same `min`/`max`.
    command_lo: i32,
    command_hi: i32,
}

impl StuckWindow {
    const fn new() -> Self {
        Self {
            primed: false,
            reference: 0,
            quiet: 0,
            command_lo: i32::MAX,
            command_hi: i32::MIN,
        }
    }

    #[inline]
    fn step(
        &mut self,
        force: i32,
        command: Option<i32>,
        band: i32,
        window: u32,
        span: i32,
    ) -> Evidence {
        // `band` ≥ 0 (validated), so its unsigned value is exact.
        let moved = force.abs_diff(self.reference) > band.unsigned_abs();
        if !self.primed || moved {
            let evidence = if self.primed {
                Evidence::Good
            } else {
                Evidence::None
            };
            let (lo, hi) = command.map_or((i32::MAX, i32::MIN), |c| (c, c));
            *self = Self {
                primed: true,
                reference: force,
                quiet: 0,
                command_lo: lo,
                command_hi: hi,
            };
            return evidence;
        }
        self.quiet = self.quiet.saturating_add(1);
        if let Some(c) = command {
            self.command_lo = self.command_lo.min(c);
            self.command_hi = self.command_hi.max(c);
        }
        // With a command seen, hi ≥ lo and the distance is hi − lo exactly; `span` > 0
        // (validated).
        let spanned = self.command_hi >= self.command_lo
            && self.command_hi.abs_diff(self.command_lo) >= span.unsigned_abs();
        if self.quiet >= window && spanned {
            Evidence::Bad
        } else {
            Evidence::None
        }
    }
}

/// What the instantaneous checks made of one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Checked {
    /// The calibrated force, when the sample was accepted.
    pub(crate) accepted: Option<Newtons>,
    /// The channel was stale before this sample (its filter must restart from it).
    pub(crate) was_stale: bool,
    /// At a rail, or the calibration saturated.
    pub(crate) saturated: bool,
    pub(crate) temperature_clamped: bool,
}

/// Diagnostic state of one channel (mutated every sample, cannot fail).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct ChannelDiagnostics {
    /// The seven debounced diagnostics, bits as in [`bit`].
    debounce: DebounceBank,
    stuck_window: StuckWindow,
    /// Last accepted calibrated force (Q8 bits).
    last_accepted: i32,
    /// Sample periods since the last accepted sample: 0 when this sample was accepted (or
    /// before the first), else the length of the run of rejected samples (≥ 1, saturating).
    since_accepted: u32,
    ever_accepted: bool,
}

impl ChannelDiagnostics {
    pub(crate) const fn new() -> Self {
        Self {
            debounce: DebounceBank::new(),
            stuck_window: StuckWindow::new(),
            last_accepted: 0,
            since_accepted: 0,
            ever_accepted: false,
        }
    }

    #[inline]
    fn stale(&self, d: &Diagnostics) -> bool {
        // 0 while accepted, so the comparison is only true for a run of rejected samples.
        !self.ever_accepted || self.since_accepted > u32::from(d.limits.max_hold_samples)
    }

    /// Samples since the last accepted sample (0 in the sample that was accepted).
    pub(crate) const fn held_for(&self) -> u32 {
        self.since_accepted
    }

    /// Run the instantaneous checks on one raw sample (calibrated with `compensation`, the
    /// channel's temperature compensation at this sample's temperature) and debounce them.
    // Always inlined: its one caller runs it per channel, and the result (`Checked`) and the
    // channel state then stay in registers instead of going through memory.
    #[inline(always)]
    pub(crate) fn check(
        &mut self,
        d: &Diagnostics,
        cal: &ChannelCalibration,
        raw: RawChannel,
        command: Option<ActuatorCommand>,
        compensation: Option<Compensation>,
    ) -> Checked {
        let was_stale = self.stale(d);
        // Rejected unless the checks below accept it (which sets it back to 0).
        self.since_accepted = self.since_accepted.saturating_add(1);
        let mut out = Checked {
            accepted: None,
            was_stale,
            saturated: false,
            temperature_clamped: false,
        };
        // Evidence of this sample as (bad, good) bits; a check not made gives neither.
        let (bad, good) = 'evidence: {
            if !raw.valid {
                break 'evidence (bit::INVALID, 0);
            }
            match cal.rails.classify(raw.counts) {
                Rail::Inside => {}
                Rail::Low => {
                    out.saturated = true;
                    break 'evidence (bit::RAIL_LOW, bit::INVALID | bit::RAIL_HIGH);
                }
                Rail::High => {
                    out.saturated = true;
                    break 'evidence (bit::RAIL_HIGH, bit::INVALID | bit::RAIL_LOW);
                }
            }
            let cal_out = cal.force_with(raw.counts, compensation);
            out.saturated = cal_out.saturated;
            out.temperature_clamped = cal_out.temperature_clamped;
            let f = cal_out.force.to_bits();
            let l = &d.limits;
            let mut bad = 0;
            let mut good = bit::INVALID | bit::RAIL_LOW | bit::RAIL_HIGH;
            let in_range = f >= l.force_min.to_bits() && f <= l.force_max.to_bits();
            if in_range {
                good |= bit::RANGE;
            } else {
                bad |= bit::RANGE;
            }
            // |F − F_last|·2²⁴ ≤ A ⇔ |F − F_last| ≤ ⌊A/2²⁴⌋: the change is a whole number of
            // Q8 steps, and i32 differences fit u32 exactly.
            let rate_ok = !self.ever_accepted
                || u64::from(f.abs_diff(self.last_accepted))
                    <= d.allowance_q8(self.since_accepted, false);
            if self.ever_accepted {
                if rate_ok {
                    good |= bit::RATE;
                } else {
                    bad |= bit::RATE;
                }
            }
            if let (Some(window), Some(s)) = (d.stuck_window(), &l.stuck) {
                match self.stuck_window.step(
                    f,
                    command.map(|c| c.to_bits()),
                    l.noise_band.to_bits(),
                    window,
                    s.command_span.to_bits(),
                ) {
                    Evidence::Bad => bad |= bit::STUCK,
                    Evidence::Good => good |= bit::STUCK,
                    Evidence::None => {}
                }
            }
            if in_range && rate_ok {
                self.ever_accepted = true;
                self.last_accepted = f;
                self.since_accepted = 0;
                out.accepted = Some(cal_out.force);
            }
            (bad, good)
        };
        let db = &d.limits.debounce;
        self.debounce.update(bad, good, |i| debounce_of(db, i));
        out
    }

    /// Debounce the disagreement evidence from the vote.
    #[inline]
    pub(crate) fn disagreement(&mut self, d: &Diagnostics, evidence: Evidence) {
        let (bad, good) = match evidence {
            Evidence::Bad => (bit::DISAGREE, 0),
            Evidence::Good => (0, bit::DISAGREE),
            Evidence::None => return,
        };
        let db = &d.limits.debounce;
        self.debounce.update(bad, good, |i| debounce_of(db, i));
    }

    /// Whether this sample was accepted.
    pub(crate) const fn accepted_now(&self) -> bool {
        self.since_accepted == 0
    }

    /// The channel's flag word after this sample.
    #[inline]
    pub(crate) fn flags(&self, d: &Diagnostics) -> ChannelFlags {
        let mut f = ChannelFlags::from_bits_retain(u16::from(self.debounce.raised()));
        f.set(ChannelFlags::REJECTED, self.since_accepted != 0);
        f.set(ChannelFlags::STALE, self.stale(d));
        f
    }
}

// Parts of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for StuckWindow {
    const LEN: usize = 1 + 4 * 4;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.bool(self.primed);
        w.i32(self.reference);
        w.u32(self.quiet);
        w.i32(self.command_lo);
        w.i32(self.command_hi);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        Some(Self {
            primed: r.bool("stuck.primed")?,
            reference: r.i32()?,
            quiet: r.u32()?,
            command_lo: r.i32()?,
            command_hi: r.i32()?,
        })
    }
}

impl crate::estimator::snapshot::Snapshot for ChannelDiagnostics {
    const LEN: usize = DebounceBank::LEN + StuckWindow::LEN + 4 + 4 + 1;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        self.debounce.write(w);
        self.stuck_window.write(w);
        w.i32(self.last_accepted);
        w.u32(self.since_accepted);
        w.bool(self.ever_accepted);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        Some(Self {
            debounce: DebounceBank::read(r)?,
            stuck_window: StuckWindow::read(r)?,
            last_accepted: r.i32()?,
            since_accepted: r.u32()?,
            ever_accepted: r.bool("diagnostics.ever_accepted")?,
        })
    }
}
