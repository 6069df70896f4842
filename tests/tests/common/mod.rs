//! Reference integrators for the geometry tests, built on general-purpose quadrature crates
//! from crates.io (`quadrature`: double-exponential; `gauss-quad`: Gauss–Legendre). They use a
//! different formulation from the core (2-D area integrals in Cartesian or pad-centred polar
//! coordinates, not line integrals or radial slices), so an error in either shows up.
#![allow(dead_code, clippy::unwrap_used, clippy::indexing_slicing)]

use std::f64::consts::PI;

use clampwise_core::geometry::Point;

/// ∫ₐᵇ f by the `quadrature` crate's double-exponential rule, asked for 1e-14 absolute.
pub fn de(f: impl Fn(f64) -> f64, a: f64, b: f64) -> f64 {
    if b <= a {
        return 0.0;
    }
    quadrature::double_exponential::integrate(f, a, b, 1e-14).integral
}

/// ∫∫ f(r) dA over a simple polygon (r = distance from the origin), by vertical slabs between
/// consecutive vertex x values; inside each slab the polygon's cross-section is a set of
/// y-intervals bounded by straight edges, integrated with nested double-exponential quadrature.
pub fn polygon_reference(vertices: &[Point], f: impl Fn(f64) -> f64 + Copy) -> f64 {
    let n = vertices.len();
    let mut xs: Vec<f64> = vertices.iter().map(|p| p.x_m).collect();
    xs.sort_by(f64::total_cmp);
    xs.dedup();
    let cross_section = |x: f64| -> f64 {
        let mut ys: Vec<f64> = (0..n)
            .filter_map(|i| {
                let (a, b) = (vertices[i], vertices[(i + 1) % n]);
                let (lo, hi) = (a.x_m.min(b.x_m), a.x_m.max(b.x_m));
                (lo < x && x < hi).then(|| a.y_m + (b.y_m - a.y_m) * (x - a.x_m) / (b.x_m - a.x_m))
            })
            .collect();
        ys.sort_by(f64::total_cmp);
        ys.chunks(2)
            .map(|c| de(|y| f(x.hypot(y)), c[0], c[1]))
            .sum()
    };
    xs.windows(2).map(|w| de(cross_section, w[0], w[1])).sum()
}

/// ∫∫ f(r) dA over a circle of radius `rr` centred `e` from the origin, in polar coordinates
/// about the pad centre, by the `quadrature` crate. The pad is symmetric about the x axis, so
/// θ runs over [0, π] and the result is doubled: a pad touching the axis then has its
/// singular point at an end of the outer interval, where the rule copes.
pub fn button_reference_de(rr: f64, e: f64, f: impl Fn(f64) -> f64 + Copy) -> f64 {
    2.0 * de(
        |theta| {
            de(
                |rho| {
                    let r = (e * e + rho * rho + 2.0 * e * rho * theta.cos()).sqrt();
                    f(r) * rho
                },
                0.0,
                rr,
            )
        },
        0.0,
        PI,
    )
}

/// The same by the `gauss-quad` crate's Gauss–Legendre rule of `degree` points per axis.
pub fn button_reference_gl(rr: f64, e: f64, degree: usize, f: impl Fn(f64) -> f64) -> f64 {
    let gl = gauss_quad::legendre::GaussLegendre::new(degree.try_into().unwrap());
    2.0 * gl.integrate(0.0, PI, |theta| {
        gl.integrate(0.0, rr, |rho| {
            let r = (e * e + rho * rho + 2.0 * e * rho * theta.cos()).sqrt();
            f(r) * rho
        })
    })
}

/// A polygon approximating an annular sector: `per_arc` vertices evenly on the outer arc, then
/// `per_arc` back along the inner arc (the chords are inscribed).
pub fn sector_polygon(ri: f64, ro: f64, angle: f64, per_arc: usize) -> Vec<Point> {
    let step = angle / (per_arc - 1) as f64;
    let outer = (0..per_arc).map(|k| Point::from_polar(ro, step * k as f64));
    let inner = (0..per_arc)
        .rev()
        .map(|k| Point::from_polar(ri, step * k as f64));
    outer.chain(inner).collect()
}

/// Relative difference |a − b| / |b|.
pub fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}
