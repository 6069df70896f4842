//! The device description a C program passes to `cw_device_init`: every number of the core's
//! `DeviceParts` as raw fixed-point bits in plain `#[repr(C)]` structs.
//!
//! `clampwise tables --emit-c FILE.c` writes one as a `const` initializer, with the checksum
//! the host computed; nothing here is meant to be typed in by hand. Q formats are written
//! `Qm.n` (m integer bits after the sign, n fraction bits): a `_qN` field holds the value × 2ᴺ.
//! Tables are arrays of their exact sizes the description points to (`const` data in flash
//! beside it), with their lengths; each length must be within the API's capacity for that
//! axis (`CW_*_MAX`), which is what the device built in RAM holds.
#![allow(non_camel_case_types)]

/// Capacity of the friction-radius table's clamp-force axis.
pub const CW_RADIUS_FORCES_MAX: usize = 8;
/// Capacity of the friction-radius table's second axis (bedding, or μ for a contact whose
/// torque is not linear in μ).
pub const CW_RADIUS_SECOND_MAX: usize = 16;
/// Capacity of the μ table's lining-temperature axis.
pub const CW_MU_TEMPERATURES_MAX: usize = 8;
/// Capacity of the μ table's slip-speed axis.
pub const CW_MU_SPEEDS_MAX: usize = 8;
/// Most clamp-force channels a device has.
pub const CW_CHANNELS_MAX: usize = 4;

/// What the friction-radius table's second axis is.
#[repr(u8)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum cw_lever_axis {
    /// Bedding (0 new … 1 bedded): r_e of a flat or conical face; torque n·μ·F·r_e.
    CW_LEVER_AXIS_BEDDING = 0,
    /// μ: the equivalent lever arm g(μ)/μ of a drum, band or cone-engagement contact; torque
    /// μ·F·r(μ).
    CW_LEVER_AXIS_MU = 1,
}

/// The friction-radius table r(clamp force, second axis): the per-face lever arm. The arrays
/// are the caller's, at their exact sizes, and must stay readable during `cw_device_init`.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct cw_radius_table {
    /// What the second axis is: a `cw_lever_axis` value.
    pub lever_axis: u8,
    /// Clamp-force breakpoints, 1 … `CW_RADIUS_FORCES_MAX`.
    pub forces_len: u8,
    /// Second-axis breakpoints, 1 … `CW_RADIUS_SECOND_MAX` (over bedding the host's two, new
    /// and bedded, which is all a library of the bedding axis alone holds).
    pub second_len: u8,
    /// `forces_len` clamp-force breakpoints, N, Q23.8, strictly increasing.
    pub force_q8: *const i32,
    /// `second_len` second-axis breakpoints (bedding fraction 0 … 1, or μ), 1, Q1.30,
    /// strictly increasing.
    pub second_q30: *const i32,
    /// `forces_len` × `second_len` lever arms, row by row: the one at (force i, second-axis
    /// value j) is `radius_q24[i * second_len + j]`, m, Q7.24.
    pub radius_q24: *const i32,
}

impl Default for cw_radius_table {
    /// No table: lengths 0, NULL arrays (`cw_device_init` refuses it).
    fn default() -> Self {
        Self {
            lever_axis: 0,
            forces_len: 0,
            second_len: 0,
            force_q8: core::ptr::null(),
            second_q30: core::ptr::null(),
            radius_q24: core::ptr::null(),
        }
    }
}

/// The kinetic friction coefficient table μ(lining temperature, |slip speed|). The arrays are
/// the caller's, at their exact sizes, and must stay readable during `cw_device_init`.
#[repr(C)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct cw_mu_table {
    /// Temperature breakpoints, 1 … `CW_MU_TEMPERATURES_MAX`.
    pub temperatures_len: u8,
    /// Slip-speed breakpoints, 1 … `CW_MU_SPEEDS_MAX`.
    pub speeds_len: u8,
    /// `temperatures_len` lining-temperature breakpoints, °C, Q15.16, strictly increasing.
    pub temperature_q16: *const i32,
    /// `speeds_len` |slip-speed| breakpoints, rad/s, Q15.16, strictly increasing.
    pub speed_q16: *const i32,
    /// `temperatures_len` × `speeds_len` values of μ, row by row: the one at (temperature i,
    /// speed j) is `mu_q30[i * speeds_len + j]`, 1, Q1.30.
    pub mu_q30: *const i32,
}

impl Default for cw_mu_table {
    /// No table: lengths 0, NULL arrays (`cw_device_init` refuses it).
    fn default() -> Self {
        Self {
            temperatures_len: 0,
            speeds_len: 0,
            temperature_q16: core::ptr::null(),
            speed_q16: core::ptr::null(),
            mu_q30: core::ptr::null(),
        }
    }
}

/// The friction model: μ table, stick/slip band and drag.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_friction {
    /// Kinetic μ table.
    pub mu: cw_mu_table,
    /// Static over kinetic friction, 1, Q1.30.
    pub static_to_kinetic_q30: i32,
    /// Stick speed (centre of the stick/slip band), rad/s, Q15.16.
    pub stick_speed_q16: i32,
    /// Width of the stick/slip band, rad/s, Q15.16.
    pub stick_hysteresis_q16: i32,
    /// Speed over which static friction blends into kinetic, rad/s, Q15.16.
    pub transition_speed_q16: i32,
    /// Viscous drag torque per slip speed, N·m·s, Q15.16.
    pub viscous_drag_q16: i32,
    /// Torque of the released device (no-load drag), N·m, Q19.12.
    pub no_load_drag_q12: i32,
}

/// The thermal model's discretised matrices and flag thresholds (the core's `ThermalRaw`).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_thermal {
    /// Thermal step, s, Q31.32 (sample period × `thermal_wear_every`).
    pub dt_q32: i64,
    /// Per-sample decay `K = I − exp(A·dt)`, 1, Q1.62; state order `[lining, rotor]`.
    pub k_q62: [[i64; 2]; 2],
    /// Per-sample heating Γ, K/W, Q1.62; state order `[lining, rotor]`.
    pub gamma_q62: [i64; 2],
    /// 1: rotor and lining nodes; 0: one node.
    pub two_node: u8,
    /// 1: `measured_*` hold the plausibility limits of a measured temperature; 0: none.
    pub has_measured: u8,
    /// Ambient temperature, °C, Q15.16.
    pub ambient_q16: i32,
    /// Fade warning threshold, °C, Q15.16.
    pub fade_warning_q16: i32,
    /// Over-temperature threshold, °C, Q15.16.
    pub over_temperature_q16: i32,
    /// Hysteresis of both flags, K, Q15.16.
    pub flag_hysteresis_q16: i32,
    /// Lowest plausible measured temperature, °C, Q15.16.
    pub measured_min_q16: i32,
    /// Highest plausible measured temperature, °C, Q15.16.
    pub measured_max_q16: i32,
    /// Largest plausible change of the measured temperature in one sample, °C, Q15.16.
    pub measured_max_step_q16: i32,
}

/// An unsigned 128-bit number as two halves (C99 has no 128-bit integer).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_u128 {
    /// Bits 0 … 63.
    pub lo: u64,
    /// Bits 64 … 127.
    pub hi: u64,
}

impl cw_u128 {
    /// The number.
    pub const fn get(self) -> u128 {
        ((self.hi as u128) << 64) | self.lo as u128
    }

    /// The halves of `v`.
    #[allow(clippy::cast_possible_truncation)]
    pub const fn of(v: u128) -> Self {
        Self {
            // The low half by truncation, the high half by shift: exact.
            lo: v as u64,
            hi: (v >> 64) as u64,
        }
    }
}

/// The wear and bedding model (the core's `WearRaw`).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_wear {
    /// Sample period, s, unsigned Q0.63 (at most 1 s).
    pub dt_q63: u64,
    /// Bedding energy E₀, J, unsigned Q80.48.
    pub e0_q48: cw_u128,
    /// round(2⁷⁹ / E₀) with E₀ in J.
    pub bedding_recip: cw_u128,
    /// Thickness lost per energy `wear_mant · 2^−(wear_shift + 48)` m/J: the mantissa (0, or
    /// 2³¹ … 2³²).
    pub wear_mant: u64,
    /// The shift of that rate, 0 … 83.
    pub wear_shift: u32,
    /// Lining thickness when new, m, Q7.24.
    pub initial_thickness_q24: i32,
    /// Lining thickness at which it is worn out, m, Q7.24.
    pub minimum_thickness_q24: i32,
}

/// One clamp-force channel's calibration.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_channel {
    /// Gain, N per ADC count, Q31.32.
    pub gain_q32: i64,
    /// Offset, N, Q23.8.
    pub offset_q8: i32,
    /// Lowest count the ADC gives (its lower rail).
    pub rail_low: i32,
    /// Highest count the ADC gives (its upper rail).
    pub rail_high: i32,
    /// Counts within which a reading counts as on a rail.
    pub rail_margin: u32,
    /// 1: the `tc_*` fields compensate the gauge's temperature drift; 0: none.
    pub has_temperature: u8,
    /// Temperature at which gain and offset hold, °C, Q15.16.
    pub tc_reference_q16: i32,
    /// Lowest sensor temperature compensated, °C, Q15.16.
    pub tc_min_q16: i32,
    /// Highest sensor temperature compensated, °C, Q15.16.
    pub tc_max_q16: i32,
    /// Zero drift, N/K, Q31.32.
    pub tc_zero_per_kelvin_q32: i64,
    /// Span drift, 1/K, Q1.30.
    pub tc_span_per_kelvin_q30: i32,
}

/// Debounce of one diagnostic: samples of evidence to raise it and to clear it.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_debounce {
    /// Samples with the problem before it is raised.
    pub raise_after: u16,
    /// Samples without it before it clears.
    pub clear_after: u16,
}

/// Force-sensor conditioning: calibration, filter, diagnostics, voting and fallback.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_sensor {
    /// Sample rate, Hz.
    pub sample_rate_hz: u32,
    /// Calibration of each channel; the first `cw_device_desc::channels` are used.
    pub channels: [cw_channel; CW_CHANNELS_MAX],
    /// Low-pass filter coefficient α, 1, Q3.60.
    pub filter_alpha_q60: i64,
    /// Lowest plausible force, N, Q23.8.
    pub force_min_q8: i32,
    /// Highest plausible force, N, Q23.8.
    pub force_max_q8: i32,
    /// Largest plausible force rate, N/s, Q31.32.
    pub max_rate_q32: i64,
    /// Noise band of a channel, N, Q23.8.
    pub noise_band_q8: i32,
    /// 1: the stuck-channel check runs with `stuck_*`; 0: it does not.
    pub has_stuck: u8,
    /// Time without change before a channel counts as stuck, s, Q31.32.
    pub stuck_time_q32: i64,
    /// Command change that must move the force, command unit, Q15.16.
    pub stuck_command_span_q16: i32,
    /// Debounce of an invalid reading.
    pub debounce_invalid: cw_debounce,
    /// Debounce of a reading on a rail.
    pub debounce_rail: cw_debounce,
    /// Debounce of a force out of range.
    pub debounce_range: cw_debounce,
    /// Debounce of an implausible rate.
    pub debounce_rate: cw_debounce,
    /// Debounce of a stuck channel.
    pub debounce_stuck: cw_debounce,
    /// Debounce of channels that disagree.
    pub debounce_disagreement: cw_debounce,
    /// Samples a channel's last good value is held.
    pub max_hold_samples: u16,
    /// Largest difference of agreeing channels, N, Q23.8.
    pub voting_tolerance_q8: i32,
    /// Uncertainty of one channel, N, Q23.8.
    pub voting_channel_uncertainty_q8: i32,
    /// 1: the force falls back to the actuator command through `fallback_*`; 0: no fallback.
    pub has_fallback: u8,
    /// Force per command unit, N, Q31.32.
    pub fallback_gain_q32: i64,
    /// Force at zero command, N, Q23.8.
    pub fallback_offset_q8: i32,
    /// Hysteresis of the actuator, N, Q23.8.
    pub fallback_hysteresis_q8: i32,
    /// Uncertainty of the predicted force, N, Q23.8.
    pub fallback_uncertainty_q8: i32,
    /// Response time of the actuator, s, Q31.32.
    pub fallback_response_time_q32: i64,
}

/// Online μ correction (the core's `AdaptRaw`).
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_adapt {
    /// Lowest correction factor, 1, Q1.30.
    pub min_factor_q30: i32,
    /// Highest correction factor, 1, Q1.30.
    pub max_factor_q30: i32,
    /// Forgetting factor per update, 1, Q1.30.
    pub forgetting_q30: i32,
    /// Torque that scales the update, N·m, Q19.12.
    pub torque_full_scale_q12: i32,
    /// Least excitation for an update, 1, Q1.30.
    pub min_excitation_q30: i32,
    /// Covariance at start, 1, Q1.30.
    pub initial_covariance_q30: i32,
    /// Lowest covariance, 1, Q1.30.
    pub min_covariance_q30: i32,
    /// Highest covariance, 1, Q1.30.
    pub max_covariance_q30: i32,
}

/// How the μ and radius tolerances combine into the torque uncertainty.
#[repr(u8)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum cw_combination {
    /// The tolerances add (worst case).
    CW_COMBINATION_WORST_CASE = 0,
    /// Root of the sum of squares.
    CW_COMBINATION_ROOT_SUM_SQUARE = 1,
}

/// A whole device, as `clampwise tables --emit-c` writes it.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_device_desc {
    /// Clamp-force channels, 1 … `CW_CHANNELS_MAX`.
    pub channels: u8,
    /// Thermal and wear states advance every this many samples (1, 2, 4, 8, 16 or 32).
    pub thermal_wear_every: u8,
    /// Friction interfaces sharing the clamp force, 1 … 255.
    pub faces: u8,
    /// 1: `adapt` holds the online μ correction; 0: none.
    pub has_adapt: u8,
    /// Control-loop sample period, s, Q31.32.
    pub sample_period_q32: i64,
    /// Friction-radius table.
    pub radius: cw_radius_table,
    /// Friction model.
    pub friction: cw_friction,
    /// Thermal model.
    pub thermal: cw_thermal,
    /// Wear and bedding model.
    pub wear: cw_wear,
    /// Force-sensor conditioning.
    pub sensor: cw_sensor,
    /// Online μ correction (used when `has_adapt` is 1).
    pub adapt: cw_adapt,
    /// Clamp force from which the device counts as applied, N, Q23.8.
    pub touch_force_q8: i32,
    /// Least clamp force for a μ correction update, N, Q23.8.
    pub adapt_min_force_q8: i32,
    /// Relative tolerance of μ, 1, Q1.30.
    pub mu_tolerance_q30: i32,
    /// Relative tolerance of the friction radius, 1, Q1.30.
    pub radius_tolerance_q30: i32,
    /// How the tolerances combine: a `cw_combination` value.
    pub combination: u8,
    /// The core's checksum of this device (CRC-32/ISO-HDLC over every number), as the host
    /// computed it; `cw_device_init` recomputes it and refuses a device that differs.
    pub checksum: u32,
}
