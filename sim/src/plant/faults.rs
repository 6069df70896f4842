//! Sensor faults injected into the plant's force channels.
//!
//! Written `KIND:CHANNEL@START..END[=VALUE]` (times in s, channel 1–4): `stuck` (reading frozen
//! at its value when the fault starts), `rail_high` / `rail_low` (reading at the ADC rail),
//! `offset` (VALUE counts added), `noise` (extra Gaussian noise of VALUE counts σ), `dropout`
//! (no reading, valid bit 0).

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
}

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
        }
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
            _ => {
                return Err(format!(
                    "fault '{s}': unknown kind '{kind}' (stuck, rail_high, rail_low, offset, noise, dropout)"
                ));
            }
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
}
