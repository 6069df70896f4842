//! Save and restore the slow state (wear, bedding, temperatures, adaptation) across power cycles
//! as a fixed-size byte record with a CRC-32, tied to the device configuration it was made for.
//!
//! ```text
//! Estimator::save(seq) ─► StateRecord::to_bytes ─► [u8; 88] ─► non-volatile memory
//! non-volatile memory ─► StateRecord::from_bytes   (framing, CRC, ranges that need no config)
//!                     ─► StateRecord::check(cfg)   (config checksum, ranges and consistency
//!                                                   against this configuration)
//!                     ─► Estimator::restore / Estimator::resume
//! ```
//!
//! A controller writes [`StateRecord::to_bytes`] to non-volatile memory now and then and reads
//! it back at start-up. A record that is truncated, has the wrong magic, version or length,
//! fails its CRC, was made for another configuration, or holds values no state of this
//! configuration can have is rejected with a [`RecordError`] naming the reason, never loaded:
//! the caller then starts from a new lining (or a conservative default) and should flag it.
//! [`crate::record_store`] keeps two copies on NOR flash so that a power cut in the middle of
//! a save leaves the previous record loadable.
//!
//! ## Layout (version 2, [`RECORD_LEN`] = 88 bytes, little-endian)
//!
//! | offset | size | field |
//! |---|---|---|
//! | 0 | 4 | magic `b"CWST"` |
//! | 4 | 2 | version = 2 |
//! | 6 | 2 | length = 88 |
//! | 8 | 4 | sequence (u32, serial-number order: see [`crate::record_store`]) |
//! | 12 | 4 | device configuration checksum ([`DeviceConfig::checksum`]) |
//! | 16 | 16 | energy, u128 Q64 J |
//! | 32 | 16 | thickness loss, u128 Q96 m |
//! | 48 | 8 | `1 − bedding`, u64 Q62 (≤ 2⁶²) |
//! | 56 | 8 | rotor temperature, i64 Q32 °C |
//! | 64 | 8 | lining temperature, i64 Q32 °C |
//! | 72 | 4 | adaptation factor on μ, [`Ratio`] bits (1.0 without adaptation) |
//! | 76 | 4 | adaptation covariance, [`Ratio`] bits (0 without adaptation) |
//! | 80 | 4 | reserved, must be 0 |
//! | 84 | 4 | CRC-32/ISO-HDLC of bytes 0..84 |
//!
//! Version 1 (no configuration checksum) is refused with [`RecordError::UnsupportedVersion`]:
//! it cannot show which configuration it belongs to.
//!
//! ## What is checked
//!
//! [`StateRecord::from_bytes`], in this order: length, magic, version, length field, CRC,
//! reserved word, then the ranges every configuration shares: energy within [`Joules`]
//! (`EnergyOutOfRange`), `1 − bedding` within 0 … 1 (`BeddingOutOfRange`), both temperatures
//! within the thermal state's −273 … 32 767 °C (`TemperatureOutOfRange`).
//!
//! [`StateRecord::check`], against one configuration, in this order:
//!
//! | error | rule |
//! |---|---|
//! | `ConfigMismatch` | the record's checksum is the configuration's [`DeviceConfig::checksum`] |
//! | `BeddingContradictsEnergy` | `1 − b` lies within [`BEDDING_AHEAD`] below and [`BEDDING_BEHIND`] above `exp(−E/E₀)` |
//! | `ThicknessLossBeyondLining` | the loss is at most the initial lining thickness |
//! | `ThicknessLossContradictsEnergy` | the loss is `min(k·E/A, initial)` within [`LOSS_TOLERANCE`] |
//! | `TwoTemperaturesOneNode` | without a lining node, lining and rotor temperature are equal |
//! | `CorrectionOutOfBand` | the adaptation factor lies in the configured band (exactly 1 without adaptation) |
//! | `CovarianceOutOfRange` | the covariance lies in the configured bounds (exactly 0 without adaptation) |
//!
//! The bedding and loss rules follow the wear model (`crate::wear`): both are functions of the
//! energy alone, up to the per-step truncation and the Taylor step. Their tolerances and the
//! histories they admit are stated at the constants. The checks use integers only (no floats,
//! no panics), so they run on the target at start-up.
//!
//! CRC-32 detects every single-bit error and every burst up to 32 bits; the tests flip every bit
//! and try every truncation.

use core::fmt;

use crc::{CRC_32_ISO_HDLC, Crc, NoTable};

use crate::thermal::ThermalState;
use crate::units::{Metres, Ratio};
use crate::wear::WearState;

#[cfg(doc)]
use crate::{config::DeviceConfig, units::Joules};

mod consistency;

pub use consistency::{BEDDING_AHEAD, BEDDING_BEHIND, LOSS_TOLERANCE};

/// Length of a record in bytes.
pub const RECORD_LEN: usize = 88;
/// Record magic.
pub const RECORD_MAGIC: [u8; 4] = *b"CWST";
/// Format version written and accepted.
pub const RECORD_VERSION: u16 = 2;

const CRC_AT: usize = RECORD_LEN - 4;
const RESERVED_AT: usize = 80;
// Bitwise (no 1 KiB table): a record is checked at start-up and written every few seconds.
const CRC32: Crc<u32, NoTable> = Crc::<u32, NoTable>::new(&CRC_32_ISO_HDLC);

/// A thermal node, as named in [`RecordError::TemperatureOutOfRange`].
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ThermalNode {
    /// The rotor (disc, drum or plate pack).
    Rotor,
    /// The lining.
    Lining,
}

/// Why a record was rejected. Each variant is one rule of the module docs' tables.
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
    /// The reserved word is not zero.
    ReservedNotZero,
    /// The energy is beyond the top of [`Joules`].
    EnergyOutOfRange,
    /// `1 − bedding` is above 1 (bedding below 0).
    BeddingOutOfRange,
    /// A temperature lies outside the thermal state's −273 … 32 767 °C.
    TemperatureOutOfRange {
        /// The node concerned.
        node: ThermalNode,
    },
    /// The record was made for another device configuration.
    ConfigMismatch {
        /// Configuration checksum in the record.
        record: u32,
        /// Checksum of the configuration it was offered to.
        config: u32,
    },
    /// The bedding is not the one the wear model gives for the record's energy.
    BeddingContradictsEnergy {
        /// Bedding in the record.
        bedding: Ratio,
        /// Bedding `1 − exp(−E/E₀)` for the record's energy.
        expected: Ratio,
    },
    /// The thickness loss is more than the whole lining.
    ThicknessLossBeyondLining {
        /// Thickness loss in the record (saturating at the top of [`Metres`]).
        loss: Metres,
        /// Initial lining thickness of the configuration.
        lining: Metres,
    },
    /// The thickness loss is not the one the wear model gives for the record's energy.
    ThicknessLossContradictsEnergy {
        /// Thickness loss in the record.
        loss: Metres,
        /// `min(k·E/A, initial thickness)` for the record's energy.
        expected: Metres,
    },
    /// The configuration has no lining node (lining = rotor), but the two temperatures differ.
    TwoTemperaturesOneNode,
    /// The adaptation factor lies outside the configured band (exactly 1 without adaptation).
    CorrectionOutOfBand {
        /// Factor in the record.
        factor: Ratio,
        /// Lower end of the band.
        min: Ratio,
        /// Upper end of the band.
        max: Ratio,
    },
    /// The adaptation covariance lies outside the configured bounds (exactly 0 without
    /// adaptation).
    CovarianceOutOfRange {
        /// Covariance in the record.
        covariance: Ratio,
        /// Lower bound.
        min: Ratio,
        /// Upper bound.
        max: Ratio,
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
            Self::ReservedNotZero => f.write_str("state record reserved word is not zero"),
            Self::EnergyOutOfRange => f.write_str("state record energy is out of range"),
            Self::BeddingOutOfRange => f.write_str("state record bedding is below 0"),
            Self::TemperatureOutOfRange { node } => write!(
                f,
                "state record {} temperature is outside -273 ..= 32767 °C",
                match node {
                    ThermalNode::Rotor => "rotor",
                    ThermalNode::Lining => "lining",
                }
            ),
            Self::ConfigMismatch { record, config } => write!(
                f,
                "state record was made for configuration {record:#010x}, this one is {config:#010x}"
            ),
            Self::BeddingContradictsEnergy { bedding, expected } => write!(
                f,
                "state record bedding {bedding} contradicts its energy (the wear model gives {expected})"
            ),
            Self::ThicknessLossBeyondLining { loss, lining } => write!(
                f,
                "state record thickness loss {loss} m is beyond the {lining} m lining"
            ),
            Self::ThicknessLossContradictsEnergy { loss, expected } => write!(
                f,
                "state record thickness loss {loss} m contradicts its energy (the wear model gives {expected} m)"
            ),
            Self::TwoTemperaturesOneNode => f.write_str(
                "state record has two temperatures but the thermal model has no lining node",
            ),
            Self::CorrectionOutOfBand { factor, min, max } => write!(
                f,
                "state record adaptation factor {factor} is outside {min} ..= {max}"
            ),
            Self::CovarianceOutOfRange {
                covariance,
                min,
                max,
            } => write!(
                f,
                "state record adaptation covariance {covariance} is outside {min} ..= {max}"
            ),
        }
    }
}

impl core::error::Error for RecordError {}

/// The persistent state of one brake or clutch, for one device configuration.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct StateRecord {
    sequence: u32,
    config_checksum: u32,
    wear: WearState,
    thermal: ThermalState,
    adaptation_factor: Ratio,
    adaptation_covariance: Ratio,
}

fn take<const N: usize>(bytes: &[u8; RECORD_LEN], at: usize) -> [u8; N] {
    bytes
        .get(at..at.saturating_add(N))
        .and_then(|s| <[u8; N]>::try_from(s).ok())
        .unwrap_or([0; N])
}

fn put(bytes: &mut [u8; RECORD_LEN], at: usize, v: &[u8]) {
    // Byte by byte rather than `copy_from_slice`: no length-mismatch panic path when the
    // optimiser keeps this function out of line (a C build of the core checks for any).
    if let Some(dst) = bytes.get_mut(at..at.saturating_add(v.len())) {
        for (d, s) in dst.iter_mut().zip(v) {
            *d = *s;
        }
    }
}

impl StateRecord {
    /// Capture the state for the configuration whose [`DeviceConfig::checksum`] is
    /// `config_checksum`. Without adaptation pass `Ratio::ONE` and `Ratio::ZERO`. Thermal flags
    /// and the last measured reading are not kept: they are re-derived after a restart.
    /// [`Estimator::save`](crate::estimator::Estimator::save) builds one from a running
    /// estimator.
    ///
    /// ```
    /// use clampwise_core::state_record::StateRecord;
    /// use clampwise_core::thermal::ThermalState;
    /// use clampwise_core::units::{Celsius, Ratio};
    /// use clampwise_core::wear::WearState;
    /// let rec = StateRecord::new(7, 0x1234_5678, &WearState::new(),
    ///     &ThermalState::with_temperatures(Celsius::lit("35"), Celsius::lit("40")),
    ///     Ratio::ONE, Ratio::ZERO);
    /// let bytes = rec.to_bytes();
    /// assert_eq!(StateRecord::from_bytes(&bytes), Ok(rec));
    /// ```
    pub fn new(
        sequence: u32,
        config_checksum: u32,
        wear: &WearState,
        thermal: &ThermalState,
        adaptation_factor: Ratio,
        adaptation_covariance: Ratio,
    ) -> Self {
        let (rotor, lining) = thermal.raw();
        Self {
            sequence,
            config_checksum,
            wear: *wear,
            thermal: ThermalState::from_bits(rotor, lining),
            adaptation_factor,
            adaptation_covariance,
        }
    }

    /// Write sequence number (serial-number order: see [`crate::record_store`]).
    pub const fn sequence(&self) -> u32 {
        self.sequence
    }

    /// [`DeviceConfig::checksum`] of the configuration the record was made for.
    pub const fn config_checksum(&self) -> u32 {
        self.config_checksum
    }

    /// The wear and bedding state.
    pub const fn wear(&self) -> WearState {
        self.wear
    }

    /// The thermal state (temperatures; flags cleared).
    pub const fn thermal(&self) -> ThermalState {
        self.thermal
    }

    /// Adaptation factor on μ (1 without adaptation).
    pub const fn adaptation_factor(&self) -> Ratio {
        self.adaptation_factor
    }

    /// Adaptation covariance (0 without adaptation).
    pub const fn adaptation_covariance(&self) -> Ratio {
        self.adaptation_covariance
    }

    /// Encode as a record with checksum.
    ///
    /// ```
    /// use clampwise_core::state_record::{RECORD_LEN, StateRecord};
    /// # use clampwise_core::{thermal::ThermalState, units::{Celsius, Ratio}, wear::WearState};
    /// # let rec = StateRecord::new(1, 0, &WearState::new(), &ThermalState::with_temperatures(Celsius::ZERO, Celsius::ZERO), Ratio::ONE, Ratio::ZERO);
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
        put(&mut b, 12, &self.config_checksum.to_le_bytes());
        put(&mut b, 16, &energy.to_le_bytes());
        put(&mut b, 32, &loss.to_le_bytes());
        put(&mut b, 48, &unbedded.to_le_bytes());
        put(&mut b, 56, &rotor.to_le_bytes());
        put(&mut b, 64, &lining.to_le_bytes());
        put(&mut b, 72, &self.adaptation_factor.to_bits().to_le_bytes());
        put(
            &mut b,
            76,
            &self.adaptation_covariance.to_bits().to_le_bytes(),
        );
        let crc = CRC32.checksum(b.get(..CRC_AT).unwrap_or(&[]));
        put(&mut b, CRC_AT, &crc.to_le_bytes());
        b
    }

    /// Decode a record and check what needs no configuration: framing, CRC and the ranges
    /// every configuration shares. Follow with [`StateRecord::check`] before loading it.
    ///
    /// # Errors
    /// [`RecordError::WrongLength`], [`RecordError::BadMagic`],
    /// [`RecordError::UnsupportedVersion`], [`RecordError::LengthField`],
    /// [`RecordError::Checksum`], [`RecordError::ReservedNotZero`],
    /// [`RecordError::EnergyOutOfRange`], [`RecordError::BeddingOutOfRange`],
    /// [`RecordError::TemperatureOutOfRange`], checked in that order.
    ///
    /// ```
    /// use clampwise_core::state_record::{RecordError, StateRecord};
    /// # use clampwise_core::{thermal::ThermalState, units::{Celsius, Ratio}, wear::WearState};
    /// # let rec = StateRecord::new(1, 0, &WearState::new(), &ThermalState::with_temperatures(Celsius::ZERO, Celsius::ZERO), Ratio::ONE, Ratio::ZERO);
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
        if u32::from_le_bytes(take(b, RESERVED_AT)) != 0 {
            return Err(RecordError::ReservedNotZero);
        }
        let energy = u128::from_le_bytes(take(b, 16));
        let unbedded = u64::from_le_bytes(take(b, 48));
        if energy > crate::wear::ENERGY_MAX_Q64 {
            return Err(RecordError::EnergyOutOfRange);
        }
        let wear = WearState::from_bits(energy, unbedded, u128::from_le_bytes(take(b, 32)))
            .ok_or(RecordError::BeddingOutOfRange)?;
        let rotor = i64::from_le_bytes(take(b, 56));
        let lining = i64::from_le_bytes(take(b, 64));
        let thermal = ThermalState::from_bits(rotor, lining);
        let (rotor_held, lining_held) = thermal.raw();
        if rotor_held != rotor {
            return Err(RecordError::TemperatureOutOfRange {
                node: ThermalNode::Rotor,
            });
        }
        if lining_held != lining {
            return Err(RecordError::TemperatureOutOfRange {
                node: ThermalNode::Lining,
            });
        }
        Ok(Self {
            sequence: u32::from_le_bytes(take(b, 8)),
            config_checksum: u32::from_le_bytes(take(b, 12)),
            wear,
            thermal,
            adaptation_factor: Ratio::from_bits(i32::from_le_bytes(take(b, 72))),
            adaptation_covariance: Ratio::from_bits(i32::from_le_bytes(take(b, 76))),
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
        let cfg = WearConfig::new(
            &WearParams {
                bedding_energy: 5e6,
                specific_wear_rate: 0.4 * WEAR_RATE_UNIT,
                lining_area: 80e-4,
                initial_thickness: 0.01,
                minimum_thickness: 0.002,
            },
            1e-3,
        )
        .unwrap();
        let mut wear = WearState::with_history(&cfg, Joules::from_num(3.3e6));
        wear.update(&cfg, Watts::from_num(12_345.678));
        let thermal =
            ThermalState::with_temperatures(Celsius::from_num(180.25), Celsius::from_num(240.5));
        StateRecord::new(
            42,
            0xDEAD_BEEF,
            &wear,
            &thermal,
            Ratio::from_num(0.93),
            Ratio::from_num(0.125),
        )
    }

    #[test]
    fn round_trip_is_exact() {
        let r = sample_record();
        let back = StateRecord::from_bytes(&r.to_bytes()).unwrap();
        assert_eq!(back, r);
        assert_eq!(back.wear().raw(), r.wear().raw());
        assert_eq!(back.adaptation_factor(), Ratio::from_num(0.93));
        assert_eq!(back.adaptation_covariance(), Ratio::from_num(0.125));
        assert_eq!(back.sequence(), 42);
        assert_eq!(back.config_checksum(), 0xDEAD_BEEF);
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
        let with = |at: usize, v: &[u8]| {
            let mut b = good;
            b[at..at + v.len()].copy_from_slice(v);
            StateRecord::from_bytes(&reseal(b))
        };
        assert_eq!(
            with(4, &1u16.to_le_bytes()),
            Err(RecordError::UnsupportedVersion { version: 1 })
        );
        assert_eq!(with(0, b"X"), Err(RecordError::BadMagic));
        assert_eq!(
            with(6, &64u16.to_le_bytes()),
            Err(RecordError::LengthField { length: 64 })
        );
        assert_eq!(with(80, &[1]), Err(RecordError::ReservedNotZero));
        assert_eq!(
            with(16, &(crate::wear::ENERGY_MAX_Q64 + 1).to_le_bytes()),
            Err(RecordError::EnergyOutOfRange)
        );
        assert!(with(16, &crate::wear::ENERGY_MAX_Q64.to_le_bytes()).is_ok());
        assert_eq!(
            with(48, &((1u64 << 62) + 1).to_le_bytes()),
            Err(RecordError::BeddingOutOfRange)
        );
        assert_eq!(
            with(56, &i64::MAX.to_le_bytes()),
            Err(RecordError::TemperatureOutOfRange {
                node: ThermalNode::Rotor
            })
        );
        // −274 °C: below absolute zero.
        assert_eq!(
            with(64, &(-274i64 << 32).to_le_bytes()),
            Err(RecordError::TemperatureOutOfRange {
                node: ThermalNode::Lining
            })
        );
        assert!(format!("{}", RecordError::WrongLength { len: 3 }).contains("88"));
    }

    // CRC-32/ISO-HDLC check value: the CRC of "123456789" is 0xCBF43926 [pub: Greg Cook,
    // "Catalogue of parametrised CRC algorithms", CRC-32/ISO-HDLC check value].
    #[test]
    fn crc_is_the_standard_crc32() {
        assert_eq!(CRC32.checksum(b"123456789"), 0xCBF4_3926);
    }

    // The layout table of the module docs, field by field.
    #[test]
    fn layout_is_the_documented_one() {
        let r = sample_record();
        let b = r.to_bytes();
        let (energy, unbedded, loss) = r.wear().raw();
        let (rotor, lining) = r.thermal().raw();
        assert_eq!(&b[0..4], b"CWST");
        assert_eq!(b[4..6], 2u16.to_le_bytes());
        assert_eq!(b[6..8], 88u16.to_le_bytes());
        assert_eq!(b[8..12], 42u32.to_le_bytes());
        assert_eq!(b[12..16], 0xDEAD_BEEFu32.to_le_bytes());
        assert_eq!(b[16..32], energy.to_le_bytes());
        assert_eq!(b[32..48], loss.to_le_bytes());
        assert_eq!(b[48..56], unbedded.to_le_bytes());
        assert_eq!(b[56..64], rotor.to_le_bytes());
        assert_eq!(b[64..72], lining.to_le_bytes());
        assert_eq!(b[72..76], Ratio::from_num(0.93).to_bits().to_le_bytes());
        assert_eq!(b[76..80], Ratio::from_num(0.125).to_bits().to_le_bytes());
        assert_eq!(b[80..84], [0; 4]);
    }
}
