//! A [`cw_device_desc`] to the core's `DeviceConfig`, through the core's own checked
//! constructors (the ones the emitted Rust source of a firmware calls), and its checksum
//! compared with the one the description carries.
//!
//! The channel count is a type parameter of the core's configuration and a run-time value in
//! C: [`DeviceRef`] holds one variant per count, and code that uses it matches once. The device
//! is built in place, in the caller's storage (see [`crate::storage`]): the configuration is
//! about as large as a small part's whole stack.

use clampwise_core::adapt::{AdaptConfig, AdaptRaw};
use core::mem::MaybeUninit;

#[cfg(all(feature = "axis-bedding", feature = "axis-mu"))]
use clampwise_core::config::ByEither;
use clampwise_core::config::{
    AxisKind, DeviceConfig, DeviceParts, LeverAxis, Limits, Tables, Tolerances,
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
    CW_MU_SPEEDS_MAX, CW_MU_TEMPERATURES_MAX, CW_RADIUS_FORCES_MAX, cw_adapt, cw_channel,
    cw_debounce, cw_device_desc, cw_friction, cw_sensor, cw_thermal, cw_wear,
};
use crate::status::cw_status;

/// The radius table's second axis as this library's build fixes it: both axes (read at run
/// time, as on the host), or the one axis of the features `axis-bedding` / `axis-mu` alone, so
/// the step holds only that axis's lever-arm code.
#[cfg(all(feature = "axis-bedding", feature = "axis-mu"))]
pub type Axis = ByEither;
/// The radius table's second axis as this library's build fixes it (bedding alone).
#[cfg(all(feature = "axis-bedding", not(feature = "axis-mu")))]
pub type Axis = clampwise_core::config::ByBedding;
/// The radius table's second axis as this library's build fixes it (μ alone).
#[cfg(all(feature = "axis-mu", not(feature = "axis-bedding")))]
pub type Axis = clampwise_core::config::ByMu;

/// Capacity of the radius table's second axis in this build. Over bedding the host always
/// has two breakpoints (new and bedded, 0 and 1), so a build of the bedding axis alone holds
/// two — a smaller device in RAM and on the stack while it is built; over μ the API's whole
/// capacity, `CW_RADIUS_SECOND_MAX`.
#[cfg(not(feature = "axis-mu"))]
pub const RADIUS_SECOND_CAPACITY: usize = 2;
/// Capacity of the radius table's second axis in this build: the API's whole capacity, as
/// the μ axis needs it.
#[cfg(feature = "axis-mu")]
pub const RADIUS_SECOND_CAPACITY: usize = crate::desc::CW_RADIUS_SECOND_MAX;

/// The table capacities of the C API (the host's): every device's tables fit, at their exact
/// sizes.
pub type CapiTables = Tables<
    CW_RADIUS_FORCES_MAX,
    RADIUS_SECOND_CAPACITY,
    CW_MU_TEMPERATURES_MAX,
    CW_MU_SPEEDS_MAX,
    Axis,
>;

/// The core's configuration of a device with `C` channels at the C API's capacities.
pub type Device<const C: usize> = DeviceConfig<CapiTables, C>;

/// A built device of 1, 2, 3 or 4 clamp-force channels, where it sits in its storage.
#[derive(Clone, Copy, Debug)]
pub enum DeviceRef<'a> {
    /// One channel.
    #[cfg(feature = "channels-1")]
    One(&'a Device<1>),
    /// Two channels.
    #[cfg(feature = "channels-2")]
    Two(&'a Device<2>),
    /// Three channels.
    #[cfg(feature = "channels-3")]
    Three(&'a Device<3>),
    /// Four channels.
    #[cfg(feature = "channels-4")]
    Four(&'a Device<4>),
}

impl DeviceRef<'_> {
    /// The core's checksum of the configuration.
    pub fn checksum(self) -> u32 {
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
    pub const fn channels(self) -> u8 {
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

/// The lever axes this library was built for: bit `cw_lever_axis` set for each.
pub(crate) const LEVER_AXES: u8 = match Axis::FIXED {
    None => 0b11,
    Some(LeverAxis::Bedding) => 0b01,
    Some(LeverAxis::Mu) => 0b10,
};

/// Build the device a description holds into `out`, through the core's checked
/// constructors, and compare its checksum with the description's.
///
/// # Errors
/// The [`cw_status`] naming the part the core rejected, [`cw_status::CW_ERR_LEVER_AXIS`] for
/// an axis this build left out, or [`cw_status::CW_ERR_CHECKSUM`] when the numbers are not
/// those the host emitted.
///
/// # Safety
/// The description's table arrays hold what its lengths say (the C contract).
pub unsafe fn build_in<'o, const C: usize>(
    out: &'o mut MaybeUninit<Device<C>>,
    d: &cw_device_desc,
) -> Result<&'o Device<C>, cw_status> {
    // SAFETY: forwarded to the caller.
    let parts = unsafe { parts::<C>(d) }?;
    let device = DeviceConfig::from_parts_in(out, &parts).map_err(|_| cw_status::CW_ERR_DEVICE)?;
    if device.checksum() == d.checksum {
        Ok(device)
    } else {
        Err(cw_status::CW_ERR_CHECKSUM)
    }
}

fn flag(v: u8) -> Result<bool, cw_status> {
    match v {
        0 => Ok(false),
        1 => Ok(true),
        _ => Err(cw_status::CW_ERR_BAD_FLAG),
    }
}

/// `len` values of a description's array as fixed-point numbers of `F` fraction bits, read in
/// place, or `None` for a NULL array.
///
/// # Safety
/// A pointer that is not NULL points to `len` readable values (the C contract).
unsafe fn bits_as<'a, F: LeEqU32>(values: *const i32, len: usize) -> Option<&'a [FixedI32<F>]> {
    if values.is_null() {
        return None;
    }
    // SAFETY: not NULL, `len` values by the contract; `FixedI32<F>` is `repr(transparent)` over
    // `i32`, so the values are read as they are, without a copy.
    Some(unsafe { core::slice::from_raw_parts(values.cast::<FixedI32<F>>(), len) })
}

/// The table a description's exact-size arrays hold: `x_len` and `y_len` breakpoints and their
/// grid, row by row.
///
/// # Safety
/// A pointer that is not NULL points to the values its lengths say (the C contract).
unsafe fn table<X: LeEqU32, Y: LeEqU32, Z: LeEqU32, const NX: usize, const NY: usize>(
    (x, x_len): (*const i32, u8),
    (y, y_len): (*const i32, u8),
    z: *const i32,
    error: cw_status,
) -> Result<Table2<X, Y, Z, NX, NY>, cw_status> {
    let (x_len, y_len) = (usize::from(x_len), usize::from(y_len));
    // Lengths beyond the capacities are refused before anything is read.
    if x_len > NX || y_len > NY {
        return Err(error);
    }
    // SAFETY: forwarded to the caller.
    let arrays = unsafe {
        (
            bits_as::<X>(x, x_len),
            bits_as::<Y>(y, y_len),
            bits_as::<Z>(z, x_len * y_len),
        )
    };
    let (Some(xs), Some(ys), Some(grid)) = arrays else {
        return Err(error);
    };
    let rows: [&[FixedI32<Z>]; NX] =
        core::array::from_fn(|i| grid.get(i * y_len..(i + 1) * y_len).unwrap_or(&[]));
    match rows.get(..x_len) {
        Some(rows) => Table2::from_bit_slices(xs, ys, rows).map_err(|_| error),
        None => Err(error),
    }
}

/// The friction model of a description.
///
/// # Safety
/// The μ table's arrays hold what its lengths say (the C contract).
unsafe fn friction(
    f: &cw_friction,
) -> Result<FrictionConfig<CW_MU_TEMPERATURES_MAX, CW_MU_SPEEDS_MAX>, cw_status> {
    // SAFETY: forwarded to the caller.
    let mu: MuTable<CW_MU_TEMPERATURES_MAX, CW_MU_SPEEDS_MAX> = unsafe {
        table(
            (f.mu.temperature_q16, f.mu.temperatures_len),
            (f.mu.speed_q16, f.mu.speeds_len),
            f.mu.mu_q30,
            cw_status::CW_ERR_MU_TABLE,
        )
    }?;
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

/// The checked parts of the device a description holds.
///
/// # Safety
/// The description's arrays hold what its lengths say (the C contract).
unsafe fn parts<const C: usize>(
    d: &cw_device_desc,
) -> Result<DeviceParts<CapiTables, C>, cw_status> {
    let axis = match d.radius.lever_axis {
        0 => LeverAxis::Bedding,
        1 => LeverAxis::Mu,
        _ => return Err(cw_status::CW_ERR_RADIUS_TABLE),
    };
    if LEVER_AXES & (1 << d.radius.lever_axis) == 0 {
        return Err(cw_status::CW_ERR_LEVER_AXIS);
    }
    // SAFETY: forwarded to the caller.
    let radius: RadiusTable<CW_RADIUS_FORCES_MAX, RADIUS_SECOND_CAPACITY> = unsafe {
        table(
            (d.radius.force_q8, d.radius.forces_len),
            (d.radius.second_q30, d.radius.second_len),
            d.radius.radius_q24,
            cw_status::CW_ERR_RADIUS_TABLE,
        )
    }?;
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
    // SAFETY: forwarded to the caller.
    let friction = unsafe { friction(&d.friction) }?;
    let tables =
        Tables::try_with_axis(radius, friction, axis).ok_or(cw_status::CW_ERR_LEVER_AXIS)?;
    Ok(DeviceParts {
        sample_period: Seconds::from_bits(d.sample_period_q32),
        thermal_wear_every: d.thermal_wear_every,
        faces: d.faces,
        tables,
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
}
