//! The device configuration file (TOML): schema, loading and validation with located errors.
//!
//! Every key carries its SI unit in its name (`outer_radius_m`, `sample_period_s`,
//! `rotor_heat_capacity_j_per_k`); unknown keys are rejected (`deny_unknown_fields`). A problem
//! is reported as `file:line:column: key: message`, with the line and column of the offending
//! value taken from the TOML parser's spans. Validation collects every problem it finds, not
//! only the first. The documented example is `sim/configs/demo-hoist-brake.toml`.
//!
//! ```
//! use clampwise_device::config::LoadedConfig;
//! let src = clampwise_device::DEMO_CONFIG;
//! let cfg = LoadedConfig::from_str(src, "demo.toml").unwrap();
//! assert_eq!(cfg.config.sensors.len(), 3);
//!
//! let bad = src.replace("outer_radius_m", "outer_radius_mm");
//! let err = LoadedConfig::from_str(&bad, "bad.toml").unwrap_err().to_string();
//! assert!(err.contains("outer_radius_mm"), "{err}");
//! ```

use std::fmt;
use std::path::Path;

use serde::Deserialize;

use crate::column_units::{self, Quantity};

/// Largest μ table axis (temperature or slip-speed breakpoints), see [`crate::build_core`].
pub const MU_MAX_POINTS: usize = crate::build_core::MU_POINTS;
/// Largest number of force breakpoints of the friction-radius table.
pub const RADIUS_MAX_FORCE_POINTS: usize = crate::build_core::RADIUS_FORCE_POINTS;
/// Largest number of clamp-force channels.
pub const MAX_SENSORS: usize = 4;

/// A whole device: geometry, friction, thermal, wear, sensors, adaptation, limits, trace layout.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct DeviceConfig {
    /// Name, kind and sample period.
    pub device: Device,
    /// Contact geometry.
    pub contact: Contact,
    /// μ table, static ratio, stick threshold, drag.
    pub friction: Friction,
    /// Lumped thermal model.
    pub thermal: Thermal,
    /// Bedding and lining wear.
    pub wear: Wear,
    /// One `[[sensor]]` table per clamp-force channel (1–4).
    #[serde(rename = "sensor")]
    pub sensors: Vec<Sensor>,
    /// How the channels are combined.
    pub sensing: Sensing,
    /// Actuator command → clamp force fallback (optional).
    pub actuator: Option<Actuator>,
    /// Online μ correction.
    pub adaptation: Adaptation,
    /// Operating envelope.
    pub limits: Limits,
    /// How tolerances combine into the ± uncertainty.
    pub uncertainty: Uncertainty,
    /// Breakpoints of the friction-radius table r_e(F, bedding).
    pub radius_table: RadiusTableSpec,
    /// CSV column mapping; canonical names when absent.
    #[serde(default)]
    pub trace: TraceSpec,
}

/// `[device]`.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Device {
    /// Free text shown in summaries.
    pub name: String,
    /// Brake (stationary output) or clutch (two rotating members).
    pub kind: DeviceKind,
    /// Control-cycle period, s (0 < period ≤ 1).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1e-6, max = 1.0)))]
    pub sample_period_s: f64,
    /// The thermal and wear models advance every this many samples (1, 2, 4, 8, 16 or 32),
    /// with the energy of all of them; 1 (the default) advances them every sample.
    #[serde(default = "one_sample")]
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("enum" = [1, 2, 4, 8, 16, 32])))]
    pub thermal_wear_every: u8,
}

fn one_sample() -> u8 {
    1
}

/// Brake or clutch.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum DeviceKind {
    /// Output member stationary: slip speed = input speed.
    Brake,
    /// Both members rotate: slip speed = input − output.
    Clutch,
}

/// Contact shape.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum Shape {
    /// Full annulus, `inner_radius_m`..`outer_radius_m`.
    Annulus,
    /// Annular sector pad, radii plus `sector_angle_deg`.
    Sector,
    /// Circular pad of `pad_radius_m` centred at `pad_centre_radius_m`.
    Button,
    /// Flat pad outline `vertices_m` ([x, y] in m, disc axis at the origin).
    Polygon,
    /// Cone, radii plus `half_angle_deg`.
    Cone,
}

impl Shape {
    /// The TOML spelling.
    pub fn name(self) -> &'static str {
        match self {
            Self::Annulus => "annulus",
            Self::Sector => "sector",
            Self::Button => "button",
            Self::Polygon => "polygon",
            Self::Cone => "cone",
        }
    }
}

/// `[contact]`: the friction contact of one face; `faces` interfaces act in parallel.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Contact {
    /// Which shape; decides which of the keys below are required.
    pub shape: Shape,
    /// Number of friction interfaces N (1–64).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1, max = 64)))]
    pub faces: u32,
    /// Inner radius, m (annulus, sector, cone).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub inner_radius_m: Option<f64>,
    /// Outer radius, m (annulus, sector, cone).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1e-4, max = 10.0)))]
    pub outer_radius_m: Option<f64>,
    /// Angle of a sector pad, degrees (0 < angle ≤ 360).
    #[cfg_attr(
        any(test, feature = "schema"),
        schemars(range(min = 1e-3, max = 360.0))
    )]
    pub sector_angle_deg: Option<f64>,
    /// Radius of a circular pad, m.
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub pad_radius_m: Option<f64>,
    /// Distance of a circular pad's centre from the disc axis, m.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1e-4, max = 10.0)))]
    pub pad_centre_radius_m: Option<f64>,
    /// Which model of a circular pad's effective radius (button only; see
    /// `clampwise_core::geometry::button`: the published design table and the integrated
    /// p·r = const model differ by 1.6–3.4 %).
    pub button_model: Option<ButtonModelName>,
    /// Outline of a polygon pad, m, disc axis at the origin (3–32 vertices, not enclosing it).
    pub vertices_m: Option<Vec<[f64; 2]>>,
    /// Cone half-angle, degrees (1–89).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1.0, max = 89.0)))]
    pub half_angle_deg: Option<f64>,
    /// Relative tolerance of the effective radius (0–1), for the uncertainty.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.0, max = 1.0)))]
    pub radius_tolerance_ratio: f64,
}

impl Contact {
    /// A contact of `shape` on `faces` interfaces with no dimension set and no radius
    /// tolerance: the start of one built in code rather than read from TOML. Set the keys the
    /// shape needs; building the device names any that is missing.
    ///
    /// ```
    /// use clampwise_device::config::{Contact, Shape};
    /// use clampwise_device::build_core::contact_radii;
    ///
    /// let mut c = Contact::of_shape(Shape::Annulus, 2);
    /// c.inner_radius_m = Some(0.06);
    /// c.outer_radius_m = Some(0.10);
    /// let (_, uniform_wear) = contact_radii(&c).unwrap();
    /// // [pub: Shigley ch. 16] r_e = (Ro + Ri)/2 under uniform wear.
    /// assert!((uniform_wear - 0.080).abs() < 1e-12);
    /// ```
    pub fn of_shape(shape: Shape, faces: u32) -> Self {
        Self {
            shape,
            faces,
            inner_radius_m: None,
            outer_radius_m: None,
            sector_angle_deg: None,
            pad_radius_m: None,
            pad_centre_radius_m: None,
            button_model: None,
            vertices_m: None,
            half_angle_deg: None,
            radius_tolerance_ratio: 0.0,
        }
    }
}

/// `contact.button_model`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum ButtonModelName {
    /// r_e = δ(R/e)·e from the published design table [mem: Shigley ch. 16, after Fazekas],
    /// the same new and bedded; R/e ≤ 0.5.
    PublishedTable,
    /// Uniform pressure and uniform wear integrated over the circle.
    Integrated,
}

/// `[friction]`.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Friction {
    /// μ_static / μ_kinetic at the first slip-speed breakpoint, for the holding capacity
    /// (0.5 … 1.6, the core's limit).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.5, max = 1.6)))]
    pub static_ratio: f64,
    /// Slip speed below which a slipping contact is taken as holding again, rad/s (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub stick_speed_rad_s: f64,
    /// Hysteresis of the stick/slip boundary, rad/s (0 < h): a holding contact slips only above
    /// `stick_speed_rad_s + stick_hysteresis_rad_s`. In the core's terms: a band of width h
    /// centred on stick + h/2.
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub stick_hysteresis_rad_s: f64,
    /// Slip speed over which μ moves from static to kinetic and the constant drag builds up,
    /// rad/s (> 0; the core's smoothstep transition).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub transition_speed_rad_s: f64,
    /// Constant (no-load) drag torque of a wet clutch at full transition, N·m (≥ 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub drag_torque_nm: f64,
    /// Viscous drag of a wet clutch, N·m per rad/s (≥ 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub drag_viscous_nm_per_rad_s: f64,
    /// Relative tolerance of the μ table (0 ≤ δ < 1), for the uncertainty.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0), extend("exclusiveMaximum" = 1)))]
    pub mu_tolerance_ratio: f64,
    /// The μ table.
    pub mu: MuTableSpec,
}

/// `[friction.mu]`: kinetic μ over lining temperature × |slip speed|, `values[i][j]` at
/// (`temperature_c[i]`, `slip_speed_rad_s[j]`).
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct MuTableSpec {
    /// Temperature breakpoints, °C, strictly increasing (1–8).
    pub temperature_c: Vec<f64>,
    /// Slip-speed breakpoints, rad/s, ≥ 0, strictly increasing (1–8).
    pub slip_speed_rad_s: Vec<f64>,
    /// μ values (0 < μ ≤ 1.2, the core's limit), one row per temperature.
    pub values: Vec<Vec<f64>>,
}

/// `[thermal]`: lumped rotor (and optionally a lining node); give either
/// `cooling_time_constant_s` or `heat_transfer_w_per_m2_k` with `cooling_area_m2`.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Thermal {
    /// m·c of the rotor, J/K (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub rotor_heat_capacity_j_per_k: f64,
    /// τ = m·c/(h·A), s.
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub cooling_time_constant_s: Option<f64>,
    /// h, W/(m²·K).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub heat_transfer_w_per_m2_k: Option<f64>,
    /// A, m².
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub cooling_area_m2: Option<f64>,
    /// Share γ of the heat that goes into the rotor (0 < γ ≤ 1); with a lining node the rest
    /// heats the lining, without one it leaves the model.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1e-3, max = 1.0)))]
    pub heat_into_rotor_ratio: f64,
    /// Ambient temperature, °C (the trace's ambient column overrides it per sample).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -50.0, max = 200.0)))]
    pub ambient_c: f64,
    /// Start temperature of rotor and lining, °C (ambient when absent).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -50.0, max = 1000.0)))]
    pub initial_temperature_c: Option<f64>,
    /// Fade warning threshold, °C.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -50.0, max = 1000.0)))]
    pub fade_c: f64,
    /// Over-temperature threshold, °C (> fade).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -50.0, max = 1000.0)))]
    pub over_temperature_c: f64,
    /// A fade or over-temperature flag clears only this far below its threshold, K (≥ 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.0, max = 500.0)))]
    pub flag_hysteresis_k: f64,
    /// Optional second node: the lining, heated by 1 − γ of the power.
    pub lining: Option<LiningNode>,
    /// Plausibility of a measured lining temperature (the trace's temperature column). When
    /// absent the core ignores measured temperatures and uses its model alone.
    pub measured: Option<MeasuredTemperature>,
}

/// `[thermal.lining]`.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct LiningNode {
    /// m·c of the lining (all pads or facings), J/K (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub heat_capacity_j_per_k: f64,
    /// Conductance from lining to rotor, W/K (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub conductance_to_rotor_w_per_k: f64,
}

/// `[thermal.measured]`: a measured temperature replaces the model while plausible.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct MeasuredTemperature {
    /// Lowest plausible reading, °C.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -273.0, max = 1500.0)))]
    pub min_c: f64,
    /// Highest plausible reading, °C (> min).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -273.0, max = 1500.0)))]
    pub max_c: f64,
    /// Largest plausible change between two readings, K/s (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub max_rate_k_per_s: f64,
}

/// `[wear]`: energy, bedding and lining wear. Bedding and wear both follow from the friction
/// work E: bedding = 1 − exp(−E/E_bed), thickness loss = k·E/(faces · pad area).
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Wear {
    /// Energy constant of bedding E_bed, J (1 … 10¹³).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1.0, max = 1e13)))]
    pub bedding_energy_j: f64,
    /// Friction work the lining has already taken at the start of a trace, J (≥ 0; 0 for new
    /// pads). Sets the starting bedding and wear.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.0, max = 1e14)))]
    pub initial_energy_j: f64,
    /// Lining volume lost per joule of friction work, m³/J (≥ 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub specific_wear_rate_m3_per_j: f64,
    /// Lining area of one face, m² (> 0); the work is shared by all faces.
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub pad_area_m2: f64,
    /// New lining thickness, m (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub lining_thickness_m: f64,
    /// Replace-by thickness, m (< lining thickness).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub minimum_thickness_m: f64,
}

/// One `[[sensor]]`: a clamp-force channel, counts → N by `F = (counts − offset) · gain`.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Sensor {
    /// Free text.
    pub name: String,
    /// N per ADC count (≠ 0; negative for an inverted bridge).
    pub gain_n_per_count: f64,
    /// Counts at zero force.
    pub offset_counts: f64,
    /// Lowest code the ADC produces.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -2147483648, max = 2147483647)))]
    pub rail_low_counts: i64,
    /// Highest code the ADC produces.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = -2147483648, max = 2147483647)))]
    pub rail_high_counts: i64,
    /// Codes within this many counts of a rail count as at the rail (≥ 0).
    pub rail_margin_counts: u32,
}

/// `[sensing]`: conditioning, diagnostics and voting shared by all channels.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Sensing {
    /// First-order filter cut-off, Hz (0 < f < Nyquist).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub filter_cutoff_hz: f64,
    /// Lowest plausible force, N.
    pub range_low_n: f64,
    /// Highest plausible force, N (> low).
    pub range_high_n: f64,
    /// Largest plausible rate of change of clamp force, N/s (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub rate_limit_n_per_s: f64,
    /// Peak-to-peak noise of a healthy channel, N (≥ 0): the rate check's allowance and the
    /// stuck check's band.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub noise_band_n: f64,
    /// Samples a rejected channel's last good value may stand in (0 … 65 535).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0, max = 65535)))]
    pub max_hold_samples: u32,
    /// Bad samples in a row that raise a channel fault (1 … 65 535).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1, max = 65535)))]
    pub debounce_raise_samples: u32,
    /// Good samples in a row that clear it (1 … 65 535).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1, max = 65535)))]
    pub debounce_clear_samples: u32,
    /// A channel agrees with the consensus when within this of its median, N (> 0; two
    /// channels agree when they differ by at most twice this).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub vote_tolerance_n: f64,
    /// Samples a disagreement must persist before it is declared (1 … 65 535).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1, max = 65535)))]
    pub disagreement_debounce_samples: u32,
    /// ± uncertainty of one healthy calibrated, filtered channel, N (≥ 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub channel_uncertainty_n: f64,
    /// Stuck-signal check (optional; needs an actuator command in the trace).
    pub stuck: Option<StuckCheck>,
    /// A single gauge with neither `[sensing.stuck]` nor `[actuator]` cannot detect its own
    /// faults (frozen, drifting, wrong gain): such a config is refused unless this is `true`,
    /// acknowledging that the estimate's ± then holds only while the gauge is healthy
    /// (default `false`).
    #[serde(default)]
    pub accept_undetectable_faults: bool,
}

/// `[sensing.stuck]`: a force that stays within the noise band while the command moves.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct StuckCheck {
    /// How long the force must stay within the noise band, s (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub time_s: f64,
    /// How far the actuator command must move in that time, command units (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub command_span: f64,
}

/// `[actuator]`: fallback clamp force from the actuator command, `F = gain · command + offset`
/// with a hysteresis band.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Actuator {
    /// N per command unit (> 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0)))]
    pub force_n_per_command: f64,
    /// N at zero command.
    pub force_offset_n: f64,
    /// Full width of the band between rising and falling branches, N (≥ 0).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub hysteresis_n: f64,
    /// ± uncertainty of the transfer model, N (> `sensing.channel_uncertainty_n`). With the
    /// hysteresis it is also the band the force from the gauges must stay within: beyond it
    /// the force is flagged implausible and its ± widened to cover the model.
    pub uncertainty_n: f64,
    /// First-order time constant from command to clamp force, s (≥ 0; default 0, no lag).
    /// Set it to the actuator's measured response so the plausibility check follows an apply
    /// or a release instead of flagging it.
    #[serde(default)]
    pub response_time_s: f64,
}

/// `[adaptation]`: bounded online correction of μ from a reference torque (the core's
/// scalar RLS with forgetting).
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Adaptation {
    /// Whether to adapt at all.
    pub enabled: bool,
    /// Largest correction, as a fraction of the table value (0 … 0.5): k ∈ [1 − b, 1 + b].
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.0, max = 0.5)))]
    pub band_ratio: f64,
    /// Forgetting factor λ (0.9 ≤ λ ≤ 1).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.9, max = 1.0)))]
    pub forgetting_factor: f64,
    /// Adapt only at or above this clamp force, N (≥ touch force).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub min_clamp_force_n: f64,
    /// Torque full scale the update is normalised by, N·m (> 0).
    #[cfg_attr(
        any(test, feature = "schema"),
        schemars(range(min = 1e-3, max = 500e3))
    )]
    pub torque_full_scale_nm: f64,
    /// Least |model torque| / full scale for an update to carry information (0 < x < 1).
    #[cfg_attr(any(test, feature = "schema"), schemars(extend("exclusiveMinimum" = 0, "exclusiveMaximum" = 1)))]
    pub min_excitation_ratio: f64,
}

/// `[limits]`: operating envelope.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Limits {
    /// Largest clamp force, N (≤ 200 kN, the core's envelope); scales the compare bands and the
    /// synthetic plant.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1.0, max = 200e3)))]
    pub max_clamp_force_n: f64,
    /// Below this clamp force the device is released: zero torque (plus drag), N.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0)))]
    pub touch_force_n: f64,
}

/// `[uncertainty]`: how the relative tolerances of μ, clamp force and r_e combine.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Uncertainty {
    /// `worst_case` (δμ + δF/F + δr) or `root_sum_square`.
    pub combination: CombinationName,
}

/// `uncertainty.combination`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum CombinationName {
    /// δμ + δF/F + δr: holds whatever the correlation.
    WorstCase,
    /// √(δμ² + (δF/F)² + δr²) for independent errors [pub: JCGM 100:2008 §5.1.2].
    RootSumSquare,
}

/// `[radius_table]`: clamp-force breakpoints of r_e(F, bedding). The bedding axis is always
/// 0 (new, uniform pressure) and 1 (bedded, uniform wear): r_e is linear in bedding, so the
/// two carry the whole model (see [`crate::build_core`]).
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct RadiusTableSpec {
    /// Clamp-force breakpoints, N (1–8, increasing). A force outside them raises the core's
    /// out-of-range flag.
    pub force_n: Vec<f64>,
}

/// `[trace]`: how CSV traces are laid out.
#[derive(Debug, Clone, Default, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct TraceSpec {
    /// A time step longer than (1 + this) sample periods is a gap (default 0.5).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.0, max = 100.0)))]
    pub gap_tolerance_ratio: Option<f64>,
    /// Column mapping; canonical names where a quantity is not listed.
    #[serde(default)]
    pub columns: Columns,
}

/// `[trace.columns]`: one entry per quantity, `{ column = "...", unit = "..." }`.
#[derive(Debug, Clone, Default, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct Columns {
    /// Time stamps (canonical column `t_s`, s).
    pub time: Option<ColumnMap>,
    /// Clamp force of channel 1 (canonical `force_1_N`, N; or ADC counts, kN, lbf, bar with `piston_area_m2` …).
    pub force_1: Option<ColumnMap>,
    /// Clamp force of channel 2 (canonical `force_2_N`).
    pub force_2: Option<ColumnMap>,
    /// Clamp force of channel 3 (canonical `force_3_N`).
    pub force_3: Option<ColumnMap>,
    /// Clamp force of channel 4 (canonical `force_4_N`).
    pub force_4: Option<ColumnMap>,
    /// Valid bit of channel 1, 0 or 1 (canonical `force_1_valid`; optional).
    pub force_1_valid: Option<ColumnMap>,
    /// Valid bit of channel 2 (canonical `force_2_valid`; optional).
    pub force_2_valid: Option<ColumnMap>,
    /// Valid bit of channel 3 (canonical `force_3_valid`; optional).
    pub force_3_valid: Option<ColumnMap>,
    /// Valid bit of channel 4 (canonical `force_4_valid`; optional).
    pub force_4_valid: Option<ColumnMap>,
    /// Input-member speed (canonical `omega_in_rad_s`, rad/s).
    pub omega_in: Option<ColumnMap>,
    /// Output-member speed (canonical `omega_out_rad_s`, rad/s; required for a clutch).
    pub omega_out: Option<ColumnMap>,
    /// Actuator command (canonical `command`; optional).
    pub command: Option<ColumnMap>,
    /// Measured lining temperature (canonical `temp_C`, °C; optional).
    pub temperature: Option<ColumnMap>,
    /// Ambient temperature (canonical `ambient_C`, °C; optional).
    pub ambient: Option<ColumnMap>,
    /// Reference torque (canonical `torque_ref_Nm`, N·m; needed by compare and fit).
    pub torque_ref: Option<ColumnMap>,
}

/// One column mapping.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct ColumnMap {
    /// Header name in the CSV file.
    pub column: String,
    /// Unit of the values (see [`column_units`]).
    pub unit: String,
    /// Piston area, m², for a pressure column that stands for clamp force.
    pub piston_area_m2: Option<f64>,
}

/// One segment of a key path.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Seg {
    /// A table key.
    Key(String),
    /// An array index.
    Index(usize),
}

/// A key path such as `friction.mu.values[2][1]`.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct KeyPath(pub Vec<Seg>);

impl KeyPath {
    /// Parse `a.b[2].c` into segments.
    pub fn parse(s: &str) -> Self {
        let mut segs = Vec::new();
        for part in s.split('.') {
            let mut rest = part;
            if let Some(i) = rest.find('[') {
                if i > 0 {
                    segs.push(Seg::Key(rest[..i].to_string()));
                }
                rest = &rest[i..];
                while let Some(stripped) = rest.strip_prefix('[') {
                    let end = stripped.find(']').unwrap_or(stripped.len());
                    if let Ok(n) = stripped[..end].parse() {
                        segs.push(Seg::Index(n));
                    }
                    rest = stripped.get(end + 1..).unwrap_or("");
                }
            } else if !rest.is_empty() {
                segs.push(Seg::Key(rest.to_string()));
            }
        }
        Self(segs)
    }
}

impl fmt::Display for KeyPath {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut first = true;
        for s in &self.0 {
            match s {
                Seg::Key(k) => {
                    if !first {
                        write!(f, ".")?;
                    }
                    write!(f, "{k}")?;
                }
                Seg::Index(i) => write!(f, "[{i}]")?,
            }
            first = false;
        }
        Ok(())
    }
}

/// One problem in a config file, located.
#[derive(Debug, Clone, PartialEq)]
pub struct ConfigIssue {
    /// Dotted key path (`contact.outer_radius_m`), when known.
    pub key: Option<String>,
    /// 1-based line, when known.
    pub line: Option<usize>,
    /// 1-based column (characters), when known.
    pub column: Option<usize>,
    /// What is wrong.
    pub message: String,
    /// The offending source line, when located.
    pub snippet: Option<String>,
}

/// All problems found in one config file.
#[derive(Debug, Clone, PartialEq)]
pub struct ConfigErrors {
    /// File name as given.
    pub file: String,
    /// The problems, in file order where located.
    pub issues: Vec<ConfigIssue>,
}

impl fmt::Display for ConfigErrors {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (n, i) in self.issues.iter().enumerate() {
            if n > 0 {
                writeln!(f)?;
            }
            write!(f, "{}", self.file)?;
            if let (Some(l), Some(c)) = (i.line, i.column) {
                write!(f, ":{l}:{c}")?;
            }
            write!(f, ": ")?;
            if let Some(k) = &i.key {
                write!(f, "{k}: ")?;
            }
            write!(f, "{}", i.message)?;
            if let (Some(s), Some(c)) = (&i.snippet, i.column) {
                write!(f, "\n    | {s}\n    | {}^", " ".repeat(c.saturating_sub(1)))?;
            }
        }
        Ok(())
    }
}

impl std::error::Error for ConfigErrors {}

/// A parsed, validated config with its source text (kept for located messages and for `fit`,
/// which rewrites the μ values in place and keeps the comments).
#[derive(Debug, Clone)]
pub struct LoadedConfig {
    /// The validated configuration.
    pub config: DeviceConfig,
    /// The TOML text it came from.
    pub source: String,
    /// File name as given.
    pub file: String,
}

impl LoadedConfig {
    /// Read and validate a config file.
    ///
    /// # Errors
    /// [`ConfigErrors`] with one located issue per problem; an unreadable file is one issue
    /// with no location.
    pub fn load(path: &Path) -> Result<Self, ConfigErrors> {
        let file = path.display().to_string();
        let source = std::fs::read_to_string(path).map_err(|e| ConfigErrors {
            file: file.clone(),
            issues: vec![ConfigIssue {
                key: None,
                line: None,
                column: None,
                message: format!("cannot read config: {e}"),
                snippet: None,
            }],
        })?;
        Self::from_str(&source, &file)
    }

    /// Parse and validate config text; `file` names it in messages.
    ///
    /// # Errors
    /// As [`LoadedConfig::load`].
    pub fn from_str(source: &str, file: &str) -> Result<Self, ConfigErrors> {
        let config: DeviceConfig = toml::from_str(source).map_err(|e| {
            let (line, column, key) = match e.span() {
                Some(span) => {
                    let (l, c) = line_col(source, span.start);
                    (Some(l), Some(c), key_at(source, span.start))
                }
                None => (None, None, None),
            };
            ConfigErrors {
                file: file.to_string(),
                issues: vec![ConfigIssue {
                    key,
                    line,
                    column,
                    message: e.message().trim().to_string(),
                    snippet: line
                        .and_then(|l| source.lines().nth(l - 1))
                        .map(str::to_string),
                }],
            }
        })?;
        let mut v = Validator::default();
        validate(&config, &mut v);
        // The core's own checks run once the schema's have passed, so one mistake is reported
        // once; they catch what only the core knows (time constants against the sample period,
        // fixed-point ranges, geometry).
        if v.issues.is_empty()
            && let Err(e) = crate::build_core::CoreDevice::build(&config)
        {
            v.issue(&e.key, e.message);
        }
        if v.issues.is_empty() {
            Ok(Self {
                config,
                source: source.to_string(),
                file: file.to_string(),
            })
        } else {
            let mut issues: Vec<ConfigIssue> = v
                .issues
                .into_iter()
                .map(|(key, message)| {
                    let loc = locate(source, &KeyPath::parse(&key));
                    ConfigIssue {
                        key: Some(key),
                        line: loc.map(|l| l.0),
                        column: loc.map(|l| l.1),
                        message,
                        snippet: loc
                            .and_then(|l| source.lines().nth(l.0 - 1))
                            .map(str::to_string),
                    }
                })
                .collect();
            issues.sort_by_key(|i| (i.line.unwrap_or(usize::MAX), i.column.unwrap_or(0)));
            Err(ConfigErrors {
                file: file.to_string(),
                issues,
            })
        }
    }
}

/// 1-based (line, column) of a byte offset; the column counts characters.
pub fn line_col(src: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(src.len());
    let before = src.get(..offset).unwrap_or(src);
    let line = before.matches('\n').count() + 1;
    let col = before.rsplit('\n').next().map_or(0, |s| s.chars().count()) + 1;
    (line, col)
}

/// Byte span of a key path's value in the TOML text (the key itself for a missing value's
/// parent), or `None` when the text does not contain it.
pub fn span_of(src: &str, path: &KeyPath) -> Option<std::ops::Range<usize>> {
    use toml::de::{DeTable, DeValue};
    let root = DeTable::parse(src).ok()?;
    let mut table: &DeTable<'_> = root.get_ref();
    let mut value: Option<&toml::Spanned<DeValue<'_>>> = None;
    let mut last_span = None;
    for seg in &path.0 {
        match seg {
            Seg::Key(k) => {
                let t = match value {
                    None => table,
                    Some(v) => match v.get_ref() {
                        DeValue::Table(t) => t,
                        _ => return last_span,
                    },
                };
                match t
                    .iter()
                    .find(|(key, _)| key.get_ref().as_ref() == k.as_str())
                {
                    Some((key, v)) => {
                        last_span = Some(key.span());
                        value = Some(v);
                        table = t;
                    }
                    None => return last_span,
                }
            }
            Seg::Index(i) => {
                let v = value?;
                match v.get_ref() {
                    DeValue::Array(a) => match a.get(*i) {
                        Some(item) => {
                            last_span = Some(item.span());
                            value = Some(item);
                        }
                        None => return Some(v.span()),
                    },
                    _ => return Some(v.span()),
                }
            }
        }
    }
    match (path.0.last(), value) {
        // A key's own position reads best for a whole-table or scalar issue.
        (Some(Seg::Key(_)), Some(v)) if !matches!(v.get_ref(), DeValue::Table(_)) => last_span,
        (_, Some(v)) if !matches!(v.get_ref(), DeValue::Table(_)) => Some(v.span()),
        _ => last_span,
    }
}

/// Byte span of the *value* at a key path (e.g. the whole array of `friction.mu.values`).
pub fn value_span(src: &str, path: &KeyPath) -> Option<std::ops::Range<usize>> {
    use toml::de::{DeTable, DeValue};
    let root = DeTable::parse(src).ok()?;
    let mut cur: Option<&toml::Spanned<DeValue<'_>>> = None;
    for seg in &path.0 {
        match seg {
            Seg::Key(k) => {
                let t = match cur.map(toml::Spanned::get_ref) {
                    None => root.get_ref(),
                    Some(DeValue::Table(t)) => t,
                    Some(_) => return None,
                };
                cur = Some(
                    t.iter()
                        .find(|(key, _)| key.get_ref().as_ref() == k.as_str())?
                        .1,
                );
            }
            Seg::Index(i) => match cur.map(toml::Spanned::get_ref) {
                Some(DeValue::Array(a)) => cur = Some(a.get(*i)?),
                _ => return None,
            },
        }
    }
    cur.map(toml::Spanned::span)
}

/// (line, column) of a key path in the TOML text.
pub fn locate(src: &str, path: &KeyPath) -> Option<(usize, usize)> {
    span_of(src, path).map(|s| line_col(src, s.start))
}

/// The dotted path of the innermost key whose key or value span contains `offset`.
pub fn key_at(src: &str, offset: usize) -> Option<String> {
    use toml::de::{DeTable, DeValue};
    fn walk(t: &DeTable<'_>, offset: usize, prefix: &str) -> Option<String> {
        for (k, v) in t.iter() {
            let name = if prefix.is_empty() {
                k.get_ref().to_string()
            } else {
                format!("{prefix}.{}", k.get_ref())
            };
            if k.span().contains(&offset) {
                return Some(name);
            }
            match v.get_ref() {
                DeValue::Table(inner) => {
                    if let Some(found) = walk(inner, offset, &name) {
                        return Some(found);
                    }
                }
                DeValue::Array(items) => {
                    for (i, item) in items.iter().enumerate() {
                        if let DeValue::Table(inner) = item.get_ref()
                            && let Some(found) = walk(inner, offset, &format!("{name}[{i}]"))
                        {
                            return Some(found);
                        }
                    }
                    if v.span().contains(&offset) {
                        return Some(name);
                    }
                }
                _ => {
                    if v.span().contains(&offset) {
                        return Some(name);
                    }
                }
            }
        }
        None
    }
    // The text may not parse at all (a syntax error): then there is no key to name.
    let root = DeTable::parse(src).ok()?;
    walk(root.get_ref(), offset, "")
}

#[derive(Default)]
struct Validator {
    issues: Vec<(String, String)>,
}

impl Validator {
    fn issue(&mut self, key: &str, msg: impl Into<String>) {
        self.issues.push((key.to_string(), msg.into()));
    }
    fn finite(&mut self, key: &str, v: f64) -> bool {
        if v.is_finite() {
            true
        } else {
            self.issue(key, "must be a finite number");
            false
        }
    }
    fn positive(&mut self, key: &str, v: f64) {
        if self.finite(key, v) && v <= 0.0 {
            self.issue(key, format!("must be > 0, got {v}"));
        }
    }
    fn non_negative(&mut self, key: &str, v: f64) {
        if self.finite(key, v) && v < 0.0 {
            self.issue(key, format!("must be ≥ 0, got {v}"));
        }
    }
    fn within(&mut self, key: &str, v: f64, lo: f64, hi: f64) {
        if self.finite(key, v) && !(lo..=hi).contains(&v) {
            self.issue(key, format!("must be within {lo} … {hi}, got {v}"));
        }
    }
    fn increasing(&mut self, key: &str, xs: &[f64], max: usize) {
        if xs.is_empty() {
            self.issue(key, "needs at least one breakpoint");
        }
        if xs.len() > max {
            self.issue(
                key,
                format!("has {} breakpoints; at most {max} are supported", xs.len()),
            );
        }
        for (i, x) in xs.iter().enumerate() {
            if !x.is_finite() {
                self.issue(&format!("{key}[{i}]"), "must be a finite number");
            }
        }
        for (i, w) in xs.windows(2).enumerate() {
            if let [a, b] = w
                && b <= a
            {
                self.issue(
                    &format!("{key}[{}]", i + 1),
                    format!("breakpoints must increase strictly: {b} follows {a}"),
                );
            }
        }
    }
    fn count(&mut self, key: &str, n: u32, min: u32) {
        if n < min || n > u32::from(u16::MAX) {
            self.issue(key, format!("must be within {min} … 65535, got {n}"));
        }
    }
    fn required(&mut self, key: &str, v: Option<f64>, shape: Shape) -> Option<f64> {
        if v.is_none() {
            self.issue(
                "contact.shape",
                format!("shape '{}' needs {key}", shape.name()),
            );
        }
        v
    }
    fn unused<T>(&mut self, key: &str, v: &Option<T>, shape: Shape) {
        if v.is_some() {
            self.issue(key, format!("is not used by shape '{}'", shape.name()));
        }
    }
}

fn validate(c: &DeviceConfig, v: &mut Validator) {
    let period = c.device.sample_period_s;
    v.within("device.sample_period_s", period, 1e-6, 1.0);
    if period.is_finite() && period > 0.0 {
        // The core's sensor runs at a whole number of hertz and checks rate · period = 1 s
        // within 1 ppm.
        let rate = (1.0 / period).round();
        if (rate * period - 1.0).abs() > 1e-6 {
            v.issue(
                "device.sample_period_s",
                format!("1 / {period} s is not a whole number of hertz (the core's sensor rate)"),
            );
        }
    }
    let every = c.device.thermal_wear_every;
    if !every.is_power_of_two() || every > 32 {
        v.issue(
            "device.thermal_wear_every",
            format!("must be 1, 2, 4, 8, 16 or 32 samples, not {every}"),
        );
    }
    validate_contact(&c.contact, v);
    validate_cone_release(c, v);
    let f = &c.friction;
    v.within("friction.static_ratio", f.static_ratio, 0.5, 1.6);
    v.positive("friction.stick_speed_rad_s", f.stick_speed_rad_s);
    v.positive("friction.stick_hysteresis_rad_s", f.stick_hysteresis_rad_s);
    v.positive("friction.transition_speed_rad_s", f.transition_speed_rad_s);
    v.non_negative("friction.drag_torque_nm", f.drag_torque_nm);
    v.non_negative(
        "friction.drag_viscous_nm_per_rad_s",
        f.drag_viscous_nm_per_rad_s,
    );
    if v.finite("friction.mu_tolerance_ratio", f.mu_tolerance_ratio)
        && !(0.0..1.0).contains(&f.mu_tolerance_ratio)
    {
        v.issue(
            "friction.mu_tolerance_ratio",
            "must be within 0 … 1 (1 excluded)",
        );
    }
    let mu = &f.mu;
    v.increasing(
        "friction.mu.temperature_c",
        &mu.temperature_c,
        MU_MAX_POINTS,
    );
    v.increasing(
        "friction.mu.slip_speed_rad_s",
        &mu.slip_speed_rad_s,
        MU_MAX_POINTS,
    );
    if mu.slip_speed_rad_s.first().is_some_and(|&s| s < 0.0) {
        v.issue(
            "friction.mu.slip_speed_rad_s[0]",
            "slip-speed breakpoints are magnitudes and must be ≥ 0",
        );
    }
    for (i, t) in mu.temperature_c.iter().enumerate() {
        if !(-50.0..=1000.0).contains(t) {
            v.issue(
                &format!("friction.mu.temperature_c[{i}]"),
                format!("{t} °C is outside the core's envelope −50 … 1000 °C"),
            );
        }
    }
    if mu.values.len() != mu.temperature_c.len() {
        v.issue(
            "friction.mu.values",
            format!(
                "has {} rows; temperature_c has {} breakpoints (one row per temperature)",
                mu.values.len(),
                mu.temperature_c.len()
            ),
        );
    }
    for (i, row) in mu.values.iter().enumerate() {
        if row.len() != mu.slip_speed_rad_s.len() {
            v.issue(
                &format!("friction.mu.values[{i}]"),
                format!(
                    "has {} values; slip_speed_rad_s has {} breakpoints",
                    row.len(),
                    mu.slip_speed_rad_s.len()
                ),
            );
        }
        for (j, &m) in row.iter().enumerate() {
            if !(m.is_finite() && m > 0.0 && m <= 1.2) {
                v.issue(
                    &format!("friction.mu.values[{i}][{j}]"),
                    format!("μ must be above 0 and at most 1.2 (the core's limit), got {m}"),
                );
            }
        }
    }

    let t = &c.thermal;
    v.positive(
        "thermal.rotor_heat_capacity_j_per_k",
        t.rotor_heat_capacity_j_per_k,
    );
    match (t.cooling_time_constant_s, t.heat_transfer_w_per_m2_k, t.cooling_area_m2) {
        (Some(tau), None, None) => v.positive("thermal.cooling_time_constant_s", tau),
        (None, Some(h), Some(a)) => {
            v.positive("thermal.heat_transfer_w_per_m2_k", h);
            v.positive("thermal.cooling_area_m2", a);
        }
        (Some(_), _, _) => v.issue(
            "thermal.cooling_time_constant_s",
            "give either cooling_time_constant_s or heat_transfer_w_per_m2_k with cooling_area_m2, not both",
        ),
        (None, _, _) => v.issue(
            "thermal",
            "needs cooling_time_constant_s, or heat_transfer_w_per_m2_k with cooling_area_m2",
        ),
    }
    v.within(
        "thermal.heat_into_rotor_ratio",
        t.heat_into_rotor_ratio,
        1e-3,
        1.0,
    );
    v.within("thermal.ambient_c", t.ambient_c, -50.0, 200.0);
    if let Some(t0) = t.initial_temperature_c {
        v.within("thermal.initial_temperature_c", t0, -50.0, 1000.0);
    }
    v.within("thermal.fade_c", t.fade_c, -50.0, 1000.0);
    v.within(
        "thermal.over_temperature_c",
        t.over_temperature_c,
        -50.0,
        1000.0,
    );
    if t.over_temperature_c <= t.fade_c {
        v.issue("thermal.over_temperature_c", "must be above fade_c");
    }
    v.within("thermal.flag_hysteresis_k", t.flag_hysteresis_k, 0.0, 500.0);
    if let Some(l) = &t.lining {
        v.positive(
            "thermal.lining.heat_capacity_j_per_k",
            l.heat_capacity_j_per_k,
        );
        v.positive(
            "thermal.lining.conductance_to_rotor_w_per_k",
            l.conductance_to_rotor_w_per_k,
        );
    }
    if let Some(m) = &t.measured {
        v.within("thermal.measured.min_c", m.min_c, -273.0, 1500.0);
        v.within("thermal.measured.max_c", m.max_c, -273.0, 1500.0);
        if m.max_c <= m.min_c {
            v.issue("thermal.measured.max_c", "must be above min_c");
        }
        v.positive("thermal.measured.max_rate_k_per_s", m.max_rate_k_per_s);
    }

    let w = &c.wear;
    v.within("wear.bedding_energy_j", w.bedding_energy_j, 1.0, 1e13);
    v.within("wear.initial_energy_j", w.initial_energy_j, 0.0, 1e14);
    v.non_negative(
        "wear.specific_wear_rate_m3_per_j",
        w.specific_wear_rate_m3_per_j,
    );
    v.positive("wear.pad_area_m2", w.pad_area_m2);
    v.positive("wear.lining_thickness_m", w.lining_thickness_m);
    v.non_negative("wear.minimum_thickness_m", w.minimum_thickness_m);
    if w.minimum_thickness_m >= w.lining_thickness_m {
        v.issue(
            "wear.minimum_thickness_m",
            "must be below lining_thickness_m",
        );
    }

    if c.sensors.is_empty() || c.sensors.len() > MAX_SENSORS {
        v.issue(
            "sensor",
            format!(
                "needs 1 … {MAX_SENSORS} [[sensor]] tables, found {}",
                c.sensors.len()
            ),
        );
    }
    for (i, s) in c.sensors.iter().enumerate() {
        let k = |name: &str| format!("sensor[{i}].{name}");
        if !s.gain_n_per_count.is_finite() || s.gain_n_per_count == 0.0 {
            v.issue(&k("gain_n_per_count"), "must be a finite, non-zero number");
        }
        v.finite(&k("offset_counts"), s.offset_counts);
        for (name, r) in [
            ("rail_low_counts", s.rail_low_counts),
            ("rail_high_counts", s.rail_high_counts),
        ] {
            if i32::try_from(r).is_err() {
                v.issue(&k(name), "must fit a 32-bit ADC code");
            }
        }
        let margin = i64::from(s.rail_margin_counts);
        if s.rail_low_counts.saturating_add(margin) >= s.rail_high_counts.saturating_sub(margin) {
            v.issue(
                &k("rail_high_counts"),
                "must be above rail_low_counts plus twice rail_margin_counts",
            );
        }
    }
    let sn = &c.sensing;
    let nyquist = 0.5 / period;
    if v.finite("sensing.filter_cutoff_hz", sn.filter_cutoff_hz)
        && (sn.filter_cutoff_hz <= 0.0 || sn.filter_cutoff_hz >= nyquist)
    {
        v.issue(
            "sensing.filter_cutoff_hz",
            format!("must be within 0 … {nyquist} Hz (Nyquist of the sample period)"),
        );
    }
    v.finite("sensing.range_low_n", sn.range_low_n);
    v.finite("sensing.range_high_n", sn.range_high_n);
    if sn.range_high_n <= sn.range_low_n {
        v.issue("sensing.range_high_n", "must be above range_low_n");
    }
    v.positive("sensing.rate_limit_n_per_s", sn.rate_limit_n_per_s);
    v.non_negative("sensing.noise_band_n", sn.noise_band_n);
    v.count("sensing.max_hold_samples", sn.max_hold_samples, 0);
    v.count(
        "sensing.debounce_raise_samples",
        sn.debounce_raise_samples,
        1,
    );
    v.count(
        "sensing.debounce_clear_samples",
        sn.debounce_clear_samples,
        1,
    );
    v.count(
        "sensing.disagreement_debounce_samples",
        sn.disagreement_debounce_samples,
        1,
    );
    v.positive("sensing.vote_tolerance_n", sn.vote_tolerance_n);
    v.non_negative("sensing.channel_uncertainty_n", sn.channel_uncertainty_n);
    if let Some(s) = &sn.stuck {
        v.positive("sensing.stuck.time_s", s.time_s);
        v.positive("sensing.stuck.command_span", s.command_span);
    }
    if c.sensors.len() == 1
        && sn.stuck.is_none()
        && c.actuator.is_none()
        && !sn.accept_undetectable_faults
    {
        v.issue(
            "sensing.stuck",
            "a single gauge with no [sensing.stuck] check and no [actuator] model cannot detect \
             its own faults (frozen, drifting, wrong gain), so its ± would hold only while it is \
             healthy: add one of them, or set sensing.accept_undetectable_faults = true to \
             acknowledge it",
        );
    }
    if let Some(a) = &c.actuator {
        v.positive("actuator.force_n_per_command", a.force_n_per_command);
        v.finite("actuator.force_offset_n", a.force_offset_n);
        v.non_negative("actuator.hysteresis_n", a.hysteresis_n);
        if v.finite("actuator.uncertainty_n", a.uncertainty_n)
            && a.uncertainty_n <= sn.channel_uncertainty_n
        {
            v.issue(
                "actuator.uncertainty_n",
                "must be above sensing.channel_uncertainty_n (a fallback force is less certain than a healthy channel)",
            );
        }
    }
    let a = &c.adaptation;
    v.within("adaptation.band_ratio", a.band_ratio, 0.0, 0.5);
    v.within(
        "adaptation.forgetting_factor",
        a.forgetting_factor,
        0.9,
        1.0,
    );
    v.non_negative("adaptation.min_clamp_force_n", a.min_clamp_force_n);
    if a.min_clamp_force_n < c.limits.touch_force_n {
        v.issue(
            "adaptation.min_clamp_force_n",
            "must not be below limits.touch_force_n",
        );
    }
    v.within(
        "adaptation.torque_full_scale_nm",
        a.torque_full_scale_nm,
        1e-3,
        500e3,
    );
    if v.finite("adaptation.min_excitation_ratio", a.min_excitation_ratio)
        && !(a.min_excitation_ratio > 0.0 && a.min_excitation_ratio < 1.0)
    {
        v.issue(
            "adaptation.min_excitation_ratio",
            "must be within 0 … 1 (both excluded)",
        );
    }
    let l = &c.limits;
    v.within("limits.max_clamp_force_n", l.max_clamp_force_n, 1.0, 200e3);
    v.non_negative("limits.touch_force_n", l.touch_force_n);
    if l.touch_force_n >= l.max_clamp_force_n {
        v.issue("limits.touch_force_n", "must be below max_clamp_force_n");
    }
    let r = &c.radius_table;
    v.increasing("radius_table.force_n", &r.force_n, RADIUS_MAX_FORCE_POINTS);
    for (i, &x) in r.force_n.iter().enumerate() {
        if x < 0.0 {
            v.issue(
                &format!("radius_table.force_n[{i}]"),
                format!("must be ≥ 0, got {x}"),
            );
        }
    }
    if let Some(g) = c.trace.gap_tolerance_ratio {
        v.within("trace.gap_tolerance_ratio", g, 0.0, 100.0);
    }
    validate_columns(c, v);
}

/// A cone whose half-angle has tan α at or below the static μ self-locks: once engaged it stays
/// engaged with no axial force, so the measured force no longer sets the torque [pub: Shigley,
/// *Mechanical Engineering Design*, ch. 16, cone clutches: the engagement force
/// F = p_a·π·d·(D − d)/2·(sin α + μ cos α) and the release force needs μ cos α < sin α]. Refused.
fn validate_cone_release(c: &DeviceConfig, v: &mut Validator) {
    let (Shape::Cone, Some(alpha)) = (c.contact.shape, c.contact.half_angle_deg) else {
        return;
    };
    let mu_max = c
        .friction
        .mu
        .values
        .iter()
        .flatten()
        .copied()
        .filter(|m| m.is_finite())
        .fold(0.0f64, f64::max);
    let mu_static = mu_max * c.friction.static_ratio.max(1.0);
    let tan = alpha.to_radians().tan();
    if alpha.is_finite() && mu_static.is_finite() && tan <= mu_static {
        v.issue(
            "contact.half_angle_deg",
            format!(
                "a cone of half-angle {alpha}° self-locks: tan α = {tan:.3} is not above the \
                 largest static μ {mu_static:.3}, so it stays engaged with no clamp force and the \
                 measured force no longer sets the torque; use a half-angle above {:.1}°",
                mu_static.atan().to_degrees()
            ),
        );
    }
}

fn validate_contact(ct: &Contact, v: &mut Validator) {
    if ct.faces == 0 || ct.faces > 64 {
        v.issue(
            "contact.faces",
            format!("must be within 1 … 64, got {}", ct.faces),
        );
    }
    v.within(
        "contact.radius_tolerance_ratio",
        ct.radius_tolerance_ratio,
        0.0,
        1.0,
    );
    let shape = ct.shape;
    let radii = |v: &mut Validator| {
        let ri = v.required("contact.inner_radius_m", ct.inner_radius_m, shape);
        let ro = v.required("contact.outer_radius_m", ct.outer_radius_m, shape);
        if let Some(ri) = ri {
            v.non_negative("contact.inner_radius_m", ri);
        }
        if let Some(ro) = ro {
            v.within("contact.outer_radius_m", ro, 1e-4, 10.0);
        }
        if let (Some(ri), Some(ro)) = (ri, ro)
            && ri >= ro
        {
            v.issue("contact.inner_radius_m", "must be below outer_radius_m");
        }
    };
    if shape != Shape::Button {
        v.unused("contact.button_model", &ct.button_model, shape);
    }
    match shape {
        Shape::Annulus | Shape::Sector | Shape::Cone => {
            radii(v);
            v.unused("contact.pad_radius_m", &ct.pad_radius_m, shape);
            v.unused(
                "contact.pad_centre_radius_m",
                &ct.pad_centre_radius_m,
                shape,
            );
            v.unused("contact.vertices_m", &ct.vertices_m, shape);
            if shape == Shape::Sector {
                if let Some(a) = v.required("contact.sector_angle_deg", ct.sector_angle_deg, shape)
                {
                    v.within("contact.sector_angle_deg", a, 1e-3, 360.0);
                }
            } else {
                v.unused("contact.sector_angle_deg", &ct.sector_angle_deg, shape);
            }
            if shape == Shape::Cone {
                if let Some(a) = v.required("contact.half_angle_deg", ct.half_angle_deg, shape) {
                    v.within("contact.half_angle_deg", a, 1.0, 89.0);
                }
            } else {
                v.unused("contact.half_angle_deg", &ct.half_angle_deg, shape);
            }
        }
        Shape::Button => {
            if ct.button_model.is_none() {
                v.issue(
                    "contact.shape",
                    "shape 'button' needs contact.button_model (\"published_table\" or \"integrated\")",
                );
            }
            let r = v.required("contact.pad_radius_m", ct.pad_radius_m, shape);
            let e = v.required("contact.pad_centre_radius_m", ct.pad_centre_radius_m, shape);
            if let Some(r) = r {
                v.positive("contact.pad_radius_m", r);
            }
            if let Some(e) = e {
                v.within("contact.pad_centre_radius_m", e, 1e-4, 10.0);
            }
            if let (Some(r), Some(e)) = (r, e)
                && r >= e
            {
                v.issue(
                    "contact.pad_radius_m",
                    "must be below pad_centre_radius_m (the pad may not cover the axis)",
                );
            }
            for k in ["inner_radius_m", "outer_radius_m"] {
                let val = if k == "inner_radius_m" {
                    &ct.inner_radius_m
                } else {
                    &ct.outer_radius_m
                };
                v.unused(&format!("contact.{k}"), val, shape);
            }
            v.unused("contact.sector_angle_deg", &ct.sector_angle_deg, shape);
            v.unused("contact.vertices_m", &ct.vertices_m, shape);
            v.unused("contact.half_angle_deg", &ct.half_angle_deg, shape);
        }
        Shape::Polygon => {
            match &ct.vertices_m {
                None => v.issue("contact.shape", "shape 'polygon' needs contact.vertices_m"),
                Some(vs) => {
                    if !(3..=32).contains(&vs.len()) {
                        v.issue(
                            "contact.vertices_m",
                            format!("needs 3 … 32 vertices, got {}", vs.len()),
                        );
                    }
                    for (i, p) in vs.iter().enumerate() {
                        if !(p[0].is_finite() && p[1].is_finite()) {
                            v.issue(&format!("contact.vertices_m[{i}]"), "must be finite");
                        }
                    }
                    if vs.len() >= 3 && polygon_contains_axis(vs) {
                        v.issue(
                            "contact.vertices_m",
                            "the pad outline encloses the disc axis (origin)",
                        );
                    }
                    if vs.len() >= 3 && polygon_area(vs).abs() < 1e-10 {
                        v.issue("contact.vertices_m", "the pad outline has no area");
                    }
                }
            }
            for (k, val) in [
                ("inner_radius_m", &ct.inner_radius_m),
                ("outer_radius_m", &ct.outer_radius_m),
            ] {
                v.unused(&format!("contact.{k}"), val, shape);
            }
            v.unused("contact.sector_angle_deg", &ct.sector_angle_deg, shape);
            v.unused("contact.pad_radius_m", &ct.pad_radius_m, shape);
            v.unused(
                "contact.pad_centre_radius_m",
                &ct.pad_centre_radius_m,
                shape,
            );
            v.unused("contact.half_angle_deg", &ct.half_angle_deg, shape);
        }
    }
}

/// Signed area of a polygon (shoelace), m².
pub fn polygon_area(vs: &[[f64; 2]]) -> f64 {
    edges(vs)
        .map(|(a, b)| a[0] * b[1] - b[0] * a[1])
        .sum::<f64>()
        / 2.0
}

/// The closed outline's edges (a, b), the last one back to the first vertex.
pub fn edges(vs: &[[f64; 2]]) -> impl Iterator<Item = ([f64; 2], [f64; 2])> + '_ {
    vs.iter().copied().zip(vs.iter().copied().cycle().skip(1))
}

/// Whether the origin lies inside (or on) the polygon, by the winding number.
pub fn polygon_contains_axis(vs: &[[f64; 2]]) -> bool {
    let mut angle = 0.0;
    for (a, b) in edges(vs) {
        let cross = a[0] * b[1] - a[1] * b[0];
        let dot = a[0] * b[0] + a[1] * b[1];
        if cross.abs() < 1e-15 && dot <= 0.0 {
            return true; // the origin lies on this edge
        }
        angle += cross.atan2(dot);
    }
    angle.abs() > std::f64::consts::PI
}

/// The canonical header name and unit of each trace quantity (used when `[trace.columns]`
/// does not list it).
pub const CANONICAL: &[(&str, &str, &str, Quantity)] = &[
    ("time", "t_s", "s", Quantity::Time),
    ("force_1", "force_1_N", "N", Quantity::Force),
    ("force_2", "force_2_N", "N", Quantity::Force),
    ("force_3", "force_3_N", "N", Quantity::Force),
    ("force_4", "force_4_N", "N", Quantity::Force),
    ("force_1_valid", "force_1_valid", "1", Quantity::Flag),
    ("force_2_valid", "force_2_valid", "1", Quantity::Flag),
    ("force_3_valid", "force_3_valid", "1", Quantity::Flag),
    ("force_4_valid", "force_4_valid", "1", Quantity::Flag),
    ("omega_in", "omega_in_rad_s", "rad_s", Quantity::Speed),
    ("omega_out", "omega_out_rad_s", "rad_s", Quantity::Speed),
    ("command", "command", "1", Quantity::Command),
    ("temperature", "temp_C", "C", Quantity::Temperature),
    ("ambient", "ambient_C", "C", Quantity::Temperature),
    ("torque_ref", "torque_ref_Nm", "Nm", Quantity::Torque),
];

impl Columns {
    /// The mapping given for a quantity name of [`CANONICAL`], if any.
    pub fn get(&self, name: &str) -> Option<&ColumnMap> {
        match name {
            "time" => self.time.as_ref(),
            "force_1" => self.force_1.as_ref(),
            "force_2" => self.force_2.as_ref(),
            "force_3" => self.force_3.as_ref(),
            "force_4" => self.force_4.as_ref(),
            "force_1_valid" => self.force_1_valid.as_ref(),
            "force_2_valid" => self.force_2_valid.as_ref(),
            "force_3_valid" => self.force_3_valid.as_ref(),
            "force_4_valid" => self.force_4_valid.as_ref(),
            "omega_in" => self.omega_in.as_ref(),
            "omega_out" => self.omega_out.as_ref(),
            "command" => self.command.as_ref(),
            "temperature" => self.temperature.as_ref(),
            "ambient" => self.ambient.as_ref(),
            "torque_ref" => self.torque_ref.as_ref(),
            _ => None,
        }
    }
}

fn validate_columns(c: &DeviceConfig, v: &mut Validator) {
    let n = c.sensors.len();
    for &(name, _, _, q) in CANONICAL {
        let Some(m) = c.trace.columns.get(name) else {
            continue;
        };
        let key = format!("trace.columns.{name}");
        if let Some(ch) = name
            .strip_prefix("force_")
            .and_then(|s| s.chars().next())
            .and_then(|d| d.to_digit(10))
            && ch as usize > n
        {
            v.issue(
                &key,
                format!("maps force channel {ch} but only {n} [[sensor]] tables are configured"),
            );
        }
        if m.column.trim().is_empty() {
            v.issue(&format!("{key}.column"), "must name a header");
        }
        match column_units::conversion(q, &m.unit, m.piston_area_m2) {
            Err(msg) => {
                let sub = if msg.contains("piston_area_m2") && m.piston_area_m2.is_some() {
                    "piston_area_m2"
                } else {
                    "unit"
                };
                v.issue(&format!("{key}.{sub}"), msg);
            }
            Ok(_) => {
                // A header that names its own unit must agree with the mapping's unit.
                if let Some(suffix) = column_units::unit_suffix(q, &m.column)
                    && column_units::normalise(suffix) != column_units::normalise(&m.unit)
                {
                    v.issue(
                        &format!("{key}.unit"),
                        format!(
                            "column '{}' carries unit '{suffix}' in its name but the mapping says '{}'",
                            m.column, m.unit
                        ),
                    );
                }
            }
        }
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    const DEMO: &str = crate::DEMO_CONFIG;

    fn err(src: &str) -> ConfigErrors {
        LoadedConfig::from_str(src, "t.toml").unwrap_err()
    }

    #[test]
    fn demo_config_is_valid() {
        let c = LoadedConfig::from_str(DEMO, "demo").unwrap();
        assert_eq!(c.config.contact.shape, Shape::Sector);
    }

    #[test]
    fn unknown_key_is_located() {
        let src = DEMO.replace("fade_c =", "fade_temp_c =");
        let e = err(&src);
        let line = src
            .lines()
            .position(|l| l.starts_with("fade_temp_c"))
            .unwrap()
            + 1;
        assert_eq!(e.issues[0].line, Some(line));
        assert_eq!(e.issues[0].column, Some(1));
        assert!(
            e.issues[0].message.contains("unknown field `fade_temp_c`"),
            "{e}"
        );
        assert_eq!(e.issues[0].key.as_deref(), Some("thermal.fade_temp_c"));
    }

    /// The demo with only the first `[[sensor]]` table and no `[actuator]` table.
    fn single_unmonitored_gauge() -> String {
        let first = DEMO.find("[[sensor]]").unwrap();
        let second = DEMO[first + 1..].find("[[sensor]]").unwrap() + first + 1;
        let sensing = DEMO.find("[sensing]").unwrap();
        let actuator = DEMO.find("[actuator]").unwrap();
        let adaptation = DEMO.find("[adaptation]").unwrap();
        format!(
            "{}{}{}",
            &DEMO[..second],
            &DEMO[sensing..actuator],
            &DEMO[adaptation..]
        )
        .lines()
        .filter(|l| !l.starts_with("force_2") && !l.starts_with("force_3"))
        .map(|l| format!("{l}\n"))
        .collect()
    }

    #[test]
    fn a_single_gauge_that_cannot_detect_its_faults_is_refused() {
        let src = single_unmonitored_gauge();
        let e = err(&src);
        assert_eq!(e.issues.len(), 1, "{e}");
        assert_eq!(e.issues[0].key.as_deref(), Some("sensing.stuck"));
        assert!(e.issues[0].message.contains("cannot detect"), "{e}");
        // Acknowledged explicitly, it is accepted.
        let acknowledged = src.replace(
            "[sensing]\n",
            "[sensing]\naccept_undetectable_faults = true\n",
        );
        LoadedConfig::from_str(&acknowledged, "t.toml").unwrap();
        // With a stuck check instead, it is accepted too.
        let stuck = src.replace(
            "[adaptation]",
            "[sensing.stuck]\ntime_s = 0.5\ncommand_span = 0.2\n\n[adaptation]",
        );
        LoadedConfig::from_str(&stuck, "t.toml").unwrap();
    }

    #[test]
    fn a_self_locking_cone_is_refused() {
        // [calc] largest static μ of the demo: 0.43 × 1.25 = 0.5375, atan = 28.3°: a 12° cone
        // self-locks, a 30° one releases.
        let cone = |deg: f64| {
            DEMO.replace("shape = \"sector\"", "shape = \"cone\"")
                .replace(
                    "sector_angle_deg = 30.0",
                    &format!("half_angle_deg = {deg}"),
                )
        };
        let e = err(&cone(12.0));
        assert_eq!(e.issues.len(), 1, "{e}");
        assert_eq!(e.issues[0].key.as_deref(), Some("contact.half_angle_deg"));
        assert!(e.issues[0].message.contains("self-locks"), "{e}");
        assert!(e.issues[0].message.contains("28.3°"), "{e}");
        LoadedConfig::from_str(&cone(30.0), "t.toml").unwrap();
    }

    #[test]
    fn validation_issue_is_located_at_the_value() {
        let src = DEMO.replace("static_ratio = 1.25", "static_ratio = 7.0");
        let e = err(&src);
        let line = src
            .lines()
            .position(|l| l.starts_with("static_ratio"))
            .unwrap()
            + 1;
        assert_eq!(e.issues.len(), 1, "{e}");
        assert_eq!(e.issues[0].key.as_deref(), Some("friction.static_ratio"));
        assert_eq!(e.issues[0].line, Some(line));
    }

    #[test]
    fn mu_cell_is_located() {
        let src = DEMO.replacen("0.42, 0.41", "0.42, -0.41", 1);
        let e = err(&src);
        let issue = &e.issues[0];
        assert!(
            issue
                .key
                .as_deref()
                .unwrap()
                .starts_with("friction.mu.values["),
            "{e}"
        );
        let line = src.lines().position(|l| l.contains("-0.41")).unwrap() + 1;
        assert_eq!(issue.line, Some(line));
    }

    #[test]
    fn wrong_unit_for_a_column() {
        let src = DEMO.replace(
            "force_1 = { column = \"force_1_counts\", unit = \"counts\" }",
            "force_1 = { column = \"clamp_a\", unit = \"rpm\" }",
        );
        let e = err(&src).to_string();
        assert!(e.contains("trace.columns.force_1.unit"), "{e}");
        assert!(e.contains("'rpm' is not a force unit"), "{e}");
        let src = DEMO.replace(
            "force_1 = { column = \"force_1_counts\", unit = \"counts\" }",
            "force_1 = { column = \"force_1_kN\", unit = \"N\" }",
        );
        let e = err(&src).to_string();
        assert!(e.contains("carries unit 'kN'"), "{e}");
    }

    #[test]
    fn shape_keys_are_checked() {
        let src = DEMO.replace("shape = \"sector\"", "shape = \"button\"");
        let e = err(&src);
        let keys: Vec<_> = e.issues.iter().filter_map(|i| i.key.clone()).collect();
        assert!(
            keys.contains(&"contact.inner_radius_m".to_string()),
            "{keys:?}"
        );
        assert!(e.to_string().contains("needs contact.pad_radius_m"), "{e}");
    }

    #[test]
    fn syntax_error_is_located() {
        let src = DEMO.replacen("faces = 2", "faces = = 2", 1);
        let e = err(&src);
        let line = src.lines().position(|l| l.starts_with("faces")).unwrap() + 1;
        assert_eq!(e.issues[0].line, Some(line));
    }

    #[test]
    fn keys_the_core_cannot_honour_are_rejected_by_name() {
        // Filter settings belong to [sensing] (the core filters all channels alike); a filter
        // key under a sensor must not be silently ignored.
        let src = DEMO.replacen(
            "rail_margin_counts = 8",
            "rail_margin_counts = 8\nfilter_cutoff_hz = 50.0",
            1,
        );
        let e = err(&src);
        assert!(
            e.issues[0]
                .message
                .contains("unknown field `filter_cutoff_hz`"),
            "{e}"
        );
        assert_eq!(
            e.issues[0].key.as_deref(),
            Some("sensor[0].filter_cutoff_hz")
        );
        // A button pad must say which of the two button models it uses.
        let src = DEMO
            .replace("shape = \"sector\"", "shape = \"button\"")
            .replace("inner_radius_m = 0.52\n", "pad_radius_m = 0.05\n")
            .replace("outer_radius_m = 0.68\n", "pad_centre_radius_m = 0.6\n")
            .replace("sector_angle_deg = 30.0", "");
        let e = err(&src);
        assert_eq!(e.issues.len(), 1, "{e}");
        assert!(e.to_string().contains("needs contact.button_model"), "{e}");
        // A sample period whose rate is not a whole number of hertz.
        let e = err(&DEMO.replace("sample_period_s = 0.001", "sample_period_s = 0.0003"));
        assert_eq!(
            e.issues[0].key.as_deref(),
            Some("device.sample_period_s"),
            "{e}"
        );
        // A thermal and wear sub-rate that is not a power of two up to 32.
        for bad in ["0", "3", "64"] {
            let src = DEMO.replace(
                "thermal_wear_every = 1 ",
                &format!("thermal_wear_every = {bad} "),
            );
            let e = err(&src);
            assert_eq!(
                e.issues[0].key.as_deref(),
                Some("device.thermal_wear_every"),
                "{e}"
            );
        }
    }

    #[test]
    fn a_thermal_and_wear_sub_rate_builds_the_thermal_model_for_its_interval() {
        let src = DEMO.replace("thermal_wear_every = 1 ", "thermal_wear_every = 8 ");
        let loaded = LoadedConfig::from_str(&src, "t.toml").unwrap();
        let dev = crate::build_core::CoreDevice::build(&loaded.config).unwrap();
        let crate::build_core::ChannelDevice::Three(d) = &dev.device else {
            unreachable!("the demo has three force channels")
        };
        assert_eq!(d.thermal_wear_every(), 8);
        // 8 × 1 ms [calc].
        assert_eq!(
            d.thermal().dt(),
            clampwise_core::units::Seconds::from_num(0.008)
        );
        assert!(
            DEMO.contains("thermal_wear_every = 1 "),
            "the demo states its sub-rate"
        );
    }

    #[test]
    fn key_paths_round_trip() {
        let p = KeyPath::parse("friction.mu.values[2][1]");
        assert_eq!(p.to_string(), "friction.mu.values[2][1]");
        assert_eq!(p.0.len(), 5);
        assert_eq!(line_col("ab\ncd", 4), (2, 2));
    }

    #[test]
    fn polygon_helpers() {
        let sq = [[1.0, -0.1], [1.2, -0.1], [1.2, 0.1], [1.0, 0.1]];
        assert!((polygon_area(&sq) - 0.04).abs() < 1e-12);
        assert!(!polygon_contains_axis(&sq));
        let around = [[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]];
        assert!(polygon_contains_axis(&around));
    }
}
