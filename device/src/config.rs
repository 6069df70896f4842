//! Loading a device config file (TOML): parse it into the [schema](crate::schema), validate it
//! ([`crate::validate`], then the core's own constructors through [`crate::build_core`]) and
//! report every problem located ([`crate::locate`]).
//!
//! A problem is reported as `file:line:column: key: message`, with the line and column of the
//! offending value taken from the TOML parser's spans. Validation collects every problem it
//! finds, not only the first. The documented example is `sim/configs/demo-hoist-brake.toml`.
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

use crate::locate::{KeyPath, key_at, line_col, locate};
use crate::schema::DeviceSpec;

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
    pub config: DeviceSpec,
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
        let config: DeviceSpec = toml::from_str(source).map_err(|e| {
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
        let mut problems = crate::validate::problems(&config);
        // The core's own checks run once the config's have passed, so one mistake is reported
        // once; they hold the rules the core enforces (ranges, time constants against the
        // sample period, fixed-point limits, geometry), each mapped back to its key.
        if problems.is_empty()
            && let Err(e) = crate::build_core::CoreDevice::build(&config)
        {
            problems.push((e.key, e.message));
        }
        if problems.is_empty() {
            Ok(Self {
                config,
                source: source.to_string(),
                file: file.to_string(),
            })
        } else {
            let mut issues: Vec<ConfigIssue> = problems
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

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::schema::ShapeSpec;

    const DEMO: &str = crate::DEMO_CONFIG;

    fn err(src: &str) -> ConfigErrors {
        LoadedConfig::from_str(src, "t.toml").unwrap_err()
    }

    #[test]
    fn demo_config_is_valid() {
        let c = LoadedConfig::from_str(DEMO, "demo").unwrap();
        assert_eq!(c.config.contact.shape, ShapeSpec::Sector);
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

    /// The one issue of the demo with `from` replaced by `to`.
    fn only_issue(from: &str, to: &str) -> ConfigIssue {
        let src = DEMO.replacen(from, to, 1);
        assert_ne!(src, DEMO, "replacement of {from:?} did not apply");
        let e = err(&src);
        assert_eq!(e.issues.len(), 1, "{e}");
        let line = src.lines().position(|l| l.contains(to)).unwrap() + 1;
        assert_eq!(e.issues[0].line, Some(line), "{e}");
        e.issues[0].clone()
    }

    #[test]
    fn rules_the_core_checks_are_reported_once_at_their_key() {
        // Flag thresholds: the core's thermal model orders them.
        let i = only_issue("over_temperature_c = 450.0", "over_temperature_c = 300.0");
        assert_eq!(i.key.as_deref(), Some("thermal.over_temperature_c"));
        assert!(i.message.contains("above fade_warning"), "{i:?}");
        // Measured limits: named at the upper one when it is not above the lower.
        let i = only_issue("max_c = 700.0", "max_c = -50.0");
        assert_eq!(i.key.as_deref(), Some("thermal.measured.max_c"));
        // Radii: the core's geometry names the inner one.
        let i = only_issue("inner_radius_m = 0.52", "inner_radius_m = 0.70");
        assert_eq!(i.key.as_deref(), Some("contact.inner_radius_m"));
        assert!(i.message.contains("must be below"), "{i:?}");
        // The adaptation threshold below the touch force: the core's device assembly.
        let i = only_issue("min_clamp_force_n = 5000.0", "min_clamp_force_n = 1.0");
        assert_eq!(i.key.as_deref(), Some("adaptation.min_clamp_force_n"));
    }

    #[test]
    fn a_polygon_pad_over_the_axis_is_refused_by_the_core_geometry() {
        let polygon = |vertices: &str| {
            DEMO.replace("shape = \"sector\"", "shape = \"polygon\"")
                .replace("inner_radius_m = 0.52\n", "")
                .replace("outer_radius_m = 0.68\n", "")
                .replace(
                    "sector_angle_deg = 30.0",
                    &format!("vertices_m = {vertices}"),
                )
        };
        // A square pad at 0.5 … 0.6 m is accepted.
        LoadedConfig::from_str(
            &polygon("[[0.5, -0.05], [0.6, -0.05], [0.6, 0.05], [0.5, 0.05]]"),
            "t.toml",
        )
        .unwrap();
        let e = err(&polygon(
            "[[-0.5, -0.5], [0.5, -0.5], [0.5, 0.5], [-0.5, 0.5]]",
        ));
        assert_eq!(e.issues.len(), 1, "{e}");
        let key = e.issues[0].key.as_deref().unwrap();
        assert!(key.starts_with("contact.vertices_m"), "{e}");
        assert!(e.issues[0].line.is_some(), "{e}");
    }
}
