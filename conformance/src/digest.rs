//! CRC-32 of the estimates of a block of samples: every field's raw bits, flags included, so
//! one differing bit anywhere names its block.

use clampwise_core::estimator::{ContactState, Estimate, SnapshotError};
use clampwise_core::state_record::{RecordError, ThermalNode};
use crc::{CRC_32_ISO_HDLC, Crc};

/// CRC-32/ISO-HDLC, table-driven (1 KiB in flash): it runs on every sample.
static CRC32: Crc<u32> = Crc::<u32>::new(&CRC_32_ISO_HDLC);

/// A running CRC-32 over estimates, bytes and decoder errors.
pub struct BlockDigest(crc::Digest<'static, u32>);

impl Default for BlockDigest {
    fn default() -> Self {
        Self::new()
    }
}

impl BlockDigest {
    /// An empty digest.
    pub fn new() -> Self {
        Self(CRC32.digest())
    }

    /// Hash raw bytes.
    pub fn bytes(&mut self, bytes: &[u8]) {
        self.0.update(bytes);
    }

    fn i32(&mut self, v: i32) {
        self.0.update(&v.to_le_bytes());
    }

    /// An option as a tag byte then the value (zero when absent).
    fn opt_i32(&mut self, v: Option<i32>) {
        self.0.update(&[u8::from(v.is_some())]);
        self.i32(v.unwrap_or(0));
    }

    /// Every field of an estimate, in declaration order, as raw bits (little-endian).
    pub fn estimate(&mut self, e: &Estimate) {
        self.opt_i32(e.torque.map(|t| t.to_bits()));
        self.opt_i32(e.holding_capacity.map(|t| t.to_bits()));
        self.i32(e.uncertainty.to_bits());
        self.i32(e.mu.to_bits());
        self.i32(e.effective_radius.to_bits());
        self.i32(e.clamp_force.to_bits());
        self.0.update(&[e.force_channels_used.bits()]);
        self.i32(e.lining_temperature.to_bits());
        self.i32(e.bedding.to_bits());
        self.i32(e.wear.to_bits());
        self.i32(e.correction.to_bits());
        self.0.update(&[state_code(e.state)]);
        self.0.update(&e.flags.bits().to_le_bytes());
    }

    /// A code per variant, then the variant's values as raw bits (not `Debug`: formatting a
    /// fixed-point value has panic paths of its own).
    fn error(&mut self, code: u8, values: [u32; 3]) {
        self.0.update(&[code]);
        for v in values {
            self.0.update(&v.to_le_bytes());
        }
    }

    /// Why a state record was refused.
    pub fn record_error(&mut self, e: &RecordError) {
        let u = |x: usize| u32::try_from(x).unwrap_or(u32::MAX);
        let b = |x: i32| x.cast_unsigned();
        let (code, values) = match *e {
            RecordError::WrongLength { len } => (1, [u(len), 0, 0]),
            RecordError::BadMagic => (2, [0; 3]),
            RecordError::UnsupportedVersion { version } => (3, [u32::from(version), 0, 0]),
            RecordError::LengthField { length } => (4, [u32::from(length), 0, 0]),
            RecordError::Checksum { stored, computed } => (5, [stored, computed, 0]),
            RecordError::ReservedNotZero => (6, [0; 3]),
            RecordError::EnergyOutOfRange => (7, [0; 3]),
            RecordError::BeddingOutOfRange => (8, [0; 3]),
            RecordError::TemperatureOutOfRange { node } => {
                (9, [u32::from(node == ThermalNode::Lining), 0, 0])
            }
            RecordError::ConfigMismatch { record, config } => (10, [record, config, 0]),
            RecordError::BeddingContradictsEnergy { bedding, expected } => {
                (11, [b(bedding.to_bits()), b(expected.to_bits()), 0])
            }
            RecordError::ThicknessLossBeyondLining { loss, lining } => {
                (12, [b(loss.to_bits()), b(lining.to_bits()), 0])
            }
            RecordError::ThicknessLossContradictsEnergy { loss, expected } => {
                (13, [b(loss.to_bits()), b(expected.to_bits()), 0])
            }
            RecordError::TwoTemperaturesOneNode => (14, [0; 3]),
            RecordError::CorrectionOutOfBand { factor, min, max } => (
                15,
                [b(factor.to_bits()), b(min.to_bits()), b(max.to_bits())],
            ),
            RecordError::CovarianceOutOfRange {
                covariance,
                min,
                max,
            } => (
                16,
                [b(covariance.to_bits()), b(min.to_bits()), b(max.to_bits())],
            ),
            _ => (255, [0; 3]),
        };
        self.error(code, values);
    }

    /// Why a snapshot was refused.
    pub fn snapshot_error(&mut self, e: &SnapshotError) {
        let u = |x: usize| u32::try_from(x).unwrap_or(u32::MAX);
        let (code, values) = match *e {
            SnapshotError::BufferTooSmall { len, needed } => (101, [u(len), u(needed), 0]),
            SnapshotError::WrongLength { len, expected } => (102, [u(len), u(expected), 0]),
            SnapshotError::BadMagic => (103, [0; 3]),
            SnapshotError::UnsupportedVersion { version } => (104, [u32::from(version), 0, 0]),
            SnapshotError::ChannelCount {
                snapshot,
                estimator,
            } => (105, [u32::from(snapshot), u(estimator), 0]),
            SnapshotError::Checksum { stored, computed } => (106, [stored, computed, 0]),
            SnapshotError::ConfigMismatch { snapshot, config } => (107, [snapshot, config, 0]),
            SnapshotError::InvalidValue { offset, field } => {
                self.0.update(field.as_bytes());
                (108, [u(offset), 0, 0])
            }
            _ => (254, [0; 3]),
        };
        self.error(code, values);
    }

    /// The CRC so far.
    pub fn finish(self) -> u32 {
        self.0.finalize()
    }
}

/// A fixed code per contact state (its index in `ContactState::ALL`).
pub const fn state_code(s: ContactState) -> u8 {
    match s {
        ContactState::Slipping => 0,
        ContactState::Holding => 1,
        ContactState::Released => 2,
        ContactState::SlipUnknown => 3,
        ContactState::Unavailable => 4,
    }
}

#[cfg(test)]
mod tests {
    use clampwise_core::flags::Flags;
    use clampwise_core::sensor::ChannelMask;
    use clampwise_core::units::{Celsius, Metres, NewtonMetres, Newtons, Ratio};

    use super::*;

    fn crc_of(e: &Estimate) -> u32 {
        let mut d = BlockDigest::new();
        d.estimate(e);
        d.finish()
    }

    #[test]
    fn one_bit_of_any_estimate_field_changes_the_hash() {
        // An arithmetic check of the harness itself: a comparison of hashes is only as good as
        // what goes into them, so every field (flags and channel mask included) must count.
        let base = Estimate {
            torque: Some(NewtonMetres::from_bits(1000)),
            holding_capacity: Some(NewtonMetres::from_bits(2000)),
            uncertainty: NewtonMetres::from_bits(30),
            mu: Ratio::from_bits(400),
            effective_radius: Metres::from_bits(500),
            clamp_force: Newtons::from_bits(600),
            force_channels_used: ChannelMask::from_bits(0b11),
            lining_temperature: Celsius::from_bits(700),
            bedding: Ratio::from_bits(800),
            wear: Metres::from_bits(900),
            correction: Ratio::ONE,
            state: ContactState::Slipping,
            flags: Flags::empty(),
        };
        let variants = [
            Estimate {
                torque: None,
                ..base
            },
            Estimate {
                torque: Some(NewtonMetres::from_bits(1001)),
                ..base
            },
            Estimate {
                holding_capacity: Some(NewtonMetres::from_bits(2001)),
                ..base
            },
            Estimate {
                uncertainty: NewtonMetres::from_bits(31),
                ..base
            },
            Estimate {
                mu: Ratio::from_bits(401),
                ..base
            },
            Estimate {
                effective_radius: Metres::from_bits(501),
                ..base
            },
            Estimate {
                clamp_force: Newtons::from_bits(601),
                ..base
            },
            Estimate {
                force_channels_used: ChannelMask::from_bits(0b10),
                ..base
            },
            Estimate {
                lining_temperature: Celsius::from_bits(701),
                ..base
            },
            Estimate {
                bedding: Ratio::from_bits(801),
                ..base
            },
            Estimate {
                wear: Metres::from_bits(901),
                ..base
            },
            Estimate {
                correction: Ratio::from_bits(Ratio::ONE.to_bits() - 1),
                ..base
            },
            Estimate {
                state: ContactState::Holding,
                ..base
            },
            Estimate {
                flags: Flags::SPEED_UNKNOWN,
                ..base
            },
        ];
        let reference = crc_of(&base);
        for (i, v) in variants.iter().enumerate() {
            assert_ne!(crc_of(v), reference, "variant {i} left the hash unchanged");
        }
    }

    #[test]
    fn crc_of_the_check_string_is_the_published_check_value() {
        // CRC-32/ISO-HDLC check value of "123456789": 0xCBF43926 (the CRC catalogue of
        // Greg Cook, "CRC RevEng"; also the `crc` crate's `CRC_32_ISO_HDLC.check`).
        let mut d = BlockDigest::new();
        d.bytes(b"123456789");
        assert_eq!(d.finish(), 0xCBF4_3926);
    }
}
