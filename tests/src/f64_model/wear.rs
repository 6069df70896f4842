//! f64 model of [`clampwise_core::wear`]: energy summed with Neumaier's compensated summation (so
//! 10⁷ small increments keep their sum to ~1 ulp), bedding in closed form `1 − exp(−E/E₀)`, and
//! thickness loss `k·E/A`.

use clampwise_core::wear::WearParams;

/// One sample of the f64 wear model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WearOutput {
    /// Energy dissipated, J.
    pub energy: f64,
    /// Bedding 0…1.
    pub bedding: f64,
    /// Thickness lost, m.
    pub thickness_loss: f64,
    /// Remaining thickness, m (not below 0).
    pub remaining_thickness: f64,
    /// Remaining thickness at or below the minimum.
    pub worn_out: bool,
}

/// f64 wear model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WearModel {
    p: WearParams,
    sum: f64,
    compensation: f64,
}

impl WearModel {
    /// A new lining.
    pub fn new(p: &WearParams) -> Self {
        Self {
            p: *p,
            sum: 0.0,
            compensation: 0.0,
        }
    }

    /// A lining with `energy` J already dissipated.
    pub fn with_energy(p: &WearParams, energy: f64) -> Self {
        Self {
            p: *p,
            sum: energy,
            compensation: 0.0,
        }
    }

    /// Add `|power|·dt`.
    pub fn step(&mut self, dt: f64, power: f64) -> WearOutput {
        self.add_energy(power.abs() * dt)
    }

    /// Add an energy (J, its magnitude).
    pub fn add_energy(&mut self, energy: f64) -> WearOutput {
        let x = energy.abs();
        let t = self.sum + x;
        self.compensation += if self.sum.abs() >= x {
            (self.sum - t) + x
        } else {
            (x - t) + self.sum
        };
        self.sum = t;
        self.output()
    }

    /// The outputs for the energy so far.
    pub fn output(&self) -> WearOutput {
        let e = self.sum + self.compensation;
        let loss = self.p.specific_wear_rate * e / self.p.lining_area;
        let remaining = (self.p.initial_thickness - loss).max(0.0);
        WearOutput {
            energy: e,
            bedding: -(-e / self.p.bedding_energy).exp_m1(),
            thickness_loss: loss,
            remaining_thickness: remaining,
            worn_out: remaining <= self.p.minimum_thickness,
        }
    }
}
