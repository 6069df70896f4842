//! The config reference page (`device/CONFIG.md`), generated from the schema itself.
//!
//! ```text
//! DeviceSpec (serde + schemars derive: field names, doc comments, defaults, bounds)
//!   └─ schemars::schema_for! ─► JSON Schema ─► markdown(): one table per TOML table
//! ```
//!
//! Every key of every table is listed with its type, unit (from the key's SI suffix, the
//! project's naming rule), whether it is required or its default, its fixed bounds (as
//! declared beside the field and checked against the validator by a test), and its doc
//! comment. Bounds that depend on other keys (a fade temperature below the over-temperature,
//! a filter cut-off below Nyquist) are stated in the doc comment and checked by the validator.
//!
//! The committed page is kept fresh by the test `config_reference_is_fresh`: it fails when
//! the page differs from what the schema gives; regenerate with
//! `CLAMPWISE_BLESS=1 cargo test -p clampwise-device --release config_reference`.
//! Available with the `schema` feature (the firmware's build script does not need it).

use serde_json::{Map, Value};

use crate::schema::DeviceSpec;

/// Key-name suffixes and the unit each stands for, longest first (the first match wins).
pub const UNIT_SUFFIXES: &[(&str, &str)] = &[
    ("_nm_per_rad_s", "N·m per rad/s"),
    ("_w_per_m2_k", "W/(m²·K)"),
    ("_n_per_command", "N per command unit"),
    ("_n_per_count", "N per ADC count"),
    ("_m3_per_j", "m³/J"),
    ("_j_per_k", "J/K"),
    ("_w_per_k", "W/K"),
    ("_k_per_s", "K/s"),
    ("_n_per_s", "N/s"),
    ("_rad_s", "rad/s"),
    ("_samples", "samples"),
    ("_counts", "ADC counts"),
    ("_ratio", "ratio (1 = 100 %)"),
    ("_deg", "degrees"),
    ("_m2", "m²"),
    ("_nm", "N·m"),
    ("_hz", "Hz"),
    ("_m", "m"),
    ("_s", "s"),
    ("_n", "N"),
    ("_c", "°C"),
    ("_k", "K"),
    ("_j", "J"),
];

/// The unit a key's name states, `—` for none.
pub fn unit_of(key: &str) -> &'static str {
    UNIT_SUFFIXES
        .iter()
        .find(|(suffix, _)| key.ends_with(suffix))
        .map_or("—", |(_, unit)| unit)
}

/// The JSON Schema of a config file.
pub fn schema() -> Value {
    schemars::schema_for!(DeviceSpec).to_value()
}

/// One TOML table of the reference: its heading, description and keys.
#[derive(Debug, Clone, PartialEq)]
pub struct Section {
    /// `device`, `friction.mu`, `sensor` (an array of tables) …
    pub path: String,
    /// Whether it is an array of tables (`[[sensor]]`).
    pub array: bool,
    /// Whether the table may be left out.
    pub optional: bool,
    /// The table's doc comment.
    pub description: String,
    /// Its keys.
    pub keys: Vec<KeyDoc>,
}

/// One key of a table.
#[derive(Debug, Clone, PartialEq)]
pub struct KeyDoc {
    /// Key name.
    pub name: String,
    /// TOML type, e.g. `float`, `array of float`, `one of brake, clutch`.
    pub kind: String,
    /// Unit from the name's suffix.
    pub unit: &'static str,
    /// `required`, `optional` or `default X`.
    pub presence: String,
    /// Lower bound: (value, inclusive).
    pub min: Option<(f64, bool)>,
    /// Upper bound: (value, inclusive).
    pub max: Option<(f64, bool)>,
    /// Allowed values, when only some are.
    pub allowed: Option<Vec<String>>,
    /// The key's doc comment (with what each enumerated value means).
    pub description: String,
}

fn text(v: Option<&Value>) -> String {
    v.and_then(Value::as_str).unwrap_or("").replace('\n', " ")
}

struct Walker<'a> {
    defs: &'a Map<String, Value>,
    sections: Vec<Section>,
}

/// The schema behind a `$ref`, or the schema itself.
fn deref<'a>(defs: &'a Map<String, Value>, s: &'a Value) -> (&'a Value, Option<String>) {
    match s.get("$ref").and_then(Value::as_str) {
        Some(r) => {
            let name = r.rsplit('/').next().unwrap_or(r).to_string();
            (defs.get(&name).unwrap_or(s), Some(name))
        }
        None => (s, None),
    }
}

/// The non-null alternative of an `Option<T>` schema, and whether it was optional that way.
fn strip_null(s: &Value) -> (&Value, bool) {
    if let Some(any) = s.get("anyOf").and_then(Value::as_array) {
        let not_null: Vec<&Value> = any
            .iter()
            .filter(|a| a.get("type").and_then(Value::as_str) != Some("null"))
            .collect();
        if let [one] = not_null.as_slice()
            && not_null.len() < any.len()
        {
            return (one, true);
        }
    }
    (s, false)
}

fn number(v: Option<&Value>) -> Option<f64> {
    v.and_then(Value::as_f64)
}

impl Walker<'_> {
    fn is_table(&self, s: &Value) -> bool {
        let (d, _) = deref(self.defs, s);
        d.get("properties").is_some()
    }

    /// The type text and, for an enumeration, its values with their meanings.
    fn kind(&self, s: &Value) -> (String, Option<Vec<String>>, String) {
        let (d, _) = deref(self.defs, s);
        let types: Vec<&str> = match d.get("type") {
            Some(Value::String(t)) => vec![t.as_str()],
            Some(Value::Array(ts)) => ts.iter().filter_map(Value::as_str).collect(),
            _ => Vec::new(),
        };
        if let Some(variants) = d.get("oneOf").and_then(Value::as_array) {
            let mut values = Vec::new();
            let mut meanings = Vec::new();
            for v in variants {
                let name = v
                    .get("const")
                    .and_then(Value::as_str)
                    .or_else(|| v.get("enum").and_then(|e| e.get(0)).and_then(Value::as_str))
                    .unwrap_or("?");
                values.push(format!("`{name}`"));
                let m = text(v.get("description"));
                if !m.is_empty() {
                    meanings.push(format!("`{name}`: {m}"));
                }
            }
            return (
                format!("one of {}", values.join(", ")),
                None,
                meanings.join(" "),
            );
        }
        if let Some(e) = d.get("enum").and_then(Value::as_array)
            && types.contains(&"string")
        {
            let values: Vec<String> = e
                .iter()
                .filter_map(Value::as_str)
                .map(|v| format!("`{v}`"))
                .collect();
            return (format!("one of {}", values.join(", ")), None, String::new());
        }
        let base = types
            .iter()
            .find(|t| **t != "null")
            .copied()
            .unwrap_or("table");
        let kind = match base {
            "number" => "float".to_string(),
            "integer" => "integer".to_string(),
            "string" => "string".to_string(),
            "boolean" => "boolean".to_string(),
            "array" => {
                let item = d.get("items").map_or_else(
                    || {
                        // A fixed-length array such as [x, y].
                        d.get("prefixItems")
                            .and_then(Value::as_array)
                            .map_or("value".into(), |p| {
                                let (k, _, _) = self.kind(p.first().unwrap_or(&Value::Null));
                                format!("[{k}; {}]", p.len())
                            })
                    },
                    |i| self.kind(i).0,
                );
                format!("array of {item}")
            }
            other => other.to_string(),
        };
        let allowed = d
            .get("enum")
            .and_then(Value::as_array)
            .map(|e| e.iter().map(|v| v.to_string()).collect::<Vec<String>>());
        (kind, allowed, String::new())
    }

    fn section(&mut self, path: &str, s: &Value, array: bool, optional: bool, doc: &str) {
        let (d, _) = deref(self.defs, s);
        let required: Vec<&str> = d
            .get("required")
            .and_then(Value::as_array)
            .map(|r| r.iter().filter_map(Value::as_str).collect())
            .unwrap_or_default();
        let mut description = text(d.get("description"));
        if description.is_empty() {
            description = doc.to_string();
        }
        let index = self.sections.len();
        self.sections.push(Section {
            path: path.to_string(),
            array,
            optional,
            description,
            keys: Vec::new(),
        });
        let Some(props) = d.get("properties").and_then(Value::as_object) else {
            return;
        };
        let mut children = Vec::new();
        let mut keys = Vec::new();
        for (name, p) in props {
            let is_required = required.contains(&name.as_str());
            let (inner, was_option) = strip_null(p);
            let doc = text(p.get("description"));
            let child = format!("{path}.{name}");
            let array_of_tables = inner.get("type").and_then(Value::as_str) == Some("array")
                && inner.get("items").is_some_and(|i| self.is_table(i));
            if self.is_table(inner) {
                children.push((child, inner.clone(), false, !is_required, doc));
                continue;
            }
            if array_of_tables {
                let item = inner.get("items").cloned().unwrap_or(Value::Null);
                children.push((name.clone(), item, true, !is_required, doc));
                continue;
            }
            let (kind, allowed, meanings) = self.kind(inner);
            let (bounded, _) = deref(self.defs, inner);
            let bound = |incl: &str, excl: &str| {
                number(p.get(excl).or_else(|| bounded.get(excl)))
                    .map(|v| (v, false))
                    .or_else(|| {
                        number(p.get(incl).or_else(|| bounded.get(incl))).map(|v| (v, true))
                    })
            };
            let presence = match p.get("default") {
                Some(v) => format!("default `{v}`"),
                None if is_required => "required".into(),
                None if was_option || !is_required => "optional".into(),
                None => "required".into(),
            };
            let allowed = allowed.or_else(|| {
                p.get("enum")
                    .and_then(Value::as_array)
                    .map(|e| e.iter().map(|v| v.to_string()).collect())
            });
            let description = if meanings.is_empty() {
                doc
            } else {
                format!("{doc} {meanings}")
            };
            keys.push(KeyDoc {
                name: name.clone(),
                kind,
                unit: unit_of(name),
                presence,
                min: bound("minimum", "exclusiveMinimum"),
                max: bound("maximum", "exclusiveMaximum"),
                allowed,
                description,
            });
        }
        if let Some(sec) = self.sections.get_mut(index) {
            sec.keys = keys;
        }
        for (child, schema, array, optional, doc) in children {
            self.section(&child, &schema, array, optional, &doc);
        }
    }
}

/// The tables of a config file, in schema order, each with its keys.
pub fn sections() -> Vec<Section> {
    let root = schema();
    let empty = Map::new();
    let defs = root
        .get("$defs")
        .and_then(Value::as_object)
        .unwrap_or(&empty);
    let mut w = Walker {
        defs,
        sections: Vec::new(),
    };
    let required: Vec<&str> = root
        .get("required")
        .and_then(Value::as_array)
        .map(|r| r.iter().filter_map(Value::as_str).collect())
        .unwrap_or_default();
    if let Some(props) = root.get("properties").and_then(Value::as_object) {
        for (name, p) in props {
            let (inner, _) = strip_null(p);
            let doc = text(p.get("description"));
            let optional = !required.contains(&name.as_str());
            if inner.get("type").and_then(Value::as_str) == Some("array") {
                let item = inner.get("items").cloned().unwrap_or(Value::Null);
                w.section(name, &item, true, optional, &doc);
            } else {
                w.section(name, inner, false, optional, &doc);
            }
        }
    }
    w.sections
}

fn num(v: f64) -> String {
    if v.fract() == 0.0 && v.abs() < 1e7 {
        format!("{v:.0}")
    } else if v.abs() >= 1e7 || (v != 0.0 && v.abs() < 1e-3) {
        format!("{v:e}")
    } else {
        format!("{v}")
    }
}

/// The bounds of a key as text: `> 0`, `1 … 64`, `0 ≤ x < 1`, `—`.
pub fn range_text(k: &KeyDoc) -> String {
    if let Some(a) = &k.allowed {
        return format!("one of {}", a.join(", "));
    }
    match (k.min, k.max) {
        (None, None) => "—".into(),
        (Some((lo, true)), None) => format!("≥ {}", num(lo)),
        (Some((lo, false)), None) => format!("> {}", num(lo)),
        (None, Some((hi, true))) => format!("≤ {}", num(hi)),
        (None, Some((hi, false))) => format!("< {}", num(hi)),
        (Some((lo, true)), Some((hi, true))) => format!("{} … {}", num(lo), num(hi)),
        (Some((lo, li)), Some((hi, hi_incl))) => format!(
            "{} {} x {} {}",
            num(lo),
            if li { "≤" } else { "<" },
            if hi_incl { "≤" } else { "<" },
            num(hi)
        ),
    }
}

fn cell(s: &str) -> String {
    s.replace('|', "\\|")
}

/// The reference page as Markdown.
pub fn markdown() -> String {
    let mut o = String::new();
    o.push_str("# clampwise device config reference\n\n");
    o.push_str("<!-- Generated from the schema in device/src/schema.rs; do not edit by hand. Regenerate with\n     CLAMPWISE_BLESS=1 cargo test -p clampwise-device --release config_reference -->\n\n");
    o.push_str("Every key of a device config file (TOML), generated from the schema itself: the key names, types, defaults and fixed bounds come from the types the loader reads (`clampwise_device::schema::DeviceSpec`), the meanings from their doc comments. Unknown keys are rejected. Bounds that depend on other keys are given in the meaning column; `clampwise check CONFIG` reports every problem at its key, line and column.\n\n");
    o.push_str("Units are in the key names (SI): ");
    let units: Vec<String> = UNIT_SUFFIXES
        .iter()
        .map(|(s, u)| format!("`{s}` {u}"))
        .collect();
    o.push_str(&units.join(", "));
    o.push_str(".\n\nExamples: `sim/configs/demo-hoist-brake.toml` (a caliper holding brake), `sim/configs/demo-wet-clutch.toml` (a wet multi-plate clutch), `sim/configs/example-crane-drum-brake.toml` (two external pivoted shoes) and `sim/configs/example-hoist-band-brake.toml` (a differential band), all invented machines.\n\n");
    o.push_str("> **Caution.** The estimator's output is an estimate, not a certified safety function. Validate on the bench for each lining and geometry, and follow the applicable functional-safety process (ISO 26262, IEC 61508, ISO 13849 or the machine's own standard), local codes and licensed engineering practice.\n");
    for s in sections() {
        let heading = if s.array {
            format!("[[{}]]", s.path)
        } else {
            format!("[{}]", s.path)
        };
        o.push_str(&format!("\n## `{heading}`"));
        if s.optional {
            o.push_str(" (optional)");
        }
        o.push_str("\n\n");
        if !s.description.is_empty() {
            o.push_str(&format!("{}\n\n", s.description));
        }
        if s.keys.is_empty() {
            continue;
        }
        o.push_str("| key | type | unit | required / default | range | meaning |\n");
        o.push_str("|---|---|---|---|---|---|\n");
        for k in &s.keys {
            o.push_str(&format!(
                "| `{}` | {} | {} | {} | {} | {} |\n",
                k.name,
                cell(&k.kind),
                k.unit,
                k.presence,
                cell(&range_text(k)),
                cell(&k.description)
            ));
        }
    }
    o
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::expect_used, clippy::panic)]
    use super::*;
    use crate::config::LoadedConfig;

    const CLUTCH: &str = include_str!("../../sim/configs/demo-wet-clutch.toml");

    #[test]
    fn config_reference_is_fresh() {
        let want = markdown();
        let path = concat!(env!("CARGO_MANIFEST_DIR"), "/CONFIG.md");
        if std::env::var_os("CLAMPWISE_BLESS").is_some() {
            std::fs::write(path, &want).unwrap();
            return;
        }
        let have = std::fs::read_to_string(path).unwrap_or_default();
        assert!(
            have == want,
            "device/CONFIG.md is stale: regenerate it with `CLAMPWISE_BLESS=1 cargo test -p clampwise-device --release config_reference` and commit it"
        );
    }

    #[test]
    fn config_reference_lists_every_key_of_the_examples() {
        // Every key the two example configs set appears in the reference, in its table.
        let sections = sections();
        for src in [crate::DEMO_CONFIG, CLUTCH] {
            let t: toml::Table = toml::from_str(src).unwrap();
            let mut missing = Vec::new();
            walk_keys(&t, "", &mut |path, key| {
                let found = sections
                    .iter()
                    .any(|s| s.path == path && s.keys.iter().any(|k| k.name == key))
                    || sections
                        .iter()
                        .any(|s| s.path == format!("{path}.{key}").trim_start_matches('.'))
                    || path.starts_with("trace.columns");
                if !found {
                    missing.push(format!("{path}.{key}"));
                }
            });
            assert!(missing.is_empty(), "{missing:?}");
        }
        let md = markdown();
        for needle in [
            "## `[device]`",
            "## `[[sensor]]`",
            "## `[friction.mu]`",
            "## `[thermal.measured]` (optional)",
            "| `sample_period_s` | float | s | required | 1e-6 … 1 |",
            "| `thermal_wear_every` | integer | — | default `1` | one of 1, 2, 4, 8, 16, 32 |",
            "| `kind` | one of `brake`, `clutch` |",
            "| `mu_tolerance_ratio` | float | ratio (1 = 100 %) | required | 0 ≤ x < 1 |",
            "| `faces` | integer | — | required | 1 … 64 |",
        ] {
            assert!(md.contains(needle), "{needle}\n{md}");
        }
    }

    fn walk_keys(t: &toml::Table, path: &str, f: &mut dyn FnMut(&str, &str)) {
        for (k, v) in t {
            match v {
                toml::Value::Table(sub) => {
                    let p = if path.is_empty() {
                        k.clone()
                    } else {
                        format!("{path}.{k}")
                    };
                    walk_keys(sub, &p, f);
                }
                toml::Value::Array(a) if a.iter().all(toml::Value::is_table) && !a.is_empty() => {
                    for item in a {
                        if let toml::Value::Table(sub) = item {
                            walk_keys(sub, k, f);
                        }
                    }
                }
                _ => f(path, k),
            }
        }
    }

    /// A value just outside each documented bound is rejected by the loader, naming the key:
    /// the page's ranges are the validator's.
    #[test]
    fn documented_bounds_are_the_validators() {
        let mut checked = 0;
        for src in [crate::DEMO_CONFIG, CLUTCH] {
            let base: toml::Table = toml::from_str(src).unwrap();
            for s in sections() {
                for k in &s.keys {
                    let integer = k.kind == "integer";
                    let step = |v: f64| {
                        if integer {
                            1.0
                        } else {
                            (v.abs() * 1e-3).max(1e-9)
                        }
                    };
                    let mut outside = Vec::new();
                    if let Some((lo, incl)) = k.min {
                        outside.push(if incl { lo - step(lo) } else { lo });
                    }
                    if let Some((hi, incl)) = k.max {
                        outside.push(if incl { hi + step(hi) } else { hi });
                    }
                    for v in outside {
                        let mut t = base.clone();
                        let Some(table) = table_at(&mut t, &s.path, s.array) else {
                            continue;
                        };
                        if !table.contains_key(&k.name) {
                            continue;
                        }
                        // An integer bound is whole, and its neighbour too.
                        #[allow(clippy::cast_possible_truncation)]
                        let value = if integer {
                            toml::Value::Integer(v as i64)
                        } else {
                            toml::Value::Float(v)
                        };
                        table.insert(k.name.clone(), value);
                        let text = toml::to_string(&t).unwrap();
                        let err = LoadedConfig::from_str(&text, "x.toml")
                            .map(|_| ())
                            .expect_err(&format!("{}.{} = {v} must be refused", s.path, k.name));
                        assert!(
                            err.to_string().contains(&k.name),
                            "{}.{} = {v}: {err}",
                            s.path,
                            k.name
                        );
                        checked += 1;
                    }
                }
            }
        }
        assert!(checked > 60, "{checked}");
    }

    fn table_at<'a>(
        t: &'a mut toml::Table,
        path: &str,
        array: bool,
    ) -> Option<&'a mut toml::Table> {
        let mut cur = t;
        for seg in path.split('.') {
            let v = cur.get_mut(seg)?;
            cur = match v {
                toml::Value::Table(sub) => sub,
                toml::Value::Array(a) if array => a.first_mut()?.as_table_mut()?,
                _ => return None,
            };
        }
        Some(cur)
    }
}
