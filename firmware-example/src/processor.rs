//! The per-sample step: the core's estimator behind the application's [`Processor`] port.
//!
//! [`EstimatorStep`] turns the loop's [`Inputs`] into the core's
//! [`estimator::Inputs`] and calls
//! [`Estimator::step`]; the core's [`Estimate`] is the [`Outcome`] the loop acts on:
//!
//! * a clean ADC reading becomes a raw channel with its valid bit set; a failed one (not ready,
//!   overrange, reference missing, bad CRC, bus error) a raw channel with the valid bit clear
//!   and zero counts, so the core's invalid-bit debounce and voting take the channel out;
//! * the shaft speeds go in as they are; when they cannot be read the step sees both shafts
//!   at rest (the estimate then reports a holding capacity, not a slipping torque) and the loop
//!   counts the speed error;
//! * the [`Auxiliary`](crate::app::Auxiliary) inputs go in as they are: the actuator command,
//!   a measured lining temperature, the ambient temperature and a reference torque (each
//!   `None` when the board has none); the force sensor's own temperature is not wired here;
//! * the fault output follows [`Flags::FORCE_LOST`], the warning output [`Flags::FADE_WARNING`];
//! * the output line carries every field of the [`Estimate`] as raw integer bits.
//!
//! Nothing here allocates, panics or uses floats: the conversion is field copies and the step
//! is the core's.
//!
//! ```
//! use clampwise_firmware_example::app::{Inputs, Outcome, Processor, Reading, Speeds};
//! use clampwise_firmware_example::generated::{DEVICE, DEVICE_CHANNELS};
//! use clampwise_firmware_example::processor::EstimatorStep;
//! use clampwise_core::units::RadPerSec;
//!
//! let mut step = EstimatorStep::new(&DEVICE);
//! let inputs = Inputs {
//!     sample: 0,
//!     readings: [Reading::Counts(0); DEVICE_CHANNELS],
//!     speeds: Some(Speeds { input: RadPerSec::ZERO, output: RadPerSec::ZERO }),
//!     auxiliary: Default::default(),
//! };
//! let estimate = step.step(&inputs);
//! assert!(!estimate.force_lost());
//! ```

use clampwise_core::config::{DeviceConfig, TableSet};
use clampwise_core::estimator::{self, ContactState, Estimate, Estimator, EstimatorState};
use clampwise_core::flags::Flags;
use clampwise_core::record_store::{LoadError, RecordStore, SlotState, StoreError};
use clampwise_core::sensor::RawChannel;
use clampwise_core::state_record::{RecordError, StateRecord};
use embedded_storage::nor_flash::NorFlash;

use crate::app::{Inputs, Outcome, Processor, Reading};
use crate::line::Line;
use crate::saved_state::Persist;

/// The core's estimator as the loop's processing step, for a device with `C` force channels.
#[derive(Clone, Debug)]
pub struct EstimatorStep<'c, T, const C: usize> {
    estimator: Estimator<'c, T, C>,
}

impl<'c, T: TableSet, const C: usize> EstimatorStep<'c, T, C> {
    /// A new estimator on `config` (kept in flash): lining at ambient, new, holding.
    pub fn new(config: &'c DeviceConfig<T, C>) -> Self {
        Self {
            estimator: Estimator::new(config),
        }
    }

    /// An estimator on `config` resumed from a saved state record (temperatures, wear,
    /// bedding, adaptation), or new when there is none.
    ///
    /// # Errors
    /// The core's [`RecordError`] for a record that is corrupt or of another version.
    pub fn resume(
        config: &'c DeviceConfig<T, C>,
        record: Option<&[u8]>,
    ) -> Result<Self, RecordError> {
        let estimator = match record {
            Some(r) => Estimator::restore(config, r)?,
            None => Estimator::new(config),
        };
        Ok(Self { estimator })
    }

    /// The state the estimator carries between samples.
    pub const fn state(&self) -> &EstimatorState<C> {
        self.estimator.state()
    }

    /// The core's estimator.
    pub const fn estimator(&self) -> &Estimator<'c, T, C> {
        &self.estimator
    }
}

impl<T: TableSet, const C: usize> Persist for EstimatorStep<'_, T, C> {
    fn state_record(&self, sequence: u32) -> StateRecord {
        self.estimator.record(sequence)
    }

    fn save_state<F: NorFlash>(
        &self,
        store: &mut RecordStore<F>,
    ) -> Result<u32, StoreError<F::Error>> {
        store.save(&self.estimator)
    }

    fn restore_state<F: NorFlash>(
        &mut self,
        store: &mut RecordStore<F>,
    ) -> Result<u32, LoadError<F::Error>> {
        let config = self.estimator.config();
        let record = store.load(config)?;
        // `load` checked the record against this configuration: `resume` accepts it.
        self.estimator =
            Estimator::resume(config, &record).map_err(|e| LoadError::NoValidRecord {
                slots: [SlotState::Rejected(e); 2],
            })?;
        Ok(record.sequence())
    }
}

/// The core's inputs for one sample of the loop's readings (see the [module docs](self)).
pub fn core_inputs<const C: usize>(inputs: &Inputs<C>) -> estimator::Inputs<C> {
    let mut force_channels = [RawChannel {
        counts: 0,
        valid: false,
    }; C];
    for (raw, reading) in force_channels.iter_mut().zip(inputs.readings.iter()) {
        if let Reading::Counts(counts) = *reading {
            *raw = RawChannel {
                counts,
                valid: true,
            };
        }
    }
    // A failed speed read is an unknown speed, never a standstill: the core then reports no
    // torque and no holding state, only a capacity bound.
    let (input_speed, output_speed) = inputs
        .speeds
        .map_or((None, None), |s| (Some(s.input), Some(s.output)));
    estimator::Inputs {
        force_channels,
        input_speed,
        output_speed,
        actuator_command: inputs.auxiliary.actuator_command,
        sensor_temperature: None,
        lining_temperature: inputs.auxiliary.lining_temperature,
        ambient_temperature: inputs.auxiliary.ambient_temperature,
        reference_torque: inputs.auxiliary.reference_torque,
    }
}

impl<T: TableSet, const C: usize> Processor<C> for EstimatorStep<'_, T, C> {
    type Estimate = Estimate;

    fn step(&mut self, inputs: &Inputs<C>) -> Estimate {
        self.estimator.step(&core_inputs(inputs))
    }
}

/// The [`ContactState`] as a small integer for the output line.
pub const fn state_code(state: ContactState) -> i64 {
    match state {
        ContactState::Slipping => 0,
        ContactState::Holding => 1,
        ContactState::Released => 2,
        ContactState::Unavailable => 3,
        ContactState::SlipUnknown => 4,
    }
}

impl Outcome for Estimate {
    /// Raw bits: torque, capacity and uncertainty I20F12 N·m; μ, bedding and correction I2F30;
    /// r_e and wear I8F24 m; clamp force I24F8 N; lining temperature I16F16 °C. `torque_bits`
    /// and `holding_capacity_bits` are empty when the estimate has none; `state` is 0 slipping,
    /// 1 holding, 2 released, 3 unavailable, 4 slip unknown; `flags` the core's [`Flags`] bits.
    const FIELD_NAMES: &'static [&'static str] = &[
        "torque_bits",
        "holding_capacity_bits",
        "uncertainty_bits",
        "mu_bits",
        "effective_radius_bits",
        "clamp_force_bits",
        "force_channels_used",
        "lining_temperature_bits",
        "bedding_bits",
        "wear_bits",
        "correction_bits",
        "state",
        "flags",
    ];

    fn force_lost(&self) -> bool {
        self.flags.contains(Flags::FORCE_LOST)
    }

    fn fade_warning(&self) -> bool {
        self.flags.contains(Flags::FADE_WARNING)
    }

    fn write_fields(&self, line: &mut Line) {
        match self.torque {
            Some(t) => line.field(i64::from(t.to_bits())),
            None => line.empty_field(),
        }
        match self.holding_capacity {
            Some(c) => line.field(i64::from(c.to_bits())),
            None => line.empty_field(),
        }
        line.field(i64::from(self.uncertainty.to_bits()));
        line.field(i64::from(self.mu.to_bits()));
        line.field(i64::from(self.effective_radius.to_bits()));
        line.field(i64::from(self.clamp_force.to_bits()));
        line.field(i64::from(self.force_channels_used.bits()));
        line.field(i64::from(self.lining_temperature.to_bits()));
        line.field(i64::from(self.bedding.to_bits()));
        line.field(i64::from(self.wear.to_bits()));
        line.field(i64::from(self.correction.to_bits()));
        line.field(state_code(self.state));
        line.field(i64::from(self.flags.bits()));
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::adc::AdcFault;
    use crate::app::Speeds;
    use crate::generated::{DEVICE, DEVICE_CHANNELS};
    use clampwise_core::units::RadPerSec;

    fn speeds(v: &str) -> Option<Speeds> {
        Some(Speeds {
            input: RadPerSec::lit(v),
            output: RadPerSec::ZERO,
        })
    }

    #[test]
    fn readings_map_to_raw_channels_and_speeds() {
        let mut readings = [Reading::Counts(1234); DEVICE_CHANNELS];
        readings[0] = Reading::Fault(AdcFault::Crc);
        let core = core_inputs(&Inputs {
            sample: 7,
            readings,
            speeds: speeds("2.5"),
            auxiliary: crate::app::Auxiliary {
                actuator_command: Some(clampwise_core::sensor::ActuatorCommand::lit("0.25")),
                ..Default::default()
            },
        });
        assert_eq!(
            core.force_channels[0],
            RawChannel {
                counts: 0,
                valid: false
            }
        );
        for raw in &core.force_channels[1..] {
            assert_eq!(
                *raw,
                RawChannel {
                    counts: 1234,
                    valid: true
                }
            );
        }
        assert_eq!(core.input_speed, Some(RadPerSec::lit("2.5")));
        assert_eq!(core.output_speed, Some(RadPerSec::ZERO));
        assert_eq!(
            core.actuator_command,
            Some(clampwise_core::sensor::ActuatorCommand::lit("0.25"))
        );
        assert!(core.lining_temperature.is_none() && core.reference_torque.is_none());
        let missing = core_inputs(&Inputs {
            sample: 0,
            readings,
            speeds: None,
            auxiliary: Default::default(),
        });
        // A failed speed read is unknown, never a standstill.
        assert_eq!((missing.input_speed, missing.output_speed), (None, None));
        assert_eq!(missing.slip_speed(), None);
    }

    #[test]
    fn the_step_is_the_cores_step() {
        // The adapter adds nothing of its own: the same inputs through a bare core estimator
        // give the same estimates, sample by sample.
        let mut adapter = EstimatorStep::new(&DEVICE);
        let mut bare = Estimator::new(&DEVICE);
        for k in 0..300u32 {
            let counts = i32::try_from(k).unwrap() * 10_000;
            let mut readings = [Reading::Counts(counts); DEVICE_CHANNELS];
            if k % 7 == 0 {
                readings[1] = Reading::Fault(AdcFault::NotReady);
            }
            let inputs = Inputs {
                sample: k,
                readings,
                speeds: speeds("3"),
                auxiliary: Default::default(),
            };
            assert_eq!(
                adapter.step(&inputs),
                bare.step(&core_inputs(&inputs)),
                "{k}"
            );
        }
        assert_eq!(adapter.state(), bare.state());
    }

    #[test]
    fn no_channel_means_lost_force_and_the_line_says_so() {
        let mut step = EstimatorStep::new(&DEVICE);
        let inputs = Inputs {
            sample: 0,
            readings: [Reading::Fault(AdcFault::NotReady); DEVICE_CHANNELS],
            speeds: speeds("1"),
            auxiliary: Default::default(),
        };
        // The sensor layer may hold a channel's last value for a few samples; with no value
        // ever accepted there is nothing to hold.
        let e = step.step(&inputs);
        assert!(e.force_lost());
        assert_eq!(e.state, ContactState::Unavailable);
        let mut line = Line::new();
        e.write_fields(&mut line);
        let text = core::str::from_utf8(line.as_bytes()).unwrap();
        let fields: Vec<&str> = text.split(',').skip(1).collect();
        assert_eq!(fields.len(), Estimate::FIELD_NAMES.len());
        assert_eq!(fields[0], "", "no torque");
        assert_eq!(fields[1], "", "no capacity");
        assert_eq!(fields[11], "3", "unavailable");
        assert_eq!(
            fields[12].parse::<u32>().unwrap() & Flags::FORCE_LOST.bits(),
            Flags::FORCE_LOST.bits()
        );
    }

    #[test]
    fn fade_flag_drives_the_warning() {
        let mut e = EstimatorStep::new(&DEVICE).step(&Inputs {
            sample: 0,
            readings: [Reading::Counts(0); DEVICE_CHANNELS],
            speeds: speeds("0"),
            auxiliary: Default::default(),
        });
        assert!(!e.fade_warning());
        e.flags.insert(Flags::FADE_WARNING);
        assert!(e.fade_warning() && !e.force_lost());
    }
}
