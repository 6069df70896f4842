//! The estimate's contract under sensor faults and unknown inputs: every torque or capacity it
//! reports lies within its own ±, or a flag says it cannot be trusted.
//!
//! Each case injects one fault the vote cannot rule out by itself and checks the reported
//! number against the true one, formed from the estimate's own μ and lever arm and the true
//! clamp force with T = n·μ·F·r_e [pub: Shigley, *Mechanical Engineering Design*, ch. 16,
//! disc clutches and brakes]: only the force is faulted, so the truth differs from the report
//! by the force alone. Each case fails with the ± as first defined (the channel uncertainty
//! alone, widened only for an unresolved vote, and the first-order sum of tolerances).
#![allow(clippy::unwrap_used, clippy::float_cmp)]

mod estimator_common;

use clampwise_core::estimator::{ContactState, Estimate, Estimator, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::sensor::{ActuatorCommand, RawChannel};
use clampwise_core::units::RadPerSec;
use estimator_common::{Spec, TestTables, counts, device};

/// Inputs with channel `i` reading `forces[i]` newtons, input shaft at `speed` rad/s.
fn inputs<const C: usize>(forces: [f64; C], speed: Option<f64>) -> Inputs<C> {
    let mut i = Inputs::<C>::at_rest(0);
    for (raw, f) in i.force_channels.iter_mut().zip(forces) {
        *raw = RawChannel {
            counts: counts(f),
            valid: true,
        };
    }
    i.input_speed = speed.map(RadPerSec::from_num);
    i
}

/// Step `n` times with the same inputs; the last estimate.
fn settle<const C: usize>(
    est: &mut Estimator<'_, TestTables, C>,
    i: &Inputs<C>,
    n: usize,
) -> Estimate {
    let mut e = est.step(i);
    for _ in 1..n {
        e = est.step(i);
    }
    e
}

/// The torque (or capacity) the contact carries at the true force, from the estimate's own μ
/// and lever arm: faces · μ · F · r_e (N·m, magnitude).
fn true_magnitude(e: &Estimate, faces: f64, true_force: f64) -> f64 {
    faces * e.mu.to_num::<f64>() * true_force * e.effective_radius.to_num::<f64>()
}

fn assert_within(e: &Estimate, reported: f64, truth: f64) {
    let u = e.uncertainty.to_num::<f64>();
    assert!(
        (reported - truth).abs() <= u,
        "reported {reported:.1} N·m ± {u:.1}, true {truth:.1} N·m ({:?}, {:?})",
        e.state,
        e.flags
    );
}

#[test]
fn two_of_three_gauges_with_a_shared_gain_error_are_covered() {
    // Gauges 2 and 3 read 0.8 × F (a shared cause): they out-vote the healthy gauge 1.
    let dev = device::<3>(&Spec::default());
    let mut est = Estimator::new(&dev);
    let f = 20_000.0;
    let e = settle(&mut est, &inputs([f, 0.8 * f, 0.8 * f], Some(50.0)), 200);
    assert_eq!(e.state, ContactState::Slipping);
    assert!(e.flags.contains(Flags::SENSOR_DEGRADED), "{:?}", e.flags);
    let reported = -e.torque.unwrap().to_num::<f64>();
    assert_within(&e, reported, true_magnitude(&e, 2.0, f));
}

#[test]
fn agreeing_gauges_spread_over_twice_the_tolerance_are_covered() {
    // Tolerance 500 N: 1 000, 1 490 and 1 980 N all lie within 490 N of the median, a
    // unanimous vote on 1 490 N although gauge 1 alone tells the truth.
    let dev = device::<3>(&Spec::default());
    let mut est = Estimator::new(&dev);
    let f = 1_000.0;
    let e = settle(
        &mut est,
        &inputs([f, f + 490.0, f + 980.0], Some(50.0)),
        200,
    );
    assert_eq!(e.state, ContactState::Slipping);
    let reported = -e.torque.unwrap().to_num::<f64>();
    assert_within(&e, reported, true_magnitude(&e, 2.0, f));
}

#[test]
fn a_two_gauge_device_widens_by_the_disagreement() {
    // One of two gauges drifted just inside twice the tolerance: their mean is reported.
    let dev = device::<2>(&Spec::default());
    let mut est = Estimator::new(&dev);
    let f = 1_000.0;
    let e = settle(&mut est, &inputs([f, f + 990.0], None), 200);
    assert_eq!(e.state, ContactState::SlipUnknown);
    // Holding capacity: over-stating it is the dangerous side for a holding brake.
    let capacity = e.holding_capacity.unwrap().to_num::<f64>();
    assert_within(&e, capacity, true_magnitude(&e, 2.0, f));
}

#[test]
fn a_common_mode_fault_is_caught_by_the_actuator_model() {
    // All three gauges read 0.7 × F (a bridge excitation fault): they agree with each other,
    // and only the actuator command (1 kN per unit here) can tell.
    let dev = device::<3>(&Spec {
        fallback: true,
        ..Spec::default()
    });
    let mut est = Estimator::new(&dev);
    let f = 20_000.0;
    let mut i = inputs([0.7 * f; 3], Some(50.0));
    i.actuator_command = Some(ActuatorCommand::from_num(20));
    let e = settle(&mut est, &i, 200);
    assert!(e.flags.contains(Flags::FORCE_IMPLAUSIBLE), "{:?}", e.flags);
    assert!(e.flags.contains(Flags::SENSOR_DEGRADED), "{:?}", e.flags);
    let reported = -e.torque.unwrap().to_num::<f64>();
    assert_within(&e, reported, true_magnitude(&e, 2.0, f));

    // The same gauges healthy: no implausibility, the narrow ± of agreeing channels.
    let mut est = Estimator::new(&dev);
    let mut i = inputs([f; 3], Some(50.0));
    i.actuator_command = Some(ActuatorCommand::from_num(20));
    let healthy = settle(&mut est, &i, 200);
    assert!(
        !healthy.flags.contains(Flags::FORCE_IMPLAUSIBLE),
        "{:?}",
        healthy.flags
    );
    assert!(healthy.uncertainty < e.uncertainty);
}

#[test]
fn an_unknown_speed_is_never_holding() {
    let dev = device::<1>(&Spec::default());
    let f = 10_000.0;
    let mut est = Estimator::new(&dev);
    let e = settle(&mut est, &inputs([f], None), 100);
    assert_eq!(e.state, ContactState::SlipUnknown);
    assert_eq!(e.torque, None);
    assert!(
        e.flags
            .contains(Flags::SPEED_UNKNOWN | Flags::TORQUE_BOUNDED)
    );
    let bound = e.holding_capacity.unwrap();

    // The bound is at least the capacity at standstill and the kinetic torque at any speed.
    for speed in [0.0, 0.01, 0.3, 10.0, 50.0, 120.0, 400.0] {
        let mut est = Estimator::new(&dev);
        let k = settle(&mut est, &inputs([f], Some(speed)), 100);
        let magnitude = match k.state {
            ContactState::Holding => k.holding_capacity.unwrap(),
            _ => k.torque.unwrap().saturating_abs(),
        };
        assert!(
            bound >= magnitude,
            "{speed} rad/s: {magnitude} above the bound {bound}"
        );
    }
}

#[test]
fn an_unknown_speed_adds_no_heat() {
    let dev = device::<1>(&Spec::default());
    let mut est = Estimator::new(&dev);
    let cold = settle(&mut est, &inputs([20_000.0], None), 2_000);
    assert_eq!(
        cold.lining_temperature,
        Estimator::new(&dev)
            .step(&inputs([0.0], None))
            .lining_temperature
    );
    let mut est = Estimator::new(&dev);
    let hot = settle(&mut est, &inputs([20_000.0], Some(50.0)), 2_000);
    assert!(hot.lining_temperature > cold.lining_temperature);
}

#[test]
fn a_released_brake_covers_what_its_force_could_still_carry() {
    // 60 N is below the 100 N touch force: released, torque 0 (dry). The true force may be up
    // to the channel uncertainty (100 N) higher and the pads may touch.
    let dev = device::<1>(&Spec::default());
    let mut est = Estimator::new(&dev);
    let e = settle(&mut est, &inputs([60.0], Some(50.0)), 200);
    assert_eq!(e.state, ContactState::Released);
    assert_eq!(e.torque.unwrap().to_num::<f64>(), 0.0);
    // [calc] n·μ·(F + U_F)·r_e with μ ≤ 0.48 (static) and r_e ≈ 81.7 mm: the ± must reach at
    // least the kinetic torque at 160 N.
    let mu_k = 0.39;
    let at_upper = 2.0 * mu_k * 160.0 * e.effective_radius.to_num::<f64>();
    assert!(
        e.uncertainty.to_num::<f64>() >= at_upper,
        "{} < {at_upper}",
        e.uncertainty
    );
}

#[test]
fn viscous_drag_heats_but_does_not_wear() {
    // An open wet clutch (no clamp force) spinning at 100 rad/s against 0.5 N·m per rad/s of
    // viscous drag: 5 kW of heat into the oil and plates, and no lining wear or bedding.
    let dev = device::<1>(&Spec {
        viscous_drag: 0.5,
        ..Spec::default()
    });
    let mut est = Estimator::new(&dev);
    let e = settle(&mut est, &inputs([0.0], Some(100.0)), 3_000);
    assert_eq!(e.state, ContactState::Released);
    assert!(e.torque.unwrap().to_num::<f64>() < -40.0, "{:?}", e.torque);
    assert!(
        e.lining_temperature.to_num::<f64>() > 20.5,
        "{}",
        e.lining_temperature
    );
    assert_eq!(e.bedding.to_num::<f64>(), 0.0);
    assert_eq!(e.wear.to_num::<f64>(), 0.0);
}

#[test]
fn adaptation_frozen_only_when_there_is_an_adaptation() {
    let off = device::<1>(&Spec::default());
    let mut est = Estimator::new(&off);
    let e = settle(&mut est, &inputs([10_000.0], Some(50.0)), 10);
    assert!(!e.flags.contains(Flags::ADAPTATION_FROZEN), "{:?}", e.flags);
    let on = device::<1>(&Spec {
        adapt: true,
        ..Spec::default()
    });
    let mut est = Estimator::new(&on);
    // No reference torque: the adaptation holds its factor.
    let e = settle(&mut est, &inputs([10_000.0], Some(50.0)), 10);
    assert!(e.flags.contains(Flags::ADAPTATION_FROZEN), "{:?}", e.flags);
}
