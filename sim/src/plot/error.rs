//! Error panel: estimate − reference, on an axis scaled to the error itself (not to the ±
//! band, which can be far wider and would flatten the error), with the ± uncertainty drawn
//! as a shaded band clipped to the axis. The caption says when the band is clipped.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::Envelope;
use super::panel::{TimePanel, columns};
use super::{column_count, column_edges, padded, span_of};
use crate::error::SimError;

/// The y range of the panel: the error's own range, padded; `None` without errors.
pub fn error_axis(env: &Envelope, range: (f64, f64), columns: usize) -> Option<(f64, f64)> {
    let cols = env.columns(range.0, range.1, columns);
    let e = span_of(cols.iter().map(|c| &c.error_nm)).get()?;
    // Keep zero in view so the sign of a bias reads at a glance.
    let (lo, hi) = (e.lo.min(0.0), e.hi.max(0.0));
    Some(padded(lo, hi))
}

/// Draw the panel; returns its time axis' pixel range.
///
/// # Errors
/// Drawing errors.
pub fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
) -> Result<(i32, i32), SimError>
where
    DB::ErrorType: 'static,
{
    let cols = columns(area, env, range);
    let (y0, y1) = error_axis(env, range, column_count(area)).unwrap_or((-1.0, 1.0));
    let band = span_of(cols.iter().map(|c| &c.error_band_nm));
    let clipped = !band.is_empty() && (band.hi > y1 || -band.hi < y0);
    let caption = if band.is_empty() {
        "error = estimate − reference (no rows with both)".to_string()
    } else if clipped {
        format!(
            "error = estimate − reference; shaded: ± uncertainty (up to ±{:.0} N·m, clipped to the axis)",
            band.hi
        )
    } else {
        "error = estimate − reference; shaded: ± uncertainty".to_string()
    };
    let mut p = TimePanel::new(area, &cols, range, &caption, (y0, y1), "N·m")?;
    let shade = RGBColor(200, 200, 200).mix(0.6);
    p.chart()
        .draw_series(cols.iter().enumerate().filter_map(|(i, c)| {
            let u = c.error_band_nm.get()?.hi;
            let (a, b) = column_edges(range.0, range.1, cols.len(), i);
            Some(Rectangle::new(
                [(a, u.min(y1)), (b, (-u).max(y0))],
                shade.filled(),
            ))
        }))
        .map_err(super::err)?
        .label("± uncertainty")
        .legend(move |(x, y)| Rectangle::new([(x, y - 5), (x + 18, y + 5)], shade.filled()));
    p.chart()
        .draw_series(LineSeries::new(
            [(range.0, 0.0), (range.1, 0.0)],
            BLACK.stroke_width(1),
        ))
        .map_err(super::err)?;
    p.envelope(|b| b.error_nm, RED.stroke_width(1), Some("error"))?;
    p.finish_with_legend()
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::float_cmp)]
    use super::*;
    use crate::plot::envelope::TimeWindow;
    use clampwise_convert::{ContactState, EstimateRow, Flags};

    /// An error of ±20 N·m under a ±5000 N·m band gets an axis of about ±20 N·m, not ±5000.
    #[test]
    fn axis_follows_the_error_not_the_band() {
        let mut env = Envelope::new(256, TimeWindow::default());
        for i in 0..1000u32 {
            let e = if i % 2 == 0 { 20.0 } else { -20.0 };
            env.push(
                &EstimateRow {
                    line: 0,
                    t_s: f64::from(i),
                    torque_nm: Some(1000.0 + e),
                    capacity_nm: None,
                    uncertainty_nm: 5000.0,
                    mu: 0.4,
                    radius_m: 0.2,
                    clamp_force_n: 1.0,
                    slip_speed_rad_s: 1.0,
                    lining_temp_c: 20.0,
                    bedding: 0.0,
                    wear_m: 0.0,
                    correction: 1.0,
                    state: ContactState::Slipping,
                    flags: Flags::empty(),
                    torque_ref_nm: Some(1000.0),
                },
                None,
            );
        }
        let (lo, hi) = error_axis(&env, (0.0, 999.0), 500).unwrap();
        // [calc] 5 % padding of a 40 N·m span: ±22 N·m.
        assert!(
            (lo + 22.0).abs() < 1e-9 && (hi - 22.0).abs() < 1e-9,
            "{lo} {hi}"
        );
    }
}
