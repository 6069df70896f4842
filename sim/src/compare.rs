//! `compare`: an estimate trace against its reference torque, streaming.
//!
//! Error = estimate − reference (N·m), over rows that have both (slipping and released rows).
//! The state comes from the core (`ContactState`): a **holding** row has no torque estimate,
//! only a capacity; it is counted apart and checked as "reference within ±capacity", never
//! entered as an error (not even as zero). Unavailable rows (no clamp force) are counted apart
//! too. Reported: rows per state, and for the rows with an error: count, bias (mean error),
//! RMS, max |error|, and P95/P99 of |error| from a [`QuantileSketch`] (bounded memory,
//! relative accuracy [`crate::quantile_sketch::RELATIVE_ACCURACY`]) — overall, for the gated states
//! (slipping by default), and by operating region in numeric order: lining temperature band,
//! slip-speed band, clamp-force band, and state. Beside each N·m figure, the same figures
//! relative to the reference (% of |reference|) over the rows whose |reference| is at least
//! a floor ([`GateSpec::relative_floor_nm`]): below it a percentage says nothing.
//!
//! The accuracy gates ([`Thresholds`]) apply to the gated states only; holding rows have
//! their own gate, the count of rows whose reference lies outside ±capacity.

use std::collections::BTreeMap;

use serde::Serialize;

use crate::error::SimError;
use crate::estimate::EstimateReader;
use crate::quantile_sketch::QuantileSketch;
use crate::schema::DeviceSpec;
use clampwise_convert::{ContactState, EstimateRow};

/// Running sums of one error population: what its figures are computed from, and what two
/// populations merge by (the sums add, the sketches merge).
#[derive(Debug, Clone, Default)]
pub struct Moments {
    /// Values added.
    pub n: u64,
    /// Their sum.
    pub sum: f64,
    /// The sum of their squares.
    pub sum_sq: f64,
    /// The largest |value|.
    pub max_abs: f64,
    /// The sketch of |value| behind P95 and P99.
    pub sketch: QuantileSketch,
}

impl Moments {
    fn add(&mut self, e: f64) {
        self.n += 1;
        self.sum += e;
        self.sum_sq += e * e;
        self.max_abs = self.max_abs.max(e.abs());
        self.sketch.add(e);
    }

    /// Add another population's sums.
    pub fn merge(&mut self, o: &Self) {
        self.n += o.n;
        self.sum += o.sum;
        self.sum_sq += o.sum_sq;
        self.max_abs = self.max_abs.max(o.max_abs);
        self.sketch.merge(&o.sketch);
    }

    /// (n, mean, RMS, max |x|, P95, P99); `None` when empty.
    fn figures(&self) -> Option<(u64, f64, f64, f64, f64, f64)> {
        if self.n == 0 {
            return None;
        }
        // Counts stay far below 2⁵³.
        #[allow(clippy::cast_precision_loss)]
        let n = self.n as f64;
        Some((
            self.n,
            self.sum / n,
            libm::sqrt(self.sum_sq / n),
            self.max_abs,
            self.sketch.quantile(0.95).unwrap_or(0.0),
            self.sketch.quantile(0.99).unwrap_or(0.0),
        ))
    }
}

/// Error statistics of one region: in N·m, and in % of |reference| for the rows whose
/// |reference| is at least the floor.
#[derive(Debug, Clone, Default)]
pub struct ErrorStats {
    abs: Moments,
    rel: Moments,
    floor_nm: f64,
}

/// Error relative to the reference, 100 · error / |reference|, over rows with |reference| at
/// least `floor_nm`.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct RelativeReport {
    /// Rows with |reference| ≥ `floor_nm`.
    pub n: u64,
    /// The floor, N·m.
    pub floor_nm: f64,
    /// Mean relative error, %.
    pub bias_pct: f64,
    /// RMS relative error, %.
    pub rms_pct: f64,
    /// Largest |relative error|, %.
    pub max_abs_pct: f64,
    /// 95th percentile of |relative error|, %.
    pub p95_pct: f64,
    /// 99th percentile of |relative error|, %.
    pub p99_pct: f64,
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
    /// The same relative to |reference| (`None` when no row reached the floor).
    pub relative: Option<RelativeReport>,
}

impl ErrorStats {
    /// Empty statistics whose relative figures take rows with |reference| ≥ `floor_nm`.
    pub fn with_floor(floor_nm: f64) -> Self {
        Self {
            floor_nm,
            ..Self::default()
        }
    }

    /// Statistics from their parts (as [`ErrorStats::moments`] gives them).
    pub fn from_moments(floor_nm: f64, abs: Moments, rel: Moments) -> Self {
        Self { abs, rel, floor_nm }
    }

    /// The sums in N·m and in % of |reference|.
    pub fn moments(&self) -> (&Moments, &Moments) {
        (&self.abs, &self.rel)
    }

    /// The floor of the relative figures, N·m.
    pub fn floor_nm(&self) -> f64 {
        self.floor_nm
    }

    /// Add another population's statistics (another device's, say).
    ///
    /// # Errors
    /// The two floors differ: their relative figures cover different rows.
    pub fn merge(&mut self, other: &Self) -> Result<(), String> {
        if other.floor_nm.to_bits() != self.floor_nm.to_bits() {
            return Err(format!(
                "floors differ ({} and {} N·m)",
                self.floor_nm, other.floor_nm
            ));
        }
        self.abs.merge(&other.abs);
        self.rel.merge(&other.rel);
        Ok(())
    }

    /// Add one error with its reference, N·m.
    pub fn add(&mut self, error_nm: f64, reference_nm: f64) {
        self.abs.add(error_nm);
        if reference_nm.abs() >= self.floor_nm && reference_nm != 0.0 {
            self.rel.add(100.0 * error_nm / reference_nm.abs());
        }
    }

    /// The numbers; `None` when empty.
    pub fn report(&self) -> Option<ErrorReport> {
        let (n, bias, rms, max, p95, p99) = self.abs.figures()?;
        Some(ErrorReport {
            n,
            bias_nm: bias,
            rms_nm: rms,
            max_abs_nm: max,
            p95_nm: p95,
            p99_nm: p99,
            relative: self
                .rel
                .figures()
                .map(|(n, b, r, m, p95, p99)| RelativeReport {
                    n,
                    floor_nm: self.floor_nm,
                    bias_pct: b,
                    rms_pct: r,
                    max_abs_pct: m,
                    p95_pct: p95,
                    p99_pct: p99,
                }),
        })
    }
}

/// Which rows the accuracy gates judge, and the floor of the relative figures.
#[derive(Debug, Clone, PartialEq)]
pub struct GateSpec {
    /// States whose errors the `--max-*` gates apply to (slipping and/or released).
    pub states: Vec<ContactState>,
    /// Relative figures count only rows with |reference| at or above this, N·m.
    pub relative_floor_nm: f64,
}

impl Default for GateSpec {
    fn default() -> Self {
        Self {
            states: vec![ContactState::Slipping],
            relative_floor_nm: 10.0,
        }
    }
}

impl GateSpec {
    /// Parse `--gate-states` names and check the floor.
    ///
    /// # Errors
    /// A usage message for an unknown state, a state without a torque estimate (holding,
    /// unavailable), an empty list, or a floor that is not a positive number.
    pub fn parse(names: &[String], relative_floor_nm: f64) -> Result<Self, String> {
        let mut states = Vec::new();
        for n in names.iter().map(|n| n.trim()).filter(|n| !n.is_empty()) {
            let s = match ContactState::from_name(n) {
                Some(s @ (ContactState::Slipping | ContactState::Released)) => s,
                Some(ContactState::Holding | ContactState::SlipUnknown) => return Err("--gate-states: holding rows have no torque estimate (only a capacity); gate them with --max-holding-violations".into()),
                Some(ContactState::Unavailable) => return Err("--gate-states: unavailable rows have no estimate to gate".into()),
                None => return Err(format!("--gate-states: unknown state '{n}' (choose slipping, released)")),
            };
            if !states.contains(&s) {
                states.push(s);
            }
        }
        if states.is_empty() {
            return Err("--gate-states: name at least one state (slipping, released)".into());
        }
        if !(relative_floor_nm.is_finite() && relative_floor_nm > 0.0) {
            return Err("--relative-floor-nm must be a positive number".into());
        }
        Ok(Self {
            states,
            relative_floor_nm,
        })
    }

    /// The gated states' names joined by `+`.
    pub fn label(&self) -> String {
        self.states
            .iter()
            .map(|s| s.name())
            .collect::<Vec<_>>()
            .join(" + ")
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
    /// The band of `x`: its index (0 below the first edge, in increasing order) and label.
    fn band(&self, x: f64) -> (usize, String) {
        let i = self.edges.iter().position(|&e| x < e);
        let edge = |k: usize| self.edges.get(k).copied().unwrap_or(0.0);
        match i {
            Some(0) => (0, format!("{} < {} {}", self.name, edge(0), self.unit)),
            Some(i) => (
                i,
                format!("{} {}–{} {}", self.name, edge(i - 1), edge(i), self.unit),
            ),
            None => (
                self.edges.len(),
                format!(
                    "{} ≥ {} {}",
                    self.name,
                    self.edges.last().copied().unwrap_or(0.0),
                    self.unit
                ),
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
    /// Rows where |reference| > capacity (the holding gate, `--max-holding-violations`).
    pub outside_capacity: u64,
    /// Smallest capacity − |reference|, N·m (negative: reference beyond the capacity; the
    /// worst violation).
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
    /// The states the accuracy gates apply to, e.g. `slipping`.
    pub gate_states: Vec<&'static str>,
    /// Rows of the gated states: what the `--max-*` gates judge.
    pub gated: Option<ErrorReport>,
    /// Rows per state (slipping, holding, released, unavailable).
    pub by_state: BTreeMap<String, StateCount>,
    /// By region, in numeric order within temperature, slip speed, clamp force, state.
    pub regions: Vec<RegionReport>,
    /// Holding rows.
    pub holding: HoldingReport,
    /// Quantile method.
    pub quantile_method: String,
}

/// The numbers of one operating region.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct RegionReport {
    /// Region label, e.g. `temperature 100–200 °C`.
    pub region: String,
    /// Its numbers.
    #[serde(flatten)]
    pub report: ErrorReport,
}

/// Streaming accumulator of a comparison.
pub struct Comparer {
    bands: [Bands; 3],
    gate: GateSpec,
    overall: ErrorStats,
    slipping: ErrorStats,
    gated: ErrorStats,
    /// Keyed by (variable, band index): numeric order, whatever the labels.
    regions: BTreeMap<(usize, usize), (String, ErrorStats)>,
    holding: HoldingReport,
    by_state: [StateCount; ContactState::ALL.len()],
    rows: u64,
    no_reference: u64,
    unavailable: u64,
}

impl Comparer {
    /// Bands from the config's μ breakpoints and force limit, or fixed defaults.
    pub fn new(c: Option<&DeviceSpec>, gate: GateSpec) -> Self {
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
            overall: ErrorStats::with_floor(gate.relative_floor_nm),
            slipping: ErrorStats::with_floor(gate.relative_floor_nm),
            gated: ErrorStats::with_floor(gate.relative_floor_nm),
            gate,
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
        let slot = ContactState::ALL
            .iter()
            .position(|&s| s == r.state)
            .unwrap_or(0);
        let count = self.by_state.get_mut(slot);
        let Some(reference) = r.torque_ref_nm else {
            self.no_reference += 1;
            if let Some(c) = count {
                c.rows += 1;
            }
            return;
        };
        let contributes = match (r.state, r.torque_nm, r.capacity_nm) {
            (ContactState::Holding, _, capacity) => {
                // No torque estimate here: the reference must lie within ±capacity.
                self.holding.n += 1;
                let margin = capacity.unwrap_or(0.0) - reference.abs();
                if margin >= 0.0 {
                    self.holding.within_capacity += 1;
                } else {
                    self.holding.outside_capacity += 1;
                }
                self.holding.min_margin_nm =
                    Some(self.holding.min_margin_nm.map_or(margin, |m| m.min(margin)));
                false
            }
            (_, Some(t), _) => {
                let e = t - reference;
                self.overall.add(e, reference);
                if r.state == ContactState::Slipping {
                    self.slipping.add(e, reference);
                }
                if self.gate.states.contains(&r.state) {
                    self.gated.add(e, reference);
                }
                let bands = [
                    self.bands[0].band(r.lining_temp_c),
                    self.bands[1].band(r.slip_speed_rad_s.abs()),
                    self.bands[2].band(r.clamp_force_n),
                    (
                        ContactState::ALL
                            .iter()
                            .position(|&s| s == r.state)
                            .unwrap_or(0),
                        format!("state {}", r.state.name()),
                    ),
                ];
                let floor = self.gate.relative_floor_nm;
                for (variable, (index, label)) in bands.into_iter().enumerate() {
                    self.regions
                        .entry((variable, index))
                        .or_insert_with(|| (label, ErrorStats::with_floor(floor)))
                        .1
                        .add(e, reference);
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
            gate_states: self.gate.states.iter().map(|s| s.name()).collect(),
            gated: self.gated.report(),
            by_state: ContactState::ALL
                .iter()
                .zip(&self.by_state)
                .map(|(s, c)| (s.name().to_string(), c.clone()))
                .collect(),
            regions: self
                .regions
                .values()
                .filter_map(|(label, v)| {
                    v.report().map(|report| RegionReport {
                        region: label.clone(),
                        report,
                    })
                })
                .collect(),
            holding: self.holding.clone(),
            quantile_method: format!(
                "log-bucketed histogram (DDSketch scheme), relative accuracy {} %, bounded memory",
                crate::quantile_sketch::RELATIVE_ACCURACY * 100.0
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
    c: Option<&DeviceSpec>,
    gate: &GateSpec,
    progress: Option<&indicatif::ProgressBar>,
) -> Result<CompareReport, SimError> {
    let mut r = EstimateReader::open(path)?;
    let mut cmp = Comparer::new(c, gate.clone());
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

/// Accuracy thresholds; a breach is exit code 3. The error gates judge the gated states'
/// rows ([`CompareReport::gated`]); the holding gate judges the holding rows.
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
    /// Largest allowed relative RMS, %.
    pub max_rms_pct: Option<f64>,
    /// Largest allowed relative P99, %.
    pub max_p99_pct: Option<f64>,
    /// Most holding rows allowed with the reference outside ±capacity.
    pub max_holding_violations: Option<u64>,
}

impl Thresholds {
    /// The breaches, as messages.
    pub fn breaches(&self, r: &CompareReport) -> Vec<String> {
        let mut out = Vec::new();
        let gated = r.gate_states.join(" + ");
        if let (Some(limit), h) = (self.max_holding_violations, &r.holding)
            && h.outside_capacity > limit
        {
            out.push(format!(
                "{} holding rows have the reference torque outside ±capacity (limit {limit}); worst margin {:.1} N·m",
                h.outside_capacity,
                h.min_margin_nm.unwrap_or(0.0)
            ));
        }
        let error_gates = [
            self.max_bias_nm,
            self.max_rms_nm,
            self.max_p99_nm,
            self.max_abs_nm,
            self.max_rms_pct,
            self.max_p99_pct,
        ];
        let Some(o) = &r.gated else {
            if error_gates.iter().any(Option::is_some) {
                out.push(format!(
                    "no {gated} rows with both an estimate and a reference torque"
                ));
            }
            return out;
        };
        let mut check = |name: &str, v: f64, lim: Option<f64>, unit: &str| {
            if let Some(l) = lim
                && v > l
            {
                out.push(format!("{gated}: {name} {v:.3} {unit} exceeds {l} {unit}"));
            }
        };
        check("|bias|", o.bias_nm.abs(), self.max_bias_nm, "N·m");
        check("RMS", o.rms_nm, self.max_rms_nm, "N·m");
        check("P99", o.p99_nm, self.max_p99_nm, "N·m");
        check("max |error|", o.max_abs_nm, self.max_abs_nm, "N·m");
        match &o.relative {
            Some(rel) => {
                check("relative RMS", rel.rms_pct, self.max_rms_pct, "%");
                check("relative P99", rel.p99_pct, self.max_p99_pct, "%");
            }
            None if self.max_rms_pct.or(self.max_p99_pct).is_some() => out.push(format!(
                "{gated}: no row with |reference| at or above the relative floor"
            )),
            None => {}
        }
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
        let rel = e.relative.as_ref().map_or_else(
            || "  (no row above the relative floor)".to_string(),
            |r| {
                format!(
                    "  | bias {:>7.2}  RMS {:>6.2}  P99 {:>6.2} % of |ref|",
                    r.bias_pct, r.rms_pct, r.p99_pct
                )
            },
        );
        format!(
            "  {name:<34} n {:>9}  bias {:>9.2}  RMS {:>9.2}  max {:>9.2}  P95 {:>9.2}  P99 {:>9.2} N·m{rel}\n",
            e.n, e.bias_nm, e.rms_nm, e.max_abs_nm, e.p95_nm, e.p99_nm
        )
    };
    match &r.overall {
        Some(e) => o.push_str(&line("overall (slipping + released)", e)),
        None => o.push_str("  no rows with both an estimate and a reference torque\n"),
    }
    let gated = format!("gated ({})", r.gate_states.join(" + "));
    match &r.gated {
        Some(e) => o.push_str(&line(&gated, e)),
        None => o.push_str(&format!("  {gated}: no rows\n")),
    }
    let states: Vec<String> = ContactState::ALL
        .iter()
        .filter_map(|s| {
            let c = r.by_state.get(s.name())?;
            let what = match s {
                ContactState::Holding | ContactState::SlipUnknown => {
                    "no torque: checked against ±capacity"
                }
                ContactState::Unavailable => "no estimate",
                _ => "in the errors",
            };
            Some(format!(
                "{} {} ({} with reference, {} {what})",
                s.name(),
                c.rows,
                c.with_reference,
                if matches!(
                    s,
                    ContactState::Holding | ContactState::SlipUnknown | ContactState::Unavailable
                ) {
                    c.with_reference
                } else {
                    c.with_error
                }
            ))
        })
        .collect();
    o.push_str(&format!("  by state: {}\n", states.join("; ")));
    for g in &r.regions {
        o.push_str(&line(&g.region, &g.report));
    }
    let h = &r.holding;
    if h.n > 0 {
        o.push_str(&format!(
            "  holding: {} rows, reference within ±capacity in {} ({:.2} %), outside in {}, smallest margin {:.1} N·m\n",
            h.n,
            h.within_capacity,
            {
                #[allow(clippy::cast_precision_loss)]
                let p = 100.0 * h.within_capacity as f64 / h.n as f64;
                p
            },
            h.outside_capacity,
            h.min_margin_nm.unwrap_or(0.0)
        ));
    }
    let floor = r
        .gated
        .as_ref()
        .or(r.overall.as_ref())
        .and_then(|e| e.relative.as_ref())
        .map(|x| x.floor_nm);
    if let Some(f) = floor {
        o.push_str(&format!(
            "  relative figures: 100 · error / |reference| over the rows with |reference| ≥ {f} N·m\n"
        ));
    }
    o.push_str(&format!("  percentiles: {}\n", r.quantile_method));
    o
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::float_cmp, clippy::indexing_slicing)]
    use super::*;
    use clampwise_convert::Flags;

    #[test]
    fn merged_halves_report_what_one_population_reports() {
        // [calc] sums add and sketches merge: counts, maxima and quantiles of two halves merged
        // equal those of the whole; mean and RMS to rounding of the sums.
        let errors: Vec<(f64, f64)> = (0..2000)
            .map(|i| (f64::from(i % 97) - 40.0, 5.0 + f64::from(i % 13) * 100.0))
            .collect();
        let mut whole = ErrorStats::with_floor(10.0);
        let (mut a, mut b) = (ErrorStats::with_floor(10.0), ErrorStats::with_floor(10.0));
        for (i, &(e, r)) in errors.iter().enumerate() {
            whole.add(e, r);
            if i < 700 { a.add(e, r) } else { b.add(e, r) }
        }
        a.merge(&b).unwrap();
        let (w, m) = (whole.report().unwrap(), a.report().unwrap());
        assert_eq!(
            (w.n, w.max_abs_nm, w.p95_nm, w.p99_nm),
            (m.n, m.max_abs_nm, m.p95_nm, m.p99_nm)
        );
        assert!((w.bias_nm - m.bias_nm).abs() < 1e-12 && (w.rms_nm - m.rms_nm).abs() < 1e-12);
        let (wr, mr) = (w.relative.unwrap(), m.relative.unwrap());
        assert_eq!((wr.n, wr.p99_pct), (mr.n, mr.p99_pct));
        assert!(a.merge(&ErrorStats::with_floor(5.0)).is_err());
    }

    fn row(
        state: ContactState,
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
        let mut c = Comparer::new(None, GateSpec::default());
        // Two slipping rows with errors +10 and −30 N·m [calc: bias −10, RMS √500].
        c.add(&row(
            ContactState::Slipping,
            Some(-990.0),
            Some(1300.0),
            -1000.0,
        ));
        c.add(&row(
            ContactState::Slipping,
            Some(-1030.0),
            Some(1300.0),
            -1000.0,
        ));
        // Many holding rows whose load is within the capacity: no torque, no error entry.
        for _ in 0..100 {
            c.add(&row(ContactState::Holding, None, Some(1300.0), 700.0));
        }
        c.add(&row(ContactState::Holding, None, Some(1300.0), 1400.0));
        c.add(&row(ContactState::Unavailable, None, None, 500.0));
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
        assert!(!r.regions.iter().any(|g| g.region == "state holding"));
        assert_eq!(r.holding.outside_capacity, 1);
        assert!(human(&r).contains("holding 101 (101 with reference, 101 no torque"));
    }

    /// A released row with a large error must not hide a bad slipping RMS: the default gate
    /// judges slipping rows alone [calc: slipping errors ±100 N·m → RMS 100; with 99 released
    /// rows of error 0 the pooled RMS would be 100/√100·√2 ≈ 14.1].
    #[test]
    fn gates_judge_the_slipping_rows_by_default() {
        let mut c = Comparer::new(None, GateSpec::default());
        c.add(&row(
            ContactState::Slipping,
            Some(-1100.0),
            Some(1300.0),
            -1000.0,
        ));
        c.add(&row(
            ContactState::Slipping,
            Some(-900.0),
            Some(1300.0),
            -1000.0,
        ));
        for _ in 0..98 {
            c.add(&row(ContactState::Released, Some(0.0), Some(0.0), 0.0));
        }
        let r = c.report("t");
        let th = Thresholds {
            max_rms_nm: Some(80.0),
            ..Thresholds::default()
        };
        assert!((r.overall.as_ref().unwrap().rms_nm - 200f64.sqrt()).abs() < 1e-9);
        assert!((r.gated.as_ref().unwrap().rms_nm - 100.0).abs() < 1e-9);
        let b = th.breaches(&r);
        assert_eq!(b.len(), 1, "{b:?}");
        assert!(
            b[0].starts_with("slipping: RMS 100.000 N·m exceeds 80"),
            "{b:?}"
        );
        // Both states pooled, as asked.
        let gate = GateSpec::parse(&["slipping".into(), "released".into()], 10.0).unwrap();
        let mut c2 = Comparer::new(None, gate);
        c2.add(&row(
            ContactState::Slipping,
            Some(-1100.0),
            Some(1300.0),
            -1000.0,
        ));
        c2.add(&row(ContactState::Released, Some(0.0), Some(0.0), 0.0));
        assert_eq!(c2.report("t").gated.unwrap().n, 2);
        assert!(GateSpec::parse(&["holding".into()], 10.0).is_err());
        assert!(GateSpec::parse(&["slipping".into()], 0.0).is_err());
    }

    #[test]
    fn holding_rows_outside_capacity_have_their_own_gate() {
        let mut c = Comparer::new(None, GateSpec::default());
        c.add(&row(ContactState::Holding, None, Some(1300.0), 700.0));
        c.add(&row(ContactState::Holding, None, Some(1300.0), -2998.0));
        c.add(&row(ContactState::Holding, None, Some(1300.0), 1500.0));
        let r = c.report("t");
        assert_eq!(r.holding.outside_capacity, 2);
        assert_eq!(r.holding.min_margin_nm, Some(-1698.0));
        let gate = |n| Thresholds {
            max_holding_violations: Some(n),
            ..Thresholds::default()
        };
        assert!(gate(2).breaches(&r).is_empty());
        let b = gate(1).breaches(&r);
        assert!(
            b[0].contains("2 holding rows") && b[0].contains("-1698.0"),
            "{b:?}"
        );
    }

    /// [calc: errors +10 at 1000 N·m (1 %) and −4 at 200 N·m (−2 %); the row at 5 N·m is
    /// under the 10 N·m floor → bias −0.5 %, RMS √2.5 %]
    #[test]
    fn relative_figures_skip_references_under_the_floor() {
        let mut c = Comparer::new(None, GateSpec::default());
        c.add(&row(
            ContactState::Slipping,
            Some(-990.0),
            Some(1300.0),
            -1000.0,
        ));
        c.add(&row(
            ContactState::Slipping,
            Some(196.0),
            Some(1300.0),
            200.0,
        ));
        c.add(&row(ContactState::Slipping, Some(6.0), Some(1300.0), 5.0));
        let rel = c.report("t").gated.unwrap().relative.unwrap();
        assert_eq!(rel.n, 2);
        assert!((rel.bias_pct + 0.5).abs() < 1e-12, "{rel:?}");
        assert!((rel.rms_pct - 2.5f64.sqrt()).abs() < 1e-12, "{rel:?}");
        assert!((rel.max_abs_pct - 2.0).abs() < 1e-12);
    }

    /// "temperature 20–100 °C" sorts after "temperature 300–400 °C" as text; the report
    /// keeps the numeric order.
    #[test]
    fn regions_are_in_numeric_order() {
        let mut c = Comparer::new(None, GateSpec::default());
        for t in [450.0, 350.0, 50.0, 150.0, 250.0] {
            let mut r = row(ContactState::Slipping, Some(-990.0), Some(1300.0), -1000.0);
            r.lining_temp_c = t;
            c.add(&r);
        }
        let temps: Vec<String> = c
            .report("t")
            .regions
            .iter()
            .map(|g| g.region.clone())
            .filter(|g| g.starts_with("temperature"))
            .collect();
        assert_eq!(
            temps,
            [
                "temperature < 100 °C",
                "temperature 100–200 °C",
                "temperature 200–300 °C",
                "temperature 300–400 °C",
                "temperature ≥ 400 °C"
            ]
        );
    }
}
