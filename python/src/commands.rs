//! `compare`, `fit` and `synth`, run by the simulator's own subcommand code with the CLI's
//! arguments, so that their meaning, checks and JSON summaries are the CLI's (`--json`).

use std::path::PathBuf;

use clampwise_sim::cli::{CompareArgs, FitArgs, SynthArgs, TraceArgs};
use clampwise_sim::commands::{self, Outcome};
use clampwise_sim::error::SimError;
use pyo3::prelude::*;

use crate::errors;
use crate::reading::Reading;

/// The CLI's `--json` document of an outcome (with `ok`, and `error` on a failure) and the
/// failure itself.
fn document(o: Outcome) -> (String, Option<SimError>) {
    let mut js = o.json;
    if let serde_json::Value::Object(m) = &mut js {
        m.insert("ok".into(), o.failure.is_none().into());
        if let Some(f) = &o.failure {
            m.insert(
                "error".into(),
                serde_json::json!({"kind": f.kind(), "message": f.to_string(), "exit_code": f.exit_code()}),
            );
        }
    }
    (js.to_string(), o.failure)
}

/// What a command returns to Python: its JSON document, its human summary, and the message and
/// kind of a failure that the CLI reports through its exit code (a breached gate).
type Returned = (String, String, Option<(String, i32)>);

fn run(py: Python<'_>, f: impl FnOnce() -> Result<Outcome, SimError> + Send) -> PyResult<Returned> {
    let o = py.detach(f).map_err(|e| errors::to_py(py, e))?;
    let human = o.human.clone();
    let (json, failure) = document(o);
    Ok((json, human, failure.map(|f| (f.to_string(), f.exit_code()))))
}

/// `clampwise compare ESTIMATES… [--config C] [gates]`.
#[pyfunction]
#[pyo3(signature = (estimates, *, config=None, gate_states=vec!["slipping".to_string()], relative_floor_nm=10.0, max_bias_nm=None, max_rms_nm=None, max_p99_nm=None, max_abs_nm=None, max_rms_pct=None, max_p99_pct=None, max_holding_violations=None, regions_csv=None))]
#[allow(clippy::too_many_arguments)]
pub fn compare(
    py: Python<'_>,
    estimates: Vec<String>,
    config: Option<PathBuf>,
    gate_states: Vec<String>,
    relative_floor_nm: f64,
    max_bias_nm: Option<f64>,
    max_rms_nm: Option<f64>,
    max_p99_nm: Option<f64>,
    max_abs_nm: Option<f64>,
    max_rms_pct: Option<f64>,
    max_p99_pct: Option<f64>,
    max_holding_violations: Option<u64>,
    regions_csv: Option<String>,
) -> PyResult<Returned> {
    if estimates.is_empty() {
        return Err(errors::usage("compare needs at least one estimate file"));
    }
    let a = CompareArgs {
        estimates,
        config,
        max_bias_nm,
        max_rms_nm,
        max_p99_nm,
        max_abs_nm,
        max_rms_pct,
        max_p99_pct,
        gate_states,
        max_holding_violations,
        relative_floor_nm,
        regions_csv,
    };
    run(py, move || commands::compare(&a, true))
}

/// `clampwise fit --config C TRACE [--out F] [--coverage-csv F] [--plot F] …`.
#[pyfunction]
#[pyo3(signature = (config, trace, *, out=None, coverage_csv=None, plot=None, min_coverage=200.0, min_force_n=None, require_full_coverage=false, skip_bad_rows=false, delimiter=None, decimal=None, sample_period_s=None, column_map=Vec::new(), resample=None))]
#[allow(clippy::too_many_arguments)]
pub fn fit(
    py: Python<'_>,
    config: PathBuf,
    trace: String,
    out: Option<String>,
    coverage_csv: Option<String>,
    plot: Option<String>,
    min_coverage: f64,
    min_force_n: Option<f64>,
    require_full_coverage: bool,
    skip_bad_rows: bool,
    delimiter: Option<String>,
    decimal: Option<String>,
    sample_period_s: Option<f64>,
    column_map: Vec<String>,
    resample: Option<String>,
) -> PyResult<Returned> {
    let reading = Reading {
        delimiter,
        decimal,
        sample_period_s,
        column_map,
        resample,
    };
    let opts = reading.options().map_err(|e| errors::to_py(py, e))?;
    let a = FitArgs {
        config,
        trace,
        out,
        coverage_csv,
        plot,
        min_coverage,
        min_force_n,
        require_full_coverage,
        skip_bad_rows,
        reading: TraceArgs {
            delimiter: opts.dialect.delimiter,
            decimal: opts.dialect.decimal,
            sample_period_s: opts.sample_period_s,
            column_map: opts.columns,
            resample: opts.resample,
        },
    };
    run(py, move || commands::fit(&a, true))
}

/// `clampwise synth --config C --out F [--scenario S] [--rows N | --duration-s D] …`.
#[pyfunction]
#[pyo3(signature = (config, out, *, scenario="hoist".to_string(), rows=None, duration_s=None, seed=1, mu_scale=1.0, mu_fade_per_k=0.0, truth_config=None, force_noise_n=30.0, faults=Vec::new()))]
#[allow(clippy::too_many_arguments)]
pub fn synth(
    py: Python<'_>,
    config: PathBuf,
    out: String,
    scenario: String,
    rows: Option<u64>,
    duration_s: Option<f64>,
    seed: u64,
    mu_scale: f64,
    mu_fade_per_k: f64,
    truth_config: Option<PathBuf>,
    force_noise_n: f64,
    faults: Vec<String>,
) -> PyResult<Returned> {
    if out == "-" {
        return Err(errors::usage(
            "synth from Python writes a file: give a path, not '-'",
        ));
    }
    let a = SynthArgs {
        config,
        out,
        scenario,
        rows,
        duration_s,
        seed,
        mu_scale,
        mu_fade_per_k,
        truth_config,
        force_noise_n,
        faults,
    };
    run(py, move || commands::synth(&a, true))
}
