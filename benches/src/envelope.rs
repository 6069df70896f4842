//! Accuracy envelope: the fixed-point pipeline (`Estimator::step`) against the f64 model
//! (clampwise-tests) over a grid of clamp force × slip speed × lining temperature × bedding.
//!
//! ## Method
//!
//! Device: the bench caliper of [`crate::device`] (annulus 60/100 mm, 2 faces, the 6 × 5 μ
//! table with drag, the 3 × 3 radius table, rotor and lining nodes), with one force channel
//! whose filter is a pass-through (so the clamp force reaching the torque model is the grid
//! force; the sensor chain has its own tests). For each cell:
//!
//! - **fixed point**: a state record with the cell's lining (and rotor) temperature and the
//!   dissipated energy `E = −E₀·ln(1 − b)` that gives the cell's bedding `b`
//!   (`E = 40·E₀` for b = 1) is restored with `Estimator::restore`, and one `step` is run with
//!   the cell's force (counts = F · 256, exact) and slip speed;
//! - **reference**: `f64_model::friction::FrictionModel` on the *same SI μ table* (f64
//!   bilinear, smoothstep blend, drag), `f64_model::wear::WearModel` for the bedding of the
//!   same energy (closed form), `geometry::Contact::lever_arm` for r_e (f64 formulas, not the
//!   stored table), and T = −sign(v)·n·μ·F·r_e + drag in f64; the inputs are the fixed-point
//!   values of the grid's speed and temperature, so only the pipeline's arithmetic, table
//!   storage and interpolation differ.
//!
//! The reading compared is what the estimator reports: the torque while slipping, the
//! holding capacity while holding; the capacity is compared in every cell. The relative error
//! of a cell is the larger of the two. The contact state must agree in every cell.
//!
//! The project's bound: at most 0.1 % of reading for clamp forces at or above 5 % of the force
//! full scale ([`FULL_SCALE_N`]).
//!
//! ## Measured (2560 cells)
//!
//! Contact state agrees in every cell. Worst at or above 5 % FS: **29.2 ppm** of reading
//! (F = 10 kN, v = 2000 rad/s, T = 1000 °C, bedding 0.75); worst of the whole grid 130.8 ppm
//! (1 kN, ±2000 rad/s). The largest term at high slip speed is the I16F16 storage of the viscous
//! drag coefficient (0.02 N·m·s stored 214 ppm high: 8.5 mN·m at 2000 rad/s); elsewhere
//! 0.25–3 ppm. `tests/accuracy_envelope.rs` holds the bound and 1·10⁻⁴ as a regression guard.

use std::error::Error;
use std::fmt::Write as _;
use std::path::Path;

use clampwise_core::config::{DeviceConfig, DeviceParts, Limits, Tables, Tolerances};
use clampwise_core::estimator::{Combination, ContactState, Estimator, Inputs};
use clampwise_core::friction::{FrictionConfig, MuTable, ViscousDrag};
use clampwise_core::geometry::{Contact, build_radius_table};
use clampwise_core::sensor::{
    AdcRails, ChannelCalibration, Debounce, DebounceSet, DiagnosticLimits, LowPass,
    NewtonsPerCount, NewtonsPerSecond, SensorConfig, VotingLimits,
};
use clampwise_core::state_record::StateRecord;
use clampwise_core::thermal::{ThermalConfig, ThermalState};
use clampwise_core::units::{Celsius, Joules, Newtons, RadPerSec, Ratio, Seconds};
use clampwise_core::wear::{WearConfig, WearState};
use clampwise_tests::f64_model::friction::FrictionModel;
use clampwise_tests::f64_model::wear::WearModel;

use crate::device::{
    self, BEDDING_ENERGY, COUNTS_PER_NEWTON, FULL_FRICTION, MU_SPEEDS, MU_TEMPERATURES, MU_VALUES,
    RADIUS_BEDDING, RADIUS_FORCES,
};

/// Force full scale of the envelope, N (the design envelope's 200 kN).
pub const FULL_SCALE_N: f64 = 200e3;
/// Clamp forces of the grid, N: 0.5 % … 100 % of full scale.
pub const FORCES_N: [f64; 8] = [1e3, 4e3, 10e3, 25e3, 50e3, 100e3, 150e3, 200e3];
/// Slip speeds of the grid, rad/s: both directions, standstill, the stick band and the
/// static-to-kinetic transition (0.5 rad/s), up to the design envelope's 2000 rad/s.
pub const SPEEDS: [f64; 8] = [-2000.0, -150.0, -0.3, 0.0, 0.02, 0.25, 40.0, 2000.0];
/// Lining temperatures of the grid, °C: the design envelope −50 … 1000 °C (the μ table spans
/// −40 … 900 °C, so both ends are clamped cells).
pub const TEMPERATURES: [f64; 8] = [-50.0, 20.0, 100.0, 230.0, 350.0, 500.0, 750.0, 1000.0];
/// Bedding values of the grid.
pub const BEDDING: [f64; 5] = [0.0, 0.25, 0.5, 0.75, 1.0];
/// The project's bound on the relative error above 5 % of full scale.
pub const BOUND: f64 = 1e-3;
/// Fraction of full scale above which [`BOUND`] applies.
pub const BOUND_FROM: f64 = 0.05;

type EnvelopeDevice = DeviceConfig<Tables<3, 3, 6, 5>, 1>;

/// One grid cell.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Cell {
    /// Indices into [`FORCES_N`], [`SPEEDS`], [`TEMPERATURES`], [`BEDDING`].
    pub index: [usize; 4],
    /// Clamp force, N.
    pub force: f64,
    /// Slip speed, rad/s (as quantised to the fixed-point input).
    pub speed: f64,
    /// Lining temperature, °C.
    pub temperature: f64,
    /// Nominal bedding.
    pub bedding: f64,
    /// The fixed-point contact state.
    pub state: ContactState,
    /// The reference's contact state agrees.
    pub state_agrees: bool,
    /// The reported reading (torque while slipping, else capacity), N·m: fixed point.
    pub reading: f64,
    /// The same reading from the reference, N·m.
    pub reference: f64,
    /// Holding capacity, fixed point and reference, N·m.
    pub capacity: (f64, f64),
    /// μ used, fixed point and reference.
    pub mu: (f64, f64),
    /// Lever arm, fixed point and reference, m.
    pub radius: (f64, f64),
    /// Relative error of the cell: the larger of the reading's and the capacity's.
    pub relative_error: f64,
}

impl Cell {
    /// True when the project's bound applies to this cell.
    pub fn bounded(&self) -> bool {
        self.force >= BOUND_FROM * FULL_SCALE_N
    }

    /// "F = … kN, v = … rad/s, T = … °C, b = …".
    pub fn name(&self) -> String {
        format!(
            "F = {} kN, v = {} rad/s, T = {} °C, bedding = {}",
            self.force / 1e3,
            fmt_speed(self.speed),
            self.temperature,
            self.bedding
        )
    }
}

fn fmt_speed(v: f64) -> String {
    let r = (v * 1e4).round() / 1e4;
    format!("{r}")
}

fn relative(a: f64, b: f64) -> f64 {
    if b == 0.0 {
        if a == 0.0 { 0.0 } else { f64::INFINITY }
    } else {
        ((a - b) / b).abs()
    }
}

/// The whole grid.
#[derive(Clone, Debug, PartialEq)]
pub struct Envelope {
    /// Every cell, force-major (force, speed, temperature, bedding).
    pub cells: Vec<Cell>,
}

fn envelope_device(contact: &Contact<'_>) -> Result<EnvelopeDevice, Box<dyn Error>> {
    let radius = build_radius_table(contact, &RADIUS_FORCES, &RADIUS_BEDDING)?;
    let mu = MuTable::new(&MU_TEMPERATURES, &MU_SPEEDS, &MU_VALUES)?;
    let channel = ChannelCalibration {
        gain: NewtonsPerCount::from_num(1.0 / COUNTS_PER_NEWTON),
        offset: Newtons::ZERO,
        rails: AdcRails {
            low: i32::MIN,
            high: i32::MAX,
            margin: 0,
        },
        temperature: None,
    };
    let limits = DiagnosticLimits {
        force_min: Newtons::from_num(-5_000),
        force_max: Newtons::from_num(250_000),
        max_rate: NewtonsPerSecond::from_num(1e9),
        noise_band: Newtons::from_num(50),
        stuck: None,
        debounce: DebounceSet::uniform(Debounce {
            raise_after: 3,
            clear_after: 10,
        }),
        max_hold_samples: 0,
    };
    let voting = VotingLimits {
        tolerance: Newtons::from_num(500),
        channel_uncertainty: Newtons::from_num(100),
    };
    let sensor = SensorConfig::new(
        device::RATE_HZ,
        [channel],
        LowPass::pass_through(device::RATE_HZ)?,
        limits,
        voting,
        None,
    )?;
    Ok(DeviceConfig::from_parts(DeviceParts {
        sample_period: Seconds::from_num(device::DT),
        thermal_wear_every: 1,
        faces: device::FACES,
        tables: Tables::new(radius, FrictionConfig::new(mu, &FULL_FRICTION)?),
        thermal: ThermalConfig::new(&device::thermal_params(true), device::DT)?,
        wear: WearConfig::new(&device::wear_params(), device::DT)?,
        sensor,
        adapt: None,
        limits: Limits {
            touch_force: Newtons::from_num(100),
            adapt_min_force: Newtons::from_num(500),
        },
        tolerances: Tolerances {
            mu: Ratio::from_num(0.20),
            radius: Ratio::from_num(0.01),
            combination: Combination::WorstCase,
        },
    })?)
}

/// Energy that gives bedding `b` (J).
fn energy_for(b: f64) -> f64 {
    if b >= 1.0 {
        40.0 * BEDDING_ENERGY
    } else {
        -BEDDING_ENERGY * (-b).ln_1p()
    }
}

/// Compute the whole grid.
///
/// # Errors
/// A device constant is wrong, or a state record does not load (neither happens with the
/// constants of this crate).
#[allow(clippy::cast_possible_truncation)] // counts of at most 200 kN · 256 fit i32
pub fn run() -> Result<Envelope, Box<dyn Error>> {
    let contact = device::contact()?;
    let cfg = envelope_device(&contact)?;
    let faces = f64::from(device::FACES);
    let mut cells = Vec::with_capacity(FORCES_N.len() * SPEEDS.len() * 40);
    for (fi, &force) in FORCES_N.iter().enumerate() {
        let counts = (force * COUNTS_PER_NEWTON).round() as i32;
        let f_ref = f64::from(counts) / COUNTS_PER_NEWTON;
        for (vi, &speed) in SPEEDS.iter().enumerate() {
            let v_fx = RadPerSec::from_num(speed);
            let v_ref: f64 = v_fx.to_num();
            for (ti, &temperature) in TEMPERATURES.iter().enumerate() {
                let t_fx = Celsius::from_num(temperature);
                let t_ref: f64 = t_fx.to_num();
                for (bi, &bedding) in BEDDING.iter().enumerate() {
                    let energy = energy_for(bedding);
                    // Fixed point: restore the state, one step.
                    let wear = WearState::with_history(cfg.wear(), Joules::from_num(energy));
                    let thermal = ThermalState::with_temperatures(t_fx, t_fx);
                    let record = StateRecord::new(
                        0,
                        cfg.checksum(),
                        &wear,
                        &thermal,
                        Ratio::ONE,
                        Ratio::ZERO,
                    )
                    .to_bytes();
                    let mut est = Estimator::restore(&cfg, &record)?;
                    let mut inputs = Inputs::<1>::at_rest(counts);
                    inputs.input_speed = Some(v_fx);
                    let e = est.step(&inputs);

                    // Reference: f64 models on the same SI data.
                    let b_ref = WearModel::with_energy(&device::wear_params(), energy)
                        .output()
                        .bedding;
                    let r_ref = contact.lever_arm(b_ref)?;
                    let mut fric =
                        FrictionModel::new(MU_TEMPERATURES, MU_SPEEDS, MU_VALUES, &FULL_FRICTION);
                    let fr = fric.step(v_ref, t_ref, 1.0);
                    let capacity_ref = faces * fr.mu_static * f_ref * r_ref;
                    let torque_ref =
                        f64::from(fr.direction) * faces * fr.mu_kinetic * f_ref * r_ref
                            + fr.drag_torque;

                    let capacity_fx: f64 = e.holding_capacity.map_or(f64::NAN, |c| c.to_num());
                    let (reading, reference, mu_ref) = match e.state {
                        ContactState::Slipping => (
                            e.torque.map_or(f64::NAN, |t| t.to_num()),
                            torque_ref,
                            fr.mu_kinetic,
                        ),
                        _ => (capacity_fx, capacity_ref, fr.mu_static),
                    };
                    let state_agrees = match e.state {
                        ContactState::Slipping => fr.slipping,
                        ContactState::Holding => !fr.slipping,
                        _ => false,
                    };
                    let relative_error =
                        relative(reading, reference).max(relative(capacity_fx, capacity_ref));
                    cells.push(Cell {
                        index: [fi, vi, ti, bi],
                        force: f_ref,
                        speed: v_ref,
                        temperature: t_ref,
                        bedding,
                        state: e.state,
                        state_agrees,
                        reading,
                        reference,
                        capacity: (capacity_fx, capacity_ref),
                        mu: (e.mu.to_num(), mu_ref),
                        radius: (e.effective_radius.to_num(), r_ref),
                        relative_error: if relative_error.is_nan() {
                            f64::INFINITY
                        } else {
                            relative_error
                        },
                    });
                }
            }
        }
    }
    Ok(Envelope { cells })
}

fn worst<'a>(cells: impl Iterator<Item = &'a Cell>) -> Option<&'a Cell> {
    cells.max_by(|a, b| a.relative_error.total_cmp(&b.relative_error))
}

impl Envelope {
    /// The worst cell where the bound applies (force ≥ 5 % of full scale).
    pub fn worst_bounded(&self) -> Option<&Cell> {
        worst(self.cells.iter().filter(|c| c.bounded()))
    }

    /// The worst cell of the whole grid.
    pub fn worst_overall(&self) -> Option<&Cell> {
        worst(self.cells.iter())
    }

    /// Cells whose contact state differs from the reference's.
    pub fn state_mismatches(&self) -> usize {
        self.cells.iter().filter(|c| !c.state_agrees).count()
    }

    fn worst_where(&self, keep: impl Fn(&Cell) -> bool) -> f64 {
        self.cells
            .iter()
            .filter(|c| keep(c))
            .map(|c| c.relative_error)
            .fold(0.0, f64::max)
    }

    /// Worst relative error by (force, speed) over temperature and bedding.
    pub fn by_force_speed(&self) -> Vec<Vec<f64>> {
        (0..FORCES_N.len())
            .map(|f| {
                (0..SPEEDS.len())
                    .map(|v| self.worst_where(|c| c.index[0] == f && c.index[1] == v))
                    .collect()
            })
            .collect()
    }

    /// Worst relative error by (temperature, bedding) over force (≥ 5 % FS) and speed.
    pub fn by_temperature_bedding(&self) -> Vec<Vec<f64>> {
        (0..TEMPERATURES.len())
            .map(|t| {
                (0..BEDDING.len())
                    .map(|b| {
                        self.worst_where(|c| c.bounded() && c.index[2] == t && c.index[3] == b)
                    })
                    .collect()
            })
            .collect()
    }

    /// The report as markdown.
    pub fn markdown(&self, date: &str) -> String {
        let mut s = String::new();
        let ppm = |e: f64| format!("{:.3}", e * 1e6);
        let _ = writeln!(
            s,
            "# Accuracy envelope: fixed-point pipeline vs f64 reference\n"
        );
        let _ = writeln!(
            s,
            "Generated by `cargo run --release -p clampwise-benches --bin accuracy_envelope` \
             ({date}). Method: `benches/src/envelope.rs` module docs.\n"
        );
        let _ = writeln!(
            s,
            "Grid: {} forces × {} slip speeds × {} lining temperatures × {} bedding values = \
             {} cells; contact state agrees with the reference in {} of them.\n",
            FORCES_N.len(),
            SPEEDS.len(),
            TEMPERATURES.len(),
            BEDDING.len(),
            self.cells.len(),
            self.cells.len() - self.state_mismatches()
        );
        if let Some(w) = self.worst_bounded() {
            let verdict = if w.relative_error <= BOUND {
                "within"
            } else {
                "OUTSIDE"
            };
            let _ = writeln!(
                s,
                "**Worst cell at or above {:.0} % of full scale ({} kN):** {} ({}): reported \
                 {:.6} N·m, reference {:.6} N·m, relative error **{} ppm** ({:.2e}), {verdict} \
                 the bound of {} % of reading.\n",
                BOUND_FROM * 100.0,
                BOUND_FROM * FULL_SCALE_N / 1e3,
                w.name(),
                w.state.name(),
                w.reading,
                w.reference,
                ppm(w.relative_error),
                w.relative_error,
                BOUND * 100.0,
            );
        }
        if let Some(w) = self.worst_overall() {
            let _ = writeln!(
                s,
                "Worst cell of the whole grid (bound not applied below {:.0} % FS): {} ({}): \
                 {} ppm; absolute error {:.3e} N·m.\n",
                BOUND_FROM * 100.0,
                w.name(),
                w.state.name(),
                ppm(w.relative_error),
                (w.reading - w.reference).abs()
            );
        }
        let _ = writeln!(
            s,
            "## Worst relative error (ppm of reading) by clamp force × slip speed, over all \
             temperatures and bedding values\n"
        );
        let _ = write!(s, "| F \\ v (rad/s) |");
        for v in SPEEDS {
            let _ = write!(s, " {} |", fmt_speed(v));
        }
        let _ = writeln!(s);
        let _ = writeln!(s, "|---|{}", "---|".repeat(SPEEDS.len()));
        for (f, row) in FORCES_N.iter().zip(self.by_force_speed()) {
            let _ = write!(s, "| {} kN |", f / 1e3);
            for e in row {
                let _ = write!(s, " {} |", ppm(e));
            }
            let _ = writeln!(s);
        }
        let _ = writeln!(
            s,
            "\n## Worst relative error (ppm of reading) by lining temperature × bedding, forces \
             ≥ {:.0} % FS, all slip speeds\n",
            BOUND_FROM * 100.0
        );
        let _ = write!(s, "| T (°C) \\ bedding |");
        for b in BEDDING {
            let _ = write!(s, " {b} |");
        }
        let _ = writeln!(s);
        let _ = writeln!(s, "|---|{}", "---|".repeat(BEDDING.len()));
        for (t, row) in TEMPERATURES.iter().zip(self.by_temperature_bedding()) {
            let _ = write!(s, "| {t} |");
            for e in row {
                let _ = write!(s, " {} |", ppm(e));
            }
            let _ = writeln!(s);
        }
        let c_v = FULL_FRICTION.viscous_drag;
        let c_v_stored: f64 = ViscousDrag::from_num(c_v).to_num();
        let v_max = SPEEDS.iter().fold(0.0f64, |m, v| m.max(v.abs()));
        let _ = writeln!(
            s,
            "\nWhere the error comes from: at high slip speed the largest term is the storage of \
             the viscous drag coefficient in I16F16 (LSB 15 µN·m·s): {c_v} N·m·s is stored as \
             {c_v_stored:.9} ({:.0} ppm high), so the drag at {v_max} rad/s is {:.2} mN·m above \
             the reference's. Elsewhere: r_e stored in I8F24 (½ LSB = 30 nm, 0.37 ppm of 80 mm), \
             μ in I2F30 (≤ 1 LSB = 0.93·10⁻⁹), and the torque rounded once to I20F12 (½ LSB = \
             0.12 mN·m: a few ppm of the 30–70 N·m readings at 1 kN).",
            (c_v_stored / c_v - 1.0) * 1e6,
            (c_v_stored - c_v) * v_max * 1e3,
        );
        s
    }

    /// Every cell as CSV.
    pub fn csv(&self) -> String {
        let mut s = String::from(
            "force_N,slip_speed_rad_s,lining_temperature_C,bedding,state,state_agrees,\
             reading_Nm,reference_Nm,capacity_Nm,capacity_ref_Nm,mu,mu_ref,radius_m,\
             radius_ref_m,relative_error\n",
        );
        for c in &self.cells {
            let _ = writeln!(
                s,
                "{},{},{},{},{},{},{:.9},{:.9},{:.9},{:.9},{:.12},{:.12},{:.12},{:.12},{:.6e}",
                c.force,
                c.speed,
                c.temperature,
                c.bedding,
                c.state.name(),
                c.state_agrees,
                c.reading,
                c.reference,
                c.capacity.0,
                c.capacity.1,
                c.mu.0,
                c.mu.1,
                c.radius.0,
                c.radius.1,
                c.relative_error
            );
        }
        s
    }

    /// Two heat maps (log₁₀ of the worst relative error): force × slip speed and
    /// temperature × bedding. SVG or PNG by the file extension.
    ///
    /// # Errors
    /// The plot could not be drawn or written.
    pub fn plot(&self, path: &Path) -> Result<(), Box<dyn Error>> {
        register_plot_font();
        let png = path
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("png"));
        use plotters::prelude::IntoDrawingArea as _;
        if png {
            let root = plotters::prelude::BitMapBackend::new(path, (1200, 560)).into_drawing_area();
            self.draw(&root)
        } else {
            let root = plotters::prelude::SVGBackend::new(path, (1200, 560)).into_drawing_area();
            self.draw(&root)
        }
    }

    fn draw<DB: plotters::prelude::DrawingBackend>(
        &self,
        root: &plotters::prelude::DrawingArea<DB, plotters::coord::Shift>,
    ) -> Result<(), Box<dyn Error>>
    where
        DB::ErrorType: 'static,
    {
        use plotters::prelude::*;
        root.fill(&WHITE)?;
        let fs = self.by_force_speed();
        let tb = self.by_temperature_bedding();
        let all = fs.iter().chain(tb.iter()).flatten().copied();
        let (lo, hi) = all
            .filter(|e| *e > 0.0)
            .fold((f64::MAX, f64::MIN), |(l, h), e| {
                (l.min(e.log10()), h.max(e.log10()))
            });
        let (lo, hi) = if lo <= hi {
            (lo.floor(), hi.ceil())
        } else {
            (-9.0, -3.0)
        };
        let titled = root.titled(
            &format!(
                "clampwise fixed point vs f64 reference: worst relative error in ppm of reading \
                 (colour: log10 from 1e{lo} to 1e{hi})"
            ),
            ("sans-serif", 14),
        )?;
        let (left, right) = titled.split_horizontally(600);
        let colour = move |e: f64| {
            let x = if e > 0.0 {
                ((e.log10() - lo) / (hi - lo).max(1e-9)).clamp(0.0, 1.0)
            } else {
                0.0
            };
            HSLColor(0.66 * (1.0 - x), 0.85, 0.5)
        };
        let x_speed: Vec<String> = SPEEDS.iter().map(|&v| fmt_speed(v)).collect();
        let y_force: Vec<String> = FORCES_N.iter().map(|f| format!("{} kN", f / 1e3)).collect();
        let x_bed: Vec<String> = BEDDING.iter().map(|b| format!("{b}")).collect();
        let y_temp: Vec<String> = TEMPERATURES.iter().map(|t| format!("{t} °C")).collect();
        let panels = [
            (
                &left,
                &fs,
                &x_speed,
                &y_force,
                "worst rel. error: clamp force × slip speed (rad/s)",
            ),
            (
                &right,
                &tb,
                &x_bed,
                &y_temp,
                "worst rel. error (F ≥ 5 % FS): temperature × bedding",
            ),
        ];
        for (area, grid, xl, yl, title) in panels {
            let nx = xl.len();
            let ny = yl.len();
            #[allow(clippy::cast_precision_loss)]
            let (fx, fy) = (nx as f64, ny as f64);
            let mut chart = ChartBuilder::on(area)
                .caption(title, ("sans-serif", 16))
                .margin(12)
                .x_label_area_size(40)
                .y_label_area_size(70)
                .build_cartesian_2d(0.0..fx, 0.0..fy)?;
            let xl2 = xl.clone();
            let yl2 = yl.clone();
            chart
                .configure_mesh()
                .disable_mesh()
                .x_labels(nx * 2 + 1)
                .y_labels(ny * 2 + 1)
                .x_label_formatter(&move |x| label_at(&xl2, *x))
                .y_label_formatter(&move |y| label_at(&yl2, *y))
                .draw()?;
            for (j, row) in grid.iter().enumerate() {
                for (i, &e) in row.iter().enumerate() {
                    #[allow(clippy::cast_precision_loss)]
                    let (x0, y0) = (i as f64, j as f64);
                    chart.draw_series(std::iter::once(Rectangle::new(
                        [(x0, y0), (x0 + 1.0, y0 + 1.0)],
                        colour(e).filled(),
                    )))?;
                    chart.draw_series(std::iter::once(Text::new(
                        format!("{:.2}", e * 1e6),
                        (x0 + 0.18, y0 + 0.6),
                        ("sans-serif", 11).into_font().color(&WHITE),
                    )))?;
                }
            }
        }
        root.present()?;
        Ok(())
    }
}

/// The label of the cell centred near `x` (cells are [i, i+1)), or nothing at cell edges.
fn label_at(labels: &[String], x: f64) -> String {
    let centre = x - 0.5;
    let i = centre.round();
    if (centre - i).abs() > 0.01 || i < 0.0 {
        return String::new();
    }
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    labels.get(i as usize).cloned().unwrap_or_default()
}

/// Register the DejaVu Sans font compiled in from `sim/fonts` (licence beside it) as
/// "sans-serif": plotters draws text with its `ab_glyph` feature and reads no system font, for
/// these plots and for criterion's.
pub fn register_plot_font() {
    static FONT: &[u8] = include_bytes!("../../sim/fonts/DejaVuSans.ttf");
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        // A font that does not parse leaves text undrawn; plotters then reports the error.
        let _ =
            plotters::style::register_font("sans-serif", plotters::style::FontStyle::Normal, FONT);
    });
}
