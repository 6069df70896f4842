//! Config → core: the one place where a loaded [`DeviceConfig`](crate::config::DeviceConfig)
//! becomes the core's fixed-point tables (and, in [`crate::device`], the core's whole
//! `DeviceConfig`).
//!
//! ## Table capacities (const generics of the core) and why lookups stay exact
//!
//! | table | capacity | axes |
//! |---|---|---|
//! | μ(lining temperature, \|slip speed\|) | [`MU_POINTS`] × [`MU_POINTS`] = 8 × 8 | config: 1–8 each |
//! | friction radius r_e(clamp force, bedding) | [`RADIUS_FORCE_POINTS`] × [`RADIUS_BEDDING_POINTS`] = 8 × 2 | config: 1–8 forces; bedding fixed at 0 and 1 |
//!
//! A config table smaller than its capacity is **padded at the top end**: the extra
//! breakpoints sit one LSB apart after the last real one and hold the edge values. Between
//! equal values the interpolation returns that value exactly, so every lookup returns the same
//! bits as a table of the real size would; the only difference is the core's
//! `OUT_OF_RANGE` flag, which a padded axis raises from one LSB beyond the last padding
//! breakpoint instead of from one LSB beyond the last real one — a band of at most 7 LSB
//! (0.11 mK, 0.11 mrad/s, 27 mN), documented and accepted. The firmware emitter
//! ([`crate::emit`]) writes the real sizes.
//!
//! The bedding axis is fixed at the two pressure models, 0 (new, uniform pressure) and 1
//! (bedded, uniform wear): r_e is exactly linear in bedding
//! (`clampwise_core::geometry::pressure`), so two breakpoints carry the whole model, and the
//! core's table builder accepts no bedding outside 0 … 1 to pad with. The radius values come
//! from [`clampwise_core::geometry::build_radius_table`] on the core's own
//! [`Contact`](clampwise_core::geometry::Contact) (see [`contact_radii`]).

use clampwise_core::geometry::{
    Annulus, ButtonModel, ButtonPad, Contact as CoreContact, Disc, GeometryError, Parameter, Point,
    PolygonPad, SectorPad, Shape as CoreShape, build_radius_table,
};
use clampwise_core::table::{Table2, TableError};
use clampwise_core::units::{Celsius, Metres, Newtons, RadPerSec, Ratio};
use fixed::FixedI32;
use fixed::types::extra::{LeEqU32, U8, U16};

use crate::config::{ButtonModelName, Contact, DeviceConfig, Shape};

/// Capacity of each μ table axis (temperature and slip-speed breakpoints).
pub const MU_POINTS: usize = 8;
/// Capacity of the friction-radius table's clamp-force axis.
pub const RADIUS_FORCE_POINTS: usize = 8;
/// Breakpoints of the friction-radius table's bedding axis: 0 (new) and 1 (bedded).
pub const RADIUS_BEDDING_POINTS: usize = 2;
/// The bedding breakpoints.
pub const RADIUS_BEDDING: [f64; RADIUS_BEDDING_POINTS] = [0.0, 1.0];

/// μ(lining temperature °C, |slip speed| rad/s), padded to the fixed capacity.
pub type MuTable = clampwise_core::friction::MuTable<MU_POINTS, MU_POINTS>;
/// r_e(clamp force N, bedding) in m, padded to the fixed capacity.
pub type RadiusTable =
    clampwise_core::geometry::RadiusTable<RADIUS_FORCE_POINTS, RADIUS_BEDDING_POINTS>;

/// A config value the core does not accept, named by its key.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BuildError {
    /// Key path of the value (`contact.inner_radius_m`, `friction.mu.values[2][1]`).
    pub key: String,
    /// What is wrong.
    pub message: String,
}

impl BuildError {
    pub(crate) fn new(key: impl Into<String>, message: impl std::fmt::Display) -> Self {
        Self {
            key: key.into(),
            message: message.to_string(),
        }
    }
}

impl std::fmt::Display for BuildError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: {}", self.key, self.message)
    }
}

impl std::error::Error for BuildError {}

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

fn fixed_of<F: LeEqU32>(key: &str, v: f64) -> Result<FixedI32<F>, BuildError> {
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

/// The config key of a core geometry parameter.
fn geometry_key(c: &Contact, p: Parameter) -> String {
    let k = match p {
        Parameter::InnerRadius | Parameter::DiscInnerRadius => "inner_radius_m",
        Parameter::OuterRadius | Parameter::DiscOuterRadius => "outer_radius_m",
        Parameter::SectorAngle => "sector_angle_deg",
        Parameter::ButtonRadius => "pad_radius_m",
        Parameter::ButtonCentreRadius => "pad_centre_radius_m",
        Parameter::VertexX(i) | Parameter::VertexY(i) | Parameter::Vertex(i) => {
            return format!("contact.vertices_m[{i}]");
        }
        Parameter::Edge(_) | Parameter::Vertices => "vertices_m",
        Parameter::Faces => "faces",
        Parameter::ConeHalfAngle => "half_angle_deg",
        Parameter::ForceBreakpoint(i) => return format!("radius_table.force_n[{i}]"),
        _ => return format!("contact.shape ({})", c.shape.name()),
    };
    format!("contact.{k}")
}

/// A core geometry error, named by the config key it comes from.
pub fn geometry_error(c: &Contact, e: &GeometryError) -> BuildError {
    let p = match *e {
        GeometryError::NotFinite { parameter }
        | GeometryError::Negative { parameter, .. }
        | GeometryError::PadLeavesDisc { parameter, .. }
        | GeometryError::ZeroArea { parameter }
        | GeometryError::BeddingOutOfRange { parameter, .. } => Some(parameter),
        GeometryError::InnerNotBelowOuter { inner, .. } => Some(inner),
        GeometryError::SectorAngleOutOfRange { .. } => Some(Parameter::SectorAngle),
        GeometryError::OutsidePublishedTable { .. } => Some(Parameter::ButtonRadius),
        GeometryError::ConeAngleOutOfRange { .. } => Some(Parameter::ConeHalfAngle),
        GeometryError::ZeroFaces => Some(Parameter::Faces),
        GeometryError::TooFewVertices { .. }
        | GeometryError::SelfIntersecting { .. }
        | GeometryError::RepeatedVertex { .. } => Some(Parameter::Vertices),
        _ => None,
    };
    let key = p.map_or_else(|| "contact".to_string(), |p| geometry_key(c, p));
    BuildError::new(key, e)
}

fn missing(c: &Contact, k: &str) -> BuildError {
    BuildError::new(
        "contact.shape",
        format!("shape '{}' needs contact.{k}", c.shape.name()),
    )
}

/// Smallest distance from the disc axis (origin) to a polygon's outline, m.
fn polygon_min_radius(vs: &[Point]) -> f64 {
    let n = vs.len();
    (0..n)
        .filter_map(|i| Some((vs.get(i)?, vs.get((i + 1) % n)?)))
        .map(|(a, b)| {
            let (dx, dy) = (b.x_m - a.x_m, b.y_m - a.y_m);
            let len2 = dx * dx + dy * dy;
            let t = if len2 > 0.0 {
                (-(a.x_m * dx + a.y_m * dy) / len2).clamp(0.0, 1.0)
            } else {
                0.0
            };
            (a.x_m + t * dx).hypot(a.y_m + t * dy)
        })
        .fold(f64::INFINITY, f64::min)
}

/// Build the core's [`Contact`](CoreContact) of a config and hand it to `f` (a polygon pad
/// borrows its vertices, which live only for this call).
///
/// The rubbing band the core checks pads against is taken from the pad itself: Ri…Ro for an
/// annulus, sector or cone; e − R … e + R for a button; the smallest and largest distance of
/// the outline from the axis for a polygon.
///
/// # Errors
/// [`BuildError`] naming the contact key the core rejected.
pub fn with_contact<T>(
    c: &Contact,
    f: impl FnOnce(&CoreContact<'_>) -> Result<T, BuildError>,
) -> Result<T, BuildError> {
    let ge = |e: GeometryError| geometry_error(c, &e);
    let faces = u8::try_from(c.faces)
        .map_err(|_| BuildError::new("contact.faces", "must be within 1 … 255"))?;
    let radii = || -> Result<(f64, f64), BuildError> {
        Ok((
            c.inner_radius_m
                .ok_or_else(|| missing(c, "inner_radius_m"))?,
            c.outer_radius_m
                .ok_or_else(|| missing(c, "outer_radius_m"))?,
        ))
    };
    match c.shape {
        Shape::Annulus | Shape::Cone => {
            let (ri, ro) = radii()?;
            let cone = match c.shape {
                Shape::Cone => Some(
                    c.half_angle_deg
                        .ok_or_else(|| missing(c, "half_angle_deg"))?
                        .to_radians(),
                ),
                _ => None,
            };
            let shape = CoreShape::Annulus(Annulus::new(ri, ro).map_err(ge)?);
            f(&CoreContact::new(shape, faces, cone).map_err(ge)?)
        }
        Shape::Sector => {
            let (ri, ro) = radii()?;
            let angle = c
                .sector_angle_deg
                .ok_or_else(|| missing(c, "sector_angle_deg"))?
                .to_radians();
            let disc = Disc::new(ri, ro).map_err(ge)?;
            let pad = SectorPad::new(&disc, ri, ro, angle).map_err(ge)?;
            f(&CoreContact::new(pad, faces, None).map_err(ge)?)
        }
        Shape::Button => {
            let r = c.pad_radius_m.ok_or_else(|| missing(c, "pad_radius_m"))?;
            let e = c
                .pad_centre_radius_m
                .ok_or_else(|| missing(c, "pad_centre_radius_m"))?;
            let model = match c.button_model.ok_or_else(|| missing(c, "button_model"))? {
                ButtonModelName::PublishedTable => ButtonModel::PublishedTable,
                ButtonModelName::Integrated => ButtonModel::Integrated,
            };
            let disc = Disc::new(e - r, e + r).map_err(ge)?;
            let pad = ButtonPad::new(&disc, r, e, model).map_err(ge)?;
            f(&CoreContact::new(pad, faces, None).map_err(ge)?)
        }
        Shape::Polygon => {
            let vs: Vec<Point> = c
                .vertices_m
                .as_deref()
                .ok_or_else(|| missing(c, "vertices_m"))?
                .iter()
                .map(|p| Point::new(p[0], p[1]))
                .collect();
            let r_max = vs.iter().map(|p| p.x_m.hypot(p.y_m)).fold(0.0, f64::max);
            let disc = Disc::new(polygon_min_radius(&vs), r_max).map_err(ge)?;
            let pad = PolygonPad::new(&disc, &vs).map_err(ge)?;
            f(&CoreContact::new(pad, faces, None).map_err(ge)?)
        }
    }
}

/// Lever arm per face (m) of a config's contact under uniform pressure (bedding 0) and
/// uniform wear (bedding 1), from `clampwise_core::geometry`.
///
/// # Errors
/// As [`with_contact`].
///
/// ```
/// use clampwise_device::build_core::contact_radii;
/// use clampwise_device::config::LoadedConfig;
/// let cfg = LoadedConfig::from_str(clampwise_device::DEMO_CONFIG, "demo.toml").unwrap();
/// let (up, uw) = contact_radii(&cfg.config.contact).unwrap();
/// // Demo sector pad 0.52 … 0.68 m [pub: Shigley ch. 16]: r_uw = (Ro + Ri)/2.
/// assert!((uw - 0.60).abs() < 1e-12 && up > uw);
/// ```
pub fn contact_radii(c: &Contact) -> Result<(f64, f64), BuildError> {
    with_contact(c, |k| {
        let arm = |b: f64| k.lever_arm(b).map_err(|e| geometry_error(c, &e));
        Ok((arm(0.0)?, arm(1.0)?))
    })
}

impl CoreTables {
    /// Build the tables of a config whose shape checks have passed.
    ///
    /// # Errors
    /// [`BuildError`] naming the key whose value the core rejects or that does not fit the
    /// fixed-point format.
    pub fn build(c: &DeviceConfig) -> Result<Self, BuildError> {
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
        let mu_table = Table2::new(tx, vy, z).map_err(|e| table_error("friction.mu", e))?;

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

    fn contact(shape: Shape) -> Contact {
        Contact {
            shape,
            faces: 1,
            inner_radius_m: None,
            outer_radius_m: None,
            sector_angle_deg: None,
            pad_radius_m: None,
            pad_centre_radius_m: None,
            button_model: None,
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
        let (up, uw) = contact_radii(&c).unwrap();
        assert_relative_eq!(uw, 0.080, epsilon = 1e-12);
        assert_relative_eq!(up, 0.081_667, epsilon = 1e-6);
    }

    #[test]
    fn cone_divides_by_sin_alpha() {
        // [pub: Shigley ch. 16] uniform wear T/(μF) = (Do + Di)/(4 sin α).
        let mut c = contact(Shape::Cone);
        c.inner_radius_m = Some(0.08);
        c.outer_radius_m = Some(0.10);
        c.half_angle_deg = Some(12.0);
        let (_, uw) = contact_radii(&c).unwrap();
        assert_relative_eq!(
            uw,
            0.36 / (4.0 * 12f64.to_radians().sin()),
            max_relative = 1e-12
        );
    }

    #[test]
    fn button_models_are_both_offered() {
        // [mem: Shigley ch. 16, after Fazekas] published δ(R/e = 0.3) = 0.957; [calc]
        // REFERENCES.md integrated p ∝ 1/r: 0.9885 — kept apart, never tuned to agree.
        let mut c = contact(Shape::Button);
        c.pad_radius_m = Some(0.03);
        c.pad_centre_radius_m = Some(0.1);
        c.button_model = Some(ButtonModelName::PublishedTable);
        assert_relative_eq!(contact_radii(&c).unwrap().1 / 0.1, 0.957, epsilon = 1e-9);
        c.button_model = Some(ButtonModelName::Integrated);
        assert_relative_eq!(contact_radii(&c).unwrap().1 / 0.1, 0.9885, epsilon = 1e-4);
    }

    #[test]
    fn polygon_square_against_gauss_legendre() {
        // Reference: the gauss-quad crate's Gauss–Legendre rule (degree 20 per axis) over a
        // square pad, ∫r dA and ∫(1/r) dA.
        use gauss_quad::GaussLegendre;
        let mut c = contact(Shape::Polygon);
        c.vertices_m = Some(vec![[0.5, -0.05], [0.6, -0.05], [0.6, 0.05], [0.5, 0.05]]);
        let (up, uw) = contact_radii(&c).unwrap();
        let gl = GaussLegendre::new(std::num::NonZeroUsize::new(20).unwrap());
        let int = |f: &dyn Fn(f64) -> f64| {
            gl.integrate(0.5, 0.6, |x| gl.integrate(-0.05, 0.05, |y| f(x.hypot(y))))
        };
        let area = 0.01;
        assert_relative_eq!(up, int(&|r| r) / area, max_relative = 1e-10);
        assert_relative_eq!(uw, area / int(&|r| 1.0 / r), max_relative = 1e-10);
    }

    #[test]
    fn geometry_errors_name_the_config_key() {
        let mut c = contact(Shape::Button);
        c.pad_radius_m = Some(0.06);
        c.pad_centre_radius_m = Some(0.1);
        c.button_model = Some(ButtonModelName::PublishedTable);
        // R/e = 0.6 lies beyond the published table (0 … 0.5).
        let e = contact_radii(&c).unwrap_err();
        assert_eq!(e.key, "contact.pad_radius_m", "{e}");
    }

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
