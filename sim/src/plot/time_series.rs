//! The time-series figure: every panel over the same time range with the same label areas,
//! so a moment sits at the same pixel column on every panel.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::envelope::Envelope;
use super::{err, font, inputs, lining, render_file, states, torque};
use crate::error::SimError;

/// Figure width, px.
pub const WIDTH: u32 = 1400;
/// Height of one ordinary panel, px.
const PANEL_H: u32 = 250;
/// Height of the title strip, px.
const TITLE_H: u32 = 40;

/// The panels drawn, in order from the top, and each one's height in px.
fn layout(env: &Envelope, lanes: usize) -> Vec<(Panel, u32)> {
    let mut v = vec![(Panel::Force, PANEL_H), (Panel::Slip, PANEL_H)];
    let has_command = env.buckets().iter().any(|b| !b.command.is_empty());
    if has_command {
        v.push((Panel::Command, PANEL_H));
    }
    v.extend([
        (Panel::Torque, PANEL_H + 50),
        (Panel::Error, PANEL_H),
        (Panel::Temperature, PANEL_H),
        (Panel::Mu, PANEL_H),
    ]);
    // 22 px per lane (a lane name must fit), at least one ordinary panel.
    let lanes_h = u32::try_from(lanes).unwrap_or(16).saturating_mul(22) + 90;
    v.push((Panel::States, lanes_h.max(PANEL_H)));
    v
}

/// One panel of the figure.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Panel {
    /// Clamp force per channel and as used.
    Force,
    /// Slip speed.
    Slip,
    /// Actuator command (only when the data has one).
    Command,
    /// Estimate, reference, ±holding capacity.
    Torque,
    /// Error with the ± band.
    Error,
    /// Lining temperature used.
    Temperature,
    /// μ used.
    Mu,
    /// States and flags.
    States,
}

/// Each panel drawn, with the pixel range its time axis spans (x from, x to).
pub type PanelAxes = Vec<(Panel, (i32, i32))>;

/// The time range drawn: the time window's ends where given, the data's otherwise.
pub fn time_range(env: &Envelope) -> (f64, f64) {
    let w = env.window();
    let (a, b) = env.time_span().unwrap_or((0.0, 1.0));
    let t0 = w.from_s.unwrap_or(a);
    let t1 = w.to_s.unwrap_or(b);
    if t1 > t0 { (t0, t1) } else { (t0, t0 + 1.0) }
}

/// Figure size for an envelope, px.
pub fn size(env: &Envelope) -> (u32, u32) {
    let h: u32 = layout(env, states::lanes(env).len())
        .iter()
        .map(|p| p.1)
        .sum();
    (WIDTH, h + TITLE_H)
}

/// Draw the figure; returns each panel with the pixel range its time axis spans (x from, x to).
///
/// # Errors
/// Drawing errors.
pub fn draw<DB: DrawingBackend>(
    root: &DrawingArea<DB, Shift>,
    env: &Envelope,
    title: &str,
) -> Result<PanelAxes, SimError>
where
    DB::ErrorType: 'static,
{
    font::register();
    root.fill(&WHITE).map_err(err)?;
    let titled = root.titled(title, ("sans-serif", 22)).map_err(err)?;
    let range = time_range(env);
    let lanes = states::lanes(env);
    let panels = layout(env, lanes.len());
    let mut rest = titled;
    let mut out = Vec::new();
    for (panel, h) in panels {
        let (area, below) = rest.split_vertically(h);
        rest = below;
        let x = match panel {
            Panel::Force => inputs::force(&area, env, range)?,
            Panel::Slip => inputs::SLIP.draw(&area, env, range)?,
            Panel::Command => inputs::COMMAND.draw(&area, env, range)?,
            Panel::Torque => torque::draw(&area, env, range)?,
            Panel::Error => super::error::draw(&area, env, range)?,
            Panel::Temperature => lining::TEMPERATURE.draw(&area, env, range)?,
            Panel::Mu => lining::MU.draw(&area, env, range)?,
            Panel::States => states::draw(&area, env, range, &lanes)?,
        };
        out.push((panel, x));
    }
    Ok(out)
}

/// Plot the time series to `path` (`.svg` or `.png`), written atomically.
///
/// # Errors
/// [`SimError::Usage`] for another extension; [`SimError::Internal`] when drawing fails;
/// I/O errors.
pub fn time_series_file(path: &str, env: &Envelope, title: &str) -> Result<(), SimError> {
    render_file(
        path,
        size(env),
        |a| draw(a, env, title).map(|_| ()),
        |a| draw(a, env, title).map(|_| ()),
    )
}

/// The time series as SVG text (for inline use in a report).
///
/// # Errors
/// As [`time_series_file`].
pub fn time_series_svg(env: &Envelope, title: &str) -> Result<String, SimError> {
    let mut s = String::new();
    {
        let root = SVGBackend::with_string(&mut s, size(env)).into_drawing_area();
        draw(&root, env, title)?;
        root.present().map_err(err)?;
    }
    Ok(s)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]
    use super::*;
    use crate::plot::envelope::{BUCKETS, TimeWindow};
    use clampwise_convert::{Channel, ContactState, EstimateRow, Flags, TraceSample};

    fn env(window: TimeWindow) -> Envelope {
        let mut e = Envelope::new(BUCKETS, window);
        for i in 0..5000u32 {
            let t = f64::from(i) * 0.01;
            let holding = (2000..3000).contains(&i);
            let r = EstimateRow {
                line: u64::from(i),
                t_s: t,
                torque_nm: (!holding).then_some(-1000.0 - t),
                capacity_nm: Some(5000.0),
                uncertainty_nm: 400.0,
                mu: 0.4,
                radius_m: 0.3,
                clamp_force_n: 20_000.0,
                slip_speed_rad_s: if holding { 0.0 } else { 2.0 },
                lining_temp_c: 40.0 + t,
                bedding: 0.0,
                wear_m: 0.0,
                correction: 1.0,
                state: if holding {
                    ContactState::Holding
                } else {
                    ContactState::Slipping
                },
                flags: if (4000..4005).contains(&i) {
                    Flags::all().iter().next().unwrap()
                } else {
                    Flags::empty()
                },
                torque_ref_nm: Some(-1000.0 - t + 5.0),
            };
            let s = TraceSample {
                t_s: t,
                force: [
                    Channel::Newtons(20_000.0),
                    Channel::Newtons(20_100.0),
                    Channel::Absent,
                    Channel::Absent,
                ],
                command: Some(0.7),
                ..TraceSample::default()
            };
            e.push(&r, Some(&s));
        }
        e
    }

    /// Every panel's time axis spans the same pixels, so one instant lines up on all of them.
    #[test]
    fn panels_share_one_time_axis() {
        let e = env(TimeWindow::default());
        let mut s = String::new();
        let xs = {
            let root = SVGBackend::with_string(&mut s, size(&e)).into_drawing_area();
            draw(&root, &e, "test").unwrap()
        };
        assert_eq!(xs.len(), 8, "{xs:?}");
        assert!(xs.iter().any(|p| p.0 == Panel::Command));
        let first = xs[0].1;
        assert!(first.1 - first.0 > 1000, "{first:?}");
        for (p, x) in &xs {
            assert_eq!(*x, first, "panel {p:?}");
        }
    }

    #[test]
    fn without_a_command_there_is_no_command_panel() {
        let mut e = Envelope::new(64, TimeWindow::default());
        let r = EstimateRow {
            line: 1,
            t_s: 0.0,
            torque_nm: None,
            capacity_nm: None,
            uncertainty_nm: 0.0,
            mu: 0.4,
            radius_m: 0.3,
            clamp_force_n: 0.0,
            slip_speed_rad_s: 0.0,
            lining_temp_c: 20.0,
            bedding: 0.0,
            wear_m: 0.0,
            correction: 1.0,
            state: ContactState::Unavailable,
            flags: Flags::empty(),
            torque_ref_nm: None,
        };
        e.push(&r, None);
        let mut s = String::new();
        let root = SVGBackend::with_string(&mut s, size(&e)).into_drawing_area();
        let xs = draw(&root, &e, "t").unwrap();
        assert!(!xs.iter().any(|p| p.0 == Panel::Command));
    }

    #[test]
    fn the_time_window_sets_the_axis() {
        let e = env(TimeWindow {
            from_s: Some(10.0),
            to_s: Some(20.0),
        });
        assert_eq!(time_range(&e), (10.0, 20.0));
        let svg = time_series_svg(&e, "window").unwrap();
        assert!(svg.contains("<svg"));
    }
}
