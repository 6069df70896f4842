//! A device's lookup tables as one type: the friction-radius table r_e(F, bedding) and the μ
//! model (its μ table and the stick/slip parameters around it).
//!
//! [`Tables`] holds them at their exact sizes; the estimator and the device configuration are
//! generic over [`TableSet`], so a device's type names one table type instead of four sizes.

use core::fmt::Debug;

use crate::friction::{FrictionConfig, FrictionSample, FrictionState};
use crate::geometry::RadiusTable;
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

/// The tables of one device at their exact sizes: an `NF` × `NB` friction-radius table
/// (clamp force × bedding) and an `NT` × `NV` μ table (lining temperature × slip speed).
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
        let r = &self.radius;
        r.x_breakpoints().iter().for_each(|v| word(v.to_bits()));
        r.y_breakpoints().iter().for_each(|v| word(v.to_bits()));
        r.values().iter().flatten().for_each(|v| word(v.to_bits()));
        let fr = &self.friction;
        let mu = fr.mu_kinetic();
        mu.x_breakpoints().iter().for_each(|v| word(v.to_bits()));
        mu.y_breakpoints().iter().for_each(|v| word(v.to_bits()));
        mu.values().iter().flatten().for_each(|v| word(v.to_bits()));
        word(fr.static_to_kinetic().to_bits());
        word(fr.slip_threshold().to_bits());
        word(fr.stick_threshold().to_bits());
        word(fr.transition_speed().to_bits());
        word(fr.viscous_drag().to_bits());
        word(fr.no_load_drag().to_bits());
    }
}
