//! The interim processing step: clamp force from ADC counts and the effective friction radius
//! from the flash table. It stands in the [`Processor`] slot until the core's estimator lands;
//! the estimator then takes the same slot (see the crate README).
//!
//! Per sample, integers only:
//! 1. each clean channel: `F_i = (counts − offset_i) · gain_i`, gain in N/count as I8F24, the
//!    product rounded to nearest (ties up) into [`Newtons`] (I24F8), saturating;
//! 2. `F` = mean of the clean channels, rounded to nearest (ties up); with none, the force is
//!    lost: `F = 0` and [`Flags::FORCE_LOST`];
//! 3. `r_e = table(F, bedding)` by the core's [`Table2`] (within 1 LSB of the bilinear
//!    interpolant of the stored values, clamped and flagged outside the breakpoints);
//! 4. slip speed `v = ω_in − ω_out` (saturating), or 0 and [`Flags::SPEED_MISSING`];
//! 5. the force moment `F · r_e` in [`NewtonMetres`] (friction torque is `N · μ · F · r_e` for `N`
//!    friction faces), rounded to nearest (ties up), saturating.
//!
//! Error bound against the exact arithmetic on the same stored numbers: force ½ LSB of I24F8
//! (2 mN) per channel plus ½ LSB for the mean; force moment ½ LSB of I20F12 (0.12 mN·m) plus the
//! propagated force and radius rounding (`|r_e|·δF + |F|·δr`, below 1 mN·m at 40 kN).
//!
//! This step has no thermal state, so it never raises a fade warning; the estimator does.
//!
//! ```
//! use clampwise_core::units::{Newtons, Ratio};
//! use clampwise_firmware_example::app::{Inputs, Outcome, Processor, Reading};
//! use clampwise_firmware_example::processor::{ForceRadius, Gain, RadiusTable};
//!
//! let rows = [[0.09, 0.0875], [0.09, 0.0875]];
//! let table = RadiusTable::<2, 2>::from_f64(&[0.0, 1e4], &[0.0, 1.0], &rows).unwrap();
//! // 1/256 N per count is exact in I8F24: (1_281_000 − 1000) / 256 = 5000 N.
//! let gain = Gain::lit("0.00390625");
//! let mut step = ForceRadius::new([gain], [1000], Ratio::ZERO, &table).unwrap();
//! let inputs = Inputs { sample: 0, readings: [Reading::Counts(1_281_000)], speeds: None };
//! let e = step.step(&inputs);
//! assert_eq!(e.clamp_force, Newtons::lit("5000"));
//! assert!(!e.force_lost());
//! ```

use core::fmt;

use clampwise_core::table::Table2;
use clampwise_core::units::{Metres, NewtonMetres, Newtons, RadPerSec, Ratio};
use fixed::types::I8F24;
use fixed::types::extra::{U8, U24, U30};

use crate::adc::{FULL_SCALE, NEGATIVE_FULL_SCALE};
use crate::app::{Inputs, Outcome, Processor, Reading};
use crate::line::Line;

/// ADC gain in newtons per count (I8F24: up to 128 N/count, resolution 6·10⁻⁸ N/count).
pub type Gain = I8F24;

bitflags::bitflags! {
    /// Conditions of one interim step.
    #[derive(Clone, Copy, Debug, PartialEq, Eq)]
    pub struct Flags: u16 {
        /// No channel gave a clean reading: no clamp force this sample.
        const FORCE_LOST = 1 << 0;
        /// At least one channel (not all) failed.
        const CHANNEL_FAULT = 1 << 1;
        /// The radius lookup lay outside the table's breakpoints (edge value used).
        const TABLE_CLAMPED = 1 << 2;
        /// An arithmetic result saturated.
        const SATURATED = 1 << 3;
        /// The shaft speeds could not be read.
        const SPEED_MISSING = 1 << 4;
    }
}

/// Why a [`ForceRadius`] configuration was rejected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum ForceRadiusError {
    /// `gains[channel]` is not positive.
    GainNotPositive {
        /// Channel index.
        channel: usize,
    },
    /// `offsets[channel]` is outside the signed 24-bit range.
    OffsetOutOfRange {
        /// Channel index.
        channel: usize,
    },
    /// `bedding` is outside 0..=1.
    BeddingOutOfRange,
}

impl fmt::Display for ForceRadiusError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::GainNotPositive { channel } => {
                write!(f, "gain_n_per_count[{channel}] must be positive")
            }
            Self::OffsetOutOfRange { channel } => {
                write!(
                    f,
                    "offset_counts[{channel}] is outside the signed 24-bit ADC range"
                )
            }
            Self::BeddingOutOfRange => write!(f, "bedding must lie in 0..=1"),
        }
    }
}

impl core::error::Error for ForceRadiusError {}

/// The result of one interim step.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ForceRadiusEstimate {
    /// Clamp force, N (0 when lost).
    pub clamp_force: Newtons,
    /// Effective friction radius, m.
    pub effective_radius: Metres,
    /// Slip speed ω_in − ω_out, rad/s.
    pub slip_speed: RadPerSec,
    /// Force moment F · r_e, N·m (torque per friction face per unit μ).
    pub force_moment: NewtonMetres,
    /// Number of channels that gave a clean reading.
    pub valid_channels: u8,
    /// Conditions.
    pub flags: Flags,
}

impl Outcome for ForceRadiusEstimate {
    const FIELD_NAMES: &'static [&'static str] = &[
        "clamp_force_bits",
        "effective_radius_bits",
        "slip_speed_bits",
        "force_moment_bits",
        "valid_channels",
        "flags",
    ];

    fn force_lost(&self) -> bool {
        self.flags.contains(Flags::FORCE_LOST)
    }

    fn fade_warning(&self) -> bool {
        false
    }

    fn write_fields(&self, line: &mut Line) {
        line.field(i64::from(self.clamp_force.to_bits()));
        line.field(i64::from(self.effective_radius.to_bits()));
        line.field(i64::from(self.slip_speed.to_bits()));
        line.field(i64::from(self.force_moment.to_bits()));
        line.field(i64::from(self.valid_channels));
        line.field(i64::from(self.flags.bits()));
    }
}

/// The effective-radius table type: r_e in m over (clamp force in N, bedding).
pub type RadiusTable<const NF: usize, const NB: usize> = Table2<U8, U30, U24, NF, NB>;

/// The interim step (see the [module docs](self)). Configuration only: it keeps no state.
#[derive(Clone, Copy, Debug)]
pub struct ForceRadius<'t, const CH: usize, const NF: usize, const NB: usize> {
    gains: [Gain; CH],
    offsets: [i32; CH],
    bedding: Ratio,
    table: &'t RadiusTable<NF, NB>,
}

/// Round a value with `shift` extra fractional bits to nearest (ties up) and narrow to i32;
/// `None` when it does not fit.
fn round_shift(value: i64, shift: u32) -> Option<i32> {
    let half = 1i64 << shift.saturating_sub(1);
    i32::try_from(value.saturating_add(half) >> shift).ok()
}

fn saturate(value: i64) -> i32 {
    if value < 0 { i32::MIN } else { i32::MAX }
}

impl<'t, const CH: usize, const NF: usize, const NB: usize> ForceRadius<'t, CH, NF, NB> {
    /// Check and build the step.
    ///
    /// * `gains` — N/count per channel, positive.
    /// * `offsets` — zero offset per channel, counts, signed 24-bit.
    /// * `bedding` — bedding state used for the radius lookup, 0 (new) ..= 1 (bedded).
    ///
    /// # Errors
    /// A [`ForceRadiusError`] naming the field and channel.
    pub fn new(
        gains: [Gain; CH],
        offsets: [i32; CH],
        bedding: Ratio,
        table: &'t RadiusTable<NF, NB>,
    ) -> Result<Self, ForceRadiusError> {
        if let Some(channel) = gains.iter().position(|g| *g <= Gain::ZERO) {
            return Err(ForceRadiusError::GainNotPositive { channel });
        }
        if let Some(channel) = offsets
            .iter()
            .position(|o| !(NEGATIVE_FULL_SCALE..=FULL_SCALE).contains(o))
        {
            return Err(ForceRadiusError::OffsetOutOfRange { channel });
        }
        if bedding < Ratio::ZERO || bedding > Ratio::ONE {
            return Err(ForceRadiusError::BeddingOutOfRange);
        }
        Ok(Self {
            gains,
            offsets,
            bedding,
            table,
        })
    }

    /// Clamp force of one channel: (counts − offset) · gain, I8F24 · counts → I24F8.
    fn channel_force(&self, counts: i32, gain: Gain, offset: i32, flags: &mut Flags) -> i64 {
        // |counts − offset| < 2^25 and gain < 2^31, so the Q24 product stays below 2^56.
        let q24 = (i64::from(counts) - i64::from(offset)) * i64::from(gain.to_bits());
        match round_shift(q24, 16) {
            Some(bits) => i64::from(bits),
            None => {
                *flags |= Flags::SATURATED;
                i64::from(saturate(q24))
            }
        }
    }
}

impl<const CH: usize, const NF: usize, const NB: usize> Processor<CH>
    for ForceRadius<'_, CH, NF, NB>
{
    type Estimate = ForceRadiusEstimate;

    fn step(&mut self, inputs: &Inputs<CH>) -> ForceRadiusEstimate {
        let mut flags = Flags::empty();
        let mut sum = 0i64;
        let mut valid = 0u8;
        for ((reading, &gain), &offset) in inputs
            .readings
            .iter()
            .zip(self.gains.iter())
            .zip(self.offsets.iter())
        {
            if let Reading::Counts(counts) = *reading {
                sum = sum.saturating_add(self.channel_force(counts, gain, offset, &mut flags));
                valid = valid.saturating_add(1);
            }
        }
        let clamp_force = if valid == 0 {
            flags |= Flags::FORCE_LOST;
            Newtons::ZERO
        } else {
            if usize::from(valid) < CH {
                flags |= Flags::CHANNEL_FAULT;
            }
            // Mean rounded to nearest, ties up: floor((2·sum + n) / 2n). Each term is an i32 and
            // n ≤ 4, so nothing comes near the i64 range; saturating ops say so to the optimiser.
            let n = i64::from(valid);
            let mean = sum
                .saturating_mul(2)
                .saturating_add(n)
                .div_euclid(n.saturating_mul(2));
            Newtons::from_bits(i32::try_from(mean).unwrap_or_else(|_| {
                flags |= Flags::SATURATED;
                saturate(mean)
            }))
        };

        let radius = self.table.lookup(clamp_force, self.bedding);
        if radius.clamped {
            flags |= Flags::TABLE_CLAMPED;
        }
        let effective_radius = radius.value;

        let slip_speed = match inputs.speeds {
            Some(s) => s.input.checked_sub(s.output).unwrap_or_else(|| {
                flags |= Flags::SATURATED;
                s.input.saturating_sub(s.output)
            }),
            None => {
                flags |= Flags::SPEED_MISSING;
                RadPerSec::ZERO
            }
        };

        // I24F8 · I8F24 = Q32 in i64 (|product| < 2^62), to I20F12: 20 bits to drop.
        let q32 = i64::from(clamp_force.to_bits()) * i64::from(effective_radius.to_bits());
        let force_moment = NewtonMetres::from_bits(round_shift(q32, 20).unwrap_or_else(|| {
            flags |= Flags::SATURATED;
            saturate(q32)
        }));

        ForceRadiusEstimate {
            clamp_force,
            effective_radius,
            slip_speed,
            force_moment,
            valid_channels: valid,
            flags,
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing, clippy::float_cmp)]
    use super::*;
    use crate::adc::AdcFault;
    use crate::app::Speeds;
    use proptest::prelude::*;

    // Annulus Ro = 100 mm, Ri = 60 mm (the check geometry of REFERENCES.md).
    const RO: f64 = 0.100;
    const RI: f64 = 0.060;

    /// [pub] Budynas & Nisbett, Shigley's MED, ch. 16: uniform pressure
    /// r_e = (2/3)(Ro³ − Ri³)/(Ro² − Ri²); uniform wear r_e = (Ro + Ri)/2.
    fn r_uniform_pressure() -> f64 {
        2.0 / 3.0 * (RO.powi(3) - RI.powi(3)) / (RO.powi(2) - RI.powi(2))
    }
    fn r_uniform_wear() -> f64 {
        0.5 * (RO + RI)
    }

    fn table() -> RadiusTable<2, 2> {
        let row = [r_uniform_pressure(), r_uniform_wear()];
        RadiusTable::from_f64(&[0.0, 50_000.0], &[0.0, 1.0], &[row, row]).unwrap()
    }

    fn inputs<const CH: usize>(readings: [Reading; CH], speeds: Option<Speeds>) -> Inputs<CH> {
        Inputs {
            sample: 0,
            readings,
            speeds,
        }
    }

    #[test]
    fn check_geometry_radii() {
        // [calc] from the formulas above: Ro = 100 mm, Ri = 60 mm → 81.667 mm and 80.000 mm.
        assert!((r_uniform_pressure() - 0.081_666_7).abs() < 1e-6);
        assert!((r_uniform_wear() - 0.080).abs() < 1e-12);
    }

    #[test]
    fn bedded_and_new_radius_and_moment_against_formulas() {
        let t = table();
        for (bedding, r_ref) in [(0.0, r_uniform_pressure()), (1.0, r_uniform_wear())] {
            let mut step =
                ForceRadius::new([Gain::lit("0.01")], [0], Ratio::from_num(bedding), &t).unwrap();
            // 1_000_000 counts · 0.01 N/count ≈ 10 kN (gain rounded to I8F24).
            let e = step.step(&inputs([Reading::Counts(1_000_000)], None));
            let gain_q: f64 = Gain::lit("0.01").to_num();
            let force_ref = 1e6 * gain_q;
            let force: f64 = e.clamp_force.to_num();
            assert!(
                (force - force_ref).abs() <= 0.5 / 256.0,
                "{force} vs {force_ref}"
            );
            let r: f64 = e.effective_radius.to_num();
            assert!(
                (r - r_ref).abs() <= 1.0 / f64::from(1 << 24),
                "{r} vs {r_ref}"
            );
            // [calc] torque per face per unit μ = F · r_e.
            let m: f64 = e.force_moment.to_num();
            assert!(
                (m - force_ref * r_ref).abs() < 1e-3,
                "{m} vs {}",
                force_ref * r_ref
            );
            assert!(e.flags.contains(Flags::SPEED_MISSING));
            assert!(!e.force_lost());
        }
    }

    #[test]
    fn channels_are_averaged_and_faults_flagged() {
        let t = table();
        let mut step = ForceRadius::new(
            [Gain::lit("0.005"), Gain::lit("0.005")],
            [100, -100],
            Ratio::lit("0.5"),
            &t,
        )
        .unwrap();
        let speeds = Some(Speeds {
            input: RadPerSec::lit("12.5"),
            output: RadPerSec::lit("-0.5"),
        });
        // [calc] (1_000_100 − 100)·0.005 = 5000 N and (1_999_900 − (−100))·0.005 = 10 kN;
        // their mean ≈ 7.5 kN (gain rounded to I8F24: 0.005 → 83886/2^24).
        let both = step.step(&inputs(
            [Reading::Counts(1_000_100), Reading::Counts(1_999_900)],
            speeds,
        ));
        let g: f64 = Gain::lit("0.005").to_num();
        let expected = 0.5 * (1e6 * g + 2e6 * g);
        assert!((both.clamp_force.to_num::<f64>() - expected).abs() <= 1.0 / 256.0);
        assert_eq!(both.slip_speed, RadPerSec::lit("13"));
        assert_eq!(both.valid_channels, 2);
        assert!(both.flags.is_empty());

        let one = step.step(&inputs(
            [Reading::Fault(AdcFault::Crc), Reading::Counts(-100)],
            speeds,
        ));
        assert_eq!(one.clamp_force, Newtons::ZERO);
        assert_eq!(one.flags, Flags::CHANNEL_FAULT);

        let none = step.step(&inputs(
            [
                Reading::Fault(AdcFault::NotReady),
                Reading::Fault(AdcFault::Overrange),
            ],
            speeds,
        ));
        assert!(none.force_lost());
        assert_eq!(none.valid_channels, 0);
        assert!(!none.fade_warning());
    }

    #[test]
    fn out_of_table_and_saturation_are_flagged() {
        let t = table();
        let mut step = ForceRadius::new([Gain::MAX], [0], Ratio::ZERO, &t).unwrap();
        let e = step.step(&inputs(
            [Reading::Counts(FULL_SCALE)],
            Some(Speeds {
                input: RadPerSec::MAX,
                output: RadPerSec::lit("-1"),
            }),
        ));
        assert_eq!(e.clamp_force, Newtons::MAX);
        assert_eq!(e.slip_speed, RadPerSec::MAX);
        assert!(e.flags.contains(Flags::SATURATED | Flags::TABLE_CLAMPED));
        // Negative force (below the offset) is below the first breakpoint: clamped, flagged.
        let mut step = ForceRadius::new([Gain::ONE], [0], Ratio::ZERO, &t).unwrap();
        let e = step.step(&inputs([Reading::Counts(-10)], None));
        assert!(e.flags.contains(Flags::TABLE_CLAMPED));
        assert_eq!(e.force_moment.to_num::<f64>().signum(), -1.0);
    }

    #[test]
    fn config_errors_name_the_channel() {
        let t = table();
        let e = ForceRadius::new([Gain::ONE, Gain::ZERO], [0, 0], Ratio::ZERO, &t).unwrap_err();
        assert_eq!(e, ForceRadiusError::GainNotPositive { channel: 1 });
        assert_eq!(e.to_string(), "gain_n_per_count[1] must be positive");
        assert_eq!(
            ForceRadius::new([Gain::ONE], [1 << 23], Ratio::ZERO, &t).unwrap_err(),
            ForceRadiusError::OffsetOutOfRange { channel: 0 }
        );
        assert_eq!(
            ForceRadius::new([Gain::ONE], [0], Ratio::lit("1.5"), &t).unwrap_err(),
            ForceRadiusError::BeddingOutOfRange
        );
    }

    proptest! {
        // Against f64 arithmetic on the same stored numbers, over the whole 24-bit range.
        #[test]
        fn force_and_moment_match_f64(
            counts in NEGATIVE_FULL_SCALE..=FULL_SCALE,
            offset in -100_000i32..100_000,
            gain_bits in 1i32..(1 << 20),
            bedding_bits in 0i32..=(1 << 30),
        ) {
            let t = table();
            let gain = Gain::from_bits(gain_bits);
            let bedding = Ratio::from_bits(bedding_bits);
            let mut step = ForceRadius::new([gain], [offset], bedding, &t).unwrap();
            let e = step.step(&inputs([Reading::Counts(counts)], None));
            let f_ref = (f64::from(counts) - f64::from(offset)) * gain.to_num::<f64>();
            let f: f64 = e.clamp_force.to_num();
            prop_assert!((f - f_ref).abs() <= 0.5 / 256.0 + 1e-9, "force {} vs {}", f, f_ref);
            let r: f64 = e.effective_radius.to_num();
            let m_ref = f * r;
            let m: f64 = e.force_moment.to_num();
            prop_assert!((m - m_ref).abs() <= 0.5 / 4096.0 + 1e-9, "moment {} vs {}", m, m_ref);
        }
    }
}
