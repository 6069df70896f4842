//! Fixture of the C checks (`capi/ci.sh`): a trace as C inputs, and the Rust host replay the C
//! programs must reproduce line for line.
//!
//! ```text
//! cargo run -p clampwise-capi --example c_fixture -- CONFIG.toml TRACE.csv OUT_DIR
//! ```
//!
//! * `OUT_DIR/trace.c`: `clampwise_trace[]`, one `cw_inputs` per sample: the core's inputs of
//!   each trace row as the simulator's replay converts it (`clampwise_convert::core_inputs`),
//!   as raw bits.
//! * `OUT_DIR/expected.txt`: the replay of those inputs through the core's `Estimator` on the
//!   device the simulator builds from the config, each estimate also checked here to give the
//!   simulator's `clampwise replay` row exactly (the check the Rust firmware's host test
//!   makes), then the state record saved after the last sample and a restore of it.
//!
//! The C host test and the C firmware print the same lines from the C API (`line.c` formats
//! them on both), so an identical file means the C API gives `clampwise replay`'s estimates,
//! every field, every sample.

use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::ExitCode;

use clampwise_convert::{self as convert, ChannelCal, CoreEstimator, SampleEstimator};
use clampwise_core::estimator::{ContactState, Estimate, Estimator, Inputs};
use clampwise_device::build_core::{ChannelDevice, CoreDevice, Device};
use clampwise_device::config::LoadedConfig;
use clampwise_device::schema::DeviceKind;
use clampwise_sim::trace::{RowPolicy, TraceReader};

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let [config, trace, out] = args.as_slice() else {
        eprintln!("usage: c_fixture CONFIG.toml TRACE.csv OUT_DIR");
        return ExitCode::from(2);
    };
    match run(Path::new(config), trace, Path::new(out)) {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("c_fixture: {e}");
            ExitCode::FAILURE
        }
    }
}

fn file_name(p: &Path) -> String {
    p.file_name().map_or_else(
        || p.display().to_string(),
        |n| n.to_string_lossy().into_owned(),
    )
}

fn run(config: &Path, trace: &str, out: &Path) -> Result<(), String> {
    let loaded = LoadedConfig::load(config).map_err(|e| e.to_string())?;
    let core = CoreDevice::build(&loaded.config).map_err(|e| e.to_string())?;
    let names = (file_name(config), file_name(Path::new(trace)));
    let (trace_c, expected) = match &core.device {
        ChannelDevice::One(d) => replay(&loaded, &core, d, trace, &names)?,
        ChannelDevice::Two(d) => replay(&loaded, &core, d, trace, &names)?,
        ChannelDevice::Three(d) => replay(&loaded, &core, d, trace, &names)?,
        ChannelDevice::Four(d) => replay(&loaded, &core, d, trace, &names)?,
    };
    std::fs::create_dir_all(out).map_err(|e| format!("{}: {e}", out.display()))?;
    for (name, text) in [("trace.c", trace_c), ("expected.txt", expected)] {
        let path: PathBuf = out.join(name);
        std::fs::write(&path, text).map_err(|e| format!("{}: {e}", path.display()))?;
    }
    Ok(())
}

/// The C API's state code (`cw_contact_state`).
const fn state_code(s: ContactState) -> u8 {
    match s {
        ContactState::Slipping => 0,
        ContactState::Holding => 1,
        ContactState::Released => 2,
        ContactState::Unavailable => 3,
        ContactState::SlipUnknown => 4,
    }
}

/// One sample line, field for field what `line.c` prints from a `cw_estimate`.
fn est_line(k: usize, mask: u8, e: &Estimate) -> String {
    let opt = |v: Option<i32>| v.map_or_else(String::new, |v| v.to_string());
    format!(
        "est,{k},{mask},{},{},{},{},{},{},{},{},{},{},{},{},{}",
        opt(e.torque.map(|t| t.to_bits())),
        opt(e.holding_capacity.map(|t| t.to_bits())),
        e.uncertainty.to_bits(),
        e.mu.to_bits(),
        e.effective_radius.to_bits(),
        e.clamp_force.to_bits(),
        e.force_channels_used.bits(),
        e.lining_temperature.to_bits(),
        e.bedding.to_bits(),
        e.wear.to_bits(),
        e.correction.to_bits(),
        state_code(e.state),
        e.flags.bits()
    )
}

/// `{ .counts = …, … }`: the C initializer of one sample's inputs.
fn inputs_c<const C: usize>(i: &Inputs<C>) -> String {
    let mut counts = [0i32; 4];
    let mut mask = 0u8;
    for (k, (slot, ch)) in counts.iter_mut().zip(i.force_channels.iter()).enumerate() {
        if ch.valid {
            *slot = ch.counts;
            mask |= 1 << k;
        }
    }
    let mut present = 0u8;
    let mut field = |bit: u8, name: &str, v: Option<i32>| match v {
        Some(v) => {
            present |= bit;
            format!(", .{name} = {v}")
        }
        None => String::new(),
    };
    let rest = [
        field(
            1 << 0,
            "input_speed_q16",
            i.input_speed.map(|v| v.to_bits()),
        ),
        field(
            1 << 1,
            "output_speed_q16",
            i.output_speed.map(|v| v.to_bits()),
        ),
        field(
            1 << 2,
            "actuator_command_q16",
            i.actuator_command.map(|v| v.to_bits()),
        ),
        field(
            1 << 3,
            "sensor_temperature_q16",
            i.sensor_temperature.map(|v| v.to_bits()),
        ),
        field(
            1 << 4,
            "lining_temperature_q16",
            i.lining_temperature.map(|v| v.to_bits()),
        ),
        field(
            1 << 5,
            "ambient_temperature_q16",
            i.ambient_temperature.map(|v| v.to_bits()),
        ),
        field(
            1 << 6,
            "reference_torque_q12",
            i.reference_torque.map(|v| v.to_bits()),
        ),
    ]
    .concat();
    let [c0, c1, c2, c3] = counts;
    format!(
        "{{ .counts = {{ {c0}, {c1}, {c2}, {c3} }}, .valid_mask = {mask}, .present = {present}{rest} }}"
    )
}

fn hex(bytes: &[u8]) -> String {
    bytes.iter().fold(String::new(), |mut s, b| {
        let _ = write!(s, "{b:02x}");
        s
    })
}

fn replay<const C: usize>(
    loaded: &LoadedConfig,
    core: &CoreDevice,
    device: &Device<C>,
    trace: &str,
    (config_name, trace_name): &(String, String),
) -> Result<(String, String), String> {
    let cal = ChannelCal::of(&loaded.config);
    let brake = loaded.config.device.kind == DeviceKind::Brake;
    let mut sim = CoreEstimator::new(&loaded.config, core).map_err(|e| e.to_string())?;
    let initial = core.initial.record(device);
    let mut est = match &initial {
        Some(r) => Estimator::restore(device, r).map_err(|e| e.to_string())?,
        None => Estimator::new(device),
    };
    let mut reader = TraceReader::open(trace, &loaded.config, RowPolicy::Stop, false)
        .map_err(|e| e.to_string())?;

    let mut samples = Vec::new();
    let mut lines = Vec::new();
    while let Some(sample) = reader.next_sample().map_err(|e| e.to_string())? {
        let k = samples.len();
        let inputs = convert::core_inputs::<C>(&sample, &cal, brake);
        let e = est.step(&inputs);
        if sim.step(&sample) != convert::estimate_row(&sample, &inputs, &e) {
            return Err(format!(
                "sample {k}: the core's estimate differs from clampwise replay's row"
            ));
        }
        let mask = inputs
            .force_channels
            .iter()
            .enumerate()
            .filter(|(_, c)| c.valid)
            .fold(0u8, |m, (i, _)| m | (1 << i));
        lines.push(est_line(k, mask, &e));
        samples.push(inputs_c(&inputs));
    }
    let n = samples.len();
    let sequence = u32::try_from(n).map_err(|_| "trace too long".to_string())?;
    let record = est.save(sequence);
    let again = Estimator::restore(device, &record).map_err(|e| e.to_string())?;
    let same = again.save(sequence) == record;

    let mut expected = String::new();
    let _ = writeln!(
        expected,
        "# clampwise-capi: an estimate, not a certified safety function; validate on the bench"
    );
    let _ = writeln!(
        expected,
        "# clampwise-capi,config={config_name},trace={trace_name},samples={n},channels={C},device_crc32=0x{:08x},capi_version={},start={}",
        device.checksum(),
        clampwise_capi::cw_version(),
        if initial.is_some() { "restored" } else { "new" }
    );
    let _ = writeln!(
        expected,
        "# est,sample,valid_mask,torque_bits,holding_capacity_bits,uncertainty_bits,mu_bits,\
         effective_radius_bits,clamp_force_bits,force_channels_used,lining_temperature_bits,\
         bedding_bits,wear_bits,correction_bits,state,flags"
    );
    for l in &lines {
        let _ = writeln!(expected, "{l}");
    }
    let _ = writeln!(
        expected,
        "record,sequence={sequence},bytes={}",
        hex(&record)
    );
    let _ = writeln!(expected, "restore,status=0,same={}", u8::from(same));

    let mut trace_c = format!(
        "/* Generated by clampwise-capi's c_fixture from {trace_name} ({config_name}). Do not edit.\n \
         * Each sample: the core's inputs as the simulator's replay converts the trace row. */\n\n\
         #include \"demo.h\"\n\n\
         const char clampwise_trace_config[] = \"{config_name}\";\n\
         const char clampwise_trace_name[] = \"{trace_name}\";\n\
         const uint32_t clampwise_trace_len = {n};\n\
         const cw_inputs clampwise_trace[{n}] = {{\n"
    );
    for s in &samples {
        let _ = writeln!(trace_c, "    {s},");
    }
    trace_c.push_str("};\n");
    Ok((trace_c, expected))
}
