//! Polygon pads: the core's Green's-theorem integrator against 2-D integration by a
//! general-purpose quadrature crate, convergence of polygon approximations to the closed forms
//! of the sector [pub: Shigley ch. 16] and the solid disc, and non-convex pads.
#![allow(
    clippy::indexing_slicing,
    clippy::unwrap_used,
    clippy::float_cmp,
    clippy::cast_precision_loss
)]

mod common;

use std::f64::consts::TAU;

use clampwise_core::geometry::{Disc, EffectiveRadii, PadIntegrals, Point, PolygonPad};
use common::{polygon_reference, rel, sector_polygon};

fn band() -> Disc {
    Disc::new(0.02, 0.5).unwrap()
}

fn pts(v: &[(f64, f64)]) -> Vec<Point> {
    v.iter().map(|&(x, y)| Point::new(x, y)).collect()
}

/// Test pads: convex and non-convex, listed in both directions.
fn test_pads() -> Vec<(&'static str, Vec<Point>)> {
    let mut pads = vec![
        ("triangle", pts(&[(0.10, 0.0), (0.20, 0.03), (0.12, 0.09)])),
        (
            "convex pentagon",
            pts(&[
                (0.10, -0.03),
                (0.16, -0.04),
                (0.19, 0.01),
                (0.15, 0.06),
                (0.09, 0.03),
            ]),
        ),
        (
            "L-shape (non-convex)",
            pts(&[
                (0.10, 0.0),
                (0.18, 0.0),
                (0.18, 0.02),
                (0.12, 0.02),
                (0.12, 0.07),
                (0.10, 0.07),
            ]),
        ),
        (
            "notched pad (non-convex)",
            pts(&[
                (0.08, -0.05),
                (0.16, -0.06),
                (0.17, 0.05),
                (0.13, 0.055),
                (0.11, 0.0),
                (0.10, 0.05),
                (0.07, 0.04),
            ]),
        ),
        (
            "kidney sector (200°)",
            sector_polygon(0.06, 0.11, 200f64.to_radians(), 12),
        ),
    ];
    let mut cw = pads[3].1.clone();
    cw.reverse();
    pads.push(("notched pad, clockwise", cw));
    pads
}

/// [calc against a reference library] Area, ∫ r dA and ∫ dA/r against nested double-exponential
/// quadrature from the `quadrature` crate over vertical slabs (an area integral, not a line
/// integral).
#[test]
fn integrals_match_general_purpose_quadrature() {
    let mut worst: f64 = 0.0;
    for (name, v) in test_pads() {
        let i = PolygonPad::new(&band(), &v).unwrap().integrals();
        let want = PadIntegrals {
            area_m2: polygon_reference(&v, |_| 1.0),
            radius_moment_m3: polygon_reference(&v, |r| r),
            inverse_radius_moment_m: polygon_reference(&v, |r| 1.0 / r),
        };
        for (got, want) in [
            (i.area_m2, want.area_m2),
            (i.radius_moment_m3, want.radius_moment_m3),
            (i.inverse_radius_moment_m, want.inverse_radius_moment_m),
        ] {
            worst = worst.max(rel(got, want));
            assert!(rel(got, want) < 1e-11, "{name}: {got} vs {want}");
        }
    }
    println!("polygon: worst relative difference from the quadrature crate {worst:.2e}");
}

/// Polygon approximations of an annular sector (vertices on both arcs) converge to the closed
/// form [pub: Shigley ch. 16] at the chord rate O(N⁻²): the error falls about fourfold each
/// time the vertex count doubles. Sectors of 30°, 90° and 200° (non-convex) all converge to
/// the same radii, the sector-angle independence seen through an integrator that knows nothing
/// of sectors.
#[test]
fn sector_approximations_converge_to_the_closed_form() {
    let (ri, ro) = (0.07, 0.13);
    // The textbook closed form, not the core's annulus.
    let exact = EffectiveRadii {
        uniform_pressure_m: 2.0 / 3.0 * (ro * ro * ro - ri * ri * ri) / (ro * ro - ri * ri),
        uniform_wear_m: 0.5 * (ro + ri),
    };
    for deg in [30.0, 90.0, 200.0] {
        let angle = f64::to_radians(deg);
        let mut last: Option<(f64, f64)> = None;
        for per_arc in [4usize, 8, 16, 32, 64, 128, 256, 512, 1024] {
            let v = sector_polygon(ri, ro, angle, per_arc);
            let r = PolygonPad::new(&band(), &v).unwrap().effective_radii();
            let e_up = rel(r.uniform_pressure_m, exact.uniform_pressure_m);
            let e_uw = rel(r.uniform_wear_m, exact.uniform_wear_m);
            if let Some((p_up, p_uw)) = last {
                assert!(
                    e_up < p_up && e_uw < p_uw,
                    "{deg}° N={per_arc}: error must fall"
                );
                if per_arc >= 32 {
                    let (q_up, q_uw) = (p_up / e_up, p_uw / e_uw);
                    assert!(
                        (3.5..4.5).contains(&q_up),
                        "{deg}° N={per_arc}: rate {q_up}"
                    );
                    assert!(
                        (3.5..4.5).contains(&q_uw),
                        "{deg}° N={per_arc}: rate {q_uw}"
                    );
                }
            }
            println!(
                "{deg:5.0}° {per_arc:5} vertices per arc: rel. error up {e_up:.2e}, uw {e_uw:.2e}"
            );
            last = Some((e_up, e_uw));
        }
        let (e_up, e_uw) = last.unwrap();
        assert!(e_up < 2e-6 && e_uw < 2e-6, "{deg}°: {e_up:e} {e_uw:e}");
    }
}

/// A regular polygon centred on the axis of a solid disc (the pad covers the axis) converges to
/// the solid-disc radii 2R/3 and R/2 [pub: Shigley ch. 16].
#[test]
fn polygon_covering_the_axis_converges_to_the_solid_disc() {
    let rr = 0.1;
    let solid = Disc::new(0.0, rr).unwrap();
    let mut last = f64::INFINITY;
    for n in [16usize, 64, 256, 1024] {
        let v: Vec<Point> = (0..n)
            .map(|k| Point::from_polar(rr, TAU * k as f64 / n as f64))
            .collect();
        let p = PolygonPad::new(&solid, &v).unwrap();
        assert_eq!(p.min_radius_m(), 0.0);
        let r = p.effective_radii();
        let e = rel(r.uniform_pressure_m, 2.0 * rr / 3.0).max(rel(r.uniform_wear_m, rr / 2.0));
        assert!(e < last);
        last = e;
    }
    assert!(last < 1e-5, "{last}");
}

/// Non-convex pads: the integrals are additive, so an L-shape equals the sum of the two
/// rectangles it is cut into (each integrated by the core on its own).
#[test]
fn non_convex_pad_is_the_sum_of_its_parts() {
    let l_shape = &test_pads()[2].1;
    let a = pts(&[(0.10, 0.0), (0.18, 0.0), (0.18, 0.02), (0.10, 0.02)]);
    let b = pts(&[(0.10, 0.02), (0.12, 0.02), (0.12, 0.07), (0.10, 0.07)]);
    let whole = PolygonPad::new(&band(), l_shape).unwrap().integrals();
    let ia = PolygonPad::new(&band(), &a).unwrap().integrals();
    let ib = PolygonPad::new(&band(), &b).unwrap().integrals();
    assert!(rel(whole.area_m2, ia.area_m2 + ib.area_m2) < 1e-13);
    assert!(
        rel(
            whole.radius_moment_m3,
            ia.radius_moment_m3 + ib.radius_moment_m3
        ) < 1e-13
    );
    assert!(
        rel(
            whole.inverse_radius_moment_m,
            ia.inverse_radius_moment_m + ib.inverse_radius_moment_m
        ) < 1e-13
    );
    // The area is the L-shape's by hand [calc]: 0.08·0.02 + 0.02·0.05.
    assert!(rel(whole.area_m2, 0.08 * 0.02 + 0.02 * 0.05) < 1e-13);
}

/// The radial extent reported for a polygon: nearest point on an edge, farthest vertex.
#[test]
fn radial_extent() {
    // A square whose near edge passes 0.1 m from the axis at its midpoint.
    let v = pts(&[(0.1, -0.05), (0.2, -0.05), (0.2, 0.05), (0.1, 0.05)]);
    let p = PolygonPad::new(&band(), &v).unwrap();
    assert!((p.min_radius_m() - 0.1).abs() < 1e-15);
    assert!((p.max_radius_m() - 0.2f64.hypot(0.05)).abs() < 1e-15);
}
