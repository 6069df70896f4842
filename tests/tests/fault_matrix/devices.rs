//! Device variants derived from the demo config: 1–4 gauges, with or without a stuck check and
//! an actuator model.

use clampwise_sim::build_core::CoreDevice;
use clampwise_sim::config::LoadedConfig;
use clampwise_sim::demo::DEMO_CONFIG;
use clampwise_sim::schema::DeviceSpec;

/// What differs from the demo config besides the gauge count.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Variant {
    /// As shipped: actuator model, no stuck check.
    Demo,
    /// With `[sensing.stuck]` (force flat while the command moves).
    StuckCheck,
    /// Without `[actuator]`: no fallback to the command.
    NoActuator,
}

impl Variant {
    pub const ALL: [Variant; 3] = [Variant::Demo, Variant::StuckCheck, Variant::NoActuator];

    pub fn label(self) -> &'static str {
        match self {
            Variant::Demo => "demo",
            Variant::StuckCheck => "+stuck check",
            Variant::NoActuator => "no actuator",
        }
    }
}

/// One device of the matrix.
pub struct Device {
    pub gauges: usize,
    pub variant: Variant,
    pub config: DeviceSpec,
    pub core: CoreDevice,
}

impl Device {
    pub fn label(&self) -> String {
        format!("{}g {}", self.gauges, self.variant.label())
    }
}

/// A fourth gauge for the 4-channel device (invented, like the demo's three).
const GAUGE_D: &str = r#"
name = "bridge gauge D"
gain_n_per_count = 0.0098
offset_counts = -3000.0
rail_low_counts = -8388608
rail_high_counts = 8388607
rail_margin_counts = 8
"#;

/// The demo config with `gauges` channels and the variant applied, validated and built.
pub fn device(gauges: usize, variant: Variant) -> Device {
    let mut doc: toml::Table = DEMO_CONFIG.parse().expect("the demo config is TOML");
    let sensors = doc
        .get_mut("sensor")
        .and_then(toml::Value::as_array_mut)
        .expect("the demo config has [[sensor]] tables");
    let extra: toml::Table = GAUGE_D.parse().expect("gauge D is TOML");
    sensors.push(toml::Value::Table(extra));
    sensors.truncate(gauges);
    let columns = doc
        .get_mut("trace")
        .and_then(|t| t.get_mut("columns"))
        .and_then(toml::Value::as_table_mut)
        .expect("the demo config has [trace.columns]");
    for ch in 1..=4 {
        let key = format!("force_{ch}");
        if ch > gauges {
            columns.remove(&key);
        } else if !columns.contains_key(&key) {
            let mut m = toml::Table::new();
            m.insert("column".into(), format!("force_{ch}_counts").into());
            m.insert("unit".into(), "counts".into());
            columns.insert(key, toml::Value::Table(m));
        }
    }
    match variant {
        Variant::Demo => {}
        Variant::StuckCheck => {
            let mut stuck = toml::Table::new();
            // Flat within the noise band for 0.2 s while the command moves by 0.1 (6 kN).
            stuck.insert("time_s".into(), 0.2.into());
            stuck.insert("command_span".into(), 0.1.into());
            doc.get_mut("sensing")
                .and_then(toml::Value::as_table_mut)
                .expect("the demo config has [sensing]")
                .insert("stuck".into(), toml::Value::Table(stuck));
        }
        Variant::NoActuator => {
            doc.remove("actuator");
        }
    }
    let text = toml::to_string(&doc).expect("a TOML table serialises");
    let name = format!("demo-{gauges}g-{}.toml", variant.label().replace(' ', "-"));
    let config = LoadedConfig::from_str(&text, &name)
        .unwrap_or_else(|e| panic!("{name}: {e}"))
        .config;
    let core = CoreDevice::build(&config).unwrap_or_else(|e| panic!("{name}: {e}"));
    Device {
        gauges,
        variant,
        config,
        core,
    }
}

/// Whether the configuration refuses this combination: a single gauge with neither a stuck
/// check nor an actuator model cannot detect its own faults.
pub fn refused(gauges: usize, variant: Variant) -> bool {
    gauges == 1 && variant == Variant::NoActuator
}

/// Every device of the matrix: 1–4 gauges × the variants the configuration accepts.
pub fn all() -> Vec<Device> {
    (1..=4)
        .flat_map(|g| Variant::ALL.map(move |v| (g, v)))
        .filter(|&(g, v)| !refused(g, v))
        .map(|(g, v)| device(g, v))
        .collect()
}
