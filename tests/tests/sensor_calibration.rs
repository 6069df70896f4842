//! Two-point calibration and the fixed-point counts → newtons path.
//!
//! Reference [calc]: the straight line through two points, gain = (L₂ − L₁)/(c₂ − c₁),
//! offset = L₁ − gain·c₁, evaluated in f64. Stated bound of the fixed-point path against that
//! line: 1 LSB of `Newtons` + |counts|·2⁻³³ N (gain quantisation of I32F32).
#![allow(
    clippy::unwrap_used,
    clippy::float_cmp,
    clippy::cast_possible_truncation,
    clippy::cast_sign_loss,
    clippy::indexing_slicing
)]

use clampwise_core::sensor::*;
use proptest::prelude::*;

const LSB: f64 = 1.0 / 256.0;

const ADC24: AdcRails = AdcRails {
    low: -8_388_608,
    high: 8_388_607,
    margin: 0,
};

/// Counts a sensor of `gain` (N/count) and `offset` (N) shows under `load` (N).
fn counts_at(gain: f64, offset: f64, load: f64) -> f64 {
    (load - offset) / gain
}

fn fixed_error_bound(counts: f64) -> f64 {
    LSB + counts.abs() * 2f64.powi(-33)
}

#[test]
fn two_point_calibration_recovers_gain_and_offset() {
    // (gain N/count, offset N, ADC rails, two known loads N)
    let cases = [
        (0.0238, -153.2, ADC24, 0.0, 50_000.0),
        // Inverted bridge: force rises as counts fall.
        (-0.0051, 812.0, ADC24, 1_000.0, 30_000.0),
        // 12-bit ADC on a 200 kN cell.
        (
            48.828125,
            -2_000.0,
            AdcRails {
                low: 0,
                high: 4095,
                margin: 2,
            },
            10_000.0,
            150_000.0,
        ),
    ];
    for (gain, offset, rails, l1, l2) in cases {
        let (c1, c2) = (counts_at(gain, offset, l1), counts_at(gain, offset, l2));
        let tp = TwoPoint::from_loads(c1, l1, c2, l2).unwrap();
        assert!(
            ((tp.gain_n_per_count - gain) / gain).abs() < 1e-12,
            "{tp:?}"
        );
        assert!(
            (tp.offset_n - offset).abs() < 1e-9 * offset.abs().max(1.0),
            "{tp:?}"
        );

        // The fixed-point channel reproduces the line at every load in between.
        let cal = tp.to_calibration(rails).unwrap();
        for i in 0..=20 {
            let load = l1 + (l2 - l1) * f64::from(i) / 20.0;
            let c = counts_at(gain, offset, load).round();
            let want = gain * c + offset;
            let got = cal.force(c as i32, None);
            assert!(!got.saturated);
            let err = (got.force.to_num::<f64>() - want).abs();
            assert!(err <= fixed_error_bound(c), "load {load}: {err} N");
        }
    }
}

proptest! {
    #[test]
    fn two_point_recovers_any_line(
        gain_mag in 1e-4f64..100.0,
        negative in any::<bool>(),
        offset in -10_000.0f64..10_000.0,
        l1 in -50_000.0f64..100_000.0,
        span in 1_000.0f64..100_000.0,
        probe in -8_000_000i32..8_000_000,
    ) {
        let gain = if negative { -gain_mag } else { gain_mag };
        let l2 = l1 + span;
        let tp = TwoPoint::from_loads(
            counts_at(gain, offset, l1), l1, counts_at(gain, offset, l2), l2,
        ).unwrap();
        prop_assert!(((tp.gain_n_per_count - gain) / gain).abs() < 1e-9);
        prop_assert!((tp.offset_n - offset).abs() < 1e-6 * (1.0 + offset.abs()) + 1e-9 * l1.abs().max(l2.abs()));
        let cal = tp.to_calibration(ADC24).unwrap();
        let want = tp.gain_n_per_count * f64::from(probe) + tp.offset_n;
        let got = cal.force(probe, None);
        if want.abs() < 8.0e6 {
            prop_assert!(!got.saturated);
            let err = (got.force.to_num::<f64>() - want).abs();
            prop_assert!(err <= fixed_error_bound(f64::from(probe)), "{err}");
        } else if want.abs() > 8_388_609.0 {
            // Beyond the range of `Newtons` (±2²³ N): clamped and reported.
            prop_assert!(got.saturated);
        }
    }
}

#[test]
fn bad_calibration_points_are_named() {
    let e = TwoPoint::from_loads(100.0, 0.0, 100.0, 50_000.0).unwrap_err();
    assert!(
        e.to_string().contains("two_point.counts_2 - counts_1"),
        "{e}"
    );
    let e = TwoPoint::from_loads(100.0, f64::INFINITY, 200.0, 5.0).unwrap_err();
    assert!(e.to_string().contains("two_point.load_1_n"), "{e}");
    // A gain beyond I32F32.
    let tp = TwoPoint::from_loads(0.0, 0.0, 1e-9, 1e3).unwrap();
    assert!(tp.to_calibration(ADC24).is_err());
}
