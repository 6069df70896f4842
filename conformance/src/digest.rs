//! CRC-32 of the estimates of a block of samples: every field's raw bits, flags included, so
//! one differing bit anywhere names its block.

use core::fmt;

use clampwise_core::estimator::{ContactState, Estimate};
use crc::{CRC_32_ISO_HDLC, Crc};

/// CRC-32/ISO-HDLC, table-driven (1 KiB in flash): it runs on every sample.
static CRC32: Crc<u32> = Crc::<u32>::new(&CRC_32_ISO_HDLC);

/// A running CRC-32 over estimates and bytes. As `fmt::Write`, it hashes formatted text (the
/// `Debug` form of an error).
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

    /// The CRC so far.
    pub fn finish(self) -> u32 {
        self.0.finalize()
    }
}

impl fmt::Write for BlockDigest {
    fn write_str(&mut self, s: &str) -> fmt::Result {
        self.0.update(s.as_bytes());
        Ok(())
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
    use super::*;

    #[test]
    fn crc_of_the_check_string_is_the_published_check_value() {
        // CRC-32/ISO-HDLC check value of "123456789": 0xCBF43926 (the CRC catalogue of
        // Greg Cook, "CRC RevEng"; also the `crc` crate's `CRC_32_ISO_HDLC.check`).
        let mut d = BlockDigest::new();
        d.bytes(b"123456789");
        assert_eq!(d.finish(), 0xCBF4_3926);
    }
}
