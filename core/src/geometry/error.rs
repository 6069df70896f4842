//! Why a contact geometry could not be built: one error variant per kind of mistake, each naming
//! the offending parameter by its configuration key.

use core::fmt;

use crate::table::TableError;

/// A geometry parameter, named as in a configuration file (SI units in the key).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Parameter {
    /// `disc.inner_radius_m`: inner edge of the disc's rubbing band.
    DiscInnerRadius,
    /// `disc.outer_radius_m`: outer edge of the disc's rubbing band.
    DiscOuterRadius,
    /// `inner_radius_m`: inner radius of an annulus or sector pad.
    InnerRadius,
    /// `outer_radius_m`: outer radius of an annulus or sector pad.
    OuterRadius,
    /// `angle_rad`: the angle a sector pad spans.
    SectorAngle,
    /// `radius_m`: radius R of a circular (button) pad.
    ButtonRadius,
    /// `centre_radius_m`: distance e from the disc axis to a button pad's centre.
    ButtonCentreRadius,
    /// `vertices[i].x_m` of a polygon pad.
    VertexX(usize),
    /// `vertices[i].y_m` of a polygon pad.
    VertexY(usize),
    /// `vertices[i]` of a polygon pad (the point as a whole).
    Vertex(usize),
    /// Edge `i` of a polygon pad, from `vertices[i]` to the next vertex.
    Edge(usize),
    /// `vertices`: a polygon pad as a whole.
    Vertices,
    /// `faces`: number of friction faces.
    Faces,
    /// `cone_half_angle_rad`: half-angle of a cone contact.
    ConeHalfAngle,
    /// `bedding`: bedding fraction, 0 (new) ..= 1 (bedded in).
    Bedding,
    /// `clamp_force_breakpoints_n[i]` of a friction-radius table.
    ForceBreakpoint(usize),
    /// `bedding_breakpoints[i]` of a friction-radius table.
    BeddingBreakpoint(usize),
}

impl fmt::Display for Parameter {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::DiscInnerRadius => f.write_str("disc.inner_radius_m"),
            Self::DiscOuterRadius => f.write_str("disc.outer_radius_m"),
            Self::InnerRadius => f.write_str("inner_radius_m"),
            Self::OuterRadius => f.write_str("outer_radius_m"),
            Self::SectorAngle => f.write_str("angle_rad"),
            Self::ButtonRadius => f.write_str("radius_m"),
            Self::ButtonCentreRadius => f.write_str("centre_radius_m"),
            Self::VertexX(i) => write!(f, "vertices[{i}].x_m"),
            Self::VertexY(i) => write!(f, "vertices[{i}].y_m"),
            Self::Vertex(i) => write!(f, "vertices[{i}]"),
            Self::Edge(i) => write!(f, "edge {i} (from vertices[{i}] to the next vertex)"),
            Self::Vertices => f.write_str("vertices"),
            Self::Faces => f.write_str("faces"),
            Self::ConeHalfAngle => f.write_str("cone_half_angle_rad"),
            Self::Bedding => f.write_str("bedding"),
            Self::ForceBreakpoint(i) => write!(f, "clamp_force_breakpoints_n[{i}]"),
            Self::BeddingBreakpoint(i) => write!(f, "bedding_breakpoints[{i}]"),
        }
    }
}

/// Why a contact geometry (or its friction-radius table) could not be built.
///
/// Every constructor in [`crate::geometry`] validates its inputs and returns one of these; none
/// panics. The `Display` text names the parameter by its configuration key.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum GeometryError {
    /// A parameter is NaN or infinite.
    NotFinite {
        /// The parameter concerned.
        parameter: Parameter,
    },
    /// A length (or force breakpoint) is below zero.
    Negative {
        /// The parameter concerned.
        parameter: Parameter,
        /// The value given.
        value: f64,
    },
    /// An inner radius is not below its outer radius.
    InnerNotBelowOuter {
        /// The inner-radius parameter.
        inner: Parameter,
        /// Its value, m.
        inner_m: f64,
        /// The outer-radius parameter.
        outer: Parameter,
        /// Its value, m.
        outer_m: f64,
    },
    /// Part of a pad lies outside the disc's rubbing band.
    PadLeavesDisc {
        /// The pad dimension, vertex or edge that leaves the band.
        parameter: Parameter,
        /// The radius it reaches, m (0 when a polygon covers the disc axis).
        radius_m: f64,
        /// Inner edge of the band, m.
        disc_inner_radius_m: f64,
        /// Outer edge of the band, m.
        disc_outer_radius_m: f64,
    },
    /// A sector pad's angle is outside (0, 2π].
    SectorAngleOutOfRange {
        /// The angle given, rad.
        angle_rad: f64,
    },
    /// A polygon pad has fewer than three vertices.
    TooFewVertices {
        /// The number given.
        count: usize,
    },
    /// A polygon vertex equals the one before it (a closed polygon lists each vertex once).
    RepeatedVertex {
        /// Index of the repeating vertex.
        index: usize,
    },
    /// Two edges of a polygon pad cross or touch: the polygon is not simple.
    SelfIntersecting {
        /// The lower edge index.
        first_edge: usize,
        /// The higher edge index.
        second_edge: usize,
    },
    /// A pad encloses no area (collinear vertices, a zero-radius button).
    ZeroArea {
        /// The parameter that makes the area vanish.
        parameter: Parameter,
    },
    /// R/e of a button pad lies beyond the published design table (0 ..= 0.5).
    OutsidePublishedTable {
        /// R/e given.
        ratio: f64,
    },
    /// A cone half-angle is outside (0, π/2) exclusive.
    ConeAngleOutOfRange {
        /// The half-angle given, rad.
        half_angle_rad: f64,
    },
    /// A bedding fraction is outside [0, 1].
    BeddingOutOfRange {
        /// The parameter concerned.
        parameter: Parameter,
        /// The value given.
        value: f64,
    },
    /// A contact has zero friction faces.
    ZeroFaces,
    /// The friction-radius table could not be built (breakpoints not increasing, or a lever arm
    /// outside the range of [`crate::units::Metres`]).
    Table(TableError),
}

impl fmt::Display for GeometryError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NotFinite { parameter } => write!(f, "{parameter} is not a finite number"),
            Self::Negative { parameter, value } => {
                write!(f, "{parameter} is {value}, it must not be negative")
            }
            Self::InnerNotBelowOuter {
                inner,
                inner_m,
                outer,
                outer_m,
            } => write!(
                f,
                "{inner} ({inner_m} m) must be below {outer} ({outer_m} m)"
            ),
            Self::PadLeavesDisc {
                parameter,
                radius_m,
                disc_inner_radius_m,
                disc_outer_radius_m,
            } => write!(
                f,
                "{parameter} reaches radius {radius_m} m, outside the disc's rubbing band \
                 {disc_inner_radius_m} m ..= {disc_outer_radius_m} m"
            ),
            Self::SectorAngleOutOfRange { angle_rad } => write!(
                f,
                "{} is {angle_rad} rad, it must lie in (0, 2π]",
                Parameter::SectorAngle
            ),
            Self::TooFewVertices { count } => write!(
                f,
                "{} has {count} vertices, a pad needs at least 3",
                Parameter::Vertices
            ),
            Self::RepeatedVertex { index } => write!(
                f,
                "{} repeats the vertex before it; list each vertex once, without closing the loop",
                Parameter::Vertex(*index)
            ),
            Self::SelfIntersecting {
                first_edge,
                second_edge,
            } => write!(
                f,
                "{} crosses or touches {}: the polygon must be simple",
                Parameter::Edge(*first_edge),
                Parameter::Edge(*second_edge)
            ),
            Self::ZeroArea { parameter } => write!(f, "{parameter} gives a pad with no area"),
            Self::OutsidePublishedTable { ratio } => write!(
                f,
                "{} / {} is {ratio}, the published button-pad table covers 0 ..= 0.5",
                Parameter::ButtonRadius,
                Parameter::ButtonCentreRadius
            ),
            Self::ConeAngleOutOfRange { half_angle_rad } => write!(
                f,
                "{} is {half_angle_rad} rad, it must lie strictly between 0 and π/2",
                Parameter::ConeHalfAngle
            ),
            Self::BeddingOutOfRange { parameter, value } => {
                write!(f, "{parameter} is {value}, it must lie in [0, 1]")
            }
            Self::ZeroFaces => write!(f, "{} is 0, a contact needs at least one", Parameter::Faces),
            Self::Table(e) => write!(f, "friction-radius table: {e}"),
        }
    }
}

impl core::error::Error for GeometryError {
    fn source(&self) -> Option<&(dyn core::error::Error + 'static)> {
        match self {
            Self::Table(e) => Some(e),
            _ => None,
        }
    }
}

impl From<TableError> for GeometryError {
    fn from(e: TableError) -> Self {
        Self::Table(e)
    }
}

/// `value` if it is finite.
pub(crate) fn finite(parameter: Parameter, value: f64) -> Result<f64, GeometryError> {
    if value.is_finite() {
        Ok(value)
    } else {
        Err(GeometryError::NotFinite { parameter })
    }
}

/// `value` if it is finite and not below zero.
pub(crate) fn length(parameter: Parameter, value: f64) -> Result<f64, GeometryError> {
    let value = finite(parameter, value)?;
    if value < 0.0 {
        Err(GeometryError::Negative { parameter, value })
    } else {
        Ok(value)
    }
}

/// `(inner, outer)` if both are lengths and inner < outer.
pub(crate) fn radii(
    inner: Parameter,
    inner_m: f64,
    outer: Parameter,
    outer_m: f64,
) -> Result<(f64, f64), GeometryError> {
    let inner_m = length(inner, inner_m)?;
    let outer_m = length(outer, outer_m)?;
    if inner_m < outer_m {
        Ok((inner_m, outer_m))
    } else {
        Err(GeometryError::InnerNotBelowOuter {
            inner,
            inner_m,
            outer,
            outer_m,
        })
    }
}

/// `value` if it is a bedding fraction in [0, 1].
pub(crate) fn bedding(parameter: Parameter, value: f64) -> Result<f64, GeometryError> {
    let value = finite(parameter, value)?;
    if (0.0..=1.0).contains(&value) {
        Ok(value)
    } else {
        Err(GeometryError::BeddingOutOfRange { parameter, value })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used)]
mod tests {
    use super::*;

    #[test]
    fn messages_name_the_parameter() {
        let e = radii(Parameter::InnerRadius, 0.2, Parameter::OuterRadius, 0.1).unwrap_err();
        let s = e.to_string();
        assert!(
            s.contains("inner_radius_m") && s.contains("outer_radius_m"),
            "{s}"
        );
        let s = length(Parameter::VertexY(3), -1.0).unwrap_err().to_string();
        assert!(s.contains("vertices[3].y_m"), "{s}");
        let s = bedding(Parameter::BeddingBreakpoint(2), 1.5)
            .unwrap_err()
            .to_string();
        assert!(s.contains("bedding_breakpoints[2]"), "{s}");
        assert_eq!(
            finite(Parameter::ConeHalfAngle, f64::NAN),
            Err(GeometryError::NotFinite {
                parameter: Parameter::ConeHalfAngle
            })
        );
    }
}
