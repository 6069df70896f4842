//! Cone engagement with the axial friction term, against the force balance along the axis and
//! against the plain cone model of `geometry::ConeAngle` (which neglects that term).
#![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]

mod common;

use clampwise_core::geometry::brake::{BrakeError, ConeEngagement, ConePhase, TorqueGain};
use clampwise_core::geometry::{Annulus, ConeAngle, Contact};
use common::rel;
use proptest::prelude::*;

fn cone(alpha_deg: f64, r: f64, phase: ConePhase) -> ConeEngagement {
    ConeEngagement::new(ConeAngle::new(alpha_deg.to_radians()).unwrap(), r, phase).unwrap()
}

/// [calc: axial force balance on the cone face, F = N·(sin α ± μ·cos α), T = μ·N·r_e; the
/// engaging form as in machine-design texts' cone-clutch sections, e.g. Juvinall & Marshek
/// (mem)] resolved by hand here from the normal and friction components of one face element.
#[test]
fn axial_balance_of_a_face_element() {
    let (alpha, mu, r) = (12f64.to_radians(), 0.3, 0.1);
    // Unit normal force on the face; its axial component sin α; friction μ along the
    // generatrix, axial component μ·cos α, opposing the axial sliding.
    let engaging_axial = alpha.sin() + mu * alpha.cos();
    let engaging = cone(12.0, r, ConePhase::Engaging);
    let withdrawing = cone(12.0, r, ConePhase::Withdrawing);
    assert!(
        rel(
            engaging.normal_force_per_force(mu).unwrap(),
            1.0 / engaging_axial
        ) < 1e-15
    );
    assert!(
        rel(
            engaging.torque_per_force(mu).unwrap(),
            mu * r / engaging_axial
        ) < 1e-15
    );
    // μ = 0.3 > tan 12° = 0.2126: a 12° cone at this μ is already jammed when withdrawing.
    assert!(matches!(
        withdrawing.torque_per_force(mu),
        Err(BrakeError::SelfLocking { .. })
    ));
    let withdrawing_axial = alpha.sin() - 0.15 * alpha.cos();
    assert!(
        rel(
            withdrawing.normal_force_per_force(0.15).unwrap(),
            1.0 / withdrawing_axial
        ) < 1e-15
    );
    assert!(
        rel(
            withdrawing.torque_per_force(0.15).unwrap(),
            0.15 * r / withdrawing_axial
        ) < 1e-15
    );
}

/// [practice: a cone self-locks once pressed in when μ ≥ tan α; half-angles are kept above
/// ≈ 8° for that reason with common linings] the locking μ is tan α, in both phases' reports.
#[test]
fn self_locking_at_tan_alpha() {
    for deg in [8.0, 12.0, 18.0, 30.0] {
        let w = cone(deg, 0.1, ConePhase::Withdrawing);
        let e = cone(deg, 0.1, ConePhase::Engaging);
        let tan = f64::tan(deg.to_radians());
        assert!(rel(w.self_locking_coefficient(), tan) < 1e-15);
        assert!(rel(w.locking_coefficient().unwrap(), tan) < 1e-15);
        assert!(rel(e.self_locking_coefficient(), tan) < 1e-15);
        assert_eq!(e.locking_coefficient(), None);
    }
}

/// Mean radius errors name the key.
#[test]
fn bad_radius_names_the_parameter() {
    let a = ConeAngle::new(0.2).unwrap();
    let e = ConeEngagement::new(a, -0.1, ConePhase::Engaging).unwrap_err();
    assert!(e.to_string().contains("mean_radius_m"), "{e}");
}

proptest! {
    /// Arithmetic check between two core models: the plain model T = μ·F·r_e/sin α (the
    /// formula of Shigley ch. 16 [pub], as the core's `Contact` computes it) lies between
    /// the engaging and withdrawing values and is their common μ → 0 slope; engaging S ≤ 1,
    /// withdrawing S ≥ 1; g rises with μ.
    #[test]
    fn plain_cone_model_lies_between(deg in 6.0f64..45.0, ri in 0.02f64..0.2, width in 0.005f64..0.1,
                                     frac in 0.001f64..0.95, bedding in 0.0f64..=1.0) {
        let angle = ConeAngle::new(deg.to_radians()).unwrap();
        let contact = Contact::new(Annulus::new(ri, ri + width).unwrap(), 1, Some(deg.to_radians())).unwrap();
        let r_e = contact.effective_radius(bedding).unwrap();
        let plain = contact.lever_arm(bedding).unwrap();
        let engaging = ConeEngagement::new(angle, r_e, ConePhase::Engaging).unwrap();
        let withdrawing = ConeEngagement::new(angle, r_e, ConePhase::Withdrawing).unwrap();
        let mu = frac * withdrawing.self_locking_coefficient().min(1.0);
        let ge = engaging.torque_per_force(mu).unwrap();
        let gw = withdrawing.torque_per_force(mu).unwrap();
        prop_assert!(ge <= mu * plain * (1.0 + 1e-14));
        prop_assert!(gw >= mu * plain * (1.0 - 1e-14));
        prop_assert!(engaging.sensitivity(mu).unwrap() <= 1.0);
        prop_assert!(withdrawing.sensitivity(mu).unwrap() >= 1.0);
        let tiny = 1e-9;
        prop_assert!(rel(engaging.torque_per_force(tiny).unwrap(), tiny * plain) < 1e-8);
        prop_assert!(engaging.torque_per_force(mu * 1.01).unwrap() > ge);
        prop_assert!(withdrawing.torque_per_force(mu * 1.01).unwrap_or(f64::INFINITY) > gw);
    }
}
