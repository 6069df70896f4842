//! Why a sensor configuration could not be built.

use core::fmt;

/// What is wrong with a configuration field.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Problem {
    /// A float given at construction is NaN or infinite.
    NotFinite,
    /// The value must be greater than zero.
    NotPositive,
    /// The value must not be negative.
    Negative,
    /// The value must not be zero.
    Zero,
    /// The value does not fit the fixed-point format it is stored in, or is outside the range
    /// the per-sample arithmetic is proven for (the message of the field says which).
    OutOfRange,
    /// An upper bound is not above its lower bound (the field named is the upper one).
    NotAboveLowerBound,
    /// A low-pass cut-off so low for the sample rate that the rounding dead band of the
    /// filter state would reach the output (coefficient below 2⁻²⁰).
    CutOffTooLow,
    /// A low-pass cut-off at or above half the sample rate.
    CutOffTooHigh,
    /// A part built for one sample rate was given to a configuration with another.
    SampleRateMismatch,
    /// The actuator fallback must state a larger uncertainty than a healthy channel.
    UncertaintyNotLarger,
}

impl Problem {
    const fn text(self) -> &'static str {
        match self {
            Self::NotFinite => "is not a finite number",
            Self::NotPositive => "must be greater than zero",
            Self::Negative => "must not be negative",
            Self::Zero => "must not be zero",
            Self::OutOfRange => "is outside the range the fixed-point path supports",
            Self::NotAboveLowerBound => "must be greater than its lower bound",
            Self::CutOffTooLow => "is too low for the sample rate (filter coefficient below 2^-20)",
            Self::CutOffTooHigh => "must be below half the sample rate",
            Self::SampleRateMismatch => "was built for a different sample rate",
            Self::UncertaintyNotLarger => {
                "must be larger than the uncertainty of a healthy channel"
            }
        }
    }
}

impl fmt::Display for Problem {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.text())
    }
}

/// Why a sensor configuration (or one of its parts) could not be built.
///
/// Every variant names the field, and the channel where the field belongs to one.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SensorError {
    /// The number of force channels is not 1 to 4.
    ChannelCount {
        /// The number given.
        channels: usize,
    },
    /// A field of one channel's calibration is invalid.
    Channel {
        /// Channel index, from 0.
        channel: usize,
        /// Field path, e.g. `"rails.high"`.
        field: &'static str,
        /// What is wrong.
        problem: Problem,
    },
    /// A field shared by all channels is invalid.
    Field {
        /// Field path, e.g. `"limits.force_max"`.
        field: &'static str,
        /// What is wrong.
        problem: Problem,
    },
}

impl fmt::Display for SensorError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::ChannelCount { channels } => write!(
                f,
                "sensor configuration has {channels} force channels; 1 to 4 are supported"
            ),
            Self::Channel {
                channel,
                field,
                problem,
            } => write!(f, "sensor channel {channel}: `{field}` {problem}"),
            Self::Field { field, problem } => {
                write!(f, "sensor configuration: `{field}` {problem}")
            }
        }
    }
}

impl core::error::Error for SensorError {}

/// An SI value as a fixed-point field, or the field's error (`NotFinite`, `OutOfRange`).
pub(crate) fn si_field<T: fixed::traits::Fixed>(
    v: f64,
    field: &'static str,
) -> Result<T, SensorError> {
    if !v.is_finite() {
        return Err(SensorError::Field {
            field,
            problem: Problem::NotFinite,
        });
    }
    T::checked_from_num(v).ok_or(SensorError::Field {
        field,
        problem: Problem::OutOfRange,
    })
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_the_field_and_channel() {
        let e = SensorError::Channel {
            channel: 2,
            field: "rails.high",
            problem: Problem::NotAboveLowerBound,
        };
        assert_eq!(
            e.to_string(),
            "sensor channel 2: `rails.high` must be greater than its lower bound"
        );
        let e = SensorError::Field {
            field: "filter.cutoff_hz",
            problem: Problem::CutOffTooHigh,
        };
        assert!(e.to_string().contains("`filter.cutoff_hz`"));
        assert!(
            SensorError::ChannelCount { channels: 5 }
                .to_string()
                .contains("5 force channels")
        );
    }
}
