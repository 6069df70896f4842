//! Property tests over the geometry input space (proptest): the effective radius lies within
//! the pad's radial extent, uniform pressure never gives a smaller radius than uniform wear
//! (Chebyshev's inequality on r and 1/r [calc]; uniform wear is the conservative rating
//! [pub: Ugural ch. 13]), r_e rises with the outer radius, bedding moves r_e monotonically
//! between the two, and a pad's radii do not change when it is turned about the axis.
#![allow(
    clippy::indexing_slicing,
    clippy::unwrap_used,
    clippy::float_cmp,
    clippy::cast_precision_loss
)]

use std::f64::consts::TAU;

use clampwise_core::geometry::{
    Annulus, ButtonModel, ButtonPad, Contact, Disc, EffectiveRadii, Point, PolygonPad, SectorPad,
    Shape,
};
use proptest::prelude::*;

/// Rounding allowance for comparisons between two f64 computations of radii, relative.
const ROUND: f64 = 1e-12;

fn band() -> Disc {
    Disc::new(0.005, 1.0).unwrap()
}

/// Radii within the extent, ordered: min ≤ r_uw ≤ r_up ≤ max (with rounding allowance).
fn bracketed(r: EffectiveRadii, min: f64, max: f64) -> Result<(), TestCaseError> {
    let tol = ROUND * max;
    prop_assert!(
        min - tol <= r.uniform_wear_m,
        "{min} ≤ {}",
        r.uniform_wear_m
    );
    prop_assert!(r.uniform_wear_m <= r.uniform_pressure_m + tol, "{r:?}");
    prop_assert!(
        r.uniform_pressure_m <= max + tol,
        "{} ≤ {max}",
        r.uniform_pressure_m
    );
    Ok(())
}

/// A star-shaped (hence simple) polygon about (e, 0), turned by `turn` about the axis.
fn star(e: f64, reach: f64, radii: &[f64], jitter: &[f64], turn: f64) -> Vec<Point> {
    let n = radii.len();
    let step = TAU / n as f64;
    radii
        .iter()
        .zip(jitter)
        .enumerate()
        .map(|(k, (&rho, &j))| {
            let a = step * (k as f64 + 0.9 * j);
            let (x, y) = (e + reach * rho * a.cos(), reach * rho * a.sin());
            let (s, c) = turn.sin_cos();
            Point::new(c * x - s * y, s * x + c * y)
        })
        .collect()
}

prop_compose! {
    /// (centre distance e, reach, vertex radii, angle jitter) of a polygon inside the band.
    fn star_params()(n in 3usize..14)(
        e in 0.03f64..0.9,
        frac in 0.05f64..0.95,
        radii in prop::collection::vec(0.2f64..1.0, n),
        jitter in prop::collection::vec(0.0f64..1.0, n),
    ) -> (f64, f64, Vec<f64>, Vec<f64>) {
        let reach = frac * (e - 0.005).min(1.0 - e);
        (e, reach, radii, jitter)
    }
}

proptest! {
    #[test]
    fn annulus_radius_within_extent(ro in 0.01f64..1.0, k in 0.0f64..0.999) {
        let a = Annulus::new(k * ro, ro).unwrap();
        bracketed(a.effective_radii(), k * ro, ro)?;
    }

    #[test]
    fn sector_radius_within_extent(ri in 0.005f64..0.9, w in 1e-4f64..0.5, angle in 1e-3f64..TAU) {
        let ro = (ri + w).min(1.0);
        prop_assume!(ri < ro);
        let s = SectorPad::new(&band(), ri, ro, angle).unwrap();
        bracketed(s.effective_radii(), ri, ro)?;
    }

    #[test]
    fn button_radius_within_extent(e in 0.02f64..0.9, frac in 0.01f64..1.0) {
        let rr = frac * (e - 0.005).min(1.0 - e);
        prop_assume!(rr > 0.0);
        for model in [ButtonModel::Integrated, ButtonModel::PublishedTable] {
            let rr = if model == ButtonModel::PublishedTable { rr.min(0.5 * e) } else { rr };
            let p = ButtonPad::new(&band(), rr, e, model).unwrap();
            bracketed(p.effective_radii(), e - rr, e + rr)?;
        }
    }

    #[test]
    fn polygon_radius_within_extent((e, reach, radii, jitter) in star_params(), turn in 0.0f64..TAU) {
        let v = star(e, reach, &radii, &jitter, turn);
        let p = PolygonPad::new(&band(), &v).unwrap();
        bracketed(p.effective_radii(), p.min_radius_m(), p.max_radius_m())?;
        prop_assert!(e - reach <= p.min_radius_m() + ROUND && p.max_radius_m() <= e + reach + ROUND);
    }

    #[test]
    fn polygon_radii_do_not_depend_on_orientation((e, reach, radii, jitter) in star_params(), turn in 0.0f64..TAU) {
        let a = star(e, reach, &radii, &jitter, 0.0);
        let b = star(e, reach, &radii, &jitter, turn);
        let ra = PolygonPad::new(&band(), &a).unwrap().effective_radii();
        let rb = PolygonPad::new(&band(), &b).unwrap().effective_radii();
        prop_assert!((ra.uniform_pressure_m - rb.uniform_pressure_m).abs() <= 1e-10 * e);
        prop_assert!((ra.uniform_wear_m - rb.uniform_wear_m).abs() <= 1e-10 * e);
    }

    #[test]
    fn annulus_radius_rises_with_outer_radius(ri in 0.0f64..0.5, w in 1e-3f64..0.5, grow in 1e-6f64..1.0) {
        let (ro1, ro2) = (ri + w, (ri + w) * (1.0 + grow));
        let a = Annulus::new(ri, ro1).unwrap().effective_radii();
        let b = Annulus::new(ri, ro2).unwrap().effective_radii();
        prop_assert!(b.uniform_pressure_m > a.uniform_pressure_m);
        prop_assert!(b.uniform_wear_m > a.uniform_wear_m);
    }

    #[test]
    fn sector_and_polygon_radius_rise_with_outer_radius(
        ri in 0.01f64..0.4, w in 0.01f64..0.3, grow in 1e-3f64..0.5, angle in 0.05f64..6.0,
    ) {
        let disc = Disc::new(0.005, 2.0).unwrap();
        let (ro1, ro2) = (ri + w, (ri + w) * (1.0 + grow));
        let a = SectorPad::new(&disc, ri, ro1, angle).unwrap().effective_radii();
        let b = SectorPad::new(&disc, ri, ro2, angle).unwrap().effective_radii();
        prop_assert!(b.uniform_pressure_m > a.uniform_pressure_m);
        prop_assert!(b.uniform_wear_m > a.uniform_wear_m);
        // The polygon integrator sees the same when the outer arc of an approximation moves out.
        let arc = |r: f64, k: usize| Point::from_polar(r, angle * k as f64 / 15.0);
        let poly = |ro: f64| -> Vec<Point> {
            (0..16).map(|k| arc(ro, k)).chain((0..16).rev().map(|k| arc(ri, k))).collect()
        };
        let (pa, pb) = (poly(ro1), poly(ro2));
        let pa = PolygonPad::new(&disc, &pa).unwrap().effective_radii();
        let pb = PolygonPad::new(&disc, &pb).unwrap().effective_radii();
        prop_assert!(pb.uniform_pressure_m > pa.uniform_pressure_m);
        prop_assert!(pb.uniform_wear_m > pa.uniform_wear_m);
    }

    #[test]
    fn bedding_moves_radius_monotonically(
        (e, reach, radii, jitter) in star_params(),
        ri in 0.005f64..0.5, w in 1e-3f64..0.5,
        b1 in 0.0f64..=1.0, b2 in 0.0f64..=1.0,
        cone_deg in prop::option::of(1.0f64..89.0),
        faces in 1u8..=255,
    ) {
        let (lo, hi) = if b1 <= b2 { (b1, b2) } else { (b2, b1) };
        let v = star(e, reach, &radii, &jitter, 0.3);
        let shapes: [Shape<'_>; 4] = [
            Annulus::new(ri, ri + w).unwrap().into(),
            SectorPad::new(&band(), ri, (ri + w).min(1.0), 1.0).unwrap().into(),
            ButtonPad::new(&band(), reach, e, ButtonModel::Integrated).unwrap().into(),
            PolygonPad::new(&band(), &v).unwrap().into(),
        ];
        for shape in shapes {
            let c = Contact::new(shape, faces, cone_deg.map(f64::to_radians)).unwrap();
            let r = shape.effective_radii();
            let (r_lo, r_hi) = (c.effective_radius(lo).unwrap(), c.effective_radius(hi).unwrap());
            let tol = ROUND * r.uniform_pressure_m;
            // Bedding moves r_e from r_up (b = 0) towards r_uw (b = 1), never back.
            prop_assert!(r_hi <= r_lo + tol, "b {lo} → {hi}: {r_lo} → {r_hi}");
            prop_assert!(r.uniform_wear_m - tol <= r_hi && r_lo <= r.uniform_pressure_m + tol);
            prop_assert_eq!(c.effective_radius(0.0).unwrap(), r.uniform_pressure_m);
            prop_assert_eq!(c.effective_radius(1.0).unwrap(), r.uniform_wear_m);
            // A cone's lever arm is longer than the radius; faces multiply the torque only.
            let arm = c.lever_arm(lo).unwrap();
            let arm_ok = if cone_deg.is_some() { arm > r_lo } else { arm == r_lo };
            prop_assert!(arm_ok, "lever arm {arm} for r_e {r_lo}");
            let t = c.torque_per_unit_mu_force(lo).unwrap();
            prop_assert!((t - f64::from(faces) * arm).abs() <= 1e-12 * t);
        }
    }
}
