//! The f64 model: the same equations as the core's fixed-point models, written plainly in
//! floating point, independent of the fixed-point code. A test oracle: the integration tests and
//! the accuracy envelope (clampwise-benches) measure the fixed-point path against it. It is not
//! the simulator's plant (clampwise-sim has its own) and never runs in the per-sample path.
//!
//! - [`friction`]: bilinear μ table, stick/slip band, static-to-kinetic blend, drag.
//! - [`thermal`]: the lumped rotor/lining network integrated with classic RK4 and sub-steps
//!   (a different method from the fixed-point path's exact exponential).
//! - [`wear`]: compensated energy sum, bedding `1 − exp(−E/E₀)` in closed form, thickness loss.
//! - [`pipeline`]: the estimator's per-sample pipeline from conditioned clamp force to torque,
//!   holding capacity and ±, built on the three above, with r_e from the geometry and an f64
//!   scalar RLS adaptation.

pub mod friction;
pub mod pipeline;
pub mod thermal;
pub mod wear;
