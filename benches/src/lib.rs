//! # clampwise-benches
//!
//! Benchmarks and budgets of the clampwise core: the cost of one `Estimator::step` (criterion
//! on the host, callgrind instruction counts, QEMU instruction counts on Cortex-M), against a
//! plain f32 implementation of the same physics; and the accuracy envelope of the fixed-point
//! pipeline against the f64 model of clampwise-tests. `BENCHMARKS.md` at the repository root says how
//! to run each and what the numbers mean.
//!
//! Without the default `std` feature the library is `no_std` (the devices, the input
//! generator and the f32 baseline), for the Cortex-M instruction counter.
//!
//! **Caution.** clampwise gives an estimate, not a certified safety function; validate on the
//! bench and follow the applicable functional-safety process.
#![cfg_attr(not(feature = "std"), no_std)]

pub mod baseline;
pub mod device;
#[cfg(feature = "std")]
pub mod envelope;
pub mod plain_diagnostics;
pub mod plain_f32;
pub mod run;
pub mod workload;
