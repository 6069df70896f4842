//! The f32 twin's sensor diagnostics: the same checks the fixed-point core makes on every
//! channel and sample, written plainly in f32 for a core with an FPU, so that the twin does the
//! same work per sample (it is the step-cost peer, not a second estimator).
//!
//! Per channel and sample: acquisition valid bit, ADC rails (with margin), plausible range,
//! rate of change since the last accepted sample (noise band + rate × samples), stuck signal
//! (the force stays within the noise band for a window while the command moves), each
//! debounced on its own (raise after N bad samples in a row, clear after M good); a rejected
//! sample leaves the filter alone and the channel stands on its last value for at most
//! `max_hold` samples; the vote's disagreement with the consensus is debounced the same way.

/// Bits of a channel's debounced checks.
pub mod check {
    /// Acquisition valid bit false.
    pub const INVALID: u8 = 1 << 0;
    /// At the low rail.
    pub const RAIL_LOW: u8 = 1 << 1;
    /// At the high rail.
    pub const RAIL_HIGH: u8 = 1 << 2;
    /// Outside the plausible range.
    pub const RANGE: u8 = 1 << 3;
    /// Faster than the rate limit.
    pub const RATE: u8 = 1 << 4;
    /// Stuck while the command moved.
    pub const STUCK: u8 = 1 << 5;
    /// Away from the vote's consensus.
    pub const DISAGREE: u8 = 1 << 6;
}

/// The diagnostic limits, in f32 and samples.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlainLimits {
    /// Plausible force range, N.
    pub force_range: (f32, f32),
    /// Counts at or below this are at the low rail (rail + margin).
    pub rail_low: i32,
    /// Counts at or above this are at the high rail (rail − margin).
    pub rail_high: i32,
    /// Noise band, N.
    pub noise_band: f32,
    /// Largest plausible change per sample, N.
    pub rate_per_sample: f32,
    /// Stuck check: window in samples and the command span that must be seen in it.
    pub stuck: Option<(u32, f32)>,
    /// Bad samples in a row that raise a flag.
    pub raise_after: u8,
    /// Good samples in a row that clear it.
    pub clear_after: u8,
    /// Samples a channel may stand on its last accepted value.
    pub max_hold: u32,
}

impl PlainLimits {
    /// Permissive limits (no check ever fails), for a configuration filled in later.
    pub const OPEN: Self = Self {
        force_range: (f32::MIN, f32::MAX),
        rail_low: i32::MIN,
        rail_high: i32::MAX,
        noise_band: f32::MAX,
        rate_per_sample: f32::MAX,
        stuck: None,
        raise_after: 1,
        clear_after: 1,
        max_hold: 0,
    };
}

/// One channel's diagnostic state.
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct PlainChannel {
    raised: u8,
    /// Checks whose run is under way (`runs` non-zero).
    counting: u8,
    runs: [u8; 7],
    stuck_primed: bool,
    stuck_reference: f32,
    stuck_quiet: u32,
    command_lo: f32,
    command_hi: f32,
    last_accepted: f32,
    since_accepted: u32,
    ever_accepted: bool,
}

/// What the checks made of one sample.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Checked {
    /// The force, when the sample was accepted.
    pub accepted: Option<f32>,
    /// The channel had no usable value before this sample (its filter restarts).
    pub was_stale: bool,
    /// At a rail.
    pub saturated: bool,
}

impl PlainChannel {
    /// Whether the channel stands on no value or one held too long.
    pub fn stale(&self, l: &PlainLimits) -> bool {
        !self.ever_accepted || self.since_accepted > l.max_hold
    }

    /// Samples since the last accepted one (0 when this one was).
    pub fn held_for(&self) -> u32 {
        self.since_accepted
    }

    /// Whether the vote may use the channel: no flag raised and not stale.
    pub fn usable(&self, l: &PlainLimits) -> bool {
        self.raised == 0 && !self.stale(l)
    }

    /// The raised flags ([`check`] bits).
    pub fn raised(&self) -> u8 {
        self.raised
    }

    /// Run the checks on one sample: `counts` raw, `force` calibrated from them.
    pub fn check(
        &mut self,
        l: &PlainLimits,
        counts: i32,
        valid: bool,
        force: f32,
        command: Option<f32>,
    ) -> Checked {
        let was_stale = self.stale(l);
        self.since_accepted = self.since_accepted.saturating_add(1);
        let mut out = Checked {
            accepted: None,
            was_stale,
            saturated: false,
        };
        let (bad, good) = if !valid {
            (check::INVALID, 0)
        } else if counts <= l.rail_low {
            out.saturated = true;
            (check::RAIL_LOW, check::INVALID | check::RAIL_HIGH)
        } else if counts >= l.rail_high {
            out.saturated = true;
            (check::RAIL_HIGH, check::INVALID | check::RAIL_LOW)
        } else {
            let mut bad = 0;
            let mut good = check::INVALID | check::RAIL_LOW | check::RAIL_HIGH;
            let in_range = force >= l.force_range.0 && force <= l.force_range.1;
            bad |= if in_range { 0 } else { check::RANGE };
            good |= if in_range { check::RANGE } else { 0 };
            let allowance = l.noise_band + l.rate_per_sample * self.since_accepted as f32;
            let rate_ok =
                !self.ever_accepted || libm::fabsf(force - self.last_accepted) <= allowance;
            if self.ever_accepted {
                bad |= if rate_ok { 0 } else { check::RATE };
                good |= if rate_ok { check::RATE } else { 0 };
            }
            if let Some((window, span)) = l.stuck {
                match self.stuck(force, command, l.noise_band, window, span) {
                    Some(true) => bad |= check::STUCK,
                    Some(false) => good |= check::STUCK,
                    None => {}
                }
            }
            if in_range && rate_ok {
                self.ever_accepted = true;
                self.last_accepted = force;
                self.since_accepted = 0;
                out.accepted = Some(force);
            }
            (bad, good)
        };
        self.debounce(bad, good, l);
        out
    }

    /// Debounce the vote's verdict: `Some(true)` away from the consensus.
    pub fn disagreement(&mut self, away: Option<bool>, l: &PlainLimits) {
        match away {
            Some(true) => self.debounce(check::DISAGREE, 0, l),
            Some(false) => self.debounce(0, check::DISAGREE, l),
            None => {}
        }
    }

    /// `Some(true)`: stuck; `Some(false)`: moving; `None`: no verdict yet.
    fn stuck(
        &mut self,
        force: f32,
        command: Option<f32>,
        band: f32,
        window: u32,
        span: f32,
    ) -> Option<bool> {
        if !self.stuck_primed || libm::fabsf(force - self.stuck_reference) > band {
            let verdict = self.stuck_primed.then_some(false);
            self.stuck_primed = true;
            self.stuck_reference = force;
            self.stuck_quiet = 0;
            (self.command_lo, self.command_hi) = command.map_or((f32::MAX, f32::MIN), |c| (c, c));
            return verdict;
        }
        self.stuck_quiet = self.stuck_quiet.saturating_add(1);
        if let Some(c) = command {
            self.command_lo = self.command_lo.min(c);
            self.command_hi = self.command_hi.max(c);
        }
        (self.stuck_quiet >= window && self.command_hi - self.command_lo >= span).then_some(true)
    }

    /// Each check's run of bad (while clear) or good (while raised) samples. A healthy sample
    /// of a healthy channel (every verdict agrees with its flag, no run under way) returns at
    /// the first test.
    fn debounce(&mut self, bad: u8, good: u8, l: &PlainLimits) {
        let against = (bad & !self.raised) | (good & self.raised);
        let with = (bad & self.raised) | (good & !self.raised);
        // Runs broken by a verdict that agrees with the flag.
        let broken = with & self.counting;
        if against == 0 && broken == 0 {
            return;
        }
        for (i, run) in self.runs.iter_mut().enumerate() {
            let bit = 1u8 << i;
            if against & bit != 0 {
                *run = run.saturating_add(1);
                let needed = if self.raised & bit != 0 {
                    l.clear_after
                } else {
                    l.raise_after
                };
                if *run >= needed {
                    self.raised ^= bit;
                    *run = 0;
                    self.counting &= !bit;
                } else {
                    self.counting |= bit;
                }
            } else if broken & bit != 0 {
                *run = 0;
                self.counting &= !bit;
            }
        }
    }
}
