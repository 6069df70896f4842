//! # clampwise-firmware-example (library part)
//!
//! The example firmware's application code, target-independent so it is unit-tested on the
//! host: the bridge-ADC driver ([`adc`]), the fixed-rate control loop over embedded-hal 1.0
//! traits ([`app`]), the per-sample processing step ([`processor`]), the HAL stub that plays a
//! recorded trace ([`stub`]), the build-time constants ([`generated`]), the output line format
//! ([`line`](mod@line)) and the replay that wires them together ([`replay`]). The binary (`src/main.rs`)
//! adds only the Cortex-M entry point, the output sink and the panic handler.
//!
//! **Caution.** The output is an estimate, not a certified safety function. Validate on the
//! bench for each lining and geometry and follow the applicable functional-safety process
//! (ISO 26262 / IEC 61508 / ISO 13849), local codes and licensed engineering practice.
//!
//! ```text
//! TraceAdc ─SPI frames─► BridgeAdc ─counts[CH]─┐
//! TraceSpeeds ─ω_in, ω_out──────────────────────┼─► Processor::step ─► Outcome ─► fault / warning pins
//! TraceDelay ◄─ one period per sample ──────────┘                             └─► Line ─► LineSink
//! ```
#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]

pub mod adc;
pub mod app;
pub mod generated;
pub mod line;
pub mod processor;
pub mod replay;
pub mod stub;

/// The build script's float → raw-bits rule, compiled here only to test it against `fixed`.
#[cfg(test)]
#[path = "../build/quantise.rs"]
mod quantise;

#[cfg(test)]
mod quantise_tests {
    #![allow(clippy::unwrap_used)]
    use fixed::FixedI32;
    use fixed::types::extra::{U8, U16, U24, U30};
    use proptest::prelude::*;

    fn agrees(v: f64) {
        // Reference: the `fixed` crate's own conversion, which the core's `from_f64` uses.
        assert_eq!(
            super::quantise::to_bits(v, 8),
            FixedI32::<U8>::checked_from_num(v).map(FixedI32::to_bits),
            "{v} U8"
        );
        assert_eq!(
            super::quantise::to_bits(v, 16),
            FixedI32::<U16>::checked_from_num(v).map(FixedI32::to_bits),
            "{v} U16"
        );
        assert_eq!(
            super::quantise::to_bits(v, 24),
            FixedI32::<U24>::checked_from_num(v).map(FixedI32::to_bits),
            "{v} U24"
        );
        assert_eq!(
            super::quantise::to_bits(v, 30),
            FixedI32::<U30>::checked_from_num(v).map(FixedI32::to_bits),
            "{v} U30"
        );
    }

    #[test]
    fn edges_agree_with_fixed() {
        // Ties (half an LSB), the ends of each range, just outside them, and non-finite values.
        for v in [
            0.0,
            -0.0,
            0.5 / 256.0,
            1.5 / 256.0,
            -0.5 / 256.0,
            2.0,
            -2.0,
            1.999_999_999,
            127.999_999_97,
            -128.0,
            8_388_607.996,
            -8_388_608.0,
            8_388_608.0,
            1e300,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::MIN_POSITIVE,
        ] {
            agrees(v);
        }
    }

    proptest! {
        #[test]
        fn random_values_agree_with_fixed(v in -1e7f64..1e7, k in -40i32..10) {
            agrees(v * 2f64.powi(k));
        }
    }
}
