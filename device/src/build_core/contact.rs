//! The core's [`Contact`](CoreContact) built from a config's `[contact]`, and its errors named
//! by config key.

use clampwise_core::geometry::{
    Annulus, ButtonModel, ButtonPad, Contact as CoreContact, Disc, GeometryError, Parameter, Point,
    PolygonPad, SectorPad, Shape as CoreShape,
};

use super::BuildError;
use crate::polygon;
use crate::schema::{ButtonModelSpec, ContactSpec, ShapeSpec};

/// The config key of a core geometry parameter.
fn geometry_key(c: &ContactSpec, p: Parameter) -> String {
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
pub fn geometry_error(c: &ContactSpec, e: &GeometryError) -> BuildError {
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

fn missing(c: &ContactSpec, k: &str) -> BuildError {
    BuildError::new(
        "contact.shape",
        format!("shape '{}' needs contact.{k}", c.shape.name()),
    )
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
    c: &ContactSpec,
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
        ShapeSpec::DrumShoes | ShapeSpec::Band | ShapeSpec::BlockShoes => Err(BuildError::new(
            "contact.shape",
            format!(
                "shape '{}' has no flat or conical face: its torque is not linear in μ",
                c.shape.name()
            ),
        )),
        ShapeSpec::Annulus | ShapeSpec::Cone => {
            let (ri, ro) = radii()?;
            let cone = match c.shape {
                ShapeSpec::Cone => Some(
                    c.half_angle_deg
                        .ok_or_else(|| missing(c, "half_angle_deg"))?
                        .to_radians(),
                ),
                _ => None,
            };
            let shape = CoreShape::Annulus(Annulus::new(ri, ro).map_err(ge)?);
            f(&CoreContact::new(shape, faces, cone).map_err(ge)?)
        }
        ShapeSpec::Sector => {
            let (ri, ro) = radii()?;
            let angle = c
                .sector_angle_deg
                .ok_or_else(|| missing(c, "sector_angle_deg"))?
                .to_radians();
            let disc = Disc::new(ri, ro).map_err(ge)?;
            let pad = SectorPad::new(&disc, ri, ro, angle).map_err(ge)?;
            f(&CoreContact::new(pad, faces, None).map_err(ge)?)
        }
        ShapeSpec::Button => {
            let r = c.pad_radius_m.ok_or_else(|| missing(c, "pad_radius_m"))?;
            let e = c
                .pad_centre_radius_m
                .ok_or_else(|| missing(c, "pad_centre_radius_m"))?;
            let model = match c.button_model.ok_or_else(|| missing(c, "button_model"))? {
                ButtonModelSpec::PublishedTable => ButtonModel::PublishedTable,
                ButtonModelSpec::Integrated => ButtonModel::Integrated,
            };
            let disc = Disc::new(e - r, e + r).map_err(ge)?;
            let pad = ButtonPad::new(&disc, r, e, model).map_err(ge)?;
            f(&CoreContact::new(pad, faces, None).map_err(ge)?)
        }
        ShapeSpec::Polygon => {
            let outline = c
                .vertices_m
                .as_deref()
                .ok_or_else(|| missing(c, "vertices_m"))?;
            let vs: Vec<Point> = outline.iter().map(|p| Point::new(p[0], p[1])).collect();
            let disc = Disc::new(polygon::min_radius(outline), polygon::max_radius(outline))
                .map_err(ge)?;
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
pub fn contact_radii(c: &ContactSpec) -> Result<(f64, f64), BuildError> {
    with_contact(c, |k| {
        let arm = |b: f64| k.lever_arm(b).map_err(|e| geometry_error(c, &e));
        Ok((arm(0.0)?, arm(1.0)?))
    })
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use approx::assert_relative_eq;

    fn contact(shape: ShapeSpec) -> ContactSpec {
        ContactSpec::of_shape(shape, 1)
    }

    #[test]
    fn annulus_check_vector() {
        // [calc: r_uw = (Ro + Ri)/2, r_up = (2/3)(Ro³ − Ri³)/(Ro² − Ri²), Shigley ch. 16]: Ro = 100 mm,
        // Ri = 60 mm → r_uw = 80.000 mm, r_up = 81.667 mm.
        let mut c = contact(ShapeSpec::Annulus);
        c.inner_radius_m = Some(0.06);
        c.outer_radius_m = Some(0.10);
        let (up, uw) = contact_radii(&c).unwrap();
        assert_relative_eq!(uw, 0.080, epsilon = 1e-12);
        assert_relative_eq!(up, 0.081_667, epsilon = 1e-6);
    }

    #[test]
    fn cone_divides_by_sin_alpha() {
        // [pub: Shigley ch. 16] uniform wear T/(μF) = (Do + Di)/(4 sin α).
        let mut c = contact(ShapeSpec::Cone);
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
        // [calc: ∫p·r dA / ∫p dA with p ∝ 1/r] integrated: 0.9885 — kept apart, never tuned to agree.
        let mut c = contact(ShapeSpec::Button);
        c.pad_radius_m = Some(0.03);
        c.pad_centre_radius_m = Some(0.1);
        c.button_model = Some(ButtonModelSpec::PublishedTable);
        assert_relative_eq!(contact_radii(&c).unwrap().1 / 0.1, 0.957, epsilon = 1e-9);
        c.button_model = Some(ButtonModelSpec::Integrated);
        assert_relative_eq!(contact_radii(&c).unwrap().1 / 0.1, 0.9885, epsilon = 1e-4);
    }

    #[test]
    fn polygon_square_against_gauss_legendre() {
        // Reference: the gauss-quad crate's Gauss–Legendre rule (degree 20 per axis) over a
        // square pad, ∫r dA and ∫(1/r) dA.
        use gauss_quad::GaussLegendre;
        let mut c = contact(ShapeSpec::Polygon);
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
        let mut c = contact(ShapeSpec::Button);
        c.pad_radius_m = Some(0.06);
        c.pad_centre_radius_m = Some(0.1);
        c.button_model = Some(ButtonModelSpec::PublishedTable);
        // R/e = 0.6 lies beyond the published table (0 … 0.5).
        let e = contact_radii(&c).unwrap_err();
        assert_eq!(e.key, "contact.pad_radius_m", "{e}");
    }
}
