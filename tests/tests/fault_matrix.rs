//! Fault-injection matrix: sensor faults injected by the simulator's f64 plant
//! (`clampwise_sim::plant`, the `synth --fault` kinds) on devices with 1–4 gauges, replayed
//! through the core's estimator (`clampwise-convert`), every row checked against the plant's
//! true torque and true holding capacity.
//!
//! The estimate's contract: every torque or holding capacity it reports lies within its own ±,
//! or a flag says it cannot be trusted. The truth here is our own independent f64 plant, so
//! each check is an arithmetic check against that model [calc: T = N·μ·F·r_e, capacity =
//! N·μ_s·F·r_e]. Rows where the fault-free run of the same device, scenario and seed is itself
//! beyond its ± are left out and counted.
//!
//! ```text
//! cargo test --release -p clampwise-tests --test fault_matrix -- --nocapture
//! cargo test --release -p clampwise-tests --test fault_matrix -- --ignored write_fault_matrix_report
//! ```
#![allow(
    dead_code,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::panic,
    clippy::indexing_slicing,
    clippy::cast_possible_truncation
)]

mod fault_matrix {
    pub mod catalogue;
    pub mod devices;
    pub mod matrix;
    pub mod report;
    pub mod run;
}

use std::sync::OnceLock;

use fault_matrix::matrix::{Matrix, run_matrix};
use fault_matrix::report;
use fault_matrix::run::{DETECTION_FLAG_NAMES, UNTRUSTED_FLAG_NAMES, flags_named};

fn matrix() -> &'static Matrix {
    static M: OnceLock<Matrix> = OnceLock::new();
    M.get_or_init(run_matrix)
}

#[test]
fn every_reported_torque_and_capacity_lies_within_its_uncertainty_or_is_flagged() {
    let m = matrix();
    let (checked, beyond, bad, cells, excluded) = report::totals(m);
    println!("{}", report::cell_table(m, false));
    println!("{}", report::latency_table(m));
    println!("{}", report::baseline_table(m));
    println!(
        "{checked} rows checked, {beyond} beyond ± in {bad} of {cells} cells; \
         {excluded} fault-free rows beyond ± excluded"
    );
    assert_eq!(
        beyond,
        0,
        "{beyond} rows beyond ± in {bad} of {cells} cells:\n{}",
        report::cell_table(m, true)
    );
}

#[test]
fn the_fault_free_runs_leave_out_few_rows() {
    // The exclusion must not swallow the check: at most 1 % of the fault-free rows of any
    // device and scenario may be beyond ± themselves [practice: a baseline that fails more
    // often than that is a defect of its own].
    let m = matrix();
    for b in &m.baselines {
        assert!(
            b.beyond * 100 <= b.rows,
            "{} / {} {:?}: {} of {} fault-free rows beyond ±",
            m.devices[b.device].label(),
            fault_matrix::run::SCENARIOS[b.scenario].name,
            b.truth,
            b.beyond,
            b.rows
        );
    }
}

#[test]
fn every_cell_checks_rows() {
    // A cell with no row checked or exempt would pass the invariant by default.
    let m = matrix();
    for c in &m.cells {
        assert!(
            c.tally.checked + c.tally.exempt > 0,
            "{} on {}: no row checked",
            fault_matrix::catalogue::CASES[c.case].name,
            m.devices[c.device].label()
        );
    }
}

#[test]
fn flag_sets_name_flags_of_the_core() {
    assert!(!flags_named(UNTRUSTED_FLAG_NAMES).is_empty());
    assert!(!flags_named(DETECTION_FLAG_NAMES).is_empty());
}

#[test]
#[ignore = "writes tests/output/fault-matrix.md"]
fn write_fault_matrix_report() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("output/fault-matrix.md");
    std::fs::create_dir_all(path.parent().unwrap()).unwrap();
    std::fs::write(&path, report::markdown(matrix())).unwrap();
    println!("wrote {}", path.display());
}
