//! The thermal and wear states as a sub-rate task (`thermal_wear_every` > 1) against the same
//! device advancing them every sample: energy kept, temperatures within the stated bound, the
//! lag bounded, pending energy saved, bad settings named.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::cast_precision_loss,
    clippy::indexing_slicing
)]

mod estimator_common;
use estimator_common::*;

use clampwise_core::config::{ConfigError, DeviceConfig, DeviceParts};
use clampwise_core::estimator::{Estimate, Estimator, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::state_record::StateRecord;
use clampwise_core::thermal::{ThermalConfig, ThermalParams};
use clampwise_core::units::RadPerSec;

/// A stop: 20 kN, slip speed falling linearly from `v0` to 0 over `stop` samples, then `rest`
/// samples held at standstill. Returns every estimate with its slip speed (rad/s).
fn stop<const C: usize>(
    dev: &Device<C>,
    v0: f64,
    stop: usize,
    rest: usize,
) -> Vec<(Estimate, f64)> {
    let mut est = Estimator::new(dev);
    let mut inputs = Inputs::<C>::at_rest(counts(20_000.0));
    let mut out = Vec::with_capacity(stop + rest);
    for i in 0..stop + rest {
        let v = RadPerSec::from_num(v0 * (1.0 - i as f64 / stop as f64).max(0.0));
        inputs.input_speed = Some(v);
        out.push((est.step(&inputs), v.to_num()));
    }
    out
}

/// Bedding 1 − exp(−E/E₀) of the energy Σ|T·v|·dt the estimates themselves report, E₀ = 5 MJ
/// (the test device) [calc: the wear model's law, `wear` module docs].
fn bedding_of_reported_energy(run: &[(Estimate, f64)]) -> f64 {
    let energy: f64 = run
        .iter()
        .map(|(e, v)| e.torque.map_or(0.0, |t| (t.to_num::<f64>() * v).abs()) * DT)
        .sum();
    1.0 - (-energy / 5e6).exp()
}

#[test]
fn a_sub_rate_of_one_is_the_per_sample_update() {
    let spec = Spec::default();
    let a = stop(&device::<1>(&spec), 150.0, 3000, 500);
    let b = stop(&device_with_sub_rate::<1>(&spec, 1), 150.0, 3000, 500);
    assert_eq!(a, b);
}

#[test]
fn sub_rate_keeps_the_energy_and_the_temperature_within_its_bound() {
    // 20 kN, 2 faces, μ ≈ 0.38, r_e ≈ 82 mm: about 1.25 kN·m; a stop from 150 rad/s in 3 s
    // dissipates ½·T·ω₀·t ≈ 0.28 MJ [calc], some 60 K on the 8 kg rotor (0.9 of it).
    let spec = Spec::default();
    let every_sample = stop(&device::<1>(&spec), 150.0, 3000, 500);
    for every in [1u8, 2, 8, 32] {
        let sub = stop(&device_with_sub_rate::<1>(&spec, every), 150.0, 3000, 500);
        let n = usize::from(every);
        let last = &sub.last().unwrap().0;
        // No energy lost: the bedding is that of the energy the run itself reported (the
        // torque is rounded to 0.24 mN·m, 2·10⁻⁷ of it, hence the bound).
        let want = bedding_of_reported_energy(&sub);
        let got: f64 = last.bedding.to_num();
        assert!(want > 0.01, "the stop beds the lining");
        assert!(
            (got - want).abs() < 1e-8,
            "every {every}: bedding {got} vs {want}"
        );
        // Temperature against the per-sample device at the end of each interval, where both
        // have seen the same samples. With τ = 613 s ≫ n·dt, holding the interval's mean
        // power gives the same heat to first order; what remains is μ read at a temperature
        // up to n − 1 samples old, so a little more torque and heat. Bound [calc]: a lag of
        // n samples × 0.02 K rise per sample × 2.6·10⁻⁴ relative μ per K (the test μ table)
        // × the 60 K rise = n · 0.31 mK (the mean lag is (n − 1)/2 samples: a margin of 2).
        let mut worst: f64 = 0.0;
        for (i, (x, y)) in every_sample.iter().zip(&sub).enumerate() {
            if (i + 1) % n == 0 {
                let d = (x.0.lining_temperature.to_num::<f64>()
                    - y.0.lining_temperature.to_num::<f64>())
                .abs();
                worst = worst.max(d);
            }
        }
        let rise = last.lining_temperature.to_num::<f64>() - 20.0;
        assert!(rise > 50.0, "rise {rise}");
        let bound = f64::from(every) * 0.02 * 2.6e-4 * 60.0;
        assert!(
            worst <= bound,
            "every {every}: lining temperature differs by up to {worst} K (bound {bound} K)"
        );
    }
}

#[test]
fn the_lag_is_less_than_one_interval() {
    // Between updates the last temperature is reported: at most n − 1 samples behind.
    let spec = Spec::default();
    let every_sample = stop(&device::<1>(&spec), 150.0, 1000, 0);
    let sub = stop(&device_with_sub_rate::<1>(&spec, 8), 150.0, 1000, 0);
    for (i, y) in sub.iter().enumerate() {
        let last_update = (i + 1) / 8 * 8; // samples seen by the last update
        let expect = if last_update == 0 {
            20.0
        } else {
            every_sample[last_update - 1]
                .0
                .lining_temperature
                .to_num::<f64>()
        };
        let got = y.0.lining_temperature.to_num::<f64>();
        assert!((got - expect).abs() < 1e-3, "sample {i}: {got} vs {expect}");
    }
}

#[test]
fn pending_energy_is_saved() {
    // Save three samples into an interval of 8: the record holds the energy of every sample
    // stepped, pending ones included (bedding read back from the record; a record is tied to
    // its configuration, so it does not restore into the per-sample device).
    let spec = Spec::default();
    let sub_rate = device_with_sub_rate::<1>(&spec, 8);
    let mut est = Estimator::new(&sub_rate);
    let mut inputs = Inputs::<1>::at_rest(counts(20_000.0));
    inputs.input_speed = Some(RadPerSec::from_num(100));
    let run: Vec<(Estimate, f64)> = (0..8 * 125 + 3)
        .map(|_| (est.step(&inputs), 100.0))
        .collect();
    let saved: f64 = StateRecord::from_bytes(&est.save(1))
        .unwrap()
        .wear()
        .bedding()
        .to_num();
    assert!(Estimator::restore(&sub_rate, &est.save(1)).is_ok());
    // The three pending samples carry ≈ 3 × 1.25 kN·m × 100 rad/s × 1 ms = 0.37 kJ, a bedding
    // step of 7·10⁻⁵ [calc: 0.37e3 / 5e6 × (1 − b)]: had they been lost, the saved bedding
    // would be short by that much. The last estimate still shows the bedding before them.
    let want = bedding_of_reported_energy(&run);
    assert!((saved - want).abs() < 1e-8, "bedding {saved} vs {want}");
    let reported: f64 = run.last().unwrap().0.bedding.to_num();
    assert!(want - reported > 5e-5, "pending {}", want - reported);
}

#[test]
fn bad_sub_rates_are_named() {
    let spec = Spec::default();
    let good = device_with_sub_rate::<1>(&spec, 8);
    let parts = |every: u8, thermal: ThermalConfig| DeviceParts {
        sample_period: good.sample_period(),
        thermal_wear_every: every,
        faces: good.faces(),
        tables: *good.tables(),
        thermal,
        wear: *good.wear(),
        sensor: *good.sensor(),
        adapt: good.adapt().copied(),
        limits: *good.limits(),
        tolerances: *good.tolerances(),
    };
    for every in [0u8, 3, 6, 64] {
        let e = DeviceConfig::from_parts(parts(every, *good.thermal())).unwrap_err();
        assert_eq!(e, ConfigError::ThermalWearEvery, "every {every}");
        assert_eq!(e.field(), "device.thermal_wear_every");
    }
    // Every 8 samples, but the thermal model built for one sample.
    let per_sample = ThermalConfig::new(&ThermalParams { ..thermal_params() }, DT).unwrap();
    assert_eq!(
        DeviceConfig::from_parts(parts(8, per_sample)).unwrap_err(),
        ConfigError::ThermalSamplePeriod
    );
    assert_eq!(good.thermal_wear_every(), 8);
    // The flags the sub-rate raises are the thermal ones; none here.
    let e = stop(&good, 10.0, 100, 10);
    assert!(
        e.iter()
            .all(|x| !x.0.flags.contains(Flags::ARITHMETIC_SATURATED))
    );
}
