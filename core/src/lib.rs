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
#![cfg_attr(not(test), no_std)]
#![forbid(unsafe_code)]

// The f64 reference models use std's float functions; host only.
#[cfg(feature = "std")]
extern crate std;

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
