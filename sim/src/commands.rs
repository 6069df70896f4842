//! The subcommands: each returns an [`Outcome`] (human text, JSON, and a failure that sets
//! the exit code) so that `main` prints and exits in one place.

use std::path::Path;

use indicatif::{MultiProgress, ProgressBar, ProgressDrawTarget, ProgressStyle};
use rayon::prelude::*;
use serde_json::{Value, json};

use crate::build_core::CoreDevice;
use crate::cli::{CheckArgs, CompareArgs, FitArgs, PlotArgs, ReplayArgs, SynthArgs, TablesArgs};
use crate::column_units::Quantity;
use crate::compare::{self, GateSpec, Thresholds};
use crate::config::{ConfigErrors, ConfigIssue, LoadedConfig};
use crate::emit;
use crate::error::SimError;
use crate::estimate::EstimateReader;
use crate::fit::{self, FitOptions};
use crate::output::{refuse_overwriting_inputs, write_file};
use crate::plant::PlantOptions;
use crate::plant::faults::Fault;
use crate::plant::scenario::{SCENARIOS, Scenario};
use crate::plot;
use crate::plot::{BUCKETS, Envelope, TimeWindow};
use crate::replay::{self, CAUTION, ReplayOptions};
use crate::schema::CANONICAL;
use crate::synth;
use clampwise_convert::ChannelCal;

/// What a subcommand produced.
pub struct Outcome {
    /// Human text.
    pub human: String,
    /// Machine-readable summary.
    pub json: Value,
    /// Print the human text on standard error (when standard output carries data).
    pub human_to_stderr: bool,
    /// A failure to report after the output (sets the exit code).
    pub failure: Option<SimError>,
}

impl Outcome {
    fn ok(human: String, json: Value) -> Self {
        Self {
            human,
            json,
            human_to_stderr: false,
            failure: None,
        }
    }
}

/// A progress bar on standard error, or none when quiet (indicatif also hides it when
/// standard error is not a terminal).
pub fn bar(quiet: bool, multi: Option<&MultiProgress>, label: &str) -> Option<ProgressBar> {
    if quiet {
        return None;
    }
    let pb = ProgressBar::with_draw_target(None, ProgressDrawTarget::stderr());
    let style = ProgressStyle::with_template(
        "{prefix:>24} [{bar:40}] {percent:>3}% {elapsed_precise} eta {eta}",
    )
    .unwrap_or_else(|_| ProgressStyle::default_bar())
    .progress_chars("=> ");
    pb.set_style(style);
    let short: String = label
        .chars()
        .rev()
        .take(24)
        .collect::<Vec<_>>()
        .into_iter()
        .rev()
        .collect();
    pb.set_prefix(short);
    Some(match multi {
        Some(m) => m.add(pb),
        None => pb,
    })
}

/// Read and validate a config; `-` reads it from standard input.
///
/// # Errors
/// The config's located problems; an unreadable file or stream is one problem without a
/// location.
pub fn read_config(path: &Path) -> Result<LoadedConfig, ConfigErrors> {
    if path.as_os_str() != "-" {
        return LoadedConfig::load(path);
    }
    let mut text = String::new();
    match std::io::Read::read_to_string(&mut std::io::stdin().lock(), &mut text) {
        Ok(_) => LoadedConfig::from_str(&text, "-"),
        Err(e) => Err(ConfigErrors {
            file: "-".into(),
            issues: vec![ConfigIssue {
                key: None,
                line: None,
                column: None,
                message: format!("cannot read the config from standard input: {e}"),
                snippet: None,
            }],
        }),
    }
}

fn path_str(p: &Path) -> &str {
    p.to_str().unwrap_or("")
}

fn load(path: &Path) -> Result<(LoadedConfig, CoreDevice), SimError> {
    let cfg = read_config(path)?;
    // Loading already ran the core's checks; a failure here is a bug.
    let core = CoreDevice::build(&cfg.config).map_err(|e| SimError::Internal(e.to_string()))?;
    Ok((cfg, core))
}

fn to_json<T: serde::Serialize>(v: &T) -> Value {
    serde_json::to_value(v).unwrap_or(Value::Null)
}

fn stem(p: &str) -> String {
    Path::new(p)
        .file_stem()
        .map_or("trace".into(), |s| s.to_string_lossy().into_owned())
}

/// `replay`.
///
/// # Errors
/// Usage, config, data and I/O errors (for several traces, the first failure after all ran).
pub fn replay(a: &ReplayArgs, quiet: bool) -> Result<Outcome, SimError> {
    let jobs = replay_jobs(a)?;
    let mut inputs = vec![("config", path_str(&a.config))];
    inputs.extend(jobs.iter().map(|j| ("trace", j.0.as_str())));
    let mut outputs: Vec<(&str, &str)> = jobs.iter().map(|j| ("estimate", j.1.as_str())).collect();
    outputs.extend(
        jobs.iter()
            .filter_map(|j| j.2.as_deref().map(|p| ("plot", p))),
    );
    refuse_overwriting_inputs(&inputs, &outputs)?;
    let columns = a
        .columns
        .as_ref()
        .map(|c| crate::estimate::select_columns(c))
        .transpose()
        .map_err(SimError::Usage)?;
    let trace_opts = a.reading.options();
    let (cfg, core) = load(&a.config)?;
    trace_opts.check(&cfg.config)?;
    let to_stdout = jobs.iter().any(|j| j.1 == "-");
    let multi = MultiProgress::with_draw_target(ProgressDrawTarget::stderr());
    let run = |(trace, out, plot_path): &(String, String, Option<String>)| {
        let opts = ReplayOptions {
            skip_bad_rows: a.skip_bad_rows,
            progress: bar(quiet, Some(&multi), trace),
            trace: trace_opts.clone(),
            columns: columns.clone(),
        };
        let mut dec = plot_path.as_ref().map(|_| {
            Envelope::new(BUCKETS, TimeWindow::default())
                .with_calibration(ChannelCal::of(&cfg.config))
        });
        let s = replay::replay_file(&cfg, &core, trace, out, &opts, dec.as_mut())?;
        if let Some(pb) = &opts.progress {
            pb.finish_and_clear();
        }
        if let (Some(p), Some(d)) = (plot_path, &dec) {
            plot::time_series_file(p, d, &format!("{} — {}", cfg.config.device.name, trace))?;
        }
        Ok::<_, SimError>(s)
    };
    let results: Vec<Result<replay::ReplaySummary, SimError>> = match a.jobs {
        Some(n) if n > 0 => rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .map_err(|e| SimError::Internal(e.to_string()))?
            .install(|| jobs.par_iter().map(run).collect()),
        _ => jobs.par_iter().map(run).collect(),
    };
    let mut human = String::new();
    let mut js = Vec::new();
    let mut failure: Option<SimError> = None;
    for (r, job) in results.into_iter().zip(&jobs) {
        match r {
            Ok(s) => {
                human.push_str(&replay::human(&s));
                if let Some(p) = &job.2 {
                    human.push_str(&format!("  plot: {p}\n"));
                }
                js.push(json!({"ok": true, "summary": to_json(&s), "plot": job.2}));
            }
            Err(e) => {
                human.push_str(&format!("FAILED {}: {e}\n", job.0));
                js.push(json!({"ok": false, "trace": job.0, "error": e.to_string(), "exit_code": e.exit_code()}));
                if failure.is_none() {
                    failure = Some(e);
                }
            }
        }
    }
    human.push_str(&format!("{CAUTION}\n"));
    Ok(Outcome {
        human,
        json: json!({"command": "replay", "config": cfg.file, "estimator": replay::ESTIMATOR_NAME, "traces": js}),
        human_to_stderr: to_stdout,
        failure,
    })
}

/// One job per trace: the trace, its estimate file and its plot file (if any); several traces
/// need an output directory, distinct names and no standard input.
fn replay_jobs(a: &ReplayArgs) -> Result<Vec<(String, String, Option<String>)>, SimError> {
    if a.traces.len() == 1 {
        let t = a.traces.first().cloned().unwrap_or_default();
        let out = match (&a.out, &a.out_dir) {
            (Some(o), _) => o.clone(),
            (None, Some(d)) => d
                .join(format!("{}.estimate.csv", stem(&t)))
                .display()
                .to_string(),
            (None, None) => {
                return Err(SimError::Usage(
                    "replay needs --out FILE (or --out-dir DIR)".into(),
                ));
            }
        };
        let plot = a.plot.clone().or_else(|| {
            a.plot_dir
                .as_ref()
                .map(|d| d.join(format!("{}.svg", stem(&t))).display().to_string())
        });
        Ok(vec![(t, out, plot)])
    } else {
        let dir = a
            .out_dir
            .clone()
            .ok_or_else(|| SimError::Usage("several traces need --out-dir DIR".into()))?;
        if a.plot.is_some() {
            return Err(SimError::Usage(
                "several traces: use --plot-dir instead of --plot".into(),
            ));
        }
        if a.traces.iter().filter(|t| *t == "-").count() > 0 {
            return Err(SimError::Usage(
                "standard input can only be replayed alone".into(),
            ));
        }
        let mut seen = std::collections::HashSet::new();
        for t in &a.traces {
            if !seen.insert(stem(t)) {
                return Err(SimError::Usage(format!(
                    "two traces share the name '{}': their estimate files would collide",
                    stem(t)
                )));
            }
        }
        Ok(a.traces
            .iter()
            .map(|t| {
                (
                    t.clone(),
                    dir.join(format!("{}.estimate.csv", stem(t)))
                        .display()
                        .to_string(),
                    a.plot_dir
                        .as_ref()
                        .map(|d| d.join(format!("{}.svg", stem(t))).display().to_string()),
                )
            })
            .collect())
    }
}

/// `compare`.
///
/// # Errors
/// Config, data and I/O errors; threshold breaches are the outcome's failure (exit 3).
pub fn compare(a: &CompareArgs, quiet: bool) -> Result<Outcome, SimError> {
    let gate = GateSpec::parse(&a.gate_states, a.relative_floor_nm).map_err(SimError::Usage)?;
    let mut inputs: Vec<(&str, &str)> = a
        .estimates
        .iter()
        .map(|e| ("estimate", e.as_str()))
        .collect();
    if let Some(c) = &a.config {
        inputs.push(("config", path_str(c)));
    }
    let outputs: Vec<(&str, &str)> = a
        .regions_csv
        .iter()
        .map(|p| ("--regions-csv", p.as_str()))
        .collect();
    refuse_overwriting_inputs(&inputs, &outputs)?;
    let cfg = match &a.config {
        Some(p) => Some(read_config(p)?),
        None => None,
    };
    let th = Thresholds {
        max_bias_nm: a.max_bias_nm,
        max_rms_nm: a.max_rms_nm,
        max_p99_nm: a.max_p99_nm,
        max_abs_nm: a.max_abs_nm,
        max_rms_pct: a.max_rms_pct,
        max_p99_pct: a.max_p99_pct,
        max_holding_violations: a.max_holding_violations,
    };
    let multi = MultiProgress::with_draw_target(ProgressDrawTarget::stderr());
    let reports: Vec<Result<compare::CompareReport, SimError>> = a
        .estimates
        .par_iter()
        .map(|e| {
            let pb = bar(quiet, Some(&multi), e);
            let r = compare::compare_file(e, cfg.as_ref().map(|c| &c.config), &gate, pb.as_ref());
            if let Some(pb) = pb {
                pb.finish_and_clear();
            }
            r
        })
        .collect();
    let mut human = String::new();
    let mut js = Vec::new();
    let mut breaches = Vec::new();
    let mut csv = String::from(
        "file,region,n,bias_Nm,rms_Nm,max_abs_Nm,p95_Nm,p99_Nm,relative_floor_Nm,relative_n,bias_pct,rms_pct,max_abs_pct,p95_pct,p99_pct\n",
    );
    for r in reports {
        let r = r?;
        human.push_str(&compare::human(&r));
        let b = th.breaches(&r);
        for m in &b {
            human.push_str(&format!("  THRESHOLD FAILED: {m}\n"));
            breaches.push(format!("{}: {m}", r.file));
        }
        let mut rows: Vec<(String, &compare::ErrorReport)> = Vec::new();
        if let Some(o) = &r.overall {
            rows.push(("overall".into(), o));
        }
        if let Some(o) = &r.slipping {
            rows.push(("slipping".into(), o));
        }
        if let Some(o) = &r.gated {
            rows.push((format!("gated {}", r.gate_states.join("+")), o));
        }
        for g in &r.regions {
            rows.push((g.region.clone(), &g.report));
        }
        for (k, e) in rows {
            let rel = e.relative.as_ref().map_or_else(
                || format!("{},0,,,,,", gate.relative_floor_nm),
                |x| {
                    format!(
                        "{},{},{},{},{},{},{}",
                        x.floor_nm, x.n, x.bias_pct, x.rms_pct, x.max_abs_pct, x.p95_pct, x.p99_pct
                    )
                },
            );
            csv.push_str(&format!(
                "\"{}\",\"{}\",{},{},{},{},{},{},{rel}\n",
                r.file.replace('"', "\"\""),
                k,
                e.n,
                e.bias_nm,
                e.rms_nm,
                e.max_abs_nm,
                e.p95_nm,
                e.p99_nm
            ));
        }
        js.push(json!({"report": to_json(&r), "breaches": b}));
    }
    if let Some(p) = &a.regions_csv {
        write_file(p, csv.as_bytes())?;
        human.push_str(&format!("regions written to {p}\n"));
    }
    human.push_str(&format!(
        "gates (--max-*) apply to the {} rows; holding rows are judged by --max-holding-violations\n",
        gate.label()
    ));
    human.push_str(&format!("{CAUTION}\n"));
    let failure = if breaches.is_empty() {
        None
    } else {
        Some(SimError::Threshold(breaches.join("; ")))
    };
    Ok(Outcome {
        human,
        json: json!({"command": "compare", "gate_states": gate.states.iter().map(|s| s.name()).collect::<Vec<_>>(), "relative_floor_nm": gate.relative_floor_nm, "files": js}),
        human_to_stderr: a.regions_csv.as_deref() == Some("-"),
        failure,
    })
}

/// `fit`.
///
/// # Errors
/// Config, data and I/O errors; incomplete coverage under `--require-full-coverage` is the
/// outcome's failure (exit 3) and nothing is written.
pub fn fit(a: &FitArgs, quiet: bool) -> Result<Outcome, SimError> {
    let outputs: Vec<(&str, &str)> = [
        ("--out", &a.out),
        ("--coverage-csv", &a.coverage_csv),
        ("--plot", &a.plot),
    ]
    .into_iter()
    .filter_map(|(w, p)| p.as_deref().map(|p| (w, p)))
    .collect();
    refuse_overwriting_inputs(
        &[("config", path_str(&a.config)), ("trace", a.trace.as_str())],
        &outputs,
    )?;
    let (cfg, core) = load(&a.config)?;
    let opts = FitOptions {
        min_coverage: a.min_coverage,
        min_force_n: a.min_force_n,
        skip_bad_rows: a.skip_bad_rows,
        trace: a.reading.options(),
    };
    opts.trace.check(&cfg.config)?;
    if !(a.min_coverage.is_finite() && a.min_coverage > 0.0) {
        return Err(SimError::Usage(
            "--min-coverage must be a positive number".into(),
        ));
    }
    let pb = bar(quiet, None, &a.trace);
    let r = fit::fit_trace(&cfg, &core, &a.trace, &opts, pb.as_ref())?;
    if let Some(pb) = pb {
        pb.finish_and_clear();
    }
    let (nt, nv) = (
        cfg.config.friction.mu.temperature_c.len(),
        cfg.config.friction.mu.slip_speed_rad_s.len(),
    );
    let mut human = fit::human(&r, nv);
    let nothing_fitted = r.cells.iter().all(|c| !c.reached);
    let incomplete = (a.require_full_coverage && !r.unreached.is_empty()) || nothing_fitted;
    let mut written = Vec::new();
    if !incomplete {
        if let Some(p) = &a.out {
            write_file(p, fit::patched_config(&cfg, &r)?.as_bytes())?;
            written.push(p.clone());
        }
        if let Some(p) = &a.coverage_csv {
            write_file(p, fit::coverage_csv(&r).as_bytes())?;
            written.push(p.clone());
        }
        if let Some(p) = &a.plot {
            plot::surface_file(p, &r.cells, nt, nv)?;
            written.push(p.clone());
        }
    }
    for w in &written {
        human.push_str(&format!("  wrote {w}\n"));
    }
    human.push_str(&format!("{CAUTION}\n"));
    Ok(Outcome {
        human,
        json: json!({"command": "fit", "report": to_json(&r), "written": written}),
        human_to_stderr: false,
        failure: incomplete.then(|| {
            SimError::Threshold(if nothing_fitted {
                format!(
                    "no table entry reached --min-coverage {} (the fitted table would be the prior unchanged); nothing written",
                    a.min_coverage
                )
            } else {
                format!(
                    "--require-full-coverage: {} entries not reached; nothing written",
                    r.unreached.len()
                )
            })
        }),
    })
}

/// `tables`.
///
/// # Errors
/// Config and I/O errors.
pub fn tables(a: &TablesArgs) -> Result<Outcome, SimError> {
    let outputs: Vec<(&str, &str)> = (a.emit.iter().map(|p| ("--emit", p.as_str())))
        .chain(a.emit_c.iter().map(|p| ("--emit-c", p.as_str())))
        .collect();
    refuse_overwriting_inputs(&[("config", path_str(&a.config))], &outputs)?;
    let (cfg, core) = load(&a.config)?;
    let t = &core.tables;
    let mut human = emit::human(&cfg, &core);
    if let Some(p) = &a.emit {
        let source = emit::device_source(&core, &emit::origin_name(&cfg.file))
            .map_err(|e| SimError::Internal(format!("{}: {e}", cfg.file)))?;
        write_file(p, source.as_bytes())?;
        human.push_str(&format!("  wrote {p} (Rust source for the firmware)\n"));
    }
    if let Some(p) = &a.emit_c {
        let source = emit::c_source(&core, &emit::origin_name(&cfg.file))
            .map_err(|e| SimError::Internal(format!("{}: {e}", cfg.file)))?;
        write_file(p, source.as_bytes())?;
        human.push_str(&format!("  wrote {p} (C source for the C API)\n"));
    }
    Ok(Outcome::ok(
        human,
        json!({
            "command": "tables",
            "config": cfg.file,
            "checksum": format!("0x{:08X}", core.device.checksum()),
            "radius_m": {"uniform_pressure": t.radii_m.0, "uniform_wear": t.radii_m.1,
                          "force_n": t.radius.x_breakpoints().iter().map(|v| v.to_num::<f64>()).collect::<Vec<_>>(),
                          "bedding": t.radius.y_breakpoints().iter().map(|v| v.to_num::<f64>()).collect::<Vec<_>>(),
                          "values": t.radius.rows().map(|r| r.iter().map(|v| v.to_num::<f64>()).collect::<Vec<_>>()).collect::<Vec<_>>()},
            "mu": {"temperature_c": t.mu.x_breakpoints().iter().map(|v| v.to_num::<f64>()).collect::<Vec<_>>(),
                   "slip_speed_rad_s": t.mu.y_breakpoints().iter().map(|v| v.to_num::<f64>()).collect::<Vec<_>>(),
                   "values": t.mu.rows().map(|r| r.iter().map(|v| v.to_num::<f64>()).collect::<Vec<_>>()).collect::<Vec<_>>()},
            "emitted": a.emit,
            "emitted_c": a.emit_c,
        }),
    ))
}

/// `synth`.
///
/// # Errors
/// Usage (scenario, fault spec), config and I/O errors.
pub fn synth(a: &SynthArgs, quiet: bool) -> Result<Outcome, SimError> {
    let mut inputs = vec![("config", path_str(&a.config))];
    if let Some(t) = &a.truth_config {
        inputs.push(("--truth-config", path_str(t)));
    }
    refuse_overwriting_inputs(&inputs, &[("trace", a.out.as_str())])?;
    let (cfg, _) = load(&a.config)?;
    let scenario = Scenario::builtin(&a.scenario).ok_or_else(|| {
        SimError::Usage(format!(
            "unknown scenario '{}' (choose {})",
            a.scenario,
            SCENARIOS.join(", ")
        ))
    })?;
    let faults = a
        .faults
        .iter()
        .map(|f| f.parse::<Fault>())
        .collect::<Result<Vec<_>, _>>()
        .map_err(SimError::Usage)?;
    for f in &faults {
        if f.channel > cfg.config.sensors.len() {
            return Err(SimError::Usage(format!(
                "fault on channel {} but the config has {} sensors",
                f.channel,
                cfg.config.sensors.len()
            )));
        }
    }
    let truth_mu = match &a.truth_config {
        Some(p) => Some(read_config(p)?.config.friction.mu),
        None => None,
    };
    for (name, v) in [
        ("--mu-scale", a.mu_scale),
        ("--force-noise-n", a.force_noise_n),
    ] {
        if !(v.is_finite() && v >= 0.0) {
            return Err(SimError::Usage(format!(
                "{name} must be a non-negative number"
            )));
        }
    }
    let period = cfg.config.device.sample_period_s;
    let rows = match (a.rows, a.duration_s) {
        (Some(r), _) => r,
        (None, Some(d)) if d.is_finite() && d > 0.0 => {
            // Positive and finite: rounds to a row count.
            #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
            let r = (d / period).round() as u64;
            r
        }
        (None, Some(_)) => return Err(SimError::Usage("--duration-s must be positive".into())),
        (None, None) => {
            #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
            let r = (scenario.cycle_s() / period).round() as u64;
            r
        }
    };
    if rows == 0 {
        return Err(SimError::Usage(
            "no rows to synthesise: --rows must be at least 1 (and --duration-s at least one sample period)".into(),
        ));
    }
    let opts = PlantOptions {
        seed: a.seed,
        mu_scale: a.mu_scale,
        mu_fade_per_k: a.mu_fade_per_k,
        truth_mu,
        force_noise_n: a.force_noise_n,
        faults,
        ..PlantOptions::default()
    };
    let pb = bar(quiet || a.out == "-", None, &a.out);
    let s = synth::synthesise(
        &cfg.config,
        &a.scenario,
        &scenario,
        opts,
        rows,
        &a.out,
        pb.as_ref(),
    )?;
    if let Some(pb) = pb {
        pb.finish_and_clear();
    }
    let human = format!(
        "synthesised {} rows of scenario '{}' (seed {}) → {}\n  plant effective radius {:.6} m (new) … {:.6} m (bedded); max true lining temperature {:.1} °C; wear {:.3e} m; {:.2} s\n  INVENTED demo data from the simulator's own f64 plant.\n",
        s.rows,
        s.scenario,
        s.seed,
        s.output,
        s.plant_radii_m.0,
        s.plant_radii_m.1,
        s.max_true_temp_c,
        s.wear_m,
        s.elapsed_s
    );
    Ok(Outcome {
        human,
        json: json!({"command": "synth", "summary": to_json(&s)}),
        human_to_stderr: a.out == "-",
        failure: None,
    })
}

/// `check`.
///
/// # Errors
/// The config errors of the first invalid file (all files are checked and reported).
pub fn check(a: &CheckArgs) -> Result<Outcome, SimError> {
    let mut human = String::new();
    let mut js = Vec::new();
    if a.units {
        human.push_str("trace column units by quantity (header suffix spelling):\n");
        for q in [
            Quantity::Time,
            Quantity::Force,
            Quantity::Speed,
            Quantity::Torque,
            Quantity::Temperature,
            Quantity::Command,
            Quantity::Flag,
        ] {
            human.push_str(&format!("  {:<12} {}\n", q.name(), q.units().join(", ")));
        }
        human.push_str("canonical columns: ");
        human.push_str(
            &CANONICAL
                .iter()
                .map(|c| format!("{} = {}", c.0, c.1))
                .collect::<Vec<_>>()
                .join(", "),
        );
        human.push('\n');
    }
    if a.configs.iter().filter(|p| p.as_os_str() == "-").count() > 1 {
        return Err(SimError::Usage(
            "standard input ('-') can be read only once".into(),
        ));
    }
    let mut failure = None;
    for p in &a.configs {
        match read_config(p).and_then(|c| {
            CoreDevice::build(&c.config)
                .map(|d| (c, d))
                .map_err(|e| crate::config::ConfigErrors {
                    file: p.display().to_string(),
                    issues: vec![crate::config::ConfigIssue {
                        key: Some(e.key),
                        line: None,
                        column: None,
                        message: e.message,
                        snippet: None,
                    }],
                })
        }) {
            Ok((c, d)) => {
                let t = &d.tables;
                let lever = match &t.gain {
                    None => format!("r_e {:.4}…{:.4} m", t.radii_m.1, t.radii_m.0),
                    Some((_, info)) => format!(
                        "g(μ)/μ {:.4}…{:.4} m up to μ {:.3}",
                        t.radii_m.0, t.radii_m.1, info.mu_end
                    ),
                };
                human.push_str(&format!(
                    "{}: ok — {} ({:?}), {} × {} faces, {} sensors, μ table {}×{}, {lever}, checksum 0x{:08X}\n",
                    c.file,
                    c.config.device.name,
                    c.config.device.kind,
                    c.config.contact.shape.name(),
                    c.config.contact.faces,
                    c.config.sensors.len(),
                    t.mu.x_breakpoints().len(),
                    t.mu.y_breakpoints().len(),
                    d.device.checksum()
                ));
                js.push(json!({"file": c.file, "ok": true}));
            }
            Err(e) => {
                human.push_str(&format!("{e}\n"));
                js.push(json!({"file": e.file, "ok": false, "issues": e.issues.iter().map(|i| json!({"key": i.key, "line": i.line, "column": i.column, "message": i.message})).collect::<Vec<_>>()}));
                if failure.is_none() {
                    failure = Some(SimError::Config(e));
                }
            }
        }
    }
    Ok(Outcome {
        human,
        json: json!({"command": "check", "configs": js}),
        human_to_stderr: false,
        failure: failure.map(|f| match f {
            // The issues are in the human text already; keep the exit code, shorten the tail.
            SimError::Config(e) => {
                SimError::Usage(format!("{} has {} problem(s)", e.file, e.issues.len()))
            }
            other => other,
        }),
    })
}

/// `plot`.
///
/// # Errors
/// Data, I/O and plotting errors.
pub fn plot(a: &PlotArgs, quiet: bool) -> Result<Outcome, SimError> {
    refuse_overwriting_inputs(
        &[("estimate", a.estimate.as_str())],
        &[("plot", a.out.as_str())],
    )?;
    let window = a.window.window()?;
    let mut r = EstimateReader::open(&a.estimate)?;
    let mut d = Envelope::new(BUCKETS, window);
    let pb = bar(quiet, None, &a.estimate);
    if let (Some(pb), (Some(l), _)) = (&pb, r.progress()) {
        pb.set_length(l);
    }
    while let Some(row) = r.next_row()? {
        d.push(&row, None);
    }
    if let Some(pb) = pb {
        pb.finish_and_clear();
    }
    if d.kept() == 0 {
        return Err(SimError::Usage(format!(
            "no row of {} lies in the time window",
            a.estimate
        )));
    }
    plot::time_series_file(&a.out, &d, &a.estimate)?;
    Ok(Outcome::ok(
        format!(
            "plotted {} of {} rows (min/max per pixel column) → {}\n",
            d.kept(),
            d.seen(),
            a.out
        ),
        json!({"command": "plot", "file": a.out, "rows_plotted": d.kept(), "rows": d.seen()}),
    ))
}
