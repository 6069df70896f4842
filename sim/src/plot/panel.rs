//! The shared shape of a time panel: the columns of its data area (one per pixel), a chart
//! with the shared layout, min/max envelopes drawn over it, and its legend.
//!
//! Data flow: [`Envelope`] → `columns` (one [`Bucket`] per pixel column) → `TimePanel`
//! (chart, envelopes, legend) → the pixel range of its time axis.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::{Bucket, Envelope, Span};
use super::{TimeChart, column_count, draw_envelope, legend, padded, pixel_x_range, time_chart};
use crate::error::SimError;

/// The columns of a time panel drawn in `area` over `range`: one per pixel of its data area.
pub(crate) fn columns<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
) -> Vec<Bucket> {
    env.columns(range.0, range.1, column_count(area))
}

/// A time panel being drawn: its chart, its columns and its time range.
pub(crate) struct TimePanel<'a, 'c, DB: DrawingBackend> {
    chart: TimeChart<'a, DB>,
    cols: &'c [Bucket],
    range: (f64, f64),
}

impl<'a, 'c, DB: DrawingBackend + 'a> TimePanel<'a, 'c, DB>
where
    DB::ErrorType: 'static,
{
    /// A panel with the shared layout over `range` × `y`, mesh drawn.
    ///
    /// # Errors
    /// Drawing errors.
    pub(crate) fn new(
        area: &'a DrawingArea<DB, Shift>,
        cols: &'c [Bucket],
        range: (f64, f64),
        caption: &str,
        y: (f64, f64),
        y_desc: &str,
    ) -> Result<Self, SimError> {
        let chart = time_chart(area, caption, range, y, y_desc)?;
        Ok(Self { chart, cols, range })
    }

    /// The chart, for series other than envelopes.
    pub(crate) fn chart(&mut self) -> &mut TimeChart<'a, DB> {
        &mut self.chart
    }

    /// Draw one quantity as its min/max envelope (see [`draw_envelope`]).
    ///
    /// # Errors
    /// Drawing errors.
    pub(crate) fn envelope(
        &mut self,
        pick: impl Fn(&Bucket) -> Span,
        style: ShapeStyle,
        label: Option<&str>,
    ) -> Result<bool, SimError> {
        draw_envelope(&mut self.chart, self.cols, self.range, pick, style, label)
    }

    /// Draw the legend; returns the pixel range of the time axis.
    ///
    /// # Errors
    /// Drawing errors.
    pub(crate) fn finish_with_legend(mut self) -> Result<(i32, i32), SimError> {
        legend(&mut self.chart)?;
        Ok(self.finish())
    }

    /// The pixel range of the time axis.
    pub(crate) fn finish(self) -> (i32, i32) {
        pixel_x_range(&self.chart)
    }
}

/// A panel of one quantity on an axis padded around its range, drawn at 1 px without a
/// legend: what it shows and how.
#[derive(Debug, Clone, Copy)]
pub struct SinglePanel {
    /// Caption above the panel.
    pub caption: &'static str,
    /// Value axis label (unit).
    pub y_desc: &'static str,
    /// The quantity, per column.
    pub pick: fn(&Bucket) -> Span,
    /// Line colour.
    pub colour: RGBColor,
}

impl SinglePanel {
    /// Draw the panel; returns the pixel range of its time axis.
    ///
    /// # Errors
    /// Drawing errors.
    pub fn draw<DB: DrawingBackend>(
        &self,
        area: &DrawingArea<DB, Shift>,
        env: &Envelope,
        range: (f64, f64),
    ) -> Result<(i32, i32), SimError>
    where
        DB::ErrorType: 'static,
    {
        let cols = columns(area, env, range);
        let mut s = Span::EMPTY;
        for c in &cols {
            s.merge(&(self.pick)(c));
        }
        let y = padded(s.lo, s.hi);
        let mut p = TimePanel::new(area, &cols, range, self.caption, y, self.y_desc)?;
        p.envelope(self.pick, self.colour.stroke_width(1), None)?;
        Ok(p.finish())
    }
}
