//! # clampwise-convert
//!
//! The f64 ↔ fixed-point layer around the clampwise core: a trace sample in SI units becomes
//! the core's fixed-point `Inputs`, the core's `Estimate` becomes a row in SI units, and
//! [`CoreEstimator`] runs the core's `Estimator::step` (the code a firmware runs) on each
//! sample, for whichever channel count (1 … 4) the config has.
//!
//! The `clampwise` command line (clampwise-sim), the firmware example's host test and future
//! C/Python bindings share it, so they all feed the core the same bits and read back the same
//! numbers. It carries no command-line, CSV or plotting dependency.
//!
//! **Caution.** The rows are an *estimate*, not a certified safety function; see the core's
//! crate docs.
//!
//! ```text
//! TraceSample (f64, SI) ─ core_inputs ─► Inputs<C> (fixed point) ─ Estimator::step ─► Estimate
//!                                                                    │ estimate_row (exact)
//!                                                                    ▼
//!                                                               EstimateRow (f64, SI)
//! ```
//!
//! ## Units
//!
//! | quantity | in ([`TraceSample`]) | out ([`EstimateRow`]) |
//! |---|---|---|
//! | force | raw ADC counts, or N through the channel calibration ([`ChannelCal`]) | clamp force, N |
//! | speed | rad/s (input and output shaft) | slip speed rad/s |
//! | temperature | °C (lining, ambient) | lining temperature, °C |
//! | torque | reference torque, N·m | torque, holding capacity, uncertainty, N·m |
//! | other | actuator command in its column's unit | μ, radius m, bedding 0…1, wear m |
//!
//! ## Exactness
//!
//! In: each value as the fixed type's `saturating_from_num` gives it (round to nearest, ties to
//! even; NaN as 0), computed by direct scaling in [`saturating_fixed`]. Out: each fixed-point
//! value as `to_num::<f64>()` gives it, computed in [`fixed_to_f64`]; exact, so the row holds
//! the core's bits. Both are bit-identical to the `fixed` crate's (property test).
//!
//! ## Example
//!
//! ```
//! use clampwise_convert::{Channel, ContactState, TraceSample, new_estimator};
//! use clampwise_device::build_core::CoreDevice;
//! use clampwise_device::config::LoadedConfig;
//!
//! let cfg = LoadedConfig::from_str(clampwise_device::DEMO_CONFIG, "demo.toml").unwrap();
//! let core = CoreDevice::build(&cfg.config).unwrap();
//! let mut est = new_estimator(&cfg.config, &core).unwrap();
//! let s = TraceSample {
//!     force: [Channel::Newtons(30_000.0); 4], // N, through each channel's calibration
//!     force_valid: [true; 4],
//!     omega_in_rad_s: 2.0,
//!     temp_c: Some(100.0),
//!     ..TraceSample::default()
//! };
//! let mut row = est.step(&s);
//! for _ in 0..200 {
//!     row = est.step(&s); // the core's force filter settles
//! }
//! assert_eq!(row.state, ContactState::Slipping);
//! assert!(row.torque_nm.unwrap() < 0.0); // N·m, opposing the slip
//! assert_eq!(row.state.name(), "slipping");
//! ```

pub mod channel;
pub mod estimator;
pub mod exact;
pub mod inputs;
pub mod row;
pub mod sample;

pub use channel::{ChannelCal, channel_counts};
pub use clampwise_core::estimator::ContactState;
pub use clampwise_core::flags::Flags;
pub use estimator::{CoreEstimator, SampleEstimator, new_estimator};
pub use exact::{FixedBits, fixed_to_f64, saturating_fixed};
pub use inputs::core_inputs;
pub use row::{EstimateRow, estimate_row, flag_names};
pub use sample::{Channel, TraceSample};
