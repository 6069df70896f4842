//! The core's fixed-point [`Estimate`] to an [`EstimateRow`] in SI units, exactly: every value
//! as `to_num::<f64>()` gives it ([`fixed_to_f64`]). Each I32- or I64-based value used here has
//! at most 53 significant bits, so the row holds the core's bits, and a writer that prints the
//! shortest decimal reading back to the same f64 keeps them in a file.

use clampwise_core::estimator::{ContactState, Estimate, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::units::RadPerSec;

use crate::exact::fixed_to_f64;
use crate::sample::TraceSample;

/// One estimate, in SI units, converted exactly from the core's fixed-point [`Estimate`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct EstimateRow {
    /// Source line of the sample.
    pub line: u64,
    /// Time, s (copied from the sample).
    pub t_s: f64,
    /// Friction torque, N·m, opposing slip; `None` while holding (the torque is then set by the
    /// load, within ±capacity, and no number is made up) or without a clamp force.
    pub torque_nm: Option<f64>,
    /// Holding capacity N·μ_s·F·r_e, N·m (≥ 0); `None` without a clamp force.
    pub capacity_nm: Option<f64>,
    /// ± uncertainty of torque (or of capacity while holding), N·m; the top of
    /// [`NewtonMetres`](clampwise_core::units::NewtonMetres) (524 288 N·m) when nothing is known.
    pub uncertainty_nm: f64,
    /// μ used (kinetic slipping, static holding, with the adaptation's correction).
    pub mu: f64,
    /// Lever arm per face used, m (r_e, divided by sin α for a cone).
    pub radius_m: f64,
    /// Clamp force used, N.
    pub clamp_force_n: f64,
    /// Slip speed ω_in − ω_out, rad/s, as the core forms it.
    pub slip_speed_rad_s: f64,
    /// Lining temperature used, °C (modelled, or measured while plausible).
    pub lining_temp_c: f64,
    /// Bedding, 0 … 1.
    pub bedding: f64,
    /// Lining wear, m.
    pub wear_m: f64,
    /// Correction factor on μ from the adaptation (1 without it).
    pub correction: f64,
    /// Operating state (the core's).
    pub state: ContactState,
    /// The core's flags word.
    pub flags: Flags,
    /// Reference torque copied from the sample, N·m.
    pub torque_ref_nm: Option<f64>,
}

/// The estimate row of one core [`Estimate`] (exact conversions, as `to_num`).
pub fn estimate_row<const C: usize>(
    s: &TraceSample,
    inputs: &Inputs<C>,
    e: &Estimate,
) -> EstimateRow {
    EstimateRow {
        line: s.line,
        t_s: s.t_s,
        torque_nm: e.torque.map(fixed_to_f64),
        capacity_nm: e.holding_capacity.map(fixed_to_f64),
        uncertainty_nm: fixed_to_f64(e.uncertainty),
        mu: fixed_to_f64(e.mu),
        radius_m: fixed_to_f64(e.effective_radius),
        clamp_force_n: fixed_to_f64(e.clamp_force),
        slip_speed_rad_s: fixed_to_f64(inputs.slip_speed().unwrap_or(RadPerSec::ZERO)),
        lining_temp_c: fixed_to_f64(e.lining_temperature),
        bedding: fixed_to_f64(e.bedding),
        wear_m: fixed_to_f64(e.wear),
        correction: fixed_to_f64(e.correction),
        state: e.state,
        flags: e.flags,
        torque_ref_nm: s.torque_ref_nm,
    }
}

/// The names of the set flags, as the core's bitflags spell them (`SENSOR_DEGRADED`, …).
pub fn flag_names(f: Flags) -> impl Iterator<Item = &'static str> {
    f.iter_names().map(|(name, _)| name)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn flag_names_are_the_cores() {
        // [practice] the bitflags names are the core's public spelling (estimate files, reports).
        let names: Vec<_> = flag_names(Flags::FADE_WARNING | Flags::SENSOR_DEGRADED).collect();
        assert_eq!(names, ["SENSOR_DEGRADED", "FADE_WARNING"]);
    }
}
