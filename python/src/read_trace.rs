//! `read_trace`: a trace file read by the simulator's reader (column map, units, dialect,
//! resampling, time checks) into the canonical columns in SI units — what `Estimator.step_batch`
//! takes, so a file read in chunks steps the estimator exactly as `replay` does.

use std::path::PathBuf;

use clampwise_convert::{Channel, TraceSample};
use clampwise_sim::commands::read_config;
use clampwise_sim::error::SimError;
use clampwise_sim::trace::{RowPolicy, TraceReader};
use numpy::IntoPyArray;
use pyo3::prelude::*;
use pyo3::types::PyDict;

use crate::errors;
use crate::reading::Reading;

/// The canonical columns of the samples read; a force channel is `force_k_N` (a calibrated
/// column) or `force_k_counts` (raw ADC counts), as the trace has it.
#[derive(Default)]
struct Canonical {
    line: Vec<i64>,
    t_s: Vec<f64>,
    force: [Vec<f64>; 4],
    counts: [bool; 4],
    present: [bool; 4],
    valid: [Vec<bool>; 4],
    omega_in: Vec<f64>,
    omega_out: Vec<f64>,
    command: Vec<f64>,
    temp: Vec<f64>,
    ambient: Vec<f64>,
    torque_ref: Vec<f64>,
}

impl Canonical {
    fn push(&mut self, s: &TraceSample) {
        self.line.push(i64::try_from(s.line).unwrap_or(i64::MAX));
        self.t_s.push(s.t_s);
        for k in 0..4 {
            let (value, counts, present) = match s.force.get(k).copied().unwrap_or_default() {
                Channel::Absent => (f64::NAN, false, false),
                Channel::Counts(n) => (f64::from(n), true, true),
                Channel::Newtons(f) => (f, false, true),
            };
            if let (Some(col), Some(c), Some(p), Some(v)) = (
                self.force.get_mut(k),
                self.counts.get_mut(k),
                self.present.get_mut(k),
                self.valid.get_mut(k),
            ) {
                col.push(value);
                *c |= counts;
                *p |= present;
                v.push(s.force_valid.get(k).copied().unwrap_or(true));
            }
        }
        self.omega_in.push(s.omega_in_rad_s);
        self.omega_out.push(s.omega_out_rad_s);
        let nan = |v: Option<f64>| v.unwrap_or(f64::NAN);
        self.command.push(nan(s.command));
        self.temp.push(nan(s.temp_c));
        self.ambient.push(nan(s.ambient_c));
        self.torque_ref.push(nan(s.torque_ref_nm));
    }

    fn into_dict(self, py: Python<'_>) -> PyResult<Bound<'_, PyDict>> {
        let d = PyDict::new(py);
        d.set_item("line", self.line.into_pyarray(py))?;
        d.set_item("t_s", self.t_s.into_pyarray(py))?;
        let channels = self
            .force
            .into_iter()
            .zip(self.valid)
            .zip(self.counts)
            .zip(self.present);
        for (k, (((force, valid), counts), present)) in channels.enumerate() {
            if !present {
                continue;
            }
            let name = if counts {
                format!("force_{}_counts", k + 1)
            } else {
                format!("force_{}_N", k + 1)
            };
            d.set_item(name, force.into_pyarray(py))?;
            d.set_item(format!("force_{}_valid", k + 1), valid.into_pyarray(py))?;
        }
        d.set_item("omega_in_rad_s", self.omega_in.into_pyarray(py))?;
        d.set_item("omega_out_rad_s", self.omega_out.into_pyarray(py))?;
        d.set_item("command", self.command.into_pyarray(py))?;
        d.set_item("temp_C", self.temp.into_pyarray(py))?;
        d.set_item("ambient_C", self.ambient.into_pyarray(py))?;
        d.set_item("torque_ref_Nm", self.torque_ref.into_pyarray(py))?;
        Ok(d)
    }
}

fn run(
    config: &std::path::Path,
    trace: &str,
    skip_bad_rows: bool,
    reading: &Reading,
) -> Result<Canonical, SimError> {
    let cfg = read_config(config)?;
    let opts = reading.options()?;
    opts.check(&cfg.config)?;
    let policy = if skip_bad_rows {
        RowPolicy::Skip
    } else {
        RowPolicy::Stop
    };
    let mut reader = TraceReader::open_with(trace, &cfg.config, policy, false, &opts)?;
    let mut out = Canonical::default();
    while let Some(s) = reader.next_sample()? {
        out.push(&s);
    }
    reader.finish()?;
    Ok(out)
}

/// Read `trace` as `replay` does for the config `config`: the canonical columns (SI units,
/// NaN for no value) of every sample the estimator would be given, with its source `line`.
#[pyfunction]
#[pyo3(signature = (config, trace, *, skip_bad_rows=false, delimiter=None, decimal=None, sample_period_s=None, column_map=Vec::new(), resample=None))]
#[allow(clippy::too_many_arguments)]
pub fn read_trace<'py>(
    py: Python<'py>,
    config: PathBuf,
    trace: String,
    skip_bad_rows: bool,
    delimiter: Option<String>,
    decimal: Option<String>,
    sample_period_s: Option<f64>,
    column_map: Vec<String>,
    resample: Option<String>,
) -> PyResult<Bound<'py, PyDict>> {
    let reading = Reading {
        delimiter,
        decimal,
        sample_period_s,
        column_map,
        resample,
    };
    py.detach(|| run(&config, &trace, skip_bad_rows, &reading))
        .map_err(|e| errors::to_py(py, e))?
        .into_dict(py)
}
