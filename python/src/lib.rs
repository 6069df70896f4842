//! # clampwise-python
//!
//! The native part of the Python package `clampwise` (module `clampwise._native`): replay of a
//! trace through the core's estimator with the simulator's own readers, an estimator object
//! for chunked work with the core's full-state snapshot and state record, `compare`, `fit` and
//! `synth` as the `clampwise` command runs them, and the simulator's mergeable quantile sketch.
//! The pure Python layer (`python/clampwise/__init__.py`) turns the column dictionaries
//! returned here into pandas DataFrames.
//!
//! **Caution.** Every torque here is an *estimate*, not a certified safety function; see the
//! core's crate docs.
//!
//! The replay loops run with the interpreter released ([`pyo3::Python::detach`]), so several
//! Python threads (or a Dask worker's threads) replay in parallel.

mod columns;
mod commands;
mod errors;
mod estimator;
mod read_trace;
mod reading;
mod replay;
mod sketch;

use pyo3::prelude::*;

/// The extension module `clampwise._native`.
#[pymodule]
#[pyo3(name = "_native")]
fn native(m: &Bound<'_, PyModule>) -> PyResult<()> {
    errors::register(m)?;
    m.add_function(wrap_pyfunction!(replay::replay, m)?)?;
    m.add_function(wrap_pyfunction!(read_trace::read_trace, m)?)?;
    m.add_function(wrap_pyfunction!(commands::compare, m)?)?;
    m.add_function(wrap_pyfunction!(commands::fit, m)?)?;
    m.add_function(wrap_pyfunction!(commands::synth, m)?)?;
    m.add_class::<estimator::Estimator>()?;
    m.add_class::<sketch::QuantileSketch>()?;
    m.add_class::<sketch::ErrorStats>()?;
    m.add("HEADER", clampwise_sim::estimate::HEADER.to_vec())?;
    m.add("CAUTION", clampwise_sim::replay::CAUTION)?;
    m.add(
        "STATE_NAMES",
        clampwise_convert::ContactState::ALL
            .iter()
            .map(|s| s.name())
            .collect::<Vec<_>>(),
    )?;
    m.add("RECORD_LEN", clampwise_core::state_record::RECORD_LEN)?;
    Ok(())
}
