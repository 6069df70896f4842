//! Config → core: the one place where a loaded [`DeviceSpec`]
//! becomes the core's fixed-point tables ([`CoreTables`]) and the core's whole validated
//! `clampwise_core::config::DeviceConfig` ([`CoreDevice`]).
//!
//! ```
//! use clampwise_device::build_core::{ChannelDevice, CoreDevice};
//! use clampwise_device::config::LoadedConfig;
//! let cfg = LoadedConfig::from_str(clampwise_device::DEMO_CONFIG, "demo.toml").unwrap();
//! let dev = CoreDevice::build(&cfg.config).unwrap();
//! // The demo has three force channels.
//! let ChannelDevice::Three(core) = &dev.device else { panic!("three channels") };
//! let mut est = clampwise_core::estimator::Estimator::new(core);
//! let e = est.step(&clampwise_core::estimator::Inputs::<3>::at_rest(8000));
//! assert_eq!(e.state.name(), "released"); // zero force: released
//! ```
//!
//! ## Channel count
//!
//! The core's `DeviceConfig<T, C>` is generic over its tables `T` (here [`HostTables`]) and
//! the number of force channels C (1 … 4); a config fixes C only when it is read.
//! [`ChannelDevice`] is an enum with one variant per C, each holding a [`Device<C>`]; code that
//! steps it matches once and runs generic code inside (`clampwise_convert::CoreEstimator`
//! does).
//!
//! ## Table capacities (const generics of the core) and the exact sizes within them
//!
//! | table | capacity | axes |
//! |---|---|---|
//! | μ(lining temperature, \|slip speed\|) | [`MU_POINTS`] × [`MU_POINTS`] = 8 × 8 | config: 1–8 each |
//! | friction radius r_e(clamp force, bedding) | [`RADIUS_FORCE_POINTS`] × [`RADIUS_BEDDING_POINTS`] = 8 × 2 | config: 1–8 forces; bedding fixed at 0 and 1 |
//!
//! A config reads its table sizes at run time, so the host keeps one capacity and the core's
//! table holds the config's breakpoints at their exact size within it
//! (`clampwise_core::table::Table2::from_slices`): lookups, clamped flags and the checksum see
//! only those, bit for bit as a table built at that size. The firmware emitter
//! ([`crate::emit`]) writes each table at its exact size, and the firmware checks the checksum
//! computed here against its compiled constant.
//!
//! The bedding axis is fixed at the two pressure models, 0 (new, uniform pressure) and 1
//! (bedded, uniform wear): r_e is exactly linear in bedding
//! (`clampwise_core::geometry::pressure`), so two breakpoints carry the whole model, and the
//! core's table builder accepts no bedding outside 0 … 1 to pad with. The radius values come
//! from [`clampwise_core::geometry::build_radius_table`] on the core's own
//! [`Contact`](clampwise_core::geometry::Contact) (see [`contact_radii`]).

mod contact;
mod gain;
pub mod parts;
mod tables;

pub use contact::{contact_radii, geometry_error, with_contact};
pub use gain::{GAIN_POINTS, GainModel, GainTableInfo};
pub use tables::CoreTables;

use clampwise_core::adapt::AdaptState;
use clampwise_core::config::DeviceParts;
use clampwise_core::state_record::{RECORD_LEN, StateRecord};
use clampwise_core::thermal::ThermalState;
use clampwise_core::units::{Celsius, Joules, Ratio, Seconds};
use clampwise_core::wear::WearState;

use crate::schema::DeviceSpec;

/// Capacity of each μ table axis (temperature and slip-speed breakpoints).
pub const MU_POINTS: usize = 8;
/// Capacity of the friction-radius table's clamp-force axis.
pub const RADIUS_FORCE_POINTS: usize = 8;
/// Breakpoints of the friction-radius table's bedding axis: 0 (new) and 1 (bedded).
pub const RADIUS_BEDDING_POINTS: usize = 2;
/// Capacity of the friction-radius table's second axis: bedding's two breakpoints, or a
/// drum or band contact's [`GAIN_POINTS`] μ breakpoints.
pub const RADIUS_SECOND_POINTS: usize = GAIN_POINTS;
/// The bedding breakpoints.
pub const RADIUS_BEDDING: [f64; RADIUS_BEDDING_POINTS] = [0.0, 1.0];

/// μ(lining temperature °C, |slip speed| rad/s) within the host's capacity.
pub type MuTable = clampwise_core::friction::MuTable<MU_POINTS, MU_POINTS>;
/// r_e(clamp force N, bedding) or g(μ)/μ (clamp force N, μ) in m within the host's capacity.
pub type RadiusTable =
    clampwise_core::geometry::RadiusTable<RADIUS_FORCE_POINTS, RADIUS_SECOND_POINTS>;

/// A config value the core does not accept, named by its key.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BuildError {
    /// Key path of the value (`contact.inner_radius_m`, `friction.mu.values[2][1]`).
    pub key: String,
    /// What is wrong.
    pub message: String,
}

impl BuildError {
    pub(crate) fn new(key: impl Into<String>, message: impl std::fmt::Display) -> Self {
        Self {
            key: key.into(),
            message: message.to_string(),
        }
    }
}

impl std::fmt::Display for BuildError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: {}", self.key, self.message)
    }
}

impl std::error::Error for BuildError {}

/// The core's tables at this crate's capacities, the radius table's second axis (bedding or
/// μ) read at run time.
pub type HostTables = clampwise_core::config::Tables<
    RADIUS_FORCE_POINTS,
    RADIUS_SECOND_POINTS,
    MU_POINTS,
    MU_POINTS,
    clampwise_core::config::ByEither,
>;

/// The core's device configuration with this crate's table capacities.
pub type Device<const C: usize> = clampwise_core::config::DeviceConfig<HostTables, C>;

/// A core device of 1, 2, 3 or 4 force channels.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ChannelDevice {
    /// One force channel.
    One(Device<1>),
    /// Two force channels.
    Two(Device<2>),
    /// Three force channels.
    Three(Device<3>),
    /// Four force channels.
    Four(Device<4>),
}

impl ChannelDevice {
    /// Number of force channels.
    pub const fn channels(&self) -> usize {
        match self {
            Self::One(_) => 1,
            Self::Two(_) => 2,
            Self::Three(_) => 3,
            Self::Four(_) => 4,
        }
    }

    /// The core's `DeviceConfig::checksum`: the one checksum of a device, which a firmware
    /// compares with the generated `DEVICE_CHECKSUM`.
    pub fn checksum(&self) -> u32 {
        match self {
            Self::One(d) => d.checksum(),
            Self::Two(d) => d.checksum(),
            Self::Three(d) => d.checksum(),
            Self::Four(d) => d.checksum(),
        }
    }
}

/// Where a trace starts: the config's `thermal.initial_temperature_c` and
/// `wear.initial_energy_j`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct InitialState {
    /// Rotor and lining temperature at the start, °C (`None`: ambient, as the core starts).
    pub temperature: Option<Celsius>,
    /// Friction work already taken by the lining, J (sets bedding and wear).
    pub energy: Joules,
}

impl InitialState {
    /// Whether this is the core's own starting state (ambient, new lining).
    pub fn is_new(&self) -> bool {
        self.temperature.is_none() && self.energy == Joules::ZERO
    }

    /// The state record that starts an estimator here (`Estimator::restore`); `None` when
    /// [`InitialState::is_new`] (then `Estimator::new` is the same and simpler).
    pub fn record<const C: usize>(&self, dev: &Device<C>) -> Option<[u8; RECORD_LEN]> {
        if self.is_new() {
            return None;
        }
        let t = self.temperature.unwrap_or(dev.thermal().ambient());
        let covariance = dev
            .adapt()
            .map_or(Ratio::ZERO, |a| AdaptState::new(a).covariance());
        Some(
            StateRecord::new(
                0,
                dev.checksum(),
                &WearState::with_history(dev.wear(), self.energy),
                &ThermalState::with_temperatures(t, t),
                Ratio::ONE,
                covariance,
            )
            .to_bytes(),
        )
    }
}

/// Everything the core needs for one device: the tables (for printing, fitting and
/// emitting), the validated core configuration and the starting state.
#[derive(Clone, Debug)]
pub struct CoreDevice {
    /// The fixed-point tables.
    pub tables: CoreTables,
    /// The core's validated device configuration.
    pub device: ChannelDevice,
    /// The starting state of a replay.
    pub initial: InitialState,
}

fn build_device<const C: usize>(
    c: &DeviceSpec,
    tables: &CoreTables,
) -> Result<Device<C>, BuildError> {
    let period = c.device.sample_period_s;
    let parts = DeviceParts {
        sample_period: Seconds::checked_from_num(period)
            .ok_or_else(|| BuildError::new("device.sample_period_s", "out of range"))?,
        thermal_wear_every: c.device.thermal_wear_every,
        faces: u8::try_from(c.contact.faces)
            .map_err(|_| BuildError::new("contact.faces", "must be within 1 … 255"))?,
        tables: HostTables::with_axis(tables.radius, parts::friction(c, tables.mu)?, tables.axis),
        thermal: parts::thermal(c)?,
        wear: parts::wear(c)?,
        sensor: parts::sensor::<C>(c)?,
        adapt: parts::adapt(c)?,
        limits: parts::limits(c)?,
        tolerances: parts::tolerances(
            c,
            tables
                .gain
                .map_or(0.0, |(_, info)| info.interpolation_error),
        )?,
    };
    clampwise_core::config::DeviceConfig::from_parts(parts).map_err(parts::config_error)
}

impl CoreDevice {
    /// Build the tables and the core's device configuration of a config whose own checks
    /// have passed (loading a [`LoadedConfig`](crate::config::LoadedConfig) runs both).
    ///
    /// # Errors
    /// [`BuildError`] naming the config key the core rejected.
    pub fn build(c: &DeviceSpec) -> Result<Self, BuildError> {
        let tables = CoreTables::build(c)?;
        let device = match c.sensors.len() {
            1 => ChannelDevice::One(build_device::<1>(c, &tables)?),
            2 => ChannelDevice::Two(build_device::<2>(c, &tables)?),
            3 => ChannelDevice::Three(build_device::<3>(c, &tables)?),
            4 => ChannelDevice::Four(build_device::<4>(c, &tables)?),
            n => {
                return Err(BuildError::new(
                    "sensor",
                    format!("needs 1 … 4 [[sensor]] tables, found {n}"),
                ));
            }
        };
        let initial = InitialState {
            temperature: match c.thermal.initial_temperature_c {
                None => None,
                Some(t) => Some(tables::fixed_of("thermal.initial_temperature_c", t)?),
            },
            energy: Joules::checked_from_num(c.wear.initial_energy_j)
                .ok_or_else(|| BuildError::new("wear.initial_energy_j", "out of range"))?,
        };
        Ok(Self {
            tables,
            device,
            initial,
        })
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing, clippy::panic)]
    use super::*;
    use crate::config::LoadedConfig;
    use clampwise_core::estimator::{Estimator, Inputs};
    use clampwise_core::units::RadPerSec;

    fn demo() -> DeviceSpec {
        LoadedConfig::from_str(crate::DEMO_CONFIG, "demo.toml")
            .unwrap()
            .config
    }

    #[test]
    fn demo_becomes_a_three_channel_core_device() {
        let dev = CoreDevice::build(&demo()).unwrap();
        let ChannelDevice::Three(d) = &dev.device else {
            panic!("demo has three channels");
        };
        assert_eq!(dev.device.channels(), 3);
        assert_eq!(d.faces(), 2);
        assert_eq!(d.sensor().sample_rate_hz(), 1000);
        // stick 0.02, hysteresis 0.01: holding below 0.02, slipping above 0.03 (1 LSB of
        // RadPerSec from the centre/width rounding).
        let lsb = RadPerSec::from_bits(1);
        let near = |a: RadPerSec, b: f64| (a - RadPerSec::from_num(b)).abs() <= lsb;
        assert!(near(d.tables().friction().stick_threshold(), 0.02));
        assert!(near(d.tables().friction().slip_threshold(), 0.03));
        assert!(dev.initial.is_new());
        assert!(d.adapt().is_none());
    }

    fn core_issue(from: &str, to: &str) -> crate::config::ConfigIssue {
        let src = crate::DEMO_CONFIG.replace(from, to);
        assert_ne!(
            src,
            crate::DEMO_CONFIG,
            "replacement of {from:?} did not apply"
        );
        let e = LoadedConfig::from_str(&src, "t.toml").unwrap_err();
        assert_eq!(e.issues.len(), 1, "{e}");
        e.issues[0].clone()
    }

    #[test]
    fn core_rejections_are_located_at_their_key() {
        // The thermal model needs dt ≤ its time constant: only the core knows.
        let i = core_issue(
            "cooling_time_constant_s = 60.0",
            "cooling_time_constant_s = 0.0005",
        );
        assert_eq!(i.key.as_deref(), Some("thermal.cooling_time_constant_s"));
        assert!(
            i.line.is_some() && i.message.contains("time constant"),
            "{i:?}"
        );
        // A filter cut-off so low that the core's filter coefficient underflows.
        let i = core_issue("filter_cutoff_hz = 50.0", "filter_cutoff_hz = 0.0000001");
        assert_eq!(i.key.as_deref(), Some("sensing.filter_cutoff_hz"));
        // The fallback must be less certain than a healthy channel: the core's sensor checks it.
        let i = core_issue("uncertainty_n = 3000.0", "uncertainty_n = 100.0");
        assert_eq!(i.key.as_deref(), Some("actuator.uncertainty_n"));
    }

    #[test]
    fn initial_energy_sets_bedding_through_a_state_record() {
        // [calc] bedding = 1 − exp(−E/E_bed): E = E_bed → 0.632 121.
        let src = crate::DEMO_CONFIG.replace("initial_energy_j = 0.0", "initial_energy_j = 2.0e6");
        let cfg = LoadedConfig::from_str(&src, "t.toml").unwrap().config;
        let dev = CoreDevice::build(&cfg).unwrap();
        let ChannelDevice::Three(d) = &dev.device else {
            panic!("three channels");
        };
        let rec = dev.initial.record(d).unwrap();
        let mut est = Estimator::restore(d, &rec).unwrap();
        let e = est.step(&Inputs::<3>::at_rest(8000));
        let b: f64 = e.bedding.to_num();
        assert!((b - (1.0 - (-1.0f64).exp())).abs() < 1e-8, "{b}");
        // Wear follows from the same energy: k·E / (faces · pad area) [calc].
        let w: f64 = e.wear.to_num();
        assert!((w - 1.0e-11 * 2.0e6 / (2.0 * 0.0272)).abs() < 1e-7, "{w}");
    }
}
