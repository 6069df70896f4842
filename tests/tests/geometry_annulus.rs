//! Flat annular contacts, the solid disc, sector pads, friction faces and cones against the
//! published formulas and check values computed from them (each source named beside its
//! check, with its marking).
#![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]

use std::f64::consts::TAU;

use clampwise_core::geometry::{Annulus, Contact, Disc, EffectiveRadii, PressureModel, SectorPad};

fn close(got: f64, want: f64, tol: f64) {
    assert!(
        (got - want).abs() <= tol,
        "{got} vs {want} (tolerance {tol})"
    );
}

/// Annulus check vector [calc: T = N·μ·F·r_e, r_uw = (Ro+Ri)/2, r_up = (2/3)(Ro³−Ri³)/(Ro²−Ri²),
/// Shigley ch. 16]: Ro = 100 mm, Ri = 60 mm, μ = 0.30, F = 10 kN.
#[test]
fn annulus_check_vector() {
    let (mu, f) = (0.30, 10_000.0);
    let face = Contact::new(Annulus::new(0.060, 0.100).unwrap(), 1, None).unwrap();
    // Uniform wear: r_e = 80.000 mm, T = 240.00 N·m.
    close(face.effective_radius(1.0).unwrap() * 1e3, 80.000, 0.0005);
    close(
        mu * f * face.torque_per_unit_mu_force(1.0).unwrap(),
        240.00,
        0.005,
    );
    // Uniform pressure: r_e = 81.667 mm, T = 245.00 N·m.
    close(face.effective_radius(0.0).unwrap() * 1e3, 81.667, 0.0005);
    close(
        mu * f * face.torque_per_unit_mu_force(0.0).unwrap(),
        245.00,
        0.005,
    );
    // N = 6 faces: 1440 N·m.
    let pack = Contact::new(Annulus::new(0.060, 0.100).unwrap(), 6, None).unwrap();
    close(
        mu * f * pack.torque_per_unit_mu_force(1.0).unwrap(),
        1440.0,
        0.05,
    );
}

/// [pub: Shigley ch. 16; Ugural ch. 13] r_up = (2/3)(Ro³−Ri³)/(Ro²−Ri²), r_uw = (Ro+Ri)/2,
/// written here in the unfactored textbook form (the core uses a factored one).
#[test]
fn annulus_formulas() {
    for &(ri, ro) in &[
        (0.0, 0.05),
        (0.02, 0.05),
        (0.1, 0.3),
        (0.25, 0.3),
        (0.5, 1.0),
    ] {
        let r = Annulus::new(ri, ro).unwrap().effective_radii();
        let up = 2.0 / 3.0 * (ro * ro * ro - ri * ri * ri) / (ro * ro - ri * ri);
        close(r.uniform_pressure_m, up, 1e-14 * ro);
        close(r.uniform_wear_m, 0.5 * (ro + ri), 1e-15 * ro);
        close(r.get(PressureModel::UniformPressure), up, 1e-14 * ro);
    }
}

/// Ratio r_up/r_uw by Ri/Ro, 4 decimals [calc: (4/3)(1 + k + k²)/(1 + k)², k = Ri/Ro, from the
/// two annulus radii of Shigley ch. 16].
#[test]
fn pressure_to_wear_ratio_table() {
    let table = [
        (0.0, 1.3333),
        (0.3, 1.0966),
        (0.5, 1.0370),
        (0.577, 1.0240),
        (0.7, 1.0104),
        (0.9, 1.0009),
    ];
    for (k, want) in table {
        let r = Annulus::new(k * 0.2, 0.2).unwrap().effective_radii();
        close(
            r.uniform_pressure_m / r.uniform_wear_m,
            want,
            0.5e-4 + 1e-12,
        );
    }
}

/// [pub: Shigley ch. 16] Solid disc: r_up = 2R/3, r_uw = R/2; and the annulus tends to it as
/// Ri → 0.
#[test]
fn solid_disc_limit() {
    for rr in [0.01, 0.1, 1.0] {
        let r = Annulus::solid_disc(rr).unwrap().effective_radii();
        close(r.uniform_pressure_m, 2.0 * rr / 3.0, 1e-15);
        close(r.uniform_wear_m, rr / 2.0, 1e-15);
        let mut last = f64::INFINITY;
        for ri in [1e-2, 1e-3, 1e-4, 1e-6] {
            let a = Annulus::new(ri * rr, rr).unwrap().effective_radii();
            let err = (a.uniform_pressure_m - 2.0 * rr / 3.0).abs();
            assert!(err < last, "approaches 2R/3 as Ri → 0");
            last = err;
        }
        assert!(last < 1e-6 * rr);
    }
}

/// [pub: Shigley ch. 16] The sector angle cancels out of r_e and of torque at a
/// given force: every sector has the annulus radii of the textbook formulas; it sets the area
/// (F = ½·Δθ·p·(Ro²−Ri²)) and, under uniform wear, the peak pressure (F = Δθ·p_max·Ri·(Ro−Ri)).
#[test]
fn sector_angle_independence() {
    let disc = Disc::new(0.05, 0.16).unwrap();
    let (ri, ro) = (0.08, 0.15);
    let full = EffectiveRadii {
        uniform_pressure_m: 2.0 / 3.0 * (ro * ro * ro - ri * ri * ri) / (ro * ro - ri * ri),
        uniform_wear_m: 0.5 * (ro + ri),
    };
    let force = 20_000.0;
    for deg in [5.0, 30.0, 60.0, 90.0, 180.0, 270.0, 360.0] {
        let angle = f64::to_radians(deg);
        let pad = SectorPad::new(&disc, ri, ro, angle).unwrap();
        let r = pad.effective_radii();
        close(r.uniform_pressure_m, full.uniform_pressure_m, 1e-15);
        close(r.uniform_wear_m, full.uniform_wear_m, 1e-15);
        let t = force
            * Contact::new(pad, 2, None)
                .unwrap()
                .torque_per_unit_mu_force(0.0)
                .unwrap();
        close(t, force * 2.0 * full.uniform_pressure_m, 1e-9);
        let i = pad.integrals();
        let p = i.peak_pressure_pa(PressureModel::UniformPressure, force, ri);
        close(force, 0.5 * angle * p * (ro * ro - ri * ri), 1e-9);
        let p_max = i.peak_pressure_pa(PressureModel::UniformWear, force, ri);
        close(force, angle * p_max * ri * (ro - ri), 1e-9);
    }
    // The whole band: area π(Ro² − Ri²) [calc].
    let whole = SectorPad::across_band(&disc, TAU).unwrap();
    close(
        whole.integrals().area_m2,
        0.5 * TAU * (0.16 * 0.16 - 0.05 * 0.05),
        1e-15,
    );
}

/// [pub: Shigley ch. 16] T = N·μ·F·r_e for N friction interfaces: torque scales with the
/// number of faces, the per-face lever arm does not.
#[test]
fn torque_scales_with_friction_faces() {
    let face = Annulus::new(0.06, 0.10).unwrap();
    let one = Contact::new(face, 1, None).unwrap();
    for n in [1u8, 2, 6, 13, 255] {
        let c = Contact::new(face, n, None).unwrap();
        assert_eq!(c.faces(), n);
        for b in [0.0, 0.4, 1.0] {
            close(
                c.torque_per_unit_mu_force(b).unwrap(),
                f64::from(n) * one.torque_per_unit_mu_force(b).unwrap(),
                1e-12,
            );
            assert_eq!(c.lever_arm(b).unwrap(), one.lever_arm(b).unwrap());
        }
    }
}

/// Friction faces of common arrangements, as stated for each: a caliper, 2 (one pad on each
/// side of the disc) [practice]; a single-plate dry clutch, 2 (one driven disc faced on both
/// sides, between flywheel and pressure plate) [practice]; a twin-plate clutch, 4 (two driven
/// discs, flywheel, intermediate and pressure plate) [practice]; a multi-plate pack of 4 driving
/// and 3 driven plates, 6 [mem: Shigley ch. 16, N = n_a + n_b − 1]. Each count is checked
/// against the n_a + n_b − 1 rule the core's docs give, and the torque against the annulus
/// check vector (240.00 N·m per face, bedded, μ = 0.30, F = 10 kN [calc]).
#[test]
fn friction_faces_of_stated_arrangements() {
    // (arrangement, driving members n_a, driven members n_b, stated faces)
    let stated = [
        ("caliper: two pads, one disc", 2u8, 1u8, 2u8),
        ("single-plate clutch", 2, 1, 2),
        ("twin-plate clutch", 3, 2, 4),
        ("multi-plate pack, 4 driving + 3 driven", 4, 3, 6),
    ];
    let face = Annulus::new(0.06, 0.10).unwrap();
    for (what, n_a, n_b, faces) in stated {
        assert_eq!(n_a + n_b - 1, faces, "{what}: the n_a + n_b − 1 rule");
        let c = Contact::new(face, faces, None).unwrap();
        assert_eq!(c.faces(), faces, "{what}");
        close(
            0.3 * 10_000.0 * c.torque_per_unit_mu_force(1.0).unwrap(),
            240.00 * f64::from(faces),
            1e-9,
        );
    }
}

/// [pub: Shigley ch. 16, cone clutch] uniform pressure T = μF(Do³−Di³)/(3 sin α (Do²−Di²)),
/// uniform wear T = μF(Do+Di)/(4 sin α), diameters Do, Di.
#[test]
fn cone_contacts() {
    let (di, d_o) = (0.18, 0.22);
    let (mu, f) = (0.3, 2_000.0);
    // Half-angles of practice (8–18° [practice]) and beyond, across the open range.
    for deg in [0.5, 8.0, 12.0, 18.0, 45.0, 89.5] {
        let alpha = f64::to_radians(deg);
        let s = alpha.sin();
        let cone =
            Contact::new(Annulus::new(di / 2.0, d_o / 2.0).unwrap(), 1, Some(alpha)).unwrap();
        let t_up = mu * f * (d_o.powi(3) - di.powi(3)) / (3.0 * s * (d_o * d_o - di * di));
        let t_uw = mu * f * (d_o + di) / (4.0 * s);
        close(mu * f * cone.lever_arm(0.0).unwrap(), t_up, 1e-10 * t_up);
        close(mu * f * cone.lever_arm(1.0).unwrap(), t_uw, 1e-10 * t_uw);
        // The effective radius stays that of the projected face.
        close(cone.effective_radius(1.0).unwrap(), (d_o + di) / 4.0, 1e-15);
        assert!(cone.cone().unwrap().lever_arm_factor() > 1.0);
    }
}

/// [pub: Orthwein] Under uniform wear with Ro and p_max fixed, Ri/Ro = 1/√3 gives the largest
/// torque. Found here by golden-section search on the core's own integrals and radii:
/// T/(μ·p_max) = Ri·∫(dA/r)·r_uw.
#[test]
fn uniform_wear_optimum_inner_radius() {
    let ro = 0.25;
    let torque_per_mu_pmax = |ri: f64| {
        let a = Annulus::new(ri, ro).unwrap();
        let i = a.integrals();
        let force = 1.0 / i.peak_pressure_pa(PressureModel::UniformWear, 1.0, ri);
        force * a.effective_radii().uniform_wear_m
    };
    let (mut lo, mut hi) = (0.05 * ro, 0.95 * ro);
    let g = (5f64.sqrt() - 1.0) / 2.0;
    for _ in 0..100 {
        let m1 = hi - g * (hi - lo);
        let m2 = lo + g * (hi - lo);
        if torque_per_mu_pmax(m1) < torque_per_mu_pmax(m2) {
            lo = m1;
        } else {
            hi = m2;
        }
    }
    close(0.5 * (lo + hi) / ro, 1.0 / 3f64.sqrt(), 1e-6);
}

/// [pub: Ugural ch. 13] Uniform wear gives the lower, conservative torque.
#[test]
fn uniform_wear_is_the_conservative_rating() {
    for k in [0.0, 0.1, 0.5, 0.9, 0.999] {
        let r = Annulus::new(k, 1.0).unwrap().effective_radii();
        assert!(r.uniform_wear_m < r.uniform_pressure_m, "Ri/Ro = {k}");
    }
}
