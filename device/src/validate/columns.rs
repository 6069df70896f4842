//! `[trace.columns]`: each mapped column names a header, a unit its quantity can take, and a
//! force channel that exists.

use super::Validator;
use crate::column_units;
use crate::schema::{CANONICAL, DeviceSpec};

pub(super) fn check(c: &DeviceSpec, v: &mut Validator) {
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
