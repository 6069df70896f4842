//! A whole core [`DeviceConfig`] as Rust source of `const` items.
//!
//! [`device_config_source`] writes the configuration as one `const` expression built from the
//! core's `const` constructors ([`Table2::from_bits`], [`FrictionConfig::from_bits`],
//! [`ThermalConfig::from_bits`], [`WearConfig::from_bits`], [`SensorConfig::new`],
//! [`AdaptConfig::from_bits`], [`Tables::new`], [`DeviceConfig::from_parts`]) over raw integer bits, each wrapped in
//! `match … { Ok(c) => c, Err(_) => panic!(…) }`: the compiler evaluates it, the result sits in
//! flash, and a configuration the core rejects fails the build with the part named. Raw bits
//! mean no float is parsed or rounded on the way: the compiled constant equals the
//! configuration the host built, bit for bit (`PartialEq`); the emitter checks this itself by
//! rebuilding the configuration from the values it is about to write, and the firmware example
//! checks it again on the compiled constant.
//!
//! The generated items (all paths fully qualified, so the file can be `include!`d anywhere):
//!
//! | item | what |
//! |---|---|
//! | `pub const DEVICE_CHANNELS: usize` | number of force channels `C` |
//! | `pub const DEVICE_RADIUS_FORCES`, `DEVICE_RADIUS_BEDDINGS: usize` | radius-table sizes `NF`, `NB` |
//! | `pub const DEVICE_MU_TEMPERATURES`, `DEVICE_MU_SPEEDS: usize` | μ-table sizes `NT`, `NV` |
//! | `pub type DeviceTables` | `Tables<NF, NB, NT, NV>` with these sizes |
//! | `pub type Device` | `DeviceConfig<DeviceTables, C>` |
//! | `pub const DEVICE: Device` | the configuration |
//! | `pub const DEVICE_CHECKSUM: u32` | [`DeviceConfig::checksum`] computed on the host |
//!
//! A firmware recomputes `DEVICE.checksum()` at start-up and compares it with
//! `DEVICE_CHECKSUM`: equal digests mean the numbers in flash are the ones the host built.
//!
//! ```
//! use clampwise_core::prelude::*;
//! use clampwise_device::emit::device_config_source;
//!
//! // A fictional test-rig brake (demo numbers).
//! let contact = Contact::new(Annulus::new(0.060, 0.100)?, 2, None)?;
//! let device = DeviceConfig::new(&DeviceParams {
//!     sample_period_s: 1e-3, thermal_wear_every: 1, faces: contact.faces(),
//!     tables: Tables::<2, 2, 1, 2>::from_contact(
//!         &contact, &[0.0, 200e3], &[0.0, 1.0], &[20.0], &[0.0, 100.0], &[[0.40, 0.38]],
//!         &FrictionParams {
//!             static_to_kinetic: 1.2, stick_speed: 0.05, stick_hysteresis: 0.04,
//!             transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0,
//!         },
//!     )?,
//!     thermal: ThermalParams {
//!         rotor_mass: 8.0, rotor_specific_heat: 460.0, rotor_share: 0.9,
//!         cooling: Cooling::TimeConstant(600.0), ambient: 20.0, lining: None,
//!         fade_warning: 350.0, over_temperature: 500.0, flag_hysteresis: 10.0, measured: None,
//!     },
//!     wear: WearParams {
//!         bedding_energy: 5e6, specific_wear_rate: 4e-14, lining_area: 8e-3,
//!         initial_thickness: 0.010, minimum_thickness: 0.002,
//!     },
//!     sensor: SensorParams {
//!         channels: [ChannelCalibration::linear(0.01, 0.0, AdcRails::signed_bits(24, 8))?],
//!         filter_cutoff_hz: 200.0,
//!         limits: DiagnosticLimits::new(-2000.0, 60_000.0, 5e6, 20.0)?,
//!         voting: VotingLimits::new(500.0, 100.0)?,
//!         fallback: None,
//!     },
//!     adapt: None,
//!     limits: Limits::new(100.0, 500.0)?,
//!     tolerances: Tolerances::worst_case(0.2, 0.01)?,
//! })?;
//!
//! let source = device_config_source(&device, "test-rig.toml")?;
//! assert!(source.contains("pub const DEVICE: Device = {"));
//! assert!(source.contains("ThermalConfig::from_bits(ThermalRaw {"));
//! assert!(source.contains(&format!("pub const DEVICE_CHECKSUM: u32 = 0x{:08x};", device.checksum())));
//! # Ok::<(), Box<dyn std::error::Error>>(())
//! ```

use std::fmt::{self, Write as _};

use clampwise_core::adapt::{AdaptConfig, AdaptRaw};
use clampwise_core::config::{
    AxisKind, DeviceConfig, DeviceParts, LeverAxis, Limits, Tables, Tolerances,
};
use clampwise_core::estimator::Combination;
use clampwise_core::friction::FrictionConfig;
use clampwise_core::sensor::{
    ActuatorTransfer, ChannelCalibration, Debounce, DiagnosticLimits, LowPass, SensorConfig,
};
use clampwise_core::table::Table2;
use clampwise_core::thermal::{ThermalConfig, ThermalRaw};
use clampwise_core::units::RadPerSec;
use clampwise_core::wear::{WearConfig, WearRaw};
use fixed::FixedI32;
use fixed::types::extra::LeEqU32;

use super::{EmitError, err};

/// The stick speed and hysteresis that give back `f`'s slip and stick thresholds.
///
/// The configuration keeps only the two band edges (`v_s ± ⌈h/2⌉`, the lower one at least one
/// LSB), so `h` is found again as `2·⌈h/2⌉` or one less; the candidate is accepted only when
/// [`FrictionConfig::from_bits`] rebuilds `f` exactly.
pub(super) fn friction_band<const NT: usize, const NV: usize>(
    f: &FrictionConfig<NT, NV>,
) -> Result<(RadPerSec, RadPerSec), EmitError> {
    let v_s = f.stick_speed();
    let half = f
        .slip_threshold()
        .to_bits()
        .checked_sub(v_s.to_bits())
        .ok_or_else(|| err("friction", "slip threshold below the stick speed"))?;
    for h in [
        half.saturating_mul(2),
        half.saturating_mul(2).saturating_sub(1),
    ] {
        let h = RadPerSec::from_bits(h);
        let rebuilt = FrictionConfig::from_bits(
            *f.mu_kinetic(),
            f.static_to_kinetic(),
            v_s,
            h,
            f.transition_speed(),
            f.viscous_drag(),
            f.no_load_drag(),
        );
        if rebuilt.as_ref() == Ok(f) {
            return Ok((v_s, h));
        }
    }
    Err(err(
        "friction",
        "no stick speed and hysteresis rebuild the configured stick/slip band",
    ))
}

/// Rebuild `cfg` through the same `const` constructors the emitted source calls, from the
/// same values; the emitter writes nothing unless this gives `cfg` back exactly.
fn rebuild<
    const C: usize,
    const NF: usize,
    const NB: usize,
    const NT: usize,
    const NV: usize,
    K: AxisKind,
>(
    cfg: &DeviceConfig<Tables<NF, NB, NT, NV, K>, C>,
    band: (RadPerSec, RadPerSec),
) -> Result<DeviceConfig<Tables<NF, NB, NT, NV, K>, C>, EmitError> {
    fn table<X: LeEqU32, Y: LeEqU32, Z: LeEqU32, const NX: usize, const NY: usize>(
        part: &'static str,
        t: &Table2<X, Y, Z, NX, NY>,
    ) -> Result<Table2<X, Y, Z, NX, NY>, EmitError> {
        let rows: Vec<&[FixedI32<Z>]> = t.rows().collect();
        Table2::from_bit_slices(t.x_breakpoints(), t.y_breakpoints(), &rows)
            .map_err(|e| err(part, e.to_string()))
    }
    let fr = cfg.tables().friction();
    let friction = FrictionConfig::from_bits(
        table("friction.mu", fr.mu_kinetic())?,
        fr.static_to_kinetic(),
        band.0,
        band.1,
        fr.transition_speed(),
        fr.viscous_drag(),
        fr.no_load_drag(),
    )
    .map_err(|e| err("friction", e.to_string()))?;
    let s = cfg.sensor();
    let filter = LowPass::from_bits(s.filter().coefficient_bits(), s.filter().sample_rate_hz())
        .map_err(|e| err("sensor.filter", e.to_string()))?;
    let sensor = SensorConfig::new(
        s.sample_rate_hz(),
        *s.channels(),
        filter,
        *s.limits(),
        *s.voting(),
        s.fallback().copied(),
    )
    .map_err(|e| err("sensor", e.to_string()))?;
    let adapt = match cfg.adapt() {
        None => None,
        Some(a) => {
            Some(AdaptConfig::from_bits(a.to_raw()).map_err(|e| err("adaptation", e.to_string()))?)
        }
    };
    DeviceConfig::from_parts(DeviceParts {
        sample_period: cfg.sample_period(),
        thermal_wear_every: cfg.thermal_wear_every(),
        faces: cfg.faces(),
        tables: Tables::try_with_axis(
            table("radius", cfg.tables().radius())?,
            friction,
            cfg.tables().axis(),
        )
        .ok_or_else(|| err("radius", "the table type fixes another axis"))?,
        thermal: ThermalConfig::from_bits(cfg.thermal().to_raw())
            .map_err(|e| err("thermal", e.to_string()))?,
        wear: WearConfig::from_bits(cfg.wear().to_raw()).map_err(|e| err("wear", e.to_string()))?,
        sensor,
        adapt,
        limits: *cfg.limits(),
        tolerances: *cfg.tolerances(),
    })
    .map_err(|e| err("device", e.to_string()))
}

/// `match <call> { Ok(v) => v, Err(_) => panic!(..) }`: a rejected part fails the build.
fn checked(call: &str, what: &str) -> String {
    format!(
        "match {call} {{\n    Ok(v) => v,\n    Err(_) => panic!(\"{what} rejected by the core\"),\n}}"
    )
}

/// Indent every line after the first by `levels` × 4 spaces (for nesting a multi-line
/// expression after a `name: ` prefix).
fn nest(text: &str, levels: usize) -> String {
    let pad = "    ".repeat(levels);
    text.lines()
        .enumerate()
        .map(|(i, l)| {
            if i == 0 || l.is_empty() {
                l.to_string()
            } else {
                format!("{pad}{l}")
            }
        })
        .collect::<Vec<_>>()
        .join("\n")
}

/// `Type::from_bits(b)` for each value, comma separated.
fn bits_list<T>(ty: &str, items: impl IntoIterator<Item = T>, bits: impl Fn(T) -> i64) -> String {
    items
        .into_iter()
        .map(|v| format!("{ty}::from_bits({})", bits(v)))
        .collect::<Vec<_>>()
        .join(", ")
}

/// A `Table2::from_bits(..)` call with the element types named.
fn table<X: LeEqU32, Y: LeEqU32, Z: LeEqU32, const NX: usize, const NY: usize>(
    what: &str,
    (tx, ty, tz): (&str, &str, &str),
    t: &Table2<X, Y, Z, NX, NY>,
) -> String {
    let mut call = String::from("Table2::from_bits(\n");
    let _ = writeln!(
        call,
        "    [{}],",
        bits_list(tx, t.x_breakpoints(), |v| i64::from(v.to_bits()))
    );
    let _ = writeln!(
        call,
        "    [{}],",
        bits_list(ty, t.y_breakpoints(), |v| i64::from(v.to_bits()))
    );
    call.push_str("    [\n");
    for row in t.rows() {
        let _ = writeln!(
            call,
            "        [{}],",
            bits_list(tz, row, |v| i64::from(v.to_bits()))
        );
    }
    call.push_str("    ],\n)");
    checked(&call, what)
}

/// A struct literal from `(field, value)` pairs, one per line.
fn literal(name: &str, fields: &[(&str, String)]) -> String {
    let mut out = format!("{name} {{\n");
    for (field, value) in fields {
        let _ = writeln!(out, "    {field}: {},", nest(value, 1));
    }
    out.push('}');
    out
}

fn option(v: Option<String>) -> String {
    v.map_or_else(|| "None".to_string(), |v| format!("Some({v})"))
}

fn bits(ty: &str, b: impl fmt::Display) -> String {
    format!("{ty}::from_bits({b})")
}

fn debounce(d: &Debounce) -> String {
    format!(
        "Debounce {{ raise_after: {}, clear_after: {} }}",
        d.raise_after, d.clear_after
    )
}

fn channel(c: &ChannelCalibration) -> String {
    let temperature = c.temperature.as_ref().map(|t| {
        literal(
            "TemperatureCompensation",
            &[
                ("reference", bits("Celsius", t.reference.to_bits())),
                ("min", bits("Celsius", t.min.to_bits())),
                ("max", bits("Celsius", t.max.to_bits())),
                (
                    "zero_per_kelvin",
                    bits("NewtonsPerKelvin", t.zero_per_kelvin.to_bits()),
                ),
                (
                    "span_per_kelvin",
                    bits("PerKelvin", t.span_per_kelvin.to_bits()),
                ),
            ],
        )
    });
    literal(
        "ChannelCalibration",
        &[
            ("gain", bits("NewtonsPerCount", c.gain.to_bits())),
            ("offset", bits("Newtons", c.offset.to_bits())),
            (
                "rails",
                format!(
                    "AdcRails {{ low: {}, high: {}, margin: {} }}",
                    c.rails.low, c.rails.high, c.rails.margin
                ),
            ),
            ("temperature", option(temperature)),
        ],
    )
}

fn limits(l: &DiagnosticLimits) -> String {
    let stuck = l.stuck.as_ref().map(|s| {
        format!(
            "StuckCheck {{ time: {}, command_span: {} }}",
            bits("Seconds", s.time.to_bits()),
            bits("ActuatorCommand", s.command_span.to_bits())
        )
    });
    let d = &l.debounce;
    let debounce_set = literal(
        "DebounceSet",
        &[
            ("invalid", debounce(&d.invalid)),
            ("rail", debounce(&d.rail)),
            ("range", debounce(&d.range)),
            ("rate", debounce(&d.rate)),
            ("stuck", debounce(&d.stuck)),
            ("disagreement", debounce(&d.disagreement)),
        ],
    );
    literal(
        "DiagnosticLimits",
        &[
            ("force_min", bits("Newtons", l.force_min.to_bits())),
            ("force_max", bits("Newtons", l.force_max.to_bits())),
            ("max_rate", bits("NewtonsPerSecond", l.max_rate.to_bits())),
            ("noise_band", bits("Newtons", l.noise_band.to_bits())),
            ("stuck", option(stuck)),
            ("debounce", debounce_set),
            ("max_hold_samples", l.max_hold_samples.to_string()),
        ],
    )
}

fn fallback(a: Option<&ActuatorTransfer>) -> String {
    option(a.map(|a| {
        literal(
            "ActuatorTransfer",
            &[
                ("gain", bits("NewtonsPerCommand", a.gain.to_bits())),
                ("offset", bits("Newtons", a.offset.to_bits())),
                ("hysteresis", bits("Newtons", a.hysteresis.to_bits())),
                ("uncertainty", bits("Newtons", a.uncertainty.to_bits())),
                ("response_time", bits("Seconds", a.response_time.to_bits())),
            ],
        )
    }))
}

fn sensor<const C: usize>(s: &SensorConfig<C>) -> String {
    let mut channels = String::from("[\n");
    for c in s.channels() {
        let _ = writeln!(channels, "    {},", nest(&channel(c), 1));
    }
    channels.push(']');
    let filter = checked(
        &format!(
            "LowPass::from_bits({}, {})",
            s.filter().coefficient_bits(),
            s.filter().sample_rate_hz()
        ),
        "sensor filter",
    );
    let voting = format!(
        "VotingLimits {{ tolerance: {}, channel_uncertainty: {} }}",
        bits("Newtons", s.voting().tolerance.to_bits()),
        bits("Newtons", s.voting().channel_uncertainty.to_bits())
    );
    let args = [
        s.sample_rate_hz().to_string(),
        channels,
        filter,
        limits(s.limits()),
        voting,
        fallback(s.fallback()),
    ];
    let mut call = String::from("SensorConfig::new(\n");
    for a in &args {
        let _ = writeln!(call, "    {},", nest(a, 1));
    }
    call.push(')');
    checked(&call, "sensor config")
}

fn friction<const NT: usize, const NV: usize>(
    f: &FrictionConfig<NT, NV>,
    (stick_speed, hysteresis): (RadPerSec, RadPerSec),
) -> String {
    let args = [
        table(
            "friction mu table",
            ("Celsius", "RadPerSec", "Ratio"),
            f.mu_kinetic(),
        ),
        bits("Ratio", f.static_to_kinetic().to_bits()),
        bits("RadPerSec", stick_speed.to_bits()),
        bits("RadPerSec", hysteresis.to_bits()),
        bits("RadPerSec", f.transition_speed().to_bits()),
        bits("ViscousDrag", f.viscous_drag().to_bits()),
        bits("NewtonMetres", f.no_load_drag().to_bits()),
    ];
    let mut call = String::from("FrictionConfig::from_bits(\n");
    for a in &args {
        let _ = writeln!(call, "    {},", nest(a, 1));
    }
    call.push(')');
    checked(&call, "friction config")
}

fn thermal(t: &ThermalRaw) -> String {
    let [[k00, k01], [k10, k11]] = t.k_q62;
    let [g0, g1] = t.gamma_q62;
    let measured = t.measured.as_ref().map(|m| {
        format!(
            "Plausibility {{ min: {}, max: {}, max_step: {} }}",
            bits("Celsius", m.min.to_bits()),
            bits("Celsius", m.max.to_bits()),
            m.max_step
        )
    });
    let raw = literal(
        "ThermalRaw",
        &[
            ("dt", bits("Seconds", t.dt.to_bits())),
            ("k_q62", format!("[[{k00}, {k01}], [{k10}, {k11}]]")),
            ("gamma_q62", format!("[{g0}, {g1}]")),
            ("two_node", t.two_node.to_string()),
            ("ambient", bits("Celsius", t.ambient.to_bits())),
            ("fade_warning", bits("Celsius", t.fade_warning.to_bits())),
            (
                "over_temperature",
                bits("Celsius", t.over_temperature.to_bits()),
            ),
            (
                "flag_hysteresis",
                bits("Celsius", t.flag_hysteresis.to_bits()),
            ),
            ("measured", option(measured)),
        ],
    );
    checked(
        &format!("ThermalConfig::from_bits({raw})"),
        "thermal config",
    )
}

fn wear(w: &WearRaw) -> String {
    let raw = literal(
        "WearRaw",
        &[
            ("dt_q63", w.dt_q63.to_string()),
            ("e0_q48", w.e0_q48.to_string()),
            ("bedding_recip", w.bedding_recip.to_string()),
            ("wear_mant", w.wear_mant.to_string()),
            ("wear_shift", w.wear_shift.to_string()),
            (
                "initial_thickness",
                bits("Metres", w.initial_thickness.to_bits()),
            ),
            (
                "minimum_thickness",
                bits("Metres", w.minimum_thickness.to_bits()),
            ),
        ],
    );
    checked(&format!("WearConfig::from_bits({raw})"), "wear config")
}

fn adapt(a: Option<&AdaptRaw>) -> String {
    option(a.map(|a| {
        let raw = literal(
            "AdaptRaw",
            &[
                ("min_factor", bits("Ratio", a.min_factor.to_bits())),
                ("max_factor", bits("Ratio", a.max_factor.to_bits())),
                ("forgetting", bits("Ratio", a.forgetting.to_bits())),
                (
                    "torque_full_scale",
                    bits("NewtonMetres", a.torque_full_scale.to_bits()),
                ),
                ("min_excitation", bits("Ratio", a.min_excitation.to_bits())),
                (
                    "initial_covariance",
                    bits("Ratio", a.initial_covariance.to_bits()),
                ),
                ("min_covariance", bits("Ratio", a.min_covariance.to_bits())),
                ("max_covariance", bits("Ratio", a.max_covariance.to_bits())),
            ],
        );
        checked(
            &format!("AdaptConfig::from_bits({raw})"),
            "adaptation config",
        )
    }))
}

/// The imports of the generated `const` block.
const USES: &str = "\
use ::clampwise_core::adapt::{AdaptConfig, AdaptRaw};
use ::clampwise_core::config::{DeviceConfig, DeviceParts, Limits, Tables, Tolerances};
use ::clampwise_core::estimator::Combination;
use ::clampwise_core::friction::{FrictionConfig, ViscousDrag};
use ::clampwise_core::sensor::{
    ActuatorCommand, ActuatorTransfer, AdcRails, ChannelCalibration, Debounce, DebounceSet,
    DiagnosticLimits, LowPass, NewtonsPerCommand, NewtonsPerCount, NewtonsPerKelvin,
    NewtonsPerSecond, PerKelvin, SensorConfig, StuckCheck, TemperatureCompensation, VotingLimits,
};
use ::clampwise_core::table::Table2;
use ::clampwise_core::thermal::{Plausibility, ThermalConfig, ThermalRaw};
use ::clampwise_core::units::{
    Celsius, Metres, NewtonMetres, Newtons, RadPerSec, Ratio, Seconds,
};
use ::clampwise_core::wear::{WearConfig, WearRaw};
";

/// The `DeviceParts { .. }` literal of `cfg`, every value as raw bits.
fn parts_literal<
    const C: usize,
    const NF: usize,
    const NB: usize,
    const NT: usize,
    const NV: usize,
    K: AxisKind,
>(
    cfg: &DeviceConfig<Tables<NF, NB, NT, NV, K>, C>,
    band: (RadPerSec, RadPerSec),
) -> String {
    let Limits {
        touch_force,
        adapt_min_force,
    } = *cfg.limits();
    let Tolerances {
        mu,
        radius,
        combination,
    } = *cfg.tolerances();
    let combination = match combination {
        Combination::WorstCase => "Combination::WorstCase",
        Combination::RootSumSquare => "Combination::RootSumSquare",
    };
    literal(
        "DeviceParts",
        &[
            (
                "sample_period",
                bits("Seconds", cfg.sample_period().to_bits()),
            ),
            ("thermal_wear_every", cfg.thermal_wear_every().to_string()),
            ("faces", cfg.faces().to_string()),
            (
                "tables",
                format!(
                    "Tables::{}(\n    {},\n    {},\n)",
                    match cfg.tables().axis() {
                        LeverAxis::Bedding => "new",
                        LeverAxis::Mu => "over_mu",
                    },
                    nest(
                        &table(
                            "radius table",
                            ("Newtons", "Ratio", "Metres"),
                            cfg.tables().radius(),
                        ),
                        1
                    ),
                    nest(&friction(cfg.tables().friction(), band), 1)
                ),
            ),
            ("thermal", thermal(&cfg.thermal().to_raw())),
            ("wear", wear(&cfg.wear().to_raw())),
            ("sensor", sensor(cfg.sensor())),
            (
                "adapt",
                adapt(cfg.adapt().map(AdaptConfig::to_raw).as_ref()),
            ),
            (
                "limits",
                format!(
                    "Limits {{ touch_force: {}, adapt_min_force: {} }}",
                    bits("Newtons", touch_force.to_bits()),
                    bits("Newtons", adapt_min_force.to_bits())
                ),
            ),
            (
                "tolerances",
                format!(
                    "Tolerances {{ mu: {}, radius: {}, combination: {combination} }}",
                    bits("Ratio", mu.to_bits()),
                    bits("Ratio", radius.to_bits())
                ),
            ),
        ],
    )
}

/// The whole configuration as Rust source of `const` items (the items are listed in the
/// [module docs](self)). `origin` names where the configuration came from, for the comments.
///
/// # Errors
/// [`EmitError`] when the configuration cannot be rebuilt exactly from the values the source
/// would hold: the emitter then writes nothing rather than a constant that differs.
pub fn device_config_source<
    const C: usize,
    const NF: usize,
    const NB: usize,
    const NT: usize,
    const NV: usize,
    K: AxisKind,
>(
    cfg: &DeviceConfig<Tables<NF, NB, NT, NV, K>, C>,
    origin: &str,
) -> Result<String, EmitError> {
    let band = friction_band(cfg.tables().friction())?;
    if rebuild(cfg, band)? != *cfg {
        return Err(err(
            "device",
            "the configuration rebuilt from its raw values differs from the original",
        ));
    }
    let parts = parts_literal(cfg, band);
    let device = checked(
        &format!("DeviceConfig::from_parts({parts})"),
        "device config",
    );

    let origin = origin.replace(['\n', '\r'], " ");
    let checksum = cfg.checksum();
    // The exact sizes: the tables may sit in larger capacities on the host.
    let (radius, mu) = (cfg.tables().radius(), cfg.tables().friction().mu_kinetic());
    let (nf, nb) = (radius.x_breakpoints().len(), radius.y_breakpoints().len());
    let (nt, nv) = (mu.x_breakpoints().len(), mu.y_breakpoints().len());
    let marker = match cfg.tables().axis() {
        LeverAxis::Bedding => "ByBedding",
        LeverAxis::Mu => "ByMu",
    };
    let mut out = String::new();
    let _ = writeln!(
        out,
        "// Generated by clampwise-device (emit) from {origin}. Do not edit.\n\
         // Every value is raw fixed-point bits; the core's const constructors check them at\n\
         // compile time, so a configuration the core rejects fails the build.\n"
    );
    let _ = writeln!(
        out,
        "/// Number of clamp-force channels.\n\
         pub const DEVICE_CHANNELS: usize = {C};\n\
         /// Force breakpoints of the friction-radius table.\n\
         pub const DEVICE_RADIUS_FORCES: usize = {nf};\n\
         /// Second-axis breakpoints of the friction-radius table (bedding, or μ for a drum or band).\n\
         pub const DEVICE_RADIUS_BEDDINGS: usize = {nb};\n\
         /// Temperature breakpoints of the μ table.\n\
         pub const DEVICE_MU_TEMPERATURES: usize = {nt};\n\
         /// Slip-speed breakpoints of the μ table.\n\
         pub const DEVICE_MU_SPEEDS: usize = {nv};\n\
         /// The device's tables, at their sizes.\n\
         pub type DeviceTables = ::clampwise_core::config::Tables<\n    \
         DEVICE_RADIUS_FORCES,\n    \
         DEVICE_RADIUS_BEDDINGS,\n    \
         DEVICE_MU_TEMPERATURES,\n    \
         DEVICE_MU_SPEEDS,\n    \
         ::clampwise_core::config::{marker},\n\
         >;\n\
         /// The device configuration's type: its tables and its channels.\n\
         pub type Device = ::clampwise_core::config::DeviceConfig<DeviceTables, DEVICE_CHANNELS>;\n\
         /// `DeviceConfig::checksum` of [`DEVICE`], computed on the host from {origin}.\n\
         pub const DEVICE_CHECKSUM: u32 = 0x{checksum:08x};\n\
         /// The device configuration ({origin}), evaluated at compile time.\n\
         #[allow(clippy::unreadable_literal, unused_imports)]\n\
         pub const DEVICE: Device = {{"
    );
    for line in USES.lines() {
        let _ = writeln!(out, "    {line}");
    }
    let _ = writeln!(out, "    {}", nest(&device, 1));
    out.push_str("};\n");
    Ok(out)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use clampwise_core::friction::{FrictionParams, MuTable};
    use clampwise_core::geometry::{Annulus, Contact, Shape, build_radius_table};
    use clampwise_core::sensor::{
        ActuatorCommand, AdcRails, DebounceSet, NewtonsPerCommand, NewtonsPerCount,
        NewtonsPerKelvin, NewtonsPerSecond, PerKelvin, StuckCheck, TemperatureCompensation,
        VotingLimits,
    };
    use clampwise_core::thermal::{Cooling, LiningNode, MeasuredPlausibility, ThermalParams};
    use clampwise_core::units::{Celsius, Metres, NewtonMetres, Newtons, Ratio, Seconds};
    use clampwise_core::wear::WearParams;

    type Full = DeviceConfig<Tables<2, 2, 3, 3>, 2>;

    /// A test device (invented numbers) with every optional part present: two-node thermal
    /// model with a measured temperature, temperature-compensated channels, stuck check,
    /// actuator fallback, adaptation, drag.
    fn parts(adapt: bool) -> DeviceParts<Tables<2, 2, 3, 3>, 2> {
        let contact =
            Contact::new(Shape::Annulus(Annulus::new(0.060, 0.100).unwrap()), 2, None).unwrap();
        let mu = MuTable::new(
            &[0.0, 200.0, 400.0],
            &[0.0, 50.0, 200.0],
            &[[0.40, 0.39, 0.37], [0.38, 0.37, 0.35], [0.30, 0.29, 0.27]],
        )
        .unwrap();
        let friction = FrictionConfig::new(
            mu,
            &FrictionParams {
                static_to_kinetic: 1.2,
                stick_speed: 0.05,
                stick_hysteresis: 0.04,
                transition_speed: 0.5,
                viscous_drag: 0.01,
                no_load_drag: 0.5,
            },
        )
        .unwrap();
        let thermal = ThermalConfig::new(
            &ThermalParams {
                rotor_mass: 8.0,
                rotor_specific_heat: 460.0,
                rotor_share: 0.9,
                cooling: Cooling::TimeConstant(613.0),
                ambient: 20.0,
                lining: Some(LiningNode {
                    mass: 0.4,
                    specific_heat: 1250.0,
                    conductance_to_rotor: 20.0,
                }),
                fade_warning: 350.0,
                over_temperature: 500.0,
                flag_hysteresis: 10.0,
                measured: Some(MeasuredPlausibility {
                    min: -40.0,
                    max: 900.0,
                    max_rate: 2000.0,
                }),
            },
            1e-3,
        )
        .unwrap();
        let wear = WearConfig::new(
            &WearParams {
                bedding_energy: 5e6,
                specific_wear_rate: 4e-14,
                lining_area: 8e-3,
                initial_thickness: 0.010,
                minimum_thickness: 0.002,
            },
            1e-3,
        )
        .unwrap();
        let cal = ChannelCalibration {
            gain: NewtonsPerCount::from_num(1.0 / 256.0),
            offset: Newtons::from_num(12.5),
            rails: AdcRails {
                low: -8_388_608,
                high: 8_388_607,
                margin: 8,
            },
            temperature: Some(TemperatureCompensation {
                reference: Celsius::from_num(20),
                min: Celsius::from_num(-20),
                max: Celsius::from_num(80),
                zero_per_kelvin: NewtonsPerKelvin::from_num(0.5),
                span_per_kelvin: PerKelvin::from_num(1e-4),
            }),
        };
        let limits = DiagnosticLimits {
            force_min: Newtons::from_num(-5_000),
            force_max: Newtons::from_num(250_000),
            max_rate: NewtonsPerSecond::from_num(50_000_000),
            noise_band: Newtons::from_num(50),
            stuck: Some(StuckCheck {
                time: Seconds::from_num(0.2),
                command_span: ActuatorCommand::from_num(0.05),
            }),
            debounce: DebounceSet {
                invalid: Debounce {
                    raise_after: 3,
                    clear_after: 10,
                },
                ..DebounceSet::uniform(Debounce {
                    raise_after: 2,
                    clear_after: 7,
                })
            },
            max_hold_samples: 2,
        };
        let sensor = SensorConfig::new(
            1000,
            [
                cal,
                ChannelCalibration {
                    temperature: None,
                    gain: NewtonsPerCount::from_num(-0.01),
                    ..cal
                },
            ],
            LowPass::new(200.0, 1000).unwrap(),
            limits,
            VotingLimits {
                tolerance: Newtons::from_num(500),
                channel_uncertainty: Newtons::from_num(100),
            },
            Some(ActuatorTransfer {
                gain: NewtonsPerCommand::from_num(1000),
                offset: Newtons::ZERO,
                hysteresis: Newtons::from_num(100),
                uncertainty: Newtons::from_num(2000),
                response_time: Seconds::from_num(0.02),
            }),
        )
        .unwrap();
        DeviceParts {
            sample_period: Seconds::from_num(1e-3),
            thermal_wear_every: 1,
            faces: contact.faces(),
            tables: Tables::new(
                build_radius_table::<2, 2>(&contact, &[0.0, 250_000.0], &[0.0, 1.0]).unwrap(),
                friction,
            ),
            thermal,
            wear,
            sensor,
            adapt: adapt.then(|| {
                AdaptConfig::new(0.7, 1.3, 0.995, NewtonMetres::from_num(5000), 0.02).unwrap()
            }),
            limits: Limits {
                touch_force: Newtons::from_num(100),
                adapt_min_force: Newtons::from_num(500),
            },
            tolerances: Tolerances {
                mu: Ratio::from_num(0.20),
                radius: Ratio::from_num(0.01),
                combination: Combination::RootSumSquare,
            },
        }
    }

    fn full() -> Full {
        DeviceConfig::from_parts(parts(true)).unwrap()
    }

    #[test]
    fn rebuild_gives_every_part_back() {
        for cfg in [full(), DeviceConfig::from_parts(parts(false)).unwrap()] {
            let band = friction_band(cfg.tables().friction()).unwrap();
            assert_eq!(rebuild(&cfg, band).unwrap(), cfg);
        }
    }

    #[test]
    fn friction_band_is_found_for_every_hysteresis() {
        // Odd and even widths, and narrow speeds whose lower edge is clamped to one LSB.
        let mu = *full().tables().friction().mu_kinetic();
        for v_s in [1, 2, 3, 7, 100, 3277] {
            for h in 1..(2 * v_s) {
                let f = FrictionConfig::from_bits(
                    mu,
                    Ratio::from_num(1.2),
                    RadPerSec::from_bits(v_s),
                    RadPerSec::from_bits(h),
                    RadPerSec::from_num(0.5),
                    clampwise_core::friction::ViscousDrag::ZERO,
                    NewtonMetres::ZERO,
                )
                .unwrap();
                let (s, w) = friction_band(&f).unwrap();
                let back = FrictionConfig::from_bits(
                    mu,
                    f.static_to_kinetic(),
                    s,
                    w,
                    f.transition_speed(),
                    f.viscous_drag(),
                    f.no_load_drag(),
                );
                assert_eq!(back, Ok(f), "v_s {v_s}, h {h}");
            }
        }
    }

    #[test]
    fn source_carries_every_part_and_the_checksum() {
        let cfg = full();
        let src = device_config_source(&cfg, "test device").unwrap();
        for needle in [
            "pub const DEVICE_CHANNELS: usize = 2;",
            "pub const DEVICE_MU_TEMPERATURES: usize = 3;",
            "pub const DEVICE: Device = {",
            "FrictionConfig::from_bits(",
            "ThermalConfig::from_bits(ThermalRaw {",
            "two_node: true,",
            "measured: Some(Plausibility {",
            "WearConfig::from_bits(WearRaw {",
            "SensorConfig::new(",
            "temperature: Some(TemperatureCompensation {",
            "stuck: Some(StuckCheck {",
            "Some(ActuatorTransfer {",
            "adapt: Some(match AdaptConfig::from_bits(AdaptRaw {",
            "combination: Combination::RootSumSquare",
            "panic!(\"device config rejected by the core\")",
        ] {
            assert!(src.contains(needle), "missing `{needle}`");
        }
        assert!(src.contains(&format!(
            "pub const DEVICE_CHECKSUM: u32 = 0x{:08x};",
            cfg.checksum()
        )));
        // Every bracket closes (a cheap syntax check; the firmware example compiles it).
        for (open, close) in [('(', ')'), ('[', ']'), ('{', '}')] {
            assert_eq!(
                src.matches(open).count(),
                src.matches(close).count(),
                "{open}{close}"
            );
        }
        let minimal = DeviceConfig::from_parts(parts(false)).unwrap();
        assert!(
            device_config_source(&minimal, "x")
                .unwrap()
                .contains("adapt: None,")
        );
    }

    #[test]
    fn checksum_sees_every_part() {
        let base = parts(true);
        let digest =
            |p: DeviceParts<Tables<2, 2, 3, 3>, 2>| DeviceConfig::from_parts(p).unwrap().checksum();
        let reference = digest(base);
        let mut thermal = base.thermal.to_raw();
        thermal.ambient = Celsius::from_num(21);
        let mut wear = base.wear.to_raw();
        wear.minimum_thickness = Metres::from_num(0.003);
        let mut radius_values: Vec<Vec<Metres>> = base
            .tables
            .radius()
            .rows()
            .map(<[Metres]>::to_vec)
            .collect();
        radius_values[1][1] = Metres::from_bits(radius_values[1][1].to_bits() + 1);
        let variants = [
            DeviceParts { faces: 4, ..base },
            DeviceParts {
                thermal: ThermalConfig::from_bits(thermal).unwrap(),
                ..base
            },
            DeviceParts {
                wear: WearConfig::from_bits(wear).unwrap(),
                ..base
            },
            DeviceParts {
                adapt: None,
                ..base
            },
            DeviceParts {
                tables: Tables::new(
                    Table2::from_bit_slices(
                        base.tables.radius().x_breakpoints(),
                        base.tables.radius().y_breakpoints(),
                        &radius_values,
                    )
                    .unwrap(),
                    *base.tables.friction(),
                ),
                ..base
            },
            DeviceParts {
                tolerances: Tolerances {
                    combination: Combination::WorstCase,
                    ..base.tolerances
                },
                ..base
            },
        ];
        for (i, v) in variants.into_iter().enumerate() {
            assert_ne!(digest(v), reference, "variant {i}");
        }
    }
}
