//! The f32 twin does the fixed-point step's sensor work: on the same faults it raises its
//! degraded and saturated flags at the same sample as the core (arithmetic check of the twin
//! against the core; the twin is the step-cost peer, so what matters is that it runs the same
//! checks, not its numbers).
#![allow(clippy::expect_used, clippy::unwrap_used)]

use clampwise_benches::baseline;
use clampwise_benches::device;
use clampwise_benches::plain_f32::{PlainEstimator, flag};
use clampwise_benches::workload::Workload;
use clampwise_core::estimator::Estimator;
use clampwise_core::flags::Flags;

/// The first sample at or after `from` at which each side reports `degraded`, over 2 000 samples
/// of the bench workload with `fault` applied to channel 2 from sample `from`.
fn first_degraded(
    fault: impl Fn(&mut [i32; 3], &mut [bool; 3]),
    from: usize,
) -> (Option<usize>, Option<usize>) {
    let cfg = device::full().expect("device");
    let twin_cfg = baseline::full().expect("twin");
    let mut est = Estimator::new(&cfg);
    let mut twin = PlainEstimator::new(&twin_cfg);
    let mut w = Workload::new(7);
    let (mut fixed_at, mut twin_at) = (None, None);
    for k in 0..2000 {
        let mut s = w.next_sample();
        if k >= from {
            fault(&mut s.counts, &mut s.valid);
        }
        let e = est.step(&s.inputs::<3>(true));
        let p = twin.step(&twin_cfg, &s.plain::<3>(true));
        if k >= from && fixed_at.is_none() && e.flags.contains(Flags::SENSOR_DEGRADED) {
            fixed_at = Some(k);
        }
        if k >= from && twin_at.is_none() && p.flags & flag::SENSOR_DEGRADED != 0 {
            twin_at = Some(k);
        }
    }
    (fixed_at, twin_at)
}

#[test]
fn an_invalid_channel_degrades_both_at_the_same_sample() {
    // [practice] an acquisition that reports its sample invalid is out of the vote at once.
    let (fixed, twin) = first_degraded(|_, v| v[1] = false, 1000);
    assert!(fixed.is_some());
    assert_eq!(fixed, twin);
}

#[test]
fn a_channel_at_its_rail_degrades_both_at_the_same_sample() {
    // [practice] a bridge amplifier driven into its rail reads full scale.
    let (fixed, twin) = first_degraded(|c, _| c[1] = 1 << 30, 1000);
    assert!(fixed.is_some());
    assert_eq!(fixed, twin);
}
