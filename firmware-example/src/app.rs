//! The application: a fixed-rate control loop generic over embedded-hal 1.0 traits.
//!
//! Each sample the loop
//! 1. reads 1 to 4 bridge-ADC channels through [`BridgeAdc`] (an [`SpiDevice`]),
//! 2. reads the shaft speeds through [`ShaftSpeeds`] (embedded-hal has no trait for encoders or
//!    tachometers, so the application names the one it needs), and whatever else the controller
//!    has this sample (its actuator command, temperatures, a reference torque) through
//!    [`AuxiliaryInputs`],
//! 3. hands the readings to a [`Processor`] — the single place the per-sample estimation runs,
//! 4. acts on its result: the fault output (an [`OutputPin`]) on lost clamp force, the warning
//!    output (an [`OutputPin`]) on fade,
//! 5. emits one line of integer fields to a [`LineSink`],
//! 6. waits one control period through [`DelayNs`].
//!
//! Pacing by a delay of one period is what embedded-hal's `DelayNs` offers; it does not subtract
//! the loop's own run time. A board that needs an exact rate drives [`ControlLoop::tick`] from a
//! timer interrupt instead of calling [`ControlLoop::run`] (the delay port then gets a no-op).
//!
//! The fault output is fail-safe by default ([`FaultPolarity::ActiveLow`]): the pin is high only
//! while the loop reports healthy clamp force, so a stalled or reset controller reads as a fault.
//! It starts asserted and is released only after `fault_release_samples` clean samples, and it
//! latches again on every sample whose result reports lost force.
//!
//! Nothing here allocates, panics or uses floats; every counter saturates.

use core::fmt;

use clampwise_core::sensor::ActuatorCommand;
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};
use embedded_hal::delay::DelayNs;
use embedded_hal::digital::OutputPin;
use embedded_hal::spi::SpiDevice;

use crate::adc::{AdcFault, BridgeAdc, Channel};
use crate::line::{Line, LineSink};

/// Shaft speeds for one sample: the rotating side and the side it slips against.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Speeds {
    /// Speed of the input (rotating) side, rad/s.
    pub input: RadPerSec,
    /// Speed of the output (held) side, rad/s; zero for a brake against its housing.
    pub output: RadPerSec,
}

/// A source of shaft speeds (encoder, tachometer or resolver input of the board).
pub trait ShaftSpeeds {
    /// Why a reading failed.
    type Error: fmt::Debug;
    /// The speeds at this sample.
    ///
    /// # Errors
    /// When the speed inputs cannot be read; the loop then passes `None` to the processor.
    fn read(&mut self) -> Result<Speeds, Self::Error>;
}

/// Inputs besides clamp force and shaft speeds that a controller may have each sample; each is
/// `None` when it does not.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Auxiliary {
    /// The controller's own command to the actuator (its control output: motor current, line
    /// pressure …, in the command's unit), for the sensor diagnostics and the force fallback.
    pub actuator_command: Option<ActuatorCommand>,
    /// A measured lining (or disc) temperature, °C.
    pub lining_temperature: Option<Celsius>,
    /// A measured ambient (cooling air or oil) temperature, °C.
    pub ambient_temperature: Option<Celsius>,
    /// A reference friction torque (a bench torque flange), N·m.
    pub reference_torque: Option<NewtonMetres>,
}

/// A source of the [`Auxiliary`] inputs (the board's command variable, temperature inputs,
/// torque flange). Reading cannot fail: an input that is not there this sample is `None`.
pub trait AuxiliaryInputs {
    /// The inputs at this sample.
    fn read(&mut self) -> Auxiliary;
}

/// For a board that has none of the [`Auxiliary`] inputs.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct NoAuxiliary;

impl AuxiliaryInputs for NoAuxiliary {
    fn read(&mut self) -> Auxiliary {
        Auxiliary::default()
    }
}

/// One channel's reading for the processing step.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Reading {
    /// A clean conversion, counts (signed 24-bit).
    Counts(i32),
    /// The reading failed.
    Fault(AdcFault),
}

/// Everything the processing step gets for one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Inputs<const CH: usize> {
    /// Sample number since start (saturates at `u32::MAX`).
    pub sample: u32,
    /// One reading per configured channel, in [`LoopConfig`] order.
    pub readings: [Reading; CH],
    /// Shaft speeds, `None` when they could not be read.
    pub speeds: Option<Speeds>,
    /// Actuator command, temperatures, reference torque, where the controller has them.
    pub auxiliary: Auxiliary,
}

/// The result of one processing step, as far as the loop needs it.
pub trait Outcome {
    /// Names of the fields [`write_fields`](Outcome::write_fields) appends, for the header line.
    const FIELD_NAMES: &'static [&'static str];
    /// True when the clamp force is lost (no trustworthy force this sample).
    fn force_lost(&self) -> bool;
    /// True when the lining is fading (its friction falls with temperature).
    fn fade_warning(&self) -> bool;
    /// Append the result's fields to an output line, one `,value` per name in
    /// [`FIELD_NAMES`](Outcome::FIELD_NAMES).
    fn write_fields(&self, line: &mut Line);
}

/// The per-sample processing step: the one place the estimator plugs in.
///
/// Implementations must not panic, allocate or use floats, and must give the same bits on
/// every target.
pub trait Processor<const CH: usize> {
    /// What one step returns.
    type Estimate: Outcome;
    /// Process one sample.
    fn step(&mut self, inputs: &Inputs<CH>) -> Self::Estimate;
}

impl<P: Processor<CH>, const CH: usize> Processor<CH> for &mut P {
    type Estimate = P::Estimate;
    fn step(&mut self, inputs: &Inputs<CH>) -> Self::Estimate {
        (**self).step(inputs)
    }
}

/// Electrical sense of the fault output.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum FaultPolarity {
    /// Low means fault: a dead controller reads as a fault (fail-safe; the default).
    ActiveLow,
    /// High means fault.
    ActiveHigh,
}

/// Why a [`LoopConfig`] was rejected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum LoopConfigError {
    /// The number of channels is not 1 to 4.
    ChannelCount {
        /// The number given.
        count: usize,
    },
    /// `channels[index]` repeats an earlier channel.
    DuplicateChannel {
        /// Index of the repeat.
        index: usize,
    },
    /// `period_ns` is zero.
    ZeroPeriod,
    /// `fault_release_samples` is zero.
    ZeroFaultRelease,
}

impl fmt::Display for LoopConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::ChannelCount { count } => {
                write!(f, "channels: {count} given, the loop reads 1 to 4")
            }
            Self::DuplicateChannel { index } => {
                write!(f, "channels[{index}] repeats an earlier channel")
            }
            Self::ZeroPeriod => write!(f, "period_ns must be at least 1"),
            Self::ZeroFaultRelease => write!(f, "fault_release_samples must be at least 1"),
        }
    }
}

impl core::error::Error for LoopConfigError {}

/// Validated loop configuration.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct LoopConfig<const CH: usize> {
    channels: [Channel; CH],
    period_ns: u32,
    fault_release_samples: u16,
    polarity: FaultPolarity,
}

impl<const CH: usize> LoopConfig<CH> {
    /// Check and build a loop configuration.
    ///
    /// * `channels` — ADC channels to read, distinct, 1 to 4 of them.
    /// * `period_ns` — control period in ns, at least 1.
    /// * `fault_release_samples` — clean samples before the fault output is released, ≥ 1.
    ///
    /// # Errors
    /// A [`LoopConfigError`] naming the field.
    ///
    /// ```
    /// use clampwise_firmware_example::adc::Channel;
    /// use clampwise_firmware_example::app::{FaultPolarity, LoopConfig, LoopConfigError};
    /// let a = Channel::new(0).unwrap();
    /// assert!(LoopConfig::new([a], 1_000_000, 5, FaultPolarity::ActiveLow).is_ok());
    /// assert_eq!(
    ///     LoopConfig::new([a, a], 1_000_000, 5, FaultPolarity::ActiveLow),
    ///     Err(LoopConfigError::DuplicateChannel { index: 1 })
    /// );
    /// ```
    pub fn new(
        channels: [Channel; CH],
        period_ns: u32,
        fault_release_samples: u16,
        polarity: FaultPolarity,
    ) -> Result<Self, LoopConfigError> {
        if !(1..=4).contains(&CH) {
            return Err(LoopConfigError::ChannelCount { count: CH });
        }
        for (index, c) in channels.iter().enumerate() {
            if channels.iter().take(index).any(|earlier| earlier == c) {
                return Err(LoopConfigError::DuplicateChannel { index });
            }
        }
        if period_ns == 0 {
            return Err(LoopConfigError::ZeroPeriod);
        }
        if fault_release_samples == 0 {
            return Err(LoopConfigError::ZeroFaultRelease);
        }
        Ok(Self {
            channels,
            period_ns,
            fault_release_samples,
            polarity,
        })
    }

    /// The control period, ns.
    pub const fn period_ns(&self) -> u32 {
        self.period_ns
    }
}

/// The hardware the loop drives. A board fills it with its HAL's types; the QEMU build with the
/// stub's (see [`crate::stub`]).
#[derive(Debug)]
pub struct Ports<SPI, FAULT, WARN, DELAY, SPEEDS, AUX> {
    /// The bridge ADC's SPI device (owns its chip select).
    pub adc: SPI,
    /// Fault output (see [`FaultPolarity`]).
    pub fault: FAULT,
    /// Fade warning output, high while the warning stands.
    pub warning: WARN,
    /// Pacing delay.
    pub delay: DELAY,
    /// Shaft speed inputs.
    pub speeds: SPEEDS,
    /// Actuator command, temperatures, reference torque ([`NoAuxiliary`] when there are none).
    pub auxiliary: AUX,
}

/// Counters over a run; all saturate.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Summary {
    /// Samples processed.
    pub samples: u32,
    /// Samples whose result reported lost clamp force.
    pub force_lost_samples: u32,
    /// Samples that ended with the fault output asserted.
    pub fault_out_samples: u32,
    /// Samples that ended with the warning output on.
    pub warning_samples: u32,
    /// Failed channel readings, per [`AdcFault::index`].
    pub adc_faults: [u32; AdcFault::ALL.len()],
    /// Samples whose speed inputs could not be read.
    pub speed_errors: u32,
    /// Output pin writes that failed.
    pub pin_errors: u32,
    /// Output lines that did not fit their buffer.
    pub truncated_lines: u32,
}

impl Summary {
    /// All failed channel readings.
    pub fn adc_fault_total(&self) -> u32 {
        self.adc_faults
            .iter()
            .fold(0u32, |acc, &n| acc.saturating_add(n))
    }

    /// Append the summary as `,name=value` fields.
    pub fn write_fields(&self, line: &mut Line) {
        line.key_value("samples", i64::from(self.samples));
        line.key_value("force_lost_samples", i64::from(self.force_lost_samples));
        line.key_value("fault_out_samples", i64::from(self.fault_out_samples));
        line.key_value("warning_samples", i64::from(self.warning_samples));
        line.key_value("adc_faults", i64::from(self.adc_fault_total()));
        line.key_value("speed_errors", i64::from(self.speed_errors));
        line.key_value("pin_errors", i64::from(self.pin_errors));
        line.key_value("truncated_lines", i64::from(self.truncated_lines));
    }
}

/// What one [`ControlLoop::tick`] did.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Tick<E> {
    /// The processing step's result.
    pub estimate: E,
    /// Bit `i` set when configured channel `i` gave a clean reading.
    pub valid_mask: u8,
    /// True when the fault output ended the sample asserted.
    pub fault_out: bool,
    /// True when the warning output ended the sample on.
    pub warning_out: bool,
}

/// The fixed-rate loop. See the [module docs](self).
#[derive(Debug)]
pub struct ControlLoop<SPI, FAULT, WARN, DELAY, SPEEDS, AUX, P, const CH: usize> {
    adc: BridgeAdc<SPI>,
    fault: FAULT,
    warning: WARN,
    delay: DELAY,
    speeds: SPEEDS,
    auxiliary: AUX,
    processor: P,
    config: LoopConfig<CH>,
    fault_latched: bool,
    clean_run: u16,
    sample: u32,
    summary: Summary,
}

fn bump(counter: &mut u32) {
    *counter = counter.saturating_add(1);
}

impl<SPI, FAULT, WARN, DELAY, SPEEDS, AUX, P, const CH: usize>
    ControlLoop<SPI, FAULT, WARN, DELAY, SPEEDS, AUX, P, CH>
where
    SPI: SpiDevice,
    FAULT: OutputPin,
    WARN: OutputPin,
    DELAY: DelayNs,
    SPEEDS: ShaftSpeeds,
    AUX: AuxiliaryInputs,
    P: Processor<CH>,
{
    /// Assemble the loop. No bus traffic until the first [`tick`](Self::tick).
    pub fn new(
        ports: Ports<SPI, FAULT, WARN, DELAY, SPEEDS, AUX>,
        processor: P,
        config: LoopConfig<CH>,
    ) -> Self {
        Self {
            adc: BridgeAdc::new(ports.adc),
            fault: ports.fault,
            warning: ports.warning,
            delay: ports.delay,
            speeds: ports.speeds,
            auxiliary: ports.auxiliary,
            processor,
            config,
            fault_latched: true,
            clean_run: 0,
            sample: 0,
            summary: Summary::default(),
        }
    }

    /// Emit the header line naming every field of the sample lines.
    pub fn write_header<S: LineSink>(&self, sink: &mut S) {
        let mut line = Line::new();
        line.push_str("# est,sample,valid_mask,fault_out,warning_out");
        for name in <P::Estimate as Outcome>::FIELD_NAMES {
            line.push_str(",");
            line.push_str(name);
        }
        sink.emit(line.as_bytes());
    }

    /// One sample: read, process, act, emit a line, wait one period.
    pub fn tick<S: LineSink>(&mut self, sink: &mut S) -> Tick<P::Estimate> {
        let mut readings = [Reading::Fault(AdcFault::NotReady); CH];
        let mut valid_mask = 0u8;
        for (bit, (reading, &channel)) in readings
            .iter_mut()
            .zip(self.config.channels.iter())
            .enumerate()
        {
            *reading = match self.adc.read(channel) {
                Ok(counts) => {
                    valid_mask |= 1 << (bit & 7);
                    Reading::Counts(counts)
                }
                Err(e) => {
                    let kind = e.kind();
                    if let Some(n) = self.summary.adc_faults.get_mut(kind.index()) {
                        bump(n);
                    }
                    Reading::Fault(kind)
                }
            };
        }
        let speeds = match self.speeds.read() {
            Ok(s) => Some(s),
            Err(_) => {
                bump(&mut self.summary.speed_errors);
                None
            }
        };
        let inputs = Inputs {
            sample: self.sample,
            readings,
            speeds,
            auxiliary: self.auxiliary.read(),
        };
        let estimate = self.processor.step(&inputs);

        let force_lost = estimate.force_lost();
        if force_lost {
            bump(&mut self.summary.force_lost_samples);
            self.fault_latched = true;
            self.clean_run = 0;
        } else if self.fault_latched {
            self.clean_run = self.clean_run.saturating_add(1);
            if self.clean_run >= self.config.fault_release_samples {
                self.fault_latched = false;
            }
        }
        let fault_out = self.fault_latched;
        let pin_high = match self.config.polarity {
            FaultPolarity::ActiveLow => !fault_out,
            FaultPolarity::ActiveHigh => fault_out,
        };
        // Driven every sample, not only on change: a glitched pin is restored next period.
        let fault_write = if pin_high {
            self.fault.set_high()
        } else {
            self.fault.set_low()
        };
        let warning_out = estimate.fade_warning();
        let warning_write = if warning_out {
            self.warning.set_high()
        } else {
            self.warning.set_low()
        };
        if fault_write.is_err() {
            bump(&mut self.summary.pin_errors);
        }
        if warning_write.is_err() {
            bump(&mut self.summary.pin_errors);
        }
        if fault_out {
            bump(&mut self.summary.fault_out_samples);
        }
        if warning_out {
            bump(&mut self.summary.warning_samples);
        }

        let mut line = Line::new();
        line.push_str("est");
        line.field(i64::from(self.sample));
        line.field(i64::from(valid_mask));
        line.field(i64::from(fault_out));
        line.field(i64::from(warning_out));
        estimate.write_fields(&mut line);
        if line.is_truncated() {
            bump(&mut self.summary.truncated_lines);
        }
        sink.emit(line.as_bytes());

        bump(&mut self.summary.samples);
        self.sample = self.sample.saturating_add(1);
        self.delay.delay_ns(self.config.period_ns);
        Tick {
            estimate,
            valid_mask,
            fault_out,
            warning_out,
        }
    }

    /// Run `samples` ticks and return the counters.
    pub fn run<S: LineSink>(&mut self, samples: u32, sink: &mut S) -> Summary {
        for _ in 0..samples {
            let _ = self.tick(sink);
        }
        self.summary
    }

    /// The processing step (e.g. to save its state between samples).
    pub const fn processor(&self) -> &P {
        &self.processor
    }

    /// The counters so far.
    pub const fn summary(&self) -> &Summary {
        &self.summary
    }

    /// Take the loop apart: the ports and the processor back.
    pub fn release(self) -> (Ports<SPI, FAULT, WARN, DELAY, SPEEDS, AUX>, P) {
        (
            Ports {
                adc: self.adc.release(),
                fault: self.fault,
                warning: self.warning,
                delay: self.delay,
                speeds: self.speeds,
                auxiliary: self.auxiliary,
            },
            self.processor,
        )
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::adc::{CMD_READ, Status, encode_frame};
    use embedded_hal_mock::eh1::MockError;
    use embedded_hal_mock::eh1::delay::CheckedDelay;
    use embedded_hal_mock::eh1::delay::Transaction as DelayTx;
    use embedded_hal_mock::eh1::digital::{Mock as PinMock, State, Transaction as PinTx};
    use embedded_hal_mock::eh1::spi::{Mock as SpiMock, Transaction as SpiTx};

    /// Reports lost force when no channel is clean and fade when told to by the sample number:
    /// enough to drive the loop's reactions from the test.
    struct Scripted {
        fade_from: u32,
    }

    #[derive(Debug, Clone, Copy, PartialEq, Eq)]
    struct Out {
        lost: bool,
        fade: bool,
        sum: i64,
    }

    impl Outcome for Out {
        const FIELD_NAMES: &'static [&'static str] = &["sum"];
        fn force_lost(&self) -> bool {
            self.lost
        }
        fn fade_warning(&self) -> bool {
            self.fade
        }
        fn write_fields(&self, line: &mut Line) {
            line.field(self.sum);
        }
    }

    impl<const CH: usize> Processor<CH> for Scripted {
        type Estimate = Out;
        fn step(&mut self, inputs: &Inputs<CH>) -> Out {
            let clean: Vec<i64> = inputs
                .readings
                .iter()
                .filter_map(|r| match r {
                    Reading::Counts(c) => Some(i64::from(*c)),
                    Reading::Fault(_) => None,
                })
                .collect();
            Out {
                lost: clean.is_empty(),
                fade: inputs.sample >= self.fade_from,
                sum: clean.iter().sum(),
            }
        }
    }

    struct FixedSpeeds;
    impl ShaftSpeeds for FixedSpeeds {
        type Error = ();
        fn read(&mut self) -> Result<Speeds, ()> {
            Ok(Speeds {
                input: RadPerSec::from_num(3),
                output: RadPerSec::ZERO,
            })
        }
    }

    #[derive(Default)]
    struct Collect(Vec<String>);
    impl LineSink for Collect {
        fn emit(&mut self, line: &[u8]) {
            self.0.push(String::from_utf8(line.to_vec()).unwrap());
        }
    }

    fn read_tx(channel: u8, status: Status, counts: i32) -> Vec<SpiTx<u8>> {
        let ch = Channel::new(channel).unwrap();
        vec![
            SpiTx::transaction_start(),
            SpiTx::write_vec(vec![CMD_READ, channel]),
            SpiTx::read_vec(encode_frame(status, ch, counts).to_vec()),
            SpiTx::transaction_end(),
        ]
    }

    #[test]
    fn loop_reads_channels_acts_on_flags_and_paces() {
        // Samples 0..=1 clean, 2 both channels not ready (lost force), 3..=4 clean.
        // fault_release_samples = 2, active low: fault asserted (pin low) at start,
        // released after 2 clean samples (end of sample 1), asserted again at 2, released at 4.
        let plan: [[(Status, i32); 2]; 5] = [
            [(Status::READY, 100), (Status::READY, 200)],
            [(Status::READY, 101), (Status::OVERRANGE, i32::MAX)],
            [(Status::empty(), 0), (Status::empty(), 0)],
            [(Status::READY, 103), (Status::READY, 203)],
            [(Status::READY, 104), (Status::READY, 204)],
        ];
        let mut spi = Vec::new();
        for row in plan {
            spi.extend(read_tx(2, row[0].0, row[0].1));
            spi.extend(read_tx(0, row[1].0, row[1].1));
        }
        let fault_states = [State::Low, State::High, State::Low, State::Low, State::High];
        let fault_tx: Vec<PinTx> = fault_states.iter().map(|&s| PinTx::set(s)).collect();
        let warning_tx: Vec<PinTx> = [State::Low, State::Low, State::Low, State::High, State::High]
            .iter()
            .map(|&s| PinTx::set(s))
            .collect();
        let delay_tx = vec![DelayTx::delay_ns(250_000); 5];

        let ports = Ports {
            adc: SpiMock::new(&spi),
            fault: PinMock::new(&fault_tx),
            warning: PinMock::new(&warning_tx),
            delay: CheckedDelay::new(&delay_tx),
            speeds: FixedSpeeds,
            auxiliary: NoAuxiliary,
        };
        let channels = [Channel::new(2).unwrap(), Channel::new(0).unwrap()];
        let config = LoopConfig::new(channels, 250_000, 2, FaultPolarity::ActiveLow).unwrap();
        let mut app = ControlLoop::new(ports, Scripted { fade_from: 3 }, config);
        let mut sink = Collect::default();
        app.write_header(&mut sink);
        let summary = app.run(5, &mut sink);

        assert_eq!(
            sink.0,
            [
                "# est,sample,valid_mask,fault_out,warning_out,sum",
                "est,0,3,1,0,300",
                "est,1,1,0,0,101",
                "est,2,0,1,0,0",
                "est,3,3,1,1,306",
                "est,4,3,0,1,308",
            ]
        );
        assert_eq!(summary.samples, 5);
        assert_eq!(summary.force_lost_samples, 1);
        assert_eq!(summary.fault_out_samples, 3);
        assert_eq!(summary.warning_samples, 2);
        assert_eq!(summary.adc_faults[AdcFault::Overrange.index()], 1);
        assert_eq!(summary.adc_faults[AdcFault::NotReady.index()], 2);
        assert_eq!(summary.adc_fault_total(), 3);

        let (mut ports, _) = app.release();
        ports.adc.done();
        ports.fault.done();
        ports.warning.done();
        ports.delay.done();
    }

    #[test]
    fn active_high_polarity_drives_high_on_fault_and_pin_errors_count() {
        let spi = read_tx(1, Status::empty(), 0);
        let ports = Ports {
            adc: SpiMock::new(&spi),
            fault: PinMock::new(&[PinTx::set(State::High)]),
            warning: PinMock::new(&[
                PinTx::set(State::Low).with_error(MockError::Io(std::io::ErrorKind::NotConnected))
            ]),
            delay: CheckedDelay::new(&[DelayTx::delay_ns(1000)]),
            speeds: FixedSpeeds,
            auxiliary: NoAuxiliary,
        };
        let config = LoopConfig::new(
            [Channel::new(1).unwrap()],
            1000,
            1,
            FaultPolarity::ActiveHigh,
        )
        .unwrap();
        let mut app = ControlLoop::new(ports, Scripted { fade_from: 9 }, config);
        let tick = app.tick(&mut crate::line::Discard);
        assert!(tick.fault_out);
        assert_eq!(tick.valid_mask, 0);
        assert_eq!(app.summary().pin_errors, 1, "a failed pin write is counted");
        let (mut ports, _) = app.release();
        ports.adc.done();
        ports.fault.done();
        ports.warning.done();
        ports.delay.done();
    }

    #[test]
    fn config_errors_name_the_field() {
        let a = Channel::new(0).unwrap();
        let none: [Channel; 0] = [];
        assert_eq!(
            LoopConfig::new(none, 1, 1, FaultPolarity::ActiveLow),
            Err(LoopConfigError::ChannelCount { count: 0 })
        );
        assert_eq!(
            LoopConfig::new([a; 5], 1, 1, FaultPolarity::ActiveLow),
            Err(LoopConfigError::ChannelCount { count: 5 })
        );
        assert_eq!(
            LoopConfig::new([a], 0, 1, FaultPolarity::ActiveLow),
            Err(LoopConfigError::ZeroPeriod)
        );
        let e = LoopConfig::new([a], 1, 0, FaultPolarity::ActiveLow).unwrap_err();
        assert_eq!(e, LoopConfigError::ZeroFaultRelease);
        assert_eq!(e.to_string(), "fault_release_samples must be at least 1");
    }
}
