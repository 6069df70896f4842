//! `Estimator`: the core's estimator held between calls, for traces processed in chunks.
//! Each `step_batch` continues where the last one stopped, so chunks on one object give the
//! rows of one pass bit for bit. `save` writes the core's full-state snapshot and `restore`
//! resumes from one exactly, so chunks on fresh objects give one pass too; `save_record` writes
//! the core's state record (the slow state a controller keeps across power cycles) and
//! `restore_record` resumes from one as the firmware does.

use std::path::PathBuf;

use clampwise_convert::{Channel, CoreEstimator, SampleEstimator, TraceSample};
use clampwise_sim::build_core::CoreDevice;
use clampwise_sim::commands::read_config;
use clampwise_sim::error::SimError;
use clampwise_sim::schema::{DeviceKind, DeviceSpec};
use numpy::PyReadonlyArray1;
use pyo3::prelude::*;
use pyo3::types::{PyBytes, PyDict};

use crate::columns::Columns;
use crate::errors;

/// A config and the core device built from it: what the running estimator borrows.
struct Device {
    config: DeviceSpec,
    core: CoreDevice,
}

self_cell::self_cell!(
    /// The device and the estimator that borrows it, owned together.
    struct Running {
        owner: Device,
        #[covariant]
        dependent: CoreEstimator,
    }
);

/// The input arrays of a batch, by canonical column name, as f64 (NaN: no value).
struct Batch {
    line: Option<Vec<f64>>,
    t_s: Vec<f64>,
    /// Each channel's values and whether they are raw counts (`force_k_counts`) or N.
    force: Vec<(Vec<f64>, bool)>,
    valid: Vec<Option<Vec<f64>>>,
    omega_in: Vec<f64>,
    omega_out: Option<Vec<f64>>,
    command: Option<Vec<f64>>,
    temp: Option<Vec<f64>>,
    ambient: Option<Vec<f64>>,
    torque_ref: Option<Vec<f64>>,
}

fn optional(py_arrays: &Bound<'_, PyDict>, name: &str) -> PyResult<Option<Vec<f64>>> {
    match py_arrays.get_item(name)? {
        None => Ok(None),
        Some(a) => {
            let a: PyReadonlyArray1<'_, f64> = a.extract().map_err(|_| {
                errors::usage(format!(
                    "step_batch: '{name}' must be a one-dimensional float64 array"
                ))
            })?;
            Ok(Some(a.as_array().to_vec()))
        }
    }
}

fn required(py_arrays: &Bound<'_, PyDict>, name: &str, what: &str) -> PyResult<Vec<f64>> {
    optional(py_arrays, name)?.ok_or_else(|| {
        errors::usage(format!(
            "step_batch: missing array '{name}' ({what}); the arrays are named as the canonical trace columns (t_s, force_1_N …, omega_in_rad_s, …)"
        ))
    })
}

impl Batch {
    fn extract(arrays: &Bound<'_, PyDict>, config: &DeviceSpec) -> PyResult<Self> {
        let channels = config.sensors.len().min(4);
        let mut force = Vec::with_capacity(channels);
        let mut valid = Vec::with_capacity(channels);
        for k in 1..=channels {
            let counts = optional(arrays, &format!("force_{k}_counts"))?;
            force.push(match counts {
                Some(c) => (c, true),
                None => (
                    required(
                        arrays,
                        &format!("force_{k}_N"),
                        &format!(
                            "force channel {k} of the config's {channels}, or force_{k}_counts"
                        ),
                    )?,
                    false,
                ),
            });
            valid.push(optional(arrays, &format!("force_{k}_valid"))?);
        }
        let omega_out = if config.device.kind == DeviceKind::Clutch {
            Some(required(
                arrays,
                "omega_out_rad_s",
                "output shaft speed, needed for a clutch",
            )?)
        } else {
            optional(arrays, "omega_out_rad_s")?
        };
        let b = Self {
            line: optional(arrays, "line")?,
            t_s: required(arrays, "t_s", "time")?,
            force,
            valid,
            omega_in: required(arrays, "omega_in_rad_s", "input shaft speed")?,
            omega_out,
            command: optional(arrays, "command")?,
            temp: optional(arrays, "temp_C")?,
            ambient: optional(arrays, "ambient_C")?,
            torque_ref: optional(arrays, "torque_ref_Nm")?,
        };
        b.check_lengths()?;
        Ok(b)
    }

    fn check_lengths(&self) -> PyResult<()> {
        let n = self.t_s.len();
        let mut all: Vec<(&str, usize)> = vec![("omega_in_rad_s", self.omega_in.len())];
        for (f, _) in &self.force {
            all.push(("a force array", f.len()));
        }
        for (name, col) in [
            ("line", &self.line),
            ("omega_out_rad_s", &self.omega_out),
            ("command", &self.command),
            ("temp_C", &self.temp),
            ("ambient_C", &self.ambient),
            ("torque_ref_Nm", &self.torque_ref),
        ] {
            if let Some(c) = col {
                all.push((name, c.len()));
            }
        }
        for v in self.valid.iter().flatten() {
            all.push(("a force_k_valid array", v.len()));
        }
        match all.iter().find(|(_, len)| *len != n) {
            Some((name, len)) => Err(errors::usage(format!(
                "step_batch: '{name}' has {len} values but 't_s' has {n}"
            ))),
            None => Ok(()),
        }
    }

    /// Sample `i` (0-based in the batch) on source line `line`, or the located problem.
    fn sample(&self, i: usize, line: u64) -> Result<TraceSample, String> {
        let at = |col: &[f64]| col.get(i).copied().unwrap_or(f64::NAN);
        let opt = |col: &Option<Vec<f64>>| col.as_deref().map(at).filter(|v| !v.is_nan());
        let need = |col: &[f64], name: &str| {
            let v = at(col);
            if v.is_finite() {
                Ok(v)
            } else {
                Err(format!(
                    "row {i} of the batch (line {line}): '{name}' is {v}, not a finite number"
                ))
            }
        };
        let mut s = TraceSample {
            line,
            t_s: need(&self.t_s, "t_s")?,
            omega_in_rad_s: need(&self.omega_in, "omega_in_rad_s")?,
            omega_out_rad_s: match &self.omega_out {
                Some(c) => need(c, "omega_out_rad_s")?,
                None => 0.0,
            },
            command: opt(&self.command),
            temp_c: opt(&self.temp),
            ambient_c: opt(&self.ambient),
            torque_ref_nm: opt(&self.torque_ref),
            force_valid: [true; 4],
            ..TraceSample::default()
        };
        for (k, (col, counts)) in self.force.iter().enumerate() {
            let ch = if *counts {
                let name = format!("force_{}_counts", k + 1);
                let v = need(col, &name)?;
                let whole =
                    v.fract() == 0.0 && v >= f64::from(i32::MIN) && v <= f64::from(i32::MAX);
                if !whole {
                    return Err(format!(
                        "row {i} of the batch (line {line}): '{name}' is {v}, not a whole number of ADC counts"
                    ));
                }
                // Whole and in range: exactly the counts given.
                #[allow(clippy::cast_possible_truncation)]
                Channel::Counts(v as i32)
            } else {
                Channel::Newtons(need(col, &format!("force_{}_N", k + 1))?)
            };
            if let Some(slot) = s.force.get_mut(k) {
                *slot = ch;
            }
            if let (Some(Some(v)), Some(slot)) = (self.valid.get(k), s.force_valid.get_mut(k)) {
                let name = format!("force_{}_valid", k + 1);
                *slot = need(v, &name)? != 0.0;
            }
        }
        Ok(s)
    }

    fn len(&self) -> usize {
        self.t_s.len()
    }
}

/// The core's estimator for one device config, held between batches.
#[pyclass(module = "clampwise._native")]
pub struct Estimator {
    running: Running,
    /// Line number given to the next sample of a batch without a `line` array.
    next_line: u64,
    /// Name of the config file, for messages.
    file: String,
}

fn load(config: &std::path::Path) -> Result<Device, SimError> {
    let cfg = read_config(config)?;
    let core = CoreDevice::build(&cfg.config).map_err(|e| SimError::Internal(e.to_string()))?;
    Ok(Device {
        config: cfg.config,
        core,
    })
}

fn record_error(e: impl std::fmt::Display) -> SimError {
    SimError::Usage(format!("state record refused: {e}"))
}

fn snapshot_error(e: impl std::fmt::Display) -> SimError {
    SimError::Usage(format!("snapshot refused: {e}"))
}

#[pymethods]
impl Estimator {
    /// An estimator for the config `config` (TOML path) at the config's initial state, or
    /// resuming exactly from `snapshot` (bytes written by `save`), or from `record` (bytes
    /// written by `save_record`) as after a power cycle.
    #[new]
    #[pyo3(signature = (config, snapshot=None, *, record=None))]
    fn new(
        py: Python<'_>,
        config: PathBuf,
        snapshot: Option<Vec<u8>>,
        record: Option<Vec<u8>>,
    ) -> PyResult<Self> {
        let device = load(&config).map_err(|e| errors::to_py(py, e))?;
        let running = Running::try_new(device, |d| match (&snapshot, &record) {
            (None, None) => CoreEstimator::new(&d.config, &d.core).map_err(record_error),
            (Some(s), None) => CoreEstimator::resume(&d.config, &d.core, s).map_err(snapshot_error),
            (None, Some(r)) => CoreEstimator::restore(&d.config, &d.core, r).map_err(record_error),
            (Some(_), Some(_)) => Err(SimError::Usage(
                "give a snapshot or a state record, not both".to_owned(),
            )),
        })
        .map_err(|e| errors::to_py(py, e))?;
        Ok(Self {
            running,
            next_line: 1,
            file: config.display().to_string(),
        })
    }

    /// Step every sample of a batch, in order: `arrays` maps the canonical trace column names
    /// (`t_s`, `force_1_N` …, `force_1_valid` …, `omega_in_rad_s`, `omega_out_rad_s`,
    /// `command`, `temp_C`, `ambient_C`, `torque_ref_Nm`; optional `line`) to float64 arrays
    /// in SI units; NaN in an optional column is no value. Returns the estimate columns.
    fn step_batch<'py>(
        &mut self,
        py: Python<'py>,
        arrays: &Bound<'py, PyDict>,
    ) -> PyResult<Bound<'py, PyDict>> {
        let batch = Batch::extract(arrays, &self.running.borrow_owner().config)?;
        let first_line = self.next_line;
        let file = self.file.clone();
        let running = &mut self.running;
        let stepped = py.detach(move || -> Result<(Columns, u64), String> {
            // Every sample is checked before the first is stepped: a bad batch changes nothing.
            let mut samples = Vec::with_capacity(batch.len());
            let mut line = first_line;
            for i in 0..batch.len() {
                let this = match &batch.line {
                    Some(l) => {
                        let v = l.get(i).copied().unwrap_or(f64::NAN);
                        if !(v.is_finite() && v >= 0.0 && v.fract() == 0.0) {
                            return Err(format!(
                                "row {i} of the batch: 'line' is {v}, not a line number"
                            ));
                        }
                        // Checked above: a non-negative whole number.
                        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
                        let n = v as u64;
                        n
                    }
                    None => line,
                };
                samples.push(batch.sample(i, this)?);
                line = this.saturating_add(1);
            }
            let mut cols = Columns::with_capacity(samples.len());
            running.with_dependent_mut(|_, est| {
                for s in &samples {
                    cols.push(&est.step(s));
                }
            });
            Ok((cols, line))
        });
        match stepped {
            Ok((cols, line)) => {
                self.next_line = line;
                cols.into_dict(py)
            }
            Err(m) => Err(errors::to_py(
                py,
                SimError::Usage(format!("{file}: {m}; no row of the batch was stepped")),
            )),
        }
    }

    /// The core's full-state snapshot (`Estimator::snapshot_into`): `restore` (or a new
    /// `Estimator(config, snapshot)`) continues exactly here, bit for bit.
    fn save<'py>(&self, py: Python<'py>) -> Bound<'py, PyBytes> {
        PyBytes::new(py, &self.running.borrow_dependent().snapshot())
    }

    /// Resume exactly from a snapshot written by `save`; a refused snapshot changes nothing.
    fn restore(&mut self, py: Python<'_>, snapshot: Vec<u8>) -> PyResult<()> {
        self.running
            .with_dependent_mut(|d, est| {
                CoreEstimator::resume(&d.config, &d.core, &snapshot).map(|e| *est = e)
            })
            .map_err(|e| errors::to_py(py, snapshot_error(e)))
    }

    /// The core's state record (`Estimator::save`): wear, bedding, temperatures and the
    /// adaptation's state, CRC-checked and tied to this config's checksum.
    #[pyo3(signature = (sequence=0))]
    fn save_record<'py>(&self, py: Python<'py>, sequence: u32) -> Bound<'py, PyBytes> {
        PyBytes::new(py, &self.running.borrow_dependent().save(sequence))
    }

    /// Resume from a state record: the slow state carries over, the sensor filters and the
    /// stick/slip decision start afresh (as after a controller's power cycle).
    fn restore_record(&mut self, py: Python<'_>, record: Vec<u8>) -> PyResult<()> {
        self.running
            .with_dependent_mut(|d, est| {
                CoreEstimator::restore(&d.config, &d.core, &record).map(|e| *est = e)
            })
            .map_err(|e| errors::to_py(py, record_error(e)))
    }

    /// Line number the next sample gets when a batch has no `line` array.
    #[getter]
    fn next_line(&self) -> u64 {
        self.next_line
    }

    /// Number of force channels of the config (arrays `force_1_N` … needed).
    #[getter]
    fn channels(&self) -> usize {
        self.running.borrow_owner().config.sensors.len()
    }
}
