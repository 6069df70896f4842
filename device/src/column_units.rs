//! Units a trace column may carry, and their conversion to the SI unit the simulator works in.
//!
//! A unit is written the way it appears at the end of a header name (`force_1_kN`,
//! `omega_in_rpm`): `/` may be written for `_` (`rad/s` = `rad_s`). Conversions are exact
//! definitions [pub: NIST SP 811, appendix B]: 1 lbf = 4.448 221 615 260 5 N,
//! 1 psi = 6 894.757 293 168 Pa, 1 rpm = 2π/60 rad/s, 1 ft = 0.3048 m.

/// What a column measures; decides which units are allowed.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Quantity {
    /// Time stamps (SI: s).
    Time,
    /// Clamp force of one channel (SI: N, or raw ADC counts).
    Force,
    /// Shaft speed (SI: rad/s).
    Speed,
    /// Torque (SI: N·m).
    Torque,
    /// Temperature (SI here: °C).
    Temperature,
    /// Actuator command (dimensionless, %, A, V or N; scaled by `[actuator]`).
    Command,
    /// A 0/1 valid bit.
    Flag,
}

impl Quantity {
    /// Human name used in messages.
    pub fn name(self) -> &'static str {
        match self {
            Self::Time => "time",
            Self::Force => "force",
            Self::Speed => "speed",
            Self::Torque => "torque",
            Self::Temperature => "temperature",
            Self::Command => "command",
            Self::Flag => "valid-bit",
        }
    }

    /// Units accepted for this quantity (header-suffix spelling).
    pub fn units(self) -> &'static [&'static str] {
        match self {
            Self::Time => &["s", "ms", "us"],
            Self::Force => &["N", "kN", "lbf", "counts", "bar", "Pa", "kPa", "MPa", "psi"],
            Self::Speed => &["rad_s", "rpm", "deg_s", "rev_s"],
            Self::Torque => &["Nm", "kNm", "lbf_ft"],
            Self::Temperature => &["C", "K", "F"],
            Self::Command => &["1", "pct", "A", "V", "N", "kN"],
            Self::Flag => &["1"],
        }
    }
}

/// A linear conversion `si = raw · scale + offset`, or raw counts passed through.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Conversion {
    /// Multiplier to the SI unit.
    pub scale: f64,
    /// Added after scaling (temperatures only).
    pub offset: f64,
    /// The column holds raw ADC counts (force only): no conversion, calibrated by `[[sensor]]`.
    pub counts: bool,
}

impl Conversion {
    const fn linear(scale: f64) -> Self {
        Self {
            scale,
            offset: 0.0,
            counts: false,
        }
    }

    /// Apply the conversion to one raw value.
    pub fn apply(&self, raw: f64) -> f64 {
        raw * self.scale + self.offset
    }
}

const LBF_N: f64 = 4.448_221_615_260_5;
const PSI_PA: f64 = 6_894.757_293_168;

/// Normalise a unit spelling: `rad/s` → `rad_s`, `N·m`/`N.m`/`N_m` → `Nm`, `%` → `pct`,
/// `degC`/`°C` → `C`.
pub fn normalise(unit: &str) -> String {
    let u = unit.trim().replace('/', "_");
    match u.as_str() {
        "N·m" | "N.m" | "N_m" => "Nm".into(),
        "kN·m" | "kN.m" | "kN_m" => "kNm".into(),
        "%" => "pct".into(),
        "degC" | "°C" => "C".into(),
        "degF" | "°F" => "F".into(),
        "µs" => "us".into(),
        "rad_sec" => "rad_s".into(),
        _ => u,
    }
}

/// The conversion of `unit` for quantity `q`. Pressure units need the piston area (m²) that
/// turns pressure into clamp force.
///
/// # Errors
/// A message naming the allowed units when `unit` is not one of them, or when a pressure unit
/// has no (or a non-positive) piston area.
///
/// ```
/// use clampwise_device::column_units::{conversion, Quantity};
/// let rpm = conversion(Quantity::Speed, "rpm", None).unwrap();
/// assert!((rpm.apply(60.0) - 2.0 * std::f64::consts::PI).abs() < 1e-12);
/// assert!(conversion(Quantity::Force, "rpm", None).is_err());
/// ```
pub fn conversion(
    q: Quantity,
    unit: &str,
    piston_area_m2: Option<f64>,
) -> Result<Conversion, String> {
    let u = normalise(unit);
    let pressure = |pa_per_unit: f64| match piston_area_m2 {
        Some(a) if a.is_finite() && a > 0.0 => Ok(Conversion::linear(pa_per_unit * a)),
        Some(_) => Err("piston_area_m2 must be a positive number".to_string()),
        None => Err(format!(
            "pressure unit '{unit}' needs piston_area_m2 in the same column mapping to turn pressure into clamp force"
        )),
    };
    let c = match (q, u.as_str()) {
        (Quantity::Time, "s") => Conversion::linear(1.0),
        (Quantity::Time, "ms") => Conversion::linear(1e-3),
        (Quantity::Time, "us") => Conversion::linear(1e-6),
        (Quantity::Force, "N") | (Quantity::Command, "N") => Conversion::linear(1.0),
        (Quantity::Force, "kN") | (Quantity::Command, "kN") => Conversion::linear(1e3),
        (Quantity::Force, "lbf") => Conversion::linear(LBF_N),
        (Quantity::Force, "counts") => Conversion {
            scale: 1.0,
            offset: 0.0,
            counts: true,
        },
        (Quantity::Force, "bar") => pressure(1e5)?,
        (Quantity::Force, "Pa") => pressure(1.0)?,
        (Quantity::Force, "kPa") => pressure(1e3)?,
        (Quantity::Force, "MPa") => pressure(1e6)?,
        (Quantity::Force, "psi") => pressure(PSI_PA)?,
        (Quantity::Speed, "rad_s") => Conversion::linear(1.0),
        (Quantity::Speed, "rpm") => Conversion::linear(std::f64::consts::TAU / 60.0),
        (Quantity::Speed, "deg_s") => Conversion::linear(std::f64::consts::PI / 180.0),
        (Quantity::Speed, "rev_s") => Conversion::linear(std::f64::consts::TAU),
        (Quantity::Torque, "Nm") => Conversion::linear(1.0),
        (Quantity::Torque, "kNm") => Conversion::linear(1e3),
        (Quantity::Torque, "lbf_ft") => Conversion::linear(LBF_N * 0.3048),
        (Quantity::Temperature, "C") => Conversion::linear(1.0),
        (Quantity::Temperature, "K") => Conversion {
            scale: 1.0,
            offset: -273.15,
            counts: false,
        },
        (Quantity::Temperature, "F") => Conversion {
            scale: 5.0 / 9.0,
            offset: -32.0 * 5.0 / 9.0,
            counts: false,
        },
        (Quantity::Command, "1") | (Quantity::Flag, "1") => Conversion::linear(1.0),
        (Quantity::Command, "pct") => Conversion::linear(0.01),
        (Quantity::Command, "A") | (Quantity::Command, "V") => Conversion::linear(1.0),
        _ => {
            return Err(format!(
                "'{unit}' is not a {} unit (allowed: {})",
                q.name(),
                q.units().join(", ")
            ));
        }
    };
    if piston_area_m2.is_some()
        && !(q == Quantity::Force && ["bar", "Pa", "kPa", "MPa", "psi"].contains(&u.as_str()))
    {
        return Err(format!(
            "piston_area_m2 only applies to a pressure unit, not '{unit}'"
        ));
    }
    Ok(c)
}

/// The unit a header name carries at its end (`force_1_kN` → `kN`), if it is one of the units
/// of `q`; longest match first so `omega_rad_s` reads `rad_s`, not `s`.
pub fn unit_suffix(q: Quantity, header: &str) -> Option<&'static str> {
    let mut units: Vec<&'static str> = q.units().to_vec();
    units.sort_by_key(|u| std::cmp::Reverse(u.len()));
    units.into_iter().find(|u| {
        header.len() > u.len() + 1
            && header.ends_with(u)
            && header[..header.len() - u.len()].ends_with('_')
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;
    use approx::assert_relative_eq;

    #[test]
    fn exact_definitions() {
        // [pub: NIST SP 811 appendix B] 1 lbf = 4.4482216152605 N; 1 psi = 6894.757293168 Pa.
        assert_relative_eq!(
            conversion(Quantity::Force, "lbf", None).unwrap().apply(1.0),
            4.448_221_615_260_5
        );
        let psi = conversion(Quantity::Force, "psi", Some(1e-4)).unwrap();
        assert_relative_eq!(psi.apply(1.0), 0.689_475_729_316_8);
        // [calc: F = p·π·d²/4] 100 bar on a 57 mm piston: 25.5 kN.
        let a = std::f64::consts::PI * 0.0285 * 0.0285;
        let bar = conversion(Quantity::Force, "bar", Some(a)).unwrap();
        assert_relative_eq!(bar.apply(100.0), 25_517.6, max_relative = 1e-4);
        // [pub] 0 °C = 273.15 K, 212 °F = 100 °C.
        assert_relative_eq!(
            conversion(Quantity::Temperature, "K", None)
                .unwrap()
                .apply(273.15),
            0.0
        );
        assert_relative_eq!(
            conversion(Quantity::Temperature, "F", None)
                .unwrap()
                .apply(212.0),
            100.0,
            max_relative = 1e-12
        );
    }

    #[test]
    fn wrong_kind_and_pressure_without_area() {
        assert!(
            conversion(Quantity::Torque, "rpm", None)
                .unwrap_err()
                .contains("not a torque unit")
        );
        assert!(
            conversion(Quantity::Force, "bar", None)
                .unwrap_err()
                .contains("piston_area_m2")
        );
        assert!(conversion(Quantity::Force, "N", Some(1.0)).is_err());
        assert_eq!(normalise("rad/s"), "rad_s");
    }

    #[test]
    fn suffixes() {
        assert_eq!(
            unit_suffix(Quantity::Speed, "omega_in_rad_s"),
            Some("rad_s")
        );
        assert_eq!(unit_suffix(Quantity::Force, "force_1_kN"), Some("kN"));
        assert_eq!(unit_suffix(Quantity::Force, "force_1_N"), Some("N"));
        assert_eq!(unit_suffix(Quantity::Force, "N"), None);
        assert_eq!(unit_suffix(Quantity::Time, "t_ms"), Some("ms"));
    }
}
