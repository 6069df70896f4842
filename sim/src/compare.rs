//! `compare`: an estimate trace against its reference torque, streaming.
//!
//! Error = estimate − reference (N·m), over rows that have both (slipping and released rows).
//! The state comes from the core (`ContactState`): a **holding** row has no torque estimate,
//! only a capacity; it is counted apart and checked as "reference within ±capacity", never
//! entered as an error (not even as zero). Unavailable rows (no clamp force) are counted apart
//! too. Reported: rows per state, and for the rows with an error: count, bias (mean error),
//! RMS, max |error|, and P95/P99 of |error| from a [`QuantileSketch`] (bounded memory,
//! relative accuracy [`crate::sketch::RELATIVE_ACCURACY`]) — overall, slipping only, and by
//! operating region: lining temperature band, slip-speed band, clamp-force band, and state.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::config::DeviceConfig;
use crate::error::SimError;
use crate::estimate::EstimateReader;
use crate::seam::{EstimateRow, State};
use crate::sketch::QuantileSketch;

/// Error statistics of one region.
#[derive(Debug, Clone, Default)]
pub struct ErrorStats {
    n: u64,
    sum: f64,
    sum_sq: f64,
    max_abs: f64,
    sketch: QuantileSketch,
}

/// The reported numbers of one region.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ErrorReport {
    /// Rows.
    pub n: u64,
    /// Mean error, N·m.
    pub bias_nm: f64,
    /// RMS error, N·m.
    pub rms_nm: f64,
    /// Largest |error|, N·m.
    pub max_abs_nm: f64,
    /// 95th percentile of |error|, N·m.
    pub p95_nm: f64,
    /// 99th percentile of |error|, N·m.
    pub p99_nm: f64,
}

impl ErrorStats {
    /// Add one error.
    pub fn add(&mut self, e: f64) {
        self.n += 1;
        self.sum += e;
        self.sum_sq += e * e;
        self.max_abs = self.max_abs.max(e.abs());
        self.sketch.add(e);
    }

    /// The numbers; `None` when empty.
    pub fn report(&self) -> Option<ErrorReport> {
        if self.n == 0 {
            return None;
        }
        // Counts stay far below 2⁵³.
        #[allow(clippy::cast_precision_loss)]
        let n = self.n as f64;
        Some(ErrorReport {
            n: self.n,
            bias_nm: self.sum / n,
            rms_nm: (self.sum_sq / n).sqrt(),
            max_abs_nm: self.max_abs,
            p95_nm: self.sketch.quantile(0.95).unwrap_or(0.0),
            p99_nm: self.sketch.quantile(0.99).unwrap_or(0.0),
        })
    }
}

/// Band edges of one operating variable; band i is `[edges[i], edges[i+1])`, with open bands
/// below the first and above the last edge.
#[derive(Debug, Clone)]
pub struct Bands {
    name: &'static str,
    unit: &'static str,
    edges: Vec<f64>,
}

impl Bands {
    fn label(&self, x: f64) -> String {
        let i = self.edges.iter().position(|&e| x < e);
        let edge = |k: usize| self.edges.get(k).copied().unwrap_or(0.0);
        match i {
            Some(0) => format!("{} < {} {}", self.name, edge(0), self.unit),
            Some(i) => format!("{} {}–{} {}", self.name, edge(i - 1), edge(i), self.unit),
            None => format!(
                "{} ≥ {} {}",
                self.name,
                self.edges.last().copied().unwrap_or(0.0),
                self.unit
            ),
        }
    }
}

/// Holding rows: is the reference inside ±capacity?
#[derive(Debug, Clone, Default, Serialize)]
pub struct HoldingReport {
    /// Holding rows with a reference.
    pub n: u64,
    /// Rows where |reference| ≤ capacity.
    pub within_capacity: u64,
    /// Smallest capacity − |reference|, N·m (negative: reference beyond the capacity).
    pub min_margin_nm: Option<f64>,
}

/// Rows of one state (from the core).
#[derive(Debug, Clone, Default, Serialize, PartialEq, Eq)]
pub struct StateCount {
    /// Rows in this state.
    pub rows: u64,
    /// Of those, rows with a reference torque.
    pub with_reference: u64,
    /// Of those, rows that entered the error statistics (0 for holding and unavailable: no
    /// torque is estimated there).
    pub with_error: u64,
}

/// Everything `compare` reports.
#[derive(Debug, Clone, Serialize)]
pub struct CompareReport {
    /// Estimate file.
    pub file: String,
    /// Rows read.
    pub rows: u64,
    /// Rows without a reference.
    pub no_reference: u64,
    /// Rows with no estimate (unavailable).
    pub unavailable: u64,
    /// Over all rows with both numbers.
    pub overall: Option<ErrorReport>,
    /// Only slipping rows.
    pub slipping: Option<ErrorReport>,
    /// Rows per state (slipping, holding, released, unavailable).
    pub by_state: BTreeMap<String, StateCount>,
    /// By region label.
    pub regions: BTreeMap<String, ErrorReport>,
    /// Holding rows.
    pub holding: HoldingReport,
    /// Quantile method.
    pub quantile_method: String,
}

/// Streaming accumulator of a comparison.
pub struct Comparer {
    bands: [Bands; 3],
    overall: ErrorStats,
    slipping: ErrorStats,
    regions: BTreeMap<String, ErrorStats>,
    holding: HoldingReport,
    by_state: [StateCount; 4],
    rows: u64,
    no_reference: u64,
    unavailable: u64,
}

impl Comparer {
    /// Bands from the config's μ breakpoints and force limit, or fixed defaults.
    pub fn new(c: Option<&DeviceConfig>) -> Self {
        let (t, v, f) = match c {
            Some(c) => {
                let fmax = c.limits.max_clamp_force_n;
                (
                    c.friction.mu.temperature_c.clone(),
                    c.friction
                        .mu
                        .slip_speed_rad_s
                        .iter()
                        .copied()
                        .filter(|&s| s > 0.0)
                        .collect(),
                    vec![0.25 * fmax, 0.5 * fmax, 0.75 * fmax],
                )
            }
            None => (
                vec![100.0, 200.0, 300.0, 400.0],
                vec![0.5, 2.0, 10.0],
                vec![10e3, 20e3, 40e3, 80e3],
            ),
        };
        Self {
            bands: [
                Bands {
                    name: "temperature",
                    unit: "°C",
                    edges: t,
                },
                Bands {
                    name: "|slip speed|",
                    unit: "rad/s",
                    edges: v,
                },
                Bands {
                    name: "clamp force",
                    unit: "N",
                    edges: f,
                },
            ],
            overall: ErrorStats::default(),
            slipping: ErrorStats::default(),
            regions: BTreeMap::new(),
            holding: HoldingReport::default(),
            by_state: Default::default(),
            rows: 0,
            no_reference: 0,
            unavailable: 0,
        }
    }

    /// Add one estimate row.
    pub fn add(&mut self, r: &EstimateRow) {
        self.rows += 1;
        let slot = State::ALL.iter().position(|&s| s == r.state).unwrap_or(0);
        let count = self.by_state.get_mut(slot);
        let Some(reference) = r.torque_ref_nm else {
            self.no_reference += 1;
            if let Some(c) = count {
                c.rows += 1;
            }
            return;
        };
        let contributes = match (r.state, r.torque_nm, r.capacity_nm) {
            (State::Holding, _, capacity) => {
                // No torque estimate here: the reference must lie within ±capacity.
                self.holding.n += 1;
                let margin = capacity.unwrap_or(0.0) - reference.abs();
                if margin >= 0.0 {
                    self.holding.within_capacity += 1;
                }
                self.holding.min_margin_nm =
                    Some(self.holding.min_margin_nm.map_or(margin, |m| m.min(margin)));
                false
            }
            (_, Some(t), _) => {
                let e = t - reference;
                self.overall.add(e);
                if r.state == State::Slipping {
                    self.slipping.add(e);
                }
                let labels = [
                    self.bands[0].label(r.lining_temp_c),
                    self.bands[1].label(r.slip_speed_rad_s.abs()),
                    self.bands[2].label(r.clamp_force_n),
                    format!("state {}", r.state.name()),
                ];
                for l in labels {
                    self.regions.entry(l).or_default().add(e);
                }
                true
            }
            (_, None, _) => {
                self.unavailable += 1;
                false
            }
        };
        if let Some(c) = count {
            c.rows += 1;
            c.with_reference += 1;
            c.with_error += u64::from(contributes);
        }
    }

    /// The report.
    pub fn report(&self, file: &str) -> CompareReport {
        CompareReport {
            file: file.to_string(),
            rows: self.rows,
            no_reference: self.no_reference,
            unavailable: self.unavailable,
            overall: self.overall.report(),
            slipping: self.slipping.report(),
            by_state: State::ALL
                .iter()
                .zip(&self.by_state)
                .map(|(s, c)| (s.name().to_string(), c.clone()))
                .collect(),
            regions: self
                .regions
                .iter()
                .filter_map(|(k, v)| v.report().map(|r| (k.clone(), r)))
                .collect(),
            holding: self.holding.clone(),
            quantile_method: format!(
                "log-bucketed histogram (DDSketch scheme), relative accuracy {} %, bounded memory",
                crate::sketch::RELATIVE_ACCURACY * 100.0
            ),
        }
    }
}

/// Compare one estimate file.
///
/// # Errors
/// I/O or located data errors.
pub fn compare_file(
    path: &str,
    c: Option<&DeviceConfig>,
    progress: Option<&indicatif::ProgressBar>,
) -> Result<CompareReport, SimError> {
    let mut r = EstimateReader::open(path)?;
    let mut cmp = Comparer::new(c);
    if let (Some(pb), (Some(len), _)) = (progress, r.progress()) {
        pb.set_length(len);
    }
    let mut n = 0u64;
    while let Some(row) = r.next_row()? {
        cmp.add(&row);
        n += 1;
        if n.is_multiple_of(8192)
            && let Some(pb) = progress
        {
            pb.set_position(r.progress().1);
        }
    }
    Ok(cmp.report(r.file()))
}

/// Accuracy thresholds; a breach is exit code 3.
#[derive(Debug, Clone, Default)]
pub struct Thresholds {
    /// Largest allowed |bias|, N·m.
    pub max_bias_nm: Option<f64>,
    /// Largest allowed RMS, N·m.
    pub max_rms_nm: Option<f64>,
    /// Largest allowed P99, N·m.
    pub max_p99_nm: Option<f64>,
    /// Largest allowed max |error|, N·m.
    pub max_abs_nm: Option<f64>,
}

impl Thresholds {
    /// The breaches of the overall numbers, as messages.
    pub fn breaches(&self, r: &CompareReport) -> Vec<String> {
        let mut out = Vec::new();
        let Some(o) = &r.overall else {
            if self
                .max_bias_nm
                .or(self.max_rms_nm)
                .or(self.max_p99_nm)
                .or(self.max_abs_nm)
                .is_some()
            {
                out.push("no rows with both an estimate and a reference torque".into());
            }
            return out;
        };
        let mut check = |name: &str, v: f64, lim: Option<f64>| {
            if let Some(l) = lim
                && v > l
            {
                out.push(format!("{name} {v:.3} N·m exceeds {l} N·m"));
            }
        };
        check("|bias|", o.bias_nm.abs(), self.max_bias_nm);
        check("RMS", o.rms_nm, self.max_rms_nm);
        check("P99", o.p99_nm, self.max_p99_nm);
        check("max |error|", o.max_abs_nm, self.max_abs_nm);
        out
    }
}

/// Human text of a report.
pub fn human(r: &CompareReport) -> String {
    let mut o = format!(
        "compare {}: {} rows ({} without reference, {} unavailable)\n",
        r.file, r.rows, r.no_reference, r.unavailable
    );
    let line = |name: &str, e: &ErrorReport| {
        format!(
            "  {name:<34} n {:>9}  bias {:>9.2}  RMS {:>9.2}  max {:>9.2}  P95 {:>9.2}  P99 {:>9.2} N·m\n",
            e.n, e.bias_nm, e.rms_nm, e.max_abs_nm, e.p95_nm, e.p99_nm
        )
    };
    match &r.overall {
        Some(e) => o.push_str(&line("overall (slipping + released)", e)),
        None => o.push_str("  no rows with both an estimate and a reference torque\n"),
    }
    if let Some(e) = &r.slipping {
        o.push_str(&line("slipping", e));
    }
    let states: Vec<String> = State::ALL
        .iter()
        .filter_map(|s| {
            let c = r.by_state.get(s.name())?;
            let what = match s {
                State::Holding | State::SlipUnknown => "no torque: checked against ±capacity",
                State::Unavailable => "no estimate",
                _ => "in the errors",
            };
            Some(format!(
                "{} {} ({} with reference, {} {what})",
                s.name(),
                c.rows,
                c.with_reference,
                if matches!(s, State::Holding | State::SlipUnknown | State::Unavailable) {
                    c.with_reference
                } else {
                    c.with_error
                }
            ))
        })
        .collect();
    o.push_str(&format!("  by state: {}\n", states.join("; ")));
    for (k, e) in &r.regions {
        o.push_str(&line(k, e));
    }
    let h = &r.holding;
    if h.n > 0 {
        o.push_str(&format!(
            "  holding: {} rows, reference within ±capacity in {} ({:.2} %), smallest margin {:.1} N·m\n",
            h.n,
            h.within_capacity,
            {
                #[allow(clippy::cast_precision_loss)]
                let p = 100.0 * h.within_capacity as f64 / h.n as f64;
                p
            },
            h.min_margin_nm.unwrap_or(0.0)
        ));
    }
    o.push_str(&format!("  percentiles: {}\n", r.quantile_method));
    o
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::float_cmp, clippy::indexing_slicing)]
    use super::*;
    use crate::seam::Flags;

    fn row(
        state: State,
        torque: Option<f64>,
        capacity: Option<f64>,
        reference: f64,
    ) -> EstimateRow {
        EstimateRow {
            line: 1,
            t_s: 0.0,
            torque_nm: torque,
            capacity_nm: capacity,
            uncertainty_nm: 0.0,
            mu: 0.4,
            radius_m: 0.6,
            clamp_force_n: 30_000.0,
            slip_speed_rad_s: 1.0,
            lining_temp_c: 100.0,
            bedding: 0.0,
            wear_m: 0.0,
            correction: 1.0,
            state,
            flags: Flags::empty(),
            torque_ref_nm: Some(reference),
        }
    }

    #[test]
    fn holding_rows_are_counted_apart_never_as_zero_error() {
        let mut c = Comparer::new(None);
        // Two slipping rows with errors +10 and −30 N·m [calc: bias −10, RMS √500].
        c.add(&row(State::Slipping, Some(-990.0), Some(1300.0), -1000.0));
        c.add(&row(State::Slipping, Some(-1030.0), Some(1300.0), -1000.0));
        // Many holding rows whose load is within the capacity: no torque, no error entry.
        for _ in 0..100 {
            c.add(&row(State::Holding, None, Some(1300.0), 700.0));
        }
        c.add(&row(State::Holding, None, Some(1300.0), 1400.0));
        c.add(&row(State::Unavailable, None, None, 500.0));
        let r = c.report("t");
        let o = r.overall.clone().unwrap();
        assert_eq!(o.n, 2);
        assert!((o.bias_nm + 10.0).abs() < 1e-12);
        assert!((o.rms_nm - 500f64.sqrt()).abs() < 1e-12);
        let h = &r.by_state["holding"];
        assert_eq!((h.rows, h.with_reference, h.with_error), (101, 101, 0));
        assert_eq!(r.by_state["slipping"].with_error, 2);
        assert_eq!(r.by_state["unavailable"].with_error, 0);
        assert_eq!(r.holding.n, 101);
        assert_eq!(r.holding.within_capacity, 100);
        assert_eq!(r.holding.min_margin_nm, Some(-100.0));
        assert_eq!(r.unavailable, 1);
        assert!(!r.regions.contains_key("state holding"));
        assert!(human(&r).contains("holding 101 (101 with reference, 101 no torque"));
    }
}
