//! Lining panels: the lining temperature and the μ the estimator used.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::Envelope;
use super::panel::single;
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
    single(
        area,
        env,
        range,
        ("lining temperature used", "°C"),
        |b| b.temp_c,
        RED.stroke_width(1),
    )
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
    single(
        area,
        env,
        range,
        ("μ used", "μ"),
        |b| b.mu,
        RGBColor(31, 119, 180).stroke_width(1),
    )
}
