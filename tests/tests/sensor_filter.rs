//! The force low-pass against the analytic first-order step response, and its DC exactness.
//!
//! Reference [pub, mem]: a first-order low-pass with time constant τ = 1/(2π f_c) answers a
//! step of height X from y₀ with y(t) = X + (y₀ − X)·e^(−t/τ) (Smith, *The Scientist and
//! Engineer's Guide to DSP*, ch. 19; Oppenheim & Schafer, *Discrete-Time Signal Processing*,
//! ch. 7, impulse invariance). The discretisation chosen (exact exponential pole, input without
//! delay, i.e. step-invariant advanced by one sample) puts output sample n at t = (n + 1)·T.
//! Stated resolution: within 0.54 LSB of `Newtons` (2.1 mN) plus 2⁻³¹ of the step (α at its 32
//! leading bits) at every sample.
#![allow(
    clippy::unwrap_used,
    clippy::float_cmp,
    clippy::cast_possible_truncation,
    clippy::cast_sign_loss,
    clippy::indexing_slicing
)]

mod sensor_common;

use clampwise_core::sensor::*;
use clampwise_core::units::Newtons;
use sensor_common::*;

const LSB: f64 = 1.0 / 256.0;

/// Largest error (in LSB) of the fixed-point step response against the analytic one.
fn step_error(cutoff_hz: f64, fs: u32, from: f64, to: f64) -> f64 {
    let lp = LowPass::new(cutoff_hz, fs).unwrap();
    let mut s = LowPassState::new();
    let y0 = Newtons::from_num(from);
    let x = Newtons::from_num(to);
    s.reset(y0);
    let (y0, x) = (y0.to_num::<f64>(), x.to_num::<f64>());
    let tau = 1.0 / (2.0 * std::f64::consts::PI * cutoff_hz);
    let t_s = 1.0 / f64::from(fs);
    // Ten time constants, at least 20 samples, at most 200 000.
    let samples = ((10.0 * tau / t_s) as usize).clamp(20, 200_000);
    let mut worst: f64 = 0.0;
    for n in 0..samples {
        let y = s.update(&lp, Newtons::from_num(to)).to_num::<f64>();
        let t = (n as f64 + 1.0) * t_s;
        let want = x + (y0 - x) * (-t / tau).exp();
        worst = worst.max((y - want).abs() / LSB);
    }
    worst
}

#[test]
fn step_response_matches_the_analytic_first_order_response() {
    let mut overall: f64 = 0.0;
    for (fc, fs) in [
        (0.5, 1000),
        (10.0, 1000),
        (50.0, 1000),
        (200.0, 1000),
        (450.0, 1000),
        (5.0, 20_000),
        (1.0, 500),
    ] {
        for (from, to) in [
            (0.0, 1.0),
            (0.0, 12_345.67),
            (0.0, 200_000.0),
            (50_000.0, -150_000.0),
            (-8_000_000.0, 8_000_000.0),
        ] {
            let e = step_error(fc, fs, from, to);
            // The filter's stated bound: 0.54 LSB from the roundings, plus α taken at its 32
            // leading bits (below 2⁻³¹ of the step).
            let bound = 0.54 + (to - from).abs() / LSB * 2f64.powi(-31);
            assert!(
                e <= bound,
                "fc {fc} Hz, fs {fs} Hz, {from} → {to} N: {e} LSB (bound {bound})"
            );
            overall = overall.max(e);
        }
    }
    println!("largest step-response error: {overall:.4} LSB");
}

#[test]
fn dc_gain_is_exactly_one_through_the_whole_chain() {
    // One channel through calibration, checks and filter: settle at 10 kN, step by +150 N
    // (inside the rate limit), hold for 10⁶ samples. The output must reach 10 150 N exactly
    // and never leave it: no offset, no limit cycle.
    let mut b = Bench::<1>::new(LIMITS);
    b.settle(10_000.0, 1000);
    let target = n(10_150.0);
    let mut settled_at = None;
    for i in 0..1_000_000u32 {
        let r = b.step([ok(counts(10_150.0))], Some(10.15));
        assert_eq!(r.health, Health::Ok);
        match settled_at {
            None if r.force == Some(target) => settled_at = Some(i),
            Some(_) => assert_eq!(r.force, Some(target), "left the input at sample {i}"),
            None => {}
        }
    }
    // 150 N·(1 − α)^(n+1) < ½ LSB: n + 1 ≥ ln(150·512)/(π/10) = 35.8 [calc].
    let settled_at = settled_at.unwrap();
    assert!(settled_at <= 40, "settled only at {settled_at}");
}

#[test]
fn constant_inputs_stay_exact_for_a_million_samples() {
    // From a start far away, at cut-offs from very low to near Nyquist.
    for (fc, x) in [
        (0.05, 7_777.77),
        (3.0, -1.0),
        (100.0, 0.004),
        (490.0, 65_432.1),
    ] {
        let lp = LowPass::new(fc, 1000).unwrap();
        let mut s = LowPassState::new();
        s.reset(Newtons::ZERO);
        let target = Newtons::from_num(x);
        let mut last = Newtons::ZERO;
        for _ in 0..1_000_000 {
            last = s.update(&lp, target);
        }
        assert_eq!(last, target, "fc {fc} Hz");
        // And it stays: another 1000 samples without a single LSB of motion.
        for _ in 0..1000 {
            assert_eq!(s.update(&lp, target), target);
        }
    }
}
