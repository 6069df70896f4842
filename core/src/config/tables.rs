//! A device's lookup tables as one type: the friction-radius table r_e(F, bedding) and the μ
//! model (its μ table and the stick/slip parameters around it).
//!
//! [`Tables`] holds them in capacities `NF` × `NB` and `NT` × `NV`: at their exact sizes when
//! built from arrays (a firmware's `const` tables), or at sizes read at run time within those
//! capacities (a host; see [`Table2`](crate::table::Table2)), which look up and checksum as the
//! same tables at their exact sizes. The estimator and the device configuration are generic
//! over [`TableSet`], so a device's type names one table type instead of four sizes.

use core::fmt::Debug;

use super::DeviceError;
use crate::friction::{FrictionConfig, FrictionParams, FrictionSample, FrictionState, MuTable};
use crate::geometry::{Contact, RadiusTable, build_radius_table};
use crate::table::Lookup;
use crate::units::{Celsius, Metres, Newtons, RadPerSec, Ratio};

mod sealed {
    pub trait Sealed {}
}

/// What the per-sample step looks up in a device's tables. Implemented by [`Tables`]; sealed,
/// so the checksum of a configuration always covers every number of its tables.
pub trait TableSet: Copy + Debug + PartialEq + Eq + sealed::Sealed {
    /// Per-face lever arm r_e at this clamp force and bedding (m).
    fn lever_arm(&self, force: Newtons, bedding: Ratio) -> Lookup<Metres>;

    /// Advance the stick/slip state and give μ at this slip speed and lining temperature
    /// (see [`FrictionState::update`]).
    fn friction_sample(
        &self,
        state: &mut FrictionState,
        slip_speed: RadPerSec,
        lining_temperature: Celsius,
        correction: Ratio,
    ) -> FrictionSample;

    /// μ bounds for an unknown slip speed (see [`FrictionConfig::slip_unknown`]).
    fn slip_unknown(&self, correction: Ratio) -> FrictionSample;

    /// Feed the raw bits of every number, in a fixed order, to `sink` (the configuration
    /// checksum).
    fn feed_bits(&self, sink: &mut dyn FnMut(&[u8]));
}

/// The tables of one device: a friction-radius table (clamp force × bedding) of capacity
/// `NF` × `NB` and a μ table (lining temperature × slip speed) of capacity `NT` × `NV`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Tables<const NF: usize, const NB: usize, const NT: usize, const NV: usize> {
    radius: RadiusTable<NF, NB>,
    friction: FrictionConfig<NT, NV>,
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize> Tables<NF, NB, NT, NV> {
    /// Both tables, each already validated by its own constructor.
    pub const fn new(radius: RadiusTable<NF, NB>, friction: FrictionConfig<NT, NV>) -> Self {
        Self { radius, friction }
    }

    /// Both tables from SI values: the friction-radius table of `contact` at the clamp forces
    /// `force_breakpoints_n` (N) and beddings `bedding_breakpoints` (0 new … 1 bedded), and the
    /// μ table `mu[i][j]` at lining temperature `mu_temperatures_c[i]` (°C) and slip speed
    /// `mu_speeds[j]` (rad/s) with the stick/slip parameters `friction`.
    ///
    /// # Errors
    /// [`DeviceError::Geometry`], [`DeviceError::Table`] or [`DeviceError::Friction`] naming
    /// what is wrong.
    ///
    /// ```
    /// use clampwise_core::prelude::*;
    /// let contact = Contact::new(Annulus::new(0.060, 0.100)?, 2, None)?;
    /// let tables = Tables::from_contact(
    ///     &contact, &[0.0, 200e3], &[0.0, 1.0],
    ///     &[20.0, 400.0], &[0.0, 100.0], &[[0.40, 0.38], [0.30, 0.28]],
    ///     &FrictionParams {
    ///         static_to_kinetic: 1.2, stick_speed: 0.05, stick_hysteresis: 0.04,
    ///         transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0,
    ///     },
    /// )?;
    /// // Uniform wear when bedded: r_e = (Ro + Ri)/2 = 80 mm [pub: Shigley, ch. 16].
    /// let r = tables.lever_arm(Newtons::lit("1000"), Ratio::ONE).value.to_num::<f64>();
    /// assert!((r - 0.080).abs() < 1e-7);
    /// # Ok::<(), Box<dyn core::error::Error>>(())
    /// ```
    pub fn from_contact(
        contact: &Contact<'_>,
        force_breakpoints_n: &[f64; NF],
        bedding_breakpoints: &[f64; NB],
        mu_temperatures_c: &[f64; NT],
        mu_speeds: &[f64; NV],
        mu: &[[f64; NV]; NT],
        friction: &FrictionParams,
    ) -> Result<Self, DeviceError> {
        let radius = build_radius_table(contact, force_breakpoints_n, bedding_breakpoints)?;
        let mu = MuTable::new(mu_temperatures_c, mu_speeds, mu)?;
        Ok(Self::new(radius, FrictionConfig::new(mu, friction)?))
    }

    /// The friction-radius table: per-face lever arm (m) over clamp force × bedding.
    pub const fn radius(&self) -> &RadiusTable<NF, NB> {
        &self.radius
    }

    /// The μ model.
    pub const fn friction(&self) -> &FrictionConfig<NT, NV> {
        &self.friction
    }
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize> sealed::Sealed
    for Tables<NF, NB, NT, NV>
{
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize> TableSet
    for Tables<NF, NB, NT, NV>
{
    #[inline]
    fn lever_arm(&self, force: Newtons, bedding: Ratio) -> Lookup<Metres> {
        self.radius.lookup(force, bedding)
    }

    #[inline]
    fn friction_sample(
        &self,
        state: &mut FrictionState,
        slip_speed: RadPerSec,
        lining_temperature: Celsius,
        correction: Ratio,
    ) -> FrictionSample {
        state.update(&self.friction, slip_speed, lining_temperature, correction)
    }

    #[inline]
    fn slip_unknown(&self, correction: Ratio) -> FrictionSample {
        self.friction.slip_unknown(correction)
    }

    fn feed_bits(&self, sink: &mut dyn FnMut(&[u8])) {
        let mut word = |v: i32| sink(&v.to_le_bytes());
        self.radius.for_each_bits(&mut word);
        let fr = &self.friction;
        fr.mu_kinetic().for_each_bits(&mut word);
        word(fr.static_to_kinetic().to_bits());
        word(fr.slip_threshold().to_bits());
        word(fr.stick_threshold().to_bits());
        word(fr.transition_speed().to_bits());
        word(fr.viscous_drag().to_bits());
        word(fr.no_load_drag().to_bits());
    }
}
