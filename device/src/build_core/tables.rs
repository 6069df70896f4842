//! The μ table and the friction-radius table, padded to the fixed capacities (see the parent
//! module for why the padding keeps every lookup exact).

use clampwise_core::geometry::build_radius_table;
use clampwise_core::table::{Table2, TableError};
use clampwise_core::units::{Celsius, Metres, Newtons, RadPerSec, Ratio};
use fixed::FixedI32;
use fixed::types::extra::{LeEqU32, U8, U16};

use super::contact::{geometry_error, with_contact};
use super::{BuildError, MU_POINTS, MuTable, RADIUS_BEDDING, RADIUS_FORCE_POINTS, RadiusTable};
use crate::schema::DeviceSpec;

/// The fixed-point tables of one device, with their real (unpadded) sizes.
#[derive(Debug, Clone)]
pub struct CoreTables {
    /// μ table (padded).
    pub mu: MuTable,
    /// Number of real temperature breakpoints.
    pub mu_temperatures: usize,
    /// Number of real slip-speed breakpoints.
    pub mu_speeds: usize,
    /// Friction-radius table (padded in force; bedding 0 and 1).
    pub radius: RadiusTable,
    /// Number of real force breakpoints.
    pub radius_forces: usize,
    /// Lever arm per face (m) under uniform pressure and under uniform wear, from the core's
    /// geometry; for a cone, r_e / sin α.
    pub radii_m: (f64, f64),
}

pub(crate) fn fixed_of<F: LeEqU32>(key: &str, v: f64) -> Result<FixedI32<F>, BuildError> {
    if v.is_finite()
        && let Some(x) = FixedI32::<F>::checked_from_num(v)
    {
        return Ok(x);
    }
    Err(BuildError::new(
        key,
        format!(
            "{v} does not fit the core's fixed-point format (range {} … {})",
            FixedI32::<F>::MIN,
            FixedI32::<F>::MAX
        ),
    ))
}

/// Real breakpoints, then padding one LSB apart, so the axis stays strictly increasing.
fn padded_axis<F: LeEqU32, const N: usize>(
    key: &str,
    xs: &[f64],
) -> Result<[FixedI32<F>; N], BuildError> {
    if xs.is_empty() || xs.len() > N {
        return Err(BuildError::new(
            key,
            format!("needs 1 … {N} breakpoints, has {}", xs.len()),
        ));
    }
    let mut out = [FixedI32::<F>::ZERO; N];
    let mut last = FixedI32::<F>::ZERO;
    for (i, o) in out.iter_mut().enumerate() {
        *o = match xs.get(i) {
            Some(&x) => fixed_of(&format!("{key}[{i}]"), x)?,
            None => FixedI32::from_bits(last.to_bits().checked_add(1).ok_or_else(|| {
                BuildError::new(
                    key,
                    "last breakpoint is at the top of the fixed-point range",
                )
            })?),
        };
        last = *o;
    }
    Ok(out)
}

fn table_error(key: &str, e: TableError) -> BuildError {
    BuildError::new(key, e)
}

impl CoreTables {
    /// Build the tables of a config whose shape checks have passed.
    ///
    /// # Errors
    /// [`BuildError`] naming the key whose value the core rejects or that does not fit the
    /// fixed-point format.
    pub fn build(c: &DeviceSpec) -> Result<Self, BuildError> {
        let mu = &c.friction.mu;
        let (nt, nv) = (mu.temperature_c.len(), mu.slip_speed_rad_s.len());
        let tx = padded_axis::<U16, MU_POINTS>("friction.mu.temperature_c", &mu.temperature_c)?;
        let vy =
            padded_axis::<U16, MU_POINTS>("friction.mu.slip_speed_rad_s", &mu.slip_speed_rad_s)?;
        let mut z = [[Ratio::ZERO; MU_POINTS]; MU_POINTS];
        for (i, row) in z.iter_mut().enumerate() {
            let si = i.min(nt - 1);
            for (j, cell) in row.iter_mut().enumerate() {
                let sj = j.min(nv - 1);
                let v = mu
                    .values
                    .get(si)
                    .and_then(|r| r.get(sj))
                    .copied()
                    .unwrap_or(f64::NAN);
                *cell = fixed_of(&format!("friction.mu.values[{si}][{sj}]"), v)?;
            }
        }
        let mu_table = Table2::from_bits(tx, vy, z).map_err(|e| table_error("friction.mu", e))?;

        let rt = &c.radius_table;
        let nf = rt.force_n.len();
        let fx = padded_axis::<U8, RADIUS_FORCE_POINTS>("radius_table.force_n", &rt.force_n)?;
        // Exact: every padded breakpoint is a multiple of the Newtons LSB, so the builder's
        // round-to-nearest gives back the same bits.
        let forces = fx.map(|f: Newtons| f.to_num::<f64>());
        let (radius, radii_m) = with_contact(&c.contact, |k| {
            let table = build_radius_table(k, &forces, &RADIUS_BEDDING)
                .map_err(|e| geometry_error(&c.contact, &e))?;
            let arm = |b: f64| k.lever_arm(b).map_err(|e| geometry_error(&c.contact, &e));
            Ok((table, (arm(0.0)?, arm(1.0)?)))
        })?;
        Ok(Self {
            mu: mu_table,
            mu_temperatures: nt,
            mu_speeds: nv,
            radius,
            radius_forces: nf,
            radii_m,
        })
    }

    /// Whether (T, |v|) lies outside the real μ breakpoints (the lookup then holds the edge).
    pub fn mu_clamped(&self, t: Celsius, v_abs: RadPerSec) -> bool {
        let outside = |x: FixedI32<U16>, axis: &[FixedI32<U16>]| {
            axis.first().is_some_and(|&lo| x < lo) || axis.last().is_some_and(|&hi| x > hi)
        };
        outside(t, self.mu_temperature_axis()) || outside(v_abs, self.mu_speed_axis())
    }

    /// Whether F lies outside the real force breakpoints of the radius table.
    pub fn radius_clamped(&self, f: Newtons) -> bool {
        let fx = self.radius_force_axis();
        fx.first().is_some_and(|&lo| f < lo) || fx.last().is_some_and(|&hi| f > hi)
    }

    /// The real temperature breakpoints, °C.
    pub fn mu_temperature_axis(&self) -> &[Celsius] {
        self.mu
            .x_breakpoints()
            .get(..self.mu_temperatures)
            .unwrap_or(&[])
    }

    /// The real slip-speed breakpoints, rad/s.
    pub fn mu_speed_axis(&self) -> &[RadPerSec] {
        self.mu.y_breakpoints().get(..self.mu_speeds).unwrap_or(&[])
    }

    /// The real μ values, row per temperature.
    pub fn mu_rows(&self) -> impl Iterator<Item = &[Ratio]> {
        self.mu
            .values()
            .iter()
            .take(self.mu_temperatures)
            .map(|r| r.get(..self.mu_speeds).unwrap_or(&[]))
    }

    /// The real force breakpoints of the radius table, N.
    pub fn radius_force_axis(&self) -> &[Newtons] {
        self.radius
            .x_breakpoints()
            .get(..self.radius_forces)
            .unwrap_or(&[])
    }

    /// The bedding breakpoints of the radius table (0 and 1).
    pub fn radius_bedding_axis(&self) -> &[Ratio] {
        self.radius.y_breakpoints()
    }

    /// The real radius values, m, row per force.
    pub fn radius_rows(&self) -> impl Iterator<Item = &[Metres]> {
        self.radius
            .values()
            .iter()
            .take(self.radius_forces)
            .map(|r| r.as_slice())
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::config::LoadedConfig;
    use approx::assert_relative_eq;

    #[test]
    fn padded_tables_reproduce_config_values() {
        let cfg = LoadedConfig::from_str(crate::DEMO_CONFIG, "d")
            .unwrap()
            .config;
        let t = CoreTables::build(&cfg).unwrap();
        let mu = &cfg.friction.mu;
        for (i, &tc) in mu.temperature_c.iter().enumerate() {
            for (j, &v) in mu.slip_speed_rad_s.iter().enumerate() {
                let l = t.mu.lookup(Celsius::from_num(tc), RadPerSec::from_num(v));
                assert_eq!(l.value, Ratio::from_num(mu.values[i][j]));
            }
        }
        // Beyond the real last breakpoint: the edge value, flagged as clamped by the real range.
        let hot = Celsius::from_num(900);
        let fast = RadPerSec::from_num(100);
        assert_eq!(t.mu.lookup(hot, fast).value, Ratio::from_num(0.23));
        assert!(t.mu.lookup(hot, fast).clamped);
        assert!(t.mu_clamped(hot, fast));
        assert!(!t.mu_clamped(Celsius::from_num(250), RadPerSec::from_num(3)));
        assert_eq!(t.mu_rows().count(), 6);
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
}
