//! An arbitrary simple polygon pad (convex or not), with the disc axis at the origin.
//!
//! ## How the area integrals are computed
//!
//! For a radial integrand f(r), Green's theorem turns the area integral into a line integral
//! around the boundary: ∫∫ f(r) dA = ∮ F(r) dθ with F(r) = ∫₀ʳ f(s)·s ds (the field F(r)·r̂/r
//! has divergence f). So
//!
//! | integral | f | F |
//! |---|---|---|
//! | A | 1 | r²/2 |
//! | ∫ r dA | r | r³/3 |
//! | ∫ (1/r) dA | 1/r | r |
//!
//! Along a straight edge, with s the signed position along the edge's line measured from the
//! foot of the perpendicular from the axis and c the (signed) perpendicular distance,
//! r = √(s² + c²) and dθ = c·ds/(s² + c²), and each line integral has a closed form:
//! A: ½·c·(s₁ − s₀); ∫ r dA: (c/6)·[s·r + c²·asinh(s/|c|)]; ∫ (1/r) dA: c·[asinh(s/|c|)].
//! The edges are summed with their signs, so convex and non-convex polygons are treated alike,
//! and a polygon that covers the axis (allowed only on a band with inner radius 0) is handled
//! (F(0) = 0). Differences of asinh and of s·r are evaluated in forms free of cancellation.
//! The result is exact up to rounding; against an independent 2-D double-exponential quadrature
//! from a general-purpose crate it agrees within 2·10⁻¹² relative on convex and non-convex test
//! pads (`tests/tests/geometry_polygon.rs`, where the reference's own error dominates).
//!
//! ## Validation
//!
//! At least three finite vertices, no vertex repeating the one before it, not all collinear,
//! no two edges crossing or touching (O(n²) pairwise test with orientation predicates; adjacent
//! edges may only share their common vertex), a non-vanishing area, and every point of the pad
//! on the disc's band to within [`Disc::TOLERANCE`]: every vertex within the outer radius,
//! every edge no nearer the axis than the inner radius, and the axis itself outside the pad
//! when the band has a hole.

use super::Disc;
use super::error::{self, GeometryError, Parameter};
use super::pressure::{EffectiveRadii, PadIntegrals};

/// A point in the disc plane, metres, with the disc axis at the origin.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Point {
    /// x, m.
    pub x_m: f64,
    /// y, m.
    pub y_m: f64,
}

impl Point {
    /// The point (`x_m`, `y_m`), metres.
    pub const fn new(x_m: f64, y_m: f64) -> Self {
        Self { x_m, y_m }
    }

    /// The point at radius `r_m` (m) and angle `angle_rad` (rad) from the x axis.
    pub fn from_polar(r_m: f64, angle_rad: f64) -> Self {
        Self {
            x_m: r_m * libm::cos(angle_rad),
            y_m: r_m * libm::sin(angle_rad),
        }
    }

    /// Distance from the disc axis, m.
    pub fn radius_m(&self) -> f64 {
        libm::hypot(self.x_m, self.y_m)
    }

    fn minus(self, o: Self) -> Self {
        Self::new(self.x_m - o.x_m, self.y_m - o.y_m)
    }

    fn cross(self, o: Self) -> f64 {
        self.x_m * o.y_m - self.y_m * o.x_m
    }

    fn dot(self, o: Self) -> f64 {
        self.x_m * o.x_m + self.y_m * o.y_m
    }
}

/// A simple polygon pad on a disc's band, borrowing its vertices (listed once each, in either
/// direction, without repeating the first at the end). Its integrals are computed once, at
/// construction.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PolygonPad<'a> {
    vertices: &'a [Point],
    integrals: PadIntegrals,
    min_radius_m: f64,
    max_radius_m: f64,
}

impl<'a> PolygonPad<'a> {
    /// A polygon pad on `disc`'s rubbing band.
    ///
    /// # Errors
    /// [`GeometryError::TooFewVertices`], [`GeometryError::NotFinite`] (naming the vertex
    /// coordinate), [`GeometryError::RepeatedVertex`], [`GeometryError::ZeroArea`],
    /// [`GeometryError::SelfIntersecting`] (naming both edges), or
    /// [`GeometryError::PadLeavesDisc`] (naming the vertex or edge, or `vertices` when the pad
    /// covers the axis of a band with a hole).
    ///
    /// ```
    /// use clampwise_core::geometry::{Disc, Point, PolygonPad};
    /// let disc = Disc::new(0.05, 0.20)?;
    /// // A 40 mm square pad centred 120 mm from the axis.
    /// let square = [
    ///     Point::new(0.10, -0.02), Point::new(0.14, -0.02),
    ///     Point::new(0.14, 0.02), Point::new(0.10, 0.02),
    /// ];
    /// let pad = PolygonPad::new(&disc, &square)?;
    /// assert!((pad.integrals().area_m2 - 0.0016).abs() < 1e-15);
    /// let r = pad.effective_radii();
    /// assert!(r.uniform_wear_m < r.uniform_pressure_m);
    /// assert!(r.uniform_wear_m > 0.10 && r.uniform_pressure_m < 0.14);
    /// # Ok::<(), clampwise_core::geometry::GeometryError>(())
    /// ```
    pub fn new(disc: &Disc, vertices: &'a [Point]) -> Result<Self, GeometryError> {
        let n = vertices.len();
        if n < 3 {
            return Err(GeometryError::TooFewVertices { count: n });
        }
        for (i, p) in vertices.iter().enumerate() {
            error::finite(Parameter::VertexX(i), p.x_m)?;
            error::finite(Parameter::VertexY(i), p.y_m)?;
        }
        for (i, (a, b)) in edges(vertices).enumerate() {
            if a == b {
                return Err(GeometryError::RepeatedVertex { index: (i + 1) % n });
            }
        }
        if all_collinear(vertices) {
            return Err(GeometryError::ZeroArea {
                parameter: Parameter::Vertices,
            });
        }
        check_simple(vertices)?;

        let mut sums = PadIntegrals {
            area_m2: 0.0,
            radius_moment_m3: 0.0,
            inverse_radius_moment_m: 0.0,
        };
        let mut min_radius_m = f64::INFINITY;
        for (i, (a, b)) in edges(vertices).enumerate() {
            let e = edge_integrals(a, b);
            sums.area_m2 += e.area_m2;
            sums.radius_moment_m3 += e.radius_moment_m3;
            sums.inverse_radius_moment_m += e.inverse_radius_moment_m;
            let d = segment_distance(a, b);
            if d < min_radius_m {
                min_radius_m = d;
            }
            if disc.below_band(d) {
                return Err(disc.leaves(Parameter::Edge(i), d));
            }
        }
        let mut max_radius_m = 0.0_f64;
        for (i, p) in vertices.iter().enumerate() {
            let r = p.radius_m();
            if disc.above_band(r) {
                return Err(disc.leaves(Parameter::Vertex(i), r));
            }
            max_radius_m = max_radius_m.max(r);
        }
        let scale = bounding_diagonal_squared(vertices);
        if libm::fabs(sums.area_m2) <= 1e-12 * scale || sums.area_m2.is_nan() {
            return Err(GeometryError::ZeroArea {
                parameter: Parameter::Vertices,
            });
        }
        if contains_origin(vertices) {
            if disc.inner_radius_m() > 0.0 {
                return Err(disc.leaves(Parameter::Vertices, 0.0));
            }
            min_radius_m = 0.0;
        }
        if sums.area_m2 < 0.0 {
            // Clockwise listing: every contribution changed sign together.
            sums.area_m2 = -sums.area_m2;
            sums.radius_moment_m3 = -sums.radius_moment_m3;
            sums.inverse_radius_moment_m = -sums.inverse_radius_moment_m;
        }
        Ok(Self {
            vertices,
            integrals: sums,
            min_radius_m,
            max_radius_m,
        })
    }

    /// The vertices as given.
    pub fn vertices(&self) -> &'a [Point] {
        self.vertices
    }

    /// Smallest distance from the axis to any point of the pad, m.
    pub fn min_radius_m(&self) -> f64 {
        self.min_radius_m
    }

    /// Largest distance from the axis to any point of the pad (a vertex), m.
    pub fn max_radius_m(&self) -> f64 {
        self.max_radius_m
    }

    /// Area and radial moments (Green's theorem, closed form per edge; see the module docs).
    pub fn integrals(&self) -> PadIntegrals {
        self.integrals
    }

    /// r_e under both pressure models, m.
    pub fn effective_radii(&self) -> EffectiveRadii {
        self.integrals.effective_radii()
    }
}

/// Each edge as (start, end), closing the loop.
fn edges(v: &[Point]) -> impl Iterator<Item = (Point, Point)> + '_ {
    v.iter().copied().zip(v.iter().copied().cycle().skip(1))
}

/// Edge `i`'s end points (`i` taken modulo the vertex count).
fn edge(v: &[Point], i: usize) -> Option<(Point, Point)> {
    let n = v.len();
    Some((*v.get(i % n)?, *v.get((i + 1) % n)?))
}

fn all_collinear(v: &[Point]) -> bool {
    let Some(&p0) = v.first() else {
        return true;
    };
    let far = v
        .iter()
        .map(|p| p.minus(p0))
        .fold(Point::new(0.0, 0.0), |best, d| {
            if d.dot(d) > best.dot(best) { d } else { best }
        });
    let len2 = far.dot(far);
    v.iter()
        .all(|p| libm::fabs(far.cross(p.minus(p0))) <= 1e-12 * len2)
}

fn bounding_diagonal_squared(v: &[Point]) -> f64 {
    let (mut x0, mut x1, mut y0, mut y1) = (
        f64::INFINITY,
        f64::NEG_INFINITY,
        f64::INFINITY,
        f64::NEG_INFINITY,
    );
    for p in v {
        x0 = x0.min(p.x_m);
        x1 = x1.max(p.x_m);
        y0 = y0.min(p.y_m);
        y1 = y1.max(p.y_m);
    }
    (x1 - x0) * (x1 - x0) + (y1 - y0) * (y1 - y0)
}

/// Orientation of c relative to the directed line a → b: > 0 left, < 0 right, 0 collinear.
fn orient(a: Point, b: Point, c: Point) -> f64 {
    b.minus(a).cross(c.minus(a))
}

/// p lies within the bounding box of a–b (used once p is known to be collinear with a–b).
fn within(a: Point, b: Point, p: Point) -> bool {
    p.x_m >= a.x_m.min(b.x_m)
        && p.x_m <= a.x_m.max(b.x_m)
        && p.y_m >= a.y_m.min(b.y_m)
        && p.y_m <= a.y_m.max(b.y_m)
}

/// The closed segments p1–p2 and q1–q2 share at least one point.
fn segments_touch(p1: Point, p2: Point, q1: Point, q2: Point) -> bool {
    let d1 = orient(q1, q2, p1);
    let d2 = orient(q1, q2, p2);
    let d3 = orient(p1, p2, q1);
    let d4 = orient(p1, p2, q2);
    let opposite = |a: f64, b: f64| (a > 0.0 && b < 0.0) || (a < 0.0 && b > 0.0);
    if opposite(d1, d2) && opposite(d3, d4) {
        return true;
    }
    (d1 == 0.0 && within(q1, q2, p1))
        || (d2 == 0.0 && within(q1, q2, p2))
        || (d3 == 0.0 && within(p1, p2, q1))
        || (d4 == 0.0 && within(p1, p2, q2))
}

fn check_simple(v: &[Point]) -> Result<(), GeometryError> {
    let n = v.len();
    for i in 0..n {
        let Some((a1, a2)) = edge(v, i) else { continue };
        for j in (i + 1)..n {
            let Some((b1, b2)) = edge(v, j) else { continue };
            let bad = if j == i + 1 {
                // Shared vertex a2 = b1: the edges may not fold back over each other.
                orient(a1, a2, b2) == 0.0 && a1.minus(a2).dot(b2.minus(a2)) > 0.0
            } else if i == 0 && j == n - 1 {
                // Shared vertex b2 = a1.
                orient(b1, a1, a2) == 0.0 && b1.minus(a1).dot(a2.minus(a1)) > 0.0
            } else {
                segments_touch(a1, a2, b1, b2)
            };
            if bad {
                return Err(GeometryError::SelfIntersecting {
                    first_edge: i,
                    second_edge: j,
                });
            }
        }
    }
    Ok(())
}

/// Crossing-number test for the origin (called only once no edge passes through it on a band
/// with a hole, so the boundary case does not arise there).
fn contains_origin(v: &[Point]) -> bool {
    let mut inside = false;
    for (a, b) in edges(v) {
        if (a.y_m > 0.0) != (b.y_m > 0.0) {
            // x where the edge crosses y = 0.
            let x = a.x_m + (b.x_m - a.x_m) * (0.0 - a.y_m) / (b.y_m - a.y_m);
            if x > 0.0 {
                inside = !inside;
            }
        }
    }
    inside
}

/// Distance from the origin to the closed segment a–b.
fn segment_distance(a: Point, b: Point) -> f64 {
    let d = b.minus(a);
    let len2 = d.dot(d);
    let t = if len2 > 0.0 {
        (-a.dot(d) / len2).clamp(0.0, 1.0)
    } else {
        0.0
    };
    Point::new(a.x_m + t * d.x_m, a.y_m + t * d.y_m).radius_m()
}

/// asinh(s₁/a) − asinh(s₀/a) for a > 0 and s₀ < s₁, without cancellation when s₀ and s₁
/// have the same sign: it equals ln((s₁ + r₁)/(s₀ + r₀)), and the ratio minus one is formed
/// from positive terms only.
fn asinh_difference(s0: f64, s1: f64, a: f64) -> f64 {
    let same_sign_positive = |s0: f64, s1: f64| {
        let r0 = libm::hypot(s0, a);
        let r1 = libm::hypot(s1, a);
        let q = (s1 - s0) * (1.0 + (s1 + s0) / (r1 + r0)) / (s0 + r0);
        libm::log1p(q)
    };
    if s0 >= 0.0 {
        same_sign_positive(s0, s1)
    } else if s1 <= 0.0 {
        // asinh is odd: reflect onto the positive side.
        same_sign_positive(-s1, -s0)
    } else {
        libm::asinh(s1 / a) - libm::asinh(s0 / a)
    }
}

/// The signed contributions of edge p0 → p1 to A, ∫ r dA and ∫ (1/r) dA.
fn edge_integrals(p0: Point, p1: Point) -> PadIntegrals {
    let d = p1.minus(p0);
    let len = libm::hypot(d.x_m, d.y_m);
    let t = Point::new(d.x_m / len, d.y_m / len);
    let c = p0.cross(t);
    let s0 = p0.dot(t);
    let s1 = s0 + len;
    let area_m2 = 0.5 * p0.cross(p1);
    let a = libm::fabs(c);
    if a <= 1e-14 * libm::fabs(s0).max(libm::fabs(s1)) || a.is_nan() {
        // The edge's line passes (within rounding) through the axis: θ does not change along
        // it, so it adds nothing to ∮ F dθ beyond a term of order c·len², below rounding.
        return PadIntegrals {
            area_m2,
            radius_moment_m3: 0.0,
            inverse_radius_moment_m: 0.0,
        };
    }
    let ad = asinh_difference(s0, s1, a);
    let r0 = libm::hypot(s0, a);
    let r1 = libm::hypot(s1, a);
    // s₁r₁ − s₀r₀ = (s₁ − s₀)·[(r₁ + r₀)/2 + (s₁ + s₀)²/(2(r₁ + r₀))], free of cancellation.
    let sr = len * (0.5 * (r1 + r0) + (s1 + s0) * (s1 + s0) / (2.0 * (r1 + r0)));
    PadIntegrals {
        area_m2,
        radius_moment_m3: c / 6.0 * (sr + a * a * ad),
        inverse_radius_moment_m: c * ad,
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    fn band() -> Disc {
        Disc::new(0.0, 10.0).unwrap()
    }

    #[test]
    fn square_about_the_axis() {
        // Unit square centred on the axis [calc, integrating by quadrants]: A = 1;
        // ∫ r dA = (√2 + asinh 1)/6 = 0.3826...; ∫ dA/r = 4·asinh(1) = 3.5255...
        let sq = [
            Point::new(-0.5, -0.5),
            Point::new(0.5, -0.5),
            Point::new(0.5, 0.5),
            Point::new(-0.5, 0.5),
        ];
        let i = PolygonPad::new(&band(), &sq).unwrap().integrals();
        let asinh1 = libm::asinh(1.0);
        assert!((i.area_m2 - 1.0).abs() < 1e-15);
        assert!((i.radius_moment_m3 - (2f64.sqrt() + asinh1) / 6.0).abs() < 1e-15);
        assert!((i.inverse_radius_moment_m - 4.0 * asinh1).abs() < 1e-14);
    }

    #[test]
    fn clockwise_equals_counter_clockwise() {
        let ccw = [
            Point::new(1.0, 0.0),
            Point::new(2.0, 0.1),
            Point::new(1.5, 1.0),
            Point::new(1.2, 0.4),
        ];
        let mut cw = ccw;
        cw.reverse();
        let a = PolygonPad::new(&band(), &ccw).unwrap().integrals();
        let b = PolygonPad::new(&band(), &cw).unwrap().integrals();
        assert!((a.area_m2 - b.area_m2).abs() < 1e-15);
        assert!((a.radius_moment_m3 - b.radius_moment_m3).abs() < 1e-15);
        assert!((a.inverse_radius_moment_m - b.inverse_radius_moment_m).abs() < 1e-15);
    }

    #[test]
    fn asinh_difference_matches_direct_form() {
        for (s0, s1, a) in [
            (0.1, 0.3, 0.2),
            (-3.0, -1.0, 0.5),
            (-1.0, 2.0, 0.01),
            (0.0, 1.0, 1.0),
        ] {
            let direct = libm::asinh(s1 / a) - libm::asinh(s0 / a);
            assert!((asinh_difference(s0, s1, a) - direct).abs() < 1e-14);
        }
    }

    #[test]
    fn detects_crossing_and_touching_edges() {
        let bow_tie = [
            Point::new(1.0, 0.0),
            Point::new(2.0, 1.0),
            Point::new(2.0, 0.0),
            Point::new(1.0, 1.5),
        ];
        assert!(matches!(
            PolygonPad::new(&band(), &bow_tie),
            Err(GeometryError::SelfIntersecting {
                first_edge: 0,
                second_edge: 2
            })
        ));
        // A vertex lying on a non-adjacent edge.
        let touching = [
            Point::new(1.0, 0.0),
            Point::new(3.0, 0.0),
            Point::new(3.0, 2.0),
            Point::new(2.0, 0.0),
            Point::new(1.0, 2.0),
        ];
        assert!(matches!(
            PolygonPad::new(&band(), &touching),
            Err(GeometryError::SelfIntersecting { .. })
        ));
        // Folding back along the previous edge.
        let spike = [
            Point::new(1.0, 0.0),
            Point::new(3.0, 0.0),
            Point::new(2.0, 0.0),
            Point::new(2.0, 1.0),
        ];
        assert!(matches!(
            PolygonPad::new(&band(), &spike),
            Err(GeometryError::SelfIntersecting { .. })
        ));
    }
}
