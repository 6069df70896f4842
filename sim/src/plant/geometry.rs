//! The plant's own contact integrals, in f64, independent of the core and of
//! `clampwise_core::geometry`: Gauss–Legendre quadrature (nodes found by Newton's method on the Legendre
//! polynomials [pub: Press et al., *Numerical Recipes*, 3rd ed., §4.6]) over the pad, in the
//! coordinates that make each shape smooth:
//!
//! - annulus and sector: polar (r, θ) about the disc axis;
//! - button: polar (ρ, φ) about the pad centre;
//! - polygon: fan of triangles from vertex 0 (signed areas, so any simple outline works), each
//!   mapped from the unit square (collapsed coordinates);
//! - cone: slant length s and θ over the conical surface, r = Ri + s·sin α.
//!
//! For a pressure distribution p over the contact, one face gives torque μ·∫p·r dA for axial
//! force ∫p dA (cone: ∫p·sin α dA), so r_e = ∫p·r dA / ∫p dA (cone: divided by sin α).
//! Uniform pressure: p = 1; uniform wear: p = 1/r.

// Host-only numerics: every index is bounded by the loop that produces it.
#![allow(clippy::indexing_slicing)]

use crate::portable_math::powi;
use crate::schema::{ContactSpec, ShapeSpec};

/// Gauss–Legendre rule on [−1, 1].
#[derive(Debug, Clone)]
pub struct GaussLegendre {
    nodes: Vec<f64>,
    weights: Vec<f64>,
}

impl GaussLegendre {
    /// An `n`-point rule (exact for polynomials of degree 2n − 1).
    pub fn new(n: usize) -> Self {
        let n = n.max(1);
        let mut nodes = vec![0.0; n];
        let mut weights = vec![0.0; n];
        // n is small (tens): exact in f64.
        #[allow(clippy::cast_precision_loss)]
        let nf = n as f64;
        for i in 0..n.div_ceil(2) {
            #[allow(clippy::cast_precision_loss)]
            let mut x = libm::cos(std::f64::consts::PI * (i as f64 + 0.75) / (nf + 0.5));
            let mut dp = 1.0;
            for _ in 0..100 {
                // Recurrence (k+1)P_{k+1} = (2k+1) x P_k − k P_{k−1}.
                let (mut p0, mut p1) = (1.0, x);
                for k in 1..n {
                    #[allow(clippy::cast_precision_loss)]
                    let kf = k as f64;
                    let p2 = ((2.0 * kf + 1.0) * x * p1 - kf * p0) / (kf + 1.0);
                    p0 = p1;
                    p1 = p2;
                }
                let pn = if n == 1 { x } else { p1 };
                let pm = if n == 1 { 1.0 } else { p0 };
                dp = nf * (x * pn - pm) / (x * x - 1.0);
                let dx = pn / dp;
                x -= dx;
                if dx.abs() < 1e-15 {
                    break;
                }
            }
            let w = 2.0 / ((1.0 - x * x) * dp * dp);
            nodes[i] = x;
            nodes[n - 1 - i] = -x;
            weights[i] = w;
            weights[n - 1 - i] = w;
        }
        if n == 1 {
            nodes[0] = 0.0;
            weights[0] = 2.0;
        }
        Self { nodes, weights }
    }

    /// ∫ₐᵇ f.
    pub fn integrate(&self, a: f64, b: f64, mut f: impl FnMut(f64) -> f64) -> f64 {
        let (m, h) = (0.5 * (a + b), 0.5 * (b - a));
        self.nodes
            .iter()
            .zip(&self.weights)
            .map(|(x, w)| w * f(m + h * x))
            .sum::<f64>()
            * h
    }
}

/// Effective radius (m) of one face under uniform pressure and under uniform wear, integrated
/// numerically; for a cone, per unit axial force.
///
/// # Errors
/// A message when the shape's keys are missing.
pub fn effective_radii(c: &ContactSpec) -> Result<(f64, f64), String> {
    let gl = GaussLegendre::new(24);
    let need = |v: Option<f64>, k: &str| v.ok_or_else(|| format!("contact.{k} missing"));
    // Returns (∫p·r dA, ∫p dA) for both pressure models.
    let moments: [(f64, f64); 2] = match c.shape {
        ShapeSpec::DrumShoes | ShapeSpec::Band | ShapeSpec::BlockShoes => {
            return Err(format!(
                "contact.shape '{}' has no flat or conical face",
                c.shape.name()
            ));
        }
        ShapeSpec::Annulus | ShapeSpec::Sector => {
            let ri = need(c.inner_radius_m, "inner_radius_m")?;
            let ro = need(c.outer_radius_m, "outer_radius_m")?;
            let angle = if c.shape == ShapeSpec::Sector {
                need(c.sector_angle_deg, "sector_angle_deg")?.to_radians()
            } else {
                std::f64::consts::TAU
            };
            let polar = |p: &dyn Fn(f64) -> f64, k: i32| {
                gl.integrate(ri, ro, |r| {
                    gl.integrate(-angle / 2.0, angle / 2.0, |_| p(r) * powi(r, k) * r)
                })
            };
            let up = |_r: f64| 1.0;
            let uw = |r: f64| 1.0 / r;
            [
                (polar(&up, 1), polar(&up, 0)),
                (polar(&uw, 1), polar(&uw, 0)),
            ]
        }
        ShapeSpec::Button => {
            let rp = need(c.pad_radius_m, "pad_radius_m")?;
            let e = need(c.pad_centre_radius_m, "pad_centre_radius_m")?;
            let local = |p: &dyn Fn(f64) -> f64, k: i32| {
                gl.integrate(0.0, rp, |rho| {
                    gl.integrate(0.0, std::f64::consts::TAU, |phi| {
                        let (sin_phi, cos_phi) = libm::sincos(phi);
                        let r = libm::hypot(e + rho * cos_phi, rho * sin_phi);
                        p(r) * powi(r, k) * rho
                    })
                })
            };
            let up = |_r: f64| 1.0;
            let uw = |r: f64| 1.0 / r;
            [
                (local(&up, 1), local(&up, 0)),
                (local(&uw, 1), local(&uw, 0)),
            ]
        }
        ShapeSpec::Polygon => {
            let vs = c
                .vertices_m
                .as_deref()
                .ok_or("contact.vertices_m missing")?;
            let fan = |p: &dyn Fn(f64) -> f64, k: i32| {
                let a = vs.first().copied().unwrap_or([0.0, 0.0]);
                vs.windows(2)
                    .skip(1)
                    .map(|w| {
                        let (b, cc) = (w[0], w[1]);
                        // Signed Jacobian of (u, v) ↦ a + u(b − a) + u·v(c − b): u·2·area.
                        let twice_area =
                            (b[0] - a[0]) * (cc[1] - a[1]) - (cc[0] - a[0]) * (b[1] - a[1]);
                        gl.integrate(0.0, 1.0, |u| {
                            gl.integrate(0.0, 1.0, |v| {
                                let x = a[0] + u * (b[0] - a[0]) + u * v * (cc[0] - b[0]);
                                let y = a[1] + u * (b[1] - a[1]) + u * v * (cc[1] - b[1]);
                                let r = libm::hypot(x, y);
                                p(r) * powi(r, k) * u * twice_area
                            })
                        })
                    })
                    .sum::<f64>()
            };
            let up = |_r: f64| 1.0;
            let uw = |r: f64| 1.0 / r;
            [(fan(&up, 1), fan(&up, 0)), (fan(&uw, 1), fan(&uw, 0))]
        }
        ShapeSpec::Cone => {
            let ri = need(c.inner_radius_m, "inner_radius_m")?;
            let ro = need(c.outer_radius_m, "outer_radius_m")?;
            let alpha = need(c.half_angle_deg, "half_angle_deg")?.to_radians();
            let sin_alpha = libm::sin(alpha);
            let slant = (ro - ri) / sin_alpha;
            let surface = |p: &dyn Fn(f64) -> f64, k: i32| {
                gl.integrate(0.0, slant, |s| {
                    let r = ri + s * sin_alpha;
                    gl.integrate(0.0, std::f64::consts::TAU, |_| p(r) * powi(r, k) * r)
                })
            };
            let up = |_r: f64| 1.0;
            let uw = |r: f64| 1.0 / r;
            let m = [
                (surface(&up, 1), surface(&up, 0)),
                (surface(&uw, 1), surface(&uw, 0)),
            ];
            // Axial force is ∫p·sin α dA.
            m.map(|(t, f)| (t, f * sin_alpha))
        }
    };
    let [(tu, fu), (tw, fw)] = moments;
    Ok((tu / fu, tw / fw))
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
    fn rule_against_gauss_quad() {
        // Reference: the gauss-quad crate's Gauss–Legendre rule.
        let ours = GaussLegendre::new(12);
        let theirs = gauss_quad::GaussLegendre::new(std::num::NonZeroUsize::new(12).unwrap());
        let f = |x: f64| (3.0 * x).sin() * x.exp();
        assert_relative_eq!(
            ours.integrate(-0.3, 2.0, f),
            theirs.integrate(-0.3, 2.0, f),
            max_relative = 1e-13
        );
        // [calc] exact for degree 2n − 1 = 23: ∫₀¹ x²³ = 1/24.
        assert_relative_eq!(
            ours.integrate(0.0, 1.0, |x| x.powi(23)),
            1.0 / 24.0,
            max_relative = 1e-13
        );
    }

    #[test]
    fn annulus_and_sector_check_vector() {
        // [calc: r_uw = (Ro + Ri)/2, r_up = (2/3)(Ro³ − Ri³)/(Ro² − Ri²), Shigley ch. 16]: Ro = 100 mm,
        // Ri = 60 mm → uniform wear 80.000 mm, uniform
        // pressure 81.667 mm; the sector angle cancels out [pub: Shigley ch. 16].
        for (shape, angle) in [(ShapeSpec::Annulus, None), (ShapeSpec::Sector, Some(37.0))] {
            let mut c = contact(shape);
            c.inner_radius_m = Some(0.06);
            c.outer_radius_m = Some(0.10);
            c.sector_angle_deg = angle;
            let (up, uw) = effective_radii(&c).unwrap();
            assert_relative_eq!(uw, 0.080, max_relative = 1e-12);
            assert_relative_eq!(up, 0.245 / 3.0, max_relative = 1e-12);
        }
    }

    #[test]
    fn cone_matches_published_torque() {
        // [pub: Shigley ch. 16] T = μF(Do³−Di³)/(3 sin α (Do²−Di²)) uniform pressure,
        // T = μF(Do+Di)/(4 sin α) uniform wear.
        let mut c = contact(ShapeSpec::Cone);
        c.inner_radius_m = Some(0.05);
        c.outer_radius_m = Some(0.08);
        c.half_angle_deg = Some(12.0);
        let (up, uw) = effective_radii(&c).unwrap();
        let (d_o, d_i, s) = (0.16f64, 0.10f64, 12f64.to_radians().sin());
        assert_relative_eq!(
            up,
            (d_o.powi(3) - d_i.powi(3)) / (3.0 * s * (d_o.powi(2) - d_i.powi(2))),
            max_relative = 1e-12
        );
        assert_relative_eq!(uw, (d_o + d_i) / (4.0 * s), max_relative = 1e-12);
    }

    #[test]
    fn button_integrated_model() {
        // [calc: ∫p·r dA / ∫p dA with p ∝ 1/r over the circular pad] direct integration gives δ = r_e/e =
        // 0.9987, 0.9949, 0.9885, 0.9791, 0.9665 for R/e = 0.1 … 0.5 (4 digits). Uniform
        // pressure: mean of r over the circle.
        let expected = [0.9987, 0.9949, 0.9885, 0.9791, 0.9665];
        for (k, d) in expected.iter().enumerate() {
            let mut c = contact(ShapeSpec::Button);
            c.pad_centre_radius_m = Some(0.2);
            c.pad_radius_m = Some(0.2 * 0.1 * (k as f64 + 1.0));
            let (_, uw) = effective_radii(&c).unwrap();
            assert_relative_eq!(uw / 0.2, *d, epsilon = 1e-4);
        }
    }

    #[test]
    fn polygon_sector_approximation_converges() {
        // A 64-sided polygon along a 0.06–0.10 m, 40° sector outline must approach the sector's
        // closed form [pub: Shigley ch. 16] to within the chord error (≈ (Δθ/2)²/2 ≈ 5e-5).
        let (ri, ro, half) = (0.06f64, 0.10f64, 20f64.to_radians());
        let n = 32;
        let mut vs = Vec::new();
        for i in 0..=n {
            let t = -half + 2.0 * half * f64::from(i) / f64::from(n);
            vs.push([ro * t.cos(), ro * t.sin()]);
        }
        for i in (0..=n).rev() {
            let t = -half + 2.0 * half * f64::from(i) / f64::from(n);
            vs.push([ri * t.cos(), ri * t.sin()]);
        }
        let mut c = contact(ShapeSpec::Polygon);
        c.vertices_m = Some(vs);
        let (up, uw) = effective_radii(&c).unwrap();
        assert_relative_eq!(uw, 0.080, max_relative = 2e-4);
        assert_relative_eq!(up, 0.245 / 3.0, max_relative = 2e-4);
    }

    #[test]
    fn plant_and_table_builder_agree_on_every_shape() {
        // Two independent routes to r_e: the plant's Gauss–Legendre integration and the core's
        // geometry (closed forms, Green's theorem, its own quadrature), as the table builder
        // uses it.
        let mut shapes = Vec::new();
        let mut a = contact(ShapeSpec::Annulus);
        a.inner_radius_m = Some(0.1);
        a.outer_radius_m = Some(0.18);
        shapes.push(a.clone());
        let mut s = a.clone();
        s.shape = ShapeSpec::Sector;
        s.sector_angle_deg = Some(45.0);
        shapes.push(s);
        let mut c = a;
        c.shape = ShapeSpec::Cone;
        c.half_angle_deg = Some(15.0);
        shapes.push(c);
        let mut b = contact(ShapeSpec::Button);
        b.pad_radius_m = Some(0.04);
        b.pad_centre_radius_m = Some(0.15);
        b.button_model = Some(crate::schema::ButtonModelSpec::Integrated);
        shapes.push(b);
        let mut p = contact(ShapeSpec::Polygon);
        p.vertices_m = Some(vec![
            [0.3, -0.05],
            [0.42, -0.07],
            [0.45, 0.0],
            [0.4, 0.08],
            [0.32, 0.05],
        ]);
        shapes.push(p);
        for c in &shapes {
            let (pu, pw) = effective_radii(c).unwrap();
            let (tu, tw) = crate::build_core::contact_radii(c).unwrap();
            assert_relative_eq!(pu, tu, max_relative = 1e-9);
            assert_relative_eq!(pw, tw, max_relative = 1e-9);
            assert!(
                pu >= pw,
                "uniform pressure gives the larger radius [pub: Ugural ch. 13]"
            );
        }
    }
}
