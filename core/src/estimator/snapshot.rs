//! The estimator's whole state as bytes, for exact resume on a host: stop after any sample,
//! [`Estimator::snapshot_into`], later [`Estimator::from_snapshot`], and every following
//! estimate equals the one an uninterrupted run gives, bit for bit.
//!
//! The [88-byte state record](crate::state_record) and the snapshot serve different needs:
//!
//! | | state record ([`Estimator::save`]) | snapshot ([`Estimator::snapshot_into`]) |
//! |---|---|---|
//! | holds | the slow state: temperatures, wear, bedding, adaptation | everything: also sensor filters, debounce counters, stuck windows, held values, stick/slip, sub-rate sums, the actuator model |
//! | after restoring | the fast state starts afresh: the next samples differ from a run without the cut | every sample equals the run without the cut |
//! | for | power cycles on a device (non-volatile memory, [`crate::record_store`]) | chunked replay, moving a device's work between host workers |
//!
//! A snapshot is not meant for flash wear-levelling or a device's power cycles: it is larger,
//! changes every sample, and holds state (filters, debounce runs) that is stale after a power
//! cycle anyway. It is tied to one configuration ([`DeviceConfig::checksum`]) and one format
//! version; it is not a long-term archive format.
//!
//! ## Layout (version 1, [`snapshot_len`]`(C)` = 51·C + 124 bytes, little-endian)
//!
//! | offset | size | field |
//! |---|---|---|
//! | 0 | 4 | magic `b"CWSN"` |
//! | 4 | 2 | version = 1 |
//! | 6 | 1 | channel count C |
//! | 7 | 1 | reserved, must be 0 |
//! | 8 | 4 | device configuration checksum ([`DeviceConfig::checksum`]) |
//! | 12 | 51·C + 18 | sensor: per channel the debounce bank, stuck window, last accepted force, samples since, low-pass; then the actuator model and the last sensor temperature |
//! | 51·C + 30 | 1 | friction: slipping |
//! | 51·C + 31 | 23 | thermal: lining, rotor (Q32 °C), last measured temperature, fade, over-temperature |
//! | 51·C + 54 | 40 | wear: energy (Q64 J), `1 − bedding` (Q62), thickness loss (Q96 m) |
//! | 51·C + 94 | 17 | sub-rate: pending power, pending friction power (Watts bits), samples |
//! | 51·C + 111 | 9 | adaptation: present, factor, covariance ([`Ratio`](crate::units::Ratio) bits; 0 when absent) |
//! | 51·C + 120 | 4 | CRC-32/ISO-HDLC of all bytes before it |
//!
//! A bool is one byte, 0 or 1; an `Option` is a bool then the value (zeros when absent).
//!
//! ## What is checked
//!
//! [`Estimator::from_snapshot`], in this order: length at least the header's, magic, version,
//! channel count, reserved byte, length, CRC, configuration checksum, then every field: a bool
//! or `Option` tag not 0 or 1, the bytes of an absent value not zero, or a value the state
//! cannot hold (a temperature outside −273 … 32 767 °C, bedding below 0, an energy beyond
//! [`Joules`](crate::units::Joules), a filter or actuator state outside the force range, an
//! adaptation factor or covariance outside the configured bounds, adaptation present or absent
//! against the configuration) is refused with [`SnapshotError::InvalidValue`] naming the field
//! and its offset. Decoding uses integers only and cannot panic for any bytes.

use core::fmt;

use crc::{CRC_32_ISO_HDLC, Crc, NoTable};

use super::{Estimator, EstimatorState, SubRate};
use crate::adapt::AdaptState;
use crate::config::{DeviceConfig, TableSet};
use crate::friction::FrictionState;
use crate::sensor::SensorState;
use crate::thermal::ThermalState;
use crate::wear::WearState;

/// Snapshot magic.
pub const SNAPSHOT_MAGIC: [u8; 4] = *b"CWSN";
/// Format version written and accepted.
pub const SNAPSHOT_VERSION: u16 = 1;

const HEADER_LEN: usize = 12;
const CRC_LEN: usize = 4;
// Bitwise (no 1 KiB table): a snapshot is taken between chunks, not per sample.
const CRC32: Crc<u32, NoTable> = Crc::<u32, NoTable>::new(&CRC_32_ISO_HDLC);

/// Length in bytes of the snapshot of an estimator with `channels` force channels.
///
/// ```
/// use clampwise_core::estimator::snapshot_len;
/// assert_eq!(snapshot_len(1), 175);
/// assert_eq!(snapshot_len(3), 277);
/// ```
pub const fn snapshot_len(channels: usize) -> usize {
    HEADER_LEN + EstimatorState::<0>::BODY_FIXED + channels * CHANNEL_LEN + CRC_LEN
}

/// Bytes of one force channel's state.
const CHANNEL_LEN: usize = 51;

/// Why a snapshot was not taken or not resumed. Each variant is one check of the module docs.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum SnapshotError {
    /// The output buffer of [`Estimator::snapshot_into`] is too short.
    BufferTooSmall {
        /// Length of the buffer.
        len: usize,
        /// Bytes the snapshot needs.
        needed: usize,
    },
    /// The bytes are not as long as a snapshot of this estimator.
    WrongLength {
        /// Length given.
        len: usize,
        /// Length of a snapshot for this channel count.
        expected: usize,
    },
    /// The magic bytes are not [`SNAPSHOT_MAGIC`].
    BadMagic,
    /// The version is not [`SNAPSHOT_VERSION`].
    UnsupportedVersion {
        /// Version found.
        version: u16,
    },
    /// The snapshot was taken of an estimator with another number of force channels.
    ChannelCount {
        /// Channel count in the snapshot.
        snapshot: u8,
        /// Channel count of the estimator it was offered to.
        estimator: usize,
    },
    /// The CRC-32 does not match.
    Checksum {
        /// CRC stored in the snapshot.
        stored: u32,
        /// CRC computed over the snapshot.
        computed: u32,
    },
    /// The snapshot was taken with another device configuration.
    ConfigMismatch {
        /// Configuration checksum in the snapshot.
        snapshot: u32,
        /// Checksum of the configuration it was offered to.
        config: u32,
    },
    /// A field holds an encoding or a value the state cannot have.
    InvalidValue {
        /// Byte offset of the field in the snapshot.
        offset: usize,
        /// The field.
        field: &'static str,
    },
}

impl fmt::Display for SnapshotError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::BufferTooSmall { len, needed } => write!(
                f,
                "snapshot buffer is {len} bytes, the snapshot needs {needed}"
            ),
            Self::WrongLength { len, expected } => {
                write!(f, "snapshot is {len} bytes, expected {expected}")
            }
            Self::BadMagic => f.write_str("not an estimator snapshot (magic is wrong)"),
            Self::UnsupportedVersion { version } => write!(
                f,
                "snapshot version {version} is not supported (expected {SNAPSHOT_VERSION})"
            ),
            Self::ChannelCount {
                snapshot,
                estimator,
            } => write!(
                f,
                "snapshot has {snapshot} force channels, this estimator has {estimator}"
            ),
            Self::Checksum { stored, computed } => write!(
                f,
                "snapshot checksum mismatch: stored {stored:#010x}, computed {computed:#010x}"
            ),
            Self::ConfigMismatch { snapshot, config } => write!(
                f,
                "snapshot was taken with configuration {snapshot:#010x}, this one is {config:#010x}"
            ),
            Self::InvalidValue { offset, field } => write!(
                f,
                "snapshot field {field} at byte {offset} holds a value the state cannot have"
            ),
        }
    }
}

impl core::error::Error for SnapshotError {}

/// Appends little-endian fields to a buffer sized beforehand ([`snapshot_len`]).
pub(crate) struct Writer<'b> {
    buf: &'b mut [u8],
    at: usize,
}

impl Writer<'_> {
    pub(crate) fn bytes<const N: usize>(&mut self, bytes: [u8; N]) {
        // The caller sized the buffer: a short one only truncates, never panics. (An array
        // chunk, not `copy_from_slice`: no length check left for the optimiser to keep.)
        if let Some(dst) = self
            .buf
            .get_mut(self.at..)
            .and_then(|rest| rest.first_chunk_mut::<N>())
        {
            *dst = bytes;
        }
        self.at = self.at.saturating_add(N);
    }

    pub(crate) fn u8(&mut self, v: u8) {
        self.bytes([v]);
    }

    pub(crate) fn bool(&mut self, v: bool) {
        self.u8(u8::from(v));
    }

    pub(crate) fn u16(&mut self, v: u16) {
        self.bytes(v.to_le_bytes());
    }

    pub(crate) fn u32(&mut self, v: u32) {
        self.bytes(v.to_le_bytes());
    }

    pub(crate) fn i32(&mut self, v: i32) {
        self.bytes(v.to_le_bytes());
    }

    pub(crate) fn i64(&mut self, v: i64) {
        self.bytes(v.to_le_bytes());
    }

    pub(crate) fn u64(&mut self, v: u64) {
        self.bytes(v.to_le_bytes());
    }

    pub(crate) fn u128(&mut self, v: u128) {
        self.bytes(v.to_le_bytes());
    }

    /// An optional i32: the tag, then the value (zeros when absent).
    pub(crate) fn option_i32(&mut self, v: Option<i32>) {
        self.bool(v.is_some());
        self.i32(v.unwrap_or(0));
    }
}

/// Takes little-endian fields off the front of a snapshot; remembers where and what the first
/// invalid field was.
pub(crate) struct Reader<'b> {
    rest: &'b [u8],
    at: usize,
    field_at: usize,
    invalid: Option<(usize, &'static str)>,
}

impl<'b> Reader<'b> {
    const fn new(bytes: &'b [u8], at: usize) -> Self {
        Self {
            rest: bytes,
            at,
            field_at: at,
            invalid: None,
        }
    }

    pub(crate) fn bytes<const N: usize>(&mut self) -> Option<[u8; N]> {
        let (head, tail) = self.rest.split_first_chunk::<N>()?;
        self.rest = tail;
        self.field_at = self.at;
        self.at = self.at.saturating_add(N);
        Some(*head)
    }

    /// `Some(())` if `valid`; else `None`, naming `field` (the one just read) as invalid.
    pub(crate) fn check(&mut self, valid: bool, field: &'static str) -> Option<()> {
        if !valid && self.invalid.is_none() {
            self.invalid = Some((self.field_at, field));
        }
        valid.then_some(())
    }

    pub(crate) fn u8(&mut self) -> Option<u8> {
        self.bytes::<1>().map(|[b]| b)
    }

    pub(crate) fn bool(&mut self, field: &'static str) -> Option<bool> {
        let b = self.u8()?;
        self.check(b <= 1, field)?;
        Some(b == 1)
    }

    pub(crate) fn u16(&mut self) -> Option<u16> {
        self.bytes().map(u16::from_le_bytes)
    }

    pub(crate) fn u32(&mut self) -> Option<u32> {
        self.bytes().map(u32::from_le_bytes)
    }

    pub(crate) fn i32(&mut self) -> Option<i32> {
        self.bytes().map(i32::from_le_bytes)
    }

    pub(crate) fn i64(&mut self) -> Option<i64> {
        self.bytes().map(i64::from_le_bytes)
    }

    pub(crate) fn u64(&mut self) -> Option<u64> {
        self.bytes().map(u64::from_le_bytes)
    }

    pub(crate) fn u128(&mut self) -> Option<u128> {
        self.bytes().map(u128::from_le_bytes)
    }

    /// An optional i32 as [`Writer::option_i32`] writes it.
    pub(crate) fn option_i32(&mut self, field: &'static str) -> Option<Option<i32>> {
        let present = self.bool(field)?;
        let v = self.i32()?;
        self.check(present || v == 0, field)?;
        Some(present.then_some(v))
    }
}

/// A state type's part of the snapshot: fixed length, every field little-endian.
pub(crate) trait Snapshot: Sized {
    /// Bytes written by [`Snapshot::write`].
    const LEN: usize;
    fn write(&self, w: &mut Writer<'_>);
    /// `None` if the bytes hold an invalid encoding or value (the reader names it).
    fn read(r: &mut Reader<'_>) -> Option<Self>;
}

impl<const C: usize> EstimatorState<C> {
    /// Bytes of every part but the force channels.
    const BODY_FIXED: usize = SensorState::<0>::LEN
        + FrictionState::LEN
        + ThermalState::LEN
        + WearState::LEN
        + SubRate::LEN
        + ADAPT_LEN;
}

const ADAPT_LEN: usize = 1 + 2 * 4;

impl<'c, T: TableSet, const C: usize> Estimator<'c, T, C> {
    /// Length in bytes of this estimator's snapshot ([`snapshot_len`] of `C`).
    pub const SNAPSHOT_LEN: usize = snapshot_len(C);

    /// Write the whole state to `out` (see [`crate::estimator::snapshot`] for the layout); returns
    /// the bytes written, [`Self::SNAPSHOT_LEN`]. Integer-only, cannot panic.
    ///
    /// # Errors
    /// [`SnapshotError::BufferTooSmall`] if `out` is shorter than [`Self::SNAPSHOT_LEN`]
    /// (nothing is written).
    pub fn snapshot_into(&self, out: &mut [u8]) -> Result<usize, SnapshotError> {
        let needed = Self::SNAPSHOT_LEN;
        let Some(buf) = out.get_mut(..needed) else {
            return Err(SnapshotError::BufferTooSmall {
                len: out.len(),
                needed,
            });
        };
        let st = &self.state;
        let mut w = Writer { buf, at: 0 };
        w.bytes(SNAPSHOT_MAGIC);
        w.u16(SNAPSHOT_VERSION);
        // C ≤ 4 (a `SensorConfig` refuses more), so it fits a byte.
        #[allow(clippy::cast_possible_truncation)]
        w.u8(C as u8);
        w.u8(0);
        w.u32(self.cfg.checksum());
        st.sensor.write(&mut w);
        st.friction.write(&mut w);
        st.thermal.write(&mut w);
        st.wear.write(&mut w);
        st.sub_rate.write(&mut w);
        let (factor, covariance) = st
            .adapt
            .map_or((0, 0), |a| (a.factor().to_bits(), a.covariance().to_bits()));
        w.bool(st.adapt.is_some());
        w.i32(factor);
        w.i32(covariance);
        let body_end = w.at;
        let crc = CRC32.checksum(w.buf.get(..body_end).unwrap_or(&[]));
        w.u32(crc);
        Ok(w.at)
    }

    /// An estimator that goes on exactly where the snapshot `bytes` of an estimator with the
    /// configuration `cfg` was taken. Integer-only, cannot panic for any bytes.
    ///
    /// ```
    /// # use clampwise_core::estimator::{Estimator, Inputs};
    /// # fn demo<T: clampwise_core::config::TableSet>(
    /// #     cfg: &clampwise_core::config::DeviceConfig<T, 1>, inputs: &[Inputs<1>]) {
    /// let mut one_pass = Estimator::new(cfg);
    /// let mut chunked = Estimator::new(cfg);
    /// let mut bytes = [0u8; clampwise_core::estimator::snapshot_len(1)];
    /// for x in inputs {
    ///     chunked.snapshot_into(&mut bytes).unwrap();
    ///     chunked = Estimator::from_snapshot(cfg, &bytes).unwrap();
    ///     assert_eq!(chunked.step(x), one_pass.step(x));
    /// }
    /// # }
    /// ```
    ///
    /// # Errors
    /// The [`SnapshotError`] of the first check that fails, in the order of
    /// [`crate::estimator::snapshot`].
    pub fn from_snapshot(cfg: &'c DeviceConfig<T, C>, bytes: &[u8]) -> Result<Self, SnapshotError> {
        let expected = Self::SNAPSHOT_LEN;
        let wrong_length = SnapshotError::WrongLength {
            len: bytes.len(),
            expected,
        };
        let mut header = Reader::new(bytes, 0);
        let (Some(magic), Some(version), Some(channels), Some(reserved), Some(config)) = (
            header.bytes::<4>(),
            header.u16(),
            header.u8(),
            header.u8(),
            header.u32(),
        ) else {
            return Err(wrong_length);
        };
        if magic != SNAPSHOT_MAGIC {
            return Err(SnapshotError::BadMagic);
        }
        if version != SNAPSHOT_VERSION {
            return Err(SnapshotError::UnsupportedVersion { version });
        }
        if usize::from(channels) != C {
            return Err(SnapshotError::ChannelCount {
                snapshot: channels,
                estimator: C,
            });
        }
        if reserved != 0 {
            return Err(SnapshotError::InvalidValue {
                offset: 7,
                field: "reserved",
            });
        }
        let Some((body, crc)) = bytes
            .split_last_chunk::<CRC_LEN>()
            .filter(|_| bytes.len() == expected)
        else {
            return Err(wrong_length);
        };
        let stored = u32::from_le_bytes(*crc);
        let computed = CRC32.checksum(body);
        if stored != computed {
            return Err(SnapshotError::Checksum { stored, computed });
        }
        if config != cfg.checksum() {
            return Err(SnapshotError::ConfigMismatch {
                snapshot: config,
                config: cfg.checksum(),
            });
        }
        let mut r = Reader::new(body.get(HEADER_LEN..).unwrap_or(&[]), HEADER_LEN);
        match Self::read_state(cfg, &mut r) {
            Some(state) => Ok(Self { cfg, state }),
            None => {
                let (offset, field) = r.invalid.unwrap_or((r.at, "length"));
                Err(SnapshotError::InvalidValue { offset, field })
            }
        }
    }

    fn read_state(cfg: &DeviceConfig<T, C>, r: &mut Reader<'_>) -> Option<EstimatorState<C>> {
        let sensor = SensorState::read(r)?;
        let friction = FrictionState::read(r)?;
        let thermal = ThermalState::read(r)?;
        let wear = WearState::read(r)?;
        let sub_rate = SubRate::read(r)?;
        let present = r.bool("adapt.present")?;
        r.check(present == cfg.adapt.is_some(), "adapt.present")?;
        let factor = r.i32()?;
        r.check(present || factor == 0, "adapt.factor")?;
        let covariance = r.i32()?;
        r.check(present || covariance == 0, "adapt.covariance")?;
        let adapt = match cfg.adapt.as_ref() {
            Some(acfg) => match AdaptState::from_bits_within(acfg, factor, covariance) {
                Ok(a) => Some(a),
                Err(field) => {
                    // Records the field as invalid; the state is refused.
                    let _ = r.check(false, field);
                    return None;
                }
            },
            None => None,
        };
        Some(EstimatorState {
            sensor,
            friction,
            thermal,
            wear,
            sub_rate,
            adapt,
        })
    }
}
