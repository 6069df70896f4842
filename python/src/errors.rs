//! The exception hierarchy: one Python class per kind of the simulator's errors, each carrying
//! the CLI's message (file, line, column and header of a data error; file, key, line and column
//! of each config issue) and the exit code the CLI would have used.
//!
//! ```text
//! ClampwiseError (Exception)
//! ├── UsageError        exit 1: a bad option or argument
//! ├── ConfigError       exit 1: the config; `.issues` lists {key, line, column, message}
//! ├── DataError         exit 2: a trace or estimate file; `.file`, `.line`, `.column`, `.header`
//! ├── ThresholdError    exit 3: an accuracy gate or coverage requirement failed
//! ├── ClampwiseIOError  exit 4: a file missing or not writable
//! └── InternalError     exit 5: a bug
//! ```

use clampwise_sim::error::SimError;
use pyo3::exceptions::PyException;
use pyo3::prelude::*;
use pyo3::types::PyDict;

pyo3::create_exception!(
    clampwise,
    ClampwiseError,
    PyException,
    "Any clampwise failure; `.kind` and `.exit_code` as the CLI's `--json` error."
);
pyo3::create_exception!(
    clampwise,
    UsageError,
    ClampwiseError,
    "A bad option or argument."
);
pyo3::create_exception!(
    clampwise,
    ConfigError,
    ClampwiseError,
    "An invalid config; `.issues` lists each located problem."
);
pyo3::create_exception!(
    clampwise,
    DataError,
    ClampwiseError,
    "A bad trace or estimate file; `.file`, `.line`, `.column`, `.header` locate it."
);
pyo3::create_exception!(
    clampwise,
    ThresholdError,
    ClampwiseError,
    "An accuracy threshold or coverage requirement was not met."
);
pyo3::create_exception!(
    clampwise,
    InternalError,
    ClampwiseError,
    "Something that should not happen."
);

pyo3::create_exception!(
    clampwise,
    ClampwiseIOError,
    ClampwiseError,
    "A file missing, unreadable or not writable; `.file` names it, `.errno` as an OSError's."
);

/// Add the exception classes to the module.
pub fn register(m: &Bound<'_, PyModule>) -> PyResult<()> {
    let py = m.py();
    m.add("ClampwiseError", py.get_type::<ClampwiseError>())?;
    m.add("UsageError", py.get_type::<UsageError>())?;
    m.add("ConfigError", py.get_type::<ConfigError>())?;
    m.add("DataError", py.get_type::<DataError>())?;
    m.add("ThresholdError", py.get_type::<ThresholdError>())?;
    m.add("InternalError", py.get_type::<InternalError>())?;
    m.add("ClampwiseIOError", py.get_type::<ClampwiseIOError>())?;
    Ok(())
}

/// Set `name = value` on an exception value (best effort: the message is already there).
fn tag<'py>(err: &PyErr, py: Python<'py>, name: &str, value: impl IntoPyObject<'py>) {
    let _ = err.value(py).setattr(name, value);
}

/// The Python exception of a simulator error, with its location attached.
pub fn to_py(py: Python<'_>, e: SimError) -> PyErr {
    let message = e.to_string();
    let err = match &e {
        SimError::Usage(_) => UsageError::new_err(message),
        SimError::Config(c) => {
            let err = ConfigError::new_err(message);
            tag(&err, py, "file", c.file.clone());
            let issues: Vec<Bound<'_, PyDict>> = c
                .issues
                .iter()
                .filter_map(|i| {
                    let d = PyDict::new(py);
                    d.set_item("key", i.key.clone()).ok()?;
                    d.set_item("line", i.line).ok()?;
                    d.set_item("column", i.column).ok()?;
                    d.set_item("message", i.message.clone()).ok()?;
                    Some(d)
                })
                .collect();
            tag(&err, py, "issues", issues);
            err
        }
        SimError::Data(d) => {
            let err = DataError::new_err(message);
            tag(&err, py, "file", d.file.clone());
            tag(&err, py, "line", d.line);
            tag(&err, py, "column", d.column);
            tag(&err, py, "header", d.header.clone());
            err
        }
        SimError::Threshold(_) => ThresholdError::new_err(message),
        SimError::Io { path, source } => {
            let errno = source.raw_os_error();
            let err = ClampwiseIOError::new_err(message);
            tag(&err, py, "file", path.display().to_string());
            tag(&err, py, "errno", errno);
            err
        }
        SimError::Internal(_) => InternalError::new_err(message),
    };
    tag(&err, py, "kind", e.kind());
    tag(&err, py, "exit_code", e.exit_code());
    err
}

/// A usage error raised from the bindings themselves (bad array, bad argument).
pub fn usage(message: impl Into<String>) -> PyErr {
    UsageError::new_err(message.into())
}
