//! The matrix as Markdown tables: per cell, detection latency per fault kind, and the rows the
//! fault-free runs leave out.

use std::fmt::Write;

use clampwise_convert::flag_names;

use super::catalogue::{CASES, FAULT_START_S};
use super::matrix::Matrix;
use super::run::{
    DETECTION_FLAG_NAMES, DURATION_S, RunTally, SCENARIOS, TRUTHS, UNTRUSTED_FLAG_NAMES,
};

#[allow(clippy::cast_precision_loss)]
fn percent(part: u64, whole: u64) -> f64 {
    100.0 * part as f64 / whole.max(1) as f64
}

fn ms(s: f64) -> String {
    format!("{:.0}", s * 1e3)
}

/// One line per cell (fault × device × scenario, seeds added up); `only_beyond` keeps the
/// cells with a row beyond ±.
pub fn cell_table(m: &Matrix, only_beyond: bool) -> String {
    let mut out = String::new();
    out.push_str(
        "| fault | device | scenario | rows checked | beyond ± | torque / capacity / false holding | worst excess N·m | first beyond s | detected | flagged % | flags seen |\n\
         |---|---|---|---:|---:|---|---:|---:|---|---:|---|\n",
    );
    for c in m
        .cells
        .iter()
        .filter(|c| !only_beyond || (c.tally.beyond > 0 && !c.outside_contract))
    {
        let t = &c.tally;
        let detected = c.latencies_s.iter().filter(|l| l.is_some()).count();
        let flags: Vec<&str> = flag_names(t.flags_seen).collect();
        let _ = writeln!(
            out,
            "| {} | {} | {} | {} | {} | {} / {} / {} | {:.0} | {} | {}/{} | {:.1} | {} |",
            if c.outside_contract {
                format!("{} (outside the contract)", CASES[c.case].name)
            } else {
                CASES[c.case].name.to_owned()
            },
            m.devices[c.device].label(),
            SCENARIOS[c.scenario].name,
            t.checked,
            t.beyond,
            t.torque_beyond,
            t.capacity_beyond,
            t.false_holding,
            t.worst_excess_nm,
            t.first_beyond_s.map_or("–".into(), |s| format!("{s:.3}")),
            detected,
            c.latencies_s.len(),
            percent(t.flagged, t.after_start),
            if flags.is_empty() {
                "–".into()
            } else {
                flags.join(", ")
            },
        );
    }
    out
}

/// Detection latency per fault kind and gauge count (all variants, scenarios and seeds).
pub fn latency_table(m: &Matrix) -> String {
    let mut out = String::new();
    out.push_str(
        "| fault | gauges | runs detected | latency min ms | median ms | max ms |\n\
         |---|---:|---:|---:|---:|---:|\n",
    );
    for (k, case) in CASES.iter().enumerate() {
        for g in 1..=4 {
            let runs: Vec<Option<f64>> = m
                .cells
                .iter()
                .filter(|c| c.case == k && m.devices[c.device].gauges == g)
                .flat_map(|c| c.latencies_s.iter().copied())
                .collect();
            if runs.is_empty() {
                continue;
            }
            let mut hit: Vec<f64> = runs.iter().flatten().copied().collect();
            hit.sort_by(f64::total_cmp);
            let (lo, mid, hi) = match hit.as_slice() {
                [] => ("–".into(), "–".into(), "–".into()),
                h => (ms(h[0]), ms(h[h.len() / 2]), ms(h[h.len() - 1])),
            };
            let _ = writeln!(
                out,
                "| {} | {g} | {}/{} | {lo} | {mid} | {hi} |",
                case.name,
                hit.len(),
                runs.len()
            );
        }
    }
    out
}

/// Rows of the fault-free runs beyond their ± (left out of the faulted runs).
pub fn baseline_table(m: &Matrix) -> String {
    let mut out = String::new();
    out.push_str(
        "| device | scenario | rows | beyond ± fault-free (excluded) | torque / capacity / false holding | worst excess N·m | first at s |\n\
         |---|---|---:|---:|---|---:|---:|\n",
    );
    for d in 0..m.devices.len() {
        for (s, sc) in SCENARIOS.iter().enumerate() {
            let bs: Vec<_> = m
                .baselines
                .iter()
                .filter(|b| b.device == d && b.scenario == s)
                .collect();
            let rows: u64 = bs.iter().map(|b| b.rows).sum();
            let beyond: u64 = bs.iter().map(|b| b.beyond).sum();
            let sum = |f: fn(&RunTally) -> u64| bs.iter().map(|b| f(&b.tally)).sum::<u64>();
            let worst = bs
                .iter()
                .map(|b| b.tally.worst_excess_nm)
                .fold(0.0, f64::max);
            let first = bs
                .iter()
                .filter_map(|b| b.tally.first_beyond_s)
                .reduce(f64::min);
            let _ = writeln!(
                out,
                "| {} | {} | {rows} | {beyond} | {} / {} / {} | {worst:.0} | {} |",
                m.devices[d].label(),
                sc.name,
                sum(|t| t.torque_beyond),
                sum(|t| t.capacity_beyond),
                sum(|t| t.false_holding),
                first.map_or("–".into(), |s| format!("{s:.3}")),
            );
        }
    }
    out
}

/// Totals: (rows checked, rows beyond ±, cells with a row beyond, cells, rows excluded).
pub fn totals(m: &Matrix) -> (u64, u64, usize, usize, u64) {
    let inside = || m.cells.iter().filter(|c| !c.outside_contract);
    let checked = inside().map(|c| c.tally.checked).sum();
    let beyond = inside().map(|c| c.tally.beyond).sum();
    let bad = inside().filter(|c| c.tally.beyond > 0).count();
    let excluded = m.baselines.iter().map(|b| b.beyond).sum();
    (checked, beyond, bad, m.cells.len(), excluded)
}

/// The whole report (tests/output/fault-matrix.md).
pub fn markdown(m: &Matrix) -> String {
    let (checked, beyond, bad, cells, excluded) = totals(m);
    let baseline_rows: u64 = m.baselines.iter().map(|b| b.rows).sum();
    let mut out = String::new();
    out.push_str("# Fault-injection matrix\n\n");
    out.push_str(
        "Generated by `cargo test --release -p clampwise-tests --test fault_matrix -- --ignored \
         write_fault_matrix_report`; do not edit by hand.\n\n\
         > **Caution.** The estimate is validated only as far as its tests; it is not a \
         certified safety function. Follow the applicable functional-safety process (ISO 26262, \
         IEC 61508, ISO 13849 or the machine's own standard), local codes and licensed \
         engineering practice. All devices and data here are invented.\n\n",
    );
    let _ = writeln!(
        out,
        "**Invariant** on every row: slipping or released, |torque − true torque| ≤ ±; holding, \
         the true capacity N·μ_s·F·r_e within capacity ± ±, and neither the brake open (true \
         force < touch force) nor the plant slipping faster than the config's stick speed + \
         hysteresis (\"false holding\"). The truth is the simulator's independent f64 \
         plant (an arithmetic check against our own model). Exempt: state Unavailable or a flag \
         of {:?}. Detection: the first row at or after the fault's start with a flag of {:?} \
         (or an exempting one); \"flagged %\" is the share of rows from the fault's start on that name \
         a fault. Cells marked \"outside the contract\" fault every gauge of a device that has no \
         actuator model: no healthy witness is left and nothing else can tell, so they are \
         reported and not asserted (the stated limit of the core's contract). The single gauge \
         with neither a stuck check nor an actuator model is not run: the configuration refuses \
         it.\n",
        UNTRUSTED_FLAG_NAMES, DETECTION_FLAG_NAMES
    );
    let _ = writeln!(
        out,
        "**Runs:** {} fault kinds × {} devices (demo config with 1–4 gauges; as shipped, with a \
         stuck check, without the actuator model) × {} scenarios × {} plant truths (seed, μ = table × (1 + share × μ tolerance)): {}; {DURATION_S} s \
         at 1 kHz; every fault from {FAULT_START_S} s to the end.\n",
        CASES.len(),
        m.devices.len(),
        SCENARIOS.len(),
        TRUTHS.len(),
        TRUTHS
            .iter()
            .map(|t| format!("seed {} share {:+}", t.seed, t.mu_share))
            .collect::<Vec<_>>()
            .join(", ")
    );
    for sc in &SCENARIOS {
        let _ = writeln!(out, "- `{}`: {}", sc.name, sc.what);
    }
    out.push('\n');
    for case in CASES {
        let _ = writeln!(out, "- **{}**: {}", case.name, case.what);
    }
    let _ = writeln!(
        out,
        "\n**Totals:** {checked} rows checked, {beyond} beyond ±, in {bad} of {cells} cells. \
         Rows left out because the fault-free run is itself beyond ± there: {excluded} of \
         {baseline_rows} fault-free rows (per faulted run, the same rows).\n"
    );
    out.push_str("## Cells with rows beyond ±\n\n");
    out.push_str(&cell_table(m, true));
    out.push_str("\n## Detection latency\n\n");
    out.push_str(&latency_table(m));
    out.push_str("\n## Fault-free rows beyond ± (excluded)\n\n");
    out.push_str(&baseline_table(m));
    out.push_str("\n## All cells\n\n");
    out.push_str(&cell_table(m, false));
    out
}
