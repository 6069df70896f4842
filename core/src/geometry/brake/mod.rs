//! Contacts whose torque is not linear in μ: pivoted and block shoes on a drum, band brakes,
//! and cone engagement with the axial friction term.
//!
//! Flat and plain-cone faces give T = n·μ·F·r_e. Here the measured force F is the *actuating*
//! force (spring, thruster or lever force) and the lever balance itself contains μ, so
//! T = F·g(μ) with g non-linear ([`TorqueGain`]). Like the rest of [`crate::geometry`] this
//! works in f64 (libm, `no_std`, no allocation) at build time only; the per-sample step will use
//! tables of g(μ). Every model validates its inputs ([`BrakeError`] names the parameter by its
//! configuration key) and none panics.
//!
//! Units: lengths m, angles rad, forces N, pressure Pa, g in m (N·m of torque per N of
//! actuating force). μ ≥ 0. Signs: the torque and g are magnitudes opposing the drum's rotation;
//! *leading* means the friction moment about the pivot adds to the actuating moment.
//!
//! | model | g(μ) | locks at | S(μ) |
//! |---|---|---|---|
//! | [`PivotedShoe`], long, p ∝ sin θ | c·r·K·μ / (a·I_N ∓ μ·\|I_f\|) | a·I_N / \|I_f\| (leading) | a·I_N / (a·I_N ∓ μ·\|I_f\|) |
//! | [`BlockShoe`], short | r·a·μ / (b ∓ μ·c) | b / c (leading) | b / (b ∓ μ·c) |
//! | [`ShoePair`], one F | g₁ + g₂ | first of the two | weighted by g |
//! | [`SimpleBand`], slack end on lever | (L/s)·r·(e^{μφ} − 1) | never | μφ·e^{μφ}/(e^{μφ} − 1) ≥ 1 |
//! | [`SimpleBand`], tight end on lever | (L/s)·r·(1 − e^{−μφ}) | never | μφ/(e^{μφ} − 1) ≤ 1 |
//! | [`DifferentialBand`] | L·r·(e^{μφ} − 1) / (s₂ − s₁·e^{μφ}) | ln(s₂/s₁)/φ | > 1 |
//! | [`ConeEngagement`] | μ·r_e / (sin α ± μ·cos α) | tan α (held) | ≶ 1 |
//!
//! (Upper sign leading; formulas and their sources in each module's docs.)
//!
//! # How S(μ) amplifies δμ
//!
//! S(μ) = (dg/dμ)·μ/g is the factor between a relative error in μ and the relative error in
//! torque: δT/T ≈ S·δμ/μ. On a flat face S = 1. A leading shoe multiplies: for an internal
//! shoe of 300 mm drum, lining 0°…126°, pin at 122.7 mm (the proportions of Shigley's worked
//! internal-shoe example) at μ = 0.32, S = 1.63, so a 10 % error in μ becomes 16 % in torque;
//! its trailing twin has S = 0.72, and the leading–trailing pair driven by one force S = 1.35.
//! S grows without bound as μ approaches the locking value: a shoe designed close to locking
//! turns a small rise in μ (cold, damp or contaminated lining) into a large rise in torque,
//! and a small fall into a large fall. Take this into any uncertainty derived from δμ.
//!
//! These are estimates from rigid-shoe, uniform-band and Coulomb-friction idealisations, not a
//! certified safety function.
//!
//! ```
//! use clampwise_core::geometry::brake::{
//!     Mounting, PivotedShoe, ShoeAction, ShoeGeometry, ShoePair, TorqueGain,
//! };
//! // A fictional crane drum brake: two external pivoted shoes squeezed by one spring.
//! let geometry = ShoeGeometry {
//!     drum_radius_m: 0.200,
//!     pin_distance_m: 0.260,
//!     arc_start_rad: 25f64.to_radians(),
//!     arc_end_rad: 125f64.to_radians(),
//!     face_width_m: 0.080,
//!     actuation_arm_m: 0.480,
//! };
//! let brake = ShoePair::new(
//!     PivotedShoe::new(geometry, Mounting::External, ShoeAction::Leading)?,
//!     PivotedShoe::new(geometry, Mounting::External, ShoeAction::Trailing)?,
//! );
//! let torque_nm = 5_000.0 * brake.torque_per_force(0.4)?;
//! assert!(torque_nm > 0.0 && brake.sensitivity(0.4)? > 1.0);
//! # Ok::<(), clampwise_core::geometry::brake::BrakeError>(())
//! ```

mod band;
mod block;
mod cone_engagement;
mod error;
mod fractional;
mod gain;
mod pair;
mod shoe;

pub use band::{DifferentialBand, LeverEnd, SimpleBand, TightEndMoment};
pub use block::{BlockGeometry, BlockShoe};
pub use cone_engagement::{ConeEngagement, ConePhase};
pub use error::{BrakeError, BrakeParameter};
pub use gain::TorqueGain;
pub use pair::ShoePair;
pub use shoe::{Mounting, PivotedShoe, ShoeAction, ShoeGeometry, ShoeMoments};
