//! Constants generated at build time by `build.rs` from the simulator's device TOML (the file
//! named by `CLAMPWISE_FW_CONFIG`, default `sim/configs/demo-hoist-brake.toml`) and a trace in
//! the simulator's CSV format (`CLAMPWISE_FW_TRACE`, default `firmware-example/trace/demo.csv`).
//!
//! * The device configuration, emitted by `clampwise_device::emit` as one `const`
//!   expression over raw fixed-point bits (every constructor is the core's `const fn`, so a
//!   configuration the core rejects fails the build): [`DEVICE`], its type [`Device`], its
//!   sizes, and [`DEVICE_CHECKSUM`], the core's `DeviceConfig::checksum` computed on the host
//!   from the TOML file. [`DEVICE_CONFIG`] is its one copy in flash.
//! * The recorded trace the HAL stub replays, [`TRACE`], and its name.
//!
//! [`checksum`] recomputes the digest from the configuration as stored, so a configuration that
//! does not match its generator (or flash that changed) is caught at start-up; equal digests on
//! host and target mean both run the same numbers.
//!
//! ```
//! use clampwise_firmware_example::generated::{checksum, DEVICE_CHECKSUM};
//! assert_eq!(checksum(), DEVICE_CHECKSUM);
//! ```

use clampwise_core::sensor::ActuatorCommand;
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};

use crate::app::Auxiliary;
use crate::stub::{TraceCell, TraceSample};

include!(concat!(env!("OUT_DIR"), "/device.rs"));
include!(concat!(env!("OUT_DIR"), "/trace.rs"));

/// The device configuration, kept once in flash; the estimator borrows it.
pub static DEVICE_CONFIG: Device = DEVICE;

/// Control period of the fixed-rate loop in nanoseconds: the configuration's sample period
/// (Q32 s) rounded to the nearest nanosecond.
pub const SAMPLE_PERIOD_NS: u32 = {
    let bits = DEVICE.sample_period().to_bits() as i128;
    let ns = (bits * 1_000_000_000 + (1 << 31)) >> 32;
    // The core accepts periods in (0, 1] s, so 1 ..= 10⁹ ns, inside u32.
    assert!(ns >= 1 && ns <= 1_000_000_000);
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let ns = ns as u32;
    ns
};

/// Digest of the device configuration as stored (the core's `DeviceConfig::checksum`).
pub fn checksum() -> u32 {
    DEVICE_CONFIG.checksum()
}

#[cfg(test)]
mod tests {
    #![allow(
        clippy::unwrap_used,
        clippy::expect_used,
        clippy::indexing_slicing,
        clippy::float_cmp
    )]
    use super::*;

    #[test]
    fn stored_config_matches_its_checksum() {
        assert_eq!(checksum(), DEVICE_CHECKSUM);
    }

    #[test]
    fn the_compiled_config_equals_the_one_built_from_the_toml_at_run_time() {
        // The emitter wrote raw bits at the tables' exact sizes; here the same TOML goes through
        // the device crate at run time (tables within the host's capacities). The checksum
        // covers every number in use and the table sizes, so equal checksums and equal tables
        // mean the compiled constant is the host's configuration.
        use clampwise_device::build_core::{ChannelDevice, CoreDevice};
        let loaded =
            clampwise_device::config::LoadedConfig::load(std::path::Path::new(CONFIG_PATH))
                .unwrap();
        let core = CoreDevice::build(&loaded.config).unwrap();
        assert_eq!(core.device.checksum(), DEVICE_CHECKSUM);
        assert_eq!(DEVICE_CONFIG.checksum(), DEVICE_CHECKSUM);
        let (radius, mu) = (&core.tables.radius, &core.tables.mu);
        let compiled = DEVICE_CONFIG.tables();
        assert_eq!(compiled.radius().x_breakpoints(), radius.x_breakpoints());
        assert_eq!(compiled.radius().y_breakpoints(), radius.y_breakpoints());
        assert!(compiled.radius().rows().eq(radius.rows()));
        let compiled_mu = compiled.friction().mu_kinetic();
        assert_eq!(compiled_mu.x_breakpoints(), mu.x_breakpoints());
        assert_eq!(compiled_mu.y_breakpoints(), mu.y_breakpoints());
        assert!(compiled_mu.rows().eq(mu.rows()));
        // The start state too.
        let record = match &core.device {
            ChannelDevice::One(d) => core.initial.record(d),
            ChannelDevice::Two(d) => core.initial.record(d),
            ChannelDevice::Three(d) => core.initial.record(d),
            ChannelDevice::Four(d) => core.initial.record(d),
        };
        assert_eq!(DEVICE_INITIAL_RECORD, record);
    }

    #[test]
    fn trace_has_the_configured_shape() {
        assert!(!TRACE.is_empty());
        assert!(
            TRACE
                .iter()
                .flat_map(|s| s.counts.iter())
                .any(|c| matches!(c, TraceCell::Counts(_)))
        );
        let period_s: f64 = DEVICE.sample_period().to_num();
        assert_eq!(f64::from(SAMPLE_PERIOD_NS), (period_s * 1e9).round());
    }
}
