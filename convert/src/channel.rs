//! Force channels as the core takes them: raw ADC counts. A calibrated (N) column is turned
//! back into the counts the ADC would have given.

use clampwise_device::schema::DeviceSpec;

use crate::sample::{Channel, TraceSample};

/// Float calibration of one channel, for turning a calibrated (N) column back into counts:
/// counts = F / gain + offset.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ChannelCal {
    /// N per count.
    pub gain_n_per_count: f64,
    /// Counts at zero force.
    pub offset_counts: f64,
}

impl ChannelCal {
    /// The calibrations of a config's `[[sensor]]` tables, in order.
    pub fn of(c: &DeviceSpec) -> Vec<Self> {
        c.sensors
            .iter()
            .map(|s| Self {
                gain_n_per_count: s.gain_n_per_count,
                offset_counts: s.offset_counts,
            })
            .collect()
    }
}

/// Raw counts of each channel, as the core's `Inputs` take them: counts columns pass through,
/// calibrated (N) columns are turned back into the counts the ADC would have given (rounded,
/// saturated to i32). `None` for an absent channel or one whose valid bit is clear.
pub fn channel_counts(s: &TraceSample, cal: &[ChannelCal]) -> [Option<i32>; 4] {
    let mut out = [None; 4];
    for (((o, ch), &valid), c) in out.iter_mut().zip(&s.force).zip(&s.force_valid).zip(cal) {
        if !valid {
            continue;
        }
        *o = match *ch {
            Channel::Absent => None,
            Channel::Counts(n) => Some(n),
            Channel::Newtons(f) => Some(newtons_to_counts(f, c)),
        };
    }
    out
}

/// F / gain + offset, rounded half away from zero, saturated to i32.
fn newtons_to_counts(f: f64, c: &ChannelCal) -> i32 {
    let counts = (f / c.gain_n_per_count + c.offset_counts).round();
    if counts >= f64::from(i32::MAX) {
        i32::MAX
    } else if counts <= f64::from(i32::MIN) {
        i32::MIN
    } else {
        // In range by the two tests above.
        #[allow(clippy::cast_possible_truncation)]
        let n = counts as i32;
        n
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const CAL: ChannelCal = ChannelCal {
        gain_n_per_count: 0.5,
        offset_counts: 100.0,
    };

    #[test]
    fn newtons_go_back_to_the_adc_counts() {
        // [calc] counts = F / gain + offset: 1000 N / 0.5 N per count + 100 = 2100.
        assert_eq!(newtons_to_counts(1000.0, &CAL), 2100);
        // Half a count rounds away from zero (f64::round), as the calibration's inverse.
        assert_eq!(newtons_to_counts(0.25, &CAL), 101);
        assert_eq!(newtons_to_counts(-0.25 - 50.0, &CAL), -1);
        assert_eq!(newtons_to_counts(1e30, &CAL), i32::MAX);
        assert_eq!(newtons_to_counts(-1e30, &CAL), i32::MIN);
    }

    #[test]
    fn invalid_and_absent_channels_have_no_counts() {
        let s = TraceSample {
            force: [
                Channel::Counts(7),
                Channel::Newtons(1000.0),
                Channel::Counts(9),
                Channel::Absent,
            ],
            force_valid: [true, true, false, true],
            ..TraceSample::default()
        };
        assert_eq!(
            channel_counts(&s, &[CAL; 4]),
            [Some(7), Some(2100), None, None]
        );
    }
}
