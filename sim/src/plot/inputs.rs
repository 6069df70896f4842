//! Input panels: clamp force per channel (as logged) and as used by the estimator, slip
//! speed, actuator command. A channel or the command is drawn only where the data has it
//! (estimate files carry the force used and the slip speed; the per-channel forces and the
//! command come from the trace during a replay).

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::{Bucket, Envelope, Span};
use super::panel::{SinglePanel, TimePanel, columns};
use super::{padded, span_of};
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
    let cols = columns(area, env, range);
    let all = span_of(cols.iter().flat_map(|c| {
        c.channel_force_n
            .iter()
            .chain(std::iter::once(&c.clamp_force_n))
    }));
    let mut p = TimePanel::new(
        area,
        &cols,
        range,
        "clamp force: per channel as logged, and as used (filtered, voted)",
        padded(all.lo, all.hi),
        "N",
    )?;
    for (k, colour) in CHANNEL.iter().enumerate() {
        let pick = move |b: &Bucket| b.channel_force_n.get(k).copied().unwrap_or(Span::EMPTY);
        let label = format!("channel {}", k + 1);
        p.envelope(pick, colour.stroke_width(1), Some(&label))?;
    }
    p.envelope(
        |b| b.clamp_force_n,
        BLACK.stroke_width(1),
        Some("used by the estimator"),
    )?;
    p.finish_with_legend()
}

/// Slip speed ω_in − ω_out.
pub const SLIP: SinglePanel = SinglePanel {
    caption: "slip speed ω_in − ω_out",
    y_desc: "rad/s",
    pick: |b| b.slip_rad_s,
    colour: RGBColor(23, 190, 207),
};

/// Actuator command (in the trace's converted unit).
pub const COMMAND: SinglePanel = SinglePanel {
    caption: "actuator command",
    y_desc: "command",
    pick: |b| b.command,
    colour: RGBColor(127, 127, 127),
};
