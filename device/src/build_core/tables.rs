//! The μ table and the friction-radius table, at the sizes the config gives them (within the
//! capacities of the parent module).

use clampwise_core::geometry::build_radius_table_from_slices;
use clampwise_core::table::{Axis, TableError};
use fixed::FixedI32;
use fixed::types::extra::LeEqU32;

use clampwise_core::config::LeverAxis;

use super::contact::{geometry_error, with_contact};
use super::gain::{GainModel, GainTableInfo};
use super::{BuildError, MuTable, RADIUS_BEDDING, RadiusTable};
use crate::schema::DeviceSpec;

/// The fixed-point tables of one device.
#[derive(Debug, Clone)]
pub struct CoreTables {
    /// μ(lining temperature, |slip speed|), the config's breakpoints.
    pub mu: MuTable,
    /// Friction-radius table: the config's force breakpoints, and bedding 0 and 1 or (a drum
    /// or band contact) the μ breakpoints of its gain table.
    pub radius: RadiusTable,
    /// The radius table's second axis.
    pub axis: LeverAxis,
    /// Lever arm per face (m) under uniform pressure and under uniform wear, from the core's
    /// geometry; for a cone, r_e / sin α; for a drum or band contact, g(μ)/μ at μ = 0 and at
    /// the table's end.
    pub radii_m: (f64, f64),
    /// A drum or band contact's torque model and what its table covers.
    pub gain: Option<(GainModel, GainTableInfo)>,
}

pub(crate) fn fixed_of<F: LeEqU32>(key: &str, v: f64) -> Result<FixedI32<F>, BuildError> {
    if v.is_finite()
        && let Some(x) = FixedI32::<F>::checked_from_num(v)
    {
        return Ok(x);
    }
    Err(out_of_format::<F>(key, v))
}

fn out_of_format<F: LeEqU32>(key: &str, v: f64) -> BuildError {
    BuildError::new(
        key,
        format!(
            "{v} does not fit the core's fixed-point format (range {} … {})",
            FixedI32::<F>::MIN,
            FixedI32::<F>::MAX
        ),
    )
}

/// The μ table's error named by its TOML key (the validation has checked sizes, order and the
/// grid's shape, so what is left is a value outside a fixed-point format).
fn mu_error(c: &DeviceSpec, e: &TableError) -> BuildError {
    let mu = &c.friction.mu;
    let width = mu.slip_speed_rad_s.len().max(1);
    let value_at = |xs: &[f64], i: usize| xs.get(i).copied().unwrap_or(f64::NAN);
    match *e {
        TableError::NotRepresentable {
            axis: Some(Axis::X),
            index,
        } => out_of_format::<fixed::types::extra::U16>(
            &format!("friction.mu.temperature_c[{index}]"),
            value_at(&mu.temperature_c, index),
        ),
        TableError::NotRepresentable {
            axis: Some(Axis::Y),
            index,
        } => out_of_format::<fixed::types::extra::U16>(
            &format!("friction.mu.slip_speed_rad_s[{index}]"),
            value_at(&mu.slip_speed_rad_s, index),
        ),
        TableError::NotRepresentable { axis: None, index } => {
            let (i, j) = (index / width, index % width);
            let v = mu.values.get(i).map_or(f64::NAN, |r| value_at(r, j));
            out_of_format::<fixed::types::extra::U30>(&format!("friction.mu.values[{i}][{j}]"), v)
        }
        _ => BuildError::new("friction.mu", e),
    }
}

impl CoreTables {
    /// Build the tables of a config whose shape checks have passed.
    ///
    /// # Errors
    /// [`BuildError`] naming the key whose value the core rejects or that does not fit the
    /// fixed-point format.
    pub fn build(c: &DeviceSpec) -> Result<Self, BuildError> {
        let mu = &c.friction.mu;
        let mu_table = MuTable::from_slices(&mu.temperature_c, &mu.slip_speed_rad_s, &mu.values)
            .map_err(|e| mu_error(c, &e))?;
        let forces = &c.radius_table.force_n;
        if c.contact.is_nonlinear_in_mu() {
            let model = GainModel::from_spec(&c.contact)?;
            let (radius, info) = model.table(forces, c.contact.gain_mu_max)?;
            let arm = |mu: f64| {
                model
                    .lever_arm(mu)
                    .map_err(|e| BuildError::new("contact.gain_mu_max", e))
            };
            return Ok(Self {
                mu: mu_table,
                radius,
                axis: LeverAxis::Mu,
                radii_m: (arm(0.0)?, arm(info.mu_end)?),
                gain: Some((model, info)),
            });
        }
        let (radius, radii_m) = with_contact(&c.contact, |k| {
            let table = build_radius_table_from_slices(k, forces, &RADIUS_BEDDING)
                .map_err(|e| geometry_error(&c.contact, &e))?;
            let arm = |b: f64| k.lever_arm(b).map_err(|e| geometry_error(&c.contact, &e));
            Ok((table, (arm(0.0)?, arm(1.0)?)))
        })?;
        Ok(Self {
            mu: mu_table,
            radius,
            axis: LeverAxis::Bedding,
            radii_m,
            gain: None,
        })
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::config::LoadedConfig;
    use approx::assert_relative_eq;
    use clampwise_core::units::{Celsius, Newtons, RadPerSec, Ratio};

    #[test]
    fn tables_reproduce_config_values_at_their_sizes() {
        let cfg = LoadedConfig::from_str(crate::DEMO_CONFIG, "d")
            .unwrap()
            .config;
        let t = CoreTables::build(&cfg).unwrap();
        let mu = &cfg.friction.mu;
        assert_eq!(t.mu.x_breakpoints().len(), mu.temperature_c.len());
        assert_eq!(t.mu.y_breakpoints().len(), mu.slip_speed_rad_s.len());
        assert_eq!(
            t.radius.x_breakpoints().len(),
            cfg.radius_table.force_n.len()
        );
        for (i, &tc) in mu.temperature_c.iter().enumerate() {
            for (j, &v) in mu.slip_speed_rad_s.iter().enumerate() {
                let l = t.mu.lookup(Celsius::from_num(tc), RadPerSec::from_num(v));
                assert_eq!(l.value, Ratio::from_num(mu.values[i][j]));
            }
        }
        // Beyond the last breakpoint: the edge value, flagged as clamped from one LSB on.
        let last_t = *t.mu.x_breakpoints().last().unwrap();
        let last_v = *t.mu.y_breakpoints().last().unwrap();
        assert!(!t.mu.lookup(last_t, last_v).clamped);
        assert!(t.mu.lookup(last_t + Celsius::DELTA, last_v).clamped);
        assert!(t.mu.lookup(last_t, last_v + RadPerSec::DELTA).clamped);
        let hot = Celsius::from_num(900);
        let fast = RadPerSec::from_num(100);
        assert_eq!(t.mu.lookup(hot, fast).value, Ratio::from_num(0.23));
        // The radius table against the core's own contact, at both pressure models.
        let (up, uw) = t.radii_m;
        for (b, want) in [(0.0, up), (1.0, uw), (0.5, 0.5 * (up + uw))] {
            let r = t
                .radius
                .lookup(Newtons::from_num(30_000), Ratio::from_num(b))
                .value;
            assert_relative_eq!(r.to_num::<f64>(), want, max_relative = 1e-7);
        }
    }

    #[test]
    fn a_mu_breakpoint_out_of_format_is_named_by_its_key() {
        // I16F16 holds temperatures below 32 768 °C. The validation refuses this value first
        // (outside the core's envelope); the spec is read without it to reach the build step.
        let text = crate::DEMO_CONFIG.replacen("400.0, 500.0]", "400.0, 40000.0]", 1);
        let cfg: DeviceSpec = toml::from_str(&text).unwrap();
        let e = CoreTables::build(&cfg).unwrap_err();
        assert_eq!(e.key, "friction.mu.temperature_c[5]", "{e}");
        assert!(e.message.contains("fixed-point format"), "{e}");
    }
}
