//! # clampwise-core
//!
//! A `no_std`, allocation-free, panic-free, fixed-point core that turns clamp-force sensor
//! readings into live brake or clutch friction torque.
//!
//! **Caution.** The output is an *estimate*, validated only as far as its tests. It is not a
//! certified safety function. Validate it on the bench for each lining and geometry, and follow
//! the applicable functional-safety process (ISO 26262, IEC 61508, ISO 13849 or the machine's
//! own standard), local codes and licensed engineering practice.
//!
//! ## Data flow
//!
//! ```text
//! build time (f64, libm):
//!   geometry::Disc + shape (annulus | sector | button | polygon) + faces n + cone α?
//!     = geometry::Contact ─► r_up, r_uw ─► lever arm (r_e / sin α) at each bedding
//!     ─► geometry::build_radius_table ─► RadiusTable (Table2: F × bedding → m) ── in flash
//! per sample (integers only):
//!   raw counts ─ sensor ─► clamp force F
//!   F, bedding ─ radius table ─► lever arm r_e;   T_lining, |v| ─ μ table ─► μ
//!   torque = −sign(v) · n · μ · F · r_e
//! ```
//!
//! Floats (via `libm`) appear only where tables are built ([`geometry`]); the per-sample path
//! uses the fixed-point types of [`units`] and integer arithmetic only.
//!
//! ## Units, ranges and resolutions
//!
//! See [`units`] for the table of every quantity's Q format.
//!
//! ## Friction, thermal and wear state: measured error of the fixed-point path
//!
//! Each model is checked against its f64 reference (`reference`, feature `std`) over the
//! envelope (−50…1000 °C, ±2000 rad/s, 0…10 MW, dt 0.1…10 ms); worst cases measured:
//!
//! | model | quantity | worst case |
//! |---|---|---|
//! | [`friction`] | μ (kinetic, blended) / static μ | 2.1 / 1.8 LSB of `Ratio` (≤ 2·10⁻⁹) |
//! | [`friction`] | drag torque | 0.9 LSB of `NewtonMetres` (0.22 mN·m) |
//! | [`friction`] | stick/slip, direction, clamped | identical |
//! | [`thermal`] | rotor and lining temperature | 7.7·10⁻⁶ K (½ LSB of `Celsius`) |
//! | [`wear`] | energy / bedding / thickness loss | 1 LSB each (15 µJ / 9.3·10⁻¹⁰ / 60 nm) |
#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]

// The f64 reference models use std's float functions; host only.
#[cfg(feature = "std")]
extern crate std;

pub mod adapt;
pub mod config;
pub mod estimator;
pub mod flags;
pub mod friction;
pub mod geometry;
pub mod record;
#[cfg(feature = "std")]
pub mod reference;
pub mod sae_j866;
pub mod sensor;
pub mod table;
pub mod thermal;
pub mod units;
pub mod wear;
