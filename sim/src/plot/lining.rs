//! Lining panels: the lining temperature and the μ the estimator used.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::Envelope;
use super::pixel_x_range;
use super::{column_count, draw_envelope, padded, span_of, time_chart};
use crate::error::SimError;

/// Lining temperature used (modelled, or measured while plausible).
///
/// # Errors
/// Drawing errors.
pub fn temperature<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
) -> Result<(i32, i32), SimError>
where
    DB::ErrorType: 'static,
{
    let cols = env.columns(range.0, range.1, column_count(area));
    let s = span_of(cols.iter().map(|c| &c.temp_c));
    let mut ch = time_chart(
        area,
        "lining temperature used",
        range,
        padded(s.lo, s.hi),
        "°C",
    )?;
    draw_envelope(
        &mut ch,
        &cols,
        range,
        |b| b.temp_c,
        RED.stroke_width(1),
        None,
    )?;
    Ok(pixel_x_range(&ch))
}

/// μ used (with the adaptation's correction).
///
/// # Errors
/// Drawing errors.
pub fn mu<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
) -> Result<(i32, i32), SimError>
where
    DB::ErrorType: 'static,
{
    let cols = env.columns(range.0, range.1, column_count(area));
    let s = span_of(cols.iter().map(|c| &c.mu));
    let mut ch = time_chart(area, "μ used", range, padded(s.lo, s.hi), "μ")?;
    draw_envelope(
        &mut ch,
        &cols,
        range,
        |b| b.mu,
        RGBColor(31, 119, 180).stroke_width(1),
        None,
    )?;
    Ok(pixel_x_range(&ch))
}
