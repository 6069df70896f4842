//! A HAL stub: the embedded-hal traits the application needs, played back from a recorded trace
//! kept in flash, so the firmware builds and runs with no board (under QEMU, or on the host).
//!
//! * [`TraceAdc`] is an [`SpiDevice`] that answers like the bridge ADC of [`crate::adc`]: each
//!   read of a channel returns the trace's cell for the current sample as a well-formed frame,
//!   or the frame of the fault the cell names (not ready, overrange, reference missing, bad CRC).
//!   A second read of one channel within a sample gets a frame without `RDY`, as a real
//!   converter would give before its next conversion.
//! * [`TraceDelay`] is a [`DelayNs`] that advances the trace's clock instead of waiting.
//! * [`TraceSpeeds`] gives the trace's shaft speeds for the current sample, and
//!   [`TraceAuxiliary`] its actuator command, temperatures and reference torque.
//! * [`StubPin`] is an [`OutputPin`] that remembers its level and counts its changes.
//! * [`RamFlash`] is a [`NorFlash`] in RAM that behaves like NOR flash (erase to all ones, a
//!   write can only clear bits), for the saved-state store of [`crate::saved_state`].
//!
//! All share one [`TraceClock`] by reference (a `Cell`, so no `unsafe` and no locking: the stub
//! is single-threaded like the loop that uses it).
//!
//! A board replaces these types with its HAL's (an `SpiDevice` from its SPI bus and chip-select
//! pin, two GPIO outputs, its delay or timer, its encoder inputs, the `NorFlash` of its internal
//! or an external flash) and keeps the application.
//!
//! ```
//! use clampwise_firmware_example::adc::{BridgeAdc, Channel};
//! use clampwise_firmware_example::stub::{TraceAdc, TraceCell, TraceClock, TraceDelay, TraceSample};
//! use clampwise_core::units::RadPerSec;
//! use embedded_hal::delay::DelayNs;
//!
//! static TRACE: [TraceSample<1>; 2] = [
//!     TraceSample { counts: [TraceCell::Counts(7)], ..TraceSample::AT_REST },
//!     TraceSample { counts: [TraceCell::NotReady], ..TraceSample::AT_REST },
//! ];
//! let clock = TraceClock::new(1_000_000);
//! let mut adc = BridgeAdc::new(TraceAdc::new(&clock, &TRACE));
//! let ch = Channel::new(0).unwrap();
//! assert_eq!(adc.read(ch), Ok(7));
//! TraceDelay::new(&clock).delay_ns(1_000_000);
//! assert!(adc.read(ch).is_err()); // the second sample is not ready
//! ```

use core::cell::Cell;
use core::convert::Infallible;
use core::fmt;
use core::num::NonZeroU64;

use clampwise_core::units::RadPerSec;
use embedded_hal::delay::DelayNs;
use embedded_hal::digital::{ErrorType as PinErrorType, OutputPin, StatefulOutputPin};
use embedded_hal::spi::{self, ErrorKind, ErrorType as SpiErrorType, Operation, SpiDevice};
use embedded_storage::nor_flash::{
    ErrorType as FlashErrorType, NorFlash, NorFlashErrorKind, ReadNorFlash, check_erase,
    check_read, check_write,
};

use crate::adc::{ADC_CHANNELS, CMD_READ, Channel, FRAME_LEN, FULL_SCALE, Status, encode_frame};
use crate::app::{Auxiliary, AuxiliaryInputs, ShaftSpeeds, Speeds};

/// One channel's entry in the recorded trace.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum TraceCell {
    /// A clean conversion, counts.
    Counts(i32),
    /// The converter has no new result (`RDY` clear).
    NotReady,
    /// The input is over range (`OVR`, data at full scale).
    Overrange,
    /// The bridge excitation is missing (`REF`).
    ReferenceMissing,
    /// A frame whose CRC byte is wrong (a disturbed bus).
    BadCrc,
}

/// One sample of the recorded trace.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct TraceSample<const CH: usize> {
    /// One cell per ADC channel, channel 0 first.
    pub counts: [TraceCell; CH],
    /// Input shaft speed, rad/s.
    pub omega_in: RadPerSec,
    /// Output shaft speed, rad/s.
    pub omega_out: RadPerSec,
    /// Actuator command, temperatures, reference torque of this sample.
    pub auxiliary: Auxiliary,
}

impl<const CH: usize> TraceSample<CH> {
    /// Every channel not ready, both shafts at rest, no auxiliary input (a base for literals).
    pub const AT_REST: Self = Self {
        counts: [TraceCell::NotReady; CH],
        omega_in: RadPerSec::ZERO,
        omega_out: RadPerSec::ZERO,
        auxiliary: Auxiliary {
            actuator_command: None,
            lining_temperature: None,
            ambient_temperature: None,
            reference_torque: None,
        },
    };
}

/// The stub's time base: elapsed nanoseconds, and from them the current sample.
#[derive(Debug)]
pub struct TraceClock {
    // Non-zero by type, so the division in `sample` has no divide-by-zero path to panic on.
    period_ns: NonZeroU64,
    elapsed_ns: Cell<u64>,
}

impl TraceClock {
    /// A clock at time zero whose samples are `period_ns` apart (0 is taken as 1).
    pub const fn new(period_ns: u32) -> Self {
        let period_ns = match NonZeroU64::new(period_ns as u64) {
            Some(p) => p,
            None => NonZeroU64::MIN,
        };
        Self {
            period_ns,
            elapsed_ns: Cell::new(0),
        }
    }

    /// The sample the trace is at (saturates).
    pub fn sample(&self) -> usize {
        let n = self.elapsed_ns.get() / self.period_ns;
        usize::try_from(n).unwrap_or(usize::MAX)
    }

    /// Nanoseconds since start (saturates).
    pub fn elapsed_ns(&self) -> u64 {
        self.elapsed_ns.get()
    }

    fn advance(&self, ns: u64) {
        self.elapsed_ns
            .set(self.elapsed_ns.get().saturating_add(ns));
    }
}

/// Errors of the stub's SPI device: requests the modelled ADC does not understand.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum StubSpiError {
    /// A write that is not `[CMD_READ, channel]`.
    UnknownCommand,
    /// A read before any command, or of a length other than the frame's.
    UnexpectedRead,
    /// A channel the trace has no column for.
    ChannelNotInTrace,
    /// An operation the modelled ADC does not use (full-duplex transfers).
    Unsupported,
}

impl fmt::Display for StubSpiError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Self::UnknownCommand => "stub ADC: unknown command",
            Self::UnexpectedRead => "stub ADC: read without a command or of the wrong length",
            Self::ChannelNotInTrace => "stub ADC: the trace has no column for this channel",
            Self::Unsupported => "stub ADC: unsupported SPI operation",
        })
    }
}

impl core::error::Error for StubSpiError {}

impl spi::Error for StubSpiError {
    fn kind(&self) -> ErrorKind {
        ErrorKind::Other
    }
}

/// The bridge ADC, played back from the trace (see the [module docs](self)).
#[derive(Debug)]
pub struct TraceAdc<'a, const CH: usize> {
    clock: &'a TraceClock,
    trace: &'a [TraceSample<CH>],
    last_read: [Option<usize>; ADC_CHANNELS as usize],
}

impl<'a, const CH: usize> TraceAdc<'a, CH> {
    /// An ADC answering from `trace` at `clock`'s sample.
    pub const fn new(clock: &'a TraceClock, trace: &'a [TraceSample<CH>]) -> Self {
        Self {
            clock,
            trace,
            last_read: [None; ADC_CHANNELS as usize],
        }
    }

    fn frame(&mut self, number: u8) -> Result<[u8; FRAME_LEN], StubSpiError> {
        let channel = Channel::new(number).ok_or(StubSpiError::ChannelNotInTrace)?;
        let sample = self.clock.sample();
        let Some(row) = self.trace.get(sample) else {
            // Past the end of the recording the converter simply has nothing new.
            return Ok(encode_frame(Status::empty(), channel, 0));
        };
        let cell = *row
            .counts
            .get(usize::from(number))
            .ok_or(StubSpiError::ChannelNotInTrace)?;
        let seen = self.last_read.get_mut(usize::from(number));
        let fresh = match seen {
            Some(slot) => slot.replace(sample) != Some(sample),
            None => true,
        };
        let ready = if fresh {
            Status::READY
        } else {
            Status::empty()
        };
        Ok(match cell {
            TraceCell::Counts(c) => encode_frame(ready, channel, c),
            TraceCell::NotReady => encode_frame(Status::empty(), channel, 0),
            TraceCell::Overrange => encode_frame(ready | Status::OVERRANGE, channel, FULL_SCALE),
            TraceCell::ReferenceMissing => {
                encode_frame(ready | Status::REFERENCE_MISSING, channel, 0)
            }
            TraceCell::BadCrc => {
                let [s, d2, d1, d0, crc] = encode_frame(ready, channel, 0x0012_3456);
                [s, d2, d1, d0, crc ^ 0xA5]
            }
        })
    }
}

impl<const CH: usize> SpiErrorType for TraceAdc<'_, CH> {
    type Error = StubSpiError;
}

impl<const CH: usize> SpiDevice for TraceAdc<'_, CH> {
    fn transaction(&mut self, operations: &mut [Operation<'_, u8>]) -> Result<(), StubSpiError> {
        let mut channel = None;
        for op in operations.iter_mut() {
            match op {
                Operation::Write(bytes) => match bytes {
                    [CMD_READ, ch] => channel = Some(*ch),
                    _ => return Err(StubSpiError::UnknownCommand),
                },
                Operation::Read(buf) => {
                    let ch = channel.take().ok_or(StubSpiError::UnexpectedRead)?;
                    if buf.len() != FRAME_LEN {
                        return Err(StubSpiError::UnexpectedRead);
                    }
                    let frame = self.frame(ch)?;
                    buf.iter_mut().zip(frame).for_each(|(d, s)| *d = s);
                }
                Operation::DelayNs(ns) => self.clock.advance(u64::from(*ns)),
                Operation::Transfer(..) | Operation::TransferInPlace(..) => {
                    return Err(StubSpiError::Unsupported);
                }
            }
        }
        Ok(())
    }
}

/// Pacing that advances the trace clock instead of waiting.
#[derive(Debug, Clone, Copy)]
pub struct TraceDelay<'a> {
    clock: &'a TraceClock,
}

impl<'a> TraceDelay<'a> {
    /// A delay on `clock`.
    pub const fn new(clock: &'a TraceClock) -> Self {
        Self { clock }
    }
}

impl DelayNs for TraceDelay<'_> {
    fn delay_ns(&mut self, ns: u32) {
        self.clock.advance(u64::from(ns));
    }
}

/// The end of the recording was reached.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct EndOfTrace;

/// Shaft speeds played back from the trace.
#[derive(Debug, Clone, Copy)]
pub struct TraceSpeeds<'a, const CH: usize> {
    clock: &'a TraceClock,
    trace: &'a [TraceSample<CH>],
}

impl<'a, const CH: usize> TraceSpeeds<'a, CH> {
    /// Speeds from `trace` at `clock`'s sample.
    pub const fn new(clock: &'a TraceClock, trace: &'a [TraceSample<CH>]) -> Self {
        Self { clock, trace }
    }
}

impl<const CH: usize> ShaftSpeeds for TraceSpeeds<'_, CH> {
    type Error = EndOfTrace;
    fn read(&mut self) -> Result<Speeds, EndOfTrace> {
        self.trace
            .get(self.clock.sample())
            .map(|row| Speeds {
                input: row.omega_in,
                output: row.omega_out,
            })
            .ok_or(EndOfTrace)
    }
}

/// The actuator command, temperatures and reference torque played back from the trace (none
/// past its end).
#[derive(Debug, Clone, Copy)]
pub struct TraceAuxiliary<'a, const CH: usize> {
    clock: &'a TraceClock,
    trace: &'a [TraceSample<CH>],
}

impl<'a, const CH: usize> TraceAuxiliary<'a, CH> {
    /// Inputs from `trace` at `clock`'s sample.
    pub const fn new(clock: &'a TraceClock, trace: &'a [TraceSample<CH>]) -> Self {
        Self { clock, trace }
    }
}

impl<const CH: usize> AuxiliaryInputs for TraceAuxiliary<'_, CH> {
    fn read(&mut self) -> Auxiliary {
        self.trace
            .get(self.clock.sample())
            .map(|row| row.auxiliary)
            .unwrap_or_default()
    }
}

/// An output pin that remembers its level and counts level changes.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct StubPin {
    high: bool,
    changes: u32,
}

impl StubPin {
    /// A pin starting low.
    pub const fn new() -> Self {
        Self {
            high: false,
            changes: 0,
        }
    }

    /// Level changes so far (saturates).
    pub const fn changes(&self) -> u32 {
        self.changes
    }

    fn drive(&mut self, high: bool) {
        if high != self.high {
            self.changes = self.changes.saturating_add(1);
        }
        self.high = high;
    }
}

impl PinErrorType for StubPin {
    type Error = Infallible;
}

impl OutputPin for StubPin {
    fn set_low(&mut self) -> Result<(), Infallible> {
        self.drive(false);
        Ok(())
    }
    fn set_high(&mut self) -> Result<(), Infallible> {
        self.drive(true);
        Ok(())
    }
}

impl StatefulOutputPin for StubPin {
    fn is_set_high(&mut self) -> Result<bool, Infallible> {
        Ok(self.high)
    }
    fn is_set_low(&mut self) -> Result<bool, Infallible> {
        Ok(!self.high)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::adc::{AdcError, BridgeAdc};
    use clampwise_core::sensor::ActuatorCommand;
    use clampwise_core::units::{Celsius, NewtonMetres};

    const Z: RadPerSec = RadPerSec::ZERO;
    static TRACE: [TraceSample<2>; 3] = [
        TraceSample {
            counts: [TraceCell::Counts(-5), TraceCell::Overrange],
            omega_in: RadPerSec::lit("2.5"),
            omega_out: Z,
            auxiliary: Auxiliary {
                actuator_command: Some(ActuatorCommand::lit("0.5")),
                lining_temperature: Some(Celsius::lit("80")),
                ambient_temperature: None,
                reference_torque: Some(NewtonMetres::lit("-1200")),
            },
        },
        TraceSample {
            counts: [TraceCell::BadCrc, TraceCell::ReferenceMissing],
            omega_in: Z,
            omega_out: RadPerSec::lit("-1"),
            ..TraceSample::AT_REST
        },
        TraceSample {
            counts: [TraceCell::Counts(FULL_SCALE), TraceCell::NotReady],
            ..TraceSample::AT_REST
        },
    ];

    #[test]
    fn stub_answers_each_cell_kind_through_the_real_driver() {
        let clock = TraceClock::new(100);
        let mut adc = BridgeAdc::new(TraceAdc::new(&clock, &TRACE));
        let mut delay = TraceDelay::new(&clock);
        let mut speeds = TraceSpeeds::new(&clock, &TRACE);
        let (c0, c1) = (Channel::new(0).unwrap(), Channel::new(1).unwrap());

        assert_eq!(adc.read(c0), Ok(-5));
        assert_eq!(
            adc.read(c0),
            Err(AdcError::NotReady),
            "second read in one sample"
        );
        assert_eq!(
            adc.read(c1),
            Err(AdcError::Overrange { counts: FULL_SCALE })
        );
        assert_eq!(speeds.read().unwrap().input, RadPerSec::lit("2.5"));
        let mut aux = TraceAuxiliary::new(&clock, &TRACE);
        assert_eq!(aux.read(), TRACE[0].auxiliary);

        delay.delay_ns(100);
        assert!(matches!(adc.read(c0), Err(AdcError::Crc { .. })));
        assert_eq!(adc.read(c1), Err(AdcError::ReferenceMissing));
        assert_eq!(speeds.read().unwrap().output, RadPerSec::lit("-1"));

        delay.delay_ns(60);
        delay.delay_ns(40);
        assert_eq!(clock.sample(), 2);
        assert_eq!(adc.read(c0), Ok(FULL_SCALE));
        assert_eq!(adc.read(c1), Err(AdcError::NotReady));

        delay.delay_ns(100);
        assert_eq!(adc.read(c0), Err(AdcError::NotReady), "past the end");
        assert_eq!(speeds.read(), Err(EndOfTrace));
        assert_eq!(aux.read(), Auxiliary::default(), "past the end");
        let c3 = Channel::new(3).unwrap();
        assert_eq!(
            adc.read(c3),
            Err(AdcError::NotReady),
            "past the end, any channel"
        );
    }

    #[test]
    fn stub_rejects_what_the_adc_would_not_understand() {
        let clock = TraceClock::new(100);
        let mut spi = TraceAdc::new(&clock, &TRACE);
        let mut buf = [0u8; FRAME_LEN];
        assert_eq!(
            spi.transaction(&mut [Operation::Write(&[0x00, 0]), Operation::Read(&mut buf)]),
            Err(StubSpiError::UnknownCommand)
        );
        assert_eq!(
            spi.transaction(&mut [Operation::Read(&mut buf)]),
            Err(StubSpiError::UnexpectedRead)
        );
        assert_eq!(
            spi.transaction(&mut [Operation::Write(&[CMD_READ, 2]), Operation::Read(&mut buf)]),
            Err(StubSpiError::ChannelNotInTrace)
        );
        let mut short = [0u8; 3];
        assert_eq!(
            spi.transaction(&mut [
                Operation::Write(&[CMD_READ, 0]),
                Operation::Read(&mut short)
            ]),
            Err(StubSpiError::UnexpectedRead)
        );
    }

    #[test]
    fn pin_tracks_level_and_changes() {
        let mut pin = StubPin::new();
        pin.set_high().unwrap();
        pin.set_high().unwrap();
        pin.set_low().unwrap();
        assert!(pin.is_set_low().unwrap());
        assert_eq!(pin.changes(), 2);
    }
}

/// NOR flash in RAM: `N` bytes in erase units of [`RamFlash::ERASE_UNIT`] bytes, written in
/// 4-byte words, read by the byte. An erase sets every bit of its units; a write ANDs into the
/// cells (it can only clear bits), as NOR flash does. Its contents survive what the
/// application calls a restart (a new store over the same `RamFlash`), not a power cycle.
///
/// ```
/// use clampwise_firmware_example::stub::RamFlash;
/// use embedded_storage::nor_flash::{NorFlash, ReadNorFlash};
/// let mut flash = RamFlash::<512>::new();
/// flash.write(0, &[0x0F, 0xF0, 0x00, 0xFF])?;
/// flash.write(0, &[0xFF, 0x3C, 0xFF, 0x0F])?; // only clears: AND
/// let mut got = [0; 4];
/// flash.read(0, &mut got)?;
/// assert_eq!(got, [0x0F, 0x30, 0x00, 0x0F]);
/// flash.erase(0, 256)?;
/// flash.read(0, &mut got)?;
/// assert_eq!(got, [0xFF; 4]);
/// # Ok::<(), embedded_storage::nor_flash::NorFlashErrorKind>(())
/// ```
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct RamFlash<const N: usize> {
    cells: [u8; N],
}

impl<const N: usize> RamFlash<N> {
    /// Bytes per erase unit (a small flash page).
    pub const ERASE_UNIT: usize = 256;

    /// Erased flash: all ones.
    pub const fn new() -> Self {
        Self { cells: [0xFF; N] }
    }

    fn cells(&mut self, offset: u32, len: usize) -> Result<&mut [u8], NorFlashErrorKind> {
        let at = usize::try_from(offset).map_err(|_| NorFlashErrorKind::OutOfBounds)?;
        self.cells
            .get_mut(at..at.saturating_add(len))
            .ok_or(NorFlashErrorKind::OutOfBounds)
    }
}

impl<const N: usize> Default for RamFlash<N> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const N: usize> FlashErrorType for RamFlash<N> {
    type Error = NorFlashErrorKind;
}

impl<const N: usize> ReadNorFlash for RamFlash<N> {
    const READ_SIZE: usize = 1;

    fn read(&mut self, offset: u32, bytes: &mut [u8]) -> Result<(), Self::Error> {
        check_read(self, offset, bytes.len())?;
        // Element by element: `copy_from_slice` would keep a length-mismatch panic path.
        let len = bytes.len();
        for (dst, src) in bytes.iter_mut().zip(self.cells(offset, len)?.iter()) {
            *dst = *src;
        }
        Ok(())
    }

    fn capacity(&self) -> usize {
        N
    }
}

impl<const N: usize> NorFlash for RamFlash<N> {
    const WRITE_SIZE: usize = 4;
    const ERASE_SIZE: usize = Self::ERASE_UNIT;

    fn erase(&mut self, from: u32, to: u32) -> Result<(), Self::Error> {
        check_erase(self, from, to)?;
        let len =
            usize::try_from(to.saturating_sub(from)).map_err(|_| NorFlashErrorKind::OutOfBounds)?;
        self.cells(from, len)?.fill(0xFF);
        Ok(())
    }

    fn write(&mut self, offset: u32, bytes: &[u8]) -> Result<(), Self::Error> {
        check_write(self, offset, bytes.len())?;
        for (cell, b) in self.cells(offset, bytes.len())?.iter_mut().zip(bytes) {
            *cell &= b;
        }
        Ok(())
    }
}
