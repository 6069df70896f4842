//! Fault injection into the sensor conditioning, one test per fault, with the detection latency
//! stated and checked to the sample.
//!
//! Conventions: `k` is the index of a sample counted from the first faulty sample (k = 0), so a
//! flag "raised at k = 2" is raised in the third faulty sample (a latency of 3 samples). The
//! expected latencies follow from the rules stated in `clampwise_core::sensor::diagnostics`
//! and the bench limits in `sensor_common` [calc]: debounce raise/clear counts invalid 3/5,
//! rail 2/4, range 4/3, rate 3/6, stuck 5/5, disagreement 6/8; rate limit r = 200 N/sample,
//! noise band 20 N, hold 2 samples, stuck window W = 50 samples, tolerance 300 N.
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

const F0: f64 = 10_000.0;

/// First index at which the f64 first-order recursion (α of the bench filter) driven by
/// `deviation(k)` from a settled zero exceeds `tolerance` [calc: y_k = y_{k−1} + α(x_k − y_{k−1})].
fn first_filtered_crossing(deviation: impl Fn(usize) -> f64, tolerance: f64) -> usize {
    let alpha = 1.0 - (-2.0 * std::f64::consts::PI * 50.0 / 1000.0).exp();
    let mut y = 0.0;
    (0..100_000)
        .find(|&k| {
            y += alpha * (deviation(k) - y);
            // Keep clear of the boundary so fixed-point rounding cannot move the sample.
            assert!(
                (y - tolerance).abs() > 0.05,
                "test parameters too near the threshold"
            );
            y > tolerance
        })
        .unwrap()
}

#[test]
fn spike_is_rejected_at_once_and_never_reaches_the_output() {
    let mut b = Bench::<1>::new(LIMITS);
    let r = b.settle(F0, 100);
    assert_eq!((r.health, r.force), (Health::Ok, Some(n(F0))));

    // One-sample spike of +5 kN: rejected in the same sample (latency 0), held value reported,
    // uncertainty widened by noise + r·1 = 220 N; RATE needs 3 bad samples, so it stays down.
    let r = b.step([ok(counts(F0 + 5000.0))], Some(10.0));
    assert_eq!(r.force, Some(n(F0)));
    assert_eq!(r.health, Health::Degraded);
    assert_eq!(r.channel_flags[0], ChannelFlags::REJECTED);
    assert_eq!(r.uncertainty, n(100.0 + 220.0));
    let r = b.step([ok(counts(F0))], Some(10.0));
    assert_eq!((r.health, r.force), (Health::Ok, Some(n(F0))));
    assert!(r.channel_flags[0].is_empty());

    // Three-sample spike: RATE raised at k = 2 (N = 3); the hold (2 samples) runs out at the
    // same sample, so the reading falls back to the actuator model (10 kN on the centre line,
    // ± 2000 + 400/2 N).
    for k in 0..3 {
        let r = b.step([ok(counts(F0 + 5000.0))], Some(10.0));
        let f = r.channel_flags[0];
        if k < 2 {
            assert!(!f.contains(ChannelFlags::RATE), "k = {k}");
            assert_eq!((r.health, r.force), (Health::Degraded, Some(n(F0))));
        } else {
            assert!(f.contains(ChannelFlags::RATE | ChannelFlags::STALE));
            assert_eq!(r.source, ForceSource::ActuatorFallback);
            assert_eq!((r.health, r.force), (Health::Lost, Some(n(F0))));
            assert_eq!(r.uncertainty, n(2200.0));
        }
    }
    // Back to normal at k = 3 (accepted: allowance 20 + 200·4 N); RATE clears in the 6th good
    // sample, k = 8.
    for k in 3..=8 {
        let r = b.step([ok(counts(F0))], Some(10.0));
        let raised = r.channel_flags[0].contains(ChannelFlags::RATE);
        assert_eq!(raised, k < 8, "k = {k}");
        assert_eq!(r.health, if k < 8 { Health::Lost } else { Health::Ok });
    }
}

#[test]
fn step_beyond_the_actuator_rate() {
    let mut b = Bench::<1>::new(LIMITS);
    b.settle(F0, 100);
    // A +2 kN step: bad while 2000 > 20 + 200·k for k = 1, 2, …: K = ⌈1980/200⌉ − 1 = 9
    // samples (k = 0 ..= 8); RATE raised at k = 2; accepted again at k = 9; cleared in the 6th
    // good sample, k = 14.
    let step = 2000.0;
    let rejected = ((step - 20.0) / 200.0_f64).ceil() as usize - 1;
    assert_eq!(rejected, 9);
    for k in 0..=14 {
        let r = b.step([ok(counts(F0 + step))], Some(10.0));
        let f = r.channel_flags[0];
        assert_eq!(f.contains(ChannelFlags::REJECTED), k < rejected, "k = {k}");
        assert_eq!(
            f.contains(ChannelFlags::RATE),
            (2..14).contains(&k),
            "k = {k}"
        );
        match k {
            0 | 1 => assert_eq!((r.health, r.force), (Health::Degraded, Some(n(F0)))),
            2..=13 => assert_eq!(r.health, Health::Lost),
            _ => assert_eq!((r.health, r.force), (Health::Ok, Some(n(F0 + step)))),
        }
    }
    // A step within the rate limit (150 N < 20 + 200 N) is never rejected.
    for _ in 0..50 {
        let r = b.step([ok(counts(F0 + step + 150.0))], Some(10.0));
        assert_eq!(r.health, Health::Ok);
    }
}

#[test]
fn stuck_signal_while_the_command_moves() {
    let mut b = Bench::<1>::new(LIMITS);
    assert_eq!(b.cfg.stuck_window_samples(), Some(50));
    // Healthy ramp, 30 N per sample (> the 20 N band, so every sample restarts the window),
    // command following it at 1 kN per unit.
    let force = |j: i32| 5000.0 + 30.0 * f64::from(j);
    for j in 0..100 {
        let r = b.step([ok(counts(force(j)))], Some(force(j) / 1000.0));
        assert_eq!(r.health, Health::Ok);
    }
    // Frozen at the value of the last healthy sample (j = 99) from k = 0 while the command
    // keeps ramping. The window opened at j = 99, so it is full (W = 50) at k = 49, when the
    // command has spanned 1.5 ≥ 1 unit: first bad sample k = 49, raised at k = 49 + 5 − 1 = 53,
    // a latency of W + N − 1 = 54 frozen samples.
    let frozen = counts(force(99));
    for k in 0..60 {
        let cmd = force(100 + k) / 1000.0;
        let r = b.step([ok(frozen)], Some(cmd));
        let stuck = r.channel_flags[0].contains(ChannelFlags::STUCK);
        assert_eq!(stuck, k >= 53, "k = {k}");
        if stuck {
            assert_eq!(r.source, ForceSource::ActuatorFallback);
            // Rising command: lower branch of the band, 1000·cmd − 200 N.
            let want = 1000.0 * ActuatorCommand::from_num(cmd).to_num::<f64>() - 200.0;
            assert!((r.force.unwrap().to_num::<f64>() - want).abs() <= 1.0 / 256.0);
        } else {
            assert_eq!(r.health, Health::Ok);
        }
    }
    // Moving again from where it stuck, 30 N per sample: each sample beyond the band is good
    // evidence; cleared in the 5th, k = 4.
    for k in 0..5 {
        let f = force(99) + 30.0 * f64::from(k + 1);
        let r = b.step([ok(counts(f))], Some(f / 1000.0));
        assert!(!r.channel_flags[0].contains(ChannelFlags::REJECTED));
        assert_eq!(
            r.channel_flags[0].contains(ChannelFlags::STUCK),
            k < 4,
            "k = {k}"
        );
    }
}

#[test]
fn a_frozen_signal_is_not_stuck_while_the_command_holds() {
    let mut b = Bench::<1>::new(LIMITS);
    b.settle(F0, 10);
    for _ in 0..5000 {
        let r = b.step([ok(counts(F0))], Some(10.0));
        assert_eq!(r.health, Health::Ok);
    }
}

#[test]
fn drift_of_one_of_three_channels() {
    let mut b = Bench::<3>::new(LIMITS);
    b.settle(F0, 200);
    // Channel 2 drifts by +2 N per sample from k = 0. Its filtered value first exceeds the
    // 300 N tolerance from the median at k = 152 (ramp lag d(1 − α)/α = 5.42 N [calc]);
    // DISAGREE is raised 6 samples later in its 6th bad sample, k = 157.
    let drift = |k: usize| 2.0 * (k as f64 + 1.0);
    let first = first_filtered_crossing(drift, 300.0);
    assert_eq!(first, 152);
    for k in 0..=170 {
        let r = b.step(
            [ok(counts(F0)), ok(counts(F0)), ok(counts(F0 + drift(k)))],
            Some(10.0),
        );
        // The median keeps the output exact throughout.
        assert_eq!(r.force, Some(n(F0)), "k = {k}");
        let flagged = r.channel_flags[2].contains(ChannelFlags::DISAGREE);
        assert_eq!(flagged, k >= first + 5, "k = {k}");
        if k < first {
            assert_eq!((r.health, used(&r)), (Health::Ok, Some(0b111)));
        } else {
            assert_eq!((r.health, used(&r)), (Health::Degraded, Some(0b011)));
        }
    }
}

#[test]
fn rail_open_or_short() {
    for (rail, bit) in [
        (RAIL_HIGH, ChannelFlags::RAIL_HIGH),
        (RAIL_LOW + 8, ChannelFlags::RAIL_LOW),
        (i32::MIN, ChannelFlags::RAIL_LOW),
    ] {
        let mut b = Bench::<1>::new(LIMITS);
        b.settle(F0, 50);
        // At the rail from k = 0: rejected and saturated at once; flag raised at k = 1 (N = 2),
        // which takes the only channel out: actuator fallback from k = 1.
        for k in 0..10 {
            let r = b.step([ok(rail)], Some(10.0));
            assert!(r.saturated);
            assert_eq!(r.channel_flags[0].contains(bit), k >= 1, "k = {k}");
            if k == 0 {
                assert_eq!((r.health, r.force), (Health::Degraded, Some(n(F0))));
            } else {
                assert_eq!(r.source, ForceSource::ActuatorFallback);
            }
        }
        // Released at k = 0 of the recovery: cleared in the 4th good sample, k = 3.
        for k in 0..4 {
            let r = b.step([ok(counts(F0))], Some(10.0));
            assert_eq!(r.channel_flags[0].contains(bit), k < 3, "k = {k}");
            assert_eq!(r.health == Health::Ok, k == 3);
        }
    }
}

#[test]
fn dropout_of_the_acquisition() {
    let mut b = Bench::<1>::new(LIMITS);
    b.settle(F0, 50);
    let dropped = RawChannel {
        counts: counts(F0),
        valid: false,
    };
    // Invalid from k = 0 for 10 samples: held at k = 0, 1 with the uncertainty growing by
    // noise + r·k; INVALID raised at k = 2 (N = 3), and the hold (2) expires there too.
    for k in 0..10u32 {
        let r = b.step([dropped], Some(10.0));
        let f = r.channel_flags[0];
        assert_eq!(f.contains(ChannelFlags::INVALID), k >= 2, "k = {k}");
        if k < 2 {
            assert_eq!((r.health, r.force), (Health::Degraded, Some(n(F0))));
            assert_eq!(r.uncertainty, n(100.0 + 20.0 + 200.0 * f64::from(k + 1)));
        } else {
            assert!(f.contains(ChannelFlags::STALE));
            assert_eq!(r.source, ForceSource::ActuatorFallback);
        }
    }
    // Valid again: INVALID clears in the 5th valid sample (k = 4), filter restarted from the
    // first valid sample.
    for k in 0..5 {
        let r = b.step([ok(counts(F0 + 100.0))], Some(10.0));
        assert_eq!(
            r.channel_flags[0].contains(ChannelFlags::INVALID),
            k < 4,
            "k = {k}"
        );
        assert_eq!(r.channel_force[0], Some(n(F0 + 100.0)));
    }

    // With no hold allowed the channel is out at the first invalid sample.
    let mut b = Bench::<1>::new(DiagnosticLimits {
        max_hold_samples: 0,
        ..LIMITS
    });
    b.settle(F0, 50);
    let r = b.step([dropped], None);
    assert_eq!(r.source, ForceSource::Unavailable);
    assert_eq!(r.force, None);
    assert_eq!(r.uncertainty, Newtons::MAX);
}

#[test]
fn force_beyond_the_plausible_range() {
    let mut b = Bench::<1>::new(LIMITS);
    b.settle(59_000.0, 50);
    // Ramp of 100 N per sample (inside the rate limit); the first sample above 60 kN is
    // 60 100 N (k = 0). Held k = 0, 1; hold expired k = 2; OUT_OF_RANGE raised at k = 3 (N = 4).
    // No value above 60 kN is ever reported.
    for j in 0..30 {
        let f = 59_000.0 + 100.0 * f64::from(j + 1);
        let k = j - 10;
        let r = b.step([ok(counts(f))], Some(f / 1000.0));
        let flags = r.channel_flags[0];
        assert_eq!(
            flags.contains(ChannelFlags::OUT_OF_RANGE),
            k >= 3,
            "k = {k}"
        );
        assert_eq!(flags.contains(ChannelFlags::REJECTED), k >= 0, "k = {k}");
        if let ForceSource::Channels { .. } = r.source {
            assert!(r.force.unwrap() <= n(60_000.0));
            assert!(k < 2, "k = {k}");
        }
    }
}

#[test]
fn one_of_three_channels_lying() {
    // Lying from power-up by +1 kN: out-voted from the first sample (the output is the
    // median of the honest two, exactly), DISAGREE raised at k = 5 (N = 6).
    let mut b = Bench::<3>::new(LIMITS);
    for k in 0..20 {
        let r = b.step(
            [ok(counts(F0)), ok(counts(F0 + 1000.0)), ok(counts(F0))],
            Some(10.0),
        );
        assert_eq!(r.force, Some(n(F0)));
        assert_eq!((r.health, used(&r)), (Health::Degraded, Some(0b101)));
        assert_eq!(
            r.channel_flags[1].contains(ChannelFlags::DISAGREE),
            k >= 5,
            "k = {k}"
        );
        assert!(r.channel_flags[0].is_empty() && r.channel_flags[2].is_empty());
    }
    // It comes back at k = 0 with a jump of −1 kN, which the rate check rejects for
    // K = ⌈(1000 − 20)/200⌉ − 1 = 4 samples (RATE raised at k = 2, hold expired at k = 2);
    // accepted at k = 4 with its filter restarted from the sample, so it agrees from k = 4;
    // RATE clears in the 6th good sample (k = 9), DISAGREE in the 8th agreeing one (k = 11).
    // The vote runs before the disagreement debounce, so it rejoins the vote in the next
    // sample: from k = 12 all three channels are used and health is Ok.
    let rejected = ((1000.0 - 20.0) / 200.0_f64).ceil() as usize - 1;
    assert_eq!(rejected, 4);
    for k in 0..20 {
        let r = b.step([ok(counts(F0)); 3], Some(10.0));
        let f = r.channel_flags[1];
        assert_eq!(f.contains(ChannelFlags::REJECTED), k < rejected, "k = {k}");
        assert_eq!(
            f.contains(ChannelFlags::RATE),
            (2..9).contains(&k),
            "k = {k}"
        );
        assert_eq!(f.contains(ChannelFlags::DISAGREE), k < 11, "k = {k}");
        assert_eq!(r.health == Health::Ok, k >= 12, "k = {k}");
        assert_eq!(r.force, Some(n(F0)));
    }

    // Lying mid-run by a ramp of 150 N per sample for 4 samples (each step inside the rate
    // limit): the filtered lie first exceeds 300 N at k = 3, so DISAGREE is raised at k = 8.
    let lie = |k: usize| 150.0 * (k.min(3) as f64 + 1.0);
    let first = first_filtered_crossing(lie, 300.0);
    assert_eq!(first, 3);
    let mut b = Bench::<3>::new(LIMITS);
    b.settle(F0, 100);
    for k in 0..20 {
        let r = b.step(
            [ok(counts(F0)), ok(counts(F0)), ok(counts(F0 + lie(k)))],
            Some(10.0),
        );
        assert!(!r.channel_flags[2].contains(ChannelFlags::REJECTED));
        assert_eq!(r.force, Some(n(F0)));
        // Out-voted from k = 3; once flagged (k = 8) it is left out and the rest agree.
        assert_eq!(
            r.disagreement(),
            (first..=first + 5).contains(&k),
            "k = {k}"
        );
        assert_eq!(
            r.health,
            if k < first {
                Health::Ok
            } else {
                Health::Degraded
            }
        );
        assert_eq!(
            r.channel_flags[2].contains(ChannelFlags::DISAGREE),
            k >= first + 5,
            "k = {k}"
        );
    }
}

#[test]
fn two_of_four_channels_lying() {
    // Liars that disagree with each other (+1 kN and −1.5 kN): the honest pair (10 000 and
    // 10 010 N) is the only agreeing set of two; both liars raised at k = 5.
    let mut b = Bench::<4>::new(LIMITS);
    let raw = [
        ok(counts(F0)),
        ok(counts(F0 + 1000.0)),
        ok(counts(F0 + 10.0)),
        ok(counts(F0 - 1500.0)),
    ];
    for k in 0..10 {
        let r = b.step(raw, Some(10.0));
        assert_eq!(r.force, Some(n(F0 + 5.0)));
        // Out-voted until the liars are flagged (k = 5), then left out: the pair agrees.
        let agreement = if k <= 5 {
            Agreement::Majority
        } else {
            Agreement::Unanimous
        };
        assert_eq!(r.agreement, agreement, "k = {k}");
        assert_eq!((r.health, used(&r)), (Health::Degraded, Some(0b0101)));
        for ch in [1, 3] {
            let flagged = r.channel_flags[ch].contains(ChannelFlags::DISAGREE);
            assert_eq!(flagged, k >= 5, "channel {ch}, k = {k}");
        }
    }

    // Liars that agree with each other (both +1 kN): a 2–2 tie. With the actuator command the
    // model (10 kN) picks the honest pair and the liars are raised at k = 5 …
    let raw = [
        ok(counts(F0)),
        ok(counts(F0 + 1000.0)),
        ok(counts(F0 + 10.0)),
        ok(counts(F0 + 1000.0)),
    ];
    let mut b = Bench::<4>::new(LIMITS);
    for k in 0..10 {
        let r = b.step(raw, Some(10.0));
        assert_eq!(r.force, Some(n(F0 + 5.0)));
        assert_eq!(used(&r), Some(0b0101));
        assert_eq!(
            r.agreement,
            if k <= 5 {
                Agreement::ModelTieBreak
            } else {
                // Liars out: the honest pair agrees.
                Agreement::Unanimous
            },
            "k = {k}"
        );
        assert_eq!(r.health, Health::Degraded);
        assert_eq!(
            r.channel_flags[3].contains(ChannelFlags::DISAGREE),
            k >= 5,
            "k = {k}"
        );
    }
    // … without a command nobody can be blamed: unresolved, the median of all four
    // (10 505 N) with the uncertainty widened to reach every channel (100 + 505 N), no flag.
    let mut b = Bench::<4>::new(LIMITS);
    for _ in 0..100 {
        let r = b.step(raw, None);
        assert_eq!(r.agreement, Agreement::Unresolved);
        assert_eq!(r.force, Some(n(10_505.0)));
        assert_eq!(r.uncertainty, n(605.0));
        assert_eq!(r.health, Health::Degraded);
        assert!(r.channel_flags.iter().all(|f| f.is_empty()));
    }
}

#[test]
fn two_channels() {
    let mut b = Bench::<2>::new(LIMITS);
    // Mean while they agree (100 N apart ≤ 2·300 N), the ± widened to reach each of them
    // (100 + 50 N): either may be the one telling the truth.
    let r = b.step([ok(counts(F0)), ok(counts(F0 + 100.0))], Some(10.0));
    assert_eq!((r.health, r.force), (Health::Ok, Some(n(F0 + 50.0))));
    assert_eq!(r.uncertainty, n(150.0));

    // Channel 1 lies by +2 kN from power-up: the model picks channel 0; DISAGREE at k = 5.
    let mut b = Bench::<2>::new(LIMITS);
    for k in 0..10 {
        let r = b.step([ok(counts(F0)), ok(counts(F0 + 2000.0))], Some(10.0));
        assert_eq!(r.force, Some(n(F0)));
        assert_eq!((r.health, used(&r)), (Health::Degraded, Some(0b01)));
        assert_eq!(
            r.channel_flags[1].contains(ChannelFlags::DISAGREE),
            k >= 5,
            "k = {k}"
        );
    }
    // No command: a flagged degraded state, mean of both, uncertainty 100 + 1000 N.
    let mut b = Bench::<2>::new(LIMITS);
    for _ in 0..50 {
        let r = b.step([ok(counts(F0)), ok(counts(F0 + 2000.0))], None);
        assert_eq!(r.agreement, Agreement::Unresolved);
        assert_eq!(
            (r.health, r.force),
            (Health::Degraded, Some(n(F0 + 1000.0)))
        );
        assert_eq!(r.uncertainty, n(1100.0));
    }
}

#[test]
fn all_channels_lost() {
    let mut b = Bench::<2>::new(LIMITS);
    b.settle(F0, 50);
    let dead = RawChannel {
        counts: 0,
        valid: false,
    };
    for _ in 0..3 {
        b.step([dead; 2], Some(10.0));
    }
    let r = b.step([dead; 2], Some(12.0));
    // Fallback on the lower branch of the rising command: 12 kN − 200 N, ± 2.2 kN.
    assert_eq!(r.source, ForceSource::ActuatorFallback);
    assert_eq!((r.health, r.force), (Health::Lost, Some(n(11_800.0))));
    assert_eq!(r.uncertainty, n(2200.0));
    let r = b.step([dead; 2], None);
    assert_eq!((r.source, r.force), (ForceSource::Unavailable, None));
}
