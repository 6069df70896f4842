//! The per-sample pipeline: [`Estimator::step`] turns one sample of [`Inputs`] into an
//! [`Estimate`].
//!
//! ```text
//! raw counts ─ sensor ─► F, health ──────────────────────────┐
//! ω_in − ω_out ─► slip speed v ─ friction (stick/slip, μ) ───┤
//! F, bedding ─ radius table ─► r_e                           ├─► torque / capacity, ±, state
//! T_lining, |v| ─ μ table × k (adaptation) ─► μ ─────────────┘
//! |T · v| ─► thermal ─► T_lining (next sample);  |T · v| · dt ─► wear, bedding
//! reference torque ─► adaptation k (bounded; frozen on faults)
//! ```
//!
//! A contact whose torque is not linear in μ (drum shoes, bands, cone engagement;
//! [`LeverAxis::Mu`](crate::config::LeverAxis)) looks its lever arm up over μ instead of
//! bedding, r(μ) = g(μ)/μ, at each μ the sample uses; its ± comes from the torque at both ends
//! of μ's tolerance, and past the table's last μ the estimate flags
//! [`Flags::SELF_LOCKING`]. The adaptation's k then scales the torque (T = k·F·g(μ)), not μ
//! inside g.
//!
//! The step is O(1), integer-only, allocation-free and cannot panic: every product that could
//! leave its format saturates and raises [`Flags::ARITHMETIC_SATURATED`].
//!
//! Order within a sample: the thermal and bedding state used for this sample's μ and r_e are
//! those left by the previous sample; this sample's dissipated energy updates them for the
//! next. At 1 kHz the lag is one millisecond, far below the thermal time constants. The thermal
//! and wear states may also run as a sub-rate task, every `thermal_wear_every` samples, with
//! the energy of all of them (see `DeviceParts::thermal_wear_every`); with 8 at 1 kHz the lag
//! is up to 8 ms.

mod estimate;
mod inputs;
mod persist;
pub mod snapshot;
mod sub_rate;
mod torque;
mod uncertainty;

pub use estimate::{ContactState, Estimate};
pub use inputs::Inputs;
pub use snapshot::{SnapshotError, snapshot_len};
pub use uncertainty::Combination;

use crate::adapt::{AdaptGate, AdaptState};
use crate::config::{DeviceConfig, LeverAxis, TableSet};
use crate::flags::Flags;
use crate::friction::{FrictionSample, FrictionState};
use crate::sensor::{ChannelMask, ForceReading, ForceSource, Health, SensorState};
use crate::thermal::ThermalState;
use crate::units::{Metres, NewtonMetres, Newtons, RadPerSec, Ratio, Watts};
use crate::wear::WearState;

use sub_rate::{SlowSample, SubRate};
use torque::{Saturating, dissipated_power, friction_torque, friction_torque_pair, ratio_product};
use uncertainty::torque_uncertainty;

/// Everything that persists between samples.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct EstimatorState<const C: usize> {
    sensor: SensorState<C>,
    friction: FrictionState,
    thermal: ThermalState,
    wear: WearState,
    sub_rate: SubRate,
    adapt: Option<AdaptState>,
}

/// The estimator for one device: a borrowed, validated configuration (in flash on a target)
/// and the mutable state.
#[derive(Clone, Debug)]
pub struct Estimator<'c, T, const C: usize> {
    cfg: &'c DeviceConfig<T, C>,
    state: EstimatorState<C>,
}

/// Apply a friction direction (−1, 0, +1) to a magnitude.
fn signed(direction: i8, magnitude: NewtonMetres) -> NewtonMetres {
    match direction {
        d if d < 0 => magnitude.saturating_neg(),
        d if d > 0 => magnitude,
        _ => NewtonMetres::ZERO,
    }
}

/// The lever arm of this sample's contact.
#[derive(Clone, Copy)]
enum Lever<'t, T> {
    /// r_e at this force and bedding, the same for every μ.
    Fixed(Metres),
    /// The equivalent lever arm g(μ)/μ, looked up for each μ at this force.
    PerMu(&'t T, Newtons),
}

/// Where the contact operates this sample: what every torque product shares.
#[derive(Clone, Copy)]
struct Operating<'t, T> {
    faces: u8,
    correction: Ratio,
    force: Newtons,
    lever: Lever<'t, T>,
}

impl<T: TableSet> Operating<'_, T> {
    /// The lever arm at `mu` (and whether its table was entered out of range).
    #[inline(always)]
    fn lever_arm(self, mu: Ratio) -> crate::table::Lookup<Metres> {
        match self.lever {
            Lever::Fixed(value) => crate::table::Lookup {
                value,
                clamped: false,
            },
            Lever::PerMu(tables, force) => tables.lever_arm(force, mu),
        }
    }

    /// n · k · μ · F · r(μ).
    #[inline(always)]
    fn torque(self, mu: Ratio) -> Saturating<NewtonMetres> {
        let arm = self.lever_arm(mu).value;
        friction_torque(self.faces, self.correction, mu, self.force, arm)
    }

    /// The same contact carrying `force` instead (the lever arm stays that of this sample's
    /// force).
    #[inline(always)]
    fn with_force(self, force: Newtons) -> Self {
        Self { force, ..self }
    }
}

/// The torque a sample reports and the parts of it the later stages need.
struct Reported {
    /// The reported torque (`None` while holding or when the slip speed is unknown).
    torque: Option<NewtonMetres>,
    /// μ behind what is reported (kinetic for a torque, static for a capacity).
    mu: Ratio,
    /// The signed friction torque that dissipates power (zero unless slipping).
    friction_part: NewtonMetres,
    /// n · μ_k · F · r_e without the adaptation's correction (the adaptation's model).
    uncorrected: NewtonMetres,
}

/// The torque of each contact state; flags a bounded (holding, slip-unknown) torque and
/// saturated products.
#[inline(always)]
fn reported_torque<T: TableSet>(
    state: ContactState,
    fric: &FrictionSample,
    at: Operating<'_, T>,
    flags: &mut Flags,
) -> Reported {
    // One lever-arm lookup serves both products (for a contact not linear in μ it is a table
    // lookup at μ_k).
    let arm = at.lever_arm(fric.mu_kinetic).value;
    let (kinetic, uncorrected) =
        friction_torque_pair(at.faces, at.correction, fric.mu_kinetic, at.force, arm);
    if kinetic.saturated || uncorrected.saturated {
        flags.insert(Flags::ARITHMETIC_SATURATED);
    }
    let (torque, mu, friction_part) = match state {
        ContactState::Released => (Some(fric.drag_torque), fric.mu_kinetic, NewtonMetres::ZERO),
        ContactState::Slipping => {
            let t = signed(fric.direction, kinetic.value);
            (Some(t.saturating_add(fric.drag_torque)), fric.mu_kinetic, t)
        }
        _ => {
            flags.insert(Flags::TORQUE_BOUNDED);
            (None, fric.mu_static, NewtonMetres::ZERO)
        }
    };
    Reported {
        torque,
        mu,
        friction_part,
        uncorrected: uncorrected.value,
    }
}

impl<'c, T: TableSet, const C: usize> Estimator<'c, T, C> {
    /// A new estimator: lining at ambient temperature, new (bedding 0, no wear), holding,
    /// adaptation factor 1.
    pub fn new(cfg: &'c DeviceConfig<T, C>) -> Self {
        let state = EstimatorState {
            sensor: SensorState::new(),
            friction: FrictionState::new(),
            thermal: ThermalState::new(&cfg.thermal),
            wear: WearState::new(),
            sub_rate: SubRate::NEW,
            adapt: cfg.adapt.as_ref().map(AdaptState::new),
        };
        Self { cfg, state }
    }

    /// The configuration.
    pub const fn config(&self) -> &'c DeviceConfig<T, C> {
        self.cfg
    }

    /// The state carried between samples.
    pub const fn state(&self) -> &EstimatorState<C> {
        &self.state
    }

    /// One control cycle. O(1), integer-only, no allocation, cannot panic.
    pub fn step(&mut self, inputs: &Inputs<C>) -> Estimate {
        let mut flags = Flags::empty();
        // 1. Clamp force.
        let reading = self.read_force(inputs, &mut flags);
        let channels_used = match reading.source {
            ForceSource::Channels { mask } => mask,
            _ => ChannelMask::EMPTY,
        };
        // 2. Slip speed and μ at the lining temperature left by the previous sample.
        let slip_speed = inputs.slip_speed();
        let fric = self.friction_sample(slip_speed, &mut flags);
        let correction = self.state.adapt.map_or(Ratio::ONE, |a| a.factor());
        let bedding = self.state.wear.bedding();

        let Some(force) = reading.force else {
            flags.insert(Flags::FORCE_LOST);
            // No force, no dissipated power that can be known: the thermal model only cools.
            return self.finish_unavailable(inputs, flags, correction);
        };
        let force = force.max(Newtons::ZERO);

        // 3. Effective radius at this force and bedding (or, for a contact not linear in μ,
        //    the lever arm at each μ used below).
        let tables = &self.cfg.tables;
        let lever = match tables.lever_axis() {
            LeverAxis::Bedding => {
                let radius = tables.lever_arm(force, bedding);
                flags.set(
                    Flags::OUT_OF_RANGE,
                    flags.contains(Flags::OUT_OF_RANGE) || radius.clamped,
                );
                Lever::Fixed(radius.value)
            }
            LeverAxis::Mu => Lever::PerMu(tables, force),
        };
        let at = Operating {
            faces: self.cfg.faces,
            correction,
            force,
            lever,
        };

        // 4. Torque or capacity.
        let capacity = at.torque(fric.mu_static);
        let state = self.contact_state(slip_speed, force, &fric);
        let reported = reported_torque(state, &fric, at, &mut flags);
        if capacity.saturated {
            flags.insert(Flags::ARITHMETIC_SATURATED);
        }
        let radius = at.lever_arm(reported.mu);
        flags.set(
            Flags::OUT_OF_RANGE,
            flags.contains(Flags::OUT_OF_RANGE) || radius.clamped,
        );

        // 5. Heat from this sample's dissipated power (friction + drag); wear and bedding from
        //    the friction part alone. Without a slip speed no power can be known.
        let slow = self.advance_heat_and_wear(
            inputs,
            slip_speed.unwrap_or(RadPerSec::ZERO),
            reported.friction_part,
            fric.drag_torque,
            &mut flags,
        );

        // 6. Adaptation: learn k only from clean slipping samples.
        let gate = AdaptGate {
            slipping: state == ContactState::Slipping,
            force_sufficient: force >= self.cfg.limits.adapt_min_force,
            sensors_healthy: reading.health == Health::Ok,
        };
        self.adapt(
            inputs,
            signed(fric.direction, reported.uncorrected),
            gate,
            &mut flags,
        );

        // 7. Uncertainty of what is reported.
        let uncertainty = self.uncertainty(
            state,
            &fric,
            at,
            reading.uncertainty,
            (reported.torque, capacity.value, reported.friction_part),
            &mut flags,
        );

        Estimate {
            torque: reported.torque,
            holding_capacity: Some(capacity.value),
            uncertainty,
            mu: ratio_product(reported.mu, correction),
            effective_radius: radius.value,
            clamp_force: force,
            force_channels_used: channels_used,
            lining_temperature: slow.lining_temperature,
            bedding: slow.bedding,
            wear: slow.thickness_loss,
            correction,
            state,
            flags,
        }
    }

    /// The conditioned clamp force and the sensor flags it raises.
    #[inline(always)]
    fn read_force(&mut self, inputs: &Inputs<C>, flags: &mut Flags) -> ForceReading {
        let reading = self.state.sensor.update(
            &self.cfg.sensor,
            &inputs.force_channels,
            inputs.actuator_command,
            inputs.sensor_temperature,
        );
        flags.set(Flags::SENSOR_DEGRADED, reading.health == Health::Degraded);
        flags.set(
            Flags::FORCE_FALLBACK,
            reading.source == ForceSource::ActuatorFallback,
        );
        flags.set(Flags::FORCE_SATURATED, reading.saturated);
        flags.set(Flags::FORCE_IMPLAUSIBLE, reading.implausible);
        reading
    }

    /// μ at the lining temperature left by the previous sample. Without a slip speed, μ is the
    /// largest the lining can have anywhere in its table.
    #[inline(always)]
    fn friction_sample(
        &mut self,
        slip_speed: Option<RadPerSec>,
        flags: &mut Flags,
    ) -> FrictionSample {
        let tables = &self.cfg.tables;
        let st = &mut self.state;
        let fric = match slip_speed {
            Some(v) => tables.friction_sample(
                &mut st.friction,
                v,
                st.thermal.lining_temperature(),
                Ratio::ONE,
            ),
            None => {
                flags.insert(Flags::SPEED_UNKNOWN);
                tables.slip_unknown(Ratio::ONE)
            }
        };
        flags.set(Flags::OUT_OF_RANGE, fric.clamped);
        flags.set(Flags::ARITHMETIC_SATURATED, fric.saturated);
        fric
    }

    /// Which of the contact states this sample is in, given a clamp force.
    #[inline(always)]
    fn contact_state(
        &self,
        slip_speed: Option<RadPerSec>,
        force: Newtons,
        fric: &FrictionSample,
    ) -> ContactState {
        if slip_speed.is_none() {
            ContactState::SlipUnknown
        } else if force < self.cfg.limits.touch_force {
            ContactState::Released
        } else if fric.slipping {
            ContactState::Slipping
        } else {
            ContactState::Holding
        }
    }

    /// Advance the thermal and wear states (every sample or as the sub-rate task) with this
    /// sample's power.
    #[inline(always)]
    fn advance_heat_and_wear(
        &mut self,
        inputs: &Inputs<C>,
        speed: RadPerSec,
        friction_part: NewtonMetres,
        drag: NewtonMetres,
        flags: &mut Flags,
    ) -> SlowSample {
        let cfg = self.cfg;
        let st = &mut self.state;
        let power = dissipated_power(friction_part.saturating_add(drag), speed);
        let wearing = dissipated_power(friction_part, speed);
        let slow = st.sub_rate.step(
            cfg.thermal_wear_shift,
            (&mut st.thermal, &cfg.thermal),
            (&mut st.wear, &cfg.wear),
            (power.value, wearing.value),
            inputs.lining_temperature,
            inputs.ambient_temperature,
        );
        if power.saturated || wearing.saturated || slow.saturated {
            flags.insert(Flags::ARITHMETIC_SATURATED);
        }
        slow.set_flags(flags);
        slow
    }

    /// Let the adaptation learn from this sample's model torque (uncorrected, signed).
    #[inline(always)]
    fn adapt(
        &mut self,
        inputs: &Inputs<C>,
        model: NewtonMetres,
        gate: AdaptGate,
        flags: &mut Flags,
    ) {
        if let (Some(a), Some(acfg)) = (self.state.adapt.as_mut(), self.cfg.adapt.as_ref()) {
            let out = a.update(acfg, model, inputs.reference_torque, gate);
            flags.set(Flags::ADAPTATION_FROZEN, out.frozen);
            flags.set(Flags::ADAPTATION_AT_LIMIT, out.at_band_limit);
        }
    }

    /// The ± of what is reported. The force enters as the torque it could carry: its
    /// uncertainty's share, or for a released contact the friction torque at the force's
    /// upper bound (the larger μ of the two: it may be holding or slipping).
    #[inline(always)]
    fn uncertainty(
        &self,
        state: ContactState,
        fric: &FrictionSample,
        at: Operating<'_, T>,
        force_uncertainty: Newtons,
        (torque, capacity, friction_part): (Option<NewtonMetres>, NewtonMetres, NewtonMetres),
        flags: &mut Flags,
    ) -> NewtonMetres {
        if let Lever::PerMu(..) = at.lever {
            let (reported, nominal) = match state {
                ContactState::Slipping => (
                    torque.unwrap_or(NewtonMetres::ZERO).saturating_abs(),
                    friction_part.saturating_abs(),
                ),
                ContactState::Released => (fric.drag_torque.saturating_abs(), NewtonMetres::ZERO),
                _ => (capacity, capacity),
            };
            return self.uncertainty_over_mu(
                state,
                fric,
                at,
                force_uncertainty,
                (reported, nominal),
                flags,
            );
        }
        let mut model_term = NewtonMetres::ZERO;
        let (reported, force_term) = match state {
            ContactState::Released => {
                let upper = Operating {
                    force: at.force.saturating_add(force_uncertainty),
                    ..at
                };
                let t = upper.torque(fric.mu_static.max(fric.mu_kinetic));
                (fric.drag_torque.saturating_abs(), t)
            }
            ContactState::Slipping => {
                // Near zero slip μ blends from static to kinetic: the true μ may lie anywhere
                // in that span.
                let blend = at.torque(fric.transition_span);
                model_term = blend.value;
                let t = at.with_force(force_uncertainty).torque(fric.mu_kinetic);
                (
                    torque.unwrap_or(NewtonMetres::ZERO).saturating_abs(),
                    Saturating {
                        value: t.value,
                        saturated: t.saturated || blend.saturated,
                    },
                )
            }
            _ => (
                capacity,
                at.with_force(force_uncertainty).torque(fric.mu_static),
            ),
        };
        if force_term.saturated {
            flags.insert(Flags::ARITHMETIC_SATURATED);
        }
        let tol = &self.cfg.tolerances;
        torque_uncertainty(
            reported,
            force_term.value,
            model_term,
            tol.mu,
            tol.radius,
            tol.combination,
        )
    }

    /// The ± of a contact whose torque is not linear in μ, from the torque at both ends of
    /// μ's interval. g(μ) increases with μ for every such contact, so the true torque lies
    /// between k·(F − U_F)·g(μ_lo)·(1 − δr) and k·(F + U_F)·g(μ_hi)·(1 + δr), μ_lo and μ_hi
    /// the ends of μ ± its blend span widened by δμ. The μ term is the larger of the two
    /// sides, T(μ_hi) − T(μ) and T(μ) − T(μ_lo), the force term is taken at μ_hi, and
    /// [`torque_uncertainty`] adds δr with δμ already inside both: its worst case then bounds
    /// either side \[calc\]. No linearisation, so a self-energising shoe's amplification of δμ
    /// (S(μ) > 1) is in the ± whatever its size. When μ_hi passes the end of the table,
    /// [`Flags::SELF_LOCKING`] and the ± is the format's maximum.
    #[inline(never)]
    fn uncertainty_over_mu(
        &self,
        state: ContactState,
        fric: &FrictionSample,
        at: Operating<'_, T>,
        force_uncertainty: Newtons,
        (reported, nominal): (NewtonMetres, NewtonMetres),
        flags: &mut Flags,
    ) -> NewtonMetres {
        let tol = &self.cfg.tolerances;
        let (mu, span) = match state {
            ContactState::Released => (fric.mu_static.max(fric.mu_kinetic), Ratio::ZERO),
            ContactState::Slipping => (fric.mu_kinetic, fric.transition_span),
            _ => (fric.mu_static, Ratio::ZERO),
        };
        let mu_hi = ratio_product(mu.saturating_add(span), Ratio::ONE.saturating_add(tol.mu));
        let mu_lo = ratio_product(
            mu.saturating_sub(span).max(Ratio::ZERO),
            Ratio::ONE.saturating_sub(tol.mu).max(Ratio::ZERO),
        );
        if mu_hi > self.cfg.tables.lever_axis_end() {
            flags.insert(Flags::SELF_LOCKING);
            return NewtonMetres::MAX;
        }
        // The force term at μ_hi (a released contact: the whole torque at F + U_F), then the
        // two ends of μ at F: one loop, so the lookup and product are in the image once.
        let (force_at, mu_term_ends) = match state {
            ContactState::Released => (at.force.saturating_add(force_uncertainty), false),
            _ => (force_uncertainty, true),
        };
        let mut saturated = false;
        let mut force_term = NewtonMetres::ZERO;
        let mut mu_term = NewtonMetres::ZERO;
        for (i, (force, mu_at)) in [(force_at, mu_hi), (at.force, mu_hi), (at.force, mu_lo)]
            .into_iter()
            .enumerate()
        {
            if i > 0 && !mu_term_ends {
                break;
            }
            let t = at.with_force(force).torque(mu_at);
            saturated |= t.saturated;
            if i == 0 {
                force_term = t.value;
            } else {
                let side = t.value.saturating_sub(nominal).saturating_abs();
                mu_term = mu_term.max(side);
            }
        }
        if saturated {
            flags.insert(Flags::ARITHMETIC_SATURATED);
        }
        torque_uncertainty(
            reported,
            force_term,
            mu_term,
            Ratio::ZERO,
            tol.radius,
            tol.combination,
        )
    }

    /// The rest of a sample without force: cool the lining, freeze the adaptation, report
    /// neither torque nor capacity.
    fn finish_unavailable(
        &mut self,
        inputs: &Inputs<C>,
        mut flags: Flags,
        correction: Ratio,
    ) -> Estimate {
        let st = &mut self.state;
        let cfg = self.cfg;
        let slow = st.sub_rate.step(
            cfg.thermal_wear_shift,
            (&mut st.thermal, &cfg.thermal),
            (&mut st.wear, &cfg.wear),
            (Watts::ZERO, Watts::ZERO),
            inputs.lining_temperature,
            inputs.ambient_temperature,
        );
        slow.set_flags(&mut flags);
        if cfg.adapt.is_some() {
            flags.insert(Flags::ADAPTATION_FROZEN);
        }
        Estimate {
            torque: None,
            holding_capacity: None,
            uncertainty: NewtonMetres::MAX,
            mu: Ratio::ZERO,
            effective_radius: crate::units::Metres::ZERO,
            clamp_force: Newtons::ZERO,
            force_channels_used: ChannelMask::EMPTY,
            lining_temperature: slow.lining_temperature,
            bedding: slow.bedding,
            wear: slow.thickness_loss,
            correction,
            state: ContactState::Unavailable,
            flags,
        }
    }
}
