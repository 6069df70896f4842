//! Sensor faults injected into the plant's force channels.
//!
//! Written `KIND:CHANNEL@START..END[=VALUE]` (times in s, channel 1–4): `stuck` (reading frozen
//! at its value when the fault starts), `rail_high` / `rail_low` (reading at the ADC rail),
//! `offset` (VALUE counts added), `noise` (extra Gaussian noise of VALUE counts σ), `dropout`
//! (no reading, valid bit 0), `drift` (an offset growing at VALUE counts/s from the start),
//! `gain` (the reading's span from its zero-force offset scaled by VALUE: a shared gain error is
//! one `gain` fault per channel), `sign` (the span negated: a bridge wired the wrong way round),
//! `spike` (VALUE counts added on one sample in every [`SPIKE_PERIOD_SAMPLES`]), `flicker`
//! (no reading for VALUE samples, a reading for the next VALUE samples, and so on: intermittent
//! dropouts; staggered starts on two channels make them alternate), `copy1` … `copy4` (the
//! channel reads channel K's force, with K's noise and K's own faults, in its own calibration,
//! plus VALUE counts: a crossed or shared wire).
//!
//! None of the kinds draws from the plant's random stream except `noise`, so a run with such a
//! fault has the same sensor noise, sample for sample, as the fault-free run of the same seed.

/// What goes wrong.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum FaultKind {
    /// Frozen reading.
    Stuck,
    /// At the upper rail.
    RailHigh,
    /// At the lower rail.
    RailLow,
    /// Offset by this many counts.
    Offset(f64),
    /// Extra noise of this σ in counts.
    Noise(f64),
    /// No reading; valid bit cleared.
    Dropout,
    /// Offset growing at this many counts per second from the fault's start.
    Drift(f64),
    /// Span from the zero-force offset scaled by this factor.
    Gain(f64),
    /// Span from the zero-force offset negated.
    SignFlip,
    /// This many counts added on one sample in every [`SPIKE_PERIOD_SAMPLES`].
    Spike(f64),
    /// No reading for this many samples, then a reading for as many, repeating.
    Flicker(u32),
    /// The reading of channel `source` (1-based), in this channel's calibration, plus
    /// `offset_counts`.
    Copy {
        /// Channel copied, 1-based.
        source: usize,
        /// Counts added to the copy.
        offset_counts: f64,
    },
}

/// A `spike` fault hits one sample in this many, starting with the first sample of its window.
pub const SPIKE_PERIOD_SAMPLES: u64 = 50;

/// The kinds' spellings, for error messages and the docs.
pub const KIND_NAMES: &str = "stuck, rail_high, rail_low, offset, noise, dropout, drift, gain, sign, spike, flicker, copy1 … copy4";

/// One injected fault.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Fault {
    /// What goes wrong.
    pub kind: FaultKind,
    /// Channel, 1-based.
    pub channel: usize,
    /// Start, s.
    pub start_s: f64,
    /// End, s.
    pub end_s: f64,
}

impl Fault {
    /// Whether the fault acts at `t`.
    pub fn active(&self, t: f64) -> bool {
        t >= self.start_s && t < self.end_s
    }

    /// A numeric code for the trace's `fault_active` column (0 = none).
    pub fn code(&self) -> u32 {
        match self.kind {
            FaultKind::Stuck => 1,
            FaultKind::RailHigh => 2,
            FaultKind::RailLow => 3,
            FaultKind::Offset(_) => 4,
            FaultKind::Noise(_) => 5,
            FaultKind::Dropout => 6,
            FaultKind::Drift(_) => 7,
            FaultKind::Gain(_) => 8,
            FaultKind::SignFlip => 9,
            FaultKind::Spike(_) => 10,
            FaultKind::Flicker(_) => 11,
            FaultKind::Copy { .. } => 12,
        }
    }

    /// Whole sample periods of `dt` s from the fault's start to `t` (0 before the start).
    pub fn samples_since_start(&self, t: f64, dt: f64) -> u64 {
        // A non-negative count of samples, far below 2⁵³: the cast is exact after rounding.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let n = ((t - self.start_s) / dt).round().max(0.0) as u64;
        n
    }
}

impl std::str::FromStr for Fault {
    type Err = String;

    fn from_str(s: &str) -> Result<Self, String> {
        let bad = || {
            format!(
                "fault '{s}': expected KIND:CHANNEL@START..END[=VALUE], e.g. stuck:2@30..35 or offset:1@10..20=500"
            )
        };
        let (kind, rest) = s.split_once(':').ok_or_else(bad)?;
        let (channel, rest) = rest.split_once('@').ok_or_else(bad)?;
        let (range, value) = match rest.split_once('=') {
            Some((r, v)) => (r, Some(v.parse::<f64>().map_err(|_| bad())?)),
            None => (rest, None),
        };
        let (a, b) = range.split_once("..").ok_or_else(bad)?;
        let start_s: f64 = a.parse().map_err(|_| bad())?;
        let end_s: f64 = b.parse().map_err(|_| bad())?;
        let channel: usize = channel.parse().map_err(|_| bad())?;
        if !(1..=4).contains(&channel) {
            return Err(format!("fault '{s}': channel must be 1 … 4"));
        }
        if !(start_s.is_finite() && end_s.is_finite() && end_s > start_s) {
            return Err(format!("fault '{s}': the end must come after the start"));
        }
        let need = |v: Option<f64>| {
            v.filter(|x| x.is_finite())
                .ok_or_else(|| format!("fault '{s}': {kind} needs =VALUE"))
        };
        let kind = match kind {
            "stuck" => FaultKind::Stuck,
            "rail_high" => FaultKind::RailHigh,
            "rail_low" => FaultKind::RailLow,
            "offset" => FaultKind::Offset(need(value)?),
            "noise" => FaultKind::Noise(need(value)?),
            "dropout" => FaultKind::Dropout,
            "drift" => FaultKind::Drift(need(value)?),
            "gain" => FaultKind::Gain(need(value)?),
            "sign" => FaultKind::SignFlip,
            "spike" => FaultKind::Spike(need(value)?),
            "flicker" => {
                let n = need(value)?;
                if !(n >= 1.0 && n <= f64::from(u32::MAX) && n.fract() == 0.0) {
                    return Err(format!(
                        "fault '{s}': flicker needs a whole number of samples ≥ 1"
                    ));
                }
                // A whole number in the u32 range, checked just above.
                #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
                let n = n as u32;
                FaultKind::Flicker(n)
            }
            _ => match kind
                .strip_prefix("copy")
                .and_then(|k| k.parse::<usize>().ok())
            {
                Some(source) if (1..=4).contains(&source) => {
                    if source == channel {
                        return Err(format!("fault '{s}': a channel cannot copy itself"));
                    }
                    FaultKind::Copy {
                        source,
                        offset_counts: value.filter(|x| x.is_finite()).unwrap_or(0.0),
                    }
                }
                _ => {
                    return Err(format!("fault '{s}': unknown kind '{kind}' ({KIND_NAMES})"));
                }
            },
        };
        Ok(Self {
            kind,
            channel,
            start_s,
            end_s,
        })
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn parse_faults() {
        let f: Fault = "offset:3@40..60=500".parse().unwrap();
        assert_eq!(f.kind, FaultKind::Offset(500.0));
        assert_eq!((f.channel, f.start_s, f.end_s), (3, 40.0, 60.0));
        assert!(f.active(40.0) && !f.active(60.0));
        assert!("stuck:5@1..2".parse::<Fault>().is_err());
        assert!(
            "offset:1@1..2"
                .parse::<Fault>()
                .unwrap_err()
                .contains("needs =VALUE")
        );
        assert!("melt:1@1..2".parse::<Fault>().is_err());
    }

    #[test]
    fn parse_the_cross_channel_and_time_varying_kinds() {
        let f: Fault = "drift:2@3..9=1500".parse().unwrap();
        assert_eq!((f.kind, f.channel), (FaultKind::Drift(1500.0), 2));
        assert_eq!(
            "gain:1@0..1=0.8".parse::<Fault>().unwrap().kind,
            FaultKind::Gain(0.8)
        );
        assert_eq!(
            "sign:4@0..1".parse::<Fault>().unwrap().kind,
            FaultKind::SignFlip
        );
        assert_eq!(
            "spike:1@0..1=2e6".parse::<Fault>().unwrap().kind,
            FaultKind::Spike(2e6)
        );
        assert_eq!(
            "flicker:1@0..1=4".parse::<Fault>().unwrap().kind,
            FaultKind::Flicker(4)
        );
        assert_eq!(
            "copy1:3@0..1=149000".parse::<Fault>().unwrap().kind,
            FaultKind::Copy {
                source: 1,
                offset_counts: 149_000.0
            }
        );
        assert_eq!(
            "copy2:1@0..1".parse::<Fault>().unwrap().kind,
            FaultKind::Copy {
                source: 2,
                offset_counts: 0.0
            }
        );
        assert!(
            "copy3:3@0..1"
                .parse::<Fault>()
                .unwrap_err()
                .contains("itself")
        );
        assert!("copy5:1@0..1".parse::<Fault>().is_err());
        assert!("flicker:1@0..1=2.5".parse::<Fault>().is_err());
        assert!("flicker:1@0..1=0".parse::<Fault>().is_err());
        assert!(
            "gain:1@0..1"
                .parse::<Fault>()
                .unwrap_err()
                .contains("needs =VALUE")
        );
        assert!(
            "melt:1@0..1"
                .parse::<Fault>()
                .unwrap_err()
                .contains("copy1 … copy4")
        );
    }

    #[test]
    fn samples_since_start_counts_whole_periods() {
        let f: Fault = "spike:1@2..3=1".parse().unwrap();
        assert_eq!(f.samples_since_start(2.0, 0.001), 0);
        assert_eq!(f.samples_since_start(2.05, 0.001), 50);
        assert_eq!(f.samples_since_start(1.0, 0.001), 0);
    }
}
