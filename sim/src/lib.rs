//! # clampwise-sim
//!
//! The host simulator behind the `clampwise` command: configs (TOML), traces (CSV, ASAM MDF4,
//! and Parquet with the `parquet` feature), replay
//! through the estimator, comparison with a reference torque, μ-table fitting, firmware table
//! emission, an independent f64 plant for synthetic traces, and plots.
//!
//! **Caution.** Its output is an *estimate*, validated only as far as its tests; it is not a
//! certified safety function. Validate on the bench for each lining and geometry, and follow
//! the applicable functional-safety process (ISO 26262, IEC 61508, ISO 13849 or the machine's
//! own standard), local codes and licensed engineering practice.
//!
//! ## Where things are
//!
//! | module | concept |
//! |---|---|
//! | [`config`], [`column_units`], [`build_core`], [`emit`] | re-exported from `clampwise-device`: the TOML schema, config → core, firmware table emitter |
//! | [`clampwise_convert`] | the f64 ↔ fixed layer: `SampleEstimator::step`, implemented by `CoreEstimator` (the core's `Estimator::step`) |
//! | [`csv_input`], [`log_input`], [`trace`], [`timestamps`], [`resample`] | located, streaming CSV input and its dialect; ASAM MDF4 and Parquet logs, channel groups aligned onto the device period; column mapping; time checks; resampling onto the device period |
//! | [`estimate`], [`output`] | estimate traces; outputs never passed off as complete on failure |
//! | [`replay`], [`compare`], [`quantile_sketch`], [`fit`] | the subcommands' work |
//! | [`plant`], [`synth`], [`portable_math`] | the independent f64 plant and trace synthesis; maths with the same bits on every machine |
//! | [`plot`] | plots: bounded-memory min/max envelope, one file per panel kind |
//! | [`report`] | the self-contained HTML report |
//! | [`cli`], [`commands`], [`demo`], [`error`] | the command line, exit codes |
//!
//! ## Example
//!
//! ```
//! use clampwise_sim::build_core::CoreDevice;
//! use clampwise_sim::config::LoadedConfig;
//! use clampwise_convert::{Channel, ContactState, TraceSample, new_estimator};
//!
//! let cfg = LoadedConfig::from_str(clampwise_sim::demo::DEMO_CONFIG, "demo.toml").unwrap();
//! let core = CoreDevice::build(&cfg.config).unwrap();
//! let mut est = new_estimator(&cfg.config, &core).unwrap();
//! let s = TraceSample {
//!     force: [Channel::Newtons(30_000.0); 4],
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
//! assert!(row.torque_nm.unwrap() < 0.0); // opposes the slip
//! ```

pub mod cli;
pub mod commands;
pub mod compare;
pub mod csv_input;
pub mod demo;
pub mod error;
pub mod estimate;
pub mod fit;
pub mod log_input;
pub mod memory;
pub mod output;
pub mod plant;
pub mod plot;
pub mod portable_math;
pub mod quantile_sketch;
pub mod replay;
pub mod report;
pub mod resample;
pub mod synth;
pub mod timestamps;
pub mod trace;

// The config layer lives in `clampwise-device` (a firmware's build script uses it too); it is
// re-exported here so the simulator's users name it as part of the simulator.
pub use clampwise_device::{build_core, column_units, config, emit, locate, schema};
