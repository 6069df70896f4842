//! The core's estimator over a trace: one of four estimators (channel count C = 1 … 4, chosen
//! once from the config, see `clampwise_device::build_core::ChannelDevice`), each sample
//! converted in by [`core_inputs`] and out by [`estimate_row`].

use clampwise_core::estimator::{Estimator, SnapshotError, snapshot_len};
use clampwise_core::state_record::{RECORD_LEN, RecordError};
use clampwise_device::build_core::{ChannelDevice, CoreDevice, Device, HostTables};
use clampwise_device::schema::{DeviceKind, DeviceSpec};

use crate::channel::ChannelCal;
use crate::inputs::core_inputs;
use crate::row::{EstimateRow, estimate_row};
use crate::sample::TraceSample;

/// What a caller needs from an estimator: one step per trace sample.
pub trait SampleEstimator {
    /// Process one sample (samples arrive in trace order, one per configured sample period).
    fn step(&mut self, s: &TraceSample) -> EstimateRow;
}

type CoreStepper<'d, const C: usize> = Estimator<'d, HostTables, C>;

/// One of the four channel counts.
#[derive(Clone, Debug)]
enum Stepper<'d> {
    One(CoreStepper<'d, 1>),
    Two(CoreStepper<'d, 2>),
    Three(CoreStepper<'d, 3>),
    Four(CoreStepper<'d, 4>),
}

/// The core's estimator over a trace: `Estimator::step` on every sample, nothing else.
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

impl<'d> CoreEstimator<'d> {
    /// An estimator resuming from a state record [`CoreEstimator::save`] wrote (as a
    /// controller does after a power cycle: wear, bedding, temperatures and the adaptation's
    /// state carry over; the sensor filters and the stick/slip decision start afresh).
    ///
    /// # Errors
    /// The core's [`RecordError`]: a corrupt or truncated record, or one saved for another
    /// configuration.
    pub fn restore(
        config: &DeviceSpec,
        core: &'d CoreDevice,
        record: &[u8],
    ) -> Result<Self, RecordError> {
        let stepper = match &core.device {
            ChannelDevice::One(d) => Stepper::One(Estimator::restore(d, record)?),
            ChannelDevice::Two(d) => Stepper::Two(Estimator::restore(d, record)?),
            ChannelDevice::Three(d) => Stepper::Three(Estimator::restore(d, record)?),
            ChannelDevice::Four(d) => Stepper::Four(Estimator::restore(d, record)?),
        };
        Ok(Self {
            stepper,
            cal: ChannelCal::of(config),
            brake: config.device.kind == DeviceKind::Brake,
        })
    }

    /// The core's state record (`Estimator::save`) with this `sequence` number.
    pub fn save(&self, sequence: u32) -> [u8; RECORD_LEN] {
        match &self.stepper {
            Stepper::One(e) => e.save(sequence),
            Stepper::Two(e) => e.save(sequence),
            Stepper::Three(e) => e.save(sequence),
            Stepper::Four(e) => e.save(sequence),
        }
    }
}

fn snapshot_of<const C: usize>(est: &CoreStepper<'_, C>) -> Vec<u8> {
    let mut bytes = vec![0; snapshot_len(C)];
    // The buffer is the snapshot's length: the only error (too short) cannot happen.
    let written = est.snapshot_into(&mut bytes).unwrap_or(0);
    bytes.truncate(written);
    bytes
}

impl<'d> CoreEstimator<'d> {
    /// The core's full-state snapshot (`Estimator::snapshot_into`): [`CoreEstimator::resume`]
    /// continues exactly where this estimator stands, so a trace processed in chunks with a
    /// snapshot between them gives the rows of one pass, bit for bit.
    pub fn snapshot(&self) -> Vec<u8> {
        match &self.stepper {
            Stepper::One(e) => snapshot_of(e),
            Stepper::Two(e) => snapshot_of(e),
            Stepper::Three(e) => snapshot_of(e),
            Stepper::Four(e) => snapshot_of(e),
        }
    }

    /// An estimator that goes on exactly where [`CoreEstimator::snapshot`] was taken.
    ///
    /// # Errors
    /// The core's [`SnapshotError`]: damaged or truncated bytes, another format version or
    /// channel count, a snapshot taken with another configuration, or a state value no
    /// estimator can hold.
    pub fn resume(
        config: &DeviceSpec,
        core: &'d CoreDevice,
        snapshot: &[u8],
    ) -> Result<Self, SnapshotError> {
        let stepper = match &core.device {
            ChannelDevice::One(d) => Stepper::One(Estimator::from_snapshot(d, snapshot)?),
            ChannelDevice::Two(d) => Stepper::Two(Estimator::from_snapshot(d, snapshot)?),
            ChannelDevice::Three(d) => Stepper::Three(Estimator::from_snapshot(d, snapshot)?),
            ChannelDevice::Four(d) => Stepper::Four(Estimator::from_snapshot(d, snapshot)?),
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

/// The estimator every simulator subcommand uses: the core's, through [`CoreEstimator`].
///
/// # Errors
/// As [`CoreEstimator::new`].
pub fn new_estimator<'d>(
    config: &DeviceSpec,
    core: &'d CoreDevice,
) -> Result<Box<dyn SampleEstimator + Send + 'd>, RecordError> {
    Ok(Box::new(CoreEstimator::new(config, core)?))
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::float_cmp)]
    use super::*;
    use crate::sample::Channel;
    use approx::assert_relative_eq;
    use clampwise_core::estimator::ContactState;
    use clampwise_core::flags::Flags;
    use clampwise_device::config::LoadedConfig;

    fn demo() -> (DeviceSpec, CoreDevice) {
        let c = LoadedConfig::from_str(clampwise_device::DEMO_CONFIG, "d")
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
        assert_eq!(row.state, ContactState::Slipping);
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
    fn state_record_round_trips_through_restore() {
        // [pub] the core's state record: saved, restored and saved again gives the same bytes;
        // a corrupted record is refused (its CRC-32).
        let (c, d) = demo();
        let mut e = CoreEstimator::new(&c, &d).unwrap();
        settle(&mut e, &sample(40_000.0, 3.0, 150.0));
        let record = e.save(3);
        let back = CoreEstimator::restore(&c, &d, &record).unwrap();
        assert_eq!(back.save(3), record);
        let mut broken = record;
        broken[30] ^= 0x01;
        assert!(CoreEstimator::restore(&c, &d, &broken).is_err());
    }

    #[test]
    fn snapshot_between_chunks_gives_the_rows_of_one_pass() {
        // The identity a snapshot promises [calc]: a run cut into chunks, each resumed from
        // the snapshot of the one before, equals the uncut run row for row (the demo device:
        // three channels, adaptation off); faults in the run exercise the debounce counters,
        // held values and the fallback.
        let (c, d) = demo();
        let mut trace: Vec<TraceSample> = Vec::new();
        for (i, (f, w)) in [
            (40_000.0, 3.0),
            (40_000.0, 0.0),
            (100.0, 5.0),
            (30_000.0, 5.0),
        ]
        .into_iter()
        .enumerate()
        {
            for k in 0..97 {
                let mut s = sample(f + f64::from(k % 7) * 13.0, w, 20.0 + f64::from(k));
                if i == 3 && k > 40 {
                    s.force[1] = Channel::Counts(8_388_607);
                    s.force_valid[2] = k % 5 != 0;
                    s.command = Some(0.5);
                }
                trace.push(s);
            }
        }
        let mut whole = CoreEstimator::new(&c, &d).unwrap();
        let expected: Vec<EstimateRow> = trace.iter().map(|s| whole.step(s)).collect();
        let mut rows = Vec::new();
        let mut bytes = CoreEstimator::new(&c, &d).unwrap().snapshot();
        assert_eq!(bytes.len(), snapshot_len(3));
        for chunk in trace.chunks(23) {
            let mut e = CoreEstimator::resume(&c, &d, &bytes).unwrap();
            rows.extend(chunk.iter().map(|s| e.step(s)));
            bytes = e.snapshot();
        }
        assert_eq!(rows, expected);
        let mut broken = bytes.clone();
        if let Some(b) = broken.get_mut(100) {
            *b ^= 0x10;
        }
        assert!(matches!(
            CoreEstimator::resume(&c, &d, &broken),
            Err(SnapshotError::Checksum { .. })
        ));
        assert!(matches!(
            CoreEstimator::resume(&c, &d, &whole.save(1)),
            Err(SnapshotError::WrongLength { .. } | SnapshotError::BadMagic)
        ));
    }

    #[test]
    fn holding_reports_capacity_not_torque() {
        let (c, d) = demo();
        let mut e = new_estimator(&c, &d).unwrap();
        let row = settle(e.as_mut(), &sample(40_000.0, 0.0, 20.0));
        assert_eq!(row.state, ContactState::Holding);
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
        let states: Vec<ContactState> = [0.0, 0.025, 0.031, 0.025, 0.019, 0.025]
            .iter()
            .map(|&w| e.step(&sample(40_000.0, w, 20.0)).state)
            .collect();
        use ContactState::*;
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
        assert_eq!((r.state, r.torque_nm), (ContactState::Released, Some(0.0)));
        // One channel on the rail: the other two still vote; flagged once debounced.
        let mut s = sample(30_000.0, 5.0, 20.0);
        settle(e.as_mut(), &s);
        s.force[1] = Channel::Counts(8_388_607);
        let r = settle(e.as_mut(), &s);
        assert_eq!(r.state, ContactState::Slipping);
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
        assert_eq!(r.state, ContactState::Unavailable);
        assert!(r.torque_nm.is_none() && r.capacity_nm.is_none());
        assert!(r.flags.contains(Flags::FORCE_LOST));
    }
}
