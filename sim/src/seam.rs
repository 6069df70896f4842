//! THE SEAM between the simulator and the core's estimator.
//!
//! Everything in the simulator (replay, compare, fit, demo, plots, benches) drives an estimator
//! only through [`SampleEstimator::step`]: one trace sample in, one [`EstimateRow`] out. The
//! implementation is [`CoreEstimator`], which runs `clampwise_core::estimator::Estimator::step`
//! itself — the code a firmware runs — and nothing else:
//!
//! ```text
//! TraceSample (f64, SI) ─ core_inputs ─► Inputs<C> (fixed point) ─ Estimator::step ─► Estimate
//!                                                                    │ estimate_row (exact)
//!                                                                    ▼
//!                                                               EstimateRow (f64, SI)
//! ```
//!
//! The boundary conversions are the only arithmetic here:
//! - in: force channels as raw counts ([`channel_counts`]: counts columns pass through,
//!   calibrated newton columns are turned back into the counts the ADC would have given);
//!   speeds, command, temperatures and the reference torque as the fixed types'
//!   `saturating_from_num` gives them (round to nearest, ties to even; NaN as 0), computed by
//!   direct scaling in [`saturating_fixed`]; a brake's output speed is 0 whatever the trace
//!   says.
//! - out: every fixed-point value as `to_num::<f64>()` gives it, computed by direct scaling
//!   in [`fixed_to_f64`]; exact (each I32- or I64-based value used here has at most 53
//!   significant bits), and the CSV writer prints the shortest decimal that reads back to
//!   that f64, so an estimate file holds the core's bits. The direct conversions are
//!   bit-identical to the `fixed` crate's (property test over the types and ranges used).
//!   The slip speed column is `input_speed − output_speed` as the core forms it
//!   (`saturating_sub` in [`RadPerSec`]).
//!
//! The core's `DeviceConfig<C, ..>` is generic over the channel count C; [`CoreEstimator`]
//! holds one of four estimators (C = 1 … 4) chosen once from the config (see
//! `clampwise_device::build_core::ChannelDevice`).

use clampwise_core::estimator::{ContactState, Estimate, Estimator, Inputs};
use clampwise_core::record::RecordError;
use clampwise_core::sensor::RawChannel;
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};
use clampwise_device::build_core::{
    ChannelDevice, CoreDevice, Device, MU_POINTS, RADIUS_BEDDING_POINTS, RADIUS_FORCE_POINTS,
};
use fixed::traits::Fixed;
use fixed::types::I16F16;

use crate::schema::{DeviceKind, DeviceSpec};

pub use clampwise_core::flags::Flags;

/// One force channel of a sample as it came from the trace.
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub enum Channel {
    /// Column not present in the trace.
    #[default]
    Absent,
    /// Raw ADC counts (already an integer).
    Counts(i32),
    /// Calibrated force, N (the logger calibrated it).
    Newtons(f64),
}

/// One trace row after column mapping and unit conversion (SI units).
#[derive(Clone, Copy, Debug, PartialEq, Default)]
pub struct TraceSample {
    /// 1-based line in the source file.
    pub line: u64,
    /// Time, s.
    pub t_s: f64,
    /// Force channels 1–4.
    pub force: [Channel; 4],
    /// Valid bit of each channel (true when the trace has no valid column).
    pub force_valid: [bool; 4],
    /// Input shaft speed, rad/s.
    pub omega_in_rad_s: f64,
    /// Output shaft speed, rad/s (0 for a brake).
    pub omega_out_rad_s: f64,
    /// Actuator command, in the column's converted unit.
    pub command: Option<f64>,
    /// Measured lining/rotor temperature, °C.
    pub temp_c: Option<f64>,
    /// Ambient temperature, °C.
    pub ambient_c: Option<f64>,
    /// Reference torque (bench flange), N·m.
    pub torque_ref_nm: Option<f64>,
}

/// Operating state of an estimate: the core's [`ContactState`], with an order and a parser
/// for reports.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum State {
    /// Slip above the stick threshold: torque = −sign(v)·N·μ·F·r_e (+ drag).
    Slipping,
    /// Below the stick threshold: torque is set by the load, bounded by ±capacity.
    Holding,
    /// Clamp force below the touch threshold: the drag torque alone (0 for a dry contact).
    Released,
    /// No usable clamp force.
    Unavailable,
    /// Clamp force known, slip speed not: no torque; |torque| ≤ capacity, a bound over every
    /// slip speed.
    SlipUnknown,
}

impl From<ContactState> for State {
    fn from(s: ContactState) -> Self {
        match s {
            ContactState::Slipping => Self::Slipping,
            ContactState::Holding => Self::Holding,
            ContactState::Released => Self::Released,
            ContactState::Unavailable => Self::Unavailable,
            ContactState::SlipUnknown => Self::SlipUnknown,
        }
    }
}

impl From<State> for ContactState {
    fn from(s: State) -> Self {
        match s {
            State::Slipping => Self::Slipping,
            State::Holding => Self::Holding,
            State::Released => Self::Released,
            State::Unavailable => Self::Unavailable,
            State::SlipUnknown => Self::SlipUnknown,
        }
    }
}

impl State {
    /// Spelling in estimate files: the core's [`ContactState::name`].
    pub fn name(self) -> &'static str {
        ContactState::from(self).name()
    }

    /// Parse the spelling of [`State::name`].
    pub fn parse(s: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|st| st.name() == s)
    }

    /// All states, in report order.
    pub const ALL: [State; 5] = [
        Self::Slipping,
        Self::Holding,
        Self::Released,
        Self::SlipUnknown,
        Self::Unavailable,
    ];
}

/// One estimate, in SI units, converted exactly from the core's fixed-point [`Estimate`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EstimateRow {
    /// Source line of the sample.
    pub line: u64,
    /// Time, s (copied from the sample).
    pub t_s: f64,
    /// Friction torque, N·m, opposing slip; `None` while holding (the torque is then set by the
    /// load, within ±capacity, and no number is made up) or without a clamp force.
    pub torque_nm: Option<f64>,
    /// Holding capacity N·μ_s·F·r_e, N·m (≥ 0); `None` without a clamp force.
    pub capacity_nm: Option<f64>,
    /// ± uncertainty of torque (or of capacity while holding), N·m; the top of
    /// [`NewtonMetres`] (524 288 N·m) when nothing is known.
    pub uncertainty_nm: f64,
    /// μ used (kinetic slipping, static holding, with the adaptation's correction).
    pub mu: f64,
    /// Lever arm per face used, m (r_e, divided by sin α for a cone).
    pub radius_m: f64,
    /// Clamp force used, N.
    pub clamp_force_n: f64,
    /// Slip speed ω_in − ω_out, rad/s, as the core forms it.
    pub slip_speed_rad_s: f64,
    /// Lining temperature used, °C (modelled, or measured while plausible).
    pub lining_temp_c: f64,
    /// Bedding, 0 … 1.
    pub bedding: f64,
    /// Lining wear, m.
    pub wear_m: f64,
    /// Correction factor on μ from the adaptation (1 without it).
    pub correction: f64,
    /// Operating state.
    pub state: State,
    /// The core's flags word.
    pub flags: Flags,
    /// Reference torque copied from the sample, N·m.
    pub torque_ref_nm: Option<f64>,
}

/// What the simulator needs from an estimator: one step per trace sample.
pub trait SampleEstimator {
    /// Process one sample (samples arrive in trace order, one per configured sample period).
    fn step(&mut self, s: &TraceSample) -> EstimateRow;
}

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
            Channel::Newtons(f) => {
                let counts = (f / c.gain_n_per_count + c.offset_counts).round();
                Some(if counts >= f64::from(i32::MAX) {
                    i32::MAX
                } else if counts <= f64::from(i32::MIN) {
                    i32::MIN
                } else {
                    // In range by the two tests above.
                    #[allow(clippy::cast_possible_truncation)]
                    let c = counts as i32;
                    c
                })
            }
        };
    }
    out
}

/// The integer behind a fixed-point type, for the direct conversions below.
pub trait FixedBits: Copy {
    /// A rounded (integral) f64 to the integer, saturating, NaN → 0 (Rust's `as`).
    fn saturating_from_rounded(x: f64) -> Self;
    /// The integer as f64, rounded to nearest, ties to even (Rust's `as`; exact up to 2⁵³).
    fn to_f64(self) -> f64;
}

impl FixedBits for i32 {
    fn saturating_from_rounded(x: f64) -> Self {
        // Rust's float → int `as` saturates and maps NaN to 0: exactly the saturation wanted.
        #[allow(clippy::cast_possible_truncation)]
        let n = x as i32;
        n
    }
    fn to_f64(self) -> f64 {
        f64::from(self)
    }
}

impl FixedBits for i64 {
    fn saturating_from_rounded(x: f64) -> Self {
        // As for i32.
        #[allow(clippy::cast_possible_truncation)]
        let n = x as i64;
        n
    }
    fn to_f64(self) -> f64 {
        // Round to nearest, ties to even, as `to_num::<f64>` rounds a value of more than 53
        // significant bits.
        #[allow(clippy::cast_precision_loss)]
        let f = self as f64;
        f
    }
}

/// 2^FRAC_NBITS as f64, built from its exponent field (exact; FRAC_NBITS ≤ 128 for every
/// fixed type, far inside the normal exponent range).
fn scale<T: Fixed>() -> f64 {
    f64::from_bits((1023 + u64::from(T::FRAC_NBITS)) << 52)
}

/// `T::saturating_from_num(v)` with NaN taken as 0, by direct scaling: v · 2^F is exact (a
/// power-of-two scale; an overflow goes to ±∞ and saturates all the same), rounded to nearest
/// with ties to even as `from_num` rounds, then saturated to the integer's range. Bit-identical
/// to `saturating_from_num` (property test `direct_conversions_match_the_fixed_crate`), without
/// its generic float decomposition.
pub fn saturating_fixed<T>(v: f64) -> T
where
    T: Fixed,
    T::Bits: FixedBits,
{
    T::from_bits(T::Bits::saturating_from_rounded(
        (v * scale::<T>()).round_ties_even(),
    ))
}

/// `x.to_num::<f64>()` by direct scaling: the integer as f64 (exact for the 32-bit types,
/// rounded to nearest-even above 2⁵³ as `to_num` does) times 2^−F (exact). Bit-identical to
/// `to_num` (same property test).
pub fn fixed_to_f64<T>(x: T) -> f64
where
    T: Fixed,
    T::Bits: FixedBits,
{
    x.to_bits().to_f64() / scale::<T>()
}

/// The core's [`Inputs`] for one trace sample (the boundary conversion of the module docs).
pub fn core_inputs<const C: usize>(s: &TraceSample, cal: &[ChannelCal], brake: bool) -> Inputs<C> {
    let counts = channel_counts(s, cal);
    let mut force_channels = [RawChannel::default(); C];
    for (o, c) in force_channels.iter_mut().zip(counts) {
        *o = match c {
            Some(counts) => RawChannel {
                counts,
                valid: true,
            },
            None => RawChannel {
                counts: 0,
                valid: false,
            },
        };
    }
    Inputs {
        force_channels,
        input_speed: Some(saturating_fixed(s.omega_in_rad_s)),
        output_speed: Some(if brake {
            RadPerSec::ZERO
        } else {
            saturating_fixed(s.omega_out_rad_s)
        }),
        actuator_command: s.command.map(saturating_fixed::<I16F16>),
        sensor_temperature: None,
        lining_temperature: s.temp_c.map(saturating_fixed::<Celsius>),
        ambient_temperature: s.ambient_c.map(saturating_fixed::<Celsius>),
        reference_torque: s.torque_ref_nm.map(saturating_fixed::<NewtonMetres>),
    }
}

/// The estimate row of one core [`Estimate`] (exact conversions, as `to_num`).
pub fn estimate_row<const C: usize>(
    s: &TraceSample,
    inputs: &Inputs<C>,
    e: &Estimate,
) -> EstimateRow {
    EstimateRow {
        line: s.line,
        t_s: s.t_s,
        torque_nm: e.torque.map(fixed_to_f64),
        capacity_nm: e.holding_capacity.map(fixed_to_f64),
        uncertainty_nm: fixed_to_f64(e.uncertainty),
        mu: fixed_to_f64(e.mu),
        radius_m: fixed_to_f64(e.effective_radius),
        clamp_force_n: fixed_to_f64(e.clamp_force),
        slip_speed_rad_s: fixed_to_f64(inputs.slip_speed().unwrap_or(RadPerSec::ZERO)),
        lining_temp_c: fixed_to_f64(e.lining_temperature),
        bedding: fixed_to_f64(e.bedding),
        wear_m: fixed_to_f64(e.wear),
        correction: fixed_to_f64(e.correction),
        state: e.state.into(),
        flags: e.flags,
        torque_ref_nm: s.torque_ref_nm,
    }
}

type CoreStepper<'d, const C: usize> =
    Estimator<'d, C, RADIUS_FORCE_POINTS, RADIUS_BEDDING_POINTS, MU_POINTS, MU_POINTS>;

/// One of the four channel counts.
#[derive(Clone, Debug)]
enum Stepper<'d> {
    One(CoreStepper<'d, 1>),
    Two(CoreStepper<'d, 2>),
    Three(CoreStepper<'d, 3>),
    Four(CoreStepper<'d, 4>),
}

/// The core's estimator behind the seam: `Estimator::step` on every sample, nothing else.
#[derive(Clone, Debug)]
pub struct CoreEstimator<'d> {
    stepper: Stepper<'d>,
    cal: Vec<ChannelCal>,
    brake: bool,
}

fn start<'d, const C: usize>(
    dev: &'d Device<C>,
    core: &CoreDevice,
) -> Result<CoreStepper<'d, C>, RecordError> {
    match core.initial.record(dev) {
        None => Ok(Estimator::new(dev)),
        Some(rec) => Estimator::restore(dev, &rec),
    }
}

fn step_one<const C: usize>(
    est: &mut CoreStepper<'_, C>,
    s: &TraceSample,
    cal: &[ChannelCal],
    brake: bool,
) -> EstimateRow {
    let inputs = core_inputs::<C>(s, cal, brake);
    let e = est.step(&inputs);
    estimate_row(s, &inputs, &e)
}

impl<'d> CoreEstimator<'d> {
    /// An estimator for a config and its core device, starting at the config's initial state
    /// (`thermal.initial_temperature_c`, `wear.initial_energy_j`).
    ///
    /// # Errors
    /// The core's [`RecordError`] if the starting state record is refused (it is written here,
    /// so this would be a bug).
    pub fn new(config: &DeviceSpec, core: &'d CoreDevice) -> Result<Self, RecordError> {
        let stepper = match &core.device {
            ChannelDevice::One(d) => Stepper::One(start(d, core)?),
            ChannelDevice::Two(d) => Stepper::Two(start(d, core)?),
            ChannelDevice::Three(d) => Stepper::Three(start(d, core)?),
            ChannelDevice::Four(d) => Stepper::Four(start(d, core)?),
        };
        Ok(Self {
            stepper,
            cal: ChannelCal::of(config),
            brake: config.device.kind == DeviceKind::Brake,
        })
    }
}

impl SampleEstimator for CoreEstimator<'_> {
    fn step(&mut self, s: &TraceSample) -> EstimateRow {
        let (cal, brake) = (self.cal.as_slice(), self.brake);
        match &mut self.stepper {
            Stepper::One(e) => step_one(e, s, cal, brake),
            Stepper::Two(e) => step_one(e, s, cal, brake),
            Stepper::Three(e) => step_one(e, s, cal, brake),
            Stepper::Four(e) => step_one(e, s, cal, brake),
        }
    }
}

/// Build the estimator every subcommand uses: the core's, through [`CoreEstimator`].
///
/// # Errors
/// As [`CoreEstimator::new`].
pub fn new_estimator<'d>(
    config: &DeviceSpec,
    core: &'d CoreDevice,
) -> Result<Box<dyn SampleEstimator + Send + 'd>, RecordError> {
    Ok(Box::new(CoreEstimator::new(config, core)?))
}

/// The names of the set flags, as the core's bitflags spell them (`SENSOR_DEGRADED`, …).
pub fn flag_names(f: Flags) -> impl Iterator<Item = &'static str> {
    f.iter_names().map(|(name, _)| name)
}

#[cfg(test)]
mod tests {
    // Bit-exact comparisons are the point here (sign symmetry, breakpoints).
    #![allow(clippy::unwrap_used, clippy::indexing_slicing, clippy::float_cmp)]
    use super::*;
    use crate::config::LoadedConfig;
    use approx::assert_relative_eq;
    use proptest::prelude::*;

    fn demo() -> (DeviceSpec, CoreDevice) {
        let c = LoadedConfig::from_str(crate::demo::DEMO_CONFIG, "d")
            .unwrap()
            .config;
        let d = CoreDevice::build(&c).unwrap();
        (c, d)
    }

    fn sample(f_n: f64, w: f64, t: f64) -> TraceSample {
        TraceSample {
            force: [
                Channel::Newtons(f_n),
                Channel::Newtons(f_n),
                Channel::Newtons(f_n),
                Channel::Absent,
            ],
            force_valid: [true; 4],
            omega_in_rad_s: w,
            temp_c: Some(t),
            ..TraceSample::default()
        }
    }

    /// Step a steady sample long enough for the force filter to settle.
    fn settle(e: &mut dyn SampleEstimator, s: &TraceSample) -> EstimateRow {
        let mut row = e.step(s);
        for _ in 0..400 {
            row = e.step(s);
        }
        row
    }

    #[test]
    fn steady_slip_matches_published_formula() {
        // [pub: Shigley ch. 16] T = N·μ·F·r_e; r_e uniform pressure (new pads, bedding ≈ 0) for
        // the demo sector 0.52–0.68 m: ⅔(Ro³−Ri³)/(Ro²−Ri²) [calc]; μ(200 °C, 2 rad/s) = 0.40
        // is a table breakpoint; the measured temperature is used (plausible).
        let (c, d) = demo();
        let mut e = new_estimator(&c, &d).unwrap();
        let row = settle(e.as_mut(), &sample(40_000.0, 2.0, 200.0));
        let r_up =
            2.0 / 3.0 * (0.68f64.powi(3) - 0.52f64.powi(3)) / (0.68f64.powi(2) - 0.52f64.powi(2));
        let expected = -2.0 * 0.40 * 40_000.0 * r_up;
        assert_eq!(row.state, State::Slipping);
        // Bedding after 0.4 s at ~20 kW is ~0.004: r_e moves by ~1e-5 relative.
        assert_relative_eq!(row.torque_nm.unwrap(), expected, max_relative = 1e-4);
        assert_relative_eq!(row.mu, 0.40, max_relative = 1e-8);
        // Worst case, the exact product bound: (1 + δμ)(1 + δF/F)(1 + δr) − 1 with δμ = 0.20,
        // δF/F = 400 N / 40 kN, δr = 0.01 [calc].
        assert_relative_eq!(
            row.uncertainty_nm,
            row.torque_nm.unwrap().abs() * (1.20 * 1.01 * 1.01 - 1.0),
            max_relative = 1e-6
        );
    }

    #[test]
    fn holding_reports_capacity_not_torque() {
        let (c, d) = demo();
        let mut e = new_estimator(&c, &d).unwrap();
        let row = settle(e.as_mut(), &sample(40_000.0, 0.0, 20.0));
        assert_eq!(row.state, State::Holding);
        assert!(row.torque_nm.is_none());
        assert!(row.flags.contains(Flags::TORQUE_BOUNDED));
        let r_up = d.tables.radii_m.0;
        // μ_s = 1.25 · μ(20 °C, first speed breakpoint) = 1.25 · 0.42.
        assert_relative_eq!(
            row.capacity_nm.unwrap(),
            2.0 * 0.42 * 1.25 * 40_000.0 * r_up,
            max_relative = 1e-6
        );
    }

    #[test]
    fn stick_slip_hysteresis() {
        let (c, d) = demo();
        let mut e = new_estimator(&c, &d).unwrap();
        settle(e.as_mut(), &sample(40_000.0, 0.0, 20.0));
        // stick 0.02, hysteresis 0.01: holding until |v| > 0.03, slipping until |v| < 0.02.
        let states: Vec<State> = [0.0, 0.025, 0.031, 0.025, 0.019, 0.025]
            .iter()
            .map(|&w| e.step(&sample(40_000.0, w, 20.0)).state)
            .collect();
        use State::*;
        assert_eq!(
            states,
            [Holding, Holding, Slipping, Slipping, Holding, Holding]
        );
    }

    #[test]
    fn direction_reversal_flips_sign() {
        let (c, d) = demo();
        let mut fwd_est = new_estimator(&c, &d).unwrap();
        let mut rev_est = new_estimator(&c, &d).unwrap();
        let fwd = settle(fwd_est.as_mut(), &sample(30_000.0, 5.0, 100.0));
        let rev = settle(rev_est.as_mut(), &sample(30_000.0, -5.0, 100.0));
        assert!(fwd.torque_nm.unwrap() < 0.0);
        assert_eq!(fwd.torque_nm.unwrap(), -rev.torque_nm.unwrap());
    }

    #[test]
    fn released_and_faults() {
        let (c, d) = demo();
        let mut e = new_estimator(&c, &d).unwrap();
        let r = settle(e.as_mut(), &sample(100.0, 5.0, 20.0));
        assert_eq!((r.state, r.torque_nm), (State::Released, Some(0.0)));
        // One channel on the rail: the other two still vote; flagged once debounced.
        let mut s = sample(30_000.0, 5.0, 20.0);
        settle(e.as_mut(), &s);
        s.force[1] = Channel::Counts(8_388_607);
        let r = settle(e.as_mut(), &s);
        assert_eq!(r.state, State::Slipping);
        assert!(r.flags.contains(Flags::SENSOR_DEGRADED), "{:?}", r.flags);
        assert_relative_eq!(r.clamp_force_n, 30_000.0, max_relative = 1e-4);
        // No valid channel and a command: fallback from the actuator command.
        let mut s = sample(0.0, 5.0, 20.0);
        s.force_valid = [false; 4];
        s.command = Some(0.5);
        let r = settle(e.as_mut(), &s);
        assert!(r.flags.contains(Flags::FORCE_FALLBACK), "{:?}", r.flags);
        // 60 kN per unit command: 30 kN on the centre line, ± half the 2 kN hysteresis band.
        assert!(
            (r.clamp_force_n - 30_000.0).abs() <= 1000.0 + 1e-6,
            "{}",
            r.clamp_force_n
        );
        s.command = None;
        let r = e.step(&s);
        assert_eq!(r.state, State::Unavailable);
        assert!(r.torque_nm.is_none() && r.capacity_nm.is_none());
        assert!(r.flags.contains(Flags::FORCE_LOST));
    }

    /// The `fixed` crate's conversions, as the seam used them before the direct ones.
    fn via_crate<T: Fixed>(v: f64) -> T {
        T::saturating_from_num(if v.is_nan() { 0.0 } else { v })
    }

    fn same_both_ways<T>(v: f64) -> Result<(), TestCaseError>
    where
        T: Fixed,
        T::Bits: FixedBits + PartialEq + std::fmt::Debug,
    {
        let direct: T = saturating_fixed(v);
        prop_assert_eq!(
            direct.to_bits(),
            via_crate::<T>(v).to_bits(),
            "{} from {:e}",
            T::FRAC_NBITS,
            v
        );
        prop_assert_eq!(
            fixed_to_f64(direct).to_bits(),
            direct.to_num::<f64>().to_bits(),
            "{} to f64 of {:e}",
            T::FRAC_NBITS,
            v
        );
        Ok(())
    }

    /// Every fixed type the seam converts (inputs and estimate fields), and the two I64-based
    /// ones of the core's units.
    fn all_types(v: f64) -> Result<(), TestCaseError> {
        same_both_ways::<I16F16>(v)?; // RadPerSec, Celsius, actuator command
        same_both_ways::<NewtonMetres>(v)?;
        same_both_ways::<clampwise_core::units::Newtons>(v)?;
        same_both_ways::<clampwise_core::units::Metres>(v)?;
        same_both_ways::<clampwise_core::units::Ratio>(v)?;
        same_both_ways::<clampwise_core::units::Watts>(v)?;
        same_both_ways::<clampwise_core::units::Joules>(v)?;
        Ok(())
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(20_000))]

        /// Direct scaling against `saturating_from_num` / `to_num`: any f64 bit pattern
        /// (NaN, ±∞, subnormals, huge), the ranges the traces use and well past them
        /// (saturation), and exact half-LSB ties (round to even).
        #[test]
        fn direct_conversions_match_the_fixed_crate(
            bits in any::<u64>(),
            wide in -1e15f64..1e15,
            near in -600_000.0f64..600_000.0,
            n in any::<i64>(),
            frac in prop::sample::select(vec![8u32, 12, 16, 24, 30, 32]),
        ) {
            all_types(f64::from_bits(bits))?;
            all_types(wide)?;
            all_types(near)?;
            // A tie between two steps of 2^−frac, and its neighbours.
            #[allow(clippy::cast_precision_loss)]
            let tie = ((n >> 12) as f64 + 0.5) / f64::from_bits((1023 + u64::from(frac)) << 52);
            all_types(tie)?;
            all_types(tie.next_up())?;
            all_types(tie.next_down())?;
        }
    }

    #[test]
    fn direct_conversions_at_the_edges() {
        for v in [
            0.0,
            -0.0,
            f64::NAN,
            -f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::MAX,
            f64::MIN,
            f64::MIN_POSITIVE,
            -f64::MIN_POSITIVE / 3.0,
            32_767.999_99,
            32_768.0,
            -32_768.0,
            -32_768.000_01,
            524_287.999_9,
            -524_288.000_1,
            0.5 / 65_536.0,
            1.5 / 65_536.0,
            -2.5 / 65_536.0,
        ] {
            all_types(v).unwrap();
        }
    }

    #[test]
    fn state_names_are_the_cores() {
        for s in State::ALL {
            assert_eq!(State::parse(s.name()), Some(s));
            assert_eq!(s.name(), ContactState::from(s).name());
        }
        let names: Vec<_> = flag_names(Flags::FADE_WARNING | Flags::SENSOR_DEGRADED).collect();
        assert_eq!(names, ["SENSOR_DEGRADED", "FADE_WARNING"]);
    }
}
