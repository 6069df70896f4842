//! Online adaptation through the whole estimator, and the saved state record.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing)]

mod estimator_common;
use estimator_common::*;

use clampwise_core::estimator::{ContactState, Estimator, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::state_record::RecordError;
use clampwise_core::units::{NewtonMetres, RadPerSec, Ratio};

/// The "true" lining gives 15 % more torque than the table: the reference torque is the
/// estimator's own uncorrected model torque × 1.15 (a synthetic bench with a perfect torque
/// flange).
const TRUE_FACTOR: f64 = 1.15;

fn braking_inputs(i: u32) -> Inputs<1> {
    // Force ramps between 5 and 15 kN so the regressor varies; speed 80 rad/s.
    let force = 5_000.0 + 10_000.0 * f64::from(i % 400) / 400.0;
    let mut inputs = Inputs::<1>::at_rest(counts(force));
    inputs.input_speed = Some(RadPerSec::from_num(80));
    inputs
}

#[test]
fn converges_to_a_known_mu_offset_and_stays_in_band() {
    let dev = device::<1>(&Spec {
        adapt: true,
        ..Spec::default()
    });
    let mut est = Estimator::new(&dev);
    let mut converged_at = None;
    for i in 0..4000u32 {
        let mut inputs = braking_inputs(i);
        // The reference is what the plant really does: k_true · n · μ · F · r_e, using the
        // estimate of the previous sample's μ, force and radius (the plant we simulate is the
        // model itself, with μ scaled).
        let probe = est.clone().step(&inputs);
        if let Some(t) = probe.torque {
            let uncorrected = t.to_num::<f64>() / probe.correction.to_num::<f64>();
            inputs.reference_torque = Some(NewtonMetres::from_num(uncorrected * TRUE_FACTOR));
        }
        let e = est.step(&inputs);
        assert_eq!(e.state, ContactState::Slipping);
        let k: f64 = e.correction.to_num();
        assert!((0.7..=1.3).contains(&k), "left the band: {k}");
        if converged_at.is_none() && (k - TRUE_FACTOR).abs() < 0.001 * TRUE_FACTOR {
            converged_at = Some(i);
        }
    }
    let at = converged_at.expect("adaptation did not converge within 4000 samples");
    // λ = 0.995 (memory ≈ 200 samples): within 0.1 % after at most 1500 samples.
    assert!(at < 1500, "converged after {at} samples");
}

#[test]
fn clamps_at_the_band_when_the_truth_lies_outside() {
    let dev = device::<1>(&Spec {
        adapt: true,
        ..Spec::default()
    });
    let mut est = Estimator::new(&dev);
    let mut last = None;
    for i in 0..3000u32 {
        let mut inputs = braking_inputs(i);
        let probe = est.clone().step(&inputs);
        let uncorrected = probe.torque.unwrap().to_num::<f64>() / probe.correction.to_num::<f64>();
        inputs.reference_torque = Some(NewtonMetres::from_num(uncorrected * 1.6));
        last = Some(est.step(&inputs));
    }
    let e = last.unwrap();
    assert!((e.correction.to_num::<f64>() - 1.3).abs() < 1e-6);
    assert!(e.flags.contains(Flags::ADAPTATION_AT_LIMIT));
}

#[test]
fn freezes_on_a_sensor_fault_and_when_holding() {
    let dev = device::<1>(&Spec {
        adapt: true,
        fallback: true,
        ..Spec::default()
    });
    let mut est = Estimator::new(&dev);
    for i in 0..200u32 {
        let mut inputs = braking_inputs(i);
        inputs.reference_torque = Some(NewtonMetres::from_num(-3000));
        est.step(&inputs);
    }
    let before = est.clone().step(&braking_inputs(0)).correction;
    // Sensor fault: the channel drops out; the force comes from the actuator fallback.
    for i in 0..200u32 {
        let mut inputs = braking_inputs(i);
        inputs.force_channels[0].valid = false;
        inputs.actuator_command = Some(clampwise_core::sensor::ActuatorCommand::from_num(10));
        inputs.reference_torque = Some(NewtonMetres::from_num(-100));
        let e = est.step(&inputs);
        assert!(
            e.flags.contains(Flags::ADAPTATION_FROZEN),
            "sample {i}: {:?}",
            e.flags
        );
        assert_eq!(e.correction, before);
    }
    // Standstill: μ is not observable.
    let mut inputs = braking_inputs(0);
    inputs.input_speed = Some(RadPerSec::ZERO);
    inputs.reference_torque = Some(NewtonMetres::from_num(-100));
    let mut est = Estimator::new(&dev);
    for _ in 0..50 {
        let e = est.step(&inputs);
        assert!(e.flags.contains(Flags::ADAPTATION_FROZEN));
        assert_eq!(e.correction, Ratio::ONE);
    }
}

#[test]
fn state_record_round_trips_and_rejects_corruption() {
    let dev = device::<1>(&Spec {
        adapt: true,
        ..Spec::default()
    });
    let mut est = Estimator::new(&dev);
    for i in 0..2000u32 {
        let mut inputs = braking_inputs(i);
        let probe = est.clone().step(&inputs);
        let uncorrected = probe.torque.unwrap().to_num::<f64>() / probe.correction.to_num::<f64>();
        inputs.reference_torque = Some(NewtonMetres::from_num(uncorrected * 0.9));
        est.step(&inputs);
    }
    let bytes = est.save(42);
    let restored = Estimator::restore(&dev, &bytes).unwrap();
    assert_eq!(
        restored.save(42),
        bytes,
        "what is restored is what was saved"
    );
    // At standstill and then released, neither dissipates: both only cool, bit for bit alike.
    // (Sensor filters are not saved: the original's decays from the last force, the restored
    // one starts at zero, so the estimates agree once that filter has settled.)
    let (mut a, mut b) = (est.clone(), restored);
    let idle = Inputs::<1>::at_rest(0);
    for _ in 0..300 {
        a.step(&idle);
        b.step(&idle);
        assert_eq!(a.save(1), b.save(1));
    }
    let (ea, eb) = (a.step(&idle), b.step(&idle));
    assert_eq!(ea, eb);
    assert_eq!(ea.state, ContactState::Released);
    assert!(
        a.step(&idle).correction.to_num::<f64>() < 0.95,
        "the learned factor survived"
    );

    let mut corrupt = bytes;
    corrupt[20] ^= 0x10;
    assert!(matches!(
        Estimator::restore(&dev, &corrupt),
        Err(RecordError::Checksum { .. })
    ));
    assert!(matches!(
        Estimator::restore(&dev, &bytes[..bytes.len() - 1]),
        Err(RecordError::WrongLength { .. })
    ));
}
