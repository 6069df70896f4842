//! Plots (SVG or PNG, by the file extension): the time series of a replay (inputs, torque,
//! error, lining state, states and flags on one shared time axis) and the fitted μ map with
//! its coverage.
//!
//! Data flow: estimate rows (and, during a replay, the trace samples) → [`Envelope`]
//! (bounded-memory min/max buckets, optional [`TimeWindow`]) → one column per pixel →
//! panels (one file each below) → SVG text or an RGB buffer → an output file written under a
//! temporary name and renamed ([`crate::output::write_file`]), so a failed plot never leaves
//! a half-drawn file under the final name.
//!
//! Text is drawn with the DejaVu Sans font compiled into the program ([`font`]): no system font
//! library is needed to build or run.
//!
//! | file | panel |
//! |---|---|
//! | [`inputs`] | per-channel clamp force and the force used, slip speed, actuator command |
//! | [`torque`] | estimate, reference, ±holding capacity |
//! | [`error`] | estimate − reference with the ± uncertainty band, scaled to the error |
//! | [`lining`] | lining temperature and μ used |
//! | [`panel`] | the shared shape of a time panel: columns, chart, envelopes, legend |
//! | [`states`] | one lane per state and per raised flag |
//! | [`surface`] | the μ map and its coverage, colour bars, hatched "not reached" cells |

pub mod envelope;
pub mod error;
pub mod font;
pub mod inputs;
pub mod lining;
pub mod panel;
pub mod states;
pub mod surface;
pub mod time_series;
pub mod torque;

use plotters::coord::Shift;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;

pub use envelope::{BUCKETS, Bucket, Envelope, Span, TimeWindow};
pub use surface::{surface_file, surface_svg};
pub use time_series::{time_series_file, time_series_svg};

use crate::error::SimError;
use crate::output::write_file;

/// A chart over time (s) × a value.
pub type TimeChart<'a, DB> = ChartContext<'a, DB, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Width of the value-label area left of every time panel, px: the same on every panel so
/// their time axes line up to the pixel.
pub const Y_LABEL_AREA: u32 = 170;

/// Width of the legend area right of every time panel, px (same reason).
pub const RIGHT_AREA: u32 = 20;

pub(crate) fn err<E: std::fmt::Display>(e: E) -> SimError {
    SimError::Internal(format!("plot: {e}"))
}

/// The padded range of some values; `(0, 1)` when there are none.
pub(crate) fn padded(lo: f64, hi: f64) -> (f64, f64) {
    if !(lo.is_finite() && hi.is_finite()) || lo > hi {
        return (0.0, 1.0);
    }
    let pad = ((hi - lo) * 0.05).max(1e-9 * hi.abs().max(lo.abs()).max(1.0));
    (lo - pad, hi + pad)
}

/// The range of one quantity over the columns.
pub(crate) fn span_of<'a>(spans: impl Iterator<Item = &'a Span>) -> Span {
    let mut s = Span::EMPTY;
    for x in spans {
        s.merge(x);
    }
    s
}

/// A time panel with the shared layout: the same margins and label areas on every panel.
///
/// # Errors
/// Drawing errors.
pub(crate) fn time_chart<'a, DB: DrawingBackend + 'a>(
    area: &'a DrawingArea<DB, Shift>,
    caption: &str,
    t: (f64, f64),
    y: (f64, f64),
    y_desc: &str,
) -> Result<TimeChart<'a, DB>, SimError>
where
    DB::ErrorType: 'static,
{
    let mut ch = bare_time_chart(area, caption, t, y)?;
    ch.configure_mesh()
        .y_desc(y_desc)
        .x_desc("t [s]")
        .light_line_style(RGBColor(235, 235, 235))
        .draw()
        .map_err(err)?;
    Ok(ch)
}

/// A time panel with the shared layout and no mesh (the caller draws its own).
///
/// # Errors
/// Drawing errors.
pub(crate) fn bare_time_chart<'a, DB: DrawingBackend + 'a>(
    area: &'a DrawingArea<DB, Shift>,
    caption: &str,
    (t0, t1): (f64, f64),
    (y0, y1): (f64, f64),
) -> Result<TimeChart<'a, DB>, SimError>
where
    DB::ErrorType: 'static,
{
    ChartBuilder::on(area)
        .margin(6)
        .margin_right(RIGHT_AREA)
        .x_label_area_size(30)
        .y_label_area_size(Y_LABEL_AREA)
        .caption(caption, ("sans-serif", 16))
        .build_cartesian_2d(t0..t1, y0..y1)
        .map_err(err)
}

/// Time at the centre of column `i` of `n` over `t0 … t1`.
pub(crate) fn column_time(t0: f64, t1: f64, n: usize, i: usize) -> f64 {
    t0 + (t1 - t0) * (i as f64 + 0.5) / n.max(1) as f64
}

/// Time edges of column `i` of `n` over `t0 … t1`.
pub(crate) fn column_edges(t0: f64, t1: f64, n: usize, i: usize) -> (f64, f64) {
    let w = (t1 - t0) / n.max(1) as f64;
    (t0 + w * i as f64, t0 + w * (i as f64 + 1.0))
}

/// Draw one quantity as its min/max envelope: at every column a stroke from the column's
/// minimum to its maximum, strokes of neighbouring columns joined; an empty column breaks the
/// line. Returns whether anything was drawn (for the legend).
///
/// # Errors
/// Drawing errors.
pub(crate) fn draw_envelope<'a, DB: DrawingBackend + 'a>(
    ch: &mut TimeChart<'a, DB>,
    cols: &[Bucket],
    (t0, t1): (f64, f64),
    pick: impl Fn(&Bucket) -> Span,
    style: ShapeStyle,
    label: Option<&str>,
) -> Result<bool, SimError>
where
    DB::ErrorType: 'static,
{
    let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut cur: Vec<(f64, f64)> = Vec::new();
    for (i, c) in cols.iter().enumerate() {
        match pick(c).get() {
            Some(s) => {
                let t = column_time(t0, t1, cols.len(), i);
                cur.push((t, s.lo));
                if s.hi > s.lo {
                    cur.push((t, s.hi));
                }
            }
            None => {
                if !cur.is_empty() {
                    runs.push(std::mem::take(&mut cur));
                }
            }
        }
    }
    if !cur.is_empty() {
        runs.push(cur);
    }
    let any = !runs.is_empty();
    for (k, run) in runs.into_iter().enumerate() {
        // A lone point is drawn as a dot so it stays visible.
        let s = if run.len() == 1 {
            ch.draw_series(run.into_iter().map(|p| Circle::new(p, 2, style.filled())))
                .map_err(err)?
        } else {
            ch.draw_series(LineSeries::new(run, style)).map_err(err)?
        };
        if k == 0
            && let Some(l) = label
        {
            s.label(l).legend(move |(x, y)| {
                PathElement::new(vec![(x, y), (x + 18, y)], style.stroke_width(2))
            });
        }
    }
    Ok(any)
}

/// Draw the legend of a panel.
///
/// # Errors
/// Drawing errors.
pub(crate) fn legend<'a, DB: DrawingBackend + 'a>(
    ch: &mut TimeChart<'a, DB>,
) -> Result<(), SimError>
where
    DB::ErrorType: 'static,
{
    ch.configure_series_labels()
        .position(SeriesLabelPosition::UpperRight)
        .background_style(WHITE.mix(0.85))
        .border_style(BLACK)
        .label_font(("sans-serif", 13))
        .draw()
        .map_err(err)
}

/// Output kinds, by extension.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Ext {
    /// `.svg`
    Svg,
    /// `.png`
    Png,
}

/// The kind of a plot file from its name.
///
/// # Errors
/// [`SimError::Usage`] for another extension.
pub fn extension(path: &str) -> Result<Ext, SimError> {
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

/// Draw with `draw` on an SVG or RGB canvas of `size` and write the result to `path`
/// atomically.
///
/// # Errors
/// Usage (extension), drawing and I/O errors.
pub(crate) fn render_file(
    path: &str,
    size: (u32, u32),
    draw_svg: impl FnOnce(&DrawingArea<SVGBackend<'_>, Shift>) -> Result<(), SimError>,
    draw_png: impl FnOnce(&DrawingArea<BitMapBackend<'_>, Shift>) -> Result<(), SimError>,
) -> Result<(), SimError> {
    let ext = extension(path)?;
    font::register();
    match ext {
        Ext::Svg => {
            let mut s = String::new();
            {
                let root = SVGBackend::with_string(&mut s, size).into_drawing_area();
                draw_svg(&root)?;
                root.present().map_err(err)?;
            }
            write_file(path, s.as_bytes())
        }
        Ext::Png => {
            let (w, h) = size;
            let mut rgb = vec![0u8; (w as usize) * (h as usize) * 3];
            {
                let root = BitMapBackend::with_buffer(&mut rgb, size).into_drawing_area();
                draw_png(&root)?;
                root.present().map_err(err)?;
            }
            write_file(path, &encode_png(&rgb, size)?)
        }
    }
}

/// An RGB buffer as PNG bytes.
///
/// # Errors
/// [`SimError::Internal`] when encoding fails.
pub fn encode_png(rgb: &[u8], (w, h): (u32, u32)) -> Result<Vec<u8>, SimError> {
    let mut out = Vec::new();
    {
        let mut enc = png::Encoder::new(&mut out, w, h);
        enc.set_color(png::ColorType::Rgb);
        enc.set_depth(png::BitDepth::Eight);
        let mut wr = enc.write_header().map_err(err)?;
        wr.write_image_data(rgb).map_err(err)?;
        wr.finish().map_err(err)?;
    }
    Ok(out)
}

/// Pixel columns of a time panel's data area in `area` (the same for every panel).
pub(crate) fn column_count<DB: DrawingBackend>(area: &DrawingArea<DB, Shift>) -> usize {
    let w = area.dim_in_pixel().0;
    // The label areas and margins of `time_chart`.
    let used = Y_LABEL_AREA + RIGHT_AREA + 6;
    w.saturating_sub(used).max(1) as usize
}

/// The pixel range a time panel's axis spans (x from, x to).
pub(crate) fn pixel_x_range<DB: DrawingBackend>(ch: &TimeChart<'_, DB>) -> (i32, i32) {
    let r = ch.plotting_area().get_pixel_range().0;
    (r.start, r.end)
}
