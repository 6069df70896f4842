//! f64 model of the estimator's per-sample pipeline
//! ([`clampwise_core::estimator::Estimator::step`]), host only: the same model written plainly
//! in floating point, to measure the fixed-point path against.
//!
//! It starts where the sensor stage ends: its input is the *conditioned* clamp force in newtons
//! (calibrated, filtered, diagnosed and voted), its stated ± uncertainty and whether the sensors
//! are healthy. The sensor stage has its own f64 checks (`sensor_properties`,
//! `sensor_filter` in clampwise-tests) and is not repeated here. From there it carries its own
//! f64 state and calls nothing of the fixed-point path:
//!
//! | stage | f64 model |
//! |---|---|
//! | stick/slip, μ (kinetic, blended; static), drag | [`super::friction::FrictionModel`] |
//! | lining temperature | [`super::thermal::ThermalModel`] (RK4, not the exact exponential) |
//! | energy, bedding, wear | [`super::wear::WearModel`] (compensated sum, closed-form bedding) |
//! | lever arm r_e | [`Contact::lever_arm`] in f64 at the current bedding (no table) |
//! | correction k on μ | [`RlsModel`]: scalar RLS in f64, the equations of
//!   [`clampwise_core::adapt`] |
//! | torque, capacity, ± | n·k·μ·F·r_e and the tolerance sum of the estimator, in f64 |
//!
//! Order within a sample is the estimator's: μ and r_e use the temperature and bedding left by
//! the previous sample; this sample's dissipated power |T·v| then heats and beds the lining.
//! A measured lining temperature is not modelled (the reference is the physics only).
//!
//! ## Fixed point against this model (measured)
//!
//! `tests/tests/estimator_reference.rs` runs 100 000 random devices and operating points —
//! clamp force 0…200 kN, slip speed ±(0.1…2000) rad/s or held (|v| < 0.03 rad/s), lining
//! −50…1000 °C, bedding 0…1, 1…12 faces, annuli with radii in 20 mm…1 m, flat or cones of
//! 8°…30° — through [`clampwise_core::estimator::Estimator`] and this model, four samples
//! each, with the same (quantised) inputs, and compares torque and holding capacity. Full scale is the
//! device's n·μ_s,max·200 kN·r_e,max, capped at the largest representable torque (524 kN·m).
//!
//! - Worst relative error of torque and capacity above 5 % of full scale: **3.4·10⁻⁶**
//!   (0.000 34 % of reading, against the 0.1 % target) over 5.7·10⁵ readings; 2.9…3.4·10⁻⁶
//!   over five further random seeds. It sits on the smallest radii: the friction-radius table
//!   holds r_e in I8F24 (60 nm LSB, ½ LSB storage plus ≤ 1 LSB interpolation: 2.3·10⁻⁶ at
//!   r_e = 22 mm), plus the rounding of each face's torque to ½ LSB of `NewtonMetres`.
//! - Readings below 5 % of full scale: within 4.4 mN·m absolute.
//! - Contact state identical in every sample. Readings whose reference lies beyond the torque
//!   format (1.7 % of them: many faces, large radii or cones at high force) are `NewtonMetres::MAX`
//!   with the saturation flag raised; the heating that follows uses the saturated torque, so
//!   the comparison of such a case stops there.
//! - A braking event (estimator_common's demo device with wet-clutch drag and adaptation:
//!   50 ms open, force ramp to 40 kN in 0.3 s through the 200 Hz sensor filter, 300 rad/s
//!   decaying to rest in 3.5 s, 0.5 s holding; the lining heats by about 245 K; the reference
//!   torque from an f64 plant with 8 % less μ), 4000 samples compared one by one: worst
//!   relative error of torque and capacity above 5 % of full scale **6.5·10⁻⁷**, below it
//!   0.42 mN·m; lining temperature within 1.2·10⁻⁵ K, bedding within 3.8·10⁻⁹, adaptation
//!   factor within 1.9·10⁻⁷, ± uncertainty within 3.8·10⁻⁷ of reading.
//!
//! ```
//! use clampwise_core::estimator::{Combination, ContactState};
//! use clampwise_core::friction::{FrictionParams, MuTable};
//! use clampwise_core::geometry::{Annulus, Contact};
//! use clampwise_tests::f64_model::friction::FrictionModel;
//! use clampwise_tests::f64_model::pipeline::{PipelineInputs, PipelineModel, PipelineParts};
//! use clampwise_core::thermal::{Cooling, ThermalParams};
//! use clampwise_core::wear::WearParams;
//!
//! let params = FrictionParams {
//!     static_to_kinetic: 1.2, stick_speed: 0.05, stick_hysteresis: 0.04,
//!     transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0,
//! };
//! let friction = FrictionModel::new([0.0, 400.0], [0.0, 200.0], [[0.30, 0.30], [0.30, 0.30]], &params);
//! let mut model = PipelineModel::new(PipelineParts {
//!     sample_period: 1e-3,
//!     contact: Contact::new(Annulus::new(0.060, 0.100)?, 6, None)?,
//!     friction,
//!     thermal: ThermalParams {
//!         rotor_mass: 8.0, rotor_specific_heat: 460.0, rotor_share: 0.9,
//!         cooling: Cooling::TimeConstant(613.0), ambient: 20.0, lining: None,
//!         fade_warning: 350.0, over_temperature: 500.0, flag_hysteresis: 10.0, measured: None,
//!     },
//!     wear: WearParams {
//!         bedding_energy: 5e6, specific_wear_rate: 4e-14, lining_area: 8e-3,
//!         initial_thickness: 0.010, minimum_thickness: 0.002,
//!     },
//!     adapt: None,
//!     touch_force: 100.0,
//!     adapt_min_force: 500.0,
//!     mu_tolerance: 0.2,
//!     radius_tolerance: 0.01,
//!     combination: Combination::WorstCase,
//! });
//! let e = model.step(&PipelineInputs::slipping(10_000.0, 100.0, 50.0));
//! assert_eq!(e.state, ContactState::Slipping);
//! // New lining (uniform pressure): annulus check vector [calc: T = N·μ·F·r_up,
//! // Shigley ch. 16], 6 × 245.00 N·m.
//! assert!((e.torque.unwrap() + 1470.0).abs() < 1e-9);
//! # Ok::<(), clampwise_core::geometry::GeometryError>(())
//! ```

use clampwise_core::config::{DeviceConfig, Tables};
use clampwise_core::estimator::{Combination, ContactState};
use clampwise_core::geometry::Contact;
use clampwise_core::thermal::ThermalParams;
use clampwise_core::wear::WearParams;

use super::friction::FrictionModel;
use super::thermal::ThermalModel;
use super::wear::WearModel;

/// Largest magnitude of a normalised torque (φ, y) and of the relative force tolerance: the
/// adaptation and the uncertainty saturate there, as the core does (the edge of its Q2.30
/// format).
const NORMALISED_MAX: f64 = 2.0;
/// Largest innovation y − φ·k one RLS step acts on, as in [`clampwise_core::adapt`].
const INNOVATION_MAX: f64 = 4.0;

/// Settings of the f64 adaptation: those of [`clampwise_core::adapt::AdaptConfig::new`], in SI
/// units.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RlsParams {
    /// Lower end of the band of the correction factor k (0 < k_min ≤ 1).
    pub min_factor: f64,
    /// Upper end of the band (1 ≤ k_max < 2).
    pub max_factor: f64,
    /// Forgetting factor λ (0.9…1).
    pub forgetting_factor: f64,
    /// Torque the model and reference torques are normalised by, N·m (> 0).
    pub torque_full_scale: f64,
    /// Least |T₀|/T_fs for an update.
    pub min_excitation: f64,
    /// Initial covariance P₀ (normalised units).
    pub initial_covariance: f64,
    /// Least covariance (keeps the estimator alert).
    pub min_covariance: f64,
    /// Largest covariance (stops wind-up).
    pub max_covariance: f64,
}

impl RlsParams {
    /// The band, λ, full scale (N·m) and minimum excitation as given to
    /// [`clampwise_core::adapt::AdaptConfig::new`], with the covariance settings that
    /// constructor uses: P₀ = 1, P ∈ [10⁻⁶, 1.9]. Not validated (a reference takes what it is given).
    pub fn new(
        min_factor: f64,
        max_factor: f64,
        forgetting_factor: f64,
        torque_full_scale: f64,
        min_excitation: f64,
    ) -> Self {
        Self {
            min_factor,
            max_factor,
            forgetting_factor,
            torque_full_scale,
            min_excitation,
            initial_covariance: 1.0,
            min_covariance: 1e-6,
            max_covariance: 1.9,
        }
    }
}

/// What one f64 adaptation step did.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RlsSample {
    /// Correction factor after this step.
    pub factor: f64,
    /// The factor was held (gate closed, no reference, too little excitation).
    pub frozen: bool,
    /// The update wanted to leave the band and was clamped to it.
    pub at_band_limit: bool,
}

/// Scalar recursive least squares with exponential forgetting, in f64
/// [pub: Åström & Wittenmark, *Adaptive Control*, 2nd ed., §2.2 — equation numbers mem]:
///
/// ```text
/// φ = T₀/T_fs,  y = T_ref/T_fs          (each saturating at ±2)
/// K = P·φ / (λ + φ²·P)
/// k ← clamp(k + K·clamp(y − φ·k, ±4), k_min, k_max)
/// P ← clamp((P − K·φ·P) / λ, P_min, P_max)
/// ```
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct RlsModel {
    p: RlsParams,
    /// Correction factor k on μ.
    pub factor: f64,
    /// Covariance P (normalised units).
    pub covariance: f64,
}

impl RlsModel {
    /// k = 1, P = P₀.
    pub fn new(p: &RlsParams) -> Self {
        Self {
            p: *p,
            factor: 1.0,
            covariance: p.initial_covariance,
        }
    }

    /// One step with model torque `model` (N·m, k = 1) and an optional reference torque
    /// (N·m); `gate_open` when slipping with enough force and healthy sensors.
    pub fn update(&mut self, model: f64, reference: Option<f64>, gate_open: bool) -> RlsSample {
        let held = RlsSample {
            factor: self.factor,
            frozen: true,
            at_band_limit: false,
        };
        let (Some(reference), true) = (reference, gate_open) else {
            return held;
        };
        let fs = self.p.torque_full_scale;
        let phi = (model / fs).clamp(-NORMALISED_MAX, NORMALISED_MAX);
        if phi.abs() < self.p.min_excitation {
            return held;
        }
        let y = (reference / fs).clamp(-NORMALISED_MAX, NORMALISED_MAX);
        let (k, p, lambda) = (self.factor, self.covariance, self.p.forgetting_factor);
        let gain = p * phi / (lambda + phi * phi * p);
        let innovation = (y - phi * k).clamp(-INNOVATION_MAX, INNOVATION_MAX);
        let k_new = k + gain * innovation;
        let k_bounded = k_new.clamp(self.p.min_factor, self.p.max_factor);
        self.factor = k_bounded;
        self.covariance =
            ((p - gain * phi * p) / lambda).clamp(self.p.min_covariance, self.p.max_covariance);
        RlsSample {
            factor: k_bounded,
            frozen: false,
            at_band_limit: !(self.p.min_factor..=self.p.max_factor).contains(&k_new),
        }
    }
}

/// The parts of a [`PipelineModel`], in SI units.
#[derive(Clone, Debug)]
pub struct PipelineParts<'a, const NT: usize, const NV: usize> {
    /// Sample period, s.
    pub sample_period: f64,
    /// The friction contact: faces, shape, cone; r_e comes from it at each bedding.
    pub contact: Contact<'a>,
    /// μ model (with its stick/slip state).
    pub friction: FrictionModel<NT, NV>,
    /// Thermal parameters (ambient, capacities, cooling); stepped at `sample_period`.
    pub thermal: ThermalParams,
    /// Wear parameters; stepped at `sample_period`.
    pub wear: WearParams,
    /// Adaptation, when configured.
    pub adapt: Option<RlsParams>,
    /// Touch force, N: below it the contact is released.
    pub touch_force: f64,
    /// Least clamp force for the adaptation to learn, N.
    pub adapt_min_force: f64,
    /// Relative tolerance of μ.
    pub mu_tolerance: f64,
    /// Relative tolerance of r_e.
    pub radius_tolerance: f64,
    /// How the relative tolerances combine.
    pub combination: Combination,
}

impl<'a, const NT: usize, const NV: usize> PipelineParts<'a, NT, NV> {
    /// The parts of the reference for a fixed-point device: μ table, thresholds, limits and
    /// tolerances taken exactly as f64 from `cfg` (so only the arithmetic differs); the
    /// geometry, thermal and wear models (which the device holds only as fixed-point
    /// coefficients) from their SI parameters, and the adaptation from `adapt`.
    pub fn from_device<const C: usize, const NF: usize, const NB: usize>(
        cfg: &DeviceConfig<Tables<NF, NB, NT, NV>, C>,
        contact: Contact<'a>,
        thermal: &ThermalParams,
        wear: &WearParams,
        adapt: Option<RlsParams>,
    ) -> Self {
        Self {
            sample_period: cfg.sample_period().to_num(),
            contact,
            friction: FrictionModel::from_config(cfg.tables().friction()),
            thermal: *thermal,
            wear: *wear,
            adapt,
            touch_force: cfg.limits().touch_force.to_num(),
            adapt_min_force: cfg.limits().adapt_min_force.to_num(),
            mu_tolerance: cfg.tolerances().mu.to_num(),
            radius_tolerance: cfg.tolerances().radius.to_num(),
            combination: cfg.tolerances().combination,
        }
    }
}

/// One sample of inputs to the reference.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PipelineInputs {
    /// Conditioned clamp force, N, or `None` when no force is available.
    pub clamp_force: Option<f64>,
    /// ± uncertainty of the clamp force, N (≥ 0).
    pub force_uncertainty: f64,
    /// The force comes from healthy sensors (gates the adaptation).
    pub sensors_healthy: bool,
    /// Slip speed ω_in − ω_out, rad/s.
    pub slip_speed: f64,
    /// Reference torque for the adaptation, N·m, signed as the estimate's torque.
    pub reference_torque: Option<f64>,
}

impl PipelineInputs {
    /// Healthy force `clamp_force` (N) with uncertainty `force_uncertainty` (N) at
    /// `slip_speed` (rad/s), no reference torque.
    pub fn slipping(clamp_force: f64, slip_speed: f64, force_uncertainty: f64) -> Self {
        Self {
            clamp_force: Some(clamp_force),
            force_uncertainty,
            sensors_healthy: true,
            slip_speed,
            reference_torque: None,
        }
    }
}

/// One sample of output, mirroring [`clampwise_core::estimator::Estimate`] in f64.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PipelineEstimate {
    /// Friction torque, N·m, opposing slip; `None` while holding or without force.
    pub torque: Option<f64>,
    /// n·μ_s·F·r_e (with the correction), N·m; `None` without force.
    pub holding_capacity: Option<f64>,
    /// ± uncertainty of the torque (or of the capacity while holding), N·m; infinite without
    /// force.
    pub uncertainty: f64,
    /// μ used (kinetic while slipping or released, static while holding), corrected.
    pub mu: f64,
    /// Lever arm per face, m (r_e/sin α for a cone); 0 without force.
    pub effective_radius: f64,
    /// Clamp force used, N (≥ 0; 0 without force).
    pub clamp_force: f64,
    /// Lining temperature after this sample, °C.
    pub lining_temperature: f64,
    /// Bedding after this sample, 0…1.
    pub bedding: f64,
    /// Lining thickness lost after this sample, m.
    pub wear: f64,
    /// Correction factor on μ used this sample.
    pub correction: f64,
    /// Contact state.
    pub state: ContactState,
    /// The μ table was entered outside its breakpoints.
    pub clamped: bool,
    /// The adaptation held its factor (or is not configured).
    pub adaptation_frozen: bool,
    /// The adaptation pressed against its band.
    pub adaptation_at_limit: bool,
}

/// The f64 pipeline with its own state.
#[derive(Clone, Debug)]
pub struct PipelineModel<'a, const NT: usize, const NV: usize> {
    dt: f64,
    contact: Contact<'a>,
    faces: f64,
    friction: FrictionModel<NT, NV>,
    thermal: ThermalModel,
    wear: WearModel,
    adapt: Option<RlsModel>,
    touch_force: f64,
    adapt_min_force: f64,
    mu_tolerance: f64,
    radius_tolerance: f64,
    combination: Combination,
}

impl<'a, const NT: usize, const NV: usize> PipelineModel<'a, NT, NV> {
    /// A new lining at ambient temperature, holding, k = 1.
    pub fn new(parts: PipelineParts<'a, NT, NV>) -> Self {
        let ambient = parts.thermal.ambient;
        Self::with_condition(parts, ambient, 0.0)
    }

    /// Rotor and lining at `lining_temperature` (°C), `energy` (J) dissipated since new: the
    /// counterpart of [`clampwise_core::estimator::Estimator::restore`] from a record holding
    /// [`clampwise_core::thermal::ThermalState::with_temperatures`] and
    /// [`clampwise_core::wear::WearState::with_history`].
    pub fn with_condition(
        parts: PipelineParts<'a, NT, NV>,
        lining_temperature: f64,
        energy: f64,
    ) -> Self {
        let mut thermal = ThermalModel::new(&parts.thermal);
        thermal.rotor = lining_temperature;
        thermal.lining = lining_temperature;
        Self {
            dt: parts.sample_period,
            contact: parts.contact,
            faces: f64::from(parts.contact.faces()),
            friction: parts.friction,
            thermal,
            wear: WearModel::with_energy(&parts.wear, energy.max(0.0)),
            adapt: parts.adapt.as_ref().map(RlsModel::new),
            touch_force: parts.touch_force,
            adapt_min_force: parts.adapt_min_force,
            mu_tolerance: parts.mu_tolerance,
            radius_tolerance: parts.radius_tolerance,
            combination: parts.combination,
        }
    }

    /// The adaptation's state, when configured.
    pub fn adaptation(&self) -> Option<&RlsModel> {
        self.adapt.as_ref()
    }

    /// ± uncertainty of `magnitude` (N·m) from the relative tolerances of μ and r_e and the
    /// torque `force_term` (N·m) the force's uncertainty carries: worst case
    /// T·(δμ + δr + δμ·δr) + T_U·(1 + δμ)(1 + δr), or √((T·δμ)² + T_U² + (T·δr)²).
    fn uncertainty(&self, magnitude: f64, force_term: f64) -> f64 {
        let (dmu, dr) = (self.mu_tolerance.abs(), self.radius_tolerance.abs());
        let (t, tu) = (magnitude.abs(), force_term.abs());
        match self.combination {
            Combination::WorstCase => t * (dmu + dr + dmu * dr) + tu * (1.0 + dmu) * (1.0 + dr),
            Combination::RootSumSquare => ((t * dmu).powi(2) + tu * tu + (t * dr).powi(2)).sqrt(),
        }
    }

    /// One sample.
    pub fn step(&mut self, inputs: &PipelineInputs) -> PipelineEstimate {
        let v = inputs.slip_speed;
        let lining_before = self.thermal.lining;
        // The correction multiplies μ after the table, as in the estimator.
        let fric = self.friction.step(v, lining_before, 1.0);
        let k = self.adapt.map_or(1.0, |a| a.factor);
        let bedding_before = self.wear.output().bedding;

        let Some(force) = inputs.clamp_force else {
            self.thermal.step(self.dt, 0.0);
            let w = self.wear.output();
            return PipelineEstimate {
                torque: None,
                holding_capacity: None,
                uncertainty: f64::INFINITY,
                mu: 0.0,
                effective_radius: 0.0,
                clamp_force: 0.0,
                lining_temperature: self.thermal.lining,
                bedding: w.bedding,
                wear: w.thickness_loss,
                correction: k,
                state: ContactState::Unavailable,
                clamped: fric.clamped,
                adaptation_frozen: true,
                adaptation_at_limit: false,
            };
        };
        let force = force.max(0.0);
        let lever_arm = self
            .contact
            .lever_arm(bedding_before.clamp(0.0, 1.0))
            .unwrap_or(f64::NAN);

        let per_unit_mu = self.faces * force * lever_arm;
        let kinetic = k * fric.mu_kinetic * per_unit_mu;
        let capacity = k * fric.mu_static * per_unit_mu;
        let uncorrected = fric.mu_kinetic * per_unit_mu;
        let direction = f64::from(fric.direction);

        let (state, torque, mu, friction_torque) = if force < self.touch_force {
            (
                ContactState::Released,
                Some(fric.drag_torque),
                fric.mu_kinetic,
                0.0,
            )
        } else if fric.slipping {
            let t = direction * kinetic;
            (
                ContactState::Slipping,
                Some(t + fric.drag_torque),
                fric.mu_kinetic,
                t,
            )
        } else {
            (ContactState::Holding, None, fric.mu_static, 0.0)
        };

        // Friction and drag heat the lining; only friction wears and beds it.
        let power = ((friction_torque + fric.drag_torque) * v).abs();
        self.thermal.step(self.dt, power);
        let w = self.wear.step(self.dt, (friction_torque * v).abs());

        let gate = state == ContactState::Slipping
            && force >= self.adapt_min_force
            && inputs.sensors_healthy;
        let (frozen, at_limit) = match self.adapt.as_mut() {
            Some(a) => {
                let out = a.update(direction * uncorrected, inputs.reference_torque, gate);
                (out.frozen, out.at_band_limit)
            }
            None => (false, false),
        };

        let per_unit_force = self.faces * k * lever_arm;
        let u_f = inputs.force_uncertainty.abs();
        let (reported, force_term) = match state {
            ContactState::Holding => (capacity, fric.mu_static * u_f * per_unit_force),
            ContactState::Released => (
                fric.drag_torque,
                fric.mu_static.max(fric.mu_kinetic) * (force + u_f) * per_unit_force,
            ),
            _ => (
                torque.unwrap_or(0.0),
                // The blend's span near zero slip is added like the force term.
                (fric.mu_kinetic * u_f + fric.transition_span * force) * per_unit_force,
            ),
        };
        PipelineEstimate {
            torque,
            holding_capacity: Some(capacity),
            uncertainty: self.uncertainty(reported, force_term),
            mu: mu * k,
            effective_radius: lever_arm,
            clamp_force: force,
            lining_temperature: self.thermal.lining,
            bedding: w.bedding,
            wear: w.thickness_loss,
            correction: k,
            state,
            clamped: fric.clamped,
            adaptation_frozen: frozen,
            adaptation_at_limit: at_limit,
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    #[test]
    fn rls_converges_to_a_known_offset_and_stays_in_band() {
        // The lining gives 10 % more torque than the table; with λ = 0.995 the factor settles
        // on 1.10 (the same synthetic case as the fixed-point doctest of `adapt`).
        let mut rls = RlsModel::new(&RlsParams::new(0.8, 1.2, 0.995, 2000.0, 0.05));
        for _ in 0..2000 {
            rls.update(500.0, Some(550.0), true);
        }
        assert!((rls.factor - 1.10).abs() < 1e-6, "{}", rls.factor);
        // A reference far outside the band drives k to its edge, pins it there and says so.
        let mut out = rls.update(500.0, Some(5000.0), true);
        for _ in 0..200 {
            out = rls.update(500.0, Some(5000.0), true);
            assert!(out.factor <= 1.2);
        }
        assert!(out.at_band_limit);
        assert_eq!(out.factor, 1.2);
        // Gate closed, no reference, too little excitation: held.
        assert!(rls.update(500.0, Some(550.0), false).frozen);
        assert!(rls.update(500.0, None, true).frozen);
        assert!(rls.update(10.0, Some(11.0), true).frozen);
    }
}
