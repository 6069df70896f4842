//! The estimator's full-state snapshot: a run cut at any samples, each cut snapshotted and
//! resumed into a fresh estimator, gives every estimate of the uncut run bit for bit; damaged,
//! foreign or arbitrary bytes are refused with the reason and never panic.
//!
//! The reference of the equality checks is the uncut run of the same estimator (an identity,
//! not a published value): what a snapshot promises is that cutting changes nothing.
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::indexing_slicing,
    clippy::cast_possible_truncation,
    clippy::cast_precision_loss
)]

mod estimator_common;
use estimator_common::*;

use clampwise_core::estimator::Combination;
use clampwise_core::estimator::{
    Estimate, Estimator, Inputs, SnapshotError, snapshot::SNAPSHOT_MAGIC, snapshot_len,
};
use clampwise_core::sensor::{
    ActuatorCommand, ActuatorTransfer, ChannelCalibration, DiagnosticLimits, NewtonsPerKelvin,
    PerKelvin, RawChannel, StuckCheck, TemperatureCompensation,
};
use clampwise_core::state_record::RECORD_MAGIC;
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec, Seconds};
use crc::{CRC_32_ISO_HDLC, Crc};
use proptest::prelude::*;

/// One stretch of operation: a force, a slip speed and the faults laid on it.
#[derive(Clone, Copy, Debug)]
struct Segment {
    force_n: f64,
    /// Slip speed (rad/s); `None`: the speed signal is lost.
    speed: Option<f64>,
    samples: usize,
    /// Bit 0: channel 0 invalid; bit 1: last channel 3 kN off (out-voted with 3 channels);
    /// bit 2: counts frozen (no noise); bit 3: no actuator command; bit 4: reference torque;
    /// bit 5: the command ramps (with frozen counts: a stuck sensor); bit 6: sensor at 150 °C
    /// (outside the compensation range).
    faults: u8,
}

fn segment() -> impl Strategy<Value = Segment> {
    (
        prop_oneof![Just(0.0), 0.0..150.0, 2_000.0..60_000.0],
        prop_oneof![
            1 => Just(None),
            2 => Just(Some(0.0)),
            2 => (-0.3..0.3).prop_map(Some),
            4 => (-250.0..250.0).prop_map(Some),
        ],
        1usize..60,
        any::<u8>(),
    )
        .prop_map(|(force_n, speed, samples, faults)| Segment {
            force_n,
            speed,
            samples,
            faults,
        })
}

/// The samples of the segments; deterministic noise (so frozen counts differ from noisy ones).
fn inputs<const C: usize>(segments: &[Segment]) -> Vec<Inputs<C>> {
    let mut out = Vec::new();
    let mut noise = 0x9E37_79B9u32;
    for s in segments {
        for k in 0..s.samples {
            noise = noise.wrapping_mul(1_664_525).wrapping_add(1_013_904_223);
            let jitter = if s.faults & 4 != 0 {
                0.0
            } else {
                f64::from(noise >> 24) - 128.0
            };
            let mut x = Inputs::<C>::at_rest(0);
            for (c, ch) in x.force_channels.iter_mut().enumerate() {
                let off = if s.faults & 2 != 0 && c == C - 1 && C > 1 {
                    3_000.0
                } else {
                    0.0
                };
                *ch = RawChannel {
                    counts: counts(s.force_n + off + jitter),
                    valid: !(s.faults & 1 != 0 && c == 0),
                };
            }
            x.input_speed = s.speed.map(RadPerSec::from_num);
            x.output_speed = s.speed.map(|_| RadPerSec::ZERO);
            let ramp = if s.faults & 32 != 0 {
                0.5 * k as f64
            } else {
                0.0
            };
            x.actuator_command =
                (s.faults & 8 == 0).then(|| ActuatorCommand::from_num(s.force_n / 1000.0 + ramp));
            x.sensor_temperature =
                Some(Celsius::from_num(if s.faults & 64 != 0 { 150 } else { 25 }));
            x.reference_torque = (s.faults & 16 != 0)
                .then(|| NewtonMetres::from_num(s.force_n * 2.0 * 0.38 * 0.082));
            out.push(x);
        }
    }
    out
}

fn one_pass<const C: usize>(dev: &Device<C>, xs: &[Inputs<C>]) -> Vec<Estimate> {
    let mut est = Estimator::new(dev);
    xs.iter().map(|x| est.step(x)).collect()
}

/// The same run, snapshotted before every sample in `cuts` and resumed into a fresh
/// estimator from a copy of the bytes.
fn chunked<const C: usize>(dev: &Device<C>, xs: &[Inputs<C>], cuts: &[usize]) -> Vec<Estimate> {
    let mut est = Estimator::new(dev);
    let mut out = Vec::with_capacity(xs.len());
    for (i, x) in xs.iter().enumerate() {
        if cuts.contains(&i) {
            let mut bytes = vec![0u8; snapshot_len(C)];
            assert_eq!(est.snapshot_into(&mut bytes), Ok(snapshot_len(C)));
            let carried = bytes.clone();
            est = Estimator::from_snapshot(dev, &carried).unwrap();
        }
        out.push(est.step(x));
    }
    out
}

fn devices_1() -> [Device<1>; 4] {
    [
        instrumented::<1>(1),
        device::<1>(&Spec::default()),
        device_with_sub_rate::<1>(
            &Spec {
                adapt: true,
                ..Spec::default()
            },
            8,
        ),
        device_with_sub_rate::<1>(
            &Spec {
                fallback: true,
                viscous_drag: 0.02,
                no_load_drag: 1.5,
                ..Spec::default()
            },
            4,
        ),
    ]
}

/// The test device with every sensor state in use: a stuck check (20 samples, 2 command units),
/// temperature compensation, and an actuator fallback with a 10 ms lag.
fn instrumented<const C: usize>(every: u8) -> Device<C> {
    let spec = Spec {
        adapt: true,
        combination: Combination::RootSumSquare,
        ..Spec::default()
    };
    let cal = ChannelCalibration {
        temperature: Some(TemperatureCompensation {
            reference: Celsius::from_num(20),
            min: Celsius::from_num(-40),
            max: Celsius::from_num(120),
            zero_per_kelvin: NewtonsPerKelvin::from_num(0.5),
            span_per_kelvin: PerKelvin::from_num(1e-4),
        }),
        ..calibration()
    };
    let limits = DiagnosticLimits {
        stuck: Some(StuckCheck {
            time: Seconds::from_num(0.02),
            command_span: ActuatorCommand::from_num(2),
        }),
        ..diagnostic_limits()
    };
    let fallback = ActuatorTransfer {
        response_time: Seconds::from_num(0.01),
        ..actuator_transfer()
    };
    device_with_sensor(&spec, every, sensor_from(cal, limits, Some(fallback)))
}

fn devices_3() -> [Device<3>; 3] {
    [
        instrumented::<3>(2),
        device::<3>(&Spec {
            adapt: true,
            fallback: true,
            ..Spec::default()
        }),
        device_with_sub_rate::<3>(&Spec::default(), 8),
    ]
}

fn cut_points(len: usize, picks: &[prop::sample::Index]) -> Vec<usize> {
    picks.iter().map(|p| p.index(len.max(1))).collect()
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn chunks_equal_one_pass_one_channel(
        segments in prop::collection::vec(segment(), 1..25),
        picks in prop::collection::vec(any::<prop::sample::Index>(), 0..12),
    ) {
        let xs = inputs::<1>(&segments);
        let cuts = cut_points(xs.len(), &picks);
        for dev in &devices_1() {
            prop_assert_eq!(chunked(dev, &xs, &cuts), one_pass(dev, &xs));
        }
    }

    #[test]
    fn chunks_equal_one_pass_three_channels(
        segments in prop::collection::vec(segment(), 1..25),
        picks in prop::collection::vec(any::<prop::sample::Index>(), 0..12),
    ) {
        let xs = inputs::<3>(&segments);
        let cuts = cut_points(xs.len(), &picks);
        for dev in &devices_3() {
            prop_assert_eq!(chunked(dev, &xs, &cuts), one_pass(dev, &xs));
        }
    }

    #[test]
    fn arbitrary_bytes_are_refused_without_panic(bytes in prop::collection::vec(any::<u8>(), 0..400)) {
        let dev = device::<3>(&Spec::default());
        prop_assert!(Estimator::from_snapshot(&dev, &bytes).is_err());
    }

    /// Past the header and the CRC (resealed), any body decodes to a refusal or to a state the
    /// step runs from without panicking.
    #[test]
    fn arbitrary_sealed_bodies_never_panic(body in prop::collection::vec(any::<u8>(), snapshot_len(3) - 16)) {
        let dev = device::<3>(&Spec { adapt: true, fallback: true, ..Spec::default() });
        let bytes = seal::<3>(&dev, &body);
        if let Ok(mut est) = Estimator::from_snapshot(&dev, &bytes) {
            let xs = inputs::<3>(&[Segment { force_n: 20_000.0, speed: Some(40.0), samples: 20, faults: 0 }]);
            for x in &xs {
                est.step(x);
            }
        }
    }
}

/// A snapshot with a valid header and CRC around `body`.
fn seal<const C: usize>(dev: &Device<C>, body: &[u8]) -> Vec<u8> {
    let mut b = Vec::new();
    b.extend_from_slice(&SNAPSHOT_MAGIC);
    b.extend_from_slice(&1u16.to_le_bytes());
    b.push(C as u8);
    b.push(0);
    b.extend_from_slice(&dev.checksum().to_le_bytes());
    b.extend_from_slice(body);
    append_crc(b)
}

/// Append the CRC-32 of everything before it.
fn append_crc(mut b: Vec<u8>) -> Vec<u8> {
    let crc = Crc::<u32>::new(&CRC_32_ISO_HDLC).checksum(&b);
    b.extend_from_slice(&crc.to_le_bytes());
    b
}

/// Replace the trailing CRC-32 with that of the (modified) bytes before it.
fn reseal(mut b: Vec<u8>) -> Vec<u8> {
    b.truncate(b.len() - 4);
    append_crc(b)
}

/// A snapshot of `dev` in the middle of a run with every kind of state in motion.
fn mid_run<const C: usize>(dev: &Device<C>) -> Vec<u8> {
    let xs = inputs::<C>(&[
        Segment {
            force_n: 30_000.0,
            speed: Some(120.0),
            samples: 37,
            faults: 16,
        },
        Segment {
            force_n: 25_000.0,
            speed: Some(0.01),
            samples: 5,
            faults: 3,
        },
    ]);
    let mut est = Estimator::new(dev);
    for x in &xs {
        est.step(x);
    }
    let mut bytes = vec![0u8; snapshot_len(C)];
    est.snapshot_into(&mut bytes).unwrap();
    bytes
}

#[test]
fn lengths_are_the_documented_ones() {
    // Layout table of `clampwise_core::estimator::snapshot`: 12 header + 51 per channel + 108
    // + 4 CRC [calc].
    assert_eq!(snapshot_len(1), 175);
    assert_eq!(snapshot_len(3), 277);
    assert_eq!(Estimator::<TestTables, 3>::SNAPSHOT_LEN, 277);
    let dev = device::<1>(&Spec::default());
    let est = Estimator::new(&dev);
    let mut short = [0u8; 174];
    assert_eq!(
        est.snapshot_into(&mut short),
        Err(SnapshotError::BufferTooSmall {
            len: 174,
            needed: 175
        })
    );
    let mut long = [0u8; 200];
    assert_eq!(est.snapshot_into(&mut long), Ok(175));
    assert!(Estimator::from_snapshot(&dev, &long[..175]).is_ok());
    assert_eq!(
        Estimator::from_snapshot(&dev, &long).err(),
        Some(SnapshotError::WrongLength {
            len: 200,
            expected: 175
        })
    );
}

#[test]
fn the_header_is_the_documented_one_and_differs_from_the_state_record() {
    let dev = device::<3>(&Spec::default());
    let b = mid_run(&dev);
    assert_eq!(&b[0..4], b"CWSN");
    assert_ne!(b[0..4], RECORD_MAGIC);
    assert_eq!(b[4..6], 1u16.to_le_bytes());
    assert_eq!(b[6], 3);
    assert_eq!(b[7], 0);
    assert_eq!(b[8..12], dev.checksum().to_le_bytes());
    // CRC-32/ISO-HDLC check value 0xCBF43926 for "123456789" [pub: Greg Cook, "Catalogue of
    // parametrised CRC algorithms", CRC-32/ISO-HDLC].
    assert_eq!(
        Crc::<u32>::new(&CRC_32_ISO_HDLC).checksum(b"123456789"),
        0xCBF4_3926
    );
    let n = b.len();
    assert_eq!(
        b[n - 4..],
        Crc::<u32>::new(&CRC_32_ISO_HDLC)
            .checksum(&b[..n - 4])
            .to_le_bytes()
    );
}

// A CRC whose generator has more than one term detects every single-bit error [mem: Peterson &
// Brown, Proc. IRE 49 (1961)]; the header checks come first, so each flip is refused for one
// reason or another, never loaded.
#[test]
fn every_flipped_bit_is_refused() {
    let dev = device::<3>(&Spec {
        adapt: true,
        fallback: true,
        ..Spec::default()
    });
    let good = mid_run(&dev);
    assert!(Estimator::from_snapshot(&dev, &good).is_ok());
    for byte in 0..good.len() {
        for bit in 0..8 {
            let mut b = good.clone();
            b[byte] ^= 1 << bit;
            assert!(
                Estimator::from_snapshot(&dev, &b).is_err(),
                "byte {byte} bit {bit}"
            );
        }
    }
}

#[test]
fn every_truncation_is_refused() {
    let dev = device::<1>(&Spec::default());
    let good = mid_run(&dev);
    for len in 0..good.len() {
        assert_eq!(
            Estimator::from_snapshot(&dev, &good[..len]).err(),
            Some(SnapshotError::WrongLength { len, expected: 175 })
        );
    }
}

#[test]
fn another_configuration_or_channel_count_is_refused() {
    let a = device::<1>(&Spec::default());
    let b = device::<1>(&Spec {
        touch_force_n: 150.0,
        ..Spec::default()
    });
    let snap = mid_run(&a);
    assert_eq!(
        Estimator::from_snapshot(&b, &snap).err(),
        Some(SnapshotError::ConfigMismatch {
            snapshot: a.checksum(),
            config: b.checksum()
        })
    );
    let three = mid_run(&device::<3>(&Spec::default()));
    assert_eq!(
        Estimator::from_snapshot(&a, &three).err(),
        Some(SnapshotError::ChannelCount {
            snapshot: 3,
            estimator: 1
        })
    );
    let message = Estimator::from_snapshot(&a, &three)
        .err()
        .unwrap()
        .to_string();
    assert!(message.contains("3 force channels"), "{message}");
}

#[test]
fn wrong_magic_version_and_a_state_record_are_refused() {
    let dev = device::<1>(&Spec::default());
    let good = mid_run(&dev);
    let mut magic = good.clone();
    magic[0..4].copy_from_slice(&RECORD_MAGIC);
    assert_eq!(
        Estimator::from_snapshot(&dev, &reseal(magic)).err(),
        Some(SnapshotError::BadMagic)
    );
    let mut version = good.clone();
    version[4..6].copy_from_slice(&2u16.to_le_bytes());
    assert_eq!(
        Estimator::from_snapshot(&dev, &reseal(version)).err(),
        Some(SnapshotError::UnsupportedVersion { version: 2 })
    );
    let record = Estimator::new(&dev).save(1);
    assert_eq!(
        Estimator::from_snapshot(&dev, &record).err(),
        Some(SnapshotError::BadMagic)
    );
}

/// Offsets of the layout table for C channels [calc: the table's sizes summed].
fn friction_at(c: usize) -> usize {
    51 * c + 30
}

#[test]
fn invalid_encodings_name_their_field_and_offset() {
    let dev = device::<3>(&Spec::default());
    let good = mid_run(&dev);
    let with = |at: usize, v: &[u8]| {
        let mut b = good.clone();
        b[at..at + v.len()].copy_from_slice(v);
        Estimator::from_snapshot(&dev, &reseal(b)).err()
    };
    let at = friction_at(3);
    assert_eq!(
        with(at, &[2]),
        Some(SnapshotError::InvalidValue {
            offset: at,
            field: "friction.slipping"
        })
    );
    // Lining temperature (first thermal field) at −274 °C: below absolute zero.
    assert_eq!(
        with(at + 1, &(-274i64 << 32).to_le_bytes()),
        Some(SnapshotError::InvalidValue {
            offset: at + 1,
            field: "thermal.lining"
        })
    );
    // The adaptation's presence tag (this device has none) and the reserved header byte.
    let adapt_at = 51 * 3 + 111;
    assert_eq!(
        with(adapt_at, &[1]),
        Some(SnapshotError::InvalidValue {
            offset: adapt_at,
            field: "adapt.present"
        })
    );
    assert_eq!(
        with(7, &[1]),
        Some(SnapshotError::InvalidValue {
            offset: 7,
            field: "reserved"
        })
    );
    // The first channel's low-pass "primed" bool, after its 42 bytes of diagnostics and
    // 8 of accumulator.
    assert_eq!(
        with(12 + 42 + 8, &[7]),
        Some(SnapshotError::InvalidValue {
            offset: 62,
            field: "low_pass.primed"
        })
    );
}

#[test]
fn adaptation_outside_its_band_is_refused() {
    let dev = device::<1>(&Spec {
        adapt: true,
        ..Spec::default()
    });
    let good = mid_run(&dev);
    let factor_at = 51 + 112;
    let mut b = good.clone();
    // k = 1.5, outside the band 0.7 … 1.3.
    b[factor_at..factor_at + 4].copy_from_slice(&(3i32 << 29).to_le_bytes());
    assert!(matches!(
        Estimator::from_snapshot(&dev, &reseal(b)).err(),
        Some(SnapshotError::InvalidValue {
            field: "adapt.factor",
            ..
        })
    ));
}
