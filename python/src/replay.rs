//! `replay`: a config and a trace file in, the estimate file's columns out, through the
//! simulator's trace readers (CSV dialects, MDF4, Parquet where built in) and the core's
//! estimator, exactly as `clampwise replay` runs them.

use std::path::PathBuf;

use clampwise_sim::build_core::CoreDevice;
use clampwise_sim::commands::read_config;
use clampwise_sim::error::SimError;
use clampwise_sim::replay::run_stream;
use clampwise_sim::trace::{RowPolicy, TraceReader};
use pyo3::prelude::*;
use pyo3::types::PyDict;
use serde_json::json;

use crate::columns::Columns;
use crate::errors;
use crate::reading::Reading;

/// The rows of one replay and what the reader reported.
struct Replayed {
    columns: Columns,
    summary: serde_json::Value,
}

fn run(
    config: &std::path::Path,
    trace: &str,
    skip_bad_rows: bool,
    reading: &Reading,
) -> Result<Replayed, SimError> {
    let cfg = read_config(config)?;
    let core = CoreDevice::build(&cfg.config).map_err(|e| SimError::Internal(e.to_string()))?;
    let opts = reading.options()?;
    opts.check(&cfg.config)?;
    let policy = if skip_bad_rows {
        RowPolicy::Skip
    } else {
        RowPolicy::Stop
    };
    let mut reader = TraceReader::open_with(trace, &cfg.config, policy, false, &opts)?;
    let mut est = clampwise_convert::new_estimator(&cfg.config, &core)
        .map_err(|e| SimError::Internal(format!("starting state: {e}")))?;
    let mut columns = Columns::with_capacity(1 << 12);
    let time = run_stream(&mut reader, est.as_mut(), None, |_, row| {
        columns.push(row);
        Ok(())
    })?;
    let summary = json!({
        "trace": trace,
        "config": cfg.file,
        "device": cfg.config.device.name,
        "estimator": clampwise_sim::replay::ESTIMATOR_NAME,
        "rows_read": reader.rows_read(),
        "rows": columns.len(),
        "skipped": serde_json::to_value(reader.skipped()).unwrap_or_default(),
        "time": serde_json::to_value(&time).unwrap_or_default(),
        "dialect": serde_json::to_value(reader.dialect()).unwrap_or_default(),
        "log": serde_json::to_value(reader.log_report()).unwrap_or_default(),
        "resample": serde_json::to_value(reader.resampled()).unwrap_or_default(),
        "unterminated_last_line": reader.unterminated_last_line(),
    });
    Ok(Replayed { columns, summary })
}

/// Replay `trace` (a file `clampwise replay` reads) with the config `config` (TOML path):
/// `(columns, summary_json)`, the columns as in [`Columns::into_dict`].
#[pyfunction]
#[pyo3(signature = (config, trace, *, skip_bad_rows=false, delimiter=None, decimal=None, sample_period_s=None, column_map=Vec::new(), resample=None))]
#[allow(clippy::too_many_arguments)]
pub fn replay<'py>(
    py: Python<'py>,
    config: PathBuf,
    trace: String,
    skip_bad_rows: bool,
    delimiter: Option<String>,
    decimal: Option<String>,
    sample_period_s: Option<f64>,
    column_map: Vec<String>,
    resample: Option<String>,
) -> PyResult<(Bound<'py, PyDict>, String)> {
    let reading = Reading {
        delimiter,
        decimal,
        sample_period_s,
        column_map,
        resample,
    };
    let out = py
        .detach(|| run(&config, &trace, skip_bad_rows, &reading))
        .map_err(|e| errors::to_py(py, e))?;
    Ok((out.columns.into_dict(py)?, out.summary.to_string()))
}
