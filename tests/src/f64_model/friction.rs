//! f64 model of [`clampwise_core::friction`].
//!
//! The table, thresholds and coefficients are taken as f64 (from a [`FrictionConfig`] so that
//! only the arithmetic differs, or from SI values for a plant model); the model is written from
//! the formulas in [`clampwise_core::friction`], not from the fixed-point code.

// Host-only test oracle: indices come from `locate`, bounded by the axis lengths, and a panic in a
// test is a failure we want to see.
#![allow(clippy::indexing_slicing)]

use clampwise_core::friction::{FrictionConfig, FrictionParams};

/// One sample of the f64 model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FrictionOutput {
    /// μ used for the slipping torque (corrected, blended).
    pub mu_kinetic: f64,
    /// Static μ (corrected).
    pub mu_static: f64,
    /// |μ_blend − μ_k|: how far the blend moved μ from the kinetic table's own value.
    pub transition_span: f64,
    /// Slipping after this sample.
    pub slipping: bool,
    /// −1, 0, +1 opposing slip (0 while holding).
    pub direction: i8,
    /// Drag torque, N·m, opposing slip.
    pub drag_torque: f64,
    /// A table input lay outside the breakpoints.
    pub clamped: bool,
}

/// f64 friction model with stick/slip state.
#[derive(Clone, Debug, PartialEq)]
pub struct FrictionModel<const NT: usize, const NV: usize> {
    temperatures: [f64; NT],
    speeds: [f64; NV],
    mu: [[f64; NV]; NT],
    static_to_kinetic: f64,
    slip_above: f64,
    stick_below: f64,
    transition_speed: f64,
    viscous_drag: f64,
    no_load_drag: f64,
    slipping: bool,
}

/// Position on an axis: (lower index, upper index, fraction, clamped).
fn locate(axis: &[f64], x: f64) -> (usize, usize, f64, bool) {
    let last = axis.len().saturating_sub(1);
    let first = axis.first().copied().unwrap_or(0.0);
    let end = axis.last().copied().unwrap_or(0.0);
    if x <= first {
        return (0, 0, 0.0, x < first);
    }
    if x >= end {
        return (last, last, 0.0, x > end);
    }
    let i = axis.windows(2).position(|w| x < w[1]).unwrap_or(0);
    let (x0, x1) = (axis[i], axis[i + 1]);
    (i, i + 1, (x - x0) / (x1 - x0), false)
}

impl<const NT: usize, const NV: usize> FrictionModel<NT, NV> {
    /// From f64 tables and SI parameters (plant model). The band edges are
    /// `stick_speed ± stick_hysteresis/2`.
    pub fn new(
        temperatures: [f64; NT],
        speeds: [f64; NV],
        mu: [[f64; NV]; NT],
        p: &FrictionParams,
    ) -> Self {
        Self {
            temperatures,
            speeds,
            mu,
            static_to_kinetic: p.static_to_kinetic,
            slip_above: p.stick_speed + 0.5 * p.stick_hysteresis,
            stick_below: p.stick_speed - 0.5 * p.stick_hysteresis,
            transition_speed: p.transition_speed,
            viscous_drag: p.viscous_drag,
            no_load_drag: p.no_load_drag,
            slipping: false,
        }
    }

    /// The same model as a fixed-point config whose μ table fills its capacity, every stored
    /// value taken exactly as f64.
    pub fn from_config(cfg: &FrictionConfig<NT, NV>) -> Self {
        let t = cfg.mu_kinetic();
        Self {
            temperatures: std::array::from_fn(|i| {
                t.x_breakpoints().get(i).map_or(f64::NAN, |v| v.to_num())
            }),
            speeds: std::array::from_fn(|j| {
                t.y_breakpoints().get(j).map_or(f64::NAN, |v| v.to_num())
            }),
            mu: std::array::from_fn(|i| {
                std::array::from_fn(|j| t.value(i, j).map_or(f64::NAN, |v| v.to_num()))
            }),
            static_to_kinetic: cfg.static_to_kinetic().to_num(),
            slip_above: cfg.slip_threshold().to_num(),
            stick_below: cfg.stick_threshold().to_num(),
            transition_speed: cfg.transition_speed().to_num(),
            viscous_drag: cfg.viscous_drag().to_num(),
            no_load_drag: cfg.no_load_drag().to_num(),
            slipping: false,
        }
    }

    /// Bilinear table value at (temperature, speed) and whether it was clamped.
    pub fn table(&self, temperature: f64, speed: f64) -> (f64, bool) {
        let (i0, i1, fx, cx) = locate(&self.temperatures, temperature);
        let (j0, j1, fy, cy) = locate(&self.speeds, speed);
        let z = |i: usize, j: usize| self.mu[i][j];
        let a = z(i0, j0) + (z(i0, j1) - z(i0, j0)) * fy;
        let b = z(i1, j0) + (z(i1, j1) - z(i1, j0)) * fy;
        (a + (b - a) * fx, cx || cy)
    }

    /// One sample.
    pub fn step(&mut self, slip_speed: f64, lining_temp: f64, correction: f64) -> FrictionOutput {
        let speed = slip_speed.abs();
        self.slipping = if self.slipping {
            speed >= self.stick_below
        } else {
            speed > self.slip_above
        };
        let c = correction.max(0.0);
        let (mk, c1) = self.table(lining_temp, speed);
        let (m0, c2) = self.table(lining_temp, self.speeds[0]);
        let mu_k = c * mk;
        let mu_s = self.static_to_kinetic * c * m0;
        let s = (speed / self.transition_speed).min(1.0);
        let phi = s * s * (3.0 - 2.0 * s);
        let mu = mu_k + (mu_s - mu_k) * (1.0 - phi);
        let drag = if slip_speed == 0.0 {
            0.0
        } else {
            -slip_speed.signum() * (self.viscous_drag * speed + self.no_load_drag * phi)
        };
        FrictionOutput {
            mu_kinetic: mu,
            mu_static: mu_s,
            transition_span: (mu - mu_k).abs(),
            slipping: self.slipping,
            direction: if self.slipping {
                if slip_speed > 0.0 { -1 } else { 1 }
            } else {
                0
            },
            drag_torque: drag,
            clamped: c1 || c2,
        }
    }
}
