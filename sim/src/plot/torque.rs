//! Torque panel: estimate, reference, and the ±holding capacity while holding (no torque is
//! estimated while holding; the load sets it, within ±capacity).

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::{Envelope, Span};
use super::panel::{TimePanel, columns};
use super::{padded, span_of};
use crate::error::SimError;

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
    let mut all = span_of(
        cols.iter()
            .flat_map(|c| [&c.torque_nm, &c.reference_nm, &c.holding_capacity_nm]),
    );
    let cap = span_of(cols.iter().map(|c| &c.holding_capacity_nm));
    if !cap.is_empty() {
        all.add(-cap.hi);
    }
    let mut p = TimePanel::new(
        area,
        &cols,
        range,
        "friction torque: estimate, reference, ±holding capacity while holding",
        padded(all.lo, all.hi),
        "N·m",
    )?;
    let grey = RGBColor(150, 150, 150);
    p.envelope(
        |b| b.holding_capacity_nm,
        grey.stroke_width(1),
        Some("±holding capacity"),
    )?;
    p.envelope(
        |b| {
            b.holding_capacity_nm.get().map_or(Span::EMPTY, |s| Span {
                lo: -s.hi,
                hi: -s.lo,
            })
        },
        grey.stroke_width(1),
        None,
    )?;
    p.envelope(
        |b| b.reference_nm,
        RGBColor(255, 127, 14).stroke_width(2),
        Some("reference"),
    )?;
    p.envelope(
        |b| b.torque_nm,
        RGBColor(31, 119, 180).stroke_width(1),
        Some("estimate"),
    )?;
    p.finish_with_legend()
}
