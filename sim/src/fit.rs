//! `fit`: the μ table from a trace with a reference torque, by least squares on the table's
//! own bilinear interpolation, with a coverage map and no silent extrapolation.
//!
//! The trace is replayed through the estimator (the same `clampwise_convert` estimator as `replay`), so clamp force,
//! effective radius and lining temperature are the estimator's own. Each slipping sample with
//! healthy sensors, enough force and a slip speed above the core's transition speed (below it
//! μ blends towards the static value) gives one equation
//! `T_ref − drag = −sign(v)·N·F·r_e · Σₖ wₖ(T, |v|)·μₖ`, the wₖ being the bilinear weights of
//! the four table entries around (T, |v|). The normal equations are accumulated streaming (a
//! K × K matrix, K ≤ 64: memory does not grow with the trace). An entry whose summed weight
//! (its *coverage*, in sample-equivalents) is below the threshold is **not reached**: it keeps
//! its prior value from the config and is listed; samples outside the table's breakpoints are
//! not used (counted). Reached entries are solved by Cholesky with a tiny ridge (10⁻¹² of the
//! largest diagonal) for conditioning; standard errors come from σ²·(MᵀM)⁻¹.
//!
//! A drum or band contact's torque is not linear in μ (T = k·F·g(μ)): there each sample's μ is
//! first found from its reference torque by inverting g, which rises monotonically with μ
//! (bisection over the gain table's range; a sample beyond it is counted outside), and the
//! equation is `μ_sample = Σₖ wₖ·μₖ`, the least squares then weighing errors in μ rather than
//! in torque.

// Host-only linear algebra on K ≤ 64 entries: every index is bounded by the loops over K.
#![allow(clippy::indexing_slicing)]

use std::fmt::Write as _;

use indicatif::ProgressBar;
use serde::Serialize;

use crate::build_core::{CoreDevice, GainModel};
use crate::config::LoadedConfig;
use crate::error::{DataError, SimError};
use crate::locate::{KeyPath, value_span};
use crate::replay::run_stream;
use crate::trace::{RowPolicy, SkipReport, TraceOptions, TraceReader};
use clampwise_convert::{self as convert, ContactState, Flags};

/// Options of a fit.
#[derive(Debug, Clone)]
pub struct FitOptions {
    /// Coverage (sample-equivalents) an entry needs to be fitted.
    pub min_coverage: f64,
    /// Smallest clamp force of a usable sample, N (default: 10 % of the force limit).
    pub min_force_n: Option<f64>,
    /// Skip and count bad rows.
    pub skip_bad_rows: bool,
    /// Dialect, time base, column overrides and resampling of the trace.
    pub trace: TraceOptions,
}

impl Default for FitOptions {
    fn default() -> Self {
        Self {
            min_coverage: 200.0,
            min_force_n: None,
            skip_bad_rows: false,
            trace: TraceOptions::default(),
        }
    }
}

/// One table entry of the fit.
#[derive(Debug, Clone, Serialize)]
pub struct CellReport {
    /// Row (temperature index).
    pub i: usize,
    /// Column (slip-speed index).
    pub j: usize,
    /// Temperature breakpoint, °C.
    pub temperature_c: f64,
    /// Slip-speed breakpoint, rad/s.
    pub slip_speed_rad_s: f64,
    /// Summed bilinear weight of the samples (sample-equivalents).
    pub coverage: f64,
    /// Whether the entry was fitted.
    pub reached: bool,
    /// μ in the config.
    pub prior: f64,
    /// μ after the fit (= prior when not reached).
    pub fitted: f64,
    /// Standard error of the fitted μ (reached entries).
    pub std_error: Option<f64>,
}

/// What a fit found.
#[derive(Debug, Clone, Serialize)]
pub struct FitReport {
    /// The trace.
    pub trace: String,
    /// Samples read.
    pub samples: u64,
    /// Samples used in the fit.
    pub used: u64,
    /// Slipping samples outside the table's breakpoints (not used).
    pub outside_table: u64,
    /// Samples excluded (holding, released, faults, low force, no reference).
    pub excluded: u64,
    /// Coverage threshold.
    pub min_coverage: f64,
    /// RMS residual with the prior table, N·m (in μ for a drum or band contact: see
    /// [`FitReport::residual_in_mu`]).
    pub rms_before_nm: f64,
    /// RMS residual with the fitted table, N·m (or μ).
    pub rms_after_nm: f64,
    /// Whether the residuals are in μ (a drum or band contact, fitted on μ) rather than N·m.
    pub residual_in_mu: bool,
    /// Every entry, row-major.
    pub cells: Vec<CellReport>,
    /// Labels of the entries not reached.
    pub unreached: Vec<String>,
    /// Skipped rows.
    pub skipped: SkipReport,
}

impl FitReport {
    /// The fitted values as rows per temperature.
    pub fn fitted_rows(&self, nt: usize, nv: usize) -> Vec<Vec<f64>> {
        (0..nt)
            .map(|i| (0..nv).map(|j| self.cells[i * nv + j].fitted).collect())
            .collect()
    }
}

/// The μ in 0 … `mu_end` at which a drum or band contact's g(μ) equals `per_force` (m), by
/// bisection (g rises with μ); `None` outside g's range there.
fn inverse_gain(model: &GainModel, per_force: f64, mu_end: f64) -> Option<f64> {
    let g = |mu: f64| model.torque_per_force(mu).ok();
    if per_force.is_nan() || per_force < 0.0 || per_force > g(mu_end)? {
        return None;
    }
    let (mut lo, mut hi) = (0.0, mu_end);
    for _ in 0..60 {
        let mid = 0.5 * (lo + hi);
        if g(mid)? < per_force {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

fn bracket(xs: &[f64], x: f64) -> Option<(usize, usize, f64)> {
    let n = xs.len();
    if n == 0 || x < xs[0] || x > xs[n - 1] {
        return None;
    }
    if n == 1 {
        return Some((0, 0, 0.0));
    }
    let i = xs.windows(2).position(|w| x <= w[1]).unwrap_or(n - 2);
    Some((i, i + 1, (x - xs[i]) / (xs[i + 1] - xs[i])))
}

/// Cholesky solve of the SPD system a·x = b in place; `a` is n × n row-major. Also returns the
/// diagonal of a⁻¹. `None` when not positive definite.
fn cholesky_solve(a: &[f64], b: &[f64], n: usize) -> Option<(Vec<f64>, Vec<f64>)> {
    let mut l = vec![0.0; n * n];
    for i in 0..n {
        for j in 0..=i {
            let mut s = a[i * n + j];
            for k in 0..j {
                s -= l[i * n + k] * l[j * n + k];
            }
            if i == j {
                if s <= 0.0 {
                    return None;
                }
                l[i * n + i] = libm::sqrt(s);
            } else {
                l[i * n + j] = s / l[j * n + j];
            }
        }
    }
    let solve = |rhs: &[f64]| {
        let mut y = rhs.to_vec();
        for i in 0..n {
            for k in 0..i {
                y[i] -= l[i * n + k] * y[k];
            }
            y[i] /= l[i * n + i];
        }
        for i in (0..n).rev() {
            for k in i + 1..n {
                y[i] -= l[k * n + i] * y[k];
            }
            y[i] /= l[i * n + i];
        }
        y
    };
    let x = solve(b);
    let mut diag = vec![0.0; n];
    for (k, d) in diag.iter_mut().enumerate() {
        let mut e = vec![0.0; n];
        e[k] = 1.0;
        *d = solve(&e)[k];
    }
    Some((x, diag))
}

/// Flags that make a sample's clamp force, μ or temperature doubtful: such rows carry no
/// equation for the table.
const SENSOR_DOUBT: Flags = Flags::SENSOR_DEGRADED
    .union(Flags::FORCE_FALLBACK)
    .union(Flags::FORCE_LOST)
    .union(Flags::FORCE_SATURATED)
    .union(Flags::ARITHMETIC_SATURATED)
    .union(Flags::OUT_OF_RANGE)
    .union(Flags::TEMPERATURE_REJECTED);

/// The error of a trace without one usable sample, with the reasons counted.
fn no_usable_sample(
    trace: &str,
    samples: u64,
    excluded: u64,
    min_force: f64,
    outside: u64,
) -> SimError {
    DataError {
        file: trace.to_string(),
        line: None,
        column: None,
        header: None,
        message: format!(
            "no usable sample: of {samples} rows, {excluded} were not slipping above the transition speed with a clamp force of at least {min_force} N, a reference torque and no sensor flag, and {outside} were outside the μ table; nothing fitted"
        ),
    }
    .into()
}

/// Fit the μ table of `cfg` from `trace`.
///
/// # Errors
/// I/O and located data errors; a trace without a reference-torque column; a fitted μ outside
/// 0 … 1.2 (the trace and config disagree).
pub fn fit_trace(
    cfg: &LoadedConfig,
    core: &CoreDevice,
    trace: &str,
    opts: &FitOptions,
    progress: Option<&ProgressBar>,
) -> Result<FitReport, SimError> {
    let c = &cfg.config;
    let policy = if opts.skip_bad_rows {
        RowPolicy::Skip
    } else {
        RowPolicy::Stop
    };
    let mut reader = TraceReader::open_with(trace, c, policy, true, &opts.trace)?;
    let ts = &c.friction.mu.temperature_c;
    let vs = &c.friction.mu.slip_speed_rad_s;
    let (nt, nv) = (ts.len(), vs.len());
    let k = nt * nv;
    let mut m = vec![0.0; k * k];
    let mut rhs = vec![0.0; k];
    let mut cover = vec![0.0; k];
    let (mut yy, mut rss_before) = (0.0, 0.0);
    let (mut used, mut outside, mut excluded, mut samples) = (0u64, 0u64, 0u64, 0u64);
    let faces = f64::from(c.contact.faces);
    let min_force = opts.min_force_n.unwrap_or(0.1 * c.limits.max_clamp_force_n);
    let (drag0, drag1) = (
        c.friction.drag_torque_nm,
        c.friction.drag_viscous_nm_per_rad_s,
    );
    // Below the transition speed the core blends μ towards the static value: not the table's
    // kinetic μ, so those samples carry no equation for it.
    let transition = c.friction.transition_speed_rad_s;
    let gain = core.tables.gain.as_ref();
    let mut est = convert::new_estimator(c, core)
        .map_err(|e| SimError::Internal(format!("starting state: {e}")))?;
    run_stream(&mut reader, est.as_mut(), progress, |_, row| {
        samples += 1;
        let (Some(reference), Some(_)) = (row.torque_ref_nm, row.torque_nm) else {
            excluded += 1;
            return Ok(());
        };
        if row.state != ContactState::Slipping
            || row.flags.intersects(SENSOR_DOUBT)
            || row.clamp_force_n < min_force
            || row.slip_speed_rad_s.abs() < transition
        {
            excluded += 1;
            return Ok(());
        }
        let v = row.slip_speed_rad_s;
        let (Some((i0, i1, fx)), Some((j0, j1, fy))) =
            (bracket(ts, row.lining_temp_c), bracket(vs, v.abs()))
        else {
            outside += 1;
            return Ok(());
        };
        let sign = -v.signum();
        let friction = reference - sign * (drag0 + drag1 * v.abs());
        let (a, y, r) = match gain {
            // The adaptation's correction (1 without it) scales the table's μ.
            None => (
                sign * faces * row.clamp_force_n * row.radius_m * row.correction,
                friction,
                // row.mu already carries the correction.
                friction - sign * faces * row.clamp_force_n * row.radius_m * row.mu,
            ),
            Some((model, info)) => {
                let per_force = friction / (sign * faces * row.clamp_force_n * row.correction);
                let Some(mu) = inverse_gain(model, per_force, info.mu_end) else {
                    outside += 1;
                    return Ok(());
                };
                (1.0, mu, mu - row.mu / row.correction)
            }
        };
        let entries = [
            (i0 * nv + j0, (1.0 - fx) * (1.0 - fy)),
            (i0 * nv + j1, (1.0 - fx) * fy),
            (i1 * nv + j0, fx * (1.0 - fy)),
            (i1 * nv + j1, fx * fy),
        ];
        // With a single breakpoint on an axis the pairs coincide: weights then add up.
        for &(p, wp) in &entries {
            cover[p] += wp;
            rhs[p] += a * wp * y;
            for &(q, wq) in &entries {
                m[p * k + q] += a * a * wp * wq;
            }
        }
        yy += y * y;
        rss_before += r * r;
        used += 1;
        Ok(())
    })?;
    if used == 0 {
        return Err(no_usable_sample(
            trace, samples, excluded, min_force, outside,
        ));
    }

    let prior: Vec<f64> = c.friction.mu.values.iter().flatten().copied().collect();
    let reached: Vec<usize> = (0..k).filter(|&p| cover[p] >= opts.min_coverage).collect();
    let (fitted, std_error) = solve_reached(&m, &rhs, yy, &prior, &reached, used)?;
    let rss_after = rss_of(&m, &rhs, yy, &fitted, k);
    let (cells, unreached) = cell_reports(
        trace,
        ts,
        vs,
        &cover,
        opts.min_coverage,
        &prior,
        &fitted,
        &std_error,
    )?;
    #[allow(clippy::cast_precision_loss)]
    let nused = (used as f64).max(1.0);
    Ok(FitReport {
        trace: trace.to_string(),
        samples,
        used,
        outside_table: outside,
        excluded,
        min_coverage: opts.min_coverage,
        residual_in_mu: gain.is_some(),
        rms_before_nm: libm::sqrt(rss_before / nused),
        rms_after_nm: libm::sqrt(rss_after.max(0.0) / nused),
        cells,
        unreached,
        skipped: reader.skipped().clone(),
    })
}

/// The table entries in `reached` by least squares on the normal equations `m`·x = `rhs`
/// (entries not reached held at the prior, a tiny ridge towards the prior for conditioning),
/// and their standard errors; the other entries keep the prior.
fn solve_reached(
    m: &[f64],
    rhs: &[f64],
    yy: f64,
    prior: &[f64],
    reached: &[usize],
    used: u64,
) -> Result<(Vec<f64>, Vec<Option<f64>>), SimError> {
    let k = prior.len();
    let mut fitted = prior.to_vec();
    let mut std_error = vec![None; k];
    if reached.is_empty() {
        return Ok((fitted, std_error));
    }
    let n = reached.len();
    let max_diag = reached.iter().map(|&p| m[p * k + p]).fold(0.0, f64::max);
    let ridge = 1e-12 * max_diag;
    let mut a = vec![0.0; n * n];
    let mut b = vec![0.0; n];
    for (ri, &p) in reached.iter().enumerate() {
        b[ri] = rhs[p] + ridge * prior[p];
        for q in 0..k {
            if !reached.contains(&q) {
                b[ri] -= m[p * k + q] * prior[q];
            }
        }
        for (rj, &q) in reached.iter().enumerate() {
            a[ri * n + rj] = m[p * k + q] + if ri == rj { ridge } else { 0.0 };
        }
    }
    let (x, diag) = cholesky_solve(&a, &b, n)
        .ok_or_else(|| SimError::Internal("fit: normal equations not positive definite".into()))?;
    for (ri, &p) in reached.iter().enumerate() {
        fitted[p] = x[ri];
    }
    let rss_after = rss_of(m, rhs, yy, &fitted, k);
    // Counts stay far below 2⁵³.
    #[allow(clippy::cast_precision_loss)]
    let dof = (used as f64 - n as f64).max(1.0);
    let sigma2 = rss_after.max(0.0) / dof;
    for (ri, &p) in reached.iter().enumerate() {
        std_error[p] = Some(libm::sqrt((sigma2 * diag[ri]).max(0.0)));
    }
    Ok((fitted, std_error))
}

/// One report per table entry, and the entries not reached; a reached entry fitted outside
/// 0 … 1.2 is an error (the trace and the config disagree).
#[allow(clippy::too_many_arguments)]
fn cell_reports(
    trace: &str,
    ts: &[f64],
    vs: &[f64],
    cover: &[f64],
    min_coverage: f64,
    prior: &[f64],
    fitted: &[f64],
    std_error: &[Option<f64>],
) -> Result<(Vec<CellReport>, Vec<String>), SimError> {
    let nv = vs.len();
    let mut cells = Vec::with_capacity(cover.len());
    let mut unreached = Vec::new();
    for (i, &t) in ts.iter().enumerate() {
        for (j, &v) in vs.iter().enumerate() {
            let p = i * nv + j;
            let is_reached = cover[p] >= min_coverage;
            if !is_reached {
                unreached.push(format!("({} °C, {} rad/s): coverage {:.1}", t, v, cover[p]));
            } else if !(fitted[p] > 0.0 && fitted[p] <= 1.2) {
                return Err(DataError {
                    file: trace.to_string(),
                    line: None,
                    column: None,
                    header: None,
                    message: format!(
                        "fitted μ at ({} °C, {} rad/s) is {:.4}, outside 0 … 1.2: the trace and the config disagree (force calibration, units, sign of the reference torque?)",
                        t, v, fitted[p]
                    ),
                }
                .into());
            }
            cells.push(CellReport {
                i,
                j,
                temperature_c: t,
                slip_speed_rad_s: v,
                coverage: cover[p],
                reached: is_reached,
                prior: prior[p],
                fitted: fitted[p],
                std_error: std_error[p],
            });
        }
    }
    Ok((cells, unreached))
}

/// Σ(y − aᵀμ)² = Σy² − 2μᵀb + μᵀMμ.
fn rss_of(m: &[f64], b: &[f64], yy: f64, mu: &[f64], k: usize) -> f64 {
    let mut quad = 0.0;
    for p in 0..k {
        for q in 0..k {
            quad += mu[p] * m[p * k + q] * mu[q];
        }
    }
    let lin: f64 = mu.iter().zip(b).map(|(x, y)| x * y).sum();
    yy - 2.0 * lin + quad
}

/// The config text with `friction.mu.values` replaced by the fitted table (comments and the
/// rest of the file kept), checked to load.
///
/// # Errors
/// [`SimError::Internal`] when the values cannot be found or the patched text does not load.
pub fn patched_config(cfg: &LoadedConfig, r: &FitReport) -> Result<String, SimError> {
    let span = value_span(&cfg.source, &KeyPath::parse("friction.mu.values")).ok_or_else(|| {
        SimError::Internal("friction.mu.values not found in the config text".into())
    })?;
    let mu = &cfg.config.friction.mu;
    let rows = r.fitted_rows(mu.temperature_c.len(), mu.slip_speed_rad_s.len());
    let mut s = String::from("[\n");
    let _ = writeln!(
        s,
        "  # fitted by `clampwise fit` from {}; entries not reached keep the prior value",
        r.trace
    );
    for (i, row) in rows.iter().enumerate() {
        let cells: Vec<String> = row.iter().map(|v| format!("{v:.5}")).collect();
        let missing: Vec<String> = r
            .cells
            .iter()
            .filter(|c| c.i == i && !c.reached)
            .map(|c| format!("{}", c.slip_speed_rad_s))
            .collect();
        let note = if missing.is_empty() {
            String::new()
        } else {
            format!("; prior kept at {} rad/s", missing.join(", "))
        };
        let _ = writeln!(
            s,
            "  [{}],   # {} °C{note}",
            cells.join(", "),
            mu.temperature_c[i]
        );
    }
    s.push(']');
    let mut text = cfg.source.clone();
    text.replace_range(span, &s);
    LoadedConfig::from_str(&text, &cfg.file)
        .map_err(|e| SimError::Internal(format!("patched config does not load: {e}")))?;
    Ok(text)
}

/// The coverage map as CSV.
pub fn coverage_csv(r: &FitReport) -> String {
    let mut s = String::from(
        "temperature_C,slip_speed_rad_s,coverage,reached,prior_mu,fitted_mu,std_error\n",
    );
    for c in &r.cells {
        let _ = writeln!(
            s,
            "{},{},{:.3},{},{},{:.6},{}",
            c.temperature_c,
            c.slip_speed_rad_s,
            c.coverage,
            u8::from(c.reached),
            c.prior,
            c.fitted,
            c.std_error.map_or(String::new(), |e| format!("{e:.6}"))
        );
    }
    s
}

/// Human text of a fit.
pub fn human(r: &FitReport, nv: usize) -> String {
    let mut o = format!(
        "fit {}: {} samples, {} used, {} excluded (holding, released, faults, low force), {} outside the table\n",
        r.trace, r.samples, r.used, r.excluded, r.outside_table
    );
    let _ = writeln!(
        o,
        "{}",
        if r.residual_in_mu {
            format!(
                "  RMS residual: μ {:.5} with the config's table → μ {:.5} fitted (each sample's μ from g(μ) = T_ref/F)",
                r.rms_before_nm, r.rms_after_nm
            )
        } else {
            format!(
                "  RMS residual: {:.2} N·m with the config's table → {:.2} N·m fitted",
                r.rms_before_nm, r.rms_after_nm
            )
        }
    );
    let _ = writeln!(
        o,
        "  coverage map (sample-equivalents; '.' = below {} and kept at the prior):",
        r.min_coverage
    );
    let mut header = String::from("      T\\v ");
    for c in r.cells.iter().take(nv) {
        let _ = write!(header, "{:>14}", format!("{} rad/s", c.slip_speed_rad_s));
    }
    let _ = writeln!(o, "{header}");
    for row in r.cells.chunks(nv.max(1)) {
        let mut line = format!("  {:>6} °C", row.first().map_or(0.0, |c| c.temperature_c));
        for c in row {
            let cell = if c.reached {
                format!("{:.4}→{:.4}", c.prior, c.fitted)
            } else {
                format!(". {:.4}", c.prior)
            };
            let _ = write!(line, "{cell:>14}");
        }
        let _ = writeln!(o, "{line}");
    }
    if r.unreached.is_empty() {
        let _ = writeln!(o, "  every entry was reached");
    } else {
        let _ = writeln!(
            o,
            "  NOT REACHED ({} entries, prior kept, not extrapolated):",
            r.unreached.len()
        );
        for u in &r.unreached {
            let _ = writeln!(o, "    {u}");
        }
    }
    o
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn cholesky_against_known_solution() {
        // [calc] A = [[4, 2], [2, 3]], b = [2, 1] → x = [0.5, 0]; A⁻¹ diagonal = [3/8, 1/2].
        let (x, d) = cholesky_solve(&[4.0, 2.0, 2.0, 3.0], &[2.0, 1.0], 2).unwrap();
        assert!((x[0] - 0.5).abs() < 1e-12 && x[1].abs() < 1e-12);
        assert!((d[0] - 0.375).abs() < 1e-12 && (d[1] - 0.5).abs() < 1e-12);
        assert!(cholesky_solve(&[1.0, 2.0, 2.0, 1.0], &[0.0, 0.0], 2).is_none());
    }

    #[test]
    fn brackets() {
        assert_eq!(bracket(&[0.0, 1.0, 3.0], 2.0), Some((1, 2, 0.5)));
        assert_eq!(bracket(&[0.0, 1.0, 3.0], 3.0), Some((1, 2, 1.0)));
        assert_eq!(bracket(&[0.0, 1.0], 1.5), None);
    }
}
