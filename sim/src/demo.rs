//! `demo`: the built-in demonstration on an invented device, the caliper holding brake of the
//! fictional Kestrel Deep No. 2 mine hoist (`configs/demo-hoist-brake.toml`).
//!
//! Steps: write the config; synthesise the `hoist` scenario from the f64 plant with pads that
//! run 7 % below the nominal μ table and four injected sensor faults; replay; compare; fit the
//! μ table; replay and compare again with the fitted table; plot; summarise with the caution.
//! All numbers are invented for the demonstration.

use std::path::Path;

use serde_json::json;

use crate::build_core::CoreDevice;
use crate::cli::DemoArgs;
use crate::commands::{Outcome, bar};
use crate::compare;
use crate::config::LoadedConfig;
use crate::error::SimError;
use crate::fit::{self, FitOptions};
use crate::output::write_file;
use crate::plant::PlantOptions;
use crate::plant::scenario::Scenario;
use crate::plot;
use crate::plot::{BUCKETS, Envelope, TimeWindow};
use crate::replay::{self, CAUTION, ReplayOptions};
use crate::synth;
use clampwise_convert::ChannelCal;

/// The demo device's config text.
pub use clampwise_device::DEMO_CONFIG;

/// The sensor faults the demo injects.
pub const DEMO_FAULTS: [&str; 4] = [
    "stuck:2@40..45",
    "rail_high:3@120..121",
    "dropout:1@150..152",
    "offset:2@250..260=30000",
];

/// How far the demo's "real" pads sit from the nominal table (invented).
pub const DEMO_MU_SCALE: f64 = 0.93;

/// The demo faults that start within the first `duration_s` seconds: their text and parsed
/// form.
///
/// # Errors
/// An internal error if a built-in fault text does not parse.
pub fn faults_within(
    duration_s: f64,
) -> Result<(Vec<&'static str>, Vec<crate::plant::faults::Fault>), SimError> {
    let mut names = Vec::new();
    let mut faults = Vec::new();
    for text in DEMO_FAULTS {
        let f: crate::plant::faults::Fault = text.parse().map_err(SimError::Internal)?;
        if f.start_s < duration_s {
            names.push(text);
            faults.push(f);
        }
    }
    Ok((names, faults))
}

fn path(dir: &Path, name: &str) -> String {
    dir.join(name).display().to_string()
}

/// Run the demo.
///
/// # Errors
/// I/O errors, or an internal error if a step fails.
pub fn run(a: &DemoArgs, quiet: bool) -> Result<Outcome, SimError> {
    let dir = &a.out_dir;
    std::fs::create_dir_all(dir).map_err(|e| SimError::io(dir, e))?;
    if !(a.duration_s.is_finite() && a.duration_s > 0.0) {
        return Err(SimError::Usage("--duration-s must be positive".into()));
    }
    let (config_name, config_text) = match &a.config {
        None => ("demo-hoist-brake.toml".to_string(), DEMO_CONFIG.to_string()),
        Some(p) => (
            p.file_name().map_or_else(
                || "device.toml".to_string(),
                |n| n.to_string_lossy().into_owned(),
            ),
            std::fs::read_to_string(p).map_err(|e| SimError::io(p, e))?,
        ),
    };
    let config_path = path(dir, &config_name);
    write_file(&config_path, config_text.as_bytes())?;
    let cfg = LoadedConfig::from_str(&config_text, &config_path)?;
    let core = CoreDevice::build(&cfg.config).map_err(|e| SimError::Internal(e.to_string()))?;

    let trace = path(dir, "trace.csv");
    let scenario =
        Scenario::builtin("hoist").ok_or_else(|| SimError::Internal("hoist scenario".into()))?;
    // Positive and finite, checked above.
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let rows = (a.duration_s / cfg.config.device.sample_period_s).round() as u64;
    if rows == 0 {
        return Err(SimError::Usage(
            "--duration-s is shorter than one sample period".into(),
        ));
    }
    let (fault_names, faults) = faults_within(a.duration_s)?;
    let pb = bar(quiet, None, "synthesising");
    let syn = synth::synthesise(
        &cfg.config,
        "hoist",
        &scenario,
        PlantOptions {
            seed: a.seed,
            mu_scale: DEMO_MU_SCALE,
            faults,
            ..PlantOptions::default()
        },
        rows,
        &trace,
        pb.as_ref(),
    )?;
    if let Some(pb) = pb {
        pb.finish_and_clear();
    }

    let estimate = path(dir, "estimate.csv");
    let mut dec =
        Envelope::new(BUCKETS, TimeWindow::default()).with_calibration(ChannelCal::of(&cfg.config));
    let opts = ReplayOptions {
        skip_bad_rows: false,
        progress: bar(quiet, None, "replaying"),
        ..ReplayOptions::default()
    };
    let rep = replay::replay_file(&cfg, &core, &trace, &estimate, &opts, Some(&mut dec))?;
    if let Some(pb) = &opts.progress {
        pb.finish_and_clear();
    }
    let gate = compare::GateSpec::default();
    let before = compare::compare_file(&estimate, Some(&cfg.config), &gate, None)?;

    let pb = bar(quiet, None, "fitting μ");
    let fitted = fit::fit_trace(&cfg, &core, &trace, &FitOptions::default(), pb.as_ref())?;
    if let Some(pb) = pb {
        pb.finish_and_clear();
    }
    let fitted_path = path(dir, "fitted.toml");
    let fitted_text = fit::patched_config(&cfg, &fitted)?;
    write_file(&fitted_path, fitted_text.as_bytes())?;
    write_file(
        &path(dir, "coverage.csv"),
        fit::coverage_csv(&fitted).as_bytes(),
    )?;
    let cfg2 = LoadedConfig::from_str(&fitted_text, &fitted_path)?;
    let core2 = CoreDevice::build(&cfg2.config).map_err(|e| SimError::Internal(e.to_string()))?;
    let estimate2 = path(dir, "estimate-fitted.csv");
    let mut dec2 =
        Envelope::new(BUCKETS, TimeWindow::default()).with_calibration(ChannelCal::of(&cfg.config));
    let rep2 = replay::replay_file(
        &cfg2,
        &core2,
        &trace,
        &estimate2,
        &ReplayOptions::default(),
        Some(&mut dec2),
    )?;
    let after = compare::compare_file(&estimate2, Some(&cfg2.config), &gate, None)?;

    let plots = if a.no_plots {
        Vec::new()
    } else {
        write_plots(dir, &cfg, [&dec, &dec2], &fitted)?
    };

    let results = Results {
        cfg: &cfg,
        duration_s: a.duration_s,
        fault_names: &fault_names,
        syn: &syn,
        rep: &rep,
        before: &before,
        after: &after,
        rep2: &rep2,
        fitted: &fitted,
        plots: &plots,
        dir,
    };
    let human = human_summary(&results);
    let js = summary_json(&results);
    write_file(
        &path(dir, "summary.json"),
        serde_json::to_string_pretty(&js)
            .unwrap_or_default()
            .as_bytes(),
    )?;
    Ok(Outcome {
        human,
        json: js,
        human_to_stderr: false,
        failure: None,
    })
}

/// The demo's plots: the time series with the nominal and the fitted table, and the fitted μ
/// surface; the paths written.
fn write_plots(
    dir: &Path,
    cfg: &LoadedConfig,
    [dec, dec2]: [&Envelope; 2],
    fitted: &fit::FitReport,
) -> Result<Vec<String>, SimError> {
    let mut plots = Vec::new();
    let name = &cfg.config.device.name;
    for (f, d, what) in [
        ("estimate.svg", dec, "nominal table"),
        ("estimate.png", dec, "nominal table"),
        ("estimate-fitted.svg", dec2, "fitted table"),
    ] {
        let p = path(dir, f);
        plot::time_series_file(&p, d, &format!("{name} — {what}"))?;
        plots.push(p);
    }
    let (nt, nv) = (
        cfg.config.friction.mu.temperature_c.len(),
        cfg.config.friction.mu.slip_speed_rad_s.len(),
    );
    for f in ["mu-surface.svg", "mu-surface.png"] {
        let p = path(dir, f);
        plot::surface_file(&p, &fitted.cells, nt, nv)?;
        plots.push(p);
    }
    Ok(plots)
}

/// What the demo's steps produced, for its summaries.
struct Results<'a> {
    cfg: &'a LoadedConfig,
    duration_s: f64,
    fault_names: &'a [&'static str],
    syn: &'a synth::SynthSummary,
    rep: &'a replay::ReplaySummary,
    before: &'a compare::CompareReport,
    after: &'a compare::CompareReport,
    rep2: &'a replay::ReplaySummary,
    fitted: &'a fit::FitReport,
    plots: &'a [String],
    dir: &'a Path,
}

/// One line on the slipping rows' error of a comparison.
fn slipping_line(r: &compare::CompareReport) -> String {
    r.slipping.as_ref().map_or("no slipping rows".into(), |e| {
        let rel = e.relative.as_ref().map_or(String::new(), |r| {
            format!(" (RMS {:.2} % of |reference| over {} rows ≥ {} N·m)", r.rms_pct, r.n, r.floor_nm)
        });
        format!("bias {:+8.1} N·m, RMS {:7.1} N·m, P99 {:7.1} N·m, max {:7.1} N·m over {} slipping rows{rel}", e.bias_nm, e.rms_nm, e.p99_nm, e.max_abs_nm, e.n)
    })
}

/// The demo's summary for people, ending with the caution.
fn human_summary(r: &Results<'_>) -> String {
    let Results {
        cfg,
        duration_s,
        fault_names,
        syn,
        rep,
        before,
        after,
        fitted,
        plots,
        dir,
        ..
    } = *r;
    let mut human = String::new();
    human.push_str("clampwise demo — INVENTED device and data\n");
    human.push_str(&format!("  device: {}\n", cfg.config.device.name));
    human.push_str(&format!(
        "  trace:  {} rows ({:.0} s at {} Hz) from the simulator's f64 plant, pads {} % below the nominal μ table, faults {}\n",
        syn.rows,
        duration_s,
        1.0 / cfg.config.device.sample_period_s,
        ((1.0 - DEMO_MU_SCALE) * 100.0).round(),
        if fault_names.is_empty() {
            "none (all start after the trace ends)".into()
        } else {
            fault_names.join(", ")
        }
    ));
    human.push_str(&format!(
        "  max lining temperature {:.0} °C, max |torque| {:.0} N·m\n",
        syn.max_true_temp_c, rep.tally.max_abs_torque_nm
    ));
    let states: Vec<String> = rep
        .tally
        .states()
        .iter()
        .map(|(k, v)| format!("{k} {v}"))
        .collect();
    human.push_str(&format!("  states: {}\n", states.join(", ")));
    // Every flag the replay counted, as the replay's own summary lists them.
    let fl: Vec<String> = rep
        .tally
        .flags()
        .iter()
        .map(|(k, v)| format!("{k} {v}"))
        .collect();
    human.push_str(&format!(
        "  flagged rows: {}\n",
        if fl.is_empty() {
            "none".into()
        } else {
            fl.join(", ")
        }
    ));
    human.push_str(&format!("  nominal table: {}\n", slipping_line(before)));
    human.push_str(&format!("  fitted table:  {}\n", slipping_line(after)));
    if before.holding.n > 0 {
        human.push_str(&format!(
            "  holding: {} rows; the load stayed within the estimated ±capacity in {} of them, outside in {} (worst margin {:.0} N·m)\n",
            before.holding.n,
            before.holding.within_capacity,
            before.holding.outside_capacity,
            before.holding.min_margin_nm.unwrap_or(0.0)
        ));
    }
    human.push_str(&format!(
        "  fit: {} samples used; {} of {} table entries reached; not reached (prior kept, not extrapolated): {}\n",
        fitted.used,
        fitted.cells.iter().filter(|c| c.reached).count(),
        fitted.cells.len(),
        if fitted.unreached.is_empty() { "none".into() } else { fitted.unreached.len().to_string() }
    ));
    human.push_str(&format!(
        "  replay throughput: {:.0} rows/s ({})\n",
        rep.rows_per_s,
        replay::ESTIMATOR_NAME
    ));
    let config_name = std::path::Path::new(&r.cfg.file)
        .file_name()
        .map_or_else(String::new, |n| n.to_string_lossy().into_owned());
    human.push_str(&format!("  files in {}: {config_name}, trace.csv, estimate.csv, fitted.toml, coverage.csv, estimate-fitted.csv, summary.json", dir.display()));
    for p in plots {
        if let Some(n) = Path::new(p).file_name() {
            human.push_str(&format!(", {}", n.to_string_lossy()));
        }
    }
    human.push('\n');
    human.push_str(&format!("\n{CAUTION}\n"));
    human
}

/// The demo's summary as JSON (`summary.json`, `--json`).
fn summary_json(r: &Results<'_>) -> serde_json::Value {
    json!({
        "command": "demo",
        "invented": true,
        "device": r.cfg.config.device.name,
        "faults": r.fault_names,
        "synth": serde_json::to_value(r.syn).unwrap_or_default(),
        "replay": serde_json::to_value(r.rep).unwrap_or_default(),
        "compare_nominal": serde_json::to_value(r.before).unwrap_or_default(),
        "fit": serde_json::to_value(r.fitted).unwrap_or_default(),
        "replay_fitted": serde_json::to_value(r.rep2).unwrap_or_default(),
        "compare_fitted": serde_json::to_value(r.after).unwrap_or_default(),
        "plots": r.plots,
        "caution": CAUTION,
    })
}
