//! Drum (shoe) brakes: the pivoted long shoe against a recalled textbook worked example, its
//! moment integrals against general-purpose quadrature of the force elements (a different
//! formulation: vector moments of each lining element, not the closed-form integrals), the
//! block shoe against its closed-form lever balance, and the properties every shoe must have.
#![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]

mod common;

use std::num::NonZeroUsize;

use clampwise_core::geometry::brake::{
    BlockGeometry, BlockShoe, BrakeError, BrakeParameter, Mounting, PivotedShoe, ShoeAction,
    ShoeGeometry, ShoePair, TorqueGain,
};
use common::rel;
use proptest::prelude::*;

/// The internal expanding shoe of Shigley's worked example (ch. 16, "Internal expanding rim
/// brakes", the 300 mm brake with two identical shoes, one force F on each) [mem: Shigley's
/// Mechanical Engineering Design, ch. 16 worked example; recalled, not re-checked against the
/// printed page]: r = 150 mm, pin at a = √(112² + 50²) mm, lining θ₁ = 0°…θ₂ = 126°,
/// b = 32 mm, F at c = 212 mm, f = 0.32, p_a = 1000 kPa on the leading shoe.
fn textbook_shoe(action: ShoeAction) -> PivotedShoe {
    PivotedShoe::new(
        ShoeGeometry {
            drum_radius_m: 0.150,
            pin_distance_m: 0.112f64.hypot(0.050),
            arc_start_rad: 0.0,
            arc_end_rad: 126f64.to_radians(),
            face_width_m: 0.032,
            actuation_arm_m: 0.212,
        },
        Mounting::Internal,
        action,
    )
    .unwrap()
}

const TEXTBOOK_MU: f64 = 0.32;
const TEXTBOOK_PA: f64 = 1.0e6;

/// The printed answers are rounded to three figures and the book rounds intermediate results,
/// so a recalled value is held to 1 %.
const RECALLED: f64 = 0.01;

/// [mem: Shigley ch. 16 worked example] M_f ≈ 304 N·m, M_N ≈ 790 N·m, F ≈ 2.29 kN,
/// T ≈ 366 N·m on the leading (right-hand) shoe.
#[test]
fn leading_shoe_matches_the_recalled_worked_example() {
    let m = textbook_shoe(ShoeAction::Leading)
        .moments(TEXTBOOK_MU, TEXTBOOK_PA)
        .unwrap();
    assert!(rel(m.friction_moment_nm, 304.0) < RECALLED, "{m:?}");
    assert!(rel(m.normal_moment_nm, 790.0) < RECALLED, "{m:?}");
    assert!(rel(m.actuating_force_n, 2290.0) < RECALLED, "{m:?}");
    assert!(rel(m.torque_nm, 366.0) < RECALLED, "{m:?}");
}

/// [mem: same example] the trailing (left-hand) shoe under the same F reaches only
/// p_a ≈ 443 kPa and T ≈ 162 N·m; the brake's capacity is ≈ 528 N·m.
#[test]
fn trailing_shoe_and_pair_match_the_recalled_worked_example() {
    let leading = textbook_shoe(ShoeAction::Leading);
    let trailing = textbook_shoe(ShoeAction::Trailing);
    let f = leading
        .moments(TEXTBOOK_MU, TEXTBOOK_PA)
        .unwrap()
        .actuating_force_n;
    let p_trailing = f * trailing.max_pressure_per_force(TEXTBOOK_MU).unwrap();
    assert!(rel(p_trailing, 443.0e3) < RECALLED, "{p_trailing}");
    let t_trailing = f * trailing.torque_per_force(TEXTBOOK_MU).unwrap();
    assert!(rel(t_trailing, 162.0) < RECALLED, "{t_trailing}");
    let pair = ShoePair::new(leading, trailing);
    let t_total = f * pair.torque_per_force(TEXTBOOK_MU).unwrap();
    assert!(rel(t_total, 528.0) < RECALLED, "{t_total}");
    // The pressure and the torque of one shoe agree with each other: T = F·g at p_a = F·(p_a/F).
    let p_leading = f * leading.max_pressure_per_force(TEXTBOOK_MU).unwrap();
    assert!(rel(p_leading, TEXTBOOK_PA) < 1e-12);
}

/// The S(μ) figures quoted in the module docs of `geometry::brake` (the same shoe).
#[test]
fn documented_sensitivities() {
    let leading = textbook_shoe(ShoeAction::Leading);
    let trailing = textbook_shoe(ShoeAction::Trailing);
    let round2 = |x: f64| (x * 100.0).round() / 100.0;
    assert_eq!(round2(leading.sensitivity(TEXTBOOK_MU).unwrap()), 1.63);
    assert_eq!(round2(trailing.sensitivity(TEXTBOOK_MU).unwrap()), 0.72);
    let pair = ShoePair::new(leading, trailing);
    assert_eq!(round2(pair.sensitivity(TEXTBOOK_MU).unwrap()), 1.35);
    // [calc] S = a·I_N / (a·I_N − μ·I_f) = M_N / (M_N − M_f) at any p_a.
    let m = leading.moments(TEXTBOOK_MU, TEXTBOOK_PA).unwrap();
    let s = m.normal_moment_nm / (m.normal_moment_nm - m.friction_moment_nm);
    assert!(rel(leading.sensitivity(TEXTBOOK_MU).unwrap(), s) < 1e-12);
}

/// Moments, torque and actuating force of a shoe by integrating the force on each lining
/// element with the `gauss-quad` crate: element at X = r(cos θ, sin θ), pin at P = (a, 0),
/// normal force p·b·r·dθ along the radius, friction μ times that along the tangent; moments
/// are 2-D cross products (X − P) × force. The peak sin θ is found by dense sampling.
struct Reference {
    friction_moment: f64,
    normal_moment: f64,
    torque: f64,
}

fn reference(g: &ShoeGeometry, mu: f64, p_a: f64) -> Reference {
    let (r, a, b) = (g.drum_radius_m, g.pin_distance_m, g.face_width_m);
    let (t1, t2) = (g.arc_start_rad, g.arc_end_rad);
    let sin_peak = (0..=100_000)
        .map(|k| (t1 + (t2 - t1) * f64::from(k) / 100_000.0).sin())
        .fold(0.0, f64::max);
    let gl = gauss_quad::legendre::GaussLegendre::new(NonZeroUsize::new(40).unwrap());
    let cross = |u: (f64, f64), v: (f64, f64)| u.0 * v.1 - u.1 * v.0;
    let element = |theta: f64| {
        let force = p_a * theta.sin() / sin_peak * b * r;
        let x = (r * theta.cos(), r * theta.sin());
        let arm = (x.0 - a, x.1);
        let radial = (theta.cos(), theta.sin());
        let tangent = (-theta.sin(), theta.cos());
        (
            cross(arm, tangent) * mu * force,
            cross(arm, radial) * force,
            cross(x, tangent) * mu * force,
        )
    };
    Reference {
        friction_moment: gl.integrate(t1, t2, |t| element(t).0).abs(),
        normal_moment: gl.integrate(t1, t2, |t| element(t).1).abs(),
        torque: gl.integrate(t1, t2, |t| element(t).2).abs(),
    }
}

/// A rigid shoe turning about its pin moves each lining point normal to the drum by
/// δ·a·sin θ (the normal component of δ·k × (X − P)), which is why p ∝ sin θ [calc: rigid-body
/// kinematics]. Checked numerically so the pressure law is not only quoted.
#[test]
fn rigid_shoe_normal_displacement_follows_sin_theta() {
    let (r, a) = (0.15, 0.11);
    for k in 1..180 {
        let theta = f64::from(k).to_radians();
        let arm = (r * theta.cos() - a, r * theta.sin());
        let velocity = (-arm.1, arm.0); // k × (X − P) for a unit rotation
        let normal = velocity.0 * theta.cos() + velocity.1 * theta.sin();
        assert!((normal.abs() - a * theta.sin()).abs() < 1e-15, "θ = {k}°");
    }
}

fn shoe_geometry() -> impl Strategy<Value = (ShoeGeometry, Mounting)> {
    (
        0.05f64..0.5,
        0.2f64..0.95,
        0.0f64..40.0,
        30.0f64..140.0,
        0.01f64..0.2,
        0.5f64..3.0,
        any::<bool>(),
    )
        .prop_map(|(r, a_frac, start, span, b, c_frac, internal)| {
            let (a, mounting) = if internal {
                (a_frac * r, Mounting::Internal)
            } else {
                ((1.05 + 2.0 * a_frac) * r, Mounting::External)
            };
            let end = (start + span).min(175.0);
            (
                ShoeGeometry {
                    drum_radius_m: r,
                    pin_distance_m: a,
                    arc_start_rad: start.to_radians(),
                    arc_end_rad: end.to_radians(),
                    face_width_m: b,
                    actuation_arm_m: c_frac * r,
                },
                mounting,
            )
        })
}

/// μ as a fraction of the leading shoe's locking value (or of 1 when it cannot lock), so every
/// case is evaluable.
fn mu_below_locking(shoe: &PivotedShoe, fraction: f64) -> f64 {
    fraction * shoe.locking_coefficient().unwrap_or(1.0).min(1.0)
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(400))]

    /// The closed-form moments against quadrature of the force elements, both mountings and
    /// both actions, to 1e-10 relative.
    #[test]
    fn moments_match_quadrature((g, mounting) in shoe_geometry(), frac in 0.0f64..0.95) {
        for action in [ShoeAction::Leading, ShoeAction::Trailing] {
            let shoe = PivotedShoe::new(g, mounting, action).unwrap();
            let lead = PivotedShoe::new(g, mounting, ShoeAction::Leading).unwrap();
            let mu = mu_below_locking(&lead, frac).max(1e-3);
            let m = shoe.moments(mu, 1.0e6).unwrap();
            let q = reference(&g, mu, 1.0e6);
            prop_assert!(rel(m.friction_moment_nm, q.friction_moment) < 1e-10, "{m:?}");
            prop_assert!(rel(m.normal_moment_nm, q.normal_moment) < 1e-10, "{m:?}");
            prop_assert!(rel(m.torque_nm, q.torque) < 1e-10, "{m:?}");
            // [calc] F·c = M_N ∓ M_f, and g = T/F.
            let sign = if action == ShoeAction::Leading { -1.0 } else { 1.0 };
            let f = (q.normal_moment + sign * q.friction_moment) / g.actuation_arm_m;
            prop_assert!(rel(m.actuating_force_n, f) < 1e-9);
            prop_assert!(rel(shoe.torque_per_force(mu).unwrap(), q.torque / f) < 1e-9);
        }
    }

    /// Leading ≥ trailing; S ≥ 1 leading, ≤ 1 trailing; g rises with μ.
    #[test]
    fn leading_amplifies_trailing_attenuates((g, mounting) in shoe_geometry(),
                                             lo in 0.0f64..0.9, step in 0.001f64..0.09) {
        let lead = PivotedShoe::new(g, mounting, ShoeAction::Leading).unwrap();
        let trail = PivotedShoe::new(g, mounting, ShoeAction::Trailing).unwrap();
        let (mu1, mu2) = (mu_below_locking(&lead, lo), mu_below_locking(&lead, lo + step));
        for mu in [mu1, mu2] {
            prop_assert!(lead.torque_per_force(mu).unwrap() >= trail.torque_per_force(mu).unwrap());
            prop_assert!(lead.sensitivity(mu).unwrap() >= 1.0);
            prop_assert!(trail.sensitivity(mu).unwrap() <= 1.0);
        }
        for shoe in [lead, trail] {
            prop_assert!(shoe.torque_per_force(mu2).unwrap() > shoe.torque_per_force(mu1).unwrap());
        }
    }

    /// A symmetric leading–trailing pair on one force is net self-energising:
    /// g_L + g_T = 2·A·μ·B / (B² − μ²C²) ≥ 2·A·μ / B [calc: 1/(B − x) + 1/(B + x) ≥ 2/B],
    /// and it does not depend on the direction of rotation.
    #[test]
    fn symmetric_pair_is_net_self_energising((g, mounting) in shoe_geometry(), frac in 0.01f64..0.95) {
        let lead = PivotedShoe::new(g, mounting, ShoeAction::Leading).unwrap();
        let trail = PivotedShoe::new(g, mounting, ShoeAction::Trailing).unwrap();
        let mu = mu_below_locking(&lead, frac);
        let forward = ShoePair::new(lead, trail).torque_per_force(mu).unwrap();
        let reverse = ShoePair::new(trail, lead).torque_per_force(mu).unwrap();
        prop_assert_eq!(forward, reverse);
        let (t1, t2) = (g.arc_start_rad, g.arc_end_rad);
        let big_a = g.actuation_arm_m * g.drum_radius_m * (t1.cos() - t2.cos());
        let big_b = g.pin_distance_m * lead.normal_moment_integral();
        let big_c = lead.friction_moment_integral_m();
        let closed = 2.0 * big_a * mu * big_b / (big_b * big_b - mu * mu * big_c * big_c);
        prop_assert!(rel(forward, closed) < 1e-9);
        prop_assert!(forward >= 2.0 * big_a * mu / big_b * (1.0 - 1e-12));
    }

    /// S(μ) against a central difference of g (an arithmetic check of the analytic slope).
    #[test]
    fn sensitivity_matches_finite_difference((g, mounting) in shoe_geometry(), frac in 0.05f64..0.9) {
        let shoe = PivotedShoe::new(g, mounting, ShoeAction::Leading).unwrap();
        let mu = mu_below_locking(&shoe, frac);
        let h = 1e-6 * mu;
        let slope = (shoe.torque_per_force(mu + h).unwrap() - shoe.torque_per_force(mu - h).unwrap())
            / (2.0 * h);
        let s = slope * mu / shoe.torque_per_force(mu).unwrap();
        prop_assert!(rel(shoe.sensitivity(mu).unwrap(), s) < 1e-5);
    }

    /// Block shoe [calc: N = F·a/(b ∓ μ·c), T = μ·N·r]; leading ≥ trailing, S on either side of 1.
    #[test]
    fn block_shoe_lever_balance(r in 0.05f64..0.5, arm_a in 0.1f64..1.5, arm_b in 0.05f64..0.5,
                                arm_c in 0.0f64..0.3, frac in 0.0f64..0.95) {
        let geometry = BlockGeometry {
            drum_radius_m: r,
            actuation_arm_m: arm_a,
            normal_arm_m: arm_b,
            friction_offset_m: arm_c,
        };
        let lead = BlockShoe::new(geometry, ShoeAction::Leading).unwrap();
        let trail = BlockShoe::new(geometry, ShoeAction::Trailing).unwrap();
        let mu = frac * (arm_b / arm_c).min(1.0);
        let n_lead = arm_a / (arm_b - mu * arm_c);
        let n_trail = arm_a / (arm_b + mu * arm_c);
        prop_assert!(rel(lead.normal_force_per_force(mu).unwrap(), n_lead) < 1e-12);
        prop_assert!(rel(trail.normal_force_per_force(mu).unwrap(), n_trail) < 1e-12);
        if mu > 0.0 {
            prop_assert!(rel(lead.torque_per_force(mu).unwrap(), mu * n_lead * r) < 1e-12);
            prop_assert!(rel(trail.torque_per_force(mu).unwrap(), mu * n_trail * r) < 1e-12);
        }
        prop_assert!(lead.sensitivity(mu).unwrap() >= 1.0);
        prop_assert!(trail.sensitivity(mu).unwrap() <= 1.0);
    }
}

/// A leading shoe locks at μ = a·I_N / I_f [calc]; just below it g is finite and huge, at it
/// the model answers with a typed error, not infinity.
#[test]
fn leading_shoe_locks_at_the_predicted_coefficient() {
    let shoe = textbook_shoe(ShoeAction::Leading);
    let g = shoe.geometry();
    let locking =
        g.pin_distance_m * shoe.normal_moment_integral() / shoe.friction_moment_integral_m();
    assert!(rel(shoe.locking_coefficient().unwrap(), locking) < 1e-15);
    let near = shoe.torque_per_force(locking * (1.0 - 1e-9)).unwrap();
    assert!(near > 1e6 * shoe.torque_per_force(TEXTBOOK_MU).unwrap());
    for mu in [locking, locking * 1.5] {
        assert_eq!(
            shoe.torque_per_force(mu),
            Err(BrakeError::SelfLocking {
                friction_coefficient: mu,
                locking_coefficient: shoe.locking_coefficient().unwrap(),
            })
        );
    }
    assert!(
        textbook_shoe(ShoeAction::Trailing)
            .locking_coefficient()
            .is_none()
    );
    let text = shoe.torque_per_force(locking).unwrap_err().to_string();
    assert!(
        text.contains("friction_coefficient") && text.contains("lock"),
        "{text}"
    );
}

/// A block shoe with c = 0 has no friction moment about its pivot: torque linear in μ, S = 1.
#[test]
fn block_with_friction_on_the_pivot_line_is_linear() {
    let block = BlockShoe::new(
        BlockGeometry {
            drum_radius_m: 0.2,
            actuation_arm_m: 0.6,
            normal_arm_m: 0.2,
            friction_offset_m: 0.0,
        },
        ShoeAction::Leading,
    )
    .unwrap();
    assert_eq!(block.locking_coefficient(), None);
    assert!((block.sensitivity(0.4).unwrap() - 1.0).abs() < 1e-15);
    assert!(rel(block.torque_per_force(0.4).unwrap(), 0.4 * 3.0 * 0.2) < 1e-15);
}

/// An invented crane drum brake: two external pivoted shoes closed by one spring, released by
/// a thruster. 400 mm drum, pins 260 mm from the centre, linings 25°…125°, spring at 480 mm.
#[test]
fn invented_crane_brake() {
    let geometry = ShoeGeometry {
        drum_radius_m: 0.200,
        pin_distance_m: 0.260,
        arc_start_rad: 25f64.to_radians(),
        arc_end_rad: 125f64.to_radians(),
        face_width_m: 0.080,
        actuation_arm_m: 0.480,
    };
    let shoe = |action| PivotedShoe::new(geometry, Mounting::External, action).unwrap();
    let brake = ShoePair::new(shoe(ShoeAction::Leading), shoe(ShoeAction::Trailing));
    // Far from locking at service μ; the pair is mildly self-energising.
    let locking = brake.locking_coefficient().unwrap();
    assert!(locking > 1.0, "{locking}");
    let s = brake.sensitivity(0.4).unwrap();
    assert!(s > 1.0 && s < 1.2, "{s}");
    // The spring force for a 2 kN·m holding torque is below what two shoes without the
    // friction moment would need [calc: g = c·r·K·μ / (a·I_N) each].
    let spring_n = 2_000.0 / brake.torque_per_force(0.4).unwrap();
    let lead = brake.first();
    let (t1, t2) = (geometry.arc_start_rad, geometry.arc_end_rad);
    let linear = geometry.actuation_arm_m * geometry.drum_radius_m * (t1.cos() - t2.cos()) * 0.4
        / (geometry.pin_distance_m * lead.normal_moment_integral());
    assert!(
        spring_n < 2_000.0 / (2.0 * linear) && spring_n > 0.0,
        "{spring_n}"
    );
    // The same integrals as an internal shoe: mounting only decides where the pin may lie.
    let flipped = ShoeGeometry {
        pin_distance_m: 0.150,
        ..geometry
    };
    assert_eq!(
        PivotedShoe::new(flipped, Mounting::External, ShoeAction::Leading),
        Err(BrakeError::OutOfRange {
            parameter: BrakeParameter::PinDistance,
            value: 0.150,
            above: 0.200,
            below: f64::INFINITY,
        })
    );
}

/// Bad geometry is a typed error naming the configuration key.
#[test]
fn bad_geometry_names_the_parameter() {
    let good = textbook_shoe(ShoeAction::Leading).geometry();
    let cases = [
        (
            ShoeGeometry {
                drum_radius_m: -0.1,
                ..good
            },
            "drum_radius_m",
        ),
        (
            ShoeGeometry {
                pin_distance_m: 0.2,
                ..good
            },
            "pin_distance_m",
        ),
        (
            ShoeGeometry {
                arc_start_rad: -0.1,
                ..good
            },
            "arc_start_rad",
        ),
        (
            ShoeGeometry {
                arc_end_rad: 3.2,
                ..good
            },
            "arc_end_rad",
        ),
        (
            ShoeGeometry {
                arc_start_rad: 2.0,
                arc_end_rad: 1.0,
                ..good
            },
            "arc_end_rad",
        ),
        (
            ShoeGeometry {
                face_width_m: 0.0,
                ..good
            },
            "face_width_m",
        ),
        (
            ShoeGeometry {
                actuation_arm_m: f64::NAN,
                ..good
            },
            "actuation_arm_m",
        ),
    ];
    for (g, key) in cases {
        let e = PivotedShoe::new(g, Mounting::Internal, ShoeAction::Leading).unwrap_err();
        assert!(e.to_string().contains(key), "{key}: {e}");
    }
    let shoe = textbook_shoe(ShoeAction::Trailing);
    let e = shoe.moments(0.3, 0.0).unwrap_err().to_string();
    assert!(e.contains("max_pressure_pa"), "{e}");
    let e = shoe.torque_per_force(-0.1).unwrap_err().to_string();
    assert!(e.contains("friction_coefficient"), "{e}");
}

/// [pub: Norton, Machine Design – An Integrated Approach, 4th ed., Example 17-2 "Design of a
/// short-shoe drum brake", values as printed on the example sheet] a = 6 in, b = 6 in,
/// r = 5 in, μ = 0.35: a self-energising ratio N/F = a/(b − μc) = 2 needs c = 8.571 in;
/// self-locking begins at c = b/μ = 17.143 in. Inches are
/// converted to metres; the ratios do not depend on the unit.
#[test]
fn block_shoe_matches_the_published_short_shoe_example() {
    let inch = 0.0254;
    let block = |c_in: f64| {
        BlockShoe::new(
            BlockGeometry {
                drum_radius_m: 5.0 * inch,
                actuation_arm_m: 6.0 * inch,
                normal_arm_m: 6.0 * inch,
                friction_offset_m: c_in * inch,
            },
            ShoeAction::Leading,
        )
        .unwrap()
    };
    // Printed to 4 significant figures: 5e-4 relative.
    assert!(rel(block(8.571).normal_force_per_force(0.35).unwrap(), 2.0) < 5e-4);
    let locking = block(17.143).locking_coefficient().unwrap();
    assert!(rel(locking, 0.35) < 5e-4, "{locking}");
    assert!(block(17.143).torque_per_force(0.35).is_err());
}
