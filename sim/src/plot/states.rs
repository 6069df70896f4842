//! State and flag lanes: one lane per state of the core and one per flag raised anywhere in
//! the data; a lane is filled over every pixel column in which the state occurred or the flag
//! was raised, however briefly.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::{Bucket, Envelope};
use super::pixel_x_range;
use super::{bare_time_chart, column_count, column_edges, err};
use crate::error::SimError;
use clampwise_convert::{ContactState, Flags};

/// What a lane shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Lane {
    /// A state of the core.
    State(ContactState),
    /// A flag (one bit).
    Flag(&'static str, Flags),
}

impl Lane {
    /// Its label.
    pub fn label(&self) -> String {
        match self {
            Self::State(s) => format!("state {}", s.name()),
            Self::Flag(n, _) => (*n).to_string(),
        }
    }

    fn on(&self, b: &Bucket) -> bool {
        match self {
            Self::State(s) => b.has_state(*s),
            Self::Flag(_, f) => b.flags.intersects(*f),
        }
    }
}

/// The lanes: every state, then every flag raised in the data.
pub fn lanes(env: &Envelope) -> Vec<Lane> {
    let raised = env
        .buckets()
        .iter()
        .fold(Flags::empty(), |a, b| a | b.flags);
    let mut v: Vec<Lane> = ContactState::ALL.iter().map(|&s| Lane::State(s)).collect();
    for (name, bit) in Flags::all().iter_names() {
        if raised.intersects(bit) {
            v.push(Lane::Flag(name, bit));
        }
    }
    v
}

/// Draw the panel; returns its time axis' pixel range.
///
/// # Errors
/// Drawing errors.
pub fn draw<DB: DrawingBackend>(
    area: &DrawingArea<DB, Shift>,
    env: &Envelope,
    range: (f64, f64),
    lanes: &[Lane],
) -> Result<(i32, i32), SimError>
where
    DB::ErrorType: 'static,
{
    let cols = env.columns(range.0, range.1, column_count(area));
    let n = lanes.len();
    let names: Vec<String> = lanes.iter().map(Lane::label).collect();
    // The y axis counts lanes; its labels are the lane names.
    let mut ch = bare_time_chart(
        area,
        "state and flags (a lane is filled wherever it occurred, however briefly)",
        range,
        (-0.5, n as f64 - 0.5),
    )?;
    ch.configure_mesh()
        .disable_y_mesh()
        .x_desc("t [s]")
        .light_line_style(RGBColor(235, 235, 235))
        .y_labels(n.max(1))
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
        .label_style(("sans-serif", 12))
        .draw()
        .map_err(err)?;
    for (k, lane) in lanes.iter().enumerate() {
        let y = k as f64;
        let colour = match lane {
            Lane::State(_) => Palette99::pick(k).to_rgba(),
            Lane::Flag(..) => RGBColor(214, 39, 40).to_rgba(),
        };
        ch.draw_series(
            cols.iter()
                .enumerate()
                .filter(|(_, c)| lane.on(c))
                .map(|(i, _)| {
                    let (a, b) = column_edges(range.0, range.1, cols.len(), i);
                    Rectangle::new([(a, y - 0.35), (b, y + 0.35)], colour.filled())
                }),
        )
        .map_err(err)?;
    }
    Ok(pixel_x_range(&ch))
}
