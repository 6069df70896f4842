//! Build script of the example firmware.
//!
//! 1. Linker set-up, only for `thumbv*` targets and only for this crate's binaries: `-Tlink.x`
//!    (cortex-m-rt), `-Tdefmt.x` when the `defmt` feature is on, and `memory.x` copied into
//!    `OUT_DIR` on the link search path. Host builds get no linker arguments at all.
//! 2. `OUT_DIR/device.rs`: the simulator's device TOML, read and validated by
//!    `clampwise-device` exactly as the simulator reads it, converted to the core's
//!    `DeviceConfig` by the same code, and emitted by `clampwise_device::emit` as `const`
//!    Rust source (raw bits; the core's `const` constructors check it at compile time) with the
//!    checksum the firmware verifies at start-up.
//! 3. `OUT_DIR/trace.rs`: the recorded trace the HAL stub replays, from a CSV in the
//!    simulator's trace format (`cargo cw synth` writes it), read through the config's column
//!    mapping.
//!
//! Files: `CLAMPWISE_FW_CONFIG` (default `../sim/configs/demo-hoist-brake.toml`) and
//! `CLAMPWISE_FW_TRACE` (default `trace/demo.csv`), relative to this crate or absolute.
//! Floats are used here, at build time, and nowhere in the firmware's per-sample path.

use std::path::{Path, PathBuf};
use std::{env, fs};

use clampwise_device::build_core::CoreDevice;
use clampwise_device::config::LoadedConfig;

#[path = "build/trace.rs"]
mod trace;

const DEFAULT_CONFIG: &str = "../sim/configs/demo-hoist-brake.toml";
const DEFAULT_TRACE: &str = "trace/demo.csv";

fn main() {
    if let Err(message) = run() {
        eprintln!("error: {message}");
        std::process::exit(1);
    }
}

fn run() -> Result<(), String> {
    let manifest_dir = PathBuf::from(env_var("CARGO_MANIFEST_DIR")?);
    let out_dir = PathBuf::from(env_var("OUT_DIR")?);
    let target = env_var("TARGET")?;

    println!("cargo:rerun-if-changed=build.rs");
    println!("cargo:rerun-if-changed=build/trace.rs");
    println!("cargo:rerun-if-changed=memory.x");
    link_setup(&manifest_dir, &out_dir, &target)?;

    let config_path = input_path(&manifest_dir, "CLAMPWISE_FW_CONFIG", DEFAULT_CONFIG);
    let trace_path = input_path(&manifest_dir, "CLAMPWISE_FW_TRACE", DEFAULT_TRACE);
    let loaded = LoadedConfig::load(&config_path).map_err(|e| e.to_string())?;

    let origin = file_name(&config_path);
    let (device, channels) = device_source(&loaded, &origin)?;
    fs::write(out_dir.join("device.rs"), device)
        .map_err(|e| format!("cannot write device.rs: {e}"))?;

    let rows = trace::read(&trace_path, &loaded.config, channels)?;
    let source = trace::source(&rows, &config_path, &trace_path);
    fs::write(out_dir.join("trace.rs"), source)
        .map_err(|e| format!("cannot write trace.rs: {e}"))?;
    Ok(())
}

fn env_var(name: &str) -> Result<String, String> {
    env::var(name).map_err(|_| format!("environment variable {name} is not set"))
}

/// A path from an environment variable (relative to this crate, or absolute) or the default.
fn input_path(manifest_dir: &Path, var: &str, default: &str) -> PathBuf {
    println!("cargo:rerun-if-env-changed={var}");
    let path = match env::var(var) {
        Ok(p) if !p.is_empty() => manifest_dir.join(p),
        _ => manifest_dir.join(default),
    };
    println!("cargo:rerun-if-changed={}", path.display());
    path
}

fn file_name(path: &Path) -> String {
    path.file_name().map_or_else(
        || path.display().to_string(),
        |s| s.to_string_lossy().into_owned(),
    )
}

fn link_setup(manifest_dir: &Path, out_dir: &Path, target: &str) -> Result<(), String> {
    // ARMv6-M has no cycle counter; the probe build measures step cycles only elsewhere.
    println!("cargo::rustc-check-cfg=cfg(armv6m)");
    if target.starts_with("thumbv6m") {
        println!("cargo:rustc-cfg=armv6m");
    }
    if !target.starts_with("thumbv") {
        return Ok(());
    }
    fs::copy(manifest_dir.join("memory.x"), out_dir.join("memory.x"))
        .map_err(|e| format!("cannot copy memory.x: {e}"))?;
    println!("cargo:rustc-link-search={}", out_dir.display());
    println!("cargo:rustc-link-arg-bins=-Tlink.x");
    if env::var_os("CARGO_FEATURE_DEFMT").is_some() {
        println!("cargo:rustc-link-arg-bins=-Tdefmt.x");
    }
    Ok(())
}

/// The emitted device source (`clampwise_device::emit::device_source`: the configuration and
/// the state record the replay starts from) and its number of force channels. The channel
/// count is a type parameter of the core's configuration; `clampwise-device` fixes it when it
/// reads the config.
fn device_source(loaded: &LoadedConfig, origin: &str) -> Result<(String, usize), String> {
    let core = CoreDevice::build(&loaded.config).map_err(|e| format!("{}: {e}", loaded.file))?;
    let source = clampwise_device::emit::device_source(&core, origin)
        .map_err(|e| format!("{}: {e}", loaded.file))?;
    Ok((source, core.device.channels()))
}
