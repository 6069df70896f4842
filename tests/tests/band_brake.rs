//! Band brakes: the capstan relation, a recalled textbook worked example, the closed-form lever
//! balances of the differential band, the φ → 0 limit, and monotonicity and sensitivity
//! properties.
#![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]

mod common;

use clampwise_core::geometry::brake::{
    BrakeError, DifferentialBand, LeverEnd, SimpleBand, TightEndMoment, TorqueGain,
};
use common::rel;
use proptest::prelude::*;

/// [mem: Khurmi & Gupta, Theory of Machines, ch. "Brakes and Dynamometers", worked example of
/// a simple band brake; recalled, not re-checked against the printed page]: band over ¾ of a
/// 450 mm drum, one end at the fulcrum, the other 100 mm from it, operating force 500 mm from
/// it, μ = 0.25, braking torque 225 N·m. Answers: P ≈ 288.8 N when the tight end is on the
/// lever, P ≈ 88.8 N when the slack end is. The book rounds e^{μφ} to 3.25, so 0.5 %.
#[test]
fn simple_band_matches_the_recalled_worked_example() {
    let band = |end| SimpleBand::new(0.225, 270f64.to_radians(), 0.5, 0.1, end).unwrap();
    let force = |end| 225.0 / band(end).torque_per_force(0.25).unwrap();
    assert!(
        rel(force(LeverEnd::Tight), 288.8) < 0.005,
        "{}",
        force(LeverEnd::Tight)
    );
    assert!(
        rel(force(LeverEnd::Slack), 88.8) < 0.005,
        "{}",
        force(LeverEnd::Slack)
    );
}

/// [pub: capstan (Euler–Eytelwein) equation] P₁/P₂ = e^{μφ}, and [calc] T = (P₁ − P₂)·r,
/// for both band types and both lever ends.
#[test]
fn tensions_follow_the_capstan_equation() {
    let (r, phi) = (0.3, 200f64.to_radians());
    for mu in [0.0, 0.1, 0.25, 0.4] {
        let capstan = (mu * phi).exp();
        for end in [LeverEnd::Slack, LeverEnd::Tight] {
            let band = SimpleBand::new(r, phi, 0.8, 0.05, end).unwrap();
            let (p1, p2) = band.tensions_per_force(mu).unwrap();
            assert!(rel(p1 / p2, capstan) < 1e-14);
            let g = band.torque_per_force(mu).unwrap();
            assert!((g - (p1 - p2) * r).abs() <= 1e-14 * p1 * r);
        }
        let diff =
            DifferentialBand::new(r, phi, 0.8, 0.02, 0.1, TightEndMoment::AidsActuator).unwrap();
        let (p1, p2) = diff.tensions_per_force(mu).unwrap();
        assert!(rel(p1 / p2, capstan) < 1e-14);
        // [calc] lever balance F·L = P₂·s₂ − P₁·s₁ with F = 1.
        assert!(rel(p2 * 0.1 - p1 * 0.02, 0.8) < 1e-12);
    }
}

/// [calc] the differential band locks where the lever ratio meets the capstan ratio,
/// e^{μφ} = s₂/s₁; reversing the drum (tight end opposing the actuator) never locks.
#[test]
fn differential_band_locks_where_lever_ratio_meets_capstan_ratio() {
    let (s1, s2, phi) = (0.025, 0.125, 240f64.to_radians());
    let band = DifferentialBand::new(0.25, phi, 0.6, s1, s2, TightEndMoment::AidsActuator).unwrap();
    let locking = band.locking_coefficient().unwrap();
    assert!(rel((locking * phi).exp(), s2 / s1) < 1e-14);
    assert!(matches!(
        band.torque_per_force(locking),
        Err(BrakeError::SelfLocking { .. })
    ));
    assert!(band.torque_per_force(locking * 0.999_999).unwrap() > 1e4);
    let reversed =
        DifferentialBand::new(0.25, phi, 0.6, s2, s1, TightEndMoment::OpposesActuator).unwrap();
    assert!(reversed.locking_coefficient().is_none());
    assert!(reversed.torque_per_force(5.0).unwrap().is_finite());
    // [calc] reversed: F·L = P₁·s₁ − P₂·s₂ (s₁ now the larger arm).
    let (p1, p2) = reversed.tensions_per_force(0.3).unwrap();
    assert!(rel(p1 * s2 - p2 * s1, 0.6) < 1e-12);
}

/// An invented hoist holding brake: a band over 250° of a 500 mm drum, slack end on a
/// weighted lever (ratio 6:1), tight end at the fixed pin. Holding 3 kN·m at μ = 0.35 needs
/// the lever force F = T/g; a 20 % fall in μ raises that force by S·20 % to first order.
#[test]
fn invented_hoist_band_brake() {
    let band = SimpleBand::new(0.25, 250f64.to_radians(), 0.9, 0.15, LeverEnd::Slack).unwrap();
    let g = band.torque_per_force(0.35).unwrap();
    let s = band.sensitivity(0.35).unwrap();
    // [calc] S = μφ·e^{μφ} / (e^{μφ} − 1).
    let x = 0.35 * 250f64.to_radians();
    assert!(rel(s, x * x.exp() / x.exp_m1()) < 1e-14);
    let low = band.torque_per_force(0.35 * 0.99).unwrap();
    assert!(rel((g - low) / g / 0.01, s) < 0.02);
    assert!(3000.0 / g < 3000.0 / (0.35 * 0.25 * 6.0));
}

/// Bad inputs are typed errors naming the configuration key.
#[test]
fn bad_inputs_name_the_parameter() {
    let cases = [
        (
            SimpleBand::new(0.0, 1.0, 1.0, 0.1, LeverEnd::Slack).unwrap_err(),
            "drum_radius_m",
        ),
        (
            SimpleBand::new(0.2, 7.0, 1.0, 0.1, LeverEnd::Slack).unwrap_err(),
            "wrap_angle_rad",
        ),
        (
            SimpleBand::new(0.2, 1.0, -1.0, 0.1, LeverEnd::Slack).unwrap_err(),
            "actuation_arm_m",
        ),
        (
            SimpleBand::new(0.2, 1.0, 1.0, f64::NAN, LeverEnd::Slack).unwrap_err(),
            "band_arm_m",
        ),
        (
            DifferentialBand::new(0.2, 1.0, 1.0, 0.2, 0.1, TightEndMoment::AidsActuator)
                .unwrap_err(),
            "tight_end_arm_m",
        ),
        (
            DifferentialBand::new(0.2, 1.0, 1.0, 0.1, 0.0, TightEndMoment::AidsActuator)
                .unwrap_err(),
            "slack_end_arm_m",
        ),
        (
            SimpleBand::new(0.2, 1.0, 1.0, 0.1, LeverEnd::Slack)
                .unwrap()
                .torque_per_force(1e6)
                .unwrap_err(),
            "friction_coefficient",
        ),
    ];
    for (e, key) in cases {
        assert!(e.to_string().contains(key), "{key}: {e}");
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(500))]

    /// φ → 0: torque vanishes linearly, g ≈ k·r·μ·φ (k the lever ratio) with a relative error
    /// of order μφ [calc: e^{x} − 1 = x + O(x²)].
    #[test]
    fn small_wrap_is_linear(r in 0.05f64..1.0, l in 0.1f64..2.0, s in 0.01f64..0.3,
                            mu in 0.01f64..1.0, phi in 1e-9f64..1e-4) {
        for end in [LeverEnd::Slack, LeverEnd::Tight] {
            let band = SimpleBand::new(r, phi, l, s, end).unwrap();
            let linear = l / s * r * mu * phi;
            prop_assert!(rel(band.torque_per_force(mu).unwrap(), linear) <= mu * phi);
        }
        let s2 = s * 3.0;
        let diff = DifferentialBand::new(r, phi, l, s, s2, TightEndMoment::AidsActuator).unwrap();
        let linear = l / (s2 - s) * r * mu * phi;
        prop_assert!(rel(diff.torque_per_force(mu).unwrap(), linear) <= 2.0 * mu * phi);
    }

    /// g rises with μ; S ≥ 1 with the slack end on the lever (or a self-energising
    /// differential band), S ≤ 1 with the tight end on it; S against a central difference.
    #[test]
    fn monotone_and_sensitivity(r in 0.05f64..1.0, phi in 0.2f64..6.2, l in 0.1f64..2.0,
                                s1 in 0.01f64..0.1, ratio in 1.5f64..6.0,
                                lo in 0.0f64..0.9, step in 0.001f64..0.09) {
        let s2 = s1 * ratio;
        let diff = DifferentialBand::new(r, phi, l, s1, s2, TightEndMoment::AidsActuator).unwrap();
        let limit = diff.locking_coefficient().unwrap().min(1.0);
        let (mu1, mu2) = (lo * limit, (lo + step) * limit);
        let slack = SimpleBand::new(r, phi, l, s1, LeverEnd::Slack).unwrap();
        let tight = SimpleBand::new(r, phi, l, s1, LeverEnd::Tight).unwrap();
        let reversed = DifferentialBand::new(r, phi, l, s2, s1, TightEndMoment::OpposesActuator).unwrap();
        let models: [&dyn TorqueGain; 4] = [&slack, &tight, &diff, &reversed];
        for m in models {
            prop_assert!(m.torque_per_force(mu2).unwrap() > m.torque_per_force(mu1).unwrap());
            let h = 1e-6 * mu2;
            let slope = (m.torque_per_force(mu2 + h).unwrap() - m.torque_per_force(mu2 - h).unwrap())
                / (2.0 * h);
            let s = slope * mu2 / m.torque_per_force(mu2).unwrap();
            prop_assert!(rel(m.sensitivity(mu2).unwrap(), s) < 1e-5);
        }
        for mu in [mu1, mu2] {
            prop_assert!(slack.sensitivity(mu).unwrap() >= 1.0);
            prop_assert!(diff.sensitivity(mu).unwrap() >= 1.0);
            prop_assert!(tight.sensitivity(mu).unwrap() <= 1.0);
            prop_assert!(slack.torque_per_force(mu).unwrap() >= tight.torque_per_force(mu).unwrap());
        }
    }
}
