//! An independent f64 plant model of the device, for synthetic traces.
//!
//! It shares no code with the core or with [`crate::build_core`]: its effective radius comes
//! from its own Gauss–Legendre integration over the pad ([`geometry`]), its μ from its own
//! bilinear interpolation of a truth table, its temperature from an exact exponential step of
//! the lumped model C·dT/dt = γ·P − C·(T − T∞)/τ [pub: Shigley ch. 16, lumped rotor; Day
//! ch. 8, Newtonian cooling], and its bedding from bedding = 1 − (1 − b₀)·exp(−E/E_bed).
//! Sensor readings are the true force through the inverse calibration, plus seeded Gaussian
//! noise, rounded to counts, held within the rails, with injected [`faults`].
//!
//! Speeds and command follow the [`scenario`]; the plant does not integrate drum dynamics.
//! While holding (|slip| below half the configured stick speed) the friction torque is the
//! load torque, bounded by the true static capacity.

pub mod faults;
pub mod geometry;
pub mod rng;
pub mod scenario;

use crate::schema::{DeviceKind, DeviceSpec, MuTableSpec};
use faults::{Fault, FaultKind, SPIKE_PERIOD_SAMPLES};
use rng::Rng;
use scenario::ScenarioPoint;

/// What may differ between the plant and the config (the "truth" of a synthetic run).
#[derive(Debug, Clone)]
pub struct PlantOptions {
    /// RNG seed.
    pub seed: u64,
    /// True μ = config table × this factor.
    pub mu_scale: f64,
    /// Extra relative fall of μ per K above the fade threshold (μ drift beyond the table).
    pub mu_fade_per_k: f64,
    /// A different truth μ table (same or other breakpoints) instead of the config's.
    pub truth_mu: Option<MuTableSpec>,
    /// Gaussian force noise on each channel, N (σ).
    pub force_noise_n: f64,
    /// Thermocouple noise, K (σ).
    pub temp_noise_k: f64,
    /// Reference torque noise: σ = abs + ratio·|T|.
    pub torque_noise_abs_nm: f64,
    /// See `torque_noise_abs_nm`.
    pub torque_noise_ratio: f64,
    /// Actuator time constant, s (command → clamp force).
    pub actuator_tau_s: f64,
    /// Full clamp force at command 1, N (from `[actuator]` when absent).
    pub full_force_n: Option<f64>,
    /// Injected sensor faults.
    pub faults: Vec<Fault>,
}

impl Default for PlantOptions {
    fn default() -> Self {
        Self {
            seed: 1,
            mu_scale: 1.0,
            mu_fade_per_k: 0.0,
            truth_mu: None,
            force_noise_n: 30.0,
            temp_noise_k: 0.5,
            torque_noise_abs_nm: 5.0,
            torque_noise_ratio: 0.002,
            actuator_tau_s: 0.05,
            full_force_n: None,
            faults: Vec::new(),
        }
    }
}

/// One plant output sample: what a logger records, plus the truth for diagnosis.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlantSample {
    /// Time, s.
    pub t_s: f64,
    /// ADC counts per channel (`None` = no reading).
    pub counts: [Option<i64>; 4],
    /// Valid bits.
    pub valid: [bool; 4],
    /// Input speed, rad/s.
    pub omega_in: f64,
    /// Output speed, rad/s.
    pub omega_out: f64,
    /// Command, 0 … 1.
    pub command: f64,
    /// Thermocouple, °C (0.1 K resolution).
    pub temp_meas_c: f64,
    /// Ambient, °C.
    pub ambient_c: f64,
    /// Reference torque (torque flange), N·m.
    pub torque_ref_nm: f64,
    /// True clamp force, N.
    pub true_force_n: f64,
    /// True μ (kinetic).
    pub true_mu: f64,
    /// True effective radius, m.
    pub true_radius_m: f64,
    /// True lining temperature, °C.
    pub true_temp_c: f64,
    /// True bedding.
    pub true_bedding: f64,
    /// True friction torque on the rotor, N·m, before the reference sensor's noise.
    pub true_torque_nm: f64,
    /// True holding capacity N·μ_s·F·r_e, N·m, with the plant's own μ_s = static ratio × μ at
    /// the present slip speed (the capacity the plant holds its load with).
    pub true_capacity_nm: f64,
    /// Whether the plant holds (|slip| at most half the config's stick speed).
    pub true_holding: bool,
    /// Code of an active fault (0 = none), see [`Fault::code`].
    pub fault_code: u32,
}

/// The plant.
#[derive(Debug, Clone)]
pub struct Plant {
    dt: f64,
    faces: f64,
    r_up: f64,
    r_uw: f64,
    /// A drum or band contact's torque model (the lever arm then follows μ, not bedding).
    gain: Option<crate::build_core::GainModel>,
    mu: MuTableSpec,
    opts: PlantOptions,
    static_ratio: f64,
    stick: f64,
    drag: (f64, f64),
    heat_capacity: f64,
    tau: f64,
    gamma: f64,
    ambient: f64,
    fade: f64,
    bedding_energy: f64,
    bedding0: f64,
    wear_rate: f64,
    pad_area: f64,
    sensors: Vec<(f64, f64, i64, i64)>,
    full_force: f64,
    brake: bool,
    // state
    step: u64,
    force: f64,
    temp: f64,
    energy: f64,
    wear_m: f64,
    stuck: [Option<i64>; 4],
    rng: Rng,
}

/// Bilinear interpolation of a μ table, clamped at the edges (the plant's own).
pub fn mu_of(t: &MuTableSpec, temp: f64, speed: f64) -> f64 {
    // Indices come from the checks just before each use (n ≥ 2, i + 1 < n).
    #[allow(clippy::indexing_slicing)]
    fn bracket(xs: &[f64], x: f64) -> (usize, usize, f64) {
        let n = xs.len();
        if n <= 1 || x <= xs[0] {
            return (0, 0, 0.0);
        }
        if x >= xs[n - 1] {
            return (n - 1, n - 1, 0.0);
        }
        let i = xs.windows(2).position(|w| x < w[1]).unwrap_or(0);
        (i, i + 1, (x - xs[i]) / (xs[i + 1] - xs[i]))
    }
    let (i0, i1, fx) = bracket(&t.temperature_c, temp);
    let (j0, j1, fy) = bracket(&t.slip_speed_rad_s, speed);
    let z = |i: usize, j: usize| {
        t.values
            .get(i)
            .and_then(|r| r.get(j))
            .copied()
            .unwrap_or(0.0)
    };
    let a = z(i0, j0) + fy * (z(i0, j1) - z(i0, j0));
    let b = z(i1, j0) + fy * (z(i1, j1) - z(i1, j0));
    a + fx * (b - a)
}

impl Plant {
    /// A plant for a validated config.
    ///
    /// # Errors
    /// A message when the geometry cannot be integrated.
    pub fn new(c: &DeviceSpec, opts: PlantOptions) -> Result<Self, String> {
        let gain = if c.contact.is_nonlinear_in_mu() {
            Some(crate::build_core::GainModel::from_spec(&c.contact).map_err(|e| e.to_string())?)
        } else {
            None
        };
        let (r_up, r_uw) = match &gain {
            Some(g) => {
                let r = g.lever_arm(0.0).map_err(|e| e.to_string())?;
                (r, r)
            }
            None => geometry::effective_radii(&c.contact)?,
        };
        let th = &c.thermal;
        let tau = match (
            th.cooling_time_constant_s,
            th.heat_transfer_w_per_m2_k,
            th.cooling_area_m2,
        ) {
            (Some(t), _, _) => t,
            (None, Some(h), Some(a)) => th.rotor_heat_capacity_j_per_k / (h * a),
            _ => return Err("thermal: no cooling given".into()),
        };
        let full_force = opts
            .full_force_n
            .or(c
                .actuator
                .as_ref()
                .map(|a| a.force_n_per_command + a.force_offset_n))
            .unwrap_or(c.limits.max_clamp_force_n * 0.75);
        Ok(Self {
            dt: c.device.sample_period_s,
            faces: f64::from(c.contact.faces),
            r_up,
            r_uw,
            gain,
            mu: opts
                .truth_mu
                .clone()
                .unwrap_or_else(|| c.friction.mu.clone()),
            static_ratio: c.friction.static_ratio,
            // Half the estimator's stick speed: the estimator's holding band (with its
            // hysteresis) then contains the plant's, so a sample the plant holds is never one the
            // estimator reports as slipping at the threshold's edge.
            stick: 0.5 * c.friction.stick_speed_rad_s,
            drag: (
                c.friction.drag_torque_nm,
                c.friction.drag_viscous_nm_per_rad_s,
            ),
            heat_capacity: th.rotor_heat_capacity_j_per_k,
            tau,
            gamma: th.heat_into_rotor_ratio,
            ambient: th.ambient_c,
            fade: th.fade_c,
            bedding_energy: c.wear.bedding_energy_j,
            // The config's starting friction work sets both the starting bedding and the wear.
            bedding0: -libm::expm1(-c.wear.initial_energy_j / c.wear.bedding_energy_j),
            wear_rate: c.wear.specific_wear_rate_m3_per_j,
            pad_area: c.wear.pad_area_m2,
            sensors: c
                .sensors
                .iter()
                .map(|s| {
                    (
                        s.gain_n_per_count,
                        s.offset_counts,
                        s.rail_low_counts,
                        s.rail_high_counts,
                    )
                })
                .collect(),
            full_force,
            brake: c.device.kind == DeviceKind::Brake,
            step: 0,
            force: 0.0,
            temp: th.initial_temperature_c.unwrap_or(th.ambient_c),
            energy: 0.0,
            wear_m: c.wear.specific_wear_rate_m3_per_j * c.wear.initial_energy_j
                / (f64::from(c.contact.faces) * c.wear.pad_area_m2),
            stuck: [None; 4],
            rng: Rng::new(opts.seed),
            opts,
        })
    }

    /// Effective radii of the plant's integration (uniform pressure, uniform wear), m.
    pub fn radii(&self) -> (f64, f64) {
        (self.r_up, self.r_uw)
    }

    /// The lever arm at μ and bedding: r_e between the two pressure models, or a drum or band
    /// contact's g(μ)/μ. At or beyond a contact's locking μ the plant holds g just below it
    /// (the estimator flags `SELF_LOCKING` long before).
    fn lever_arm(&self, mu: f64, bedding: f64) -> f64 {
        match &self.gain {
            Some(g) => {
                let mu = g
                    .locking_coefficient()
                    .map_or(mu, |lock| mu.min(lock * (1.0 - 1e-6)));
                g.lever_arm(mu).unwrap_or(self.r_up)
            }
            None => (1.0 - bedding) * self.r_up + bedding * self.r_uw,
        }
    }

    /// Lining wear so far, m.
    pub fn wear_m(&self) -> f64 {
        self.wear_m
    }

    /// Advance one sample period under the scenario inputs.
    pub fn step(&mut self, sp: &ScenarioPoint) -> PlantSample {
        // Sample counts stay far below 2⁵³.
        #[allow(clippy::cast_precision_loss)]
        let t = self.step as f64 * self.dt;
        self.step += 1;
        let target = (sp.command.clamp(0.0, 1.5)) * self.full_force;
        let k = 1.0 - libm::exp(-self.dt / self.opts.actuator_tau_s.max(1e-6));
        self.force += (target - self.force) * k;
        let force = self.force.max(0.0);

        let omega_out = if self.brake { 0.0 } else { sp.omega_out };
        let slip = sp.omega_in - omega_out;
        let bedding = 1.0 - (1.0 - self.bedding0) * libm::exp(-self.energy / self.bedding_energy);
        let fade = 1.0 - self.opts.mu_fade_per_k * (self.temp - self.fade).max(0.0);
        let mu = mu_of(&self.mu, self.temp, slip.abs()) * self.opts.mu_scale * fade.max(0.05);
        let r_e = self.lever_arm(mu, bedding);
        let kinetic = self.faces * mu * force * r_e;
        let capacity = if self.gain.is_some() {
            let mu_static = mu * self.static_ratio;
            self.faces * mu_static * force * self.lever_arm(mu_static, bedding)
        } else {
            kinetic * self.static_ratio
        };
        let holding = slip.abs() <= self.stick;
        let torque = if holding {
            (-sp.load_nm).clamp(-capacity, capacity)
        } else {
            -slip.signum() * (kinetic + self.drag.0 + self.drag.1 * slip.abs())
        };
        let power = (torque * slip).abs();
        let decay = libm::exp(-self.dt / self.tau);
        self.temp = self.ambient
            + (self.temp - self.ambient) * decay
            + self.gamma * power * self.tau / self.heat_capacity * (1.0 - decay);
        self.energy += power * self.dt;
        self.wear_m += self.wear_rate * power * self.dt / self.faces / self.pad_area;

        let (mut raw, ok, stuck_now, mut fault_code) = self.read_channels(t, force);
        self.copy_channels(t, &mut raw, &mut fault_code);
        let (counts, valid) = self.quantise(&raw, &ok, &stuck_now);
        let temp_meas =
            ((self.temp + self.opts.temp_noise_k * self.rng.normal()) * 10.0).round() / 10.0;
        let sigma = self.opts.torque_noise_abs_nm + self.opts.torque_noise_ratio * torque.abs();
        PlantSample {
            t_s: t,
            counts,
            valid,
            omega_in: sp.omega_in,
            omega_out,
            command: sp.command,
            temp_meas_c: temp_meas,
            ambient_c: self.ambient,
            torque_ref_nm: torque + sigma * self.rng.normal(),
            true_force_n: force,
            true_mu: mu,
            true_radius_m: r_e,
            true_temp_c: self.temp,
            true_bedding: bedding,
            true_torque_nm: torque,
            true_capacity_nm: capacity,
            true_holding: holding,
            fault_code,
        }
    }

    /// Pass 1, channel by channel (the random stream is drawn in the same order whatever the
    /// faults, except for `noise`): the reading in counts before rounding, with the channel's
    /// own faults; whether it reads, whether it is frozen; the code of the last active fault.
    fn read_channels(&mut self, t: f64, force: f64) -> ([f64; 4], [bool; 4], [bool; 4], u32) {
        let mut raw = [0.0; 4];
        let mut ok = [false; 4];
        let mut stuck_now = [false; 4];
        let mut fault_code = 0;
        for (ch, &(gain, offset, lo, hi)) in self.sensors.iter().enumerate() {
            let noise = self.opts.force_noise_n * self.rng.normal();
            let mut c = (force + noise) / gain + offset;
            let mut reading = true;
            let mut frozen = false;
            for f in self
                .opts
                .faults
                .iter()
                .filter(|f| f.channel == ch + 1 && f.active(t))
            {
                fault_code = f.code();
                match f.kind {
                    FaultKind::Stuck => frozen = true,
                    // The ADC rails are i32-range integers: exact in f64.
                    #[allow(clippy::cast_precision_loss)]
                    FaultKind::RailHigh => c = hi as f64,
                    #[allow(clippy::cast_precision_loss)]
                    FaultKind::RailLow => c = lo as f64,
                    FaultKind::Offset(v) => c += v,
                    FaultKind::Noise(s) => c += s * self.rng.normal(),
                    FaultKind::Dropout => reading = false,
                    FaultKind::Drift(rate) => c += rate * (t - f.start_s),
                    FaultKind::Gain(k) => c = offset + (c - offset) * k,
                    FaultKind::SignFlip => c = offset - (c - offset),
                    FaultKind::Spike(v) => {
                        if f.samples_since_start(t, self.dt) % SPIKE_PERIOD_SAMPLES == 0 {
                            c += v;
                        }
                    }
                    FaultKind::Flicker(n) => {
                        if (f.samples_since_start(t, self.dt) / u64::from(n)) % 2 == 0 {
                            reading = false;
                        }
                    }
                    // Pass 2.
                    FaultKind::Copy { .. } => {}
                }
            }
            if let (Some(r), Some(o), Some(s)) =
                (raw.get_mut(ch), ok.get_mut(ch), stuck_now.get_mut(ch))
            {
                (*r, *o, *s) = (c, reading, frozen);
            }
        }
        (raw, ok, stuck_now, fault_code)
    }

    /// Pass 2: copies read the other channel's pass-1 reading, as force, in their own
    /// calibration.
    fn copy_channels(&self, t: f64, raw: &mut [f64; 4], fault_code: &mut u32) {
        let own = *raw;
        for f in self.opts.faults.iter().filter(|f| f.active(t)) {
            if let FaultKind::Copy {
                source,
                offset_counts,
            } = f.kind
                && let (Some(&(g_src, off_src, _, _)), Some(&src), Some(&(gain, offset, _, _))) = (
                    self.sensors.get(source.wrapping_sub(1)),
                    own.get(source.wrapping_sub(1)),
                    self.sensors.get(f.channel.wrapping_sub(1)),
                )
                && let Some(r) = raw.get_mut(f.channel.wrapping_sub(1))
            {
                *fault_code = f.code();
                *r = (src - off_src) * g_src / gain + offset + offset_counts;
            }
        }
    }

    /// Pass 3: rounding, the rails, frozen readings, valid bits.
    fn quantise(
        &mut self,
        raw: &[f64; 4],
        ok: &[bool; 4],
        stuck_now: &[bool; 4],
    ) -> ([Option<i64>; 4], [bool; 4]) {
        let mut counts = [None; 4];
        let mut valid = [false; 4];
        for (ch, &(_, _, lo, hi)) in self.sensors.iter().enumerate() {
            let (c, reading_ok, frozen) = (
                raw.get(ch).copied().unwrap_or(0.0),
                ok.get(ch).copied().unwrap_or(false),
                stuck_now.get(ch).copied().unwrap_or(false),
            );
            #[allow(clippy::cast_precision_loss)]
            let (lo_f, hi_f) = (lo as f64, hi as f64);
            // Clamped to the rails, which lie in the i32 range.
            #[allow(clippy::cast_possible_truncation)]
            let reading = c.round().clamp(lo_f, hi_f) as i64;
            let slot = self.stuck.get_mut(ch);
            let reading = match (frozen, slot) {
                (true, Some(s)) => *s.get_or_insert(reading),
                (false, Some(s)) => {
                    *s = None;
                    reading
                }
                (_, None) => reading,
            };
            if let (Some(o), Some(v)) = (counts.get_mut(ch), valid.get_mut(ch)) {
                *o = if reading_ok { Some(reading) } else { None };
                *v = reading_ok;
            }
        }
        (counts, valid)
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::config::LoadedConfig;
    use approx::assert_relative_eq;

    fn demo() -> DeviceSpec {
        LoadedConfig::from_str(include_str!("../../configs/demo-hoist-brake.toml"), "d")
            .unwrap()
            .config
    }

    #[test]
    fn heating_matches_lumped_formula() {
        // [pub: Shigley ch. 16] ΔT = γ·E/(m·c) for a short stop (cooling negligible over 1 s
        // against τ = 60 s: [calc] relative effect ≈ t/(2τ) < 1 %).
        let c = demo();
        let mut p = Plant::new(
            &c,
            PlantOptions {
                force_noise_n: 0.0,
                torque_noise_abs_nm: 0.0,
                torque_noise_ratio: 0.0,
                ..PlantOptions::default()
            },
        )
        .unwrap();
        let sp = ScenarioPoint {
            omega_in: 2.0,
            omega_out: 0.0,
            command: 0.5,
            load_nm: 0.0,
        };
        let mut energy = 0.0;
        let mut last = p.step(&sp);
        for _ in 0..999 {
            last = p.step(&sp);
            energy += (last.torque_ref_nm * 2.0).abs() * c.device.sample_period_s;
        }
        let dt_expected = 0.9 * energy / 4000.0;
        assert_relative_eq!(last.true_temp_c - 25.0, dt_expected, max_relative = 0.02);
    }

    #[test]
    fn slip_torque_and_holding() {
        let c = demo();
        let mut p = Plant::new(
            &c,
            PlantOptions {
                force_noise_n: 0.0,
                torque_noise_abs_nm: 0.0,
                torque_noise_ratio: 0.0,
                actuator_tau_s: 1e-6,
                ..PlantOptions::default()
            },
        )
        .unwrap();
        let s = p.step(&ScenarioPoint {
            omega_in: 2.0,
            omega_out: 0.0,
            command: 0.5,
            load_nm: 0.0,
        });
        // [pub] T = N·μ·F·r_e, new pads (uniform pressure), μ(25 °C, 2 rad/s) from the table.
        let mu = mu_of(&c.friction.mu, 25.0, 2.0);
        assert_relative_eq!(
            s.torque_ref_nm,
            -2.0 * mu * 30_000.0 * p.radii().0,
            max_relative = 1e-4
        );
        let h = p.step(&ScenarioPoint {
            omega_in: 0.0,
            omega_out: 0.0,
            command: 0.5,
            load_nm: 5000.0,
        });
        assert_relative_eq!(h.torque_ref_nm, -5000.0, max_relative = 1e-9);
    }

    #[test]
    fn faults_act_on_their_channel() {
        let c = demo();
        let faults = vec![
            "stuck:2@0..1".parse().unwrap(),
            "dropout:1@0..1".parse().unwrap(),
        ];
        let mut p = Plant::new(
            &c,
            PlantOptions {
                faults,
                ..PlantOptions::default()
            },
        )
        .unwrap();
        let a = p.step(&ScenarioPoint {
            omega_in: 0.0,
            omega_out: 0.0,
            command: 0.5,
            load_nm: 0.0,
        });
        let b = p.step(&ScenarioPoint {
            omega_in: 0.0,
            omega_out: 0.0,
            command: 0.9,
            load_nm: 0.0,
        });
        assert_eq!(a.counts[1], b.counts[1]);
        assert_ne!(a.counts[2], b.counts[2]);
        assert_eq!((b.counts[0], b.valid[0]), (None, false));
    }

    fn quiet_plant(faults: &[&str]) -> Plant {
        Plant::new(
            &demo(),
            PlantOptions {
                force_noise_n: 0.0,
                actuator_tau_s: 1e-6,
                faults: faults.iter().map(|f| f.parse().unwrap()).collect(),
                ..PlantOptions::default()
            },
        )
        .unwrap()
    }

    const APPLIED: ScenarioPoint = ScenarioPoint {
        omega_in: 2.0,
        omega_out: 0.0,
        command: 0.5,
        load_nm: 0.0,
    };

    /// Force of channel `ch` (0-based) in the demo's calibration, N.
    fn force_of(s: &PlantSample, ch: usize) -> f64 {
        let c = demo();
        let cal = &c.sensors[ch];
        #[allow(clippy::cast_precision_loss)]
        let counts = s.counts[ch].unwrap() as f64;
        (counts - cal.offset_counts) * cal.gain_n_per_count
    }

    #[test]
    fn gain_sign_drift_and_copy_act_on_the_force_span() {
        // 30 kN true force (command 0.5 of 60 kN), noise off: each fault's effect in newtons
        // [calc] from F = (counts − offset)·gain.
        let mut p = quiet_plant(&[
            "gain:1@0..1=0.8",
            "sign:2@0..1",
            "drift:3@0..1=100000",
            "copy1:2@0.5..1=1000",
        ]);
        let a = p.step(&APPLIED);
        assert_relative_eq!(force_of(&a, 0), 24_000.0, epsilon = 0.02);
        assert_relative_eq!(force_of(&a, 1), -30_000.0, epsilon = 0.02);
        assert_relative_eq!(force_of(&a, 2), 30_000.0, epsilon = 0.02);
        for _ in 0..499 {
            p.step(&APPLIED);
        }
        let b = p.step(&APPLIED); // t = 0.5 s
        // Drift: 10⁵ counts/s × 0.5 s × 0.0102 N/count = 510 N.
        assert_relative_eq!(force_of(&b, 2), 30_510.0, epsilon = 0.02);
        // Copy of channel 1 (gain fault included) plus 1000 counts × 0.01 N/count.
        assert_relative_eq!(force_of(&b, 1), 24_010.0, epsilon = 0.02);
        assert_eq!(b.fault_code, 12);
    }

    #[test]
    fn spikes_and_flicker_follow_their_sample_pattern() {
        let mut p = quiet_plant(&["spike:1@0..1=50000", "flicker:2@0..1=3"]);
        let rows: Vec<PlantSample> = (0..110).map(|_| p.step(&APPLIED)).collect();
        let spiked: Vec<usize> = rows
            .iter()
            .enumerate()
            .filter(|(_, s)| force_of(s, 0) > 30_250.0)
            .map(|(i, _)| i)
            .collect();
        assert_eq!(spiked, vec![0, 50, 100]);
        let valid: Vec<bool> = rows.iter().take(12).map(|s| s.valid[1]).collect();
        assert_eq!(
            valid,
            [
                false, false, false, true, true, true, false, false, false, true, true, true
            ]
        );
        assert!(rows.iter().all(|s| s.valid[0] && s.valid[2]));
    }

    #[test]
    fn faults_leave_the_noise_of_the_fault_free_run() {
        // Same seed, with and without a gain fault on channel 1: channels 2 and 3 read the same
        // counts sample for sample (no fault kind but `noise` draws random numbers).
        let c = demo();
        let run = |faults: Vec<Fault>| {
            let mut p = Plant::new(
                &c,
                PlantOptions {
                    faults,
                    ..PlantOptions::default()
                },
            )
            .unwrap();
            (0..200).map(|_| p.step(&APPLIED)).collect::<Vec<_>>()
        };
        let clean = run(Vec::new());
        let faulty = run(vec![
            "gain:1@0..1=0.5".parse().unwrap(),
            "flicker:3@0..1=2".parse().unwrap(),
        ]);
        for (a, b) in clean.iter().zip(&faulty) {
            assert_eq!(a.counts[1], b.counts[1]);
            assert_eq!(a.true_torque_nm.to_bits(), b.true_torque_nm.to_bits());
        }
    }

    #[test]
    fn truth_holds_the_load_within_the_static_capacity() {
        // [pub] holding capacity = N·μ_s·F·r_e with μ_s = static ratio × μ; below it the
        // friction torque equals the load.
        let c = demo();
        let mut p = quiet_plant(&[]);
        let s = p.step(&ScenarioPoint {
            omega_in: 0.0,
            omega_out: 0.0,
            command: 0.5,
            load_nm: 5000.0,
        });
        let mu = mu_of(&c.friction.mu, 25.0, 0.0);
        assert_relative_eq!(
            s.true_capacity_nm,
            2.0 * 1.25 * mu * 30_000.0 * p.radii().0,
            max_relative = 1e-4
        );
        assert!(s.true_holding);
        assert_relative_eq!(s.true_torque_nm, -5000.0, max_relative = 1e-12);
        let slipping = p.step(&APPLIED);
        assert!(!slipping.true_holding);
    }
}
