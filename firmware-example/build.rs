//! Build script of the example firmware.
//!
//! 1. Linker set-up, only for `thumbv*` targets and only for this crate's binaries: `-Tlink.x`
//!    (cortex-m-rt), `-Tdefmt.x` when the `defmt` feature is on, and `memory.x` copied into
//!    `OUT_DIR` on the link search path. Host builds get no linker arguments at all.
//! 2. Generated constants (`OUT_DIR/generated.rs`, included by `src/generated.rs`): the
//!    configuration (per-channel ADC gain and offset, loop period, bedding, fault release), the
//!    effective-radius table `r_e(clamp force, bedding)` computed here in f64 and emitted as raw
//!    fixed-point bits, a CRC-32 over all of it, and the recorded trace the HAL stub replays.
//!
//! The configuration is `config/demo.toml` unless `CLAMPWISE_FW_CONFIG` names another file
//! (a path relative to this crate, or absolute); the trace file is named inside it.
//!
//! Floats are used here, at build time, and nowhere in the firmware's per-sample path.

use std::collections::BTreeMap;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::{env, fs};

use serde::Deserialize;

#[path = "build/quantise.rs"]
mod quantise;

/// Fractional bits of the core's Q formats: Newtons I24F8, RadPerSec I16F16, Metres and the
/// gain I8F24, Ratio I2F30.
const U8: u32 = 8;
const U16: u32 = 16;
const U24: u32 = 24;
const U30: u32 = 30;

/// Largest number of bridge-ADC channels the application reads.
const MAX_CHANNELS: usize = 4;
/// Largest trace kept in flash (rows); a longer one would not fit a small part's flash.
const MAX_TRACE_ROWS: usize = 20_000;
/// Signed 24-bit range of the ADC's conversion result.
const ADC_MIN: i64 = -(1 << 23);
const ADC_MAX: i64 = (1 << 23) - 1;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Config {
    trace: TraceSection,
    sensor: SensorSection,
    geometry: GeometrySection,
    radius_table: RadiusTableSection,
    processing: ProcessingSection,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct TraceSection {
    file: String,
    sample_period_s: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct SensorSection {
    gain_n_per_count: Vec<f64>,
    offset_counts: Vec<i64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct GeometrySection {
    outer_radius_m: f64,
    inner_radius_m: f64,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct RadiusTableSection {
    clamp_force_n: Vec<f64>,
    bedding: Vec<f64>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ProcessingSection {
    bedding: f64,
    fault_release_samples: u32,
}

/// One cell of a `counts_N` column.
enum Cell {
    Counts(i64),
    NotReady,
    Overrange,
    ReferenceMissing,
    BadCrc,
}

struct Row {
    cells: Vec<Cell>,
    omega_in_bits: i32,
    omega_out_bits: i32,
}

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
    println!("cargo:rerun-if-changed=memory.x");
    println!("cargo:rerun-if-env-changed=CLAMPWISE_FW_CONFIG");
    link_setup(&manifest_dir, &out_dir, &target)?;

    let config_path = match env::var("CLAMPWISE_FW_CONFIG") {
        Ok(p) if !p.is_empty() => manifest_dir.join(p),
        _ => manifest_dir.join("config/demo.toml"),
    };
    println!("cargo:rerun-if-changed={}", config_path.display());
    let config_text = fs::read_to_string(&config_path)
        .map_err(|e| format!("cannot read {}: {e}", config_path.display()))?;
    let config: Config =
        toml::from_str(&config_text).map_err(|e| format!("{}: {e}", config_path.display()))?;

    let config_dir = config_path.parent().unwrap_or(&manifest_dir);
    let trace_path = config_dir.join(&config.trace.file);
    println!("cargo:rerun-if-changed={}", trace_path.display());

    let source = generate(&config, &config_path, &trace_path)?;
    fs::write(out_dir.join("generated.rs"), source)
        .map_err(|e| format!("cannot write generated.rs: {e}"))?;
    Ok(())
}

fn env_var(name: &str) -> Result<String, String> {
    env::var(name).map_err(|_| format!("environment variable {name} is not set"))
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

/// Quantise to a fixed-point format the way the core's `from_f64` does (round to nearest),
/// naming the configuration key on failure.
fn quantise(value: f64, frac_bits: u32, key: &str) -> Result<i32, String> {
    if !value.is_finite() {
        return Err(format!("{key} = {value} is not a finite number"));
    }
    quantise::to_bits(value, frac_bits)
        .ok_or_else(|| format!("{key} = {value} is outside the range of its fixed-point format"))
}

fn check_increasing(bits: &[i32], key: &str) -> Result<(), String> {
    if bits.is_empty() {
        return Err(format!("{key} needs at least one breakpoint"));
    }
    for (i, w) in bits.windows(2).enumerate() {
        if let [a, b] = w
            && b <= a
        {
            return Err(format!(
                "{key}: breakpoint {} is not greater than breakpoint {i} after rounding to the \
                 table's fixed-point format",
                i + 1
            ));
        }
    }
    Ok(())
}

/// Effective friction radius of an annular contact, blended by bedding between uniform
/// pressure (new lining) and uniform wear (bedded lining):
/// r_up = (2/3)(Ro³ − Ri³)/(Ro² − Ri²), r_uw = (Ro + Ri)/2
/// [pub] Budynas & Nisbett, Shigley's Mechanical Engineering Design, ch. 16.
fn effective_radius(outer: f64, inner: f64, bedding: f64) -> f64 {
    let uniform_pressure =
        2.0 / 3.0 * (outer.powi(3) - inner.powi(3)) / (outer.powi(2) - inner.powi(2));
    let uniform_wear = 0.5 * (outer + inner);
    (1.0 - bedding) * uniform_pressure + bedding * uniform_wear
}

fn generate(config: &Config, config_path: &Path, trace_path: &Path) -> Result<String, String> {
    let channels = config.sensor.gain_n_per_count.len();
    if !(1..=MAX_CHANNELS).contains(&channels) {
        return Err(format!(
            "sensor.gain_n_per_count has {channels} entries; 1 to {MAX_CHANNELS} channels are supported"
        ));
    }
    if config.sensor.offset_counts.len() != channels {
        return Err(format!(
            "sensor.offset_counts has {} entries but sensor.gain_n_per_count has {channels}",
            config.sensor.offset_counts.len()
        ));
    }

    let period_ns = config.trace.sample_period_s * 1e9;
    if !(period_ns.is_finite() && period_ns >= 1.0 && period_ns <= f64::from(u32::MAX)) {
        return Err(format!(
            "trace.sample_period_s = {} must lie between 1 ns and 4.29 s",
            config.trace.sample_period_s
        ));
    }
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)] // range checked above
    let period_ns = period_ns.round() as u32;

    let mut gains = Vec::with_capacity(channels);
    for (i, &g) in config.sensor.gain_n_per_count.iter().enumerate() {
        let key = format!("sensor.gain_n_per_count[{i}]");
        let bits = quantise(g, U24, &key)?;
        if bits <= 0 {
            return Err(format!(
                "{key} = {g} must be positive (and at least 2^-24 N/count)"
            ));
        }
        gains.push(bits);
    }
    let mut offsets = Vec::with_capacity(channels);
    for (i, &o) in config.sensor.offset_counts.iter().enumerate() {
        if !(ADC_MIN..=ADC_MAX).contains(&o) {
            return Err(format!(
                "sensor.offset_counts[{i}] = {o} is outside the 24-bit ADC range"
            ));
        }
        offsets.push(i32::try_from(o).map_err(|_| format!("sensor.offset_counts[{i}] = {o}"))?);
    }

    let g = &config.geometry;
    if !(g.inner_radius_m.is_finite() && g.outer_radius_m.is_finite())
        || g.inner_radius_m <= 0.0
        || g.outer_radius_m <= g.inner_radius_m
    {
        return Err(format!(
            "geometry: need 0 < inner_radius_m ({}) < outer_radius_m ({})",
            g.inner_radius_m, g.outer_radius_m
        ));
    }

    let t = &config.radius_table;
    let force_bits = t
        .clamp_force_n
        .iter()
        .enumerate()
        .map(|(i, &f)| quantise(f, U8, &format!("radius_table.clamp_force_n[{i}]")))
        .collect::<Result<Vec<_>, _>>()?;
    check_increasing(&force_bits, "radius_table.clamp_force_n")?;
    for (i, &b) in t.bedding.iter().enumerate() {
        if !(0.0..=1.0).contains(&b) {
            return Err(format!("radius_table.bedding[{i}] = {b} must lie in 0..=1"));
        }
    }
    let bedding_bits = t
        .bedding
        .iter()
        .enumerate()
        .map(|(i, &b)| quantise(b, U30, &format!("radius_table.bedding[{i}]")))
        .collect::<Result<Vec<_>, _>>()?;
    check_increasing(&bedding_bits, "radius_table.bedding")?;
    let mut radius_bits = Vec::with_capacity(force_bits.len());
    for _force in &t.clamp_force_n {
        // r_e does not depend on clamp force in this flat, rigid-contact model; the force axis is
        // kept because fitted tables (from the simulator) do vary along it.
        let row = t
            .bedding
            .iter()
            .map(|&b| {
                let r = effective_radius(g.outer_radius_m, g.inner_radius_m, b);
                quantise(r, U24, "effective radius")
            })
            .collect::<Result<Vec<_>, _>>()?;
        radius_bits.push(row);
    }

    let p = &config.processing;
    if !(0.0..=1.0).contains(&p.bedding) {
        return Err(format!(
            "processing.bedding = {} must lie in 0..=1",
            p.bedding
        ));
    }
    let bedding_now = quantise(p.bedding, U30, "processing.bedding")?;
    let fault_release = u16::try_from(p.fault_release_samples)
        .ok()
        .filter(|&n| n >= 1)
        .ok_or_else(|| {
            format!(
                "processing.fault_release_samples = {} must lie in 1..=65535",
                p.fault_release_samples
            )
        })?;

    let rows = read_trace(trace_path, channels, config.trace.sample_period_s)?;

    // Checksum over every generated number, in the order documented in src/generated.rs.
    let mut bytes = Vec::new();
    let mut put = |v: i32| bytes.extend_from_slice(&v.to_le_bytes());
    force_bits.iter().for_each(|&v| put(v));
    bedding_bits.iter().for_each(|&v| put(v));
    radius_bits.iter().flatten().for_each(|&v| put(v));
    gains.iter().for_each(|&v| put(v));
    offsets.iter().for_each(|&v| put(v));
    put(bedding_now);
    put(i32::from(fault_release));
    put(i32::from_le_bytes(period_ns.to_le_bytes()));
    let checksum = crc::Crc::<u32>::new(&crc::CRC_32_ISO_HDLC).checksum(&bytes);

    let list = |v: &[i32], ty: &str| {
        v.iter()
            .map(|b| format!("{ty}::from_bits({b})"))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let trace_name = trace_path
        .file_stem()
        .map_or_else(|| "trace".to_string(), |s| s.to_string_lossy().into_owned());

    let mut s = String::new();
    let w = &mut s;
    let _ = writeln!(
        w,
        "// Generated by build.rs from {} and {}. Do not edit.\n",
        config_path.display(),
        trace_path.display()
    );
    let _ = writeln!(
        w,
        "/// Number of bridge-ADC channels read each sample (`[sensor]`, 1 to 4)."
    );
    let _ = writeln!(w, "pub const CHANNELS: usize = {channels};");
    let _ = writeln!(
        w,
        "/// Control period of the fixed-rate loop in nanoseconds (`trace.sample_period_s`)."
    );
    let _ = writeln!(w, "pub const SAMPLE_PERIOD_NS: u32 = {period_ns};");
    let _ = writeln!(
        w,
        "/// Per-channel ADC gain in N/count (`sensor.gain_n_per_count`), I8F24."
    );
    let _ = writeln!(
        w,
        "pub const GAINS: [Gain; CHANNELS] = [{}];",
        list(&gains, "Gain")
    );
    let _ = writeln!(
        w,
        "/// Per-channel zero offset in counts (`sensor.offset_counts`)."
    );
    let _ = writeln!(
        w,
        "pub const OFFSETS_COUNTS: [i32; CHANNELS] = [{}];",
        offsets
            .iter()
            .map(i32::to_string)
            .collect::<Vec<_>>()
            .join(", ")
    );
    let _ = writeln!(
        w,
        "/// Bedding assumed by the interim processing step (`processing.bedding`)."
    );
    let _ = writeln!(
        w,
        "pub const BEDDING: Ratio = Ratio::from_bits({bedding_now});"
    );
    let _ = writeln!(
        w,
        "/// Clean samples before a latched fault output is released."
    );
    let _ = writeln!(w, "pub const FAULT_RELEASE_SAMPLES: u16 = {fault_release};");
    let _ = writeln!(
        w,
        "/// Outer radius of the annular lining (`geometry.outer_radius_m`), m."
    );
    let _ = writeln!(
        w,
        "pub const OUTER_RADIUS: Metres = Metres::from_bits({});",
        quantise(g.outer_radius_m, U24, "geometry.outer_radius_m")?
    );
    let _ = writeln!(
        w,
        "/// Inner radius of the annular lining (`geometry.inner_radius_m`), m."
    );
    let _ = writeln!(
        w,
        "pub const INNER_RADIUS: Metres = Metres::from_bits({});",
        quantise(g.inner_radius_m, U24, "geometry.inner_radius_m")?
    );
    let _ = writeln!(
        w,
        "/// Breakpoints on the clamp-force axis of [`RADIUS_TABLE`]."
    );
    let _ = writeln!(
        w,
        "pub const FORCE_BREAKPOINTS: usize = {};",
        force_bits.len()
    );
    let _ = writeln!(
        w,
        "/// Breakpoints on the bedding axis of [`RADIUS_TABLE`]."
    );
    let _ = writeln!(
        w,
        "pub const BEDDING_BREAKPOINTS: usize = {};",
        bedding_bits.len()
    );
    let _ = writeln!(
        w,
        "/// Effective radius r_e in m over (clamp force in N, bedding 0..=1), this device's size."
    );
    let _ = writeln!(
        w,
        "pub type DeviceRadiusTable = RadiusTable<FORCE_BREAKPOINTS, BEDDING_BREAKPOINTS>;"
    );
    let _ = writeln!(
        w,
        "/// Effective-radius table (annulus Ro = {} m, Ri = {} m; uniform pressure at bedding 0,\n\
         /// uniform wear at bedding 1), kept in flash.",
        g.outer_radius_m, g.inner_radius_m
    );
    let _ = writeln!(
        w,
        "#[allow(clippy::panic)] // evaluated at compile time only"
    );
    let _ = writeln!(
        w,
        "pub static RADIUS_TABLE: DeviceRadiusTable = match Table2::new("
    );
    let _ = writeln!(w, "    [{}],", list(&force_bits, "Newtons"));
    let _ = writeln!(w, "    [{}],", list(&bedding_bits, "Ratio"));
    let _ = writeln!(w, "    [");
    for row in &radius_bits {
        let _ = writeln!(w, "        [{}],", list(row, "Metres"));
    }
    let _ = writeln!(w, "    ],");
    let _ = writeln!(w, ") {{");
    let _ = writeln!(w, "    Ok(t) => t,");
    let _ = writeln!(
        w,
        "    Err(_) => panic!(\"radius table breakpoints must increase\"),"
    );
    let _ = writeln!(w, "}};");
    let _ = writeln!(
        w,
        "/// CRC-32/ISO-HDLC of the generated configuration and table (order: see the module docs)."
    );
    let _ = writeln!(w, "pub const GENERATED_CRC32: u32 = 0x{checksum:08x};");
    let _ = writeln!(w, "/// Name of the recorded trace (its file stem).");
    let _ = writeln!(w, "pub const TRACE_NAME: &str = {trace_name:?};");
    let _ = writeln!(
        w,
        "/// The recorded trace, one entry per sample, kept in flash."
    );
    let _ = writeln!(
        w,
        "pub static TRACE: [TraceSample<CHANNELS>; {}] = [",
        rows.len()
    );
    for row in &rows {
        let cells = row
            .cells
            .iter()
            .map(|c| match c {
                Cell::Counts(v) => format!("TraceCell::Counts({v})"),
                Cell::NotReady => "TraceCell::NotReady".to_string(),
                Cell::Overrange => "TraceCell::Overrange".to_string(),
                Cell::ReferenceMissing => "TraceCell::ReferenceMissing".to_string(),
                Cell::BadCrc => "TraceCell::BadCrc".to_string(),
            })
            .collect::<Vec<_>>()
            .join(", ");
        let _ = writeln!(
            w,
            "    TraceSample {{ counts: [{cells}], omega_in: RadPerSec::from_bits({}), omega_out: RadPerSec::from_bits({}) }},",
            row.omega_in_bits, row.omega_out_bits
        );
    }
    let _ = writeln!(w, "];");
    Ok(s)
}

fn read_trace(path: &Path, channels: usize, period_s: f64) -> Result<Vec<Row>, String> {
    let name = path.display();
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .from_path(path)
        .map_err(|e| format!("cannot read trace {name}: {e}"))?;
    let mut expected = vec!["t_s".to_string()];
    expected.extend((1..=channels).map(|c| format!("counts_{c}")));
    expected.push("omega_in_rad_s".into());
    expected.push("omega_out_rad_s".into());
    let headers = reader
        .headers()
        .map_err(|e| format!("{name}: cannot read the header: {e}"))?
        .clone();
    let found: Vec<&str> = headers.iter().collect();
    if found != expected {
        return Err(format!(
            "{name}: header is `{}`, expected `{}` (one counts column per configured channel)",
            found.join(","),
            expected.join(",")
        ));
    }
    let column: BTreeMap<usize, &str> = expected.iter().map(String::as_str).enumerate().collect();
    let mut rows = Vec::new();
    for (index, record) in reader.records().enumerate() {
        let record = record.map_err(|e| format!("{name}: {e}"))?;
        let line = record.position().map_or(0, csv::Position::line);
        let at = |col: usize| {
            format!(
                "{name}:{line}: column {} ({})",
                col + 1,
                column.get(&col).copied().unwrap_or("?")
            )
        };
        let field = |col: usize| {
            record
                .get(col)
                .ok_or_else(|| format!("{}: missing", at(col)))
        };
        let number = |col: usize| -> Result<f64, String> {
            let text = field(col)?;
            text.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| format!("{}: `{text}` is not a finite number", at(col)))
        };
        let t = number(0)?;
        let expected_t = index as f64 * period_s;
        if (t - expected_t).abs() > 0.5 * period_s {
            return Err(format!(
                "{}: t_s = {t} but sample {index} at the configured period is at {expected_t} s \
                 (the stub replays one row per period; gaps are not allowed)",
                at(0)
            ));
        }
        let mut cells = Vec::with_capacity(channels);
        for col in 1..=channels {
            let text = field(col)?;
            let cell = match text {
                "nr" => Cell::NotReady,
                "ovr" => Cell::Overrange,
                "ref" => Cell::ReferenceMissing,
                "crc" => Cell::BadCrc,
                _ => {
                    let v: i64 = text.parse().map_err(|_| {
                        format!(
                            "{}: `{text}` is neither an integer count nor one of nr, ovr, ref, crc",
                            at(col)
                        )
                    })?;
                    if !(ADC_MIN..=ADC_MAX).contains(&v) {
                        return Err(format!(
                            "{}: {v} is outside the signed 24-bit ADC range",
                            at(col)
                        ));
                    }
                    Cell::Counts(v)
                }
            };
            cells.push(cell);
        }
        let omega_in = number(channels + 1)?;
        let omega_out = number(channels + 2)?;
        rows.push(Row {
            cells,
            omega_in_bits: quantise(omega_in, U16, &at(channels + 1))?,
            omega_out_bits: quantise(omega_out, U16, &at(channels + 2))?,
        });
    }
    if rows.is_empty() || rows.len() > MAX_TRACE_ROWS {
        return Err(format!(
            "{name}: {} rows; a trace kept in flash needs 1 to {MAX_TRACE_ROWS}",
            rows.len()
        ));
    }
    Ok(rows)
}
