//! # clampwise-device
//!
//! The device configuration layer shared by the simulator and by firmware build scripts:
//!
//! | module | concept |
//! |---|---|
//! | [`config`] | the TOML device config: schema (SI units in key names, unknown keys rejected), validation, located errors |
//! | [`column_units`] | units a trace column may carry, and their conversion |
//! | [`build_core`] | config → the core's fixed-point tables, with the core's geometry |
//! | [`emit`] | the tables as generated Rust source for a firmware, with a CRC-32 |
//! | [`emit_device`] | a whole core `DeviceConfig` as Rust source of `const` items, with its checksum |
//!
//! It is deliberately light (the core, `fixed`, `serde`, `toml`, `crc`) so that a firmware's
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
//! assert!(source.contains("pub const MU_TABLE"));
//! assert!(source.contains("pub const TABLES_CHECKSUM"));
//! # std::fs::remove_dir_all(&dir).ok();
//! ```

pub mod build_core;
pub mod column_units;
pub mod config;
pub mod emit;
pub mod emit_device;
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
