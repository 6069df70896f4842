//! Plots (SVG or PNG, by the file extension): estimate against reference, error,
//! temperature, μ, and flags over time; the fitted μ surface with its coverage.

use plotters::coord::Shift;
use plotters::prelude::*;

use crate::error::SimError;
use crate::fit::FitReport;
use crate::replay::PlotPoint;
use crate::seam::{Flags, State};

fn err<E: std::fmt::Display>(e: E) -> SimError {
    SimError::Internal(format!("plot: {e}"))
}

fn range(vals: impl Iterator<Item = f64>) -> (f64, f64) {
    let (mut lo, mut hi) = (f64::MAX, f64::MIN);
    for v in vals {
        if v.is_finite() {
            lo = lo.min(v);
            hi = hi.max(v);
        }
    }
    if lo > hi {
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.05).max(1e-9);
    (lo - pad, hi + pad)
}

/// Contiguous runs of `Some` values, for line series with gaps.
fn runs(points: &[PlotPoint], f: impl Fn(&PlotPoint) -> Option<f64>) -> Vec<Vec<(f64, f64)>> {
    let mut out = Vec::new();
    let mut cur = Vec::new();
    for p in points {
        match f(p) {
            Some(v) => cur.push((p.t_s, v)),
            None => {
                if !cur.is_empty() {
                    out.push(std::mem::take(&mut cur));
                }
            }
        }
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

/// One lane of the state/flags panel: its name and when it is on.
type Lane = (String, Box<dyn Fn(&PlotPoint) -> bool>);

fn time_series<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    points: &[PlotPoint],
    title: &str,
) -> Result<(), SimError>
where
    DB::ErrorType: 'static,
{
    root.fill(&WHITE).map_err(err)?;
    let (t0, t1) = range(points.iter().map(|p| p.t_s));
    let titled = root.titled(title, ("sans-serif", 22)).map_err(err)?;
    let panels = titled.split_evenly((5, 1));
    let [p_torque, p_error, p_temp, p_mu, p_flags] = panels.as_slice() else {
        return Err(SimError::Internal("plot: panel layout".into()));
    };
    let blue = RGBColor(31, 119, 180);
    let orange = RGBColor(255, 127, 14);
    let grey = RGBColor(150, 150, 150);

    // 1. torque: estimate, reference, ±capacity while holding.
    let (y0, y1) = range(points.iter().flat_map(|p| {
        let cap = if p.state == State::Holding {
            p.capacity_nm
        } else {
            None
        };
        [p.torque_nm, p.reference_nm, cap, cap.map(|c| -c)]
            .into_iter()
            .flatten()
    }));
    let mut ch = ChartBuilder::on(p_torque)
        .margin(8)
        .x_label_area_size(28)
        .y_label_area_size(80)
        .caption("friction torque", ("sans-serif", 16))
        .build_cartesian_2d(t0..t1, y0..y1)
        .map_err(err)?;
    ch.configure_mesh().y_desc("N·m").draw().map_err(err)?;
    for (i, run) in runs(points, |p| {
        if p.state == State::Holding {
            p.capacity_nm
        } else {
            None
        }
    })
    .into_iter()
    .enumerate()
    {
        let neg: Vec<(f64, f64)> = run.iter().map(|&(t, c)| (t, -c)).collect();
        let s = ch
            .draw_series(LineSeries::new(run, grey.stroke_width(1)))
            .map_err(err)?;
        if i == 0 {
            s.label("±holding capacity")
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], grey));
        }
        ch.draw_series(LineSeries::new(neg, grey.stroke_width(1)))
            .map_err(err)?;
    }
    for (i, run) in runs(points, |p| p.reference_nm).into_iter().enumerate() {
        let s = ch
            .draw_series(LineSeries::new(run, orange.stroke_width(2)))
            .map_err(err)?;
        if i == 0 {
            s.label("reference")
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], orange));
        }
    }
    for (i, run) in runs(points, |p| p.torque_nm).into_iter().enumerate() {
        let s = ch
            .draw_series(LineSeries::new(run, blue.stroke_width(1)))
            .map_err(err)?;
        if i == 0 {
            s.label("estimate")
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], blue));
        }
    }
    ch.configure_series_labels()
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .draw()
        .map_err(err)?;

    // 2. error and the ± uncertainty.
    let errs = |p: &PlotPoint| match (p.torque_nm, p.reference_nm) {
        (Some(t), Some(r)) => Some(t - r),
        _ => None,
    };
    let (e0, e1) = range(
        points
            .iter()
            .filter_map(|p| errs(p).map(|e| [e, p.uncertainty_nm, -p.uncertainty_nm]))
            .flatten(),
    );
    let mut ch = ChartBuilder::on(p_error)
        .margin(8)
        .x_label_area_size(28)
        .y_label_area_size(80)
        .caption(
            "error = estimate − reference, with ± uncertainty",
            ("sans-serif", 16),
        )
        .build_cartesian_2d(t0..t1, e0..e1)
        .map_err(err)?;
    ch.configure_mesh().y_desc("N·m").draw().map_err(err)?;
    for run in runs(points, |p| errs(p).map(|_| p.uncertainty_nm)) {
        let neg: Vec<(f64, f64)> = run.iter().map(|&(t, u)| (t, -u)).collect();
        ch.draw_series(LineSeries::new(run, grey)).map_err(err)?;
        ch.draw_series(LineSeries::new(neg, grey)).map_err(err)?;
    }
    for run in runs(points, errs) {
        ch.draw_series(LineSeries::new(run, RED)).map_err(err)?;
    }

    // 3. temperature.
    let (a0, a1) = range(points.iter().map(|p| p.temp_c));
    let mut ch = ChartBuilder::on(p_temp)
        .margin(8)
        .x_label_area_size(28)
        .y_label_area_size(80)
        .caption("lining temperature used", ("sans-serif", 16))
        .build_cartesian_2d(t0..t1, a0..a1)
        .map_err(err)?;
    ch.configure_mesh().y_desc("°C").draw().map_err(err)?;
    ch.draw_series(LineSeries::new(
        points.iter().map(|p| (p.t_s, p.temp_c)),
        RED,
    ))
    .map_err(err)?;

    // 4. μ.
    let (m0, m1) = range(points.iter().map(|p| p.mu));
    let mut ch = ChartBuilder::on(p_mu)
        .margin(8)
        .x_label_area_size(28)
        .y_label_area_size(80)
        .caption("μ used", ("sans-serif", 16))
        .build_cartesian_2d(t0..t1, m0..m1)
        .map_err(err)?;
    ch.configure_mesh().y_desc("μ").draw().map_err(err)?;
    ch.draw_series(LineSeries::new(points.iter().map(|p| (p.t_s, p.mu)), blue))
        .map_err(err)?;

    // 5. state and flags, one lane each.
    let lanes: Vec<Lane> = {
        let mut v: Vec<Lane> = Vec::new();
        for s in State::ALL {
            v.push((
                format!("state {}", s.name()),
                Box::new(move |p: &PlotPoint| p.state == s),
            ));
        }
        for (name, bit) in Flags::all().iter_names() {
            if points.iter().any(|p| p.flags.intersects(bit)) {
                v.push((
                    name.to_string(),
                    Box::new(move |p: &PlotPoint| p.flags.intersects(bit)),
                ));
            }
        }
        v
    };
    let n = lanes.len();
    let mut ch = ChartBuilder::on(p_flags)
        .margin(8)
        .x_label_area_size(36)
        .y_label_area_size(150)
        .caption("state and flags", ("sans-serif", 16))
        .build_cartesian_2d(t0..t1, -0.5..(n as f64 - 0.5))
        .map_err(err)?;
    let names: Vec<String> = lanes.iter().map(|l| l.0.clone()).collect();
    ch.configure_mesh()
        .x_desc("t [s]")
        .y_labels(n)
        .y_label_formatter(&|y| {
            let i = y.round();
            if (y - i).abs() < 0.01 && i >= 0.0 {
                // Lane indices are small and non-negative.
                #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
                let k = i as usize;
                names.get(k).cloned().unwrap_or_default()
            } else {
                String::new()
            }
        })
        .draw()
        .map_err(err)?;
    let dt = if points.len() > 1 {
        (t1 - t0) / points.len() as f64
    } else {
        1.0
    };
    for (k, (_, on)) in lanes.iter().enumerate() {
        let y = k as f64;
        let color = Palette99::pick(k).to_rgba();
        ch.draw_series(
            points.iter().filter(|p| on(p)).map(|p| {
                Rectangle::new([(p.t_s, y - 0.35), (p.t_s + dt, y + 0.35)], color.filled())
            }),
        )
        .map_err(err)?;
    }
    root.present().map_err(err)?;
    Ok(())
}

/// Plot a replay's time series to `path` (`.svg` or `.png`).
///
/// # Errors
/// [`SimError::Usage`] for another extension; [`SimError::Internal`] when drawing fails.
pub fn time_series_file(path: &str, points: &[PlotPoint], title: &str) -> Result<(), SimError> {
    ensure_dir(path)?;
    match extension(path)? {
        Ext::Svg => time_series(
            &SVGBackend::new(path, (1400, 1600)).into_drawing_area(),
            points,
            title,
        ),
        Ext::Png => time_series(
            &BitMapBackend::new(path, (1400, 1600)).into_drawing_area(),
            points,
            title,
        ),
    }
}

enum Ext {
    Svg,
    Png,
}

fn extension(path: &str) -> Result<Ext, SimError> {
    let lower = path.to_ascii_lowercase();
    if lower.ends_with(".svg") {
        Ok(Ext::Svg)
    } else if lower.ends_with(".png") {
        Ok(Ext::Png)
    } else {
        Err(SimError::Usage(format!(
            "plot file '{path}' must end in .svg or .png"
        )))
    }
}

fn ensure_dir(path: &str) -> Result<(), SimError> {
    if let Some(dir) = std::path::Path::new(path)
        .parent()
        .filter(|d| !d.as_os_str().is_empty())
    {
        std::fs::create_dir_all(dir).map_err(|e| SimError::io(dir, e))?;
    }
    Ok(())
}

/// A colour for μ on a blue → yellow scale.
fn mu_colour(x: f64) -> RGBColor {
    let x = x.clamp(0.0, 1.0);
    // Scale values are within 0 … 255 by the clamp.
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let c = |a: f64, b: f64| (a + (b - a) * x).round() as u8;
    RGBColor(c(40.0, 250.0), c(60.0, 220.0), c(140.0, 40.0))
}

fn surface<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    r: &FitReport,
    nt: usize,
    nv: usize,
) -> Result<(), SimError>
where
    DB::ErrorType: 'static,
{
    root.fill(&WHITE).map_err(err)?;
    let titled = root
        .titled(
            "fitted μ table and its coverage (grey = not reached, prior kept)",
            ("sans-serif", 20),
        )
        .map_err(err)?;
    let halves = titled.split_evenly((1, 2));
    let (lo, hi) = range(r.cells.iter().map(|c| c.fitted));
    let max_cov = r.cells.iter().map(|c| c.coverage).fold(1.0, f64::max);
    for (h, panel) in halves.iter().enumerate() {
        let caption = if h == 0 {
            "μ (prior → fitted)"
        } else {
            "coverage [sample-equivalents]"
        };
        let mut ch = ChartBuilder::on(panel)
            .margin(12)
            .x_label_area_size(40)
            .y_label_area_size(70)
            .caption(caption, ("sans-serif", 16))
            .build_cartesian_2d(0.0..nv as f64, 0.0..nt as f64)
            .map_err(err)?;
        let vs: Vec<f64> = r
            .cells
            .iter()
            .take(nv)
            .map(|c| c.slip_speed_rad_s)
            .collect();
        let ts: Vec<f64> = r
            .cells
            .iter()
            .step_by(nv.max(1))
            .map(|c| c.temperature_c)
            .collect();
        ch.configure_mesh()
            .disable_mesh()
            .x_desc("|slip speed| [rad/s]")
            .y_desc("lining temperature [°C]")
            .x_labels(nv * 2 + 1)
            .y_labels(nt * 2 + 1)
            .x_label_formatter(&|x| label_at(&vs, *x))
            .y_label_formatter(&|y| label_at(&ts, *y))
            .draw()
            .map_err(err)?;
        for c in &r.cells {
            let (x, y) = (c.j as f64, c.i as f64);
            let fill = if !c.reached {
                RGBColor(200, 200, 200)
            } else if h == 0 {
                mu_colour(if hi > lo {
                    (c.fitted - lo) / (hi - lo)
                } else {
                    0.5
                })
            } else {
                mu_colour((c.coverage.max(1.0).ln() / max_cov.ln().max(1e-9)).clamp(0.0, 1.0))
            };
            ch.draw_series(std::iter::once(Rectangle::new(
                [(x, y), (x + 1.0, y + 1.0)],
                fill.filled(),
            )))
            .map_err(err)?;
            ch.draw_series(std::iter::once(Rectangle::new(
                [(x, y), (x + 1.0, y + 1.0)],
                WHITE.stroke_width(2),
            )))
            .map_err(err)?;
            let text = if h == 0 {
                if c.reached {
                    format!("{:.3}→{:.3}", c.prior, c.fitted)
                } else {
                    format!("{:.3} (prior)", c.prior)
                }
            } else {
                format!("{:.0}", c.coverage)
            };
            ch.draw_series(std::iter::once(Text::new(
                text,
                (x + 0.08, y + 0.55),
                ("sans-serif", 13).into_font().color(&BLACK),
            )))
            .map_err(err)?;
        }
    }
    root.present().map_err(err)?;
    Ok(())
}

fn label_at(axis: &[f64], pos: f64) -> String {
    // Cell centres sit at k + 0.5.
    let k = pos - 0.5;
    let i = k.round();
    if (k - i).abs() < 0.01 && i >= 0.0 {
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let idx = i as usize;
        axis.get(idx).map_or(String::new(), |v| format!("{v}"))
    } else {
        String::new()
    }
}

/// Plot the fitted μ surface and its coverage to `path` (`.svg` or `.png`).
///
/// # Errors
/// As [`time_series_file`].
pub fn surface_file(path: &str, r: &FitReport, nt: usize, nv: usize) -> Result<(), SimError> {
    ensure_dir(path)?;
    match extension(path)? {
        Ext::Svg => surface(
            &SVGBackend::new(path, (1400, 700)).into_drawing_area(),
            r,
            nt,
            nv,
        ),
        Ext::Png => surface(
            &BitMapBackend::new(path, (1400, 700)).into_drawing_area(),
            r,
            nt,
            nv,
        ),
    }
}
