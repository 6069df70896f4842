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

/// What the second axis of the friction-radius table is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum LeverAxis {
    /// Bedding (0 new … 1 bedded): r_e(F, bedding) of a flat or conical face, torque
    /// n·μ·F·r_e.
    Bedding,
    /// μ: the equivalent lever arm r(F, μ) = g(μ)/μ of a contact whose torque per unit
    /// actuating force g(μ) is not linear in μ (drum shoes, bands, cone engagement; see
    /// [`crate::geometry::brake`]), torque μ·F·r(μ). The last μ breakpoint is where the table
    /// stops: beyond it the estimate flags [`crate::flags::Flags::SELF_LOCKING`].
    Mu,
}

/// Whether a [`Tables`] type fixes its [`LeverAxis`] at compile time (a firmware's device: the
/// step then holds only that axis's code) or reads it at run time (a host that loads any
/// device).
pub trait AxisKind: Copy + Debug + PartialEq + Eq + sealed::Sealed {
    /// The axis every value of the type has, or `None` when each value says.
    const FIXED: Option<LeverAxis>;
    /// The marker's value.
    const MARKER: Self;
}

/// The radius table's second axis is bedding, fixed by the type ([`Tables::new`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ByBedding;

/// The radius table's second axis is μ, fixed by the type ([`Tables::over_mu`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ByMu;

/// The radius table's second axis is read at run time ([`Tables::with_axis`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ByEither;

impl sealed::Sealed for ByBedding {}
impl sealed::Sealed for ByMu {}
impl sealed::Sealed for ByEither {}

impl AxisKind for ByBedding {
    const MARKER: Self = ByBedding;
    const FIXED: Option<LeverAxis> = Some(LeverAxis::Bedding);
}

impl AxisKind for ByMu {
    const MARKER: Self = ByMu;
    const FIXED: Option<LeverAxis> = Some(LeverAxis::Mu);
}

impl AxisKind for ByEither {
    const MARKER: Self = ByEither;
    const FIXED: Option<LeverAxis> = None;
}

/// What the per-sample step looks up in a device's tables. Implemented by [`Tables`]; sealed,
/// so the checksum of a configuration always covers every number of its tables.
pub trait TableSet: Copy + Debug + PartialEq + Eq + sealed::Sealed {
    /// Per-face lever arm at this clamp force and second-axis value (m): r_e at a bedding, or
    /// the equivalent lever arm at a μ (see [`Self::lever_axis`]).
    fn lever_arm(&self, force: Newtons, second: Ratio) -> Lookup<Metres>;

    /// What the friction-radius table's second axis is.
    fn lever_axis(&self) -> LeverAxis;

    /// The largest value of the friction-radius table's second axis (for [`LeverAxis::Mu`],
    /// the largest μ the table covers).
    fn lever_axis_end(&self) -> Ratio;

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
pub struct Tables<const NF: usize, const NB: usize, const NT: usize, const NV: usize, K = ByBedding>
{
    radius: RadiusTable<NF, NB>,
    friction: FrictionConfig<NT, NV>,
    axis: LeverAxis,
    kind: K,
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize>
    Tables<NF, NB, NT, NV, ByMu>
{
    /// Both tables, the radius table holding the equivalent lever arm g(μ)/μ over clamp
    /// force × μ ([`LeverAxis::Mu`]): a drum, band or cone-engagement contact whose torque
    /// per unit actuating force g(μ) is not linear in μ.
    pub const fn over_mu(radius: RadiusTable<NF, NB>, friction: FrictionConfig<NT, NV>) -> Self {
        Self {
            radius,
            friction,
            axis: LeverAxis::Mu,
            kind: ByMu,
        }
    }
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize>
    Tables<NF, NB, NT, NV, ByEither>
{
    /// Both tables with the radius table's second axis given at run time.
    pub const fn with_axis(
        radius: RadiusTable<NF, NB>,
        friction: FrictionConfig<NT, NV>,
        axis: LeverAxis,
    ) -> Self {
        Self {
            radius,
            friction,
            axis,
            kind: ByEither,
        }
    }
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize, K: AxisKind>
    Tables<NF, NB, NT, NV, K>
{
    /// Both tables with the radius table's second axis `axis`, or `None` when the type fixes
    /// another axis.
    pub const fn try_with_axis(
        radius: RadiusTable<NF, NB>,
        friction: FrictionConfig<NT, NV>,
        axis: LeverAxis,
    ) -> Option<Self> {
        let fits = matches!(
            (K::FIXED, axis),
            (None, _)
                | (Some(LeverAxis::Bedding), LeverAxis::Bedding)
                | (Some(LeverAxis::Mu), LeverAxis::Mu)
        );
        if fits {
            Some(Self {
                radius,
                friction,
                axis,
                kind: K::MARKER,
            })
        } else {
            None
        }
    }

    /// What the radius table's second axis is.
    pub const fn axis(&self) -> LeverAxis {
        match K::FIXED {
            Some(axis) => axis,
            None => self.axis,
        }
    }

    /// The friction-radius table: per-face lever arm (m) over clamp force × bedding, or the
    /// equivalent lever arm over clamp force × μ (see [`Self::axis`]).
    pub const fn radius(&self) -> &RadiusTable<NF, NB> {
        &self.radius
    }

    /// The μ model.
    pub const fn friction(&self) -> &FrictionConfig<NT, NV> {
        &self.friction
    }
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize>
    Tables<NF, NB, NT, NV, ByBedding>
{
    /// Both tables, each already validated by its own constructor; the radius table's second
    /// axis is bedding ([`LeverAxis::Bedding`]).
    pub const fn new(radius: RadiusTable<NF, NB>, friction: FrictionConfig<NT, NV>) -> Self {
        Self {
            radius,
            friction,
            axis: LeverAxis::Bedding,
            kind: ByBedding,
        }
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
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize, K: AxisKind> sealed::Sealed
    for Tables<NF, NB, NT, NV, K>
{
}

impl<const NF: usize, const NB: usize, const NT: usize, const NV: usize, K: AxisKind> TableSet
    for Tables<NF, NB, NT, NV, K>
{
    #[inline]
    fn lever_arm(&self, force: Newtons, second: Ratio) -> Lookup<Metres> {
        self.radius.lookup(force, second)
    }

    #[inline]
    fn lever_axis(&self) -> LeverAxis {
        self.axis()
    }

    #[inline]
    fn lever_axis_end(&self) -> Ratio {
        self.radius
            .y_breakpoints()
            .last()
            .copied()
            .unwrap_or(Ratio::ZERO)
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
        word(match self.axis() {
            LeverAxis::Bedding => 0,
            LeverAxis::Mu => 1,
        });
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
