//! The two devices the benchmarks step: a fully featured one and a minimal one.
//!
//! Both are a fictional test-rig caliper brake (demo numbers, invented: not a product's data):
//! an annular pad track Ri = 60 mm, Ro = 100 mm on one disc, 2 friction faces, a dry resin-like
//! lining, 1 kHz loop.
//!
//! | feature | [`full`] | [`minimal`] |
//! |---|---|---|
//! | force channels | 3, voted, low-pass 200 Hz, stuck check, temperature compensation | 1, low-pass 200 Hz |
//! | actuator fallback | yes (command every sample) | no |
//! | radius table (force × bedding) | 3 × 3 | 2 × 2 |
//! | μ table (temperature × slip speed) | 6 × 5, viscous and no-load drag | 3 × 3, dry |
//! | thermal | rotor and lining nodes | rotor only |
//! | wear and bedding | yes | yes (always part of the step) |
//! | thermal and wear sub-rate | every 8 samples | every 8 samples |
//! | adaptation | RLS with a reference torque every sample | none |
//! | uncertainty | root-sum-square (integer square root) | worst case |

use clampwise_core::adapt::{AdaptConfig, AdaptError};
use clampwise_core::config::{
    DeviceConfig, DeviceError as CoreDeviceError, DeviceParams, Limits, SensorParams, Tables,
    Tolerances,
};
use clampwise_core::estimator::Combination;
use clampwise_core::friction::{FrictionConfig, FrictionError, FrictionParams, MuTable};
use clampwise_core::geometry::{Annulus, Contact, GeometryError, Shape, build_radius_table};
use clampwise_core::sensor::{
    ActuatorCommand, ActuatorTransfer, AdcRails, ChannelCalibration, Debounce, DebounceSet,
    DiagnosticLimits, NewtonsPerCommand, NewtonsPerCount, NewtonsPerKelvin, NewtonsPerSecond,
    PerKelvin, SensorError, StuckCheck, TemperatureCompensation, VotingLimits,
};
use clampwise_core::table::TableError;
use clampwise_core::thermal::{Cooling, LiningNode, ThermalError, ThermalParams};
use clampwise_core::units::{Celsius, NewtonMetres, Newtons, Ratio, Seconds};
use clampwise_core::wear::{WearError, WearParams};

/// The fully featured device: 3 channels, 3 × 3 radius table, 6 × 5 μ table.
pub type FullDevice = DeviceConfig<Tables<3, 3, 6, 5>, 3>;
/// The minimal device: 1 channel, 2 × 2 radius table, 3 × 3 μ table.
pub type MinimalDevice = DeviceConfig<Tables<2, 2, 3, 3>, 1>;

/// Sample period, s.
pub const DT: f64 = 1e-3;
/// Both devices advance the thermal and wear states every 8 samples (125 Hz): a sub-rate task
/// inside the step, as a controller runs its slow models (`DeviceParts::thermal_wear_every`).
pub const THERMAL_WEAR_EVERY: u8 = 8;
/// Sample rate, Hz.
pub const RATE_HZ: u32 = 1000;
/// ADC counts per newton of clamp force (1 count = 1/256 N, the [`Newtons`] LSB, so a count
/// maps to newtons exactly).
pub const COUNTS_PER_NEWTON: f64 = 256.0;
/// Friction faces of the caliper.
pub const FACES: u8 = 2;
/// Inner and outer radius of the pad track, m.
pub const TRACK_M: (f64, f64) = (0.060, 0.100);

/// Temperature breakpoints of the full μ table, °C.
pub const MU_TEMPERATURES: [f64; 6] = [-40.0, 100.0, 230.0, 400.0, 650.0, 900.0];
/// Slip-speed breakpoints of the full μ table, rad/s.
pub const MU_SPEEDS: [f64; 5] = [0.0, 10.0, 100.0, 500.0, 2000.0];
/// Full μ table (demo lining, invented): μ falls above about 230 °C, where resin-bonded
/// linings start to drift \[pub: Day, Braking of Road Vehicles, ch. 2\], and a little with
/// slip speed.
pub const MU_VALUES: [[f64; 5]; 6] = [
    [0.36, 0.35, 0.34, 0.33, 0.31],
    [0.38, 0.37, 0.36, 0.35, 0.33],
    [0.37, 0.36, 0.35, 0.34, 0.32],
    [0.31, 0.30, 0.29, 0.28, 0.26],
    [0.26, 0.25, 0.24, 0.23, 0.21],
    [0.20, 0.19, 0.18, 0.17, 0.16],
];
/// Friction parameters of the full device (dry caliper with a little seal and air drag).
pub const FULL_FRICTION: FrictionParams = FrictionParams {
    static_to_kinetic: 1.2,
    stick_speed: 0.05,
    stick_hysteresis: 0.04,
    transition_speed: 0.5,
    viscous_drag: 0.02,
    no_load_drag: 0.5,
};
/// Friction parameters of the minimal device (dry, no drag).
pub const MINIMAL_FRICTION: FrictionParams = FrictionParams {
    viscous_drag: 0.0,
    no_load_drag: 0.0,
    ..FULL_FRICTION
};
/// Clamp-force breakpoints of the full radius table, N.
pub const RADIUS_FORCES: [f64; 3] = [0.0, 100e3, 250e3];
/// Bedding breakpoints of the full radius table.
pub const RADIUS_BEDDING: [f64; 3] = [0.0, 0.5, 1.0];
/// Bedding energy E₀, J.
pub const BEDDING_ENERGY: f64 = 5e6;

/// Why a bench device could not be built (a mistake in the constants above).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum DeviceError {
    /// Contact geometry or radius table.
    Geometry(GeometryError),
    /// μ table.
    Table(TableError),
    /// Friction parameters.
    Friction(FrictionError),
    /// Thermal parameters.
    Thermal(ThermalError),
    /// Wear parameters.
    Wear(WearError),
    /// Sensor conditioning.
    Sensor(SensorError),
    /// Adaptation.
    Adapt(AdaptError),
    /// The device as a whole (period, thermal, wear, sensors).
    Device(CoreDeviceError),
}

impl core::fmt::Display for DeviceError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        match self {
            Self::Geometry(e) => write!(f, "geometry: {e}"),
            Self::Table(e) => write!(f, "mu table: {e}"),
            Self::Friction(e) => write!(f, "friction: {e}"),
            Self::Thermal(e) => write!(f, "thermal: {e}"),
            Self::Wear(e) => write!(f, "wear: {e}"),
            Self::Sensor(e) => write!(f, "sensor: {e}"),
            Self::Adapt(e) => write!(f, "adaptation: {e}"),
            Self::Device(e) => write!(f, "{e}"),
        }
    }
}

impl core::error::Error for DeviceError {}

macro_rules! from_error {
    ($($t:ty => $v:ident),* $(,)?) => {
        $(impl From<$t> for DeviceError {
            fn from(e: $t) -> Self {
                Self::$v(e)
            }
        })*
    };
}
from_error!(
    GeometryError => Geometry, TableError => Table, FrictionError => Friction,
    ThermalError => Thermal, WearError => Wear, SensorError => Sensor, AdaptError => Adapt,
    CoreDeviceError => Device,
);

/// The caliper's contact: the annular track on both faces of the disc.
///
/// # Errors
/// Only if the constants above are wrong.
pub fn contact() -> Result<Contact<'static>, GeometryError> {
    Contact::new(
        Shape::Annulus(Annulus::new(TRACK_M.0, TRACK_M.1)?),
        FACES,
        None,
    )
}

/// Thermal parameters; `two_node` adds the lining node.
pub fn thermal_params(two_node: bool) -> ThermalParams {
    ThermalParams {
        rotor_mass: 8.0,
        rotor_specific_heat: 460.0,
        rotor_share: 0.9,
        cooling: Cooling::TimeConstant(613.0),
        ambient: 20.0,
        lining: two_node.then_some(LiningNode {
            mass: 0.8,
            specific_heat: 1250.0,
            conductance_to_rotor: 15.0,
        }),
        fade_warning: 350.0,
        over_temperature: 500.0,
        flag_hysteresis: 10.0,
        measured: None,
    }
}

/// Wear parameters (demo lining).
pub const fn wear_params() -> WearParams {
    WearParams {
        bedding_energy: BEDDING_ENERGY,
        specific_wear_rate: 4e-14,
        lining_area: 8e-3,
        initial_thickness: 0.010,
        minimum_thickness: 0.002,
    }
}

fn channel(temperature: Option<TemperatureCompensation>) -> ChannelCalibration {
    ChannelCalibration {
        gain: NewtonsPerCount::from_num(1.0 / COUNTS_PER_NEWTON),
        offset: Newtons::ZERO,
        rails: AdcRails {
            low: -(1 << 30),
            high: 1 << 30,
            margin: 16,
        },
        temperature,
    }
}

fn limits(stuck: Option<StuckCheck>) -> DiagnosticLimits {
    DiagnosticLimits {
        force_min: Newtons::from_num(-5_000),
        force_max: Newtons::from_num(250_000),
        // Permissive: the bench input jumps between operating points every few samples.
        max_rate: NewtonsPerSecond::from_num(400_000_000),
        noise_band: Newtons::from_num(50),
        stuck,
        debounce: DebounceSet::uniform(Debounce {
            raise_after: 3,
            clear_after: 10,
        }),
        max_hold_samples: 2,
    }
}

const VOTING: VotingLimits = VotingLimits {
    tolerance: Newtons::lit("500"),
    channel_uncertainty: Newtons::lit("100"),
};

/// The actuator transfer of the full device: 5 kN per command unit (fictional).
pub const FALLBACK: ActuatorTransfer = ActuatorTransfer {
    gain: NewtonsPerCommand::lit("5000"),
    offset: Newtons::ZERO,
    hysteresis: Newtons::lit("200"),
    uncertainty: Newtons::lit("3000"),
    response_time: Seconds::ZERO,
};

/// Adaptation band, forgetting factor, torque full scale (N·m) and minimum excitation.
pub const ADAPT: (f64, f64, f64, f64, f64) = (0.7, 1.3, 0.995, 5000.0, 0.02);

/// The fully featured device.
///
/// # Errors
/// Only if the constants above are wrong.
pub fn full() -> Result<FullDevice, DeviceError> {
    let radius = build_radius_table(&contact()?, &RADIUS_FORCES, &RADIUS_BEDDING)?;
    let mu = MuTable::new(&MU_TEMPERATURES, &MU_SPEEDS, &MU_VALUES)?;
    let compensation = TemperatureCompensation {
        reference: Celsius::from_num(20),
        min: Celsius::from_num(-40),
        max: Celsius::from_num(120),
        zero_per_kelvin: NewtonsPerKelvin::from_num(0.5),
        span_per_kelvin: PerKelvin::from_num(1e-4),
    };
    let stuck = StuckCheck {
        time: Seconds::from_num(0.5),
        command_span: ActuatorCommand::from_num(2),
    };
    let sensor = SensorParams {
        channels: [channel(Some(compensation)); 3],
        filter_cutoff_hz: 200.0,
        limits: limits(Some(stuck)),
        voting: VOTING,
        fallback: Some(FALLBACK),
    };
    let (lo, hi, lambda, fs, excitation) = ADAPT;
    Ok(DeviceConfig::new(&DeviceParams {
        sample_period_s: DT,
        thermal_wear_every: THERMAL_WEAR_EVERY,
        faces: FACES,
        tables: Tables::new(radius, FrictionConfig::new(mu, &FULL_FRICTION)?),
        thermal: thermal_params(true),
        wear: wear_params(),
        sensor,
        adapt: Some(AdaptConfig::new(
            lo,
            hi,
            lambda,
            NewtonMetres::from_num(fs),
            excitation,
        )?),
        limits: Limits {
            touch_force: Newtons::from_num(100),
            adapt_min_force: Newtons::from_num(500),
        },
        tolerances: Tolerances {
            mu: Ratio::from_num(0.20),
            radius: Ratio::from_num(0.01),
            combination: Combination::RootSumSquare,
        },
    })?)
}

/// The minimal device.
///
/// # Errors
/// Only if the constants above are wrong.
pub fn minimal() -> Result<MinimalDevice, DeviceError> {
    let radius = build_radius_table(&contact()?, &[0.0, 250e3], &[0.0, 1.0])?;
    let mu = MuTable::new(
        &[0.0, 200.0, 400.0],
        &[0.0, 50.0, 200.0],
        &[[0.40, 0.39, 0.37], [0.38, 0.37, 0.35], [0.30, 0.29, 0.27]],
    )?;
    let sensor = SensorParams {
        channels: [channel(None)],
        filter_cutoff_hz: 200.0,
        limits: limits(None),
        voting: VOTING,
        fallback: None,
    };
    Ok(DeviceConfig::new(&DeviceParams {
        sample_period_s: DT,
        thermal_wear_every: THERMAL_WEAR_EVERY,
        faces: FACES,
        tables: Tables::new(radius, FrictionConfig::new(mu, &MINIMAL_FRICTION)?),
        thermal: thermal_params(false),
        wear: wear_params(),
        sensor,
        adapt: None,
        limits: Limits {
            touch_force: Newtons::from_num(100),
            adapt_min_force: Newtons::from_num(500),
        },
        tolerances: Tolerances {
            mu: Ratio::from_num(0.20),
            radius: Ratio::from_num(0.01),
            combination: Combination::WorstCase,
        },
    })?)
}
