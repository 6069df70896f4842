//! Per-channel calibration: ADC counts → newtons, temperature compensation, ADC rail check.
//!
//! ```text
//! F_lin = gain · counts + offset                                   (N)
//! ΔT    = clamp(T_sensor, min, max) − reference                    (K)
//! F     = F_lin · (1 + span_per_kelvin · ΔT) + zero_per_kelvin · ΔT (N)
//! ```
//!
//! The temperature coefficients are those of the *correction* (what is applied), so they are
//! the negated sensor drifts to first order; fit them on the bench. Without a sensor
//! temperature (none given yet) ΔT = 0.
//!
//! ## Error bound
//!
//! All products are exact (formed from the raw bits in 64-bit or, with compensation, 128-bit
//! work) and rounded once at the end, so against
//! the same formula in f64 with the *stored* coefficients the result is within ½ LSB of
//! [`Newtons`] (1.95 mN) plus 2⁻³⁰ of |F| for the span term. The stored gain differs from a
//! float gain by at most 2⁻³³ N/count (I32F32) and the offset by ½ LSB, so against the f64 line
//! the error is ≤ 1 LSB + |counts|·2⁻³³ N: ≤ 1.25 LSB (4.9 mN) for a 24-bit ADC.
//! Results beyond the range of [`Newtons`] are clamped to it and reported as saturated.
//!
//! ```
//! use clampwise_core::sensor::{AdcRails, TwoPoint};
//!
//! // Bench: 1 200 counts unloaded, 1 001 200 counts at 50 kN.
//! let tp = TwoPoint::from_loads(1_200.0, 0.0, 1_001_200.0, 50_000.0).unwrap();
//! assert!((tp.gain_n_per_count - 0.05).abs() < 1e-15);
//! assert!((tp.offset_n - -60.0).abs() < 1e-9);
//! let rails = AdcRails { low: -8_388_608, high: 8_388_607, margin: 16 };
//! let cal = tp.to_calibration(rails).unwrap();
//! let f = cal.force(501_200, None);
//! assert_eq!(f.force.to_num::<f64>(), 25_000.0);
//! assert!(!f.saturated);
//! ```

use super::error::{Problem, SensorError};
use super::{NewtonsPerCount, NewtonsPerKelvin, PerKelvin};
use crate::units::{Celsius, Newtons};
use crate::wide;

/// The ADC codes at which a channel is at its rails (open or short circuit, overload).
///
/// Which fault drives which rail depends on the front end (bridge excitation, pull resistors);
/// the diagnostics report low and high apart and leave the naming to the integrator.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdcRails {
    /// Lowest code the converter produces (counts).
    pub low: i32,
    /// Highest code the converter produces (counts).
    pub high: i32,
    /// Codes within `margin` of a rail count as at the rail (counts, ≥ 0).
    pub margin: u32,
}

/// Where a raw reading lies against the rails.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Rail {
    /// Between the rails.
    Inside,
    /// At or below `low + margin`.
    Low,
    /// At or above `high − margin`.
    High,
}

impl AdcRails {
    /// Classify a raw reading (counts). Any i32, also codes outside `low ..= high`.
    pub fn classify(&self, counts: i32) -> Rail {
        let c = i64::from(counts);
        let m = i64::from(self.margin);
        if c <= i64::from(self.low).saturating_add(m) {
            Rail::Low
        } else if c >= i64::from(self.high).saturating_sub(m) {
            Rail::High
        } else {
            Rail::Inside
        }
    }

    const fn validate(&self, channel: usize) -> Result<(), SensorError> {
        let m = self.margin as i64;
        if (self.low as i64) + m >= (self.high as i64) - m {
            return Err(SensorError::Channel {
                channel,
                field: "rails.high",
                problem: Problem::NotAboveLowerBound,
            });
        }
        Ok(())
    }
}

/// First-order temperature compensation of zero and span.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct TemperatureCompensation {
    /// Temperature at which the gain and offset were calibrated (°C).
    pub reference: Celsius,
    /// Lowest sensor temperature the coefficients hold for (°C); colder readings are clamped.
    pub min: Celsius,
    /// Highest sensor temperature the coefficients hold for (°C); hotter readings are clamped.
    pub max: Celsius,
    /// Zero correction added per kelvin above the reference (N/K).
    pub zero_per_kelvin: NewtonsPerKelvin,
    /// Span correction per kelvin above the reference (1/K); |span · ΔT| must stay ≤ 0.5.
    pub span_per_kelvin: PerKelvin,
}

/// A [`TemperatureCompensation`] evaluated at one sensor temperature: what the force of every
/// channel sharing it needs in that sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Compensation {
    /// 2³⁰ + round(span_per_kelvin·ΔT / 2¹⁶): the span factor in Q30, in [0.5, 1.5] for
    /// validated coefficients.
    factor: i64,
    /// round(zero_per_kelvin·ΔT / 2¹⁶): the zero correction in Q32 newtons, |zero| ≤ 2⁵⁵ for
    /// validated coefficients.
    zero: i64,
    /// The temperature lay outside `min ..= max` and was clamped.
    clamped: bool,
}

impl TemperatureCompensation {
    /// The compensation at sensor temperature `t` (°C), clamped to `min ..= max`.
    #[inline(always)]
    pub(crate) fn at(&self, t: Celsius) -> Compensation {
        let (lo, hi, t) = (self.min.to_bits(), self.max.to_bits(), t.to_bits());
        // `max`/`min` rather than `clamp`: the same value for lo ≤ hi (validated), and no
        // assertion (panic path) on the bounds' order in the per-sample code.
        let dt = i64::from(t.max(lo).min(hi)) - i64::from(self.reference.to_bits());
        // |span| ≤ 2³¹ and |ΔT| < 2³²: exact in i64.
        let span = (i64::from(self.span_per_kelvin.to_bits()) * dt + (1 << 15)) >> 16;
        // ΔT within ±2¹⁵ K (every one in practice) fits i32: the cheap form on ARMv6-M.
        let product = wide::mul_i64_mostly_i32(self.zero_per_kelvin.to_bits(), dt);
        // Within ±2⁵⁵ for validated coefficients; an unvalidated one only wraps (`as`).
        #[allow(clippy::cast_possible_truncation)]
        let zero = ((product + (1 << 15)) >> 16) as i64;
        Compensation {
            factor: (1 << 30) + span,
            zero,
            clamped: t < lo || t > hi,
        }
    }

    /// Whether `other` holds the same coefficients (`const`, for the configuration).
    pub(crate) const fn same_as(&self, other: &Self) -> bool {
        self.reference.to_bits() == other.reference.to_bits()
            && self.min.to_bits() == other.min.to_bits()
            && self.max.to_bits() == other.max.to_bits()
            && self.zero_per_kelvin.to_bits() == other.zero_per_kelvin.to_bits()
            && self.span_per_kelvin.to_bits() == other.span_per_kelvin.to_bits()
    }

    const fn validate(&self, channel: usize) -> Result<(), SensorError> {
        let (lo, hi, r) = (
            self.min.to_bits() as i64,
            self.max.to_bits() as i64,
            self.reference.to_bits() as i64,
        );
        if hi <= lo {
            return Err(SensorError::Channel {
                channel,
                field: "temperature.max",
                problem: Problem::NotAboveLowerBound,
            });
        }
        if r < lo || r > hi {
            return Err(SensorError::Channel {
                channel,
                field: "temperature.reference",
                problem: Problem::OutOfRange,
            });
        }
        // Largest |ΔT| in Q16.
        let dt = if hi - r > r - lo { hi - r } else { r - lo };
        // |span · ΔT| ≤ 0.5 keeps the span factor in [0.5, 1.5] (Q30 · Q16 = Q46).
        let span = (self.span_per_kelvin.to_bits() as i128) * (dt as i128);
        if span.unsigned_abs() > (1u128 << 45) {
            return Err(SensorError::Channel {
                channel,
                field: "temperature.span_per_kelvin",
                problem: Problem::OutOfRange,
            });
        }
        // |zero · ΔT| within the force range (Q32 · Q16 = Q48; 2²³ N).
        let zero = (self.zero_per_kelvin.to_bits() as i128) * (dt as i128);
        if zero.unsigned_abs() > (1u128 << (48 + 23)) {
            return Err(SensorError::Channel {
                channel,
                field: "temperature.zero_per_kelvin",
                problem: Problem::OutOfRange,
            });
        }
        Ok(())
    }
}

/// Calibration of one force channel (configuration).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ChannelCalibration {
    /// Newtons per ADC count (N/count, non-zero; negative for an inverted bridge).
    pub gain: NewtonsPerCount,
    /// Force at zero counts (N).
    pub offset: Newtons,
    /// ADC rails of this channel.
    pub rails: AdcRails,
    /// Temperature compensation, if the channel has one.
    pub temperature: Option<TemperatureCompensation>,
}

/// One channel's calibrated force.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Calibrated {
    /// Calibrated force (N), clamped to the range of [`Newtons`].
    pub force: Newtons,
    /// The exact result lay beyond the range of [`Newtons`] and was clamped.
    pub saturated: bool,
    /// The sensor temperature lay outside the compensation range and was clamped.
    pub temperature_clamped: bool,
}

impl AdcRails {
    /// The rails of a two's-complement converter of `bits` bits (1…32), with codes within
    /// `margin` of either end counting as at the rail.
    ///
    /// ```
    /// use clampwise_core::sensor::AdcRails;
    /// let r = AdcRails::signed_bits(24, 8);
    /// assert_eq!((r.low, r.high, r.margin), (-8_388_608, 8_388_607, 8));
    /// ```
    pub const fn signed_bits(bits: u8, margin: u32) -> Self {
        let bits = if bits == 0 {
            1
        } else if bits > 32 {
            32
        } else {
            bits
        };
        let half = 1i64 << (bits - 1);
        // −2^(bits−1) and 2^(bits−1) − 1 lie within i32 for bits ≤ 32.
        #[allow(clippy::cast_possible_truncation)]
        Self {
            low: -half as i32,
            high: (half - 1) as i32,
            margin,
        }
    }
}

impl ChannelCalibration {
    /// A linear calibration from SI values: `gain_n_per_count` newtons per ADC count
    /// (non-zero; negative for an inverted bridge) and `offset_n` newtons at zero counts, with
    /// no temperature compensation.
    ///
    /// # Errors
    /// As [`TwoPoint::to_calibration`], which this is for a line already known.
    pub fn linear(
        gain_n_per_count: f64,
        offset_n: f64,
        rails: AdcRails,
    ) -> Result<Self, SensorError> {
        TwoPoint {
            gain_n_per_count,
            offset_n,
        }
        .to_calibration(rails)
    }

    /// Check the calibration of channel `channel` (used by [`super::SensorConfig::new`]).
    ///
    /// # Errors
    /// [`SensorError::Channel`] naming the field: `gain` zero, `rails.high` not above
    /// `rails.low` plus both margins, `temperature.*` out of order or too large.
    pub const fn validate(&self, channel: usize) -> Result<(), SensorError> {
        if self.gain.to_bits() == 0 {
            return Err(SensorError::Channel {
                channel,
                field: "gain",
                problem: Problem::Zero,
            });
        }
        if let Err(e) = self.rails.validate(channel) {
            return Err(e);
        }
        if let Some(t) = &self.temperature {
            return t.validate(channel);
        }
        Ok(())
    }

    /// Counts → newtons with temperature compensation (`sensor_temp` in °C; `None`: ΔT = 0).
    /// O(1), integers only, any input; exact to the error bound of the module for a
    /// calibration that passes [`validate`](Self::validate) (for one that does not, only the
    /// uncompensated line is exact, and a compensated result may saturate differently).
    // Always inlined: small, and called once per channel per sample by the diagnostics.
    #[inline(always)]
    pub fn force(&self, counts: i32, sensor_temp: Option<Celsius>) -> Calibrated {
        let compensation = match (&self.temperature, sensor_temp) {
            (Some(tc), Some(t)) => Some(tc.at(t)),
            _ => None,
        };
        self.force_with(counts, compensation)
    }

    /// [`force`](Self::force) with the compensation already evaluated at this sample's
    /// temperature (`None`: ΔT = 0), so channels sharing one evaluate it once.
    #[inline(always)]
    pub(crate) fn force_with(&self, counts: i32, compensation: Option<Compensation>) -> Calibrated {
        let (gain, offset) = (self.gain.to_bits(), self.offset.to_bits());
        let (q8, temperature_clamped) = match compensation {
            Some(c) => (compensated_q8(counts, gain, offset, &c), c.clamped),
            None => (line_q8(counts, gain, offset), false),
        };
        let bits = i32::try_from(q8).unwrap_or(if q8 < 0 { i32::MIN } else { i32::MAX });
        Calibrated {
            force: Newtons::from_bits(bits),
            saturated: i64::from(bits) != q8,
            temperature_clamped,
        }
    }
}

/// The Q32 line counts·gain + offset·2²⁴ as (H, L) with line = H·2³² + L, in 64-bit work.
///
/// With gain = g_h·2³² + g_l (g_h = gain >> 32, 0 ≤ g_l < 2³²) and P = c·g_l (|P| < 2⁶³):
/// H = c·g_h + ⌊P/2³²⌋ (|H| ≤ 2⁶² + 2³¹) and L = (P mod 2³²) + offset·2²⁴ (|L| < 2⁵⁶).
#[inline(always)]
fn line_parts(counts: i32, gain: i64, offset: i32) -> (i64, i64) {
    let c = i64::from(counts);
    let p = c * (gain & 0xffff_ffff);
    let h = c * (gain >> 32) + (p >> 32);
    let l = (p & 0xffff_ffff) + (i64::from(offset) << 24);
    (h, l)
}

/// round(line / 2²⁴), half up: the uncompensated line in Q8 newtons, exact where it lies
/// within ±2³², else a value beyond that of the right sign (it saturates either way), for any
/// counts, gain and offset.
///
/// H·2⁸ + ⌊(L + 2²³)/2²⁴⌋, with H clamped to ±2⁴⁰ before the shift: a larger |H| puts the
/// result beyond ±2⁴⁷, saturating to the same side either way.
#[inline(always)]
fn line_q8(counts: i32, gain: i64, offset: i32) -> i64 {
    let (h, l) = line_parts(counts, gain, offset);
    (h.clamp(-(1 << 40), 1 << 40) << 8) + ((l + (1 << 23)) >> 24)
}

/// The compensated force in Q8 newtons, exact where within ±2³², else beyond that with the
/// right sign.
///
/// F = round((round(line·factor / 2³⁰) + zero) / 2²⁴) (see [`Compensation`]). Validated
/// coefficients keep factor in [2²⁹, 1.5·2³⁰] and |zero| ≤ 2⁵⁵, so |line| ≥ 2⁵⁸ gives |F| ≥
/// (2⁵⁷ − 2⁵⁵ − 1)/2²⁴ > 2³²: saturated, with the sign of the line; |H| ≥ 2²⁷ is such a line
/// (|L| < 2⁵⁶). Below that the line is H·2³² + L in i64, line·factor < 2⁸⁹ is one widening
/// multiply, and everything after it fits i64.
#[inline(always)]
fn compensated_q8(counts: i32, gain: i64, offset: i32, c: &Compensation) -> i64 {
    let (h, l) = line_parts(counts, gain, offset);
    if h.unsigned_abs() >= 1 << 27 {
        return if h < 0 { i64::MIN } else { i64::MAX };
    }
    let line = (h << 32) + l;
    if line.unsigned_abs() >= 1 << 58 {
        return if line < 0 { i64::MIN } else { i64::MAX };
    }
    // A validated factor fits 31 bits (above): the cheap form on ARMv6-M.
    let product = wide::mul_i64_mostly_i32(line, c.factor);
    // < 2⁵⁹ for validated coefficients (above); otherwise it only wraps.
    #[allow(clippy::cast_possible_truncation)]
    let scaled = ((product + (1 << 29)) >> 30) as i64;
    scaled.wrapping_add(c.zero).wrapping_add(1 << 23) >> 24
}

/// Gain and offset from two known loads (host or start-up helper; floats, never per sample).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct TwoPoint {
    /// Newtons per count (N/count).
    pub gain_n_per_count: f64,
    /// Force at zero counts (N).
    pub offset_n: f64,
}

impl TwoPoint {
    /// The straight line through (`counts_1`, `load_1_n`) and (`counts_2`, `load_2_n`): counts
    /// may be averages (fractional); loads in newtons.
    ///
    /// # Errors
    /// `two_point.*` not finite; `two_point.counts_2` equal to `counts_1`; `two_point.load_2_n`
    /// equal to `load_1_n` (zero gain).
    pub fn from_loads(
        counts_1: f64,
        load_1_n: f64,
        counts_2: f64,
        load_2_n: f64,
    ) -> Result<Self, SensorError> {
        let named = [
            ("two_point.counts_1", counts_1),
            ("two_point.load_1_n", load_1_n),
            ("two_point.counts_2", counts_2),
            ("two_point.load_2_n", load_2_n),
        ];
        if let Some((field, _)) = named.iter().find(|(_, v)| !v.is_finite()) {
            return Err(SensorError::Field {
                field,
                problem: Problem::NotFinite,
            });
        }
        let dc = counts_2 - counts_1;
        let dl = load_2_n - load_1_n;
        let zero = |field| SensorError::Field {
            field,
            problem: Problem::Zero,
        };
        if dc == 0.0 {
            return Err(zero("two_point.counts_2 - counts_1"));
        }
        if dl == 0.0 {
            return Err(zero("two_point.load_2_n - load_1_n"));
        }
        let gain = dl / dc;
        // Offset from the point nearer zero counts: less cancellation.
        let (c, l) = if counts_1.abs() <= counts_2.abs() {
            (counts_1, load_1_n)
        } else {
            (counts_2, load_2_n)
        };
        Ok(Self {
            gain_n_per_count: gain,
            offset_n: l - gain * c,
        })
    }

    /// The fixed-point calibration (rounded to nearest), without temperature compensation.
    ///
    /// # Errors
    /// `gain` or `offset` outside the range of their Q formats; then as
    /// [`ChannelCalibration::validate`] for channel 0.
    pub fn to_calibration(&self, rails: AdcRails) -> Result<ChannelCalibration, SensorError> {
        let out_of_range = |field| SensorError::Field {
            field,
            problem: Problem::OutOfRange,
        };
        let cal = ChannelCalibration {
            gain: NewtonsPerCount::checked_from_num(self.gain_n_per_count)
                .ok_or(out_of_range("gain"))?,
            offset: Newtons::checked_from_num(self.offset_n).ok_or(out_of_range("offset"))?,
            rails,
            temperature: None,
        };
        cal.validate(0).map(|()| cal)
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    const RAILS: AdcRails = AdcRails {
        low: -8_388_608,
        high: 8_388_607,
        margin: 0,
    };

    #[test]
    fn rails_are_classified_including_margins_and_wild_codes() {
        let r = AdcRails {
            low: 0,
            high: 4095,
            margin: 5,
        };
        assert_eq!(r.classify(5), Rail::Low);
        assert_eq!(r.classify(6), Rail::Inside);
        assert_eq!(r.classify(4089), Rail::Inside);
        assert_eq!(r.classify(4090), Rail::High);
        assert_eq!(r.classify(i32::MIN), Rail::Low);
        assert_eq!(r.classify(i32::MAX), Rail::High);
        let crossed = AdcRails {
            low: 0,
            high: 10,
            margin: 5,
        };
        assert!(crossed.validate(3).is_err());
    }

    #[test]
    fn temperature_correction_matches_its_formula() {
        // [calc] F = (g·c + o)(1 + s·ΔT) + z·ΔT with the stored coefficients.
        let tc = TemperatureCompensation {
            reference: Celsius::lit("20"),
            min: Celsius::lit("-40"),
            max: Celsius::lit("120"),
            zero_per_kelvin: NewtonsPerKelvin::lit("-1.5"),
            span_per_kelvin: PerKelvin::lit("0.0002"),
        };
        let cal = ChannelCalibration {
            gain: NewtonsPerCount::lit("0.05"),
            offset: Newtons::lit("-60"),
            rails: RAILS,
            temperature: Some(tc),
        };
        cal.validate(0).unwrap();
        let g: f64 = cal.gain.to_num();
        let s: f64 = tc.span_per_kelvin.to_num();
        let z: f64 = tc.zero_per_kelvin.to_num();
        for (counts, t) in [(400_000, 85.0), (-10_000, -40.0), (8_000_000, 20.0)] {
            let got = cal.force(counts, Some(Celsius::from_num(t)));
            let dt = t - 20.0;
            let want = (g * f64::from(counts) - 60.0) * (1.0 + s * dt) + z * dt;
            let err = (got.force.to_num::<f64>() - want).abs();
            assert!(err <= 0.5 / 256.0 + 1e-6, "{counts} at {t}: {err}");
            assert!(!got.temperature_clamped);
        }
        // Beyond the range: clamped to 120 °C and reported.
        let hot = cal.force(400_000, Some(Celsius::lit("300")));
        assert!(hot.temperature_clamped);
        assert_eq!(
            hot.force,
            cal.force(400_000, Some(Celsius::lit("120"))).force
        );
    }

    #[test]
    fn huge_results_saturate_and_are_flagged() {
        let cal = ChannelCalibration {
            gain: NewtonsPerCount::MAX,
            offset: Newtons::ZERO,
            rails: RAILS,
            temperature: None,
        };
        let f = cal.force(i32::MAX, None);
        assert!(f.saturated);
        assert_eq!(f.force, Newtons::MAX);
        let f = cal.force(i32::MIN, None);
        assert!(f.saturated);
        assert_eq!(f.force, Newtons::MIN);
    }

    #[test]
    fn invalid_calibrations_are_named() {
        let mut cal = ChannelCalibration {
            gain: NewtonsPerCount::ZERO,
            offset: Newtons::ZERO,
            rails: RAILS,
            temperature: None,
        };
        assert_eq!(
            cal.validate(1),
            Err(SensorError::Channel {
                channel: 1,
                field: "gain",
                problem: Problem::Zero
            })
        );
        cal.gain = NewtonsPerCount::lit("0.01");
        cal.temperature = Some(TemperatureCompensation {
            reference: Celsius::lit("20"),
            min: Celsius::lit("-40"),
            max: Celsius::lit("120"),
            zero_per_kelvin: NewtonsPerKelvin::ZERO,
            span_per_kelvin: PerKelvin::lit("0.01"), // 0.01 · 100 K = 1 > 0.5
        });
        assert_eq!(
            cal.validate(1),
            Err(SensorError::Channel {
                channel: 1,
                field: "temperature.span_per_kelvin",
                problem: Problem::OutOfRange
            })
        );
        assert!(TwoPoint::from_loads(1.0, 0.0, 1.0, 5.0).is_err());
        assert!(TwoPoint::from_loads(1.0, 5.0, 2.0, 5.0).is_err());
        assert!(TwoPoint::from_loads(f64::NAN, 5.0, 2.0, 6.0).is_err());
    }
}
