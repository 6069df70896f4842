//! Constants generated at build time by `build.rs` from `config/demo.toml` (or the file named by
//! `CLAMPWISE_FW_CONFIG`) and the trace it names: the configuration, the effective-radius table,
//! their checksum and the recorded trace. All are `const` or `static`, so they live in flash.
//!
//! [`GENERATED_CRC32`] is CRC-32/ISO-HDLC over the little-endian 32-bit raw bits of, in order:
//! the force breakpoints, the bedding breakpoints, the radius values row by row, the gains, the
//! offsets, [`BEDDING`], [`FAULT_RELEASE_SAMPLES`] and [`SAMPLE_PERIOD_NS`]. [`checksum`]
//! recomputes it from the constants as stored, so a table that does not match its generator
//! (or flash that changed) is caught at start-up.
//!
//! ```
//! use clampwise_firmware_example::generated::{checksum, GENERATED_CRC32};
//! assert_eq!(checksum(), GENERATED_CRC32);
//! ```
#![allow(clippy::unreadable_literal)]

use clampwise_core::table::Table2;
use clampwise_core::units::{Metres, Newtons, RadPerSec, Ratio};

use crate::processor::{Gain, RadiusTable};
use crate::stub::{TraceCell, TraceSample};

include!(concat!(env!("OUT_DIR"), "/generated.rs"));

const CRC32: crc::Crc<u32, crc::NoTable> =
    crc::Crc::<u32, crc::NoTable>::new(&crc::CRC_32_ISO_HDLC);

/// CRC-32 of the generated configuration and table as stored (see the module docs).
pub fn checksum() -> u32 {
    let mut digest = CRC32.digest();
    let mut put = |bits: i32| digest.update(&bits.to_le_bytes());
    RADIUS_TABLE
        .x_breakpoints()
        .iter()
        .for_each(|v| put(v.to_bits()));
    RADIUS_TABLE
        .y_breakpoints()
        .iter()
        .for_each(|v| put(v.to_bits()));
    RADIUS_TABLE
        .values()
        .iter()
        .flatten()
        .for_each(|v| put(v.to_bits()));
    GAINS.iter().for_each(|v| put(v.to_bits()));
    OFFSETS_COUNTS.iter().for_each(|&v| put(v));
    put(BEDDING.to_bits());
    put(i32::from(FAULT_RELEASE_SAMPLES));
    put(i32::from_le_bytes(SAMPLE_PERIOD_NS.to_le_bytes()));
    digest.finalize()
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    #[test]
    fn crc32_matches_catalogue_check_value() {
        // [pub] Greg Cook, "Catalogue of parametrised CRC algorithms": CRC-32/ISO-HDLC check
        // ("123456789") = 0xCBF43926.
        assert_eq!(CRC32.checksum(b"123456789"), 0xCBF4_3926);
    }

    #[test]
    fn stored_constants_match_their_checksum() {
        assert_eq!(checksum(), GENERATED_CRC32);
    }

    #[test]
    fn table_holds_the_annulus_radii() {
        // [pub] Shigley's MED ch. 16, annulus: uniform pressure (bedding 0)
        // r_e = (2/3)(Ro³−Ri³)/(Ro²−Ri²), uniform wear (bedding 1) r_e = (Ro+Ri)/2. The radii
        // here are the stored (I8F24-rounded) ones, hence 1.5 LSB rather than ½.
        let (ro, ri): (f64, f64) = (OUTER_RADIUS.to_num(), INNER_RADIUS.to_num());
        let up = 2.0 / 3.0 * (ro.powi(3) - ri.powi(3)) / (ro.powi(2) - ri.powi(2));
        let uw = 0.5 * (ro + ri);
        let lsb = 1.0 / f64::from(1 << 24);
        let bedding = RADIUS_TABLE.y_breakpoints();
        for row in RADIUS_TABLE.values() {
            for (r, b) in row.iter().zip(bedding) {
                let b: f64 = b.to_num();
                let expected = (1.0 - b) * up + b * uw;
                let r: f64 = r.to_num();
                assert!(
                    (r - expected).abs() <= 1.5 * lsb,
                    "{r} vs {expected} at bedding {b}"
                );
            }
        }
    }

    #[test]
    fn trace_has_the_configured_shape() {
        assert!(!TRACE.is_empty());
        assert_eq!(GAINS.len(), CHANNELS);
        assert!(
            TRACE
                .iter()
                .flat_map(|s| s.counts.iter())
                .any(|c| matches!(c, TraceCell::Counts(_)))
        );
    }
}
