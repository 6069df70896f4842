//! State records against a device configuration: a record made for another configuration, and
//! records whose fields are out of physical range or contradict each other, are refused with
//! their own [`RecordError`]; records the estimator writes are always accepted.
#![allow(clippy::unwrap_used, clippy::indexing_slicing)]

mod estimator_common;

use clampwise_core::estimator::{Estimator, Inputs};
use clampwise_core::state_record::{RECORD_LEN, RecordError, StateRecord};
use clampwise_core::thermal::ThermalState;
use clampwise_core::units::{Celsius, Joules, Metres, RadPerSec, Ratio};
use clampwise_core::wear::WearState;
use crc::{CRC_32_ISO_HDLC, Crc};
use estimator_common::{Device, Spec, annulus_contact, counts, device};

const CRC32: Crc<u32> = Crc::<u32>::new(&CRC_32_ISO_HDLC);

/// Overwrite bytes of a record and seal it again with a correct CRC, so that only the checks
/// behind the CRC can refuse it.
fn patched(mut b: [u8; RECORD_LEN], at: usize, v: &[u8]) -> [u8; RECORD_LEN] {
    b[at..at + v.len()].copy_from_slice(v);
    let crc = CRC32.checksum(&b[..RECORD_LEN - 4]);
    b[RECORD_LEN - 4..].copy_from_slice(&crc.to_le_bytes());
    b
}

fn record(dev: &Device<1>, energy_j: f64, t_c: f64) -> [u8; RECORD_LEN] {
    let cov = dev.adapt().map_or(Ratio::ZERO, |_| Ratio::ONE);
    StateRecord::new(
        9,
        dev.checksum(),
        &WearState::with_history(dev.wear(), Joules::from_num(energy_j)),
        &ThermalState::with_temperatures(Celsius::from_num(t_c), Celsius::from_num(t_c)),
        Ratio::ONE,
        cov,
    )
    .to_bytes()
}

fn adapting() -> Device<1> {
    device::<1>(&Spec {
        adapt: true,
        ..Spec::default()
    })
}

#[test]
fn a_record_for_another_configuration_is_refused_naming_both_checksums() {
    let two_faces = device::<1>(&Spec::default());
    let four_faces = device::<1>(&Spec {
        contact: annulus_contact(4, None),
        ..Spec::default()
    });
    let bytes = record(&two_faces, 1e6, 80.0);
    assert!(Estimator::restore(&two_faces, &bytes).is_ok());
    let err = Estimator::restore(&four_faces, &bytes).unwrap_err();
    assert_eq!(
        err,
        RecordError::ConfigMismatch {
            record: two_faces.checksum(),
            config: four_faces.checksum(),
        }
    );
    let text = err.to_string();
    assert!(
        text.contains(&format!("{:#010x}", two_faces.checksum())),
        "{text}"
    );
    assert!(
        text.contains(&format!("{:#010x}", four_faces.checksum())),
        "{text}"
    );
}

// The wear model's bedding b = 1 − exp(−E/E₀) [calc: crate docs of `wear`]: energy 0 cannot
// leave a lining bedded, and 40·E₀ cannot leave it new.
#[test]
fn bedding_that_contradicts_the_energy_is_refused() {
    let dev = device::<1>(&Spec::default());
    // Energy 0 (offset 16), fully bedded (`1 − b` = 0 at offset 48).
    let fresh = record(&dev, 0.0, 20.0);
    let bedded_new = patched(fresh, 48, &0u64.to_le_bytes());
    assert!(matches!(
        Estimator::restore(&dev, &bedded_new),
        Err(RecordError::BeddingContradictsEnergy { bedding, expected })
            if bedding == Ratio::ONE && expected == Ratio::ZERO
    ));
    // 2·10⁸ J = 40·E₀ with the bedding of a new lining.
    let worn = record(&dev, 2e8, 20.0);
    let unbedded_worn = patched(worn, 48, &(1u64 << 62).to_le_bytes());
    assert!(matches!(
        Estimator::restore(&dev, &unbedded_worn),
        Err(RecordError::BeddingContradictsEnergy { bedding, .. }) if bedding == Ratio::ZERO
    ));
    // Half a percent either way of 1 − exp(−1) at E = E₀ [calc]: ahead is refused (the model
    // can never run ahead), behind by less than 2⁻⁷ is within what the model's steps can lag.
    let at_e0 = record(&dev, 5e6, 20.0);
    let u = u64::from_le_bytes(at_e0[48..56].try_into().unwrap());
    let half_percent = (1u64 << 62) / 200;
    assert!(matches!(
        Estimator::restore(&dev, &patched(at_e0, 48, &(u - half_percent).to_le_bytes())),
        Err(RecordError::BeddingContradictsEnergy { .. })
    ));
    assert!(
        Estimator::restore(&dev, &patched(at_e0, 48, &(u + half_percent).to_le_bytes())).is_ok()
    );
    assert!(matches!(
        Estimator::restore(
            &dev,
            &patched(at_e0, 48, &(u + 3 * half_percent).to_le_bytes())
        ),
        Err(RecordError::BeddingContradictsEnergy { .. })
    ));
}

// Thickness loss k·E/A [pub: JIS D 4411 unit of the specific wear rate; calc]: 4·10⁻¹⁴ m³/J over
// 80 cm² is 5·10⁻¹² m/J, so 10⁹ J takes 5 mm of the 10 mm lining.
#[test]
fn thickness_loss_beyond_the_lining_or_off_its_energy_is_refused() {
    let dev = device::<1>(&Spec::default());
    let base = record(&dev, 1e9, 20.0);
    let loss = u128::from_le_bytes(base[32..48].try_into().unwrap());
    let mm = |q96: u128| (q96 >> 72) as f64 / f64::from(1 << 24) * 1e3;
    assert!((mm(loss) - 5.0).abs() < 1e-4, "{}", mm(loss));
    // 11 mm lost from a 10 mm lining.
    let eleven_mm = (11u128 << 96) / 1000;
    assert!(matches!(
        Estimator::restore(&dev, &patched(base, 32, &eleven_mm.to_le_bytes())),
        Err(RecordError::ThicknessLossBeyondLining { lining, .. })
            if lining == dev.wear().initial_thickness()
    ));
    // 6 mm where the energy gives 5 mm.
    let six_mm = (6u128 << 96) / 1000;
    assert!(matches!(
        Estimator::restore(&dev, &patched(base, 32, &six_mm.to_le_bytes())),
        Err(RecordError::ThicknessLossContradictsEnergy { expected, .. })
            if (expected.to_num::<f64>() - 0.005).abs() < 1e-6
    ));
    // Within a micrometre is rounding.
    let plus_half_um = loss + (1u128 << 96) / 2_000_000;
    assert!(Estimator::restore(&dev, &patched(base, 32, &plus_half_um.to_le_bytes())).is_ok());
}

#[test]
fn a_lining_run_past_its_end_is_saved_at_its_thickness_and_stays_worn_out() {
    let dev = device::<1>(&Spec::default());
    // 1.9999·10⁹ J: 9.9995 mm of the 10 mm lining gone (worn out at 8 mm); then about 1 MW of
    // slip for 2 s (40 kN, 400 rad/s) takes it past 2·10⁹ J, the whole lining.
    let mut est = Estimator::restore(&dev, &record(&dev, 1.999_9e9, 20.0)).unwrap();
    let mut inputs = Inputs::<1>::at_rest(counts(40_000.0));
    inputs.input_speed = Some(RadPerSec::from_num(400));
    let mut last = None;
    for _ in 0..2000 {
        last = Some(est.step(&inputs));
    }
    assert!(
        last.unwrap().wear >= Metres::from_num(0.010),
        "{:?}",
        last.unwrap().wear
    );
    let saved = est.save(1);
    let mut back = Estimator::restore(&dev, &saved).unwrap();
    let rec = StateRecord::from_bytes(&saved).unwrap();
    assert_eq!(rec.wear().thickness_loss(), dev.wear().initial_thickness());
    assert!(rec.wear().worn_out(dev.wear()));
    let e = back.step(&Inputs::<1>::at_rest(0));
    assert_eq!(e.wear, dev.wear().initial_thickness());
}

#[test]
fn correction_and_covariance_out_of_their_band_are_refused() {
    let plain = device::<1>(&Spec::default());
    let adapting = adapting();
    // Correction −2 (offset 72): outside any band; without adaptation only exactly 1 is.
    let minus_two = (-2i32 << 30).to_le_bytes();
    assert!(matches!(
        Estimator::restore(&adapting, &patched(record(&adapting, 0.0, 20.0), 72, &minus_two)),
        Err(RecordError::CorrectionOutOfBand { factor, .. }) if factor == Ratio::from_num(-2)
    ));
    let bits = |r: f64| Ratio::from_num(r).to_bits().to_le_bytes();
    assert!(matches!(
        Estimator::restore(&plain, &patched(record(&plain, 0.0, 20.0), 72, &bits(0.93))),
        Err(RecordError::CorrectionOutOfBand { min, max, .. }) if min == Ratio::ONE && max == Ratio::ONE
    ));
    // The band of the adapting device is 0.7 … 1.3.
    assert!(
        Estimator::restore(
            &adapting,
            &patched(record(&adapting, 0.0, 20.0), 72, &bits(0.7))
        )
        .is_ok()
    );
    assert!(matches!(
        Estimator::restore(
            &adapting,
            &patched(record(&adapting, 0.0, 20.0), 72, &bits(1.31))
        ),
        Err(RecordError::CorrectionOutOfBand { .. })
    ));
    // Covariance (offset 76): negative is refused; without adaptation only 0 is.
    assert!(matches!(
        Estimator::restore(&adapting, &patched(record(&adapting, 0.0, 20.0), 76, &bits(-0.5))),
        Err(RecordError::CovarianceOutOfRange { covariance, .. }) if covariance == Ratio::from_num(-0.5)
    ));
    assert!(matches!(
        Estimator::restore(&plain, &patched(record(&plain, 0.0, 20.0), 76, &bits(0.5))),
        Err(RecordError::CovarianceOutOfRange { .. })
    ));
}

#[test]
fn two_temperatures_for_a_single_node_model_are_refused() {
    let dev = device::<1>(&Spec::default());
    let bytes = StateRecord::new(
        1,
        dev.checksum(),
        &WearState::new(),
        &ThermalState::with_temperatures(Celsius::from_num(150), Celsius::from_num(190)),
        Ratio::ONE,
        Ratio::ZERO,
    )
    .to_bytes();
    assert_eq!(
        Estimator::restore(&dev, &bytes).unwrap_err(),
        RecordError::TwoTemperaturesOneNode
    );
}

// What the estimator saves, it restores: over braking, holding, adaptation and the sub-rate.
#[test]
fn every_saved_record_is_accepted() {
    for dev in [device::<1>(&Spec::default()), adapting()] {
        let mut est = Estimator::new(&dev);
        for i in 0..20_000u32 {
            let force = 2_000.0 + 30_000.0 * f64::from(i % 700) / 700.0;
            let mut inputs = Inputs::<1>::at_rest(counts(force));
            inputs.input_speed = Some(RadPerSec::from_num(f64::from(i % 300) - 20.0));
            inputs.reference_torque = est.clone().step(&inputs).torque;
            est.step(&inputs);
            if i % 997 == 0 {
                let bytes = est.save(i);
                let back = Estimator::restore(&dev, &bytes).unwrap();
                assert_eq!(back.save(i), bytes);
            }
        }
    }
}
