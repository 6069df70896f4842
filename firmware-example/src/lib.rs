//! # clampwise-firmware-example (library part)
//!
//! The example firmware's application code, target-independent so it is unit-tested on the
//! host: the bridge-ADC driver ([`adc`]), the fixed-rate control loop over embedded-hal 1.0
//! traits ([`app`]), the core's estimator behind the loop's processing port ([`processor`]),
//! the HAL stub that plays a recorded trace ([`stub`]), the saved state on NOR flash
//! ([`saved_state`]), the device configuration and trace
//! generated at build time from the simulator's TOML ([`generated`]), the output line format
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
//! RamFlash ◄─► SavedState: restore at start, save every SAVE_INTERVAL_MS and on request
//! ```
#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]

pub mod adc;
pub mod app;
pub mod generated;
pub mod line;
pub mod processor;
pub mod replay;
pub mod saved_state;
pub mod stub;
