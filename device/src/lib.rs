//! # clampwise-device
//!
//! The device configuration layer shared by the simulator and by firmware build scripts.
//!
//! ## Data flow
//!
//! ```text
//! TOML text ──► locate ──► schema ──► validate ──► build_core ──► emit
//!   (file)     key spans   DeviceSpec  config's    core DeviceConfig   Rust source (DEVICE,
//!              line:col    (serde)     own rules   + tables, core's    DEVICE_CHECKSUM) and
//!                                                  rules keyed back    the printed tables
//! ```
//!
//! [`config::LoadedConfig`] runs the first four steps and reports every problem as
//! `file:line:column: key: message`; [`emit`] is the one emitter, used by a firmware's
//! `build.rs` and by `clampwise tables --emit` alike.
//!
//! | module | concept |
//! |---|---|
//! | [`locate`] | key paths in TOML text, their spans, line and column |
//! | [`schema`] | the serde types of a config file, `…Spec` (SI units in key names, unknown keys rejected) |
//! | [`validate`] | the rules only the config knows, every problem collected and named by key |
//! | [`config`] | loading a file: parse, validate, build, and the located errors |
//! | [`polygon`] | the radial band of a polygon pad's outline |
//! | [`column_units`] | units a trace column may carry, and their conversion |
//! | [`build_core`] | config → the core's fixed-point tables and `DeviceConfig`, the core's errors named by key |
//! | [`emit`] | the device as generated Rust source for a firmware, with its one checksum, and as printed tables |
//!
//! It is deliberately light (the core, `fixed`, `libm`, `serde`, `toml`) so that a firmware's
//! `build.rs` can build-depend on it.
//!
//! **Caution.** What the core computes from these configs is an *estimate*, validated only as
//! far as its tests; it is not a certified safety function. Validate on the bench for each
//! lining and geometry, and follow the applicable functional-safety process (ISO 26262,
//! IEC 61508, ISO 13849 or the machine's own standard), local codes and licensed engineering
//! practice.
//!
//! ## From a TOML path to generated Rust source (a firmware's `build.rs`)
//!
//! ```
//! let dir = std::env::temp_dir().join(format!("clampwise-device-doc-{}", std::process::id()));
//! std::fs::create_dir_all(&dir).unwrap();
//! let path = dir.join("demo.toml");
//! std::fs::write(&path, clampwise_device::DEMO_CONFIG).unwrap();
//!
//! let source = clampwise_device::emit::rust_source_for_file(&path).unwrap();
//! assert!(source.contains("pub const DEVICE: Device = {"));
//! assert!(source.contains("pub const DEVICE_CHECKSUM"));
//! # std::fs::remove_dir_all(&dir).ok();
//! ```

pub mod build_core;
pub mod column_units;
pub mod config;
pub mod emit;
pub mod locate;
pub mod polygon;
#[cfg(any(test, feature = "schema"))]
pub mod reference;
pub mod schema;
pub mod validate;

/// The documented example config of the built-in demo device (an invented hoist brake).
pub const DEMO_CONFIG: &str = include_str!("../../sim/configs/demo-hoist-brake.toml");

/// The caution every human-facing output carries.
pub const CAUTION: &str = "CAUTION: this is an estimate, validated only as far as its tests; it is not a certified safety function. Validate on the bench for each lining and geometry, and follow the applicable functional-safety process (ISO 26262, IEC 61508, ISO 13849 or the machine's own standard), local codes and licensed engineering practice.";
