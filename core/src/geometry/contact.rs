//! A friction contact: one face shape, the number of faces sharing the clamp force's torque,
//! and optionally a cone half-angle. This is what a friction-radius table is built from.

use super::button::ButtonPad;
use super::cone::ConeAngle;
use super::error::GeometryError;
use super::polygon::PolygonPad;
use super::pressure::{EffectiveRadii, PadIntegrals};
use super::{Annulus, SectorPad};

/// The shape of one friction face (for a cone, its projection on a plane normal to the axis).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Shape<'a> {
    /// A full annular face or solid disc.
    Annulus(Annulus),
    /// An annular sector pad.
    Sector(SectorPad),
    /// A circular (button) pad.
    Button(ButtonPad),
    /// A simple polygon pad.
    Polygon(PolygonPad<'a>),
}

impl Shape<'_> {
    /// r_e of one face under both pressure models, m.
    pub fn effective_radii(&self) -> EffectiveRadii {
        match self {
            Self::Annulus(s) => s.effective_radii(),
            Self::Sector(s) => s.effective_radii(),
            Self::Button(s) => s.effective_radii(),
            Self::Polygon(s) => s.effective_radii(),
        }
    }

    /// Area and radial moments of one face.
    pub fn integrals(&self) -> PadIntegrals {
        match self {
            Self::Annulus(s) => s.integrals(),
            Self::Sector(s) => s.integrals(),
            Self::Button(s) => s.integrals(),
            Self::Polygon(s) => s.integrals(),
        }
    }

    /// Smallest distance from the axis to the face, m.
    pub fn min_radius_m(&self) -> f64 {
        match self {
            Self::Annulus(s) => s.inner_radius_m(),
            Self::Sector(s) => s.inner_radius_m(),
            Self::Button(s) => s.centre_radius_m() - s.radius_m(),
            Self::Polygon(s) => s.min_radius_m(),
        }
    }

    /// Largest distance from the axis to the face, m.
    pub fn max_radius_m(&self) -> f64 {
        match self {
            Self::Annulus(s) => s.outer_radius_m(),
            Self::Sector(s) => s.outer_radius_m(),
            Self::Button(s) => s.centre_radius_m() + s.radius_m(),
            Self::Polygon(s) => s.max_radius_m(),
        }
    }
}

impl From<Annulus> for Shape<'_> {
    fn from(s: Annulus) -> Self {
        Self::Annulus(s)
    }
}

impl From<SectorPad> for Shape<'_> {
    fn from(s: SectorPad) -> Self {
        Self::Sector(s)
    }
}

impl From<ButtonPad> for Shape<'_> {
    fn from(s: ButtonPad) -> Self {
        Self::Button(s)
    }
}

impl<'a> From<PolygonPad<'a>> for Shape<'a> {
    fn from(s: PolygonPad<'a>) -> Self {
        Self::Polygon(s)
    }
}

/// A validated friction contact: `faces` identical faces of `shape`, flat or on a cone.
///
/// Torque = faces · μ · F · [`Contact::lever_arm`]`(bedding)`, F the clamp (axial) force.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Contact<'a> {
    shape: Shape<'a>,
    faces: u8,
    cone: Option<ConeAngle>,
}

impl<'a> Contact<'a> {
    /// A contact of `faces` faces (1 ..= 255; a caliper has 2, a multi-plate clutch with n_a
    /// driving and n_b driven plates has n_a + n_b − 1 \[mem\]) of `shape`, flat when
    /// `cone_half_angle_rad` is `None`.
    ///
    /// # Errors
    /// [`GeometryError::ZeroFaces`]; for a cone [`GeometryError::NotFinite`] or
    /// [`GeometryError::ConeAngleOutOfRange`] unless 0 < α < π/2.
    ///
    /// ```
    /// use clampwise_core::geometry::{Annulus, Contact};
    /// // Check vector [calc: T = N·μ·F·(Ro+Ri)/2, Shigley ch. 16]: Ro = 100 mm, Ri = 60 mm,
    /// // μ = 0.30, F = 10 kN,
    /// // six faces, bedded in: T = 1440 N·m.
    /// let clutch = Contact::new(Annulus::new(0.060, 0.100)?, 6, None)?;
    /// let torque = 0.30 * 10_000.0 * clutch.torque_per_unit_mu_force(1.0)?;
    /// assert!((torque - 1440.0).abs() < 1e-9);
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(
        shape: impl Into<Shape<'a>>,
        faces: u8,
        cone_half_angle_rad: Option<f64>,
    ) -> Result<Self, GeometryError> {
        if faces == 0 {
            return Err(GeometryError::ZeroFaces);
        }
        let cone = match cone_half_angle_rad {
            Some(a) => Some(ConeAngle::new(a)?),
            None => None,
        };
        Ok(Self {
            shape: shape.into(),
            faces,
            cone,
        })
    }

    /// The face shape.
    pub fn shape(&self) -> &Shape<'a> {
        &self.shape
    }

    /// Number of friction faces.
    pub fn faces(&self) -> u8 {
        self.faces
    }

    /// The cone half-angle, if this is a cone contact.
    pub fn cone(&self) -> Option<ConeAngle> {
        self.cone
    }

    /// Effective radius of one face at `bedding` ∈ [0, 1] (0 new: uniform pressure; 1 bedded:
    /// uniform wear), m; for a cone, that of the projected face.
    ///
    /// # Errors
    /// [`GeometryError::NotFinite`] or [`GeometryError::BeddingOutOfRange`].
    pub fn effective_radius(&self, bedding: f64) -> Result<f64, GeometryError> {
        self.shape.effective_radii().at_bedding(bedding)
    }

    /// Lever arm of one face per unit μ·F at `bedding`, m: r_e for a flat face, r_e/sin α for
    /// a cone. This is what the friction-radius table holds.
    ///
    /// # Errors
    /// As [`Contact::effective_radius`].
    ///
    /// ```
    /// use clampwise_core::geometry::{Annulus, Contact};
    /// let cone = Contact::new(Annulus::new(0.080, 0.100)?, 1, Some(12f64.to_radians()))?;
    /// // Uniform wear [pub: Shigley ch. 16]: T/(μF) = (Do + Di)/(4 sin α).
    /// let want = (0.200 + 0.160) / (4.0 * 12f64.to_radians().sin());
    /// assert!((cone.lever_arm(1.0)? - want).abs() < 1e-12);
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn lever_arm(&self, bedding: f64) -> Result<f64, GeometryError> {
        let r = self.effective_radius(bedding)?;
        Ok(match self.cone {
            Some(c) => c.lever_arm_m(r),
            None => r,
        })
    }

    /// Torque per unit μ·F of the whole contact at `bedding`: faces · lever arm, N·m per N.
    ///
    /// # Errors
    /// As [`Contact::effective_radius`].
    pub fn torque_per_unit_mu_force(&self, bedding: f64) -> Result<f64, GeometryError> {
        Ok(f64::from(self.faces) * self.lever_arm(bedding)?)
    }
}
