//! The core's configuration parts (friction, thermal, wear, sensor, adaptation, limits,
//! tolerances) from a config, each core error named by the config key it comes from.
//!
//! | config | core | conversion |
//! |---|---|---|
//! | `friction.stick_speed_rad_s` s, `stick_hysteresis_rad_s` h | `FrictionParams::stick_speed`, `stick_hysteresis` | centre s + h/2, width h: holding below s, slipping above s + h |
//! | `friction.drag_torque_nm`, `drag_viscous_nm_per_rad_s` | `no_load_drag`, `viscous_drag` | as is |
//! | `thermal.rotor_heat_capacity_j_per_k` C | `rotor_mass` × `rotor_specific_heat` | C × 1 (only the product enters) |
//! | `thermal.cooling_time_constant_s` or h, A | `Cooling::TimeConstant` or `Cooling::Conductance(h·A)` | |
//! | `wear.pad_area_m2` (one face) | `lining_area` (all faces) | × `contact.faces` |
//! | `sensor[i].offset_counts` o, `gain_n_per_count` g | `ChannelCalibration::offset` (N at zero counts) | −o·g |
//! | `sensing.debounce_*`, `disagreement_debounce_samples` | `DebounceSet` | same raise/clear for every check; disagreement raises after its own count |
//! | `adaptation.band_ratio` b | `AdaptConfig` band | [1 − b, 1 + b] |
//! | `adaptation.min_clamp_force_n` | `Limits::adapt_min_force` | as is |

use clampwise_core::adapt::{AdaptConfig, AdaptError};
use clampwise_core::config::{ConfigError, Limits, Tolerances};
use clampwise_core::estimator::Combination;
use clampwise_core::friction::{FrictionConfig, FrictionError, FrictionParams};
use clampwise_core::sensor::{
    ActuatorTransfer, AdcRails, ChannelCalibration, Debounce, DebounceSet, DiagnosticLimits,
    LowPass, NewtonsPerCommand, NewtonsPerCount, NewtonsPerSecond, SensorConfig, SensorError,
    StuckCheck, VotingLimits,
};
use clampwise_core::thermal::{
    Cooling, LiningNode, MeasuredPlausibility, ThermalConfig, ThermalError, ThermalParams,
};
use clampwise_core::units::{NewtonMetres, Seconds};
use clampwise_core::wear::{WearConfig, WearError, WearParams};
use fixed::FixedI32;
use fixed::types::extra::LeEqU32;

use super::tables::fixed_of;
use super::{BuildError, MuTable};
use crate::schema::{CombinationSpec, DeviceSpec};

/// Control-loop rate in whole hertz, 1/period rounded (the core checks that rate · period is 1 s).
///
/// # Errors
/// [`BuildError`] on `device.sample_period_s` when 1/period is not a positive `u32`.
pub fn sample_rate_hz(c: &DeviceSpec) -> Result<u32, BuildError> {
    let rate = libm::round(1.0 / c.device.sample_period_s);
    if rate.is_finite() && rate >= 1.0 && rate <= f64::from(u32::MAX) {
        // In range by the test above, and a whole number after `round`.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        Ok(rate as u32)
    } else {
        Err(BuildError::new(
            "device.sample_period_s",
            "1/period is not a whole number of hertz",
        ))
    }
}

/// Generic f64 → fixed for the I32-based formats of the core, named by key.
fn fx<F: LeEqU32>(key: &str, v: f64) -> Result<FixedI32<F>, BuildError> {
    fixed_of::<F>(key, v)
}

fn count_u16(key: &str, n: u32) -> Result<u16, BuildError> {
    u16::try_from(n).map_err(|_| BuildError::new(key, "must be at most 65535"))
}

/// The friction model: the μ table and the stick/slip, transition and drag settings.
///
/// # Errors
/// [`BuildError`] naming the `friction.*` key the core rejected.
pub fn friction(
    c: &DeviceSpec,
    mu: MuTable,
) -> Result<FrictionConfig<{ super::MU_POINTS }, { super::MU_POINTS }>, BuildError> {
    let f = &c.friction;
    let p = FrictionParams {
        static_to_kinetic: f.static_ratio,
        stick_speed: f.stick_speed_rad_s + 0.5 * f.stick_hysteresis_rad_s,
        stick_hysteresis: f.stick_hysteresis_rad_s,
        transition_speed: f.transition_speed_rad_s,
        viscous_drag: f.drag_viscous_nm_per_rad_s,
        no_load_drag: f.drag_torque_nm,
    };
    FrictionConfig::new(mu, &p).map_err(|e| {
        let key = match e {
            FrictionError::MuOutOfRange { temperature, speed } => {
                format!("friction.mu.values[{temperature}][{speed}]")
            }
            FrictionError::NegativeSpeedBreakpoint => "friction.mu.slip_speed_rad_s[0]".into(),
            FrictionError::StaticRatioOutOfRange
            | FrictionError::NotRepresentable {
                field: "static_to_kinetic",
            } => "friction.static_ratio".into(),
            FrictionError::StickSpeedNotPositive
            | FrictionError::NotRepresentable {
                field: "stick_speed",
            } => "friction.stick_speed_rad_s".into(),
            FrictionError::HysteresisOutOfRange
            | FrictionError::NotRepresentable {
                field: "stick_hysteresis",
            } => "friction.stick_hysteresis_rad_s".into(),
            FrictionError::TransitionSpeedNotPositive
            | FrictionError::NotRepresentable {
                field: "transition_speed",
            } => "friction.transition_speed_rad_s".into(),
            FrictionError::ViscousDragNegative
            | FrictionError::NotRepresentable {
                field: "viscous_drag",
            } => "friction.drag_viscous_nm_per_rad_s".into(),
            FrictionError::NoLoadDragNegative
            | FrictionError::NotRepresentable {
                field: "no_load_drag",
            } => "friction.drag_torque_nm".into(),
            _ => "friction".into(),
        };
        BuildError::new(key, e)
    })
}

fn thermal_key(field: &str) -> &'static str {
    match field {
        "dt" => "device.sample_period_s",
        "rotor_mass" | "rotor_specific_heat" | "rotor" => "thermal.rotor_heat_capacity_j_per_k",
        "rotor_share" => "thermal.heat_into_rotor_ratio",
        "cooling.time_constant" => "thermal.cooling_time_constant_s",
        "cooling.conductance" => "thermal.heat_transfer_w_per_m2_k",
        "lining.mass" | "lining.specific_heat" | "lining" => "thermal.lining.heat_capacity_j_per_k",
        "lining.conductance_to_rotor" => "thermal.lining.conductance_to_rotor_w_per_k",
        "ambient" => "thermal.ambient_c",
        "fade_warning" => "thermal.fade_c",
        "over_temperature" => "thermal.over_temperature_c",
        "flag_hysteresis" => "thermal.flag_hysteresis_k",
        "measured.min" => "thermal.measured.min_c",
        "measured.max" => "thermal.measured.max_c",
        "measured.max_rate" => "thermal.measured.max_rate_k_per_s",
        _ => "thermal",
    }
}

/// The lumped thermal model.
///
/// # Errors
/// [`BuildError`] naming the `thermal.*` key the core rejected.
pub fn thermal(c: &DeviceSpec) -> Result<ThermalConfig, BuildError> {
    let t = &c.thermal;
    let cooling = match (
        t.cooling_time_constant_s,
        t.heat_transfer_w_per_m2_k,
        t.cooling_area_m2,
    ) {
        (Some(tau), _, _) => Cooling::TimeConstant(tau),
        (None, Some(h), Some(a)) => Cooling::Conductance(h * a),
        _ => {
            return Err(BuildError::new(
                "thermal",
                "needs cooling_time_constant_s, or heat_transfer_w_per_m2_k with cooling_area_m2",
            ));
        }
    };
    // The thermal model advances once per sub-rate interval.
    let dt = c.device.sample_period_s * f64::from(c.device.thermal_wear_every);
    let p = ThermalParams {
        // Only the product m·c enters the model.
        rotor_mass: t.rotor_heat_capacity_j_per_k,
        rotor_specific_heat: 1.0,
        rotor_share: t.heat_into_rotor_ratio,
        cooling,
        ambient: t.ambient_c,
        lining: t.lining.as_ref().map(|l| LiningNode {
            mass: l.heat_capacity_j_per_k,
            specific_heat: 1.0,
            conductance_to_rotor: l.conductance_to_rotor_w_per_k,
        }),
        fade_warning: t.fade_c,
        over_temperature: t.over_temperature_c,
        flag_hysteresis: t.flag_hysteresis_k,
        measured: t.measured.as_ref().map(|m| MeasuredPlausibility {
            min: m.min_c,
            max: m.max_c,
            max_rate: m.max_rate_k_per_s,
        }),
    };
    ThermalConfig::new(&p, dt).map_err(|e| {
        let key = match e {
            ThermalError::NotRepresentable { field }
            | ThermalError::NotPositive { field }
            | ThermalError::HeatCapacityTooSmall { field } => thermal_key(field),
            ThermalError::DtTooLong => "device.sample_period_s",
            ThermalError::RotorShareOutOfRange => "thermal.heat_into_rotor_ratio",
            ThermalError::DtAboveTimeConstant { .. } if t.lining.is_some() => "thermal.lining",
            ThermalError::DtAboveTimeConstant { .. } | ThermalError::TimeConstantTooLongForDt => {
                if t.cooling_time_constant_s.is_some() {
                    "thermal.cooling_time_constant_s"
                } else {
                    "thermal.heat_transfer_w_per_m2_k"
                }
            }
            ThermalError::FlagThresholds => "thermal.over_temperature_c",
            ThermalError::MeasuredLimits
                if t.measured.as_ref().is_some_and(|m| m.max_c <= m.min_c) =>
            {
                "thermal.measured.max_c"
            }
            ThermalError::MeasuredLimits => "thermal.measured.max_rate_k_per_s",
            _ => "thermal",
        };
        BuildError::new(key, e)
    })
}

/// Energy, bedding and lining wear.
///
/// # Errors
/// [`BuildError`] naming the `wear.*` key the core rejected.
pub fn wear(c: &DeviceSpec) -> Result<WearConfig, BuildError> {
    let w = &c.wear;
    let p = WearParams {
        bedding_energy: w.bedding_energy_j,
        specific_wear_rate: w.specific_wear_rate_m3_per_j,
        lining_area: f64::from(c.contact.faces) * w.pad_area_m2,
        initial_thickness: w.lining_thickness_m,
        minimum_thickness: w.minimum_thickness_m,
    };
    WearConfig::new(&p, c.device.sample_period_s).map_err(|e| {
        let key = match e {
            WearError::DtOutOfRange => "device.sample_period_s",
            WearError::BeddingEnergyOutOfRange
            | WearError::NotRepresentable {
                field: "bedding_energy",
            } => "wear.bedding_energy_j",
            WearError::WearRateOutOfRange
            | WearError::NotRepresentable {
                field: "specific_wear_rate",
            } => "wear.specific_wear_rate_m3_per_j",
            WearError::AreaNotPositive
            | WearError::NotRepresentable {
                field: "lining_area",
            } => "wear.pad_area_m2",
            WearError::NotRepresentable {
                field: "initial_thickness",
            } => "wear.lining_thickness_m",
            WearError::ThicknessLimits => "wear.minimum_thickness_m",
            _ => "wear",
        };
        BuildError::new(key, e)
    })
}

fn sensor_key(e: &SensorError) -> String {
    match *e {
        SensorError::ChannelCount { .. } => "sensor".into(),
        SensorError::Channel { channel, field, .. } => {
            let k = match field {
                "gain" => "gain_n_per_count",
                "offset" => "offset_counts",
                "rails.low" => "rail_low_counts",
                _ => "rail_high_counts",
            };
            format!("sensor[{channel}].{k}")
        }
        SensorError::Field { field, .. } => {
            let k = match field {
                "filter" | "filter.cutoff_hz" | "filter.sample_rate_hz" => {
                    "sensing.filter_cutoff_hz"
                }
                "sample_rate_hz" => "device.sample_period_s",
                "limits.force_min" => "sensing.range_low_n",
                "limits.force_max" => "sensing.range_high_n",
                "limits.max_rate" => "sensing.rate_limit_n_per_s",
                "limits.noise_band" => "sensing.noise_band_n",
                "limits.max_hold_samples" => "sensing.max_hold_samples",
                "limits.stuck.time" => "sensing.stuck.time_s",
                "limits.stuck.command_span" => "sensing.stuck.command_span",
                "limits.debounce.disagreement" => "sensing.disagreement_debounce_samples",
                f if f.starts_with("limits.debounce") => "sensing.debounce_raise_samples",
                "voting.tolerance" => "sensing.vote_tolerance_n",
                "voting.channel_uncertainty" => "sensing.channel_uncertainty_n",
                "fallback.gain" => "actuator.force_n_per_command",
                "fallback.offset" => "actuator.force_offset_n",
                "fallback.hysteresis" => "actuator.hysteresis_n",
                "fallback.uncertainty" => "actuator.uncertainty_n",
                "fallback.response_time" => "actuator.response_time_s",
                _ => "sensing",
            };
            k.into()
        }
        _ => "sensing".into(),
    }
}

/// The force-sensor conditioning of `C` channels (`C` = the number of `[[sensor]]` tables).
///
/// # Errors
/// [`BuildError`] naming the `sensor[i].*`, `sensing.*` or `actuator.*` key the core
/// rejected, or `sensor` when the config has another number of channels than `C`.
pub fn sensor<const C: usize>(c: &DeviceSpec) -> Result<SensorConfig<C>, BuildError> {
    let rate = sample_rate_hz(c)?;
    let mut channels = Vec::with_capacity(C);
    for (i, s) in c.sensors.iter().enumerate() {
        let k = |name: &str| format!("sensor[{i}].{name}");
        let rail = |name: &str, v: i64| {
            i32::try_from(v).map_err(|_| BuildError::new(k(name), "must fit a 32-bit ADC code"))
        };
        channels.push(ChannelCalibration {
            gain: NewtonsPerCount::checked_from_num(s.gain_n_per_count).ok_or_else(|| {
                BuildError::new(k("gain_n_per_count"), "does not fit I32F32 N per count")
            })?,
            // The core's offset is the force at zero counts.
            offset: fx(&k("offset_counts"), -s.offset_counts * s.gain_n_per_count)?,
            rails: AdcRails {
                low: rail("rail_low_counts", s.rail_low_counts)?,
                high: rail("rail_high_counts", s.rail_high_counts)?,
                margin: s.rail_margin_counts,
            },
            temperature: None,
        });
    }
    let channels: [ChannelCalibration; C] = channels.try_into().map_err(|v: Vec<_>| {
        BuildError::new(
            "sensor",
            format!("{} [[sensor]] tables for a {C}-channel device", v.len()),
        )
    })?;
    let sn = &c.sensing;
    let filter =
        LowPass::new(sn.filter_cutoff_hz, rate).map_err(|e| BuildError::new(sensor_key(&e), e))?;
    let debounce = Debounce {
        raise_after: count_u16("sensing.debounce_raise_samples", sn.debounce_raise_samples)?,
        clear_after: count_u16("sensing.debounce_clear_samples", sn.debounce_clear_samples)?,
    };
    let limits = DiagnosticLimits {
        force_min: fx::<_>("sensing.range_low_n", sn.range_low_n)?,
        force_max: fx::<_>("sensing.range_high_n", sn.range_high_n)?,
        max_rate: NewtonsPerSecond::checked_from_num(sn.rate_limit_n_per_s).ok_or_else(|| {
            BuildError::new("sensing.rate_limit_n_per_s", "does not fit I32F32 N/s")
        })?,
        noise_band: fx::<_>("sensing.noise_band_n", sn.noise_band_n)?,
        stuck: match &sn.stuck {
            None => None,
            Some(s) => Some(StuckCheck {
                time: Seconds::checked_from_num(s.time_s)
                    .ok_or_else(|| BuildError::new("sensing.stuck.time_s", "out of range"))?,
                command_span: fx::<_>("sensing.stuck.command_span", s.command_span)?,
            }),
        },
        debounce: DebounceSet {
            disagreement: Debounce {
                raise_after: count_u16(
                    "sensing.disagreement_debounce_samples",
                    sn.disagreement_debounce_samples,
                )?,
                clear_after: debounce.clear_after,
            },
            ..DebounceSet::uniform(debounce)
        },
        max_hold_samples: count_u16("sensing.max_hold_samples", sn.max_hold_samples)?,
    };
    let voting = VotingLimits {
        tolerance: fx::<_>("sensing.vote_tolerance_n", sn.vote_tolerance_n)?,
        channel_uncertainty: fx::<_>("sensing.channel_uncertainty_n", sn.channel_uncertainty_n)?,
    };
    let fallback = match &c.actuator {
        None => None,
        Some(a) => Some(ActuatorTransfer {
            gain: NewtonsPerCommand::checked_from_num(a.force_n_per_command).ok_or_else(|| {
                BuildError::new(
                    "actuator.force_n_per_command",
                    "does not fit I32F32 N per unit",
                )
            })?,
            offset: fx::<_>("actuator.force_offset_n", a.force_offset_n)?,
            hysteresis: fx::<_>("actuator.hysteresis_n", a.hysteresis_n)?,
            uncertainty: fx::<_>("actuator.uncertainty_n", a.uncertainty_n)?,
            response_time: Seconds::checked_from_num(a.response_time_s)
                .ok_or_else(|| BuildError::new("actuator.response_time_s", "out of range"))?,
        }),
    };
    SensorConfig::new(rate, channels, filter, limits, voting, fallback)
        .map_err(|e| BuildError::new(sensor_key(&e), e))
}

/// The online μ correction, when `adaptation.enabled`.
///
/// # Errors
/// [`BuildError`] naming the `adaptation.*` key the core rejected.
pub fn adapt(c: &DeviceSpec) -> Result<Option<AdaptConfig>, BuildError> {
    let a = &c.adaptation;
    if !a.enabled {
        return Ok(None);
    }
    let full_scale: NewtonMetres = fx("adaptation.torque_full_scale_nm", a.torque_full_scale_nm)?;
    AdaptConfig::new(
        1.0 - a.band_ratio,
        1.0 + a.band_ratio,
        a.forgetting_factor,
        full_scale,
        a.min_excitation_ratio,
    )
    .map(Some)
    .map_err(|e| {
        let key = match e {
            AdaptError::Band => "adaptation.band_ratio",
            AdaptError::ForgettingFactor => "adaptation.forgetting_factor",
            AdaptError::TorqueFullScale => "adaptation.torque_full_scale_nm",
            AdaptError::MinExcitation => "adaptation.min_excitation_ratio",
            _ => "adaptation",
        };
        BuildError::new(key, e)
    })
}

/// The force thresholds.
///
/// # Errors
/// [`BuildError`] on a force that does not fit `Newtons`.
pub fn limits(c: &DeviceSpec) -> Result<Limits, BuildError> {
    Ok(Limits {
        touch_force: fx::<_>("limits.touch_force_n", c.limits.touch_force_n)?,
        adapt_min_force: fx::<_>(
            "adaptation.min_clamp_force_n",
            c.adaptation.min_clamp_force_n,
        )?,
    })
}

/// The tolerances behind the ± uncertainty. `interpolation_error` is a gain table's largest
/// relative interpolation error (0 for a flat or conical face), combined with the radius
/// tolerance as (1 + δr)(1 + ε) − 1 so the ± covers both.
///
/// # Errors
/// [`BuildError`] on a tolerance that does not fit `Ratio`.
pub fn tolerances(c: &DeviceSpec, interpolation_error: f64) -> Result<Tolerances, BuildError> {
    let radius = c.contact.radius_tolerance_ratio;
    Ok(Tolerances {
        mu: fx::<_>("friction.mu_tolerance_ratio", c.friction.mu_tolerance_ratio)?,
        radius: fx::<_>(
            "contact.radius_tolerance_ratio",
            radius + interpolation_error + radius * interpolation_error,
        )?,
        combination: match c.uncertainty.combination {
            CombinationSpec::WorstCase => Combination::WorstCase,
            CombinationSpec::RootSumSquare => Combination::RootSumSquare,
        },
    })
}

/// The config key of a whole-device error of the core.
pub fn config_error(e: ConfigError) -> BuildError {
    let key = match e {
        ConfigError::Faces => "contact.faces",
        ConfigError::TouchForce => "limits.touch_force_n",
        ConfigError::AdaptMinForce => "adaptation.min_clamp_force_n",
        ConfigError::MuTolerance => "friction.mu_tolerance_ratio",
        ConfigError::RadiusTolerance => "contact.radius_tolerance_ratio",
        ConfigError::ThermalWearEvery => "device.thermal_wear_every",
        _ => "device.sample_period_s",
    };
    BuildError::new(key, e)
}
