//! The one emitter: a device as generated Rust source for a firmware, and as printed tables.
//!
//! | sub-module | output |
//! |---|---|
//! | [`device`] | the core's whole `DeviceConfig` as `const` items over raw bits, with `DEVICE_CHECKSUM` |
//! | [`record`] | the state record a replay starts from (`DEVICE_INITIAL_RECORD`) |
//! | [`summary`] | the friction-radius and μ tables as text, for `clampwise tables` |
//! | [`c_source`](mod@c_source) | the configuration as a C `cw_device_desc` initializer for the C API, for `clampwise tables --emit-c` |
//!
//! [`device_source`] puts the first two together; a firmware's `build.rs` and
//! `clampwise tables --emit` both write it, so the simulator and the firmware hold the same
//! bits. There is one checksum: the core's `DeviceConfig::checksum` (CRC-32/ISO-HDLC over every
//! number of the configuration), which the firmware recomputes at start-up and compares with
//! `DEVICE_CHECKSUM`, and which `clampwise tables` and `clampwise check` print.
//!
//! ```
//! let dir = std::env::temp_dir().join(format!("clampwise-emit-doc-{}", std::process::id()));
//! std::fs::create_dir_all(&dir).unwrap();
//! let path = dir.join("demo.toml");
//! std::fs::write(&path, clampwise_device::DEMO_CONFIG).unwrap();
//!
//! let source = clampwise_device::emit::rust_source_for_file(&path).unwrap();
//! assert!(source.contains("pub const DEVICE: Device = {"));
//! assert!(source.contains("pub const DEVICE_CHECKSUM: u32 = 0x"));
//! assert!(source.contains("pub const DEVICE_INITIAL_RECORD"));
//! # std::fs::remove_dir_all(&dir).ok();
//! ```

pub mod c_source;
pub mod device;
pub mod record;
pub mod summary;

use std::fmt;
use std::path::Path;

pub use c_source::c_source;
pub use device::device_config_source;
pub use summary::human;

use crate::build_core::{BuildError, ChannelDevice, CoreDevice, Device, InitialState};
use crate::config::{ConfigErrors, LoadedConfig};

/// Why no source was emitted.
#[derive(Debug, Clone, PartialEq)]
#[non_exhaustive]
pub enum EmitError {
    /// The config file could not be read, parsed or validated (every problem, located).
    Config(ConfigErrors),
    /// The core rejected a value (named by its key).
    Build(BuildError),
    /// The configuration could not be rebuilt exactly from the values the source would hold.
    Rebuild {
        /// The part of the configuration concerned (`friction`, `thermal`, …, or `device`).
        part: &'static str,
        /// What went wrong.
        message: String,
    },
    /// The starting state record is one the core would refuse to restore.
    InitialRecord(String),
}

impl fmt::Display for EmitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Config(e) => write!(f, "{e}"),
            Self::Build(e) => write!(f, "{e}"),
            Self::Rebuild { part, message } => {
                write!(f, "emitting the device config, {part}: {message}")
            }
            Self::InitialRecord(e) => write!(f, "initial state record rejected: {e}"),
        }
    }
}

impl std::error::Error for EmitError {}

pub(crate) fn err(part: &'static str, message: impl Into<String>) -> EmitError {
    EmitError::Rebuild {
        part,
        message: message.into(),
    }
}

/// The generated source of a built device: its configuration ([`device_config_source`]) and
/// the state record a replay starts from ([`record::initial_record_source`]). `origin` names
/// the config file in the comments.
///
/// # Errors
/// [`EmitError::Rebuild`] or [`EmitError::InitialRecord`].
pub fn device_source(core: &CoreDevice, origin: &str) -> Result<String, EmitError> {
    fn one<const C: usize>(
        d: &Device<C>,
        initial: &InitialState,
        origin: &str,
    ) -> Result<String, EmitError> {
        let mut source = device_config_source(d, origin)?;
        source.push_str(&record::initial_record_source(d, initial)?);
        Ok(source)
    }
    match &core.device {
        ChannelDevice::One(d) => one(d, &core.initial, origin),
        ChannelDevice::Two(d) => one(d, &core.initial, origin),
        ChannelDevice::Three(d) => one(d, &core.initial, origin),
        ChannelDevice::Four(d) => one(d, &core.initial, origin),
    }
}

/// Read, validate and build a config file and return its generated Rust source: the one call
/// a firmware's `build.rs` needs (write the result to `OUT_DIR` and `include!` it).
///
/// # Errors
/// [`EmitError`] with every located config problem, the key the core rejected, or why the
/// source could not be written exactly.
pub fn rust_source_for_file(path: &Path) -> Result<String, EmitError> {
    let cfg = LoadedConfig::load(path).map_err(EmitError::Config)?;
    let core = CoreDevice::build(&cfg.config).map_err(EmitError::Build)?;
    device_source(&core, &origin_name(&cfg.file))
}

/// The file name of a config path, for the generated comments (no directories, so the source
/// is the same wherever the file lives).
pub fn origin_name(file: &str) -> String {
    Path::new(file)
        .file_name()
        .map_or_else(|| file.to_string(), |n| n.to_string_lossy().into_owned())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn core_of(src: &str) -> CoreDevice {
        let cfg = LoadedConfig::from_str(src, "t.toml").unwrap();
        CoreDevice::build(&cfg.config).unwrap()
    }

    #[test]
    fn the_source_carries_the_device_checksum_and_its_starting_state() {
        let core = core_of(crate::DEMO_CONFIG);
        let source = device_source(&core, "demo.toml").unwrap();
        assert!(source.contains(&format!(
            "pub const DEVICE_CHECKSUM: u32 = 0x{:08x};",
            core.device.checksum()
        )));
        assert!(source.ends_with("= None;\n"), "a new lining at ambient");

        // A lining that has taken friction work starts from a record the core restores.
        let worn = crate::DEMO_CONFIG.replace("initial_energy_j = 0.0", "initial_energy_j = 2.0e6");
        let core = core_of(&worn);
        let ChannelDevice::Three(d) = &core.device else {
            unreachable!("the demo has three force channels")
        };
        let record = core.initial.record(d).unwrap();
        let bytes = record.map(|b| b.to_string()).join(", ");
        let source = device_source(&core, "worn.toml").unwrap();
        assert!(source.contains(&format!("= Some([{bytes}]);")), "{source}");
    }

    #[test]
    fn an_unreadable_file_is_a_config_error() {
        let e = rust_source_for_file(Path::new("/nonexistent/clampwise.toml")).unwrap_err();
        assert!(matches!(e, EmitError::Config(_)), "{e}");
        assert!(e.to_string().contains("cannot read config"), "{e}");
    }

    #[test]
    fn origin_is_the_file_name() {
        assert_eq!(origin_name("sim/configs/demo.toml"), "demo.toml");
        assert_eq!(origin_name("demo.toml"), "demo.toml");
    }
}
