//! Input panels: clamp force per channel (as logged) and as used by the estimator, slip
//! speed, actuator command. A channel or the command is drawn only where the data has it
//! (estimate files carry the force used and the slip speed; the per-channel forces and the
//! command come from the trace during a replay).

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::{Bucket, Envelope, Span};
use super::{column_count, draw_envelope, legend, padded, pixel_x_range, span_of, time_chart};
use crate::error::SimError;

/// Colours of channels 1–4.
const CHANNEL: [RGBColor; 4] = [
    RGBColor(31, 119, 180),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(140, 86, 75),
];

/// Clamp force per channel and as used.
///
/// # Errors
/// Drawing errors.
pub fn force<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
) -> Result<(i32, i32), SimError>
where
    DB::ErrorType: 'static,
{
    let cols = env.columns(range.0, range.1, column_count(area));
    let all = span_of(cols.iter().flat_map(|c| {
        c.channel_force_n
            .iter()
            .chain(std::iter::once(&c.clamp_force_n))
    }));
    let mut ch = time_chart(
        area,
        "clamp force: per channel as logged, and as used (filtered, voted)",
        range,
        padded(all.lo, all.hi),
        "N",
    )?;
    for (k, colour) in CHANNEL.iter().enumerate() {
        let pick = move |b: &Bucket| b.channel_force_n.get(k).copied().unwrap_or(Span::EMPTY);
        let label = format!("channel {}", k + 1);
        draw_envelope(
            &mut ch,
            &cols,
            range,
            pick,
            colour.stroke_width(1),
            Some(&label),
        )?;
    }
    draw_envelope(
        &mut ch,
        &cols,
        range,
        |b| b.clamp_force_n,
        BLACK.stroke_width(1),
        Some("used by the estimator"),
    )?;
    legend(&mut ch)?;
    Ok(pixel_x_range(&ch))
}

/// Slip speed ω_in − ω_out.
///
/// # Errors
/// Drawing errors.
pub fn slip<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
) -> Result<(i32, i32), SimError>
where
    DB::ErrorType: 'static,
{
    let cols = env.columns(range.0, range.1, column_count(area));
    let s = span_of(cols.iter().map(|c| &c.slip_rad_s));
    let mut ch = time_chart(
        area,
        "slip speed ω_in − ω_out",
        range,
        padded(s.lo, s.hi),
        "rad/s",
    )?;
    draw_envelope(
        &mut ch,
        &cols,
        range,
        |b| b.slip_rad_s,
        RGBColor(23, 190, 207).stroke_width(1),
        None,
    )?;
    Ok(pixel_x_range(&ch))
}

/// Actuator command (in the trace's converted unit).
///
/// # Errors
/// Drawing errors.
pub fn command<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
) -> Result<(i32, i32), SimError>
where
    DB::ErrorType: 'static,
{
    let cols = env.columns(range.0, range.1, column_count(area));
    let s = span_of(cols.iter().map(|c| &c.command));
    let mut ch = time_chart(
        area,
        "actuator command",
        range,
        padded(s.lo, s.hi),
        "command",
    )?;
    draw_envelope(
        &mut ch,
        &cols,
        range,
        |b| b.command,
        RGBColor(127, 127, 127).stroke_width(1),
        None,
    )?;
    Ok(pixel_x_range(&ch))
}
