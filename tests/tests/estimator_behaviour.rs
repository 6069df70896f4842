//! The estimator against the published disc-friction result and the specified behaviour at
//! standstill, release, reversal and the stick-slip boundary.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::float_cmp)]

mod estimator_common;
use estimator_common::*;

use clampwise_core::estimator::{ContactState, Estimator, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::units::RadPerSec;

fn steady<const C: usize>(
    dev: &Device<C>,
    force_n: f64,
    slip: f64,
    samples: usize,
) -> clampwise_core::estimator::Estimate {
    let mut est = Estimator::new(dev);
    let mut inputs = Inputs::<C>::at_rest(counts(force_n));
    inputs.input_speed = Some(RadPerSec::from_num(slip));
    let mut last = None;
    for _ in 0..samples {
        last = Some(est.step(&inputs));
    }
    last.unwrap()
}

#[test]
fn steady_slip_matches_n_mu_f_re() {
    // T = N·μ·F·r_e [pub: Shigley ch. 16]; annulus check vector [calc: r_up = (2/3)(Ro³−Ri³)/
    // (Ro²−Ri²)]: Ro = 100 mm, Ri = 60 mm, F = 10 kN → r_e = 81.667 mm (uniform pressure, new
    // lining, bedding 0).
    // μ from the demo table at 20 °C and 100 rad/s: 0.40 + (0.38−0.40)·0.1 … bilinear.
    let dev = device::<1>(&Spec::default());
    let e = steady(&dev, 10_000.0, 100.0, 50);
    assert_eq!(e.state, ContactState::Slipping);
    let mu: f64 = e.mu.to_num();
    let t_lining: f64 = e.lining_temperature.to_num();
    // Bilinear μ of the demo table at (T, 100 rad/s): between the 50 and 200 rad/s columns.
    let col = |a: f64, b: f64| a + (b - a) * (100.0 - 50.0) / 150.0;
    let (lo, hi) = (col(0.39, 0.37), col(0.37, 0.35));
    let expected_mu = lo + (hi - lo) * t_lining / 200.0;
    // μ is looked up at the lining temperature left by the previous sample (a lag of one
    // millisecond, a few mK here), so allow what that temperature step moves μ.
    assert!((mu - expected_mu).abs() < 1e-5, "μ {mu} vs {expected_mu}");
    let r_e: f64 = e.effective_radius.to_num();
    let r_up = 2.0 / 3.0 * (0.1f64.powi(3) - 0.06f64.powi(3)) / (0.1f64.powi(2) - 0.06f64.powi(2));
    let bedding: f64 = e.bedding.to_num();
    let r_expected = (1.0 - bedding) * r_up + bedding * 0.080;
    assert!((r_e - r_expected).abs() < 1e-7, "r_e {r_e}");
    let torque: f64 = e.torque.unwrap().to_num();
    let expected = -2.0 * mu * 10_000.0 * r_e;
    // Within 2 LSB of N·m plus the force's Q8 resolution times the lever arm.
    assert!((torque - expected).abs() < 2e-3, "{torque} vs {expected}");
}

#[test]
fn uniform_wear_and_cone_match_their_formulas() {
    // Bedded lining: r_e = (Ro + Ri)/2 = 80 mm [pub: Shigley ch. 16]; here the bedding table
    // column at b = 1 is used by restoring a fully bedded state through the radius table.
    let dev = device::<1>(&Spec::default());
    let r_uw = dev.tables().radius().lookup(
        clampwise_core::units::Newtons::from_num(10_000),
        clampwise_core::units::Ratio::ONE,
    );
    assert!((r_uw.value.to_num::<f64>() - 0.080).abs() < 1e-7);

    // Cone, half-angle 12°: T = μF(Do³−Di³)/(3 sin α (Do²−Di²)) [pub: Shigley ch. 16].
    let alpha = 12f64.to_radians();
    let spec = Spec {
        contact: annulus_contact(1, Some(alpha)),
        ..Spec::default()
    };
    let dev = device::<1>(&spec);
    let e = steady(&dev, 10_000.0, 100.0, 50);
    let mu: f64 = e.mu.to_num();
    let (d_o, d_i) = (0.2f64, 0.12f64);
    let pressure = mu * 10_000.0 * (d_o.powi(3) - d_i.powi(3))
        / (3.0 * alpha.sin() * (d_o.powi(2) - d_i.powi(2)));
    // Uniform wear: T = μF(Do + Di)/(4 sin α) [pub: Shigley ch. 16]; the lining has just begun
    // to bed, so blend the two by the reported bedding.
    let wear = mu * 10_000.0 * (d_o + d_i) / (4.0 * alpha.sin());
    let bedding: f64 = e.bedding.to_num();
    assert!(
        bedding > 0.0 && bedding < 0.01,
        "just bedding in: {bedding}"
    );
    let shigley = (1.0 - bedding) * pressure + bedding * wear;
    let torque: f64 = -e.torque.unwrap().to_num::<f64>();
    assert!(
        (torque - shigley).abs() / shigley < 1e-5,
        "{torque} vs {shigley}"
    );
}

#[test]
fn standstill_reports_capacity_not_torque() {
    let dev = device::<1>(&Spec::default());
    let e = steady(&dev, 10_000.0, 0.0, 50);
    assert_eq!(e.state, ContactState::Holding);
    assert_eq!(
        e.torque, None,
        "a held torque is set by the load, not by μ·F·r_e"
    );
    assert!(e.flags.contains(Flags::TORQUE_BOUNDED));
    // Capacity = N·μ_s·F·r_e with μ_s = 1.2 · μ_k(20 °C, 0 rad/s) = 0.48 (demo table, ratio 1.2).
    let cap: f64 = e.holding_capacity.unwrap().to_num();
    let r_e: f64 = e.effective_radius.to_num();
    let mu_s = 1.2 * (0.40 + (0.38 - 0.40) * e.lining_temperature.to_num::<f64>() / 200.0);
    assert!((cap - 2.0 * mu_s * 10_000.0 * r_e).abs() < 2e-3, "{cap}");
    assert!(e.uncertainty > clampwise_core::units::NewtonMetres::ZERO);
}

#[test]
fn released_gives_zero_torque_or_drag() {
    let dev = device::<1>(&Spec::default());
    let e = steady(&dev, 50.0, 100.0, 50); // below the 100 N touch threshold
    assert_eq!(e.state, ContactState::Released);
    assert_eq!(e.torque, Some(clampwise_core::units::NewtonMetres::ZERO));

    // Wet clutch: viscous 0.02 N·m·s and 1.5 N·m no-load drag [demo numbers]; at 100 rad/s
    // (beyond the 0.5 rad/s transition) drag = −(0.02·100 + 1.5) = −3.5 N·m.
    let spec = Spec {
        viscous_drag: 0.02,
        no_load_drag: 1.5,
        ..Spec::default()
    };
    let dev = device::<1>(&spec);
    let e = steady(&dev, 50.0, 100.0, 50);
    assert_eq!(e.state, ContactState::Released);
    let drag: f64 = e.torque.unwrap().to_num();
    assert!((drag + 3.5).abs() < 1e-3, "{drag}");
}

#[test]
fn direction_reversal_flips_the_sign() {
    let dev = device::<1>(&Spec::default());
    let fwd = steady(&dev, 10_000.0, 30.0, 50).torque.unwrap();
    let rev = steady(&dev, 10_000.0, -30.0, 50).torque.unwrap();
    assert!(
        fwd < clampwise_core::units::NewtonMetres::ZERO,
        "opposes positive slip"
    );
    assert!((fwd + rev).abs() < clampwise_core::units::NewtonMetres::from_num(0.01));

    // A brake: output speed 0, torque opposes the input speed; a clutch: the slip is the
    // difference of the shafts, so equal speeds mean holding.
    let mut est = Estimator::new(&dev);
    let mut inputs = Inputs::<1>::at_rest(counts(10_000.0));
    inputs.input_speed = Some(RadPerSec::from_num(150));
    inputs.output_speed = Some(RadPerSec::from_num(150));
    for _ in 0..20 {
        est.step(&inputs);
    }
    assert_eq!(est.step(&inputs).state, ContactState::Holding);
}

#[test]
fn stick_slip_boundary_has_hysteresis() {
    // Demo band: stick speed 0.05 rad/s ± 0.02: slips above 0.07, sticks again below 0.03.
    let dev = device::<1>(&Spec::default());
    let mut est = Estimator::new(&dev);
    let mut inputs = Inputs::<1>::at_rest(counts(10_000.0));
    let mut state_at = |v: f64, est: &mut Estimator<'_, TestTables, 1>| {
        inputs.input_speed = Some(RadPerSec::from_num(v));
        est.step(&inputs).state
    };
    assert_eq!(state_at(0.06, &mut est), ContactState::Holding);
    assert_eq!(state_at(0.071, &mut est), ContactState::Slipping);
    assert_eq!(
        state_at(0.04, &mut est),
        ContactState::Slipping,
        "inside the band: stays"
    );
    assert_eq!(state_at(0.06, &mut est), ContactState::Slipping);
    assert_eq!(state_at(0.029, &mut est), ContactState::Holding);
    assert_eq!(
        state_at(0.06, &mut est),
        ContactState::Holding,
        "inside the band: stays"
    );
}

#[test]
fn lost_force_reports_nothing_as_good() {
    let spec = Spec::default();
    let dev = device::<1>(&spec);
    let mut est = Estimator::new(&dev);
    let mut inputs = Inputs::<1>::at_rest(counts(10_000.0));
    inputs.input_speed = Some(RadPerSec::from_num(50));
    for _ in 0..20 {
        assert_eq!(est.step(&inputs).state, ContactState::Slipping);
    }
    inputs.force_channels[0].valid = false;
    let mut lost_at = None;
    for i in 0..20 {
        let e = est.step(&inputs);
        if e.state == ContactState::Unavailable {
            lost_at.get_or_insert(i);
            assert_eq!(e.torque, None);
            assert_eq!(e.holding_capacity, None);
            assert!(e.flags.contains(Flags::FORCE_LOST));
        } else {
            // While the sensor holds its last value the estimate is flagged degraded.
            assert!(
                e.flags.contains(Flags::SENSOR_DEGRADED),
                "sample {i}: {:?}",
                e.flags
            );
        }
    }
    assert!(lost_at.is_some());

    // With an actuator fallback configured, the force comes from the command, flagged.
    let dev = device::<1>(&Spec {
        fallback: true,
        ..Spec::default()
    });
    let mut est = Estimator::new(&dev);
    inputs.actuator_command = Some(clampwise_core::sensor::ActuatorCommand::from_num(10));
    let mut e = est.step(&inputs);
    for _ in 0..20 {
        e = est.step(&inputs);
    }
    assert!(e.flags.contains(Flags::FORCE_FALLBACK));
    assert!(e.torque.is_some());
    let u: f64 = e.uncertainty.to_num();
    let t: f64 = e.torque.unwrap().to_num::<f64>().abs();
    assert!(u > 0.2 * t, "fallback uncertainty {u} of {t}");
}

#[test]
fn measured_ambient_sets_the_cooling_target() {
    // Newtonian cooling toward T∞ [pub: Day, ch. 8]: a released lining at 20 °C with the
    // cooling air measured at 60 °C warms toward 60 °C, and stays put at the configured 20 °C.
    let dev = device::<1>(&Spec::default());
    let (mut warm, mut plain) = (Estimator::new(&dev), Estimator::new(&dev));
    let mut inputs = Inputs::<1>::at_rest(0);
    let (mut a, mut b) = (None, None);
    for _ in 0..10_000 {
        b = Some(plain.step(&inputs));
        inputs.ambient_temperature = Some(clampwise_core::units::Celsius::from_num(60));
        a = Some(warm.step(&inputs));
        inputs.ambient_temperature = None;
    }
    // After 10 s with τ = 613 s: 20 + 40·(1 − e^(−10/613)) = 20.647 °C [calc].
    let t: f64 = a.unwrap().lining_temperature.to_num();
    assert!(
        (t - (20.0 + 40.0 * (1.0 - (-10.0f64 / 613.0).exp()))).abs() < 0.01,
        "{t}"
    );
    assert_eq!(b.unwrap().lining_temperature.to_num::<f64>(), 20.0);
}
