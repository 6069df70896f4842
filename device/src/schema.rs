//! The device config's schema: the serde types a TOML file deserialises into, one per table.
//!
//! Every key carries its SI unit in its name (`outer_radius_m`, `sample_period_s`,
//! `rotor_heat_capacity_j_per_k`); unknown keys are rejected (`deny_unknown_fields`). The
//! types are named `…Spec` so that none is mistaken for the core type it becomes
//! (`DeviceSpec` → `clampwise_core::config::DeviceConfig`, `ContactSpec` →
//! `clampwise_core::geometry::Contact`, …). Bounds that need no other key are stated here
//! (and in the generated `device/CONFIG.md`); [`crate::validate`] checks them.

use serde::Deserialize;

use crate::column_units::Quantity;

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
pub struct DeviceSpec {
    /// Name, kind and sample period.
    pub device: DeviceSectionSpec,
    /// Contact geometry.
    pub contact: ContactSpec,
    /// μ table, static ratio, stick threshold, drag.
    pub friction: FrictionSpec,
    /// Lumped thermal model.
    pub thermal: ThermalSpec,
    /// Bedding and lining wear.
    pub wear: WearSpec,
    /// One `[[sensor]]` table per clamp-force channel (1–4).
    #[serde(rename = "sensor")]
    pub sensors: Vec<SensorSpec>,
    /// How the channels are combined.
    pub sensing: SensingSpec,
    /// Actuator command → clamp force fallback (optional).
    pub actuator: Option<ActuatorSpec>,
    /// Online μ correction.
    pub adaptation: AdaptationSpec,
    /// Operating envelope.
    pub limits: LimitsSpec,
    /// How tolerances combine into the ± uncertainty.
    pub uncertainty: UncertaintySpec,
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
pub struct DeviceSectionSpec {
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
pub enum ShapeSpec {
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
    /// One or two pivoted shoes on a drum, `[contact.drum_shoes]`: torque not linear in μ.
    DrumShoes,
    /// A band brake, `[contact.band]`: torque not linear in μ.
    Band,
    /// One or two short (block) shoes on levers, `[contact.block_shoes]`: torque not linear
    /// in μ when the friction force has a moment about the lever pivot.
    BlockShoes,
}

impl ShapeSpec {
    /// The TOML spelling.
    pub fn name(self) -> &'static str {
        match self {
            Self::Annulus => "annulus",
            Self::Sector => "sector",
            Self::Button => "button",
            Self::Polygon => "polygon",
            Self::Cone => "cone",
            Self::DrumShoes => "drum_shoes",
            Self::Band => "band",
            Self::BlockShoes => "block_shoes",
        }
    }

    /// Whether the shape is a drum or band contact: torque per unit actuating force not
    /// linear in μ, whatever else the contact says.
    pub fn is_drum_or_band(self) -> bool {
        matches!(self, Self::DrumShoes | Self::Band | Self::BlockShoes)
    }
}

/// `[contact]`: the friction contact of one face; `faces` interfaces act in parallel.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct ContactSpec {
    /// Which shape; decides which of the keys below are required.
    pub shape: ShapeSpec,
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
    /// model differ: the table lies 1.6–3.3 % below it for bedded linings, 1.8–9.1 % for new
    /// ones, at R/e = 0.1 … 0.5).
    pub button_model: Option<ButtonModelSpec>,
    /// Outline of a polygon pad, m, disc axis at the origin (3–32 vertices, not enclosing it).
    pub vertices_m: Option<Vec<[f64; 2]>>,
    /// Cone half-angle, degrees (1–89).
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 1.0, max = 89.0)))]
    pub half_angle_deg: Option<f64>,
    /// A cone evaluated with the axial friction term μ·cos α (shape `cone`): `engaging`
    /// (being pressed in) or `withdrawing`; its torque is then not linear in μ and its
    /// radius table runs over μ at the bedded (uniform-wear) radius.
    pub cone_engagement: Option<ConePhaseSpec>,
    /// Pivoted shoes on a drum (shape `drum_shoes`).
    pub drum_shoes: Option<DrumShoesSpec>,
    /// Block shoes on levers (shape `block_shoes`).
    pub block_shoes: Option<BlockShoesSpec>,
    /// A band brake (shape `band`).
    pub band: Option<BandSpec>,
    /// Largest μ the torque-gain table of a `drum_shoes` or `band` contact covers (default:
    /// 90 % of the locking μ, at most 1.0, and no farther than g(μ)/μ stays within 120 m);
    /// above it the estimate flags `SELF_LOCKING`.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.05, max = 2.0)))]
    pub gain_mu_max: Option<f64>,
    /// Relative tolerance of the effective radius (0–1), for the uncertainty.
    #[cfg_attr(any(test, feature = "schema"), schemars(range(min = 0.0, max = 1.0)))]
    pub radius_tolerance_ratio: f64,
}

/// `[contact.drum_shoes]`: long pivoted shoes (pressure ∝ sin θ over the lining arc) on one
/// drum, all of the same geometry and driven by the one measured actuating force.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct DrumShoesSpec {
    /// Radius of the drum's rubbing surface, m.
    pub drum_radius_m: f64,
    /// Drum centre to each shoe's pivot pin, m.
    pub pin_distance_m: f64,
    /// Lining start, degrees from the centre–pin line (0 ≤ start < end).
    pub arc_start_deg: f64,
    /// Lining end, degrees from the centre–pin line (end < 180).
    pub arc_end_deg: f64,
    /// Axial width of the lining, m.
    pub face_width_m: f64,
    /// Lever arm of the actuating force about the pin, m.
    pub actuation_arm_m: f64,
    /// `external` (contracting shoes) or `internal` (expanding shoes).
    pub mounting: MountingSpec,
    /// One entry per shoe, `leading` (self-energising) or `trailing`; one or two shoes.
    pub shoes: Vec<ShoeActionSpec>,
}

/// `[contact.block_shoes]`: short shoes (a block on a lever, the pressure taken as
/// concentrated), all of the same lever geometry and driven by the one measured actuating force.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct BlockShoesSpec {
    /// Drum radius, m.
    pub drum_radius_m: f64,
    /// Lever arm of the actuating force about the lever pivot, m.
    pub actuation_arm_m: f64,
    /// Lever arm of the block's normal force about the lever pivot, m.
    pub normal_arm_m: f64,
    /// Distance from the lever pivot to the line of the friction force, m (≥ 0).
    pub friction_offset_m: f64,
    /// One entry per block, `leading` or `trailing`; one or two blocks.
    pub shoes: Vec<ShoeActionSpec>,
}

/// `contact.cone_engagement`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum ConePhaseSpec {
    /// Being pressed in: axial friction resists the engaging force.
    Engaging,
    /// Backing out under a falling axial force: axial friction holds the cone in (can lock).
    Withdrawing,
}

/// `contact.drum_shoes.mounting`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum MountingSpec {
    /// Contracting shoes outside the drum.
    External,
    /// Expanding shoes inside the drum.
    Internal,
}

/// One entry of `contact.drum_shoes.shoes`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum ShoeActionSpec {
    /// The friction moment about the pin adds to the actuating moment.
    Leading,
    /// The friction moment about the pin opposes the actuating moment.
    Trailing,
}

/// `[contact.band]`: a band brake on a lever.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct BandSpec {
    /// `simple` (one end at the lever pivot) or `differential` (both ends on the lever).
    pub kind: BandKindSpec,
    /// Drum radius, m.
    pub drum_radius_m: f64,
    /// Wrap angle of the band, degrees (0 < φ < 360).
    pub wrap_angle_deg: f64,
    /// Lever arm of the actuating force about the lever pivot, m.
    pub actuation_arm_m: f64,
    /// Simple band: arm of the band end on the lever, m.
    pub band_arm_m: Option<f64>,
    /// Simple band: `slack` or `tight`, the end fixed to the lever.
    pub lever_end: Option<LeverEndSpec>,
    /// Differential band: arm of the tight end about the lever pivot, m.
    pub tight_end_arm_m: Option<f64>,
    /// Differential band: arm of the slack end about the lever pivot, m.
    pub slack_end_arm_m: Option<f64>,
    /// Differential band: whether the tight end's moment `aids_actuator` (can lock) or
    /// `opposes_actuator`.
    pub tight_end: Option<TightEndSpec>,
}

/// `contact.band.kind`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum BandKindSpec {
    /// One end at the lever pivot, the other on the lever.
    Simple,
    /// Both ends on the lever, on opposite sides of its pivot.
    Differential,
}

/// `contact.band.lever_end`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum LeverEndSpec {
    /// The slack end is on the lever (self-energising).
    Slack,
    /// The tight end is on the lever.
    Tight,
}

/// `contact.band.tight_end`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum TightEndSpec {
    /// The tight end's moment helps apply the band (can lock).
    AidsActuator,
    /// The tight end's moment resists the actuator.
    OpposesActuator,
}

impl ContactSpec {
    /// Whether the torque per unit actuating force is not linear in μ (drum and band shapes,
    /// a cone with `cone_engagement`): the radius table then runs over μ instead of bedding.
    pub fn is_nonlinear_in_mu(&self) -> bool {
        self.shape.is_drum_or_band()
            || (self.shape == ShapeSpec::Cone && self.cone_engagement.is_some())
    }

    /// A contact of `shape` on `faces` interfaces with no dimension set and no radius
    /// tolerance: the start of one built in code rather than read from TOML. Set the keys the
    /// shape needs; building the device names any that is missing.
    ///
    /// ```
    /// use clampwise_device::schema::{ContactSpec, ShapeSpec};
    /// use clampwise_device::build_core::contact_radii;
    ///
    /// let mut c = ContactSpec::of_shape(ShapeSpec::Annulus, 2);
    /// c.inner_radius_m = Some(0.06);
    /// c.outer_radius_m = Some(0.10);
    /// let (_, uniform_wear) = contact_radii(&c).unwrap();
    /// // [pub: Shigley ch. 16] r_e = (Ro + Ri)/2 under uniform wear.
    /// assert!((uniform_wear - 0.080).abs() < 1e-12);
    /// ```
    pub fn of_shape(shape: ShapeSpec, faces: u32) -> Self {
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
            cone_engagement: None,
            drum_shoes: None,
            block_shoes: None,
            band: None,
            gain_mu_max: None,
            radius_tolerance_ratio: 0.0,
        }
    }
}

/// `contact.button_model`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum ButtonModelSpec {
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
pub struct FrictionSpec {
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
pub struct ThermalSpec {
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
    pub lining: Option<LiningSpec>,
    /// Plausibility of a measured lining temperature (the trace's temperature column). When
    /// absent the core ignores measured temperatures and uses its model alone.
    pub measured: Option<MeasuredTemperatureSpec>,
}

/// `[thermal.lining]`.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct LiningSpec {
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
pub struct MeasuredTemperatureSpec {
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
pub struct WearSpec {
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
pub struct SensorSpec {
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
pub struct SensingSpec {
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
    pub stuck: Option<StuckCheckSpec>,
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
pub struct StuckCheckSpec {
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
pub struct ActuatorSpec {
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
pub struct AdaptationSpec {
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
pub struct LimitsSpec {
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
pub struct UncertaintySpec {
    /// `worst_case` (δμ + δF/F + δr) or `root_sum_square`.
    pub combination: CombinationSpec,
}

/// `uncertainty.combination`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(rename_all = "snake_case")]
pub enum CombinationSpec {
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
    pub columns: ColumnsSpec,
}

/// `[trace.columns]`: one entry per quantity, `{ column = "...", unit = "..." }`.
#[derive(Debug, Clone, Default, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct ColumnsSpec {
    /// Time stamps (canonical column `t_s`, s).
    pub time: Option<ColumnSpec>,
    /// Clamp force of channel 1 (canonical `force_1_N`, N; or ADC counts, kN, lbf, bar with `piston_area_m2` …).
    pub force_1: Option<ColumnSpec>,
    /// Clamp force of channel 2 (canonical `force_2_N`).
    pub force_2: Option<ColumnSpec>,
    /// Clamp force of channel 3 (canonical `force_3_N`).
    pub force_3: Option<ColumnSpec>,
    /// Clamp force of channel 4 (canonical `force_4_N`).
    pub force_4: Option<ColumnSpec>,
    /// Valid bit of channel 1, 0 or 1 (canonical `force_1_valid`; optional).
    pub force_1_valid: Option<ColumnSpec>,
    /// Valid bit of channel 2 (canonical `force_2_valid`; optional).
    pub force_2_valid: Option<ColumnSpec>,
    /// Valid bit of channel 3 (canonical `force_3_valid`; optional).
    pub force_3_valid: Option<ColumnSpec>,
    /// Valid bit of channel 4 (canonical `force_4_valid`; optional).
    pub force_4_valid: Option<ColumnSpec>,
    /// Input-member speed (canonical `omega_in_rad_s`, rad/s).
    pub omega_in: Option<ColumnSpec>,
    /// Output-member speed (canonical `omega_out_rad_s`, rad/s; required for a clutch).
    pub omega_out: Option<ColumnSpec>,
    /// Actuator command (canonical `command`; optional).
    pub command: Option<ColumnSpec>,
    /// Measured lining temperature (canonical `temp_C`, °C; optional).
    pub temperature: Option<ColumnSpec>,
    /// Ambient temperature (canonical `ambient_C`, °C; optional).
    pub ambient: Option<ColumnSpec>,
    /// Reference torque (canonical `torque_ref_Nm`, N·m; needed by compare and fit).
    pub torque_ref: Option<ColumnSpec>,
}

/// One column mapping.
#[derive(Debug, Clone, Deserialize)]
#[cfg_attr(any(test, feature = "schema"), derive(schemars::JsonSchema))]
#[serde(deny_unknown_fields)]
pub struct ColumnSpec {
    /// Header name in the CSV file.
    pub column: String,
    /// Unit of the values (see [`crate::column_units`]).
    pub unit: String,
    /// Piston area, m², for a pressure column that stands for clamp force.
    pub piston_area_m2: Option<f64>,
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

impl ColumnsSpec {
    /// The mapping given for a quantity name of [`CANONICAL`], if any.
    pub fn get(&self, name: &str) -> Option<&ColumnSpec> {
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
