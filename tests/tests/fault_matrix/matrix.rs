//! The whole matrix: fault kinds × devices × scenarios × seeds, run in parallel (rayon), and
//! the per-cell tallies (a cell = fault × device × scenario, its seeds added up).

use rayon::prelude::*;

use super::catalogue::FaultCase;
use super::catalogue::{CASES, FAULT_START_S, faults};
use super::devices::{self, Device, Variant};
use super::run::{DURATION_S, RunTally, SCENARIOS, TRUTHS, Truth, Verdict, run, tally};

/// One cell: a fault kind on one device in one scenario, over the seeds.
pub struct Cell {
    pub case: usize,
    pub device: usize,
    pub scenario: usize,
    pub tally: RunTally,
    /// Detection latency of each seed's run (None: never detected).
    pub latencies_s: Vec<Option<f64>>,
    /// Outside the estimate's contract by construction: every gauge of the device is faulted
    /// and there is no actuator model, so no healthy witness remains and nothing outside the
    /// gauges can tell (reported, not asserted).
    pub outside_contract: bool,
}

/// Whether `case` faults every gauge of `dev` on a device without an actuator model.
fn outside_contract(case: &FaultCase, dev: &Device) -> bool {
    if dev.variant != Variant::NoActuator {
        return false;
    }
    let specs = (case.specs)(&dev.config, DURATION_S);
    (1..=dev.gauges).all(|ch| {
        specs.iter().any(|s| {
            s.split_once(':')
                .is_some_and(|(_, rest)| rest.starts_with(&format!("{ch}@")))
        })
    })
}

/// The fault-free runs' own rows beyond ± (left out of every faulted run).
pub struct Baseline {
    pub device: usize,
    pub scenario: usize,
    pub truth: Truth,
    pub rows: u64,
    pub beyond: u64,
    /// The fault-free run's own tally (torque / capacity / false holding, worst excess).
    pub tally: RunTally,
}

pub struct Matrix {
    pub devices: Vec<Device>,
    pub cells: Vec<Cell>,
    pub baselines: Vec<Baseline>,
}

fn add(a: &mut RunTally, b: &RunTally) {
    a.checked += b.checked;
    a.beyond += b.beyond;
    a.torque_beyond += b.torque_beyond;
    a.capacity_beyond += b.capacity_beyond;
    a.false_holding += b.false_holding;
    if a.worst_excess_nm < b.worst_excess_nm {
        a.worst_excess_nm = b.worst_excess_nm;
    }
    a.first_beyond_s = match (a.first_beyond_s, b.first_beyond_s) {
        (Some(x), Some(y)) => Some(x.min(y)),
        (x, y) => x.or(y),
    };
    a.exempt += b.exempt;
    a.withheld += b.withheld;
    a.excluded += b.excluded;
    a.flags_seen |= b.flags_seen;
    a.after_start += b.after_start;
    a.flagged += b.flagged;
}

/// Run the matrix.
pub fn run_matrix() -> Matrix {
    let devices = devices::all();
    let groups: Vec<(usize, usize, Truth)> = (0..devices.len())
        .flat_map(|d| (0..SCENARIOS.len()).flat_map(move |s| TRUTHS.map(|t| (d, s, t))))
        .collect();
    let results: Vec<(Baseline, Vec<(usize, RunTally)>)> = groups
        .par_iter()
        .map(|&(d, s, truth)| {
            let dev = &devices[d];
            let sc = &SCENARIOS[s];
            let clean = run(dev, sc, truth, Vec::new());
            let baseline = Baseline {
                device: d,
                scenario: s,
                truth,
                rows: clean.verdicts.len() as u64,
                beyond: clean.verdicts.iter().filter(|v| v.is_beyond()).count() as u64,
                tally: tally(
                    &clean,
                    &vec![Verdict::Within; clean.verdicts.len()],
                    FAULT_START_S,
                ),
            };
            let runs = CASES
                .iter()
                .enumerate()
                .filter(|(_, case)| dev.gauges >= case.min_gauges)
                .map(|(k, case)| {
                    let rows = run(dev, sc, truth, faults(case, &dev.config, DURATION_S));
                    (k, tally(&rows, &clean.verdicts, FAULT_START_S))
                })
                .collect();
            (baseline, runs)
        })
        .collect();
    let mut cells: Vec<Cell> = Vec::new();
    let mut baselines = Vec::new();
    for (b, runs) in results {
        let (d, s) = (b.device, b.scenario);
        baselines.push(b);
        for (k, t) in runs {
            match cells
                .iter_mut()
                .find(|c| (c.case, c.device, c.scenario) == (k, d, s))
            {
                Some(c) => {
                    add(&mut c.tally, &t);
                    c.latencies_s.push(t.latency_s);
                }
                None => cells.push(Cell {
                    case: k,
                    device: d,
                    scenario: s,
                    latencies_s: vec![t.latency_s],
                    tally: t,
                    outside_contract: false,
                }),
            }
        }
    }
    cells.sort_by_key(|c| (c.case, c.device, c.scenario));
    for c in &mut cells {
        c.outside_contract = outside_contract(&CASES[c.case], &devices[c.device]);
    }
    Matrix {
        devices,
        cells,
        baselines,
    }
}
