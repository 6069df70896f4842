//! Config → core: the one place where a [`DeviceConfig`] becomes the core's fixed-point tables.
//!
//! The μ table and the friction-radius table r_e(F, bedding) are built as
//! [`clampwise_core::table::Table2`] with fixed capacity ([`MU_MAX_POINTS`] ×
//! [`MU_MAX_POINTS`], [`RADIUS_MAX_FORCE_POINTS`] × [`RADIUS_MAX_BEDDING_POINTS`]). A smaller
//! table from the config is padded: extra breakpoints one LSB apart after the last real one,
//! holding the edge value, so every lookup returns exactly what a table of the real size would
//! (the value between equal end values is that value); whether an input lay outside the *real*
//! breakpoints is decided here from the real range, see [`CoreTables::mu_clamped`].
//!
//! **Temporary part.** The effective radius of the two pressure models comes from
//! [`provisional_radii`]: closed forms for annulus, sector and cone [pub: Shigley ch. 16], a
//! midpoint grid for button and polygon pads. It stands in until `clampwise_core::geometry`
//! lands; the lead swaps the call for the core's geometry in this file only.

use clampwise_core::table::{Table2, TableError};
use clampwise_core::units::{Celsius, Metres, Newtons, RadPerSec, Ratio};
use fixed::FixedI32;
use fixed::types::extra::{LeEqU32, U8, U16, U24, U30};

use crate::config::{
    Contact, DeviceConfig, MU_MAX_POINTS, RADIUS_MAX_BEDDING_POINTS, RADIUS_MAX_FORCE_POINTS,
    Shape, polygon_contains_axis,
};

/// μ(lining temperature °C, |slip speed| rad/s), padded to the fixed capacity.
pub type MuTable = Table2<U16, U16, U30, MU_MAX_POINTS, MU_MAX_POINTS>;
/// r_e(clamp force N, bedding) in m, padded to the fixed capacity.
pub type RadiusTable = Table2<U8, U30, U24, RADIUS_MAX_FORCE_POINTS, RADIUS_MAX_BEDDING_POINTS>;

/// A config value that does not fit the core's fixed-point formats.
#[derive(Debug, Clone, PartialEq)]
pub struct BuildError {
    /// Key path of the value.
    pub key: String,
    /// What is wrong.
    pub message: String,
}

/// The fixed-point tables of one device, with their real (unpadded) sizes.
#[derive(Debug, Clone)]
pub struct CoreTables {
    /// μ table (padded).
    pub mu: MuTable,
    /// Number of real temperature breakpoints.
    pub mu_temperatures: usize,
    /// Number of real slip-speed breakpoints.
    pub mu_speeds: usize,
    /// Friction-radius table (padded).
    pub radius: RadiusTable,
    /// Number of real force breakpoints.
    pub radius_forces: usize,
    /// Number of real bedding breakpoints.
    pub radius_beddings: usize,
    /// Effective radius (m) under uniform pressure and under uniform wear, per face; for a cone,
    /// per unit axial force (r/sin α).
    pub radii_m: (f64, f64),
}

fn fixed_of<F: LeEqU32>(key: &str, v: f64) -> Result<FixedI32<F>, BuildError> {
    if v.is_finite()
        && let Some(x) = FixedI32::<F>::checked_from_num(v)
    {
        return Ok(x);
    }
    Err(BuildError {
        key: key.to_string(),
        message: format!(
            "{v} does not fit the core's fixed-point format (range {} … {})",
            FixedI32::<F>::MIN,
            FixedI32::<F>::MAX
        ),
    })
}

/// Real breakpoints, then padding one LSB apart, so the axis stays strictly increasing.
fn padded_axis<F: LeEqU32, const N: usize>(
    key: &str,
    xs: &[f64],
) -> Result<[FixedI32<F>; N], BuildError> {
    let mut out = [FixedI32::<F>::ZERO; N];
    let mut last = None;
    for (i, o) in out.iter_mut().enumerate() {
        *o = match xs.get(i) {
            Some(&x) => fixed_of(&format!("{key}[{i}]"), x)?,
            None => {
                let prev: FixedI32<F> = last.unwrap_or(FixedI32::ZERO);
                FixedI32::from_bits(prev.to_bits().checked_add(1).ok_or_else(|| BuildError {
                    key: key.to_string(),
                    message: "last breakpoint is at the top of the fixed-point range".into(),
                })?)
            }
        };
        last = Some(*o);
    }
    Ok(out)
}

fn table_error(key: &str, e: TableError) -> BuildError {
    BuildError {
        key: key.to_string(),
        message: e.to_string(),
    }
}

impl CoreTables {
    /// Build the tables of a config whose shape checks have passed.
    ///
    /// # Errors
    /// [`BuildError`] naming the key whose value does not fit the fixed-point format.
    pub fn build(c: &DeviceConfig) -> Result<Self, BuildError> {
        let mu = &c.friction.mu;
        let (nt, nv) = (mu.temperature_c.len(), mu.slip_speed_rad_s.len());
        if nt == 0 || nv == 0 || nt > MU_MAX_POINTS || nv > MU_MAX_POINTS {
            return Err(BuildError {
                key: "friction.mu".into(),
                message: "table size out of range".into(),
            });
        }
        let tx = padded_axis::<U16, MU_MAX_POINTS>("friction.mu.temperature_c", &mu.temperature_c)?;
        let vy = padded_axis::<U16, MU_MAX_POINTS>(
            "friction.mu.slip_speed_rad_s",
            &mu.slip_speed_rad_s,
        )?;
        let mut z = [[Ratio::ZERO; MU_MAX_POINTS]; MU_MAX_POINTS];
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
        let mu_table = Table2::new(tx, vy, z).map_err(|e| table_error("friction.mu", e))?;

        let rt = &c.radius_table;
        let (nf, nb) = (rt.force_n.len(), rt.bedding_ratio.len());
        if nf == 0 || nb == 0 || nf > RADIUS_MAX_FORCE_POINTS || nb > RADIUS_MAX_BEDDING_POINTS {
            return Err(BuildError {
                key: "radius_table".into(),
                message: "table size out of range".into(),
            });
        }
        let fx = padded_axis::<U8, RADIUS_MAX_FORCE_POINTS>("radius_table.force_n", &rt.force_n)?;
        let by = padded_axis::<U30, RADIUS_MAX_BEDDING_POINTS>(
            "radius_table.bedding_ratio",
            &rt.bedding_ratio,
        )?;
        let radii = provisional_radii(&c.contact).map_err(|message| BuildError {
            key: "contact".into(),
            message,
        })?;
        let mut rz = [[Metres::ZERO; RADIUS_MAX_BEDDING_POINTS]; RADIUS_MAX_FORCE_POINTS];
        for row in rz.iter_mut() {
            for (j, cell) in row.iter_mut().enumerate() {
                let b = rt.bedding_ratio.get(j.min(nb - 1)).copied().unwrap_or(0.0);
                // Torque is linear in the pressure distribution, so blending the two models'
                // pressures by bedding blends their radii linearly.
                *cell = fixed_of("contact", (1.0 - b) * radii.0 + b * radii.1)?;
            }
        }
        let radius = Table2::new(fx, by, rz).map_err(|e| table_error("radius_table", e))?;
        Ok(Self {
            mu: mu_table,
            mu_temperatures: nt,
            mu_speeds: nv,
            radius,
            radius_forces: nf,
            radius_beddings: nb,
            radii_m: radii,
        })
    }

    /// Whether (T, |v|) lies outside the real μ breakpoints (the lookup then holds the edge).
    pub fn mu_clamped(&self, t: Celsius, v_abs: RadPerSec) -> bool {
        let tx = self.mu.x_breakpoints();
        let vy = self.mu.y_breakpoints();
        let outside = |x: FixedI32<U16>, axis: &[FixedI32<U16>], n: usize| {
            axis.first().is_some_and(|&lo| x < lo) || axis.get(n - 1).is_some_and(|&hi| x > hi)
        };
        outside(t, tx, self.mu_temperatures) || outside(v_abs, vy, self.mu_speeds)
    }

    /// Whether F lies outside the real force breakpoints of the radius table.
    pub fn radius_clamped(&self, f: Newtons) -> bool {
        let fx = self.radius.x_breakpoints();
        fx.first().is_some_and(|&lo| f < lo)
            || fx.get(self.radius_forces - 1).is_some_and(|&hi| f > hi)
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

    /// The real bedding breakpoints of the radius table.
    pub fn radius_bedding_axis(&self) -> &[Ratio] {
        self.radius
            .y_breakpoints()
            .get(..self.radius_beddings)
            .unwrap_or(&[])
    }

    /// The real radius values, m, row per force.
    pub fn radius_rows(&self) -> impl Iterator<Item = &[Metres]> {
        self.radius
            .values()
            .iter()
            .take(self.radius_forces)
            .map(|r| r.get(..self.radius_beddings).unwrap_or(&[]))
    }
}

/// TEMPORARY (until `clampwise_core::geometry`): effective friction radius, m, of one face
/// under uniform pressure and under uniform wear (p·r = const).
///
/// Annulus and sector [pub: Shigley ch. 16]: r_up = ⅔(Ro³−Ri³)/(Ro²−Ri²), r_uw = (Ro+Ri)/2;
/// the sector angle cancels out. Cone [pub: Shigley ch. 16]: the same divided by sin α (torque
/// per unit axial force). Button and polygon: midpoint rule on a 600 × 600 grid over the pad's
/// bounding box, r_up = ∫r dA / A, r_uw = A / ∫(1/r) dA; relative error below 10⁻⁴ [calc:
/// against the closed-form annulus in the tests].
///
/// # Errors
/// A message when the shape's keys are missing (validation reports them first).
///
/// ```
/// use clampwise_sim::build_core::provisional_radii;
/// use clampwise_sim::config::LoadedConfig;
/// let cfg = LoadedConfig::from_str(include_str!("../configs/demo-hoist-brake.toml"), "d").unwrap();
/// let (up, uw) = provisional_radii(&cfg.config.contact).unwrap();
/// assert!((uw - 0.60).abs() < 1e-12 && up > uw);
/// ```
pub fn provisional_radii(c: &Contact) -> Result<(f64, f64), String> {
    let missing = |k: &str| format!("shape '{}' needs {k}", c.shape.name());
    match c.shape {
        Shape::Annulus | Shape::Sector | Shape::Cone => {
            let ri = c.inner_radius_m.ok_or_else(|| missing("inner_radius_m"))?;
            let ro = c.outer_radius_m.ok_or_else(|| missing("outer_radius_m"))?;
            let up = 2.0 / 3.0 * (ro.powi(3) - ri.powi(3)) / (ro * ro - ri * ri);
            let uw = 0.5 * (ro + ri);
            if c.shape == Shape::Cone {
                let a = c
                    .half_angle_deg
                    .ok_or_else(|| missing("half_angle_deg"))?
                    .to_radians();
                Ok((up / a.sin(), uw / a.sin()))
            } else {
                Ok((up, uw))
            }
        }
        Shape::Button => {
            let r = c.pad_radius_m.ok_or_else(|| missing("pad_radius_m"))?;
            let e = c
                .pad_centre_radius_m
                .ok_or_else(|| missing("pad_centre_radius_m"))?;
            Ok(grid_radii([e - r, -r], [e + r, r], |x, y| {
                (x - e).powi(2) + y * y <= r * r
            }))
        }
        Shape::Polygon => {
            let vs = c
                .vertices_m
                .as_deref()
                .ok_or_else(|| missing("vertices_m"))?;
            if vs.len() < 3 || polygon_contains_axis(vs) {
                return Err("polygon outline unusable".into());
            }
            let (mut lo, mut hi) = ([f64::MAX; 2], [f64::MIN; 2]);
            for p in vs {
                lo = [lo[0].min(p[0]), lo[1].min(p[1])];
                hi = [hi[0].max(p[0]), hi[1].max(p[1])];
            }
            Ok(grid_radii(lo, hi, |x, y| point_in_polygon(vs, x, y)))
        }
    }
}

fn grid_radii(lo: [f64; 2], hi: [f64; 2], inside: impl Fn(f64, f64) -> bool) -> (f64, f64) {
    const N: u32 = 600;
    let (dx, dy) = (
        (hi[0] - lo[0]) / f64::from(N),
        (hi[1] - lo[1]) / f64::from(N),
    );
    let (mut area, mut r1, mut inv) = (0.0, 0.0, 0.0);
    for i in 0..N {
        let x = lo[0] + (f64::from(i) + 0.5) * dx;
        for j in 0..N {
            let y = lo[1] + (f64::from(j) + 0.5) * dy;
            if inside(x, y) {
                let r = x.hypot(y);
                area += 1.0;
                r1 += r;
                inv += 1.0 / r;
            }
        }
    }
    (r1 / area, area / inv)
}

/// Even-odd rule.
fn point_in_polygon(vs: &[[f64; 2]], x: f64, y: f64) -> bool {
    let mut inside = false;
    for (b, a) in crate::config::edges(vs) {
        if (a[1] > y) != (b[1] > y) && x < (b[0] - a[0]) * (y - a[1]) / (b[1] - a[1]) + a[0] {
            inside = !inside;
        }
    }
    inside
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::config::LoadedConfig;
    use approx::assert_relative_eq;

    const DEMO: &str = include_str!("../configs/demo-hoist-brake.toml");

    fn contact(shape: Shape) -> Contact {
        Contact {
            shape,
            faces: 1,
            inner_radius_m: None,
            outer_radius_m: None,
            sector_angle_deg: None,
            pad_radius_m: None,
            pad_centre_radius_m: None,
            vertices_m: None,
            half_angle_deg: None,
            radius_tolerance_ratio: 0.0,
        }
    }

    #[test]
    fn annulus_check_vector() {
        // [calc] REFERENCES.md: Ro = 100 mm, Ri = 60 mm → r_uw = 80.000 mm, r_up = 81.667 mm.
        let mut c = contact(Shape::Annulus);
        c.inner_radius_m = Some(0.06);
        c.outer_radius_m = Some(0.10);
        let (up, uw) = provisional_radii(&c).unwrap();
        assert_relative_eq!(uw, 0.080, epsilon = 1e-12);
        assert_relative_eq!(up, 0.081_667, epsilon = 1e-6);
    }

    #[test]
    fn polygon_grid_against_gauss_legendre() {
        // Reference: the gauss-quad crate's Gauss–Legendre rule (degree 20 per axis) over a
        // square pad, ∫r dA and ∫(1/r) dA.
        use gauss_quad::GaussLegendre;
        let mut c = contact(Shape::Polygon);
        c.vertices_m = Some(vec![[0.5, -0.05], [0.6, -0.05], [0.6, 0.05], [0.5, 0.05]]);
        let (up, uw) = provisional_radii(&c).unwrap();
        let gl = GaussLegendre::new(std::num::NonZeroUsize::new(20).unwrap());
        let int = |f: &dyn Fn(f64) -> f64| {
            gl.integrate(0.5, 0.6, |x| gl.integrate(-0.05, 0.05, |y| f(x.hypot(y))))
        };
        let area = 0.01;
        assert_relative_eq!(up, int(&|r| r) / area, max_relative = 1e-5);
        assert_relative_eq!(uw, area / int(&|r| 1.0 / r), max_relative = 1e-5);
    }

    #[test]
    fn button_grid_against_integrated_model() {
        // [calc] REFERENCES.md: direct integration of p ∝ 1/r over a circle, R/e = 0.3 →
        // δ = r_e/e = 0.9885.
        let mut c = contact(Shape::Button);
        c.pad_radius_m = Some(0.03);
        c.pad_centre_radius_m = Some(0.1);
        let (_, uw) = provisional_radii(&c).unwrap();
        assert_relative_eq!(uw / 0.1, 0.9885, epsilon = 2e-4);
    }

    #[test]
    fn padded_tables_reproduce_config_values() {
        let cfg = LoadedConfig::from_str(DEMO, "d").unwrap().config;
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
        assert!(t.mu_clamped(hot, fast));
        assert!(!t.mu_clamped(Celsius::from_num(250), RadPerSec::from_num(3)));
        assert_eq!(t.mu_rows().count(), 6);
        assert_eq!(t.radius_bedding_axis().len(), 2);
    }
}
