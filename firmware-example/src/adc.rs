//! Driver for a bridge (load-cell) 24-bit sigma-delta ADC over an embedded-hal 1.0 [`SpiDevice`].
//!
//! # Frame format
//!
//! This is our own description of a generic multi-channel bridge ADC, not any vendor's part; a
//! board with a real part maps that part's frame onto [`read`](BridgeAdc::read) and keeps the
//! rest of the application unchanged.
//!
//! One SPI transaction per reading, SPI mode 1 (CPOL = 0, CPHA = 1), MSB first:
//!
//! | direction | bytes | content |
//! |---|---|---|
//! | controller → ADC | 2 | [`CMD_READ`] (`0x5C`), channel number `0..=3` |
//! | ADC → controller | 5 | status, data\[23:16\], data\[15:8\], data\[7:0\], CRC-8 |
//!
//! Status byte:
//!
//! | bit | name | meaning |
//! |---|---|---|
//! | 7 | `RDY` | a new conversion is available since this channel was last read |
//! | 6 | `OVR` | the bridge input is over range; the data is clamped at full scale |
//! | 5 | `REF` | the bridge excitation (reference) is missing; the data is meaningless |
//! | 4..=2 | — | reserved, always 0 (a 1 means the frame is corrupt or the part is not ours) |
//! | 1..=0 | `CH` | echo of the channel that was converted |
//!
//! The data is the conversion result in signed 24-bit two's complement (−8 388 608 ..= 8 388 607
//! counts). The last byte is CRC-8/SMBUS (polynomial 0x07, initial value 0, not reflected, no
//! final XOR; check value 0xF4) over the status and the three data bytes.
//!
//! # Checks, in order
//!
//! A frame is rejected with a typed [`AdcError`] when its CRC does not match (nothing in it can
//! be trusted), when a reserved bit is set, when the channel echo differs from the channel asked
//! for, then when the part reports a missing reference, an overrange, or no new conversion.
//!
//! ```
//! use clampwise_firmware_example::adc::{encode_frame, BridgeAdc, Channel, Status, CMD_READ};
//! use embedded_hal_mock::eh1::spi::{Mock, Transaction};
//!
//! let ch = Channel::new(1).unwrap();
//! let frame = encode_frame(Status::READY, ch, -1234);
//! let spi = Mock::new(&[
//!     Transaction::transaction_start(),
//!     Transaction::write_vec(vec![CMD_READ, 1]),
//!     Transaction::read_vec(frame.to_vec()),
//!     Transaction::transaction_end(),
//! ]);
//! let mut adc = BridgeAdc::new(spi);
//! assert_eq!(adc.read(ch), Ok(-1234));
//! adc.release().done();
//! ```

use core::fmt;

use embedded_hal::spi::{Operation, SpiDevice};

/// Command byte that starts a conversion read.
pub const CMD_READ: u8 = 0x5C;
/// Length of the ADC's response frame in bytes.
pub const FRAME_LEN: usize = 5;
/// Number of input channels of the ADC.
pub const ADC_CHANNELS: u8 = 4;
/// Largest conversion result (positive full scale), counts.
pub const FULL_SCALE: i32 = (1 << 23) - 1;
/// Smallest conversion result (negative full scale), counts.
pub const NEGATIVE_FULL_SCALE: i32 = -(1 << 23);

const STATUS_RESERVED_MASK: u8 = 0b0001_1100;
const STATUS_CHANNEL_MASK: u8 = 0b0000_0011;

/// CRC-8/SMBUS without a lookup table: frames are four bytes, so the bitwise form costs little
/// time and saves 256 bytes of flash.
const FRAME_CRC: crc::Crc<u8, crc::NoTable> = crc::Crc::<u8, crc::NoTable>::new(&crc::CRC_8_SMBUS);

bitflags::bitflags! {
    /// The condition bits of the status byte (bits 7..=5; the channel echo is separate).
    #[derive(Clone, Copy, Debug, PartialEq, Eq)]
    pub struct Status: u8 {
        /// A new conversion is available.
        const READY = 0b1000_0000;
        /// The input is over range; the data is clamped at full scale.
        const OVERRANGE = 0b0100_0000;
        /// The bridge excitation is missing.
        const REFERENCE_MISSING = 0b0010_0000;
    }
}

/// An ADC input channel, `0..=3`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Channel(u8);

impl Channel {
    /// The channel numbered `n`, or `None` when `n` is 4 or more.
    ///
    /// ```
    /// use clampwise_firmware_example::adc::Channel;
    /// assert_eq!(Channel::new(3).map(|c| c.number()), Some(3));
    /// assert!(Channel::new(4).is_none());
    /// ```
    pub const fn new(n: u8) -> Option<Self> {
        if n < ADC_CHANNELS {
            Some(Self(n))
        } else {
            None
        }
    }

    /// The channel number, `0..=3`.
    pub const fn number(self) -> u8 {
        self.0
    }
}

/// What went wrong with a reading, without the bus error's payload: small and `Copy`, so the
/// application can hand it to the processing step and count it.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum AdcFault {
    /// The SPI transaction itself failed.
    Bus,
    /// The frame's CRC did not match.
    Crc,
    /// A reserved status bit was set.
    ReservedBits,
    /// The channel echo differed from the channel asked for.
    ChannelMismatch,
    /// The bridge excitation is missing.
    ReferenceMissing,
    /// The input is over range.
    Overrange,
    /// No new conversion since the last read.
    NotReady,
}

impl AdcFault {
    /// Every fault, in declaration order (for per-kind counters).
    pub const ALL: [Self; 7] = [
        Self::Bus,
        Self::Crc,
        Self::ReservedBits,
        Self::ChannelMismatch,
        Self::ReferenceMissing,
        Self::Overrange,
        Self::NotReady,
    ];

    /// Position of this fault in [`AdcFault::ALL`].
    pub const fn index(self) -> usize {
        match self {
            Self::Bus => 0,
            Self::Crc => 1,
            Self::ReservedBits => 2,
            Self::ChannelMismatch => 3,
            Self::ReferenceMissing => 4,
            Self::Overrange => 5,
            Self::NotReady => 6,
        }
    }
}

/// A failed reading. `E` is the SPI device's error type.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[non_exhaustive]
pub enum AdcError<E> {
    /// The SPI transaction failed.
    Bus(E),
    /// The frame's CRC-8 did not match its content.
    Crc {
        /// CRC computed over the received status and data bytes.
        computed: u8,
        /// CRC byte received.
        received: u8,
    },
    /// A reserved status bit (4..=2) was set.
    ReservedBits {
        /// The status byte received.
        status: u8,
    },
    /// The ADC converted another channel than the one asked for.
    ChannelMismatch {
        /// Channel asked for.
        requested: u8,
        /// Channel echoed in the status byte.
        echoed: u8,
    },
    /// The bridge excitation is missing; the data is meaningless.
    ReferenceMissing,
    /// The input is over range; the data is clamped at full scale.
    Overrange {
        /// The clamped conversion result, counts.
        counts: i32,
    },
    /// No new conversion since the channel was last read.
    NotReady,
}

impl<E> AdcError<E> {
    /// The kind of fault, without the bus error's payload.
    pub const fn kind(&self) -> AdcFault {
        match self {
            Self::Bus(_) => AdcFault::Bus,
            Self::Crc { .. } => AdcFault::Crc,
            Self::ReservedBits { .. } => AdcFault::ReservedBits,
            Self::ChannelMismatch { .. } => AdcFault::ChannelMismatch,
            Self::ReferenceMissing => AdcFault::ReferenceMissing,
            Self::Overrange { .. } => AdcFault::Overrange,
            Self::NotReady => AdcFault::NotReady,
        }
    }
}

impl<E: fmt::Debug> fmt::Display for AdcError<E> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Bus(e) => write!(f, "bridge ADC: SPI transaction failed: {e:?}"),
            Self::Crc { computed, received } => write!(
                f,
                "bridge ADC: frame CRC 0x{received:02x} does not match computed 0x{computed:02x}"
            ),
            Self::ReservedBits { status } => {
                write!(
                    f,
                    "bridge ADC: reserved bits set in status byte 0x{status:02x}"
                )
            }
            Self::ChannelMismatch { requested, echoed } => write!(
                f,
                "bridge ADC: asked for channel {requested}, frame is from channel {echoed}"
            ),
            Self::ReferenceMissing => write!(f, "bridge ADC: bridge excitation missing"),
            Self::Overrange { counts } => {
                write!(
                    f,
                    "bridge ADC: input over range (clamped at {counts} counts)"
                )
            }
            Self::NotReady => write!(f, "bridge ADC: no new conversion since the last read"),
        }
    }
}

impl<E: fmt::Debug> core::error::Error for AdcError<E> {}

/// CRC-8/SMBUS of `bytes` (the frame's checksum).
///
/// ```
/// use clampwise_firmware_example::adc::frame_crc;
/// assert_eq!(frame_crc(b"123456789"), 0xF4); // the catalogued check value
/// ```
pub const fn frame_crc(bytes: &[u8]) -> u8 {
    FRAME_CRC.checksum(bytes)
}

/// Build the ADC's response frame for `counts` (clamped to the 24-bit range) on `channel`.
/// Used by the HAL stub, which plays the part of the ADC, and by tests.
///
/// ```
/// use clampwise_firmware_example::adc::{decode_frame, encode_frame, Channel, Status};
/// let ch = Channel::new(0).unwrap();
/// let frame = encode_frame(Status::READY, ch, 8_000_000);
/// assert_eq!(decode_frame::<()>(ch, &frame), Ok(8_000_000));
/// ```
pub fn encode_frame(status: Status, channel: Channel, counts: i32) -> [u8; FRAME_LEN] {
    let clamped = counts.clamp(NEGATIVE_FULL_SCALE, FULL_SCALE);
    let [_, d2, d1, d0] = clamped.to_be_bytes();
    let head = [status.bits() | channel.number(), d2, d1, d0];
    let [s, d2, d1, d0] = head;
    [s, d2, d1, d0, frame_crc(&head)]
}

/// Check and decode a response frame for `channel`: the conversion result in counts.
///
/// # Errors
/// As listed in the [module docs](self), in that order; never [`AdcError::Bus`] (the error
/// type `E` is the caller's bus error type, left free).
pub fn decode_frame<E>(channel: Channel, frame: &[u8; FRAME_LEN]) -> Result<i32, AdcError<E>> {
    let [status, d2, d1, d0, received] = *frame;
    let computed = frame_crc(&[status, d2, d1, d0]);
    if computed != received {
        return Err(AdcError::Crc { computed, received });
    }
    if status & STATUS_RESERVED_MASK != 0 {
        return Err(AdcError::ReservedBits { status });
    }
    let echoed = status & STATUS_CHANNEL_MASK;
    if echoed != channel.number() {
        return Err(AdcError::ChannelMismatch {
            requested: channel.number(),
            echoed,
        });
    }
    // Place the 24 bits at the top of an i32 and shift back arithmetically to sign-extend.
    let counts = i32::from_be_bytes([d2, d1, d0, 0]) >> 8;
    let flags = Status::from_bits_truncate(status);
    if flags.contains(Status::REFERENCE_MISSING) {
        return Err(AdcError::ReferenceMissing);
    }
    if flags.contains(Status::OVERRANGE) {
        return Err(AdcError::Overrange { counts });
    }
    if !flags.contains(Status::READY) {
        return Err(AdcError::NotReady);
    }
    Ok(counts)
}

/// The bridge ADC on an SPI device (the device owns chip select).
#[derive(Debug)]
pub struct BridgeAdc<SPI> {
    spi: SPI,
}

impl<SPI: SpiDevice> BridgeAdc<SPI> {
    /// Wrap an SPI device. No bus traffic.
    pub const fn new(spi: SPI) -> Self {
        Self { spi }
    }

    /// Read the latest conversion of `channel`, in counts (signed 24-bit).
    ///
    /// One SPI transaction: write [`CMD_READ`] and the channel, read the 5-byte frame.
    ///
    /// # Errors
    /// [`AdcError::Bus`] when the transaction fails, otherwise as [`decode_frame`].
    pub fn read(&mut self, channel: Channel) -> Result<i32, AdcError<SPI::Error>> {
        let request = [CMD_READ, channel.number()];
        let mut frame = [0u8; FRAME_LEN];
        self.spi
            .transaction(&mut [Operation::Write(&request), Operation::Read(&mut frame)])
            .map_err(AdcError::Bus)?;
        decode_frame(channel, &frame)
    }

    /// Give the SPI device back.
    pub fn release(self) -> SPI {
        self.spi
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use embedded_hal::spi::ErrorKind;
    use embedded_hal_mock::eh1::spi::{Mock, Transaction};
    use proptest::prelude::*;

    fn ch(n: u8) -> Channel {
        Channel::new(n).unwrap()
    }

    fn expect_read(channel: u8, frame: [u8; FRAME_LEN]) -> Vec<Transaction<u8>> {
        vec![
            Transaction::transaction_start(),
            Transaction::write_vec(vec![CMD_READ, channel]),
            Transaction::read_vec(frame.to_vec()),
            Transaction::transaction_end(),
        ]
    }

    #[test]
    fn frame_crc_matches_catalogue_check_values() {
        // [pub] Greg Cook, "Catalogue of parametrised CRC algorithms": CRC-8/SMBUS check
        // ("123456789") = 0xF4. The crc crate carries the catalogue's value; assert both.
        assert_eq!(frame_crc(b"123456789"), 0xF4);
        assert_eq!(crc::CRC_8_SMBUS.check, 0xF4);
        // [calc] a single 0x01 byte through x^8 + x^2 + x + 1 from 0 leaves the polynomial.
        assert_eq!(frame_crc(&[0x01]), 0x07);
    }

    #[test]
    fn sign_extension_covers_the_24_bit_range() {
        // [calc] two's complement, 24 bits: 0x800000 = −2^23, 0x7FFFFF = 2^23 − 1, 0xFFFFFF = −1.
        for (bytes, expected) in [
            ([0x80, 0x00, 0x00], -8_388_608),
            ([0x7F, 0xFF, 0xFF], 8_388_607),
            ([0xFF, 0xFF, 0xFF], -1),
            ([0x00, 0x00, 0x01], 1),
        ] {
            let head = [Status::READY.bits() | 2, bytes[0], bytes[1], bytes[2]];
            let frame = [head[0], head[1], head[2], head[3], frame_crc(&head)];
            assert_eq!(decode_frame::<()>(ch(2), &frame), Ok(expected));
        }
    }

    #[test]
    fn reads_over_spi_in_one_transaction() {
        let frame = encode_frame(Status::READY, ch(3), 4_321_000);
        let mut adc = BridgeAdc::new(Mock::new(&expect_read(3, frame)));
        assert_eq!(adc.read(ch(3)), Ok(4_321_000));
        adc.release().done();
    }

    #[test]
    fn bad_frames_give_typed_errors_in_order() {
        let good = encode_frame(Status::READY, ch(1), 1000);
        let mut bad_crc = good;
        bad_crc[4] ^= 0x01;
        assert_eq!(
            decode_frame::<()>(ch(1), &bad_crc),
            Err(AdcError::Crc {
                computed: good[4],
                received: good[4] ^ 0x01
            })
        );
        // A flipped data bit is caught by the CRC too.
        let mut flipped = good;
        flipped[2] ^= 0x10;
        assert_eq!(
            decode_frame::<()>(ch(1), &flipped).unwrap_err().kind(),
            AdcFault::Crc
        );

        let reserved = [0x80 | 0x04 | 1, 0, 0x03, 0xE8];
        let frame = [
            reserved[0],
            reserved[1],
            reserved[2],
            reserved[3],
            frame_crc(&reserved),
        ];
        assert_eq!(
            decode_frame::<()>(ch(1), &frame),
            Err(AdcError::ReservedBits { status: 0x85 })
        );

        let other = encode_frame(Status::READY, ch(2), 1000);
        assert_eq!(
            decode_frame::<()>(ch(1), &other),
            Err(AdcError::ChannelMismatch {
                requested: 1,
                echoed: 2
            })
        );

        // Reference missing outranks overrange, which outranks not-ready.
        let all = Status::READY | Status::OVERRANGE | Status::REFERENCE_MISSING;
        assert_eq!(
            decode_frame::<()>(ch(0), &encode_frame(all, ch(0), 5)),
            Err(AdcError::ReferenceMissing)
        );
        assert_eq!(
            decode_frame::<()>(ch(0), &encode_frame(Status::OVERRANGE, ch(0), FULL_SCALE)),
            Err(AdcError::Overrange { counts: FULL_SCALE })
        );
        assert_eq!(
            decode_frame::<()>(ch(0), &encode_frame(Status::empty(), ch(0), 5)),
            Err(AdcError::NotReady)
        );
    }

    /// An SPI device whose every transaction fails (the mock has no error injection).
    struct FailingBus;
    impl embedded_hal::spi::ErrorType for FailingBus {
        type Error = ErrorKind;
    }
    impl SpiDevice for FailingBus {
        fn transaction(&mut self, _: &mut [Operation<'_, u8>]) -> Result<(), ErrorKind> {
            Err(ErrorKind::ChipSelectFault)
        }
    }

    #[test]
    fn bus_errors_are_passed_through() {
        let mut adc = BridgeAdc::new(FailingBus);
        let e = adc.read(ch(0)).unwrap_err();
        assert_eq!(e, AdcError::Bus(ErrorKind::ChipSelectFault));
        assert_eq!(e.kind(), AdcFault::Bus);
        assert!(
            e.to_string()
                .starts_with("bridge ADC: SPI transaction failed")
        );
    }

    #[test]
    fn errors_display_their_cause() {
        let e: AdcError<()> = AdcError::ChannelMismatch {
            requested: 1,
            echoed: 3,
        };
        assert_eq!(
            e.to_string(),
            "bridge ADC: asked for channel 1, frame is from channel 3"
        );
        for (i, f) in AdcFault::ALL.iter().enumerate() {
            assert_eq!(f.index(), i);
        }
    }

    proptest! {
        #[test]
        fn encode_decode_round_trip(counts in NEGATIVE_FULL_SCALE..=FULL_SCALE, n in 0u8..4) {
            prop_assert_eq!(decode_frame::<()>(ch(n), &encode_frame(Status::READY, ch(n), counts)), Ok(counts));
        }

        #[test]
        fn any_single_bit_error_is_detected(counts in NEGATIVE_FULL_SCALE..=FULL_SCALE, bit in 0usize..40) {
            // [pub] A CRC whose generator has more than one term detects every single-bit error
            // (Peterson & Brown, "Cyclic Codes for Error Detection", Proc. IRE, 1961).
            let mut frame = encode_frame(Status::READY, ch(0), counts);
            frame[bit / 8] ^= 1 << (bit % 8);
            prop_assert!(decode_frame::<()>(ch(0), &frame).is_err());
        }
    }
}
