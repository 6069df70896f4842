//! The μ map and its coverage: one cell per table entry, coloured on the viridis scale with a
//! colour bar beside each map. An entry the data did not reach is drawn white with grey
//! hatching and labelled "not reached (prior kept)", so it cannot be mistaken for a low μ or a
//! low coverage (the low end of the scale is dark violet, never white).

use plotters::coord::Shift;
use plotters::prelude::*;
use plotters::style::colors::colormaps::ViridisRGB;

use super::{err, font, render_file};
use crate::error::SimError;
use crate::fit::CellReport;

/// Figure size, px.
pub const SIZE: (u32, u32) = (1500, 720);

/// Width of a colour bar's area, px.
const BAR_W: u32 = 110;

/// The scale colour of `x` in 0 … 1 (clamped).
pub fn scale_colour(x: f64) -> RGBColor {
    ViridisRGB::get_color(x.clamp(0.0, 1.0))
}

/// The colour of an unreached cell.
pub const NOT_REACHED: RGBColor = WHITE;

/// The hatching of an unreached cell.
const HATCH: RGBColor = RGBColor(150, 150, 150);

/// What a map shows.
#[derive(Clone, Copy)]
enum Map {
    Mu,
    Coverage,
}

/// Value range of a map: μ over the reached cells (prior of the unreached too, so their text
/// reads against the same bar); coverage on a log scale from 1.
fn value_range(cells: &[CellReport], m: Map) -> (f64, f64) {
    let vals: Vec<f64> = match m {
        Map::Mu => cells
            .iter()
            .filter(|c| c.reached)
            .map(|c| c.fitted)
            .collect(),
        Map::Coverage => cells
            .iter()
            .map(|c| libm::log10(c.coverage.max(1.0)))
            .collect(),
    };
    let lo = vals.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = vals.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    match m {
        _ if !(lo.is_finite() && hi.is_finite()) => (0.0, 1.0),
        Map::Coverage => (0.0, hi.max(1.0)),
        Map::Mu if hi > lo => (lo, hi),
        Map::Mu => (lo - 0.01, hi + 0.01),
    }
}

fn norm(v: f64, (lo, hi): (f64, f64)) -> f64 {
    if hi > lo { (v - lo) / (hi - lo) } else { 0.5 }
}

fn label_at(axis: &[f64], pos: f64) -> String {
    // Cell centres sit at k + 0.5.
    let k = pos - 0.5;
    let i = k.round();
    if (k - i).abs() < 0.01 && i >= 0.0 {
        // A small non-negative index.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let idx = i as usize;
        axis.get(idx).map_or(String::new(), |v| format!("{v}"))
    } else {
        String::new()
    }
}

fn map_panel<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    cells: &[CellReport],
    (nt, nv): (usize, usize),
    m: Map,
) -> Result<(), SimError>
where
    DB::ErrorType: 'static,
{
    let (map_area, bar_area) = area.split_horizontally(area.dim_in_pixel().0.saturating_sub(BAR_W));
    let range = value_range(cells, m);
    let caption = match m {
        Map::Mu => "μ (prior → fitted)",
        Map::Coverage => "coverage [sample-equivalents]",
    };
    let mut ch = ChartBuilder::on(&map_area)
        .margin(12)
        .x_label_area_size(44)
        .y_label_area_size(80)
        .caption(caption, ("sans-serif", 16))
        .build_cartesian_2d(0.0..nv.max(1) as f64, 0.0..nt.max(1) as f64)
        .map_err(err)?;
    let vs: Vec<f64> = cells.iter().take(nv).map(|c| c.slip_speed_rad_s).collect();
    let ts: Vec<f64> = cells
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
    for c in cells {
        let (x, y) = (c.j as f64, c.i as f64);
        let fill = if !c.reached && matches!(m, Map::Mu) {
            NOT_REACHED
        } else {
            match m {
                Map::Mu => scale_colour(norm(c.fitted, range)),
                Map::Coverage => scale_colour(norm(libm::log10(c.coverage.max(1.0)), range)),
            }
        };
        ch.draw_series(std::iter::once(Rectangle::new(
            [(x, y), (x + 1.0, y + 1.0)],
            fill.filled(),
        )))
        .map_err(err)?;
        if !c.reached {
            // Diagonal hatching: lines x − y = const across the cell.
            let hatch = (1..8).map(|k| {
                let d = f64::from(k) / 8.0;
                PathElement::new(vec![(x + d, y), (x, y + d)], HATCH.stroke_width(1))
            });
            let hatch2 = (1..8).map(|k| {
                let d = f64::from(k) / 8.0;
                PathElement::new(
                    vec![(x + d, y + 1.0), (x + 1.0, y + d)],
                    HATCH.stroke_width(1),
                )
            });
            ch.draw_series(hatch.chain(hatch2)).map_err(err)?;
        }
        ch.draw_series(std::iter::once(Rectangle::new(
            [(x, y), (x + 1.0, y + 1.0)],
            WHITE.stroke_width(2),
        )))
        .map_err(err)?;
        let first = match (m, c.reached) {
            (Map::Mu, true) => format!("{:.3}→{:.3}", c.prior, c.fitted),
            (Map::Mu, false) => "not reached".to_string(),
            (Map::Coverage, _) => format!("{:.0}", c.coverage),
        };
        let second = match (m, c.reached) {
            (_, true) => String::new(),
            (Map::Mu, false) => format!("prior {:.3}", c.prior),
            (Map::Coverage, false) => "not reached".to_string(),
        };
        let light_text = match m {
            Map::Mu => c.reached && norm(c.fitted, range) < 0.45,
            Map::Coverage => norm(libm::log10(c.coverage.max(1.0)), range) < 0.45,
        };
        let colour = if light_text { WHITE } else { BLACK };
        for (k, text) in [first, second].into_iter().enumerate() {
            if text.is_empty() {
                continue;
            }
            ch.draw_series(std::iter::once(Text::new(
                text,
                (x + 0.06, y + 0.62 - 0.22 * k as f64),
                ("sans-serif", 13).into_font().color(&colour),
            )))
            .map_err(err)?;
        }
    }
    colour_bar(&bar_area, range, m)
}

fn colour_bar<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    (lo, hi): (f64, f64),
    m: Map,
) -> Result<(), SimError>
where
    DB::ErrorType: 'static,
{
    let mut ch = ChartBuilder::on(area)
        .margin_top(40)
        .margin_bottom(56)
        .margin_right(8)
        .y_label_area_size(60)
        .build_cartesian_2d(0.0..1.0, lo..hi)
        .map_err(err)?;
    let fmt = move |v: &f64| match m {
        Map::Mu => format!("{v:.3}"),
        Map::Coverage => format!("{:.0}", libm::pow(10.0, *v)),
    };
    ch.configure_mesh()
        .disable_mesh()
        .disable_x_axis()
        .y_labels(6)
        .y_label_formatter(&fmt)
        .label_style(("sans-serif", 13))
        .draw()
        .map_err(err)?;
    let steps = 100u32;
    ch.draw_series((0..steps).map(|k| {
        let a = lo + (hi - lo) * f64::from(k) / f64::from(steps);
        let b = lo + (hi - lo) * f64::from(k + 1) / f64::from(steps);
        Rectangle::new(
            [(0.0, a), (1.0, b)],
            scale_colour(f64::from(k) / f64::from(steps - 1)).filled(),
        )
    }))
    .map_err(err)?;
    ch.draw_series(std::iter::once(Rectangle::new(
        [(0.0, lo), (1.0, hi)],
        BLACK.stroke_width(1),
    )))
    .map_err(err)?;
    Ok(())
}

/// Draw the μ map and the coverage map side by side.
///
/// # Errors
/// Drawing errors.
pub fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    cells: &[CellReport],
    nt: usize,
    nv: usize,
) -> Result<(), SimError>
where
    DB::ErrorType: 'static,
{
    font::register();
    root.fill(&WHITE).map_err(err)?;
    let titled = root
        .titled(
            "fitted μ table and its coverage (hatched white = not reached, prior kept)",
            ("sans-serif", 20),
        )
        .map_err(err)?;
    let halves = titled.split_evenly((1, 2));
    for (panel, m) in halves.iter().zip([Map::Mu, Map::Coverage]) {
        map_panel(panel, cells, (nt, nv), m)?;
    }
    Ok(())
}

/// Plot the μ map and its coverage to `path` (`.svg` or `.png`), written atomically.
///
/// # Errors
/// As [`super::time_series_file`].
pub fn surface_file(
    path: &str,
    cells: &[CellReport],
    nt: usize,
    nv: usize,
) -> Result<(), SimError> {
    render_file(
        path,
        SIZE,
        |a| draw(a, cells, nt, nv),
        |a| draw(a, cells, nt, nv),
    )
}

/// The μ map and its coverage as SVG text (for inline use in a report).
///
/// # Errors
/// Drawing errors.
pub fn surface_svg(cells: &[CellReport], nt: usize, nv: usize) -> Result<String, SimError> {
    let mut s = String::new();
    {
        let root = SVGBackend::with_string(&mut s, SIZE).into_drawing_area();
        draw(&root, cells, nt, nv)?;
        root.present().map_err(err)?;
    }
    Ok(s)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]
    use super::*;

    fn cell(i: usize, j: usize, mu: f64, reached: bool) -> CellReport {
        CellReport {
            i,
            j,
            temperature_c: 20.0 + 100.0 * i as f64,
            slip_speed_rad_s: j as f64,
            coverage: if reached { 5000.0 } else { 3.0 },
            reached,
            prior: 0.4,
            fitted: mu,
            std_error: None,
        }
    }

    /// The lowest μ is drawn dark, an unreached entry white and hatched: never the same.
    #[test]
    fn low_mu_and_not_reached_look_different() {
        let low = scale_colour(0.0);
        assert_ne!(low, NOT_REACHED);
        // The low end of the scale is dark (luma well below white's 255).
        let luma = 0.299 * f64::from(low.0) + 0.587 * f64::from(low.1) + 0.114 * f64::from(low.2);
        assert!(luma < 80.0, "{luma}");
        let cells = vec![
            cell(0, 0, 0.30, true),
            cell(0, 1, 0.45, true),
            cell(1, 0, 0.40, false),
            cell(1, 1, 0.42, true),
        ];
        let svg = surface_svg(&cells, 2, 2).unwrap();
        assert!(svg.contains("not reached") && svg.contains("prior 0.400"));
        // The colour bar: 2 × 100 steps, plus the cells.
        assert!(svg.matches("<rect").count() > 200);
    }
}
