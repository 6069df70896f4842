//! The same physics in plain `f32`, written the way a practitioner writes it for a core with an
//! FPU: floats everywhere, `libm` for `expf`/`sqrtf`, a first-order filter `y += α·(x − y)`,
//! tables searched by a loop and interpolated in f32, torque `n·μ·F·r_e`, explicit-Euler
//! thermal nodes, a scalar RLS. It is the step-cost peer of the benchmarks, **not** a second
//! estimator: its f32 energy sums stop growing after long duty (f32 has 24 bits) and its ± is
//! first-order. Never use it for control.
//!
//! It does the same work per sample as the fixed-point step of the same device: the same
//! channel count, calibration with temperature compensation, the per-channel checks of
//! [`crate::plain_diagnostics`] (valid bit, rails, range, rate, stuck, each debounced; hold of
//! the last accepted value; the vote's disagreement debounced), voting, fallback to the
//! actuator, saturation and degradation flags, stick/slip with hysteresis, the
//! static-to-kinetic blend, drag, the radius and μ tables, thermal, wear and bedding
//! (`1 − exp(−E/E₀)` at the sub-rate), the adaptation and the uncertainty (with the hold
//! allowance and the vote's spread).

use crate::plain_diagnostics::{PlainChannel, PlainLimits};
use clampwise_core::friction::FrictionParams;
use clampwise_core::thermal::{Cooling, ThermalParams};
use clampwise_core::wear::WearParams;

/// A 1-D f32 table, linear between breakpoints, clamped at the ends.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Table1F32<const N: usize> {
    /// Breakpoints, increasing.
    pub x: [f32; N],
    /// Values.
    pub y: [f32; N],
}

/// Index of the segment holding `v` and the fraction within it, clamped to the ends.
fn segment(axis: &[f32], v: f32) -> (usize, usize, f32) {
    let last = axis.len().saturating_sub(1);
    let at = |i: usize| axis.get(i).copied().unwrap_or(0.0);
    if v <= at(0) {
        return (0, 0, 0.0);
    }
    if v >= at(last) {
        return (last, last, 0.0);
    }
    let mut i = 0;
    while i + 1 < last && v >= at(i + 1) {
        i += 1;
    }
    (i, i + 1, (v - at(i)) / (at(i + 1) - at(i)))
}

impl<const N: usize> Table1F32<N> {
    /// y(x).
    pub fn lookup(&self, x: f32) -> f32 {
        let (i, j, t) = segment(&self.x, x);
        let y = |k: usize| self.y.get(k).copied().unwrap_or(0.0);
        y(i) + (y(j) - y(i)) * t
    }
}

/// A 2-D f32 table, bilinear, clamped at the edges.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Table2F32<const NX: usize, const NY: usize> {
    /// First-axis breakpoints.
    pub x: [f32; NX],
    /// Second-axis breakpoints.
    pub y: [f32; NY],
    /// Values, `z[i][j]` at `(x[i], y[j])`.
    pub z: [[f32; NY]; NX],
}

impl<const NX: usize, const NY: usize> Table2F32<NX, NY> {
    /// From f64 data.
    #[allow(clippy::cast_possible_truncation)]
    pub fn from_f64(x: &[f64; NX], y: &[f64; NY], z: &[[f64; NY]; NX]) -> Self {
        Self {
            x: x.map(|v| v as f32),
            y: y.map(|v| v as f32),
            z: z.map(|r| r.map(|v| v as f32)),
        }
    }

    /// z(x, y).
    pub fn lookup(&self, x: f32, y: f32) -> f32 {
        let (i0, i1, tx) = segment(&self.x, x);
        let (j0, j1, ty) = segment(&self.y, y);
        let z = |i: usize, j: usize| self.z.get(i).and_then(|r| r.get(j)).copied().unwrap_or(0.0);
        let a = z(i0, j0) + (z(i0, j1) - z(i0, j0)) * ty;
        let b = z(i1, j0) + (z(i1, j1) - z(i1, j0)) * ty;
        a + (b - a) * tx
    }
}

/// One sample of inputs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlainInputs<const C: usize> {
    /// Raw ADC counts.
    pub counts: [i32; C],
    /// Acquisition valid bits.
    pub valid: [bool; C],
    /// Input-shaft speed, rad/s.
    pub input_speed: f32,
    /// Output-shaft speed, rad/s.
    pub output_speed: f32,
    /// Actuator command.
    pub command: Option<f32>,
    /// Force-sensor temperature, °C.
    pub sensor_temperature: Option<f32>,
    /// Reference torque, N·m.
    pub reference_torque: Option<f32>,
}

/// Contact state.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum PlainState {
    /// Slipping.
    Slipping,
    /// Holding.
    Holding,
    /// Released.
    Released,
    /// No force.
    Unavailable,
}

/// Bits of [`PlainEstimate::flags`].
pub mod flag {
    /// Lining above the fade threshold.
    pub const FADE: u16 = 1 << 0;
    /// Above the over-temperature threshold.
    pub const OVER_TEMPERATURE: u16 = 1 << 1;
    /// Lining worn to its limit.
    pub const WORN: u16 = 1 << 2;
    /// Fewer channels used than the device has.
    pub const SENSOR_DEGRADED: u16 = 1 << 3;
    /// A channel at its rail, or the force above the device's maximum.
    pub const SATURATED: u16 = 1 << 4;
    /// The force is the actuator model's.
    pub const FALLBACK: u16 = 1 << 5;
    /// A channel stands on a held value.
    pub const HELD: u16 = 1 << 6;
}

/// One sample of output.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlainEstimate {
    /// Torque, N·m (`None` while holding or without force).
    pub torque: Option<f32>,
    /// Holding capacity, N·m.
    pub capacity: f32,
    /// ± uncertainty, N·m.
    pub uncertainty: f32,
    /// μ used.
    pub mu: f32,
    /// Effective radius, m.
    pub radius: f32,
    /// Clamp force, N.
    pub force: f32,
    /// Lining temperature, °C.
    pub lining_temperature: f32,
    /// Bedding 0…1.
    pub bedding: f32,
    /// Thickness lost, m.
    pub wear: f32,
    /// Adaptation factor.
    pub correction: f32,
    /// Contact state.
    pub state: PlainState,
    /// [`flag`] bits.
    pub flags: u16,
}

/// Temperature compensation of a channel.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlainCompensation {
    /// Calibration temperature, °C.
    pub reference: f32,
    /// Clamp range, °C.
    pub min: f32,
    /// Clamp range, °C.
    pub max: f32,
    /// Zero shift, N/K.
    pub zero_per_kelvin: f32,
    /// Span change, 1/K.
    pub span_per_kelvin: f32,
}

/// RLS adaptation settings.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlainAdapt {
    /// Band of the correction factor.
    pub min: f32,
    /// Band of the correction factor.
    pub max: f32,
    /// Forgetting factor λ.
    pub lambda: f32,
    /// Torque normalisation, N·m.
    pub full_scale: f32,
    /// Smallest normalised model torque that updates.
    pub min_excitation: f32,
    /// Clamp force below which it does not learn, N.
    pub min_force: f32,
}

/// The configuration, all f32.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlainConfig<
    const C: usize,
    const NF: usize,
    const NB: usize,
    const NT: usize,
    const NV: usize,
> {
    /// N per count.
    pub gain: f32,
    /// N at zero counts.
    pub offset: f32,
    /// Temperature compensation.
    pub compensation: Option<PlainCompensation>,
    /// Filter coefficient α.
    pub alpha: f32,
    /// The channels' diagnostic limits.
    pub limits: PlainLimits,
    /// Voting tolerance, N.
    pub vote_tolerance: f32,
    /// Fallback N per command unit.
    pub fallback_gain: Option<f32>,
    /// Friction faces.
    pub faces: f32,
    /// Radius table (force × bedding), m.
    pub radius: Table2F32<NF, NB>,
    /// μ table (temperature × |slip speed|).
    pub mu: Table2F32<NT, NV>,
    /// μ_s / μ_k.
    pub static_ratio: f32,
    /// Stick/slip band edges, rad/s.
    pub slip_above: f32,
    /// Stick/slip band edges, rad/s.
    pub stick_below: f32,
    /// Transition speed, rad/s.
    pub transition_speed: f32,
    /// Viscous drag, N·m·s.
    pub viscous_drag: f32,
    /// No-load drag, N·m.
    pub no_load_drag: f32,
    /// Sample period, s.
    pub dt: f32,
    /// Thermal and wear models advanced every this many samples (as the fixed-point device).
    pub thermal_wear_every: u32,
    /// The thermal model's step, `dt` × `thermal_wear_every`, s.
    pub thermal_dt: f32,
    /// Rotor heat capacity, J/K.
    pub c_rotor: f32,
    /// Lining heat capacity, J/K (`None`: single node).
    pub c_lining: Option<f32>,
    /// Lining-rotor conductance, W/K.
    pub conductance: f32,
    /// Rotor cooling h·A, W/K.
    pub cooling: f32,
    /// Rotor share of the heat.
    pub share: f32,
    /// Ambient, °C.
    pub ambient: f32,
    /// Fade warning threshold, °C.
    pub fade: f32,
    /// Over-temperature threshold, °C.
    pub over: f32,
    /// Bedding energy, J.
    pub bedding_energy: f32,
    /// Wear per joule, m/J.
    pub wear_per_joule: f32,
    /// Allowed thickness loss, m.
    pub wear_limit: f32,
    /// Adaptation.
    pub adapt: Option<PlainAdapt>,
    /// Touch force, N.
    pub touch_force: f32,
    /// μ tolerance.
    pub tol_mu: f32,
    /// Radius tolerance.
    pub tol_radius: f32,
    /// Force uncertainty of one channel, N.
    pub force_uncertainty: f32,
    /// Largest clamp force the device reports as measured, N (above: saturated).
    pub max_force: f32,
    /// Root-sum-square (true) or worst-case sum.
    pub rss: bool,
}

/// The pieces of a plain configuration, as SI values.
#[derive(Clone, Copy, Debug)]
pub struct PlainParts<'a, const NF: usize, const NB: usize, const NT: usize, const NV: usize> {
    /// Radius table breakpoints and values.
    pub radius: (&'a [f64; NF], &'a [f64; NB], &'a [[f64; NB]; NF]),
    /// μ table breakpoints and values.
    pub mu: (&'a [f64; NT], &'a [f64; NV], &'a [[f64; NV]; NT]),
    /// Friction parameters.
    pub friction: &'a FrictionParams,
    /// Thermal parameters.
    pub thermal: &'a ThermalParams,
    /// Wear parameters.
    pub wear: &'a WearParams,
    /// Sample period, s.
    pub sample_period_s: f64,
    /// The thermal and wear models advance once every this many samples.
    pub thermal_wear_every: u8,
}

#[allow(clippy::cast_possible_truncation)]
impl<const C: usize, const NF: usize, const NB: usize, const NT: usize, const NV: usize>
    PlainConfig<C, NF, NB, NT, NV>
{
    /// From SI values; the sensor, adaptation and tolerance settings are filled in by the
    /// caller (see [`crate::baseline`]).
    pub fn from_parts(p: &PlainParts<'_, NF, NB, NT, NV>) -> Self {
        let t = p.thermal;
        let c_rotor = t.rotor_mass * t.rotor_specific_heat;
        let cooling = match t.cooling {
            Cooling::Adiabatic => 0.0,
            Cooling::TimeConstant(tau) => c_rotor / tau,
            Cooling::Conductance(g) => g,
        };
        let f = p.friction;
        Self {
            gain: 1.0,
            offset: 0.0,
            compensation: None,
            alpha: 1.0,
            limits: PlainLimits::OPEN,
            vote_tolerance: 0.0,
            fallback_gain: None,
            faces: 1.0,
            radius: Table2F32::from_f64(p.radius.0, p.radius.1, p.radius.2),
            mu: Table2F32::from_f64(p.mu.0, p.mu.1, p.mu.2),
            static_ratio: f.static_to_kinetic as f32,
            slip_above: (f.stick_speed + 0.5 * f.stick_hysteresis) as f32,
            stick_below: (f.stick_speed - 0.5 * f.stick_hysteresis) as f32,
            transition_speed: f.transition_speed as f32,
            viscous_drag: f.viscous_drag as f32,
            no_load_drag: f.no_load_drag as f32,
            dt: p.sample_period_s as f32,
            thermal_wear_every: u32::from(p.thermal_wear_every),
            thermal_dt: (p.sample_period_s * f64::from(p.thermal_wear_every)) as f32,
            c_rotor: c_rotor as f32,
            c_lining: t.lining.map(|l| (l.mass * l.specific_heat) as f32),
            conductance: t.lining.map_or(0.0, |l| l.conductance_to_rotor as f32),
            cooling: cooling as f32,
            share: t.rotor_share as f32,
            ambient: t.ambient as f32,
            fade: t.fade_warning as f32,
            over: t.over_temperature as f32,
            bedding_energy: p.wear.bedding_energy as f32,
            wear_per_joule: (p.wear.specific_wear_rate / p.wear.lining_area) as f32,
            wear_limit: (p.wear.initial_thickness - p.wear.minimum_thickness) as f32,
            adapt: None,
            touch_force: 0.0,
            tol_mu: 0.0,
            tol_radius: 0.0,
            force_uncertainty: 0.0,
            max_force: f32::MAX,
            rss: false,
        }
    }
}

/// The state carried between samples.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PlainEstimator<const C: usize> {
    filtered: [f32; C],
    channels: [PlainChannel; C],
    slipping: bool,
    lining: f32,
    rotor: f32,
    energy: f32,
    bedding: f32,
    pending_power: f32,
    pending_samples: u32,
    k: f32,
    p: f32,
}

impl<const C: usize> PlainEstimator<C> {
    /// At ambient, new lining, k = 1.
    pub fn new<const NF: usize, const NB: usize, const NT: usize, const NV: usize>(
        cfg: &PlainConfig<C, NF, NB, NT, NV>,
    ) -> Self {
        Self {
            filtered: [0.0; C],
            channels: [PlainChannel::default(); C],
            slipping: false,
            lining: cfg.ambient,
            rotor: cfg.ambient,
            energy: 0.0,
            bedding: 0.0,
            pending_power: 0.0,
            pending_samples: 0,
            k: 1.0,
            p: 0.1,
        }
    }

    /// One sample.
    #[allow(clippy::cast_precision_loss)]
    pub fn step<const NF: usize, const NB: usize, const NT: usize, const NV: usize>(
        &mut self,
        cfg: &PlainConfig<C, NF, NB, NT, NV>,
        inp: &PlainInputs<C>,
    ) -> PlainEstimate {
        let (force, n, sensor_flags, force_uncertainty) = self.conditioned_force(cfg, inp);

        let v = inp.input_speed - inp.output_speed;
        let speed = libm::fabsf(v);
        self.slipping = if self.slipping {
            speed >= cfg.stick_below
        } else {
            speed > cfg.slip_above
        };

        let Some(force) = force else {
            self.heat(cfg, 0.0);
            return PlainEstimate {
                torque: None,
                capacity: 0.0,
                uncertainty: f32::MAX,
                mu: 0.0,
                radius: 0.0,
                force: 0.0,
                lining_temperature: self.lining,
                bedding: self.bedding,
                wear: self.energy * cfg.wear_per_joule,
                correction: self.k,
                state: PlainState::Unavailable,
                flags: sensor_flags,
            };
        };
        let saturated = if force > cfg.max_force {
            flag::SATURATED
        } else {
            0
        };
        let force = force.clamp(0.0, cfg.max_force);

        // μ and r_e from the tables, torque n·μ·F·r_e.
        let mu_k = cfg.mu.lookup(self.lining, speed) * self.k;
        let mu_s = cfg.static_ratio
            * cfg
                .mu
                .lookup(self.lining, cfg.mu.y.first().copied().unwrap_or(0.0))
            * self.k;
        let s = (speed / cfg.transition_speed).min(1.0);
        let phi = s * s * (3.0 - 2.0 * s);
        let mu = mu_k + (mu_s - mu_k) * (1.0 - phi);
        let drag = if v == 0.0 {
            0.0
        } else {
            -libm::copysignf(1.0, v) * (cfg.viscous_drag * speed + cfg.no_load_drag * phi)
        };
        let bedding = self.bedding;
        let r = cfg.radius.lookup(force, bedding);
        let kinetic = cfg.faces * mu * force * r;
        let capacity = cfg.faces * mu_s * force * r;

        let (state, torque, friction) = if force < cfg.touch_force {
            (PlainState::Released, Some(drag), 0.0)
        } else if self.slipping {
            let t = -libm::copysignf(kinetic, v);
            (PlainState::Slipping, Some(t + drag), t)
        } else {
            (PlainState::Holding, None, 0.0)
        };

        // Heat and wear.
        let power = libm::fabsf((friction + drag) * v);
        self.heat(cfg, power);
        let wear = self.energy * cfg.wear_per_joule;

        // Adaptation: scalar RLS on k, only with every channel healthy.
        if n == C && state == PlainState::Slipping {
            self.adapt(cfg, inp, force, cfg.faces * mu / self.k * force * r, v);
        }

        // Uncertainty of what is reported.
        let reported = torque.map_or(capacity, libm::fabsf);
        let df = if force > 0.0 {
            force_uncertainty / force
        } else {
            2.0
        };
        let rel = if cfg.rss {
            libm::sqrtf(cfg.tol_mu * cfg.tol_mu + df * df + cfg.tol_radius * cfg.tol_radius)
        } else {
            cfg.tol_mu + df + cfg.tol_radius
        };
        let hottest = self.lining.max(self.rotor);
        let flags = sensor_flags
            | saturated
            | if hottest > cfg.fade { flag::FADE } else { 0 }
            | if hottest > cfg.over {
                flag::OVER_TEMPERATURE
            } else {
                0
            }
            | if wear > cfg.wear_limit { flag::WORN } else { 0 };

        PlainEstimate {
            torque,
            capacity,
            uncertainty: reported * rel,
            mu: if state == PlainState::Holding {
                mu_s
            } else {
                mu
            },
            radius: r,
            force,
            lining_temperature: self.lining,
            bedding,
            wear,
            correction: self.k,
            state,
            flags,
        }
    }

    /// Force: calibrate, compensate, check and debounce, filter, hold, vote; the force (or
    /// the actuator's), the number of channels used, the sensor flags and the force's ±.
    #[allow(clippy::cast_precision_loss)]
    fn conditioned_force<const NF: usize, const NB: usize, const NT: usize, const NV: usize>(
        &mut self,
        cfg: &PlainConfig<C, NF, NB, NT, NV>,
        inp: &PlainInputs<C>,
    ) -> (Option<f32>, usize, u16, f32) {
        let l = &cfg.limits;
        let mut good = [0.0f32; 4];
        let mut n = 0usize;
        let mut flags = 0u16;
        let mut hold = 0.0f32;
        for (((filt, ch), &counts), &valid) in self
            .filtered
            .iter_mut()
            .zip(self.channels.iter_mut())
            .zip(inp.counts.iter())
            .zip(inp.valid.iter())
        {
            let mut f = counts as f32 * cfg.gain + cfg.offset;
            if let (Some(c), Some(t)) = (cfg.compensation, inp.sensor_temperature) {
                let d = t.clamp(c.min, c.max) - c.reference;
                f = f * (1.0 + c.span_per_kelvin * d) + c.zero_per_kelvin * d;
            }
            let checked = ch.check(l, counts, valid, f, inp.command);
            if checked.saturated {
                flags |= flag::SATURATED;
            }
            if let Some(f) = checked.accepted {
                *filt = if checked.was_stale {
                    f
                } else {
                    *filt + cfg.alpha * (f - *filt)
                };
            }
            if !ch.usable(l) {
                continue;
            }
            if ch.held_for() > 0 {
                flags |= flag::HELD;
                hold = hold.max(l.noise_band + l.rate_per_sample * ch.held_for() as f32);
            }
            if let Some(g) = good.get_mut(n) {
                *g = *filt;
                n += 1;
            }
        }
        if n < C {
            flags |= flag::SENSOR_DEGRADED;
        }
        let [a, b, c, _] = good;
        let consensus = match n {
            0 => None,
            1 => Some(a),
            2 => Some(0.5 * (a + b)),
            // Median of the first three, then the mean of those within tolerance of it.
            _ => Some(a.max(b).min(a.min(b).max(c))),
        };
        let mut spread = 0.0f32;
        let force = consensus.map(|median| {
            let (mut sum, mut k) = (0.0, 0.0);
            for &g in good.iter().take(n) {
                let d = libm::fabsf(g - median);
                spread = spread.max(d);
                if d <= cfg.vote_tolerance {
                    sum += g;
                    k += 1.0;
                }
            }
            if k > 0.0 { sum / k } else { median }
        });
        // The vote's verdict on every channel it could judge, debounced.
        for (ch, filt) in self.channels.iter_mut().zip(self.filtered.iter()) {
            let away = match consensus {
                Some(m) if n > 1 && ch.usable(l) => {
                    Some(libm::fabsf(*filt - m) > cfg.vote_tolerance)
                }
                _ => None,
            };
            ch.disagreement(away, l);
        }
        let force = match force {
            Some(f) => Some(f),
            None => match (cfg.fallback_gain, inp.command) {
                (Some(g), Some(c)) => {
                    flags |= flag::FALLBACK;
                    Some(g * c)
                }
                _ => None,
            },
        };
        (force, n, flags, cfg.force_uncertainty + hold + spread)
    }

    /// Scalar RLS on k from a slipping sample's reference torque; `model` is the
    /// uncorrected torque magnitude and `v` the slip speed.
    fn adapt<const NF: usize, const NB: usize, const NT: usize, const NV: usize>(
        &mut self,
        cfg: &PlainConfig<C, NF, NB, NT, NV>,
        inp: &PlainInputs<C>,
        force: f32,
        model_magnitude: f32,
        v: f32,
    ) {
        if let (Some(a), Some(reference)) = (cfg.adapt, inp.reference_torque)
            && force >= a.min_force
        {
            let model = -libm::copysignf(model_magnitude, v) / a.full_scale;
            if libm::fabsf(model) >= a.min_excitation {
                let y = reference / a.full_scale;
                let gain = self.p * model / (a.lambda + model * model * self.p);
                self.k = (self.k + gain * (y - model * self.k)).clamp(a.min, a.max);
                self.p = ((self.p - gain * model * self.p) / a.lambda).clamp(1e-6, 1.0);
            }
        }
    }

    /// Sum the power; every `thermal_wear_every` samples advance the thermal nodes with the
    /// mean and the energy and bedding with the sum (the fixed-point device's sub-rate).
    #[allow(clippy::cast_precision_loss)]
    fn heat<const NF: usize, const NB: usize, const NT: usize, const NV: usize>(
        &mut self,
        cfg: &PlainConfig<C, NF, NB, NT, NV>,
        power: f32,
    ) {
        self.pending_power += power;
        self.pending_samples += 1;
        if self.pending_samples >= cfg.thermal_wear_every {
            self.cool(cfg, self.pending_power / cfg.thermal_wear_every as f32);
            self.energy += self.pending_power * cfg.dt;
            self.bedding = 1.0 - libm::expf(-self.energy / cfg.bedding_energy);
            self.pending_power = 0.0;
            self.pending_samples = 0;
        }
    }

    /// Explicit Euler on the lumped nodes.
    fn cool<const NF: usize, const NB: usize, const NT: usize, const NV: usize>(
        &mut self,
        cfg: &PlainConfig<C, NF, NB, NT, NV>,
        power: f32,
    ) {
        let out = cfg.cooling * (self.rotor - cfg.ambient);
        match cfg.c_lining {
            Some(c_l) => {
                let q = cfg.conductance * (self.lining - self.rotor);
                self.lining += cfg.thermal_dt * ((1.0 - cfg.share) * power - q) / c_l;
                self.rotor += cfg.thermal_dt * (cfg.share * power + q - out) / cfg.c_rotor;
            }
            None => {
                self.rotor += cfg.thermal_dt * (cfg.share * power - out) / cfg.c_rotor;
                self.lining = self.rotor;
            }
        }
    }
}
