//! A [`cw_device_desc`] to the core's `DeviceConfig`, through the core's own checked
//! constructors (the ones the emitted Rust source of a firmware calls), and its checksum
//! compared with the one the description carries.
//!
//! The channel count is a type parameter of the core's configuration and a run-time value in
//! C: [`ChannelDevice`] holds one variant per count, and code that uses it matches once.

use clampwise_core::adapt::{AdaptConfig, AdaptRaw};
use clampwise_core::config::{
    ByEither, DeviceConfig, DeviceParts, LeverAxis, Limits, Tables, Tolerances,
};
use clampwise_core::estimator::Combination;
use clampwise_core::friction::{FrictionConfig, MuTable, ViscousDrag};
use clampwise_core::geometry::RadiusTable;
use clampwise_core::sensor::{
    ActuatorCommand, ActuatorTransfer, AdcRails, ChannelCalibration, Debounce, DebounceSet,
    DiagnosticLimits, LowPass, NewtonsPerCommand, NewtonsPerCount, NewtonsPerKelvin,
    NewtonsPerSecond, PerKelvin, SensorConfig, StuckCheck, TemperatureCompensation, VotingLimits,
};
use clampwise_core::table::Table2;
use clampwise_core::thermal::{Plausibility, ThermalConfig, ThermalRaw};
use clampwise_core::units::{Celsius, Metres, NewtonMetres, Newtons, RadPerSec, Ratio, Seconds};
use clampwise_core::wear::{WearConfig, WearRaw};
use fixed::FixedI32;
use fixed::types::extra::LeEqU32;

use crate::desc::{
    CW_MU_SPEEDS_MAX, CW_MU_TEMPERATURES_MAX, CW_RADIUS_FORCES_MAX, CW_RADIUS_SECOND_MAX, cw_adapt,
    cw_channel, cw_debounce, cw_device_desc, cw_friction, cw_sensor, cw_thermal, cw_wear,
};
use crate::status::cw_status;

/// The table capacities of the C API (the host's): every device's tables fit, at their exact
/// sizes; the radius table's second axis is read at run time.
pub type CapiTables = Tables<
    CW_RADIUS_FORCES_MAX,
    CW_RADIUS_SECOND_MAX,
    CW_MU_TEMPERATURES_MAX,
    CW_MU_SPEEDS_MAX,
    ByEither,
>;

/// The core's configuration of a device with `C` channels at the C API's capacities.
pub type Device<const C: usize> = DeviceConfig<CapiTables, C>;

/// A device of 1, 2, 3 or 4 clamp-force channels.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ChannelDevice {
    /// One channel.
    #[cfg(feature = "channels-1")]
    One(Device<1>),
    /// Two channels.
    #[cfg(feature = "channels-2")]
    Two(Device<2>),
    /// Three channels.
    #[cfg(feature = "channels-3")]
    Three(Device<3>),
    /// Four channels.
    #[cfg(feature = "channels-4")]
    Four(Device<4>),
}

impl ChannelDevice {
    /// Build and check the device a description holds.
    ///
    /// # Errors
    /// The [`cw_status`] naming the part the core rejected, or
    /// [`cw_status::CW_ERR_CHECKSUM`] when the numbers are not those the host emitted.
    pub fn from_desc(d: &cw_device_desc) -> Result<Self, cw_status> {
        let device = match d.channels {
            #[cfg(feature = "channels-1")]
            1 => Self::One(device(d)?),
            #[cfg(feature = "channels-2")]
            2 => Self::Two(device(d)?),
            #[cfg(feature = "channels-3")]
            3 => Self::Three(device(d)?),
            #[cfg(feature = "channels-4")]
            4 => Self::Four(device(d)?),
            _ => return Err(cw_status::CW_ERR_CHANNELS),
        };
        if device.checksum() == d.checksum {
            Ok(device)
        } else {
            Err(cw_status::CW_ERR_CHECKSUM)
        }
    }

    /// The core's checksum of the configuration.
    pub fn checksum(&self) -> u32 {
        match self {
            #[cfg(feature = "channels-1")]
            Self::One(d) => d.checksum(),
            #[cfg(feature = "channels-2")]
            Self::Two(d) => d.checksum(),
            #[cfg(feature = "channels-3")]
            Self::Three(d) => d.checksum(),
            #[cfg(feature = "channels-4")]
            Self::Four(d) => d.checksum(),
        }
    }

    /// Number of clamp-force channels.
    pub const fn channels(&self) -> u8 {
        match self {
            #[cfg(feature = "channels-1")]
            Self::One(_) => 1,
            #[cfg(feature = "channels-2")]
            Self::Two(_) => 2,
            #[cfg(feature = "channels-3")]
            Self::Three(_) => 3,
            #[cfg(feature = "channels-4")]
            Self::Four(_) => 4,
        }
    }
}

fn flag(v: u8) -> Result<bool, cw_status> {
    match v {
        0 => Ok(false),
        1 => Ok(true),
        _ => Err(cw_status::CW_ERR_BAD_FLAG),
    }
}

/// A table of the first `x_len` × `y_len` breakpoints of fixed-capacity arrays of raw bits.
fn table<X: LeEqU32, Y: LeEqU32, Z: LeEqU32, const NX: usize, const NY: usize>(
    (x, x_len): (&[i32; NX], u8),
    (y, y_len): (&[i32; NY], u8),
    z: &[[i32; NY]; NX],
    error: cw_status,
) -> Result<Table2<X, Y, Z, NX, NY>, cw_status> {
    let (x_len, y_len) = (usize::from(x_len), usize::from(y_len));
    let xs = x.map(FixedI32::<X>::from_bits);
    let ys = y.map(FixedI32::<Y>::from_bits);
    let zs = z.map(|row| row.map(FixedI32::<Z>::from_bits));
    let rows: [&[FixedI32<Z>]; NX] =
        core::array::from_fn(|i| zs.get(i).and_then(|row| row.get(..y_len)).unwrap_or(&[]));
    match (xs.get(..x_len), ys.get(..y_len), rows.get(..x_len)) {
        (Some(xs), Some(ys), Some(rows)) => {
            Table2::from_bit_slices(xs, ys, rows).map_err(|_| error)
        }
        _ => Err(error),
    }
}

fn friction(
    f: &cw_friction,
) -> Result<FrictionConfig<CW_MU_TEMPERATURES_MAX, CW_MU_SPEEDS_MAX>, cw_status> {
    let mu: MuTable<CW_MU_TEMPERATURES_MAX, CW_MU_SPEEDS_MAX> = table(
        (&f.mu.temperature_q16, f.mu.temperatures_len),
        (&f.mu.speed_q16, f.mu.speeds_len),
        &f.mu.mu_q30,
        cw_status::CW_ERR_MU_TABLE,
    )?;
    FrictionConfig::from_bits(
        mu,
        Ratio::from_bits(f.static_to_kinetic_q30),
        RadPerSec::from_bits(f.stick_speed_q16),
        RadPerSec::from_bits(f.stick_hysteresis_q16),
        RadPerSec::from_bits(f.transition_speed_q16),
        ViscousDrag::from_bits(f.viscous_drag_q16),
        NewtonMetres::from_bits(f.no_load_drag_q12),
    )
    .map_err(|_| cw_status::CW_ERR_FRICTION)
}

fn thermal(t: &cw_thermal) -> Result<ThermalConfig, cw_status> {
    let measured = flag(t.has_measured)?.then_some(Plausibility {
        min: Celsius::from_bits(t.measured_min_q16),
        max: Celsius::from_bits(t.measured_max_q16),
        max_step: t.measured_max_step_q16,
    });
    ThermalConfig::from_bits(ThermalRaw {
        dt: Seconds::from_bits(t.dt_q32),
        k_q62: t.k_q62,
        gamma_q62: t.gamma_q62,
        two_node: flag(t.two_node)?,
        ambient: Celsius::from_bits(t.ambient_q16),
        fade_warning: Celsius::from_bits(t.fade_warning_q16),
        over_temperature: Celsius::from_bits(t.over_temperature_q16),
        flag_hysteresis: Celsius::from_bits(t.flag_hysteresis_q16),
        measured,
    })
    .map_err(|_| cw_status::CW_ERR_THERMAL)
}

fn wear(w: &cw_wear) -> Result<WearConfig, cw_status> {
    WearConfig::from_bits(WearRaw {
        dt_q63: w.dt_q63,
        e0_q48: w.e0_q48.get(),
        bedding_recip: w.bedding_recip.get(),
        wear_mant: w.wear_mant,
        wear_shift: w.wear_shift,
        initial_thickness: Metres::from_bits(w.initial_thickness_q24),
        minimum_thickness: Metres::from_bits(w.minimum_thickness_q24),
    })
    .map_err(|_| cw_status::CW_ERR_WEAR)
}

fn channel(c: &cw_channel) -> Result<ChannelCalibration, cw_status> {
    let temperature = flag(c.has_temperature)?.then_some(TemperatureCompensation {
        reference: Celsius::from_bits(c.tc_reference_q16),
        min: Celsius::from_bits(c.tc_min_q16),
        max: Celsius::from_bits(c.tc_max_q16),
        zero_per_kelvin: NewtonsPerKelvin::from_bits(c.tc_zero_per_kelvin_q32),
        span_per_kelvin: PerKelvin::from_bits(c.tc_span_per_kelvin_q30),
    });
    Ok(ChannelCalibration {
        gain: NewtonsPerCount::from_bits(c.gain_q32),
        offset: Newtons::from_bits(c.offset_q8),
        rails: AdcRails {
            low: c.rail_low,
            high: c.rail_high,
            margin: c.rail_margin,
        },
        temperature,
    })
}

const UNSET_CHANNEL: ChannelCalibration = ChannelCalibration {
    gain: NewtonsPerCount::ZERO,
    offset: Newtons::ZERO,
    rails: AdcRails {
        low: 0,
        high: 0,
        margin: 0,
    },
    temperature: None,
};

const fn debounce(d: cw_debounce) -> Debounce {
    Debounce {
        raise_after: d.raise_after,
        clear_after: d.clear_after,
    }
}

fn sensor<const C: usize>(s: &cw_sensor) -> Result<SensorConfig<C>, cw_status> {
    // Every entry is overwritten: the description holds CW_CHANNELS_MAX ≥ C calibrations.
    let mut channels = [UNSET_CHANNEL; C];
    for (out, c) in channels.iter_mut().zip(s.channels.iter()) {
        *out = channel(c)?;
    }
    let filter = LowPass::from_bits(s.filter_alpha_q60, s.sample_rate_hz)
        .map_err(|_| cw_status::CW_ERR_SENSOR)?;
    let stuck = flag(s.has_stuck)?.then_some(StuckCheck {
        time: Seconds::from_bits(s.stuck_time_q32),
        command_span: ActuatorCommand::from_bits(s.stuck_command_span_q16),
    });
    let limits = DiagnosticLimits {
        force_min: Newtons::from_bits(s.force_min_q8),
        force_max: Newtons::from_bits(s.force_max_q8),
        max_rate: NewtonsPerSecond::from_bits(s.max_rate_q32),
        noise_band: Newtons::from_bits(s.noise_band_q8),
        stuck,
        debounce: DebounceSet {
            invalid: debounce(s.debounce_invalid),
            rail: debounce(s.debounce_rail),
            range: debounce(s.debounce_range),
            rate: debounce(s.debounce_rate),
            stuck: debounce(s.debounce_stuck),
            disagreement: debounce(s.debounce_disagreement),
        },
        max_hold_samples: s.max_hold_samples,
    };
    let voting = VotingLimits {
        tolerance: Newtons::from_bits(s.voting_tolerance_q8),
        channel_uncertainty: Newtons::from_bits(s.voting_channel_uncertainty_q8),
    };
    let fallback = flag(s.has_fallback)?.then_some(ActuatorTransfer {
        gain: NewtonsPerCommand::from_bits(s.fallback_gain_q32),
        offset: Newtons::from_bits(s.fallback_offset_q8),
        hysteresis: Newtons::from_bits(s.fallback_hysteresis_q8),
        uncertainty: Newtons::from_bits(s.fallback_uncertainty_q8),
        response_time: Seconds::from_bits(s.fallback_response_time_q32),
    });
    SensorConfig::new(s.sample_rate_hz, channels, filter, limits, voting, fallback)
        .map_err(|_| cw_status::CW_ERR_SENSOR)
}

fn adapt(a: &cw_adapt) -> Result<AdaptConfig, cw_status> {
    AdaptConfig::from_bits(AdaptRaw {
        min_factor: Ratio::from_bits(a.min_factor_q30),
        max_factor: Ratio::from_bits(a.max_factor_q30),
        forgetting: Ratio::from_bits(a.forgetting_q30),
        torque_full_scale: NewtonMetres::from_bits(a.torque_full_scale_q12),
        min_excitation: Ratio::from_bits(a.min_excitation_q30),
        initial_covariance: Ratio::from_bits(a.initial_covariance_q30),
        min_covariance: Ratio::from_bits(a.min_covariance_q30),
        max_covariance: Ratio::from_bits(a.max_covariance_q30),
    })
    .map_err(|_| cw_status::CW_ERR_ADAPT)
}

fn device<const C: usize>(d: &cw_device_desc) -> Result<Device<C>, cw_status> {
    let radius: RadiusTable<CW_RADIUS_FORCES_MAX, CW_RADIUS_SECOND_MAX> = table(
        (&d.radius.force_q8, d.radius.forces_len),
        (&d.radius.second_q30, d.radius.second_len),
        &d.radius.radius_q24,
        cw_status::CW_ERR_RADIUS_TABLE,
    )?;
    let axis = match d.radius.lever_axis {
        0 => LeverAxis::Bedding,
        1 => LeverAxis::Mu,
        _ => return Err(cw_status::CW_ERR_RADIUS_TABLE),
    };
    let combination = match d.combination {
        0 => Combination::WorstCase,
        1 => Combination::RootSumSquare,
        _ => return Err(cw_status::CW_ERR_DEVICE),
    };
    let adapt = if flag(d.has_adapt)? {
        Some(adapt(&d.adapt)?)
    } else {
        None
    };
    DeviceConfig::from_parts(DeviceParts {
        sample_period: Seconds::from_bits(d.sample_period_q32),
        thermal_wear_every: d.thermal_wear_every,
        faces: d.faces,
        tables: Tables::with_axis(radius, friction(&d.friction)?, axis),
        thermal: thermal(&d.thermal)?,
        wear: wear(&d.wear)?,
        sensor: sensor(&d.sensor)?,
        adapt,
        limits: Limits {
            touch_force: Newtons::from_bits(d.touch_force_q8),
            adapt_min_force: Newtons::from_bits(d.adapt_min_force_q8),
        },
        tolerances: Tolerances {
            mu: Ratio::from_bits(d.mu_tolerance_q30),
            radius: Ratio::from_bits(d.radius_tolerance_q30),
            combination,
        },
    })
    .map_err(|_| cw_status::CW_ERR_DEVICE)
}
