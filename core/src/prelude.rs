//! The names needed to build a device and step it: `use clampwise_core::prelude::*;`.
//!
//! The modules keep everything else (table internals, the per-model states, the record
//! format, the store).

pub use crate::config::{
    DeviceConfig, DeviceError, DeviceParams, Limits, SensorParams, TableSet, Tables, Tolerances,
};
pub use crate::estimator::{Combination, ContactState, Estimate, Estimator, Inputs};
pub use crate::flags::Flags;
pub use crate::friction::{FrictionConfig, FrictionParams, MuTable};
pub use crate::geometry::{Annulus, Contact, SectorPad, Shape, build_radius_table};
pub use crate::sensor::{
    ActuatorTransfer, AdcRails, ChannelCalibration, DiagnosticLimits, NewtonsPerCount, VotingLimits,
};
pub use crate::thermal::{Cooling, ThermalParams};
pub use crate::units::{Celsius, Metres, NewtonMetres, Newtons, RadPerSec, Ratio, Seconds};
pub use crate::wear::WearParams;
