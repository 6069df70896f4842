//! What the estimator reports every sample.

use crate::flags::Flags;
use crate::sensor::ChannelMask;
use crate::units::{Celsius, Metres, NewtonMetres, Newtons, Ratio};

/// The friction contact's state this sample. Ordered as [`ContactState::ALL`] lists them.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum ContactState {
    /// The contact slips: torque = −sign(v) · n · μ · F · r_e (+ drag).
    Slipping,
    /// Standstill: the torque is set by the load, somewhere within ± the holding capacity.
    Holding,
    /// Clamp force below the touch threshold: torque is the drag alone (0 for a dry contact);
    /// the ± still covers the friction torque the force's upper bound could carry.
    Released,
    /// Clamp force known, slip speed not ([`Flags::SPEED_UNKNOWN`]): the contact may hold or
    /// slip, so no torque is given; its magnitude is at most the holding capacity, a bound
    /// over every slip speed.
    SlipUnknown,
    /// No clamp force is available: neither torque nor capacity can be given.
    Unavailable,
}

impl ContactState {
    /// Every state, in declaration (and `Ord`) order.
    pub const ALL: [Self; 5] = [
        Self::Slipping,
        Self::Holding,
        Self::Released,
        Self::SlipUnknown,
        Self::Unavailable,
    ];

    /// The state whose [`ContactState::name`] is `name`.
    ///
    /// ```
    /// use clampwise_core::estimator::ContactState;
    /// for state in ContactState::ALL {
    ///     assert_eq!(ContactState::from_name(state.name()), Some(state));
    /// }
    /// assert_eq!(ContactState::from_name("stuck"), None);
    /// ```
    pub fn from_name(name: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|s| s.name() == name)
    }

    /// A short lower-case name for logs and CSV files.
    pub const fn name(self) -> &'static str {
        match self {
            Self::Slipping => "slipping",
            Self::Holding => "holding",
            Self::Released => "released",
            Self::SlipUnknown => "slip-unknown",
            Self::Unavailable => "unavailable",
        }
    }
}

/// One sample of output.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Estimate {
    /// Friction torque on the input shaft, N·m, signed to oppose slip. `None` while holding
    /// (the torque is bounded by [`Estimate::holding_capacity`], not known), when the slip
    /// speed is unknown, or when force is unavailable.
    pub torque: Option<NewtonMetres>,
    /// Largest torque the contact can hold without slipping, n · μ_s · F · r_e, N·m (≥ 0);
    /// with the slip speed unknown, the largest friction torque at any slip speed and table temperature (a bound).
    /// `None` when force is unavailable.
    pub holding_capacity: Option<NewtonMetres>,
    /// ± uncertainty of the torque (slipping, released) or of the capacity (holding, slip
    /// unknown), N·m. With [`Combination::WorstCase`] a bound: the true value lies within it
    /// unless a flag says the estimate cannot be trusted (see the crate docs).
    ///
    /// [`Combination::WorstCase`]: crate::estimator::Combination::WorstCase
    pub uncertainty: NewtonMetres,
    /// μ used: kinetic while slipping, static otherwise, with the adaptation's correction.
    pub mu: Ratio,
    /// Per-face lever arm r_e used, m (already divided by sin α for a cone).
    pub effective_radius: Metres,
    /// Clamp force used, N (0 when unavailable).
    pub clamp_force: Newtons,
    /// Force channels the clamp force came from.
    pub force_channels_used: ChannelMask,
    /// Lining temperature, °C (modelled, or measured when plausible).
    pub lining_temperature: Celsius,
    /// Bedding state: 0 new (uniform pressure) … 1 bedded (uniform wear).
    pub bedding: Ratio,
    /// Lining thickness lost to wear, m.
    pub wear: Metres,
    /// Correction factor on μ from the adaptation (1 when not configured).
    pub correction: Ratio,
    /// The contact's state.
    pub state: ContactState,
    /// Every condition raised this sample.
    pub flags: Flags,
}
