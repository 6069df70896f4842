//! A whole core `DeviceConfig` as C source: one `const cw_device_desc` initializer of raw
//! bits for the C API (`capi/include/clampwise.h`), with the checksum the host computed, and
//! the two tables it points to as `static const` arrays at their exact sizes.
//!
//! `cw_device_init` builds the configuration from it through the core's own checked
//! constructors and compares the checksum, so a C firmware holds the very numbers the host
//! built, or refuses to start. Designated initializers name every field: the source does not
//! depend on the order of the header's struct members.
//!
//! ```
//! use clampwise_device::build_core::CoreDevice;
//! use clampwise_device::config::LoadedConfig;
//! use clampwise_device::emit::c_source;
//!
//! let cfg = LoadedConfig::from_str(clampwise_device::DEMO_CONFIG, "demo.toml").unwrap();
//! let core = CoreDevice::build(&cfg.config).unwrap();
//! let source = c_source(&core, "demo.toml").unwrap();
//! assert!(source.contains("const cw_device_desc clampwise_device_desc = {"));
//! assert!(source.contains(&format!(".checksum = UINT32_C(0x{:08x}),", core.device.checksum())));
//! ```

use std::fmt::Write as _;

use clampwise_core::config::{LeverAxis, Limits, Tolerances};
use clampwise_core::estimator::Combination;
use clampwise_core::sensor::{ChannelCalibration, Debounce, SensorConfig};
use clampwise_core::table::Table2;
use clampwise_core::thermal::ThermalRaw;
use clampwise_core::wear::WearRaw;
use fixed::types::extra::LeEqU32;

use super::device::friction_band;
use super::{EmitError, err};
use crate::build_core::{ChannelDevice, CoreDevice, Device, InitialState};
use clampwise_core::state_record::RECORD_LEN;

/// The C name of the emitted description.
pub const C_DESC_NAME: &str = "clampwise_device_desc";
/// Capacities of the C API's tables (`CW_RADIUS_FORCES_MAX` …, `CW_CHANNELS_MAX`): the same
/// as the host's, so every table the host builds fits.
const RADIUS_FORCES_MAX: usize = 8;
const RADIUS_SECOND_MAX: usize = 16;
const MU_TEMPERATURES_MAX: usize = 8;
const MU_SPEEDS_MAX: usize = 8;

/// A C expression of a signed 64-bit value (`INT64_MIN` has no literal).
fn i64_c(v: i64) -> String {
    if v == i64::MIN {
        "INT64_MIN".to_string()
    } else {
        format!("INT64_C({v})")
    }
}

/// A C expression of a signed 32-bit value.
fn i32_c(v: i32) -> String {
    if v == i32::MIN {
        "INT32_MIN".to_string()
    } else {
        v.to_string()
    }
}

fn list<T: Copy>(items: &[T], f: impl Fn(T) -> String) -> String {
    items.iter().map(|&v| f(v)).collect::<Vec<_>>().join(", ")
}

/// A table as C: its arrays at their exact sizes (`static const`, named after the
/// description and `part`), and the fields of its struct that give the lengths and point to
/// them. The grid is one array, row by row.
fn table<X: LeEqU32, Y: LeEqU32, Z: LeEqU32, const NX: usize, const NY: usize>(
    t: &Table2<X, Y, Z, NX, NY>,
    part: &str,
    names: [&str; 5],
    (cap_x, cap_y): (usize, usize),
) -> Result<(String, String), EmitError> {
    let [x_len, y_len, x_name, y_name, z_name] = names;
    let (xs, ys) = (t.x_breakpoints(), t.y_breakpoints());
    if xs.len() > cap_x || ys.len() > cap_y {
        return Err(err(
            "tables",
            format!(
                "{z_name}: {} x {} breakpoints exceed the C API's {cap_x} x {cap_y}",
                xs.len(),
                ys.len()
            ),
        ));
    }
    let array = |name: &str| format!("{C_DESC_NAME}_{part}_{name}");
    let mut arrays = String::new();
    for (name, values) in [
        (x_name, list(xs, |v| i32_c(v.to_bits()))),
        (y_name, list(ys, |v| i32_c(v.to_bits()))),
    ] {
        let _ = writeln!(
            arrays,
            "static const int32_t {}[] = {{ {values} }};",
            array(name)
        );
    }
    let _ = writeln!(arrays, "static const int32_t {}[] = {{", array(z_name));
    for row in t.rows() {
        let _ = writeln!(arrays, "    {},", list(row, |v| i32_c(v.to_bits())));
    }
    arrays.push_str("};\n");
    let mut fields = String::new();
    let _ = writeln!(fields, ".{x_len} = {}, .{y_len} = {},", xs.len(), ys.len());
    for name in [x_name, y_name, z_name] {
        let _ = writeln!(fields, ".{name} = {},", array(name));
    }
    Ok((arrays, fields))
}

fn block(name: &str, body: &str) -> String {
    let mut out = format!(".{name} = {{\n");
    for line in body.lines() {
        let _ = writeln!(out, "    {line}");
    }
    out.push_str("},");
    out
}

/// One `.name = value,` line of a C designated initializer.
fn field(out: &mut String, name: &str, value: impl std::fmt::Display) {
    let _ = writeln!(out, ".{name} = {value},");
}

fn flag(v: bool) -> u8 {
    u8::from(v)
}

fn thermal(t: &ThermalRaw) -> String {
    let [[k00, k01], [k10, k11]] = t.k_q62;
    let [g0, g1] = t.gamma_q62;
    let mut out = String::new();
    field(&mut out, "dt_q32", i64_c(t.dt.to_bits()));
    let _ = writeln!(
        out,
        ".k_q62 = {{ {{ {}, {} }}, {{ {}, {} }} }},",
        i64_c(k00),
        i64_c(k01),
        i64_c(k10),
        i64_c(k11)
    );
    let _ = writeln!(out, ".gamma_q62 = {{ {}, {} }},", i64_c(g0), i64_c(g1));
    field(&mut out, "two_node", flag(t.two_node));
    field(&mut out, "ambient_q16", i32_c(t.ambient.to_bits()));
    field(
        &mut out,
        "fade_warning_q16",
        i32_c(t.fade_warning.to_bits()),
    );
    field(
        &mut out,
        "over_temperature_q16",
        i32_c(t.over_temperature.to_bits()),
    );
    field(
        &mut out,
        "flag_hysteresis_q16",
        i32_c(t.flag_hysteresis.to_bits()),
    );
    field(&mut out, "has_measured", flag(t.measured.is_some()));
    if let Some(m) = &t.measured {
        field(&mut out, "measured_min_q16", i32_c(m.min.to_bits()));
        field(&mut out, "measured_max_q16", i32_c(m.max.to_bits()));
        field(&mut out, "measured_max_step_q16", i32_c(m.max_step));
    }
    out
}

fn u128_c(v: u128) -> String {
    // The low half by truncation, the high half by shift: exact.
    #[allow(clippy::cast_possible_truncation)]
    let (lo, hi) = (v as u64, (v >> 64) as u64);
    format!("{{ .lo = UINT64_C({lo}), .hi = UINT64_C({hi}) }}")
}

fn wear(w: &WearRaw) -> String {
    let mut out = String::new();
    let _ = writeln!(out, ".dt_q63 = UINT64_C({}),", w.dt_q63);
    field(&mut out, "e0_q48", u128_c(w.e0_q48));
    field(&mut out, "bedding_recip", u128_c(w.bedding_recip));
    let _ = writeln!(out, ".wear_mant = UINT64_C({}),", w.wear_mant);
    field(&mut out, "wear_shift", w.wear_shift);
    field(
        &mut out,
        "initial_thickness_q24",
        i32_c(w.initial_thickness.to_bits()),
    );
    field(
        &mut out,
        "minimum_thickness_q24",
        i32_c(w.minimum_thickness.to_bits()),
    );
    out
}

fn channel(c: &ChannelCalibration) -> String {
    let mut out = String::from("{\n");
    let _ = writeln!(out, "    .gain_q32 = {},", i64_c(c.gain.to_bits()));
    let _ = writeln!(out, "    .offset_q8 = {},", i32_c(c.offset.to_bits()));
    let _ = writeln!(
        out,
        "    .rail_low = {}, .rail_high = {}, .rail_margin = {},",
        i32_c(c.rails.low),
        i32_c(c.rails.high),
        c.rails.margin
    );
    let _ = writeln!(
        out,
        "    .has_temperature = {},",
        flag(c.temperature.is_some())
    );
    if let Some(t) = &c.temperature {
        let _ = writeln!(
            out,
            "    .tc_reference_q16 = {},",
            i32_c(t.reference.to_bits())
        );
        let _ = writeln!(out, "    .tc_min_q16 = {},", i32_c(t.min.to_bits()));
        let _ = writeln!(out, "    .tc_max_q16 = {},", i32_c(t.max.to_bits()));
        let _ = writeln!(
            out,
            "    .tc_zero_per_kelvin_q32 = {},",
            i64_c(t.zero_per_kelvin.to_bits())
        );
        let _ = writeln!(
            out,
            "    .tc_span_per_kelvin_q30 = {},",
            i32_c(t.span_per_kelvin.to_bits())
        );
    }
    out.push_str("},");
    out
}

fn debounce(name: &str, d: &Debounce) -> String {
    format!(
        ".debounce_{name} = {{ .raise_after = {}, .clear_after = {} }},\n",
        d.raise_after, d.clear_after
    )
}

fn sensor<const C: usize>(s: &SensorConfig<C>) -> String {
    let mut out = String::new();
    field(&mut out, "sample_rate_hz", s.sample_rate_hz());
    out.push_str(".channels = {\n");
    for c in s.channels() {
        for line in channel(c).lines() {
            let _ = writeln!(out, "    {line}");
        }
    }
    out.push_str("},\n");
    field(
        &mut out,
        "filter_alpha_q60",
        i64_c(s.filter().coefficient_bits()),
    );
    let l = s.limits();
    field(&mut out, "force_min_q8", i32_c(l.force_min.to_bits()));
    field(&mut out, "force_max_q8", i32_c(l.force_max.to_bits()));
    field(&mut out, "max_rate_q32", i64_c(l.max_rate.to_bits()));
    field(&mut out, "noise_band_q8", i32_c(l.noise_band.to_bits()));
    field(&mut out, "has_stuck", flag(l.stuck.is_some()));
    if let Some(st) = &l.stuck {
        field(&mut out, "stuck_time_q32", i64_c(st.time.to_bits()));
        field(
            &mut out,
            "stuck_command_span_q16",
            i32_c(st.command_span.to_bits()),
        );
    }
    let d = &l.debounce;
    for (name, deb) in [
        ("invalid", &d.invalid),
        ("rail", &d.rail),
        ("range", &d.range),
        ("rate", &d.rate),
        ("stuck", &d.stuck),
        ("disagreement", &d.disagreement),
    ] {
        out.push_str(&debounce(name, deb));
    }
    field(&mut out, "max_hold_samples", l.max_hold_samples);
    let v = s.voting();
    field(
        &mut out,
        "voting_tolerance_q8",
        i32_c(v.tolerance.to_bits()),
    );
    field(
        &mut out,
        "voting_channel_uncertainty_q8",
        i32_c(v.channel_uncertainty.to_bits()),
    );
    field(&mut out, "has_fallback", flag(s.fallback().is_some()));
    if let Some(a) = s.fallback() {
        field(&mut out, "fallback_gain_q32", i64_c(a.gain.to_bits()));
        field(&mut out, "fallback_offset_q8", i32_c(a.offset.to_bits()));
        field(
            &mut out,
            "fallback_hysteresis_q8",
            i32_c(a.hysteresis.to_bits()),
        );
        field(
            &mut out,
            "fallback_uncertainty_q8",
            i32_c(a.uncertainty.to_bits()),
        );
        field(
            &mut out,
            "fallback_response_time_q32",
            i64_c(a.response_time.to_bits()),
        );
    }
    out
}

/// The starting state record as C items: `clampwise_device_initial_record_len` is 0 for a new
/// lining at ambient temperature (`cw_estimator_init`), else `CW_RECORD_LEN` and the record
/// is for `cw_estimator_restore` (checked here to be one the core restores).
fn initial_record<const C: usize>(
    device: &Device<C>,
    initial: &InitialState,
) -> Result<String, EmitError> {
    let record = initial.record(device);
    if let Some(r) = &record {
        clampwise_core::estimator::Estimator::restore(device, r)
            .map_err(|e| EmitError::InitialRecord(e.to_string()))?;
    }
    let bytes = record.map_or([0; RECORD_LEN], |r| r);
    let len = if record.is_some() { RECORD_LEN } else { 0 };
    let mut out = String::from(
        "/* The saved state a replay starts from (thermal.initial_temperature_c,\n \
         * wear.initial_energy_j): length 0 for a new lining at ambient temperature. */\n",
    );
    let _ = writeln!(
        out,
        "const uint32_t {C_DESC_NAME}_initial_record_len = {len};"
    );
    let _ = writeln!(
        out,
        "const uint8_t {C_DESC_NAME}_initial_record[CW_RECORD_LEN] = {{"
    );
    for chunk in bytes.chunks(16) {
        let _ = writeln!(out, "    {},", list(chunk, |b| b.to_string()));
    }
    out.push_str("};\n");
    Ok(out)
}

/// The description's table arrays and the fields of its initializer.
fn body<const C: usize>(cfg: &Device<C>) -> Result<(String, String), EmitError> {
    let tables = cfg.tables();
    let fr = tables.friction();
    let (stick_speed, hysteresis) = friction_band(fr)?;
    let mut out = String::new();
    let _ = writeln!(out, ".channels = {C},");
    field(&mut out, "thermal_wear_every", cfg.thermal_wear_every());
    field(&mut out, "faces", cfg.faces());
    field(&mut out, "has_adapt", flag(cfg.adapt().is_some()));
    field(
        &mut out,
        "sample_period_q32",
        i64_c(cfg.sample_period().to_bits()),
    );
    let axis = match tables.axis() {
        LeverAxis::Bedding => "CW_LEVER_AXIS_BEDDING",
        LeverAxis::Mu => "CW_LEVER_AXIS_MU",
    };
    let mut radius = format!(".lever_axis = {axis},\n");
    let (radius_arrays, radius_fields) = table(
        tables.radius(),
        "radius",
        [
            "forces_len",
            "second_len",
            "force_q8",
            "second_q30",
            "radius_q24",
        ],
        (RADIUS_FORCES_MAX, RADIUS_SECOND_MAX),
    )?;
    radius.push_str(&radius_fields);
    let _ = writeln!(out, "{}", block("radius", &radius));
    let (mu_arrays, mu) = table(
        fr.mu_kinetic(),
        "mu",
        [
            "temperatures_len",
            "speeds_len",
            "temperature_q16",
            "speed_q16",
            "mu_q30",
        ],
        (MU_TEMPERATURES_MAX, MU_SPEEDS_MAX),
    )?;
    let mut friction = block("mu", &mu);
    friction.push('\n');
    for (name, bits) in [
        ("static_to_kinetic_q30", fr.static_to_kinetic().to_bits()),
        ("stick_speed_q16", stick_speed.to_bits()),
        ("stick_hysteresis_q16", hysteresis.to_bits()),
        ("transition_speed_q16", fr.transition_speed().to_bits()),
        ("viscous_drag_q16", fr.viscous_drag().to_bits()),
        ("no_load_drag_q12", fr.no_load_drag().to_bits()),
    ] {
        let _ = writeln!(friction, ".{name} = {},", i32_c(bits));
    }
    let _ = writeln!(out, "{}", block("friction", &friction));
    let _ = writeln!(
        out,
        "{}",
        block("thermal", &thermal(&cfg.thermal().to_raw()))
    );
    let _ = writeln!(out, "{}", block("wear", &wear(&cfg.wear().to_raw())));
    let _ = writeln!(out, "{}", block("sensor", &sensor(cfg.sensor())));
    if let Some(a) = cfg.adapt() {
        let a = a.to_raw();
        let mut adapt = String::new();
        for (name, bits) in [
            ("min_factor_q30", a.min_factor.to_bits()),
            ("max_factor_q30", a.max_factor.to_bits()),
            ("forgetting_q30", a.forgetting.to_bits()),
            ("torque_full_scale_q12", a.torque_full_scale.to_bits()),
            ("min_excitation_q30", a.min_excitation.to_bits()),
            ("initial_covariance_q30", a.initial_covariance.to_bits()),
            ("min_covariance_q30", a.min_covariance.to_bits()),
            ("max_covariance_q30", a.max_covariance.to_bits()),
        ] {
            let _ = writeln!(adapt, ".{name} = {},", i32_c(bits));
        }
        let _ = writeln!(out, "{}", block("adapt", &adapt));
    }
    let Limits {
        touch_force,
        adapt_min_force,
    } = *cfg.limits();
    let Tolerances {
        mu,
        radius,
        combination,
    } = *cfg.tolerances();
    field(&mut out, "touch_force_q8", i32_c(touch_force.to_bits()));
    field(
        &mut out,
        "adapt_min_force_q8",
        i32_c(adapt_min_force.to_bits()),
    );
    field(&mut out, "mu_tolerance_q30", i32_c(mu.to_bits()));
    field(&mut out, "radius_tolerance_q30", i32_c(radius.to_bits()));
    let combination = match combination {
        Combination::WorstCase => "CW_COMBINATION_WORST_CASE",
        Combination::RootSumSquare => "CW_COMBINATION_ROOT_SUM_SQUARE",
    };
    let _ = writeln!(out, ".combination = {combination},");
    let _ = writeln!(out, ".checksum = UINT32_C(0x{:08x}),", cfg.checksum());
    Ok((radius_arrays + "\n" + &mu_arrays, out))
}

/// The device as a C source file defining `const cw_device_desc clampwise_device_desc`
/// ([`C_DESC_NAME`]) and the state record a replay starts from
/// (`clampwise_device_desc_initial_record`, `_initial_record_len`). `origin` names the config file in the comment.
///
/// # Errors
/// [`EmitError::Rebuild`] when a table exceeds the C API's capacities or the friction band
/// cannot be written exactly; [`EmitError::InitialRecord`] for a starting record the core
/// would not restore.
pub fn c_source(core: &CoreDevice, origin: &str) -> Result<String, EmitError> {
    let ((arrays, body), record) = match &core.device {
        ChannelDevice::One(d) => (body(d)?, initial_record(d, &core.initial)?),
        ChannelDevice::Two(d) => (body(d)?, initial_record(d, &core.initial)?),
        ChannelDevice::Three(d) => (body(d)?, initial_record(d, &core.initial)?),
        ChannelDevice::Four(d) => (body(d)?, initial_record(d, &core.initial)?),
    };
    let origin = origin.replace(['\n', '\r', '*', '/'], " ");
    let mut out = format!(
        "/* Generated by clampwise-device (emit) from {origin}. Do not edit.\n \
         * Every value is raw fixed-point bits; cw_device_init rebuilds the configuration\n \
         * through the core's checked constructors and compares .checksum.\n \
         * Declare the items where they are used as:\n \
         *   extern const cw_device_desc {C_DESC_NAME};\n \
         *   extern const uint32_t {C_DESC_NAME}_initial_record_len;\n \
         *   extern const uint8_t {C_DESC_NAME}_initial_record[CW_RECORD_LEN]; */\n\n\
         #include \"clampwise.h\"\n\n\
         /* The tables at their exact sizes; the description points to them. */\n\
         {arrays}\n\
         const cw_device_desc {C_DESC_NAME} = {{\n"
    );
    for line in body.lines() {
        let _ = writeln!(out, "    {line}");
    }
    out.push_str("};\n\n");
    out.push_str(&record);
    Ok(out)
}

// The C API's capacities are the host's: every table the host builds fits.
const _: () = {
    use crate::build_core::{MU_POINTS, RADIUS_FORCE_POINTS, RADIUS_SECOND_POINTS};
    assert!(RADIUS_FORCE_POINTS == RADIUS_FORCES_MAX);
    assert!(RADIUS_SECOND_POINTS == RADIUS_SECOND_MAX);
    assert!(MU_POINTS == MU_TEMPERATURES_MAX && MU_POINTS == MU_SPEEDS_MAX);
};

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::config::LoadedConfig;

    fn core_of(src: &str) -> CoreDevice {
        let cfg = LoadedConfig::from_str(src, "t.toml").unwrap();
        CoreDevice::build(&cfg.config).unwrap()
    }

    #[test]
    fn extreme_values_are_valid_c() {
        // [calc] C has no literal for the most negative value of a signed type.
        assert_eq!(i64_c(i64::MIN), "INT64_MIN");
        assert_eq!(i64_c(-5), "INT64_C(-5)");
        assert_eq!(i32_c(i32::MIN), "INT32_MIN");
        assert_eq!(i32_c(-7), "-7");
        // [calc] 2¹²⁷ + 2⁶⁴ + 3: high half 2⁶³ + 1, low half 3.
        let v = (1u128 << 127) + (1u128 << 64) + 3;
        assert_eq!(
            u128_c(v),
            "{ .lo = UINT64_C(3), .hi = UINT64_C(9223372036854775809) }"
        );
    }

    #[test]
    fn the_demo_source_names_every_part_and_its_checksum() {
        let core = core_of(crate::DEMO_CONFIG);
        let src = c_source(&core, "demo.toml").unwrap();
        for needle in [
            ".radius = {",
            ".lever_axis = CW_LEVER_AXIS_BEDDING,",
            ".forces_len = 2, .second_len = 2,",
            "static const int32_t clampwise_device_desc_radius_force_q8[] = {",
            ".radius_q24 = clampwise_device_desc_radius_radius_q24,",
            ".mu_q30 = clampwise_device_desc_mu_mu_q30,",
            ".friction = {",
            ".mu = {",
            ".temperatures_len = 6, .speeds_len = 6,",
            ".thermal = {",
            ".wear = {",
            ".sensor = {",
            ".channels = {",
            ".debounce_disagreement = {",
            ".combination = CW_COMBINATION_",
            "const uint32_t clampwise_device_desc_initial_record_len = 0;",
        ] {
            assert!(src.contains(needle), "missing `{needle}`");
        }
        assert!(src.contains(&format!(
            ".checksum = UINT32_C(0x{:08x}),",
            core.device.checksum()
        )));
        for (open, close) in [('(', ')'), ('[', ']'), ('{', '}')] {
            assert_eq!(
                src.matches(open).count(),
                src.matches(close).count(),
                "{open}{close}"
            );
        }
    }

    #[test]
    fn a_worn_lining_starts_from_its_record() {
        let worn = crate::DEMO_CONFIG.replace("initial_energy_j = 0.0", "initial_energy_j = 2.0e6");
        let core = core_of(&worn);
        let ChannelDevice::Three(d) = &core.device else {
            unreachable!("the demo has three force channels")
        };
        let record = core.initial.record(d).unwrap();
        let src = c_source(&core, "worn.toml").unwrap();
        assert!(src.contains("_initial_record_len = 88;"));
        let bytes: Vec<String> = record.iter().map(u8::to_string).collect();
        let first_row = bytes[..16].join(", ");
        assert!(src.contains(&first_row), "{src}");
    }
}
