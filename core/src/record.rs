//! Save and restore the slow state (wear, bedding, temperatures, adaptation) across power cycles
//! as a fixed-size byte record with a CRC-32.
//!
//! A controller writes [`StateRecord::to_bytes`] to non-volatile memory now and then and reads it
//! back at start-up with [`StateRecord::from_bytes`]. A record that is truncated, has the wrong
//! magic, version or length, fails its checksum or holds out-of-range values is rejected with a
//! [`RecordError`], never loaded: the caller then starts from a new lining or a conservative
//! default, and should flag it. Keeping two slots and taking the valid one with the higher
//! [`StateRecord::sequence`] survives a power loss in the middle of a write.
//!
//! ## Layout (version 1, [`RECORD_LEN`] = 88 bytes, little-endian)
//!
//! | offset | size | field |
//! |---|---|---|
//! | 0 | 4 | magic `b"CWST"` |
//! | 4 | 2 | version = 1 |
//! | 6 | 2 | length = 88 |
//! | 8 | 4 | sequence (u32) |
//! | 12 | 16 | energy, u128 Q64 J |
//! | 28 | 16 | thickness loss, u128 Q96 m |
//! | 44 | 8 | `1 − bedding`, u64 Q62 (≤ 2⁶²) |
//! | 52 | 8 | rotor temperature, i64 Q32 °C |
//! | 60 | 8 | lining temperature, i64 Q32 °C |
//! | 68 | 4 | adaptation factor, [`Ratio`] bits (reserved for the adaptation; 1.0 until then) |
//! | 72 | 8 | estimator covariance word, i64 (reserved for the adaptation; 0 until then) |
//! | 80 | 4 | reserved, must be 0 |
//! | 84 | 4 | CRC-32/ISO-HDLC of bytes 0..84 |
//!
//! CRC-32 detects every single-bit error and every burst up to 32 bits; the tests flip every bit
//! and try every truncation.

use core::fmt;

use crc::{CRC_32_ISO_HDLC, Crc};

use crate::thermal::ThermalState;
use crate::units::Ratio;
use crate::wear::WearState;

/// Length of a record in bytes.
pub const RECORD_LEN: usize = 88;
/// Record magic.
pub const RECORD_MAGIC: [u8; 4] = *b"CWST";
/// Format version written and accepted.
pub const RECORD_VERSION: u16 = 1;

const CRC_AT: usize = RECORD_LEN - 4;
const CRC32: Crc<u32> = Crc::<u32>::new(&CRC_32_ISO_HDLC);

/// Why a record was rejected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum RecordError {
    /// The slice is not [`RECORD_LEN`] bytes long (`len` given).
    WrongLength {
        /// Length of the slice.
        len: usize,
    },
    /// The magic bytes are not [`RECORD_MAGIC`].
    BadMagic,
    /// The version is not [`RECORD_VERSION`].
    UnsupportedVersion {
        /// Version found.
        version: u16,
    },
    /// The length field disagrees with [`RECORD_LEN`].
    LengthField {
        /// Length found.
        length: u16,
    },
    /// The CRC-32 does not match.
    Checksum {
        /// CRC stored in the record.
        stored: u32,
        /// CRC computed over the record.
        computed: u32,
    },
    /// A field passed the checksum but holds a value no state can have.
    FieldOutOfRange {
        /// The field concerned.
        field: &'static str,
    },
}

impl fmt::Display for RecordError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::WrongLength { len } => {
                write!(f, "state record is {len} bytes, expected {RECORD_LEN}")
            }
            Self::BadMagic => f.write_str("state record magic is wrong"),
            Self::UnsupportedVersion { version } => write!(
                f,
                "state record version {version} is not supported (expected {RECORD_VERSION})"
            ),
            Self::LengthField { length } => write!(
                f,
                "state record length field is {length}, expected {RECORD_LEN}"
            ),
            Self::Checksum { stored, computed } => write!(
                f,
                "state record checksum mismatch: stored {stored:#010x}, computed {computed:#010x}"
            ),
            Self::FieldOutOfRange { field } => {
                write!(f, "state record field {field} is out of range")
            }
        }
    }
}

impl core::error::Error for RecordError {}

/// The persistent state of one brake or clutch.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StateRecord {
    sequence: u32,
    wear: WearState,
    thermal: ThermalState,
    adaptation_factor: Ratio,
    estimator_covariance: i64,
}

fn take<const N: usize>(bytes: &[u8; RECORD_LEN], at: usize) -> [u8; N] {
    bytes
        .get(at..at.saturating_add(N))
        .and_then(|s| <[u8; N]>::try_from(s).ok())
        .unwrap_or([0; N])
}

fn put(bytes: &mut [u8; RECORD_LEN], at: usize, v: &[u8]) {
    if let Some(dst) = bytes.get_mut(at..at.saturating_add(v.len())) {
        dst.copy_from_slice(v);
    }
}

impl StateRecord {
    /// Capture the state. `adaptation_factor` and `estimator_covariance` are reserved for the
    /// adaptation (pass `Ratio::ONE` and 0 until it exists). Thermal flags and the last
    /// measured reading are not kept: they are re-derived after a restart.
    ///
    /// ```
    /// use clampwise_core::record::StateRecord;
    /// use clampwise_core::thermal::ThermalState;
    /// use clampwise_core::units::{Celsius, Ratio};
    /// use clampwise_core::wear::WearState;
    /// let rec = StateRecord::new(7, &WearState::new(),
    ///     &ThermalState::with_temperatures(Celsius::lit("35"), Celsius::lit("40")), Ratio::ONE, 0);
    /// let bytes = rec.to_bytes();
    /// assert_eq!(StateRecord::from_bytes(&bytes), Ok(rec));
    /// ```
    pub fn new(
        sequence: u32,
        wear: &WearState,
        thermal: &ThermalState,
        adaptation_factor: Ratio,
        estimator_covariance: i64,
    ) -> Self {
        let (rotor, lining) = thermal.raw();
        Self {
            sequence,
            wear: *wear,
            thermal: ThermalState::from_raw(rotor, lining),
            adaptation_factor,
            estimator_covariance,
        }
    }

    /// Write sequence number (higher = newer).
    pub const fn sequence(&self) -> u32 {
        self.sequence
    }

    /// The wear and bedding state.
    pub const fn wear(&self) -> WearState {
        self.wear
    }

    /// The thermal state (temperatures; flags cleared).
    pub const fn thermal(&self) -> ThermalState {
        self.thermal
    }

    /// Reserved: adaptation factor for μ.
    pub const fn adaptation_factor(&self) -> Ratio {
        self.adaptation_factor
    }

    /// Reserved: estimator covariance word.
    pub const fn estimator_covariance(&self) -> i64 {
        self.estimator_covariance
    }

    /// Encode as a record with checksum.
    ///
    /// ```
    /// use clampwise_core::record::{RECORD_LEN, StateRecord};
    /// # use clampwise_core::{thermal::ThermalState, units::{Celsius, Ratio}, wear::WearState};
    /// # let rec = StateRecord::new(1, &WearState::new(), &ThermalState::with_temperatures(Celsius::ZERO, Celsius::ZERO), Ratio::ONE, 0);
    /// let bytes: [u8; RECORD_LEN] = rec.to_bytes();
    /// assert_eq!(&bytes[..4], b"CWST");
    /// ```
    pub fn to_bytes(&self) -> [u8; RECORD_LEN] {
        let mut b = [0u8; RECORD_LEN];
        let (energy, unbedded, loss) = self.wear.raw();
        let (rotor, lining) = self.thermal.raw();
        #[allow(clippy::cast_possible_truncation)] // RECORD_LEN = 88 fits u16
        let len = RECORD_LEN as u16;
        put(&mut b, 0, &RECORD_MAGIC);
        put(&mut b, 4, &RECORD_VERSION.to_le_bytes());
        put(&mut b, 6, &len.to_le_bytes());
        put(&mut b, 8, &self.sequence.to_le_bytes());
        put(&mut b, 12, &energy.to_le_bytes());
        put(&mut b, 28, &loss.to_le_bytes());
        put(&mut b, 44, &unbedded.to_le_bytes());
        put(&mut b, 52, &rotor.to_le_bytes());
        put(&mut b, 60, &lining.to_le_bytes());
        put(&mut b, 68, &self.adaptation_factor.to_bits().to_le_bytes());
        put(&mut b, 72, &self.estimator_covariance.to_le_bytes());
        let crc = CRC32.checksum(b.get(..CRC_AT).unwrap_or(&[]));
        put(&mut b, CRC_AT, &crc.to_le_bytes());
        b
    }

    /// Decode and check a record.
    ///
    /// # Errors
    /// [`RecordError::WrongLength`], [`RecordError::BadMagic`],
    /// [`RecordError::UnsupportedVersion`], [`RecordError::LengthField`],
    /// [`RecordError::Checksum`], [`RecordError::FieldOutOfRange`], checked in that order.
    ///
    /// ```
    /// use clampwise_core::record::{RecordError, StateRecord};
    /// # use clampwise_core::{thermal::ThermalState, units::{Celsius, Ratio}, wear::WearState};
    /// # let rec = StateRecord::new(1, &WearState::new(), &ThermalState::with_temperatures(Celsius::ZERO, Celsius::ZERO), Ratio::ONE, 0);
    /// let mut bytes = rec.to_bytes();
    /// bytes[20] ^= 0x04;
    /// assert!(matches!(StateRecord::from_bytes(&bytes), Err(RecordError::Checksum { .. })));
    /// assert_eq!(StateRecord::from_bytes(&bytes[..40]), Err(RecordError::WrongLength { len: 40 }));
    /// ```
    pub fn from_bytes(bytes: &[u8]) -> Result<Self, RecordError> {
        let b: &[u8; RECORD_LEN] = bytes
            .try_into()
            .map_err(|_| RecordError::WrongLength { len: bytes.len() })?;
        if take::<4>(b, 0) != RECORD_MAGIC {
            return Err(RecordError::BadMagic);
        }
        let version = u16::from_le_bytes(take(b, 4));
        if version != RECORD_VERSION {
            return Err(RecordError::UnsupportedVersion { version });
        }
        let length = u16::from_le_bytes(take(b, 6));
        if usize::from(length) != RECORD_LEN {
            return Err(RecordError::LengthField { length });
        }
        let stored = u32::from_le_bytes(take(b, CRC_AT));
        let computed = CRC32.checksum(b.get(..CRC_AT).unwrap_or(&[]));
        if stored != computed {
            return Err(RecordError::Checksum { stored, computed });
        }
        if u32::from_le_bytes(take(b, 80)) != 0 {
            return Err(RecordError::FieldOutOfRange { field: "reserved" });
        }
        let wear = WearState::from_raw(
            u128::from_le_bytes(take(b, 12)),
            u64::from_le_bytes(take(b, 44)),
            u128::from_le_bytes(take(b, 28)),
        )
        .ok_or(RecordError::FieldOutOfRange { field: "wear" })?;
        let rotor = i64::from_le_bytes(take(b, 52));
        let lining = i64::from_le_bytes(take(b, 60));
        let thermal = ThermalState::from_raw(rotor, lining);
        if thermal.raw() != (rotor, lining) {
            return Err(RecordError::FieldOutOfRange {
                field: "temperature",
            });
        }
        Ok(Self {
            sequence: u32::from_le_bytes(take(b, 8)),
            wear,
            thermal,
            adaptation_factor: Ratio::from_bits(i32::from_le_bytes(take(b, 68))),
            estimator_covariance: i64::from_le_bytes(take(b, 72)),
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::indexing_slicing)]
mod tests {
    use super::*;
    use crate::units::{Celsius, Joules, Watts};
    use crate::wear::{WEAR_RATE_UNIT, WearConfig, WearParams};

    fn sample_record() -> StateRecord {
        let cfg = WearConfig::new(&WearParams {
            dt: 1e-3,
            bedding_energy: 5e6,
            specific_wear_rate: 0.4 * WEAR_RATE_UNIT,
            lining_area: 80e-4,
            initial_thickness: 0.01,
            minimum_thickness: 0.002,
        })
        .unwrap();
        let mut wear = WearState::with_history(&cfg, Joules::from_num(3.3e6));
        wear.update(&cfg, Watts::from_num(12_345.678));
        let thermal =
            ThermalState::with_temperatures(Celsius::from_num(180.25), Celsius::from_num(240.5));
        StateRecord::new(42, &wear, &thermal, Ratio::from_num(0.93), -123_456_789)
    }

    #[test]
    fn round_trip_is_exact() {
        let r = sample_record();
        let back = StateRecord::from_bytes(&r.to_bytes()).unwrap();
        assert_eq!(back, r);
        assert_eq!(back.wear().raw(), r.wear().raw());
        assert_eq!(back.adaptation_factor(), Ratio::from_num(0.93));
        assert_eq!(back.estimator_covariance(), -123_456_789);
        assert_eq!(back.sequence(), 42);
    }

    // A CRC whose generator has more than one term detects every single-bit error [mem:
    // Peterson & Brown, Proc. IRE 49 (1961)]; checked here on every bit of the record.
    #[test]
    fn every_single_bit_flip_is_rejected() {
        let good = sample_record().to_bytes();
        for byte in 0..RECORD_LEN {
            for bit in 0..8 {
                let mut b = good;
                b[byte] ^= 1 << bit;
                assert!(
                    StateRecord::from_bytes(&b).is_err(),
                    "byte {byte} bit {bit}"
                );
            }
        }
    }

    #[test]
    fn every_truncation_and_extension_is_rejected() {
        let good = sample_record().to_bytes();
        for len in 0..RECORD_LEN {
            assert_eq!(
                StateRecord::from_bytes(&good[..len]),
                Err(RecordError::WrongLength { len })
            );
        }
        let mut long = [0u8; RECORD_LEN + 1];
        long[..RECORD_LEN].copy_from_slice(&good);
        assert_eq!(
            StateRecord::from_bytes(&long),
            Err(RecordError::WrongLength {
                len: RECORD_LEN + 1
            })
        );
    }

    /// Re-seal a modified record with a fresh CRC, to reach the checks behind the checksum.
    fn reseal(mut b: [u8; RECORD_LEN]) -> [u8; RECORD_LEN] {
        let crc = CRC32.checksum(&b[..CRC_AT]);
        b[CRC_AT..].copy_from_slice(&crc.to_le_bytes());
        b
    }

    #[test]
    fn wrong_version_magic_length_and_ranges_are_typed() {
        let good = sample_record().to_bytes();
        let mut v = good;
        v[4..6].copy_from_slice(&2u16.to_le_bytes());
        assert_eq!(
            StateRecord::from_bytes(&reseal(v)),
            Err(RecordError::UnsupportedVersion { version: 2 })
        );
        let mut m = good;
        m[0] = b'X';
        assert_eq!(
            StateRecord::from_bytes(&reseal(m)),
            Err(RecordError::BadMagic)
        );
        let mut l = good;
        l[6..8].copy_from_slice(&64u16.to_le_bytes());
        assert_eq!(
            StateRecord::from_bytes(&reseal(l)),
            Err(RecordError::LengthField { length: 64 })
        );
        let mut u = good;
        u[44..52].copy_from_slice(&((1u64 << 62) + 1).to_le_bytes());
        assert_eq!(
            StateRecord::from_bytes(&reseal(u)),
            Err(RecordError::FieldOutOfRange { field: "wear" })
        );
        let mut t = good;
        t[52..60].copy_from_slice(&i64::MAX.to_le_bytes());
        assert_eq!(
            StateRecord::from_bytes(&reseal(t)),
            Err(RecordError::FieldOutOfRange {
                field: "temperature"
            })
        );
        let mut r = good;
        r[80] = 1;
        assert_eq!(
            StateRecord::from_bytes(&reseal(r)),
            Err(RecordError::FieldOutOfRange { field: "reserved" })
        );
        assert!(format!("{}", RecordError::WrongLength { len: 3 }).contains("88"));
    }

    // CRC-32/ISO-HDLC check value: the CRC of "123456789" is 0xCBF43926 [pub: the CRC
    // catalogue's `check` field, as shipped in the crc-catalog crate].
    #[test]
    fn crc_is_the_standard_crc32() {
        assert_eq!(CRC32.checksum(b"123456789"), CRC_32_ISO_HDLC.check);
        assert_eq!(CRC_32_ISO_HDLC.check, 0xCBF4_3926);
    }
}
