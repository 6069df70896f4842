//! THE SEAM between the simulator and the core's estimator.
//!
//! Everything in the simulator (replay, compare, fit, demo, plots, benches) drives an estimator
//! only through [`SampleEstimator::step`]: one trace sample in, one [`EstimateRow`] out. The
//! implementation is [`CoreEstimator`], which runs `clampwise_core::estimator::Estimator::step`
//! itself — the code a firmware runs — and nothing else:
//!
//! ```text
//! TraceSample (f64, SI) ─ core_inputs ─► Inputs<C> (fixed point) ─ Estimator::step ─► Estimate
//!                                                                    │ estimate_row (to_num, exact)
//!                                                                    ▼
//!                                                               EstimateRow (f64, SI)
//! ```
//!
//! The boundary conversions are the only arithmetic here:
//! - in: force channels as raw counts ([`channel_counts`]: counts columns pass through,
//!   calibrated newton columns are turned back into the counts the ADC would have given);
//!   speeds, command, temperatures and the reference torque with the fixed types'
//!   `saturating_from_num` (round to nearest); a brake's output speed is 0 whatever the trace
//!   says.
//! - out: every fixed-point value with `to_num::<f64>()`, which is exact (each I32- or
//!   I64-based value used here has at most 53 significant bits), and the CSV writer prints the
//!   shortest decimal that reads back to that f64, so an estimate file holds the core's bits.
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
use fixed::types::I16F16;

use crate::config::{DeviceConfig, DeviceKind};

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
}

impl From<ContactState> for State {
    fn from(s: ContactState) -> Self {
        match s {
            ContactState::Slipping => Self::Slipping,
            ContactState::Holding => Self::Holding,
            ContactState::Released => Self::Released,
            ContactState::Unavailable => Self::Unavailable,
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
    pub const ALL: [State; 4] = [
        Self::Slipping,
        Self::Holding,
        Self::Released,
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
    pub fn of(c: &DeviceConfig) -> Vec<Self> {
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

fn sat<T: fixed::traits::Fixed>(v: f64) -> T {
    T::saturating_from_num(if v.is_nan() { 0.0 } else { v })
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
        input_speed: sat(s.omega_in_rad_s),
        output_speed: if brake {
            RadPerSec::ZERO
        } else {
            sat(s.omega_out_rad_s)
        },
        actuator_command: s.command.map(sat::<I16F16>),
        sensor_temperature: None,
        lining_temperature: s.temp_c.map(sat::<Celsius>),
        ambient_temperature: s.ambient_c.map(sat::<Celsius>),
        reference_torque: s.torque_ref_nm.map(sat::<NewtonMetres>),
    }
}

/// The estimate row of one core [`Estimate`] (exact `to_num` conversions).
pub fn estimate_row<const C: usize>(
    s: &TraceSample,
    inputs: &Inputs<C>,
    e: &Estimate,
) -> EstimateRow {
    EstimateRow {
        line: s.line,
        t_s: s.t_s,
        torque_nm: e.torque.map(|t| t.to_num()),
        capacity_nm: e.holding_capacity.map(|c| c.to_num()),
        uncertainty_nm: e.uncertainty.to_num(),
        mu: e.mu.to_num(),
        radius_m: e.effective_radius.to_num(),
        clamp_force_n: e.clamp_force.to_num(),
        slip_speed_rad_s: inputs
            .input_speed
            .saturating_sub(inputs.output_speed)
            .to_num(),
        lining_temp_c: e.lining_temperature.to_num(),
        bedding: e.bedding.to_num(),
        wear_m: e.wear.to_num(),
        correction: e.correction.to_num(),
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
    pub fn new(config: &DeviceConfig, core: &'d CoreDevice) -> Result<Self, RecordError> {
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
    config: &DeviceConfig,
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

    fn demo() -> (DeviceConfig, CoreDevice) {
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
        // Worst case: δμ + δF/F + δr = 0.20 + 400 N / 40 kN + 0.01 [calc].
        assert_relative_eq!(
            row.uncertainty_nm,
            row.torque_nm.unwrap().abs() * (0.20 + 0.01 + 0.01),
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
