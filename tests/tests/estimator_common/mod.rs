//! A test device built from SI values: an annular caliper-style contact on one disc with
//! invented (demo) lining data. Shared by the estimator tests.
#![allow(
    dead_code,
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::cast_possible_truncation
)]

use clampwise_core::adapt::AdaptConfig;
use clampwise_core::config::{DeviceConfig, DeviceParts, Limits, Tables, Tolerances};
use clampwise_core::estimator::Combination;
use clampwise_core::friction::{FrictionConfig, FrictionParams, MuTable};
use clampwise_core::geometry::{Annulus, Contact, build_radius_table};
use clampwise_core::sensor::{
    ActuatorTransfer, AdcRails, ChannelCalibration, Debounce, DebounceSet, DiagnosticLimits,
    LowPass, NewtonsPerCount, NewtonsPerSecond, SensorConfig, VotingLimits,
};
use clampwise_core::thermal::{Cooling, ThermalConfig, ThermalParams};
use clampwise_core::units::{NewtonMetres, Newtons, Ratio, Seconds};
use clampwise_core::wear::{WearConfig, WearParams};

/// The test devices' tables: 2 × 2 radius, 3 × 3 μ.
pub type TestTables = Tables<2, 2, 3, 3>;
pub type Device<const C: usize> = DeviceConfig<TestTables, C>;

pub const DT: f64 = 1e-3;
/// Force channels report newtons directly: 1 count = 1/256 N (the Newtons LSB).
pub const COUNTS_PER_NEWTON: f64 = 256.0;

/// Knobs the tests turn.
#[derive(Clone, Copy, Debug)]
pub struct Spec<'a> {
    pub contact: Contact<'a>,
    pub adapt: bool,
    pub fallback: bool,
    pub viscous_drag: f64,
    pub no_load_drag: f64,
    pub touch_force_n: f64,
    pub combination: Combination,
}

pub fn annulus_contact(faces: u8, cone_half_angle_rad: Option<f64>) -> Contact<'static> {
    // Annulus check vector [calc: annulus radii of Shigley ch. 16]: Ro = 100 mm, Ri = 60 mm.
    let a = Annulus::new(0.060, 0.100).unwrap();
    Contact::new(
        clampwise_core::geometry::Shape::Annulus(a),
        faces,
        cone_half_angle_rad,
    )
    .unwrap()
}

impl Default for Spec<'static> {
    fn default() -> Self {
        Self {
            contact: annulus_contact(2, None),
            adapt: false,
            fallback: false,
            viscous_drag: 0.0,
            no_load_drag: 0.0,
            touch_force_n: 100.0,
            combination: Combination::WorstCase,
        }
    }
}

/// Demo lining (invented numbers): μ 0.40 cold, fading to 0.30 at 400 °C, a little lower at
/// speed.
pub fn mu_table() -> MuTable<3, 3> {
    MuTable::new(
        &[0.0, 200.0, 400.0],
        &[0.0, 50.0, 200.0],
        &[[0.40, 0.39, 0.37], [0.38, 0.37, 0.35], [0.30, 0.29, 0.27]],
    )
    .unwrap()
}

pub fn friction_params(spec: &Spec<'_>) -> FrictionParams {
    FrictionParams {
        static_to_kinetic: 1.2,
        stick_speed: 0.05,
        stick_hysteresis: 0.04,
        transition_speed: 0.5,
        viscous_drag: spec.viscous_drag,
        no_load_drag: spec.no_load_drag,
    }
}

pub fn thermal_params() -> ThermalParams {
    ThermalParams {
        rotor_mass: 8.0,
        rotor_specific_heat: 460.0,
        rotor_share: 0.9,
        cooling: Cooling::TimeConstant(613.0),
        ambient: 20.0,
        lining: None,
        fade_warning: 350.0,
        over_temperature: 500.0,
        flag_hysteresis: 10.0,
        measured: None,
    }
}

pub fn wear_params() -> WearParams {
    WearParams {
        bedding_energy: 5e6,
        specific_wear_rate: 4e-14,
        lining_area: 8e-3,
        initial_thickness: 0.010,
        minimum_thickness: 0.002,
    }
}

/// One channel's calibration: counts are newtons in Q8, no rails, no temperature compensation.
pub fn calibration() -> ChannelCalibration {
    ChannelCalibration {
        gain: NewtonsPerCount::from_num(1.0 / COUNTS_PER_NEWTON),
        offset: Newtons::ZERO,
        rails: AdcRails {
            low: i32::MIN,
            high: i32::MAX,
            margin: 0,
        },
        temperature: None,
    }
}

/// The diagnostic limits of the test devices (no stuck check).
pub fn diagnostic_limits() -> DiagnosticLimits {
    DiagnosticLimits {
        force_min: Newtons::from_num(-5_000),
        force_max: Newtons::from_num(250_000),
        max_rate: NewtonsPerSecond::from_num(50_000_000),
        noise_band: Newtons::from_num(50),
        stuck: None,
        debounce: DebounceSet::uniform(Debounce {
            raise_after: 3,
            clear_after: 10,
        }),
        max_hold_samples: 2,
    }
}

/// The actuator fallback of the test devices (no lag).
pub fn actuator_transfer() -> ActuatorTransfer {
    ActuatorTransfer {
        gain: clampwise_core::sensor::NewtonsPerCommand::from_num(1000),
        offset: Newtons::ZERO,
        hysteresis: Newtons::from_num(100),
        uncertainty: Newtons::from_num(2000),
        response_time: clampwise_core::units::Seconds::ZERO,
    }
}

/// A sensor configuration from its parts: C channels of `cal`, a 200 Hz filter, the test
/// voting limits.
pub fn sensor_from<const C: usize>(
    cal: ChannelCalibration,
    limits: DiagnosticLimits,
    fallback: Option<ActuatorTransfer>,
) -> SensorConfig<C> {
    let voting = VotingLimits {
        tolerance: Newtons::from_num(500),
        channel_uncertainty: Newtons::from_num(100),
    };
    let filter = LowPass::new(200.0, 1000).unwrap();
    SensorConfig::new(1000, [cal; C], filter, limits, voting, fallback).unwrap()
}

pub fn sensor_config<const C: usize>(fallback: bool) -> SensorConfig<C> {
    sensor_from(
        calibration(),
        diagnostic_limits(),
        fallback.then(actuator_transfer),
    )
}

pub fn device<const C: usize>(spec: &Spec<'_>) -> Device<C> {
    device_with_sub_rate(spec, 1)
}

/// As [`device`], with the thermal and wear states advanced every `every` samples (the
/// thermal model built for `every` · DT).
pub fn device_with_sub_rate<const C: usize>(spec: &Spec<'_>, every: u8) -> Device<C> {
    device_with_sensor(spec, every, sensor_config::<C>(spec.fallback))
}

/// As [`device_with_sub_rate`], with the sensor configuration given (`spec.fallback` is then
/// the sensor's business).
pub fn device_with_sensor<const C: usize>(
    spec: &Spec<'_>,
    every: u8,
    sensor: SensorConfig<C>,
) -> Device<C> {
    let radius = build_radius_table::<2, 2>(&spec.contact, &[0.0, 250_000.0], &[0.0, 1.0]).unwrap();
    DeviceConfig::from_parts(DeviceParts {
        sample_period: Seconds::from_num(DT),
        thermal_wear_every: every,
        faces: spec.contact.faces(),
        tables: Tables::new(
            radius,
            FrictionConfig::new(mu_table(), &friction_params(spec)).unwrap(),
        ),
        thermal: ThermalConfig::new(&thermal_params(), DT * f64::from(every)).unwrap(),
        wear: WearConfig::new(&wear_params(), DT).unwrap(),
        sensor,
        adapt: spec.adapt.then(|| {
            AdaptConfig::new(0.7, 1.3, 0.995, NewtonMetres::from_num(5000), 0.02).unwrap()
        }),
        limits: Limits {
            touch_force: Newtons::from_num(spec.touch_force_n),
            adapt_min_force: Newtons::from_num(500),
        },
        tolerances: Tolerances {
            mu: Ratio::from_num(0.20),
            radius: Ratio::from_num(0.01),
            combination: spec.combination,
        },
    })
    .unwrap()
}

/// Counts for a force in newtons.
pub fn counts(force_n: f64) -> i32 {
    (force_n * COUNTS_PER_NEWTON).round() as i32
}
