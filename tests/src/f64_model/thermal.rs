//! f64 model of [`clampwise_core::thermal`]: the lumped network integrated with classic
//! fourth-order Runge–Kutta, sub-stepping so each sub-step is at most 1/50 of the fastest time constant.
//! A different method from the fixed-point path's exact exponential, so agreement checks the
//! discretisation as well as the arithmetic. Physics only (no flags, no measured input).

use clampwise_core::thermal::{Cooling, ThermalParams};

/// f64 thermal model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ThermalModel {
    c_rotor: f64,
    c_lining: Option<f64>,
    conductance: f64,
    h_a: f64,
    share: f64,
    ambient: f64,
    /// Rotor temperature, °C.
    pub rotor: f64,
    /// Lining temperature, °C (the rotor's without a lining node).
    pub lining: f64,
}

impl ThermalModel {
    /// From the same parameters as [`clampwise_core::thermal::ThermalConfig::new`] (not
    /// validated here), starting at ambient.
    pub fn new(p: &ThermalParams) -> Self {
        let c_rotor = p.rotor_mass * p.rotor_specific_heat;
        let h_a = match p.cooling {
            Cooling::Adiabatic => 0.0,
            Cooling::TimeConstant(tau) => c_rotor / tau,
            Cooling::Conductance(g) => g,
        };
        Self {
            c_rotor,
            c_lining: p.lining.map(|l| l.mass * l.specific_heat),
            conductance: p.lining.map_or(0.0, |l| l.conductance_to_rotor),
            h_a,
            share: p.rotor_share,
            ambient: p.ambient,
            rotor: p.ambient,
            lining: p.ambient,
        }
    }

    fn derivative(&self, power: f64, lining: f64, rotor: f64) -> (f64, f64) {
        match self.c_lining {
            None => (
                0.0,
                (self.share * power - self.h_a * (rotor - self.ambient)) / self.c_rotor,
            ),
            Some(c_l) => {
                let q = self.conductance * (lining - rotor);
                (
                    ((1.0 - self.share) * power - q) / c_l,
                    (self.share * power + q - self.h_a * (rotor - self.ambient)) / self.c_rotor,
                )
            }
        }
    }

    fn fastest_rate(&self) -> f64 {
        let rotor = (self.h_a + self.conductance) / self.c_rotor;
        let lining = self.c_lining.map_or(0.0, |c| self.conductance / c);
        rotor + lining
    }

    /// Advance by `dt` seconds with `power` watts (its magnitude) held constant.
    pub fn step(&mut self, dt: f64, power: f64) {
        let p = power.abs();
        let rate = self.fastest_rate();
        let n = if rate > 0.0 {
            (dt * rate * 50.0).ceil().clamp(1.0, 1e6)
        } else {
            1.0
        };
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let steps = n as u32;
        let h = dt / n;
        let (mut l, mut r) = (self.lining, self.rotor);
        for _ in 0..steps {
            let k1 = self.derivative(p, l, r);
            let k2 = self.derivative(p, l + 0.5 * h * k1.0, r + 0.5 * h * k1.1);
            let k3 = self.derivative(p, l + 0.5 * h * k2.0, r + 0.5 * h * k2.1);
            let k4 = self.derivative(p, l + h * k3.0, r + h * k3.1);
            l += h / 6.0 * (k1.0 + 2.0 * k2.0 + 2.0 * k3.0 + k4.0);
            r += h / 6.0 * (k1.1 + 2.0 * k2.1 + 2.0 * k3.1 + k4.1);
        }
        self.rotor = r;
        self.lining = if self.c_lining.is_some() { l } else { r };
    }
}
