//! The core's friction update against the plain update (`clampwise_tests::plain::friction`:
//! two full lookups by division, saturating arithmetic, the correction always multiplied),
//! bit for bit, over random valid configurations and any input. The plain update follows the
//! model's equations [calc: smoothstep φ = 3s² − 2s³, μ = μ_k' + (μ_s − μ_k')·(1 − φ), drag
//! −sign(v)·(c_v·|v| + T₀·φ)].
#![allow(clippy::unwrap_used, clippy::indexing_slicing)]

use clampwise_core::friction::{
    FrictionConfig, FrictionState, MU_MAX, MuTable, STATIC_RATIO_MAX, ViscousDrag,
};
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec, Ratio};
use clampwise_tests::plain;
use proptest::prelude::*;

/// A strictly increasing axis of 3 raw values from a start and two step lengths (each
/// below 2³⁰ + 1, so the whole span fits an i32 axis).
fn axis3(start: i32, steps: [u32; 2]) -> [i32; 3] {
    let a = i64::from(start);
    let b = a + 1 + i64::from(steps[0] >> 2);
    let c = b + 1 + i64::from(steps[1] >> 2);
    let excess = (c - i64::from(i32::MAX)).max(0);
    [a, b, c].map(|v| i32::try_from(v - excess).unwrap())
}

/// A raw value biased towards a few interesting ones.
fn raw_or(special: &[i32], pick: (u8, i32)) -> i32 {
    let (kind, raw) = pick;
    match special.get(usize::from(kind % 8)) {
        Some(&v) => v,
        None => raw,
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(3000))]

    // The update against the plain update over every input (any slip speed,
    // temperature and correction, including i32::MIN, negative and saturating corrections)
    // and random valid configurations (drag large enough to saturate): every field and the
    // state must agree bit for bit.
    #[test]
    fn update_matches_plain_update(
        t_axis in (any::<i32>(), any::<[u32; 2]>()),
        v_axis in (0i32..=1 << 24, any::<[u32; 2]>()),
        mu in prop::collection::vec(0..=MU_MAX.to_bits(), 9),
        ratio in 1..=STATIC_RATIO_MAX.to_bits(),
        stick in 1i32..=1 << 24,
        hyst in any::<u32>(),
        v_t in prop_oneof![1i32..=1 << 20, 1..=i32::MAX],
        drags in prop_oneof![(0i32..=1 << 20, 0i32..=1 << 20), (0..=i32::MAX, 0..=i32::MAX)],
        inputs in prop::collection::vec(
            ((any::<u8>(), any::<i32>()), (any::<u8>(), any::<i32>()), (any::<u8>(), any::<i32>())),
            24,
        ),
        slipping in any::<bool>(),
    ) {
        let ts = axis3(t_axis.0, t_axis.1);
        let vs = axis3(v_axis.0, v_axis.1.map(|s| s >> 6));
        let z = [[mu[0], mu[1], mu[2]], [mu[3], mu[4], mu[5]], [mu[6], mu[7], mu[8]]];
        let table = MuTable::<3, 3>::from_bits(
            ts.map(Celsius::from_bits),
            vs.map(RadPerSec::from_bits),
            z.map(|r| r.map(Ratio::from_bits)),
        ).unwrap();
        // Hysteresis in (0, 2·stick): 1 + hyst mod (2·stick − 1).
        let h = 1 + i32::try_from(i64::from(hyst) % (2 * i64::from(stick) - 1).max(1)).unwrap();
        let cfg = FrictionConfig::from_bits(
            table, Ratio::from_bits(ratio), RadPerSec::from_bits(stick), RadPerSec::from_bits(h),
            RadPerSec::from_bits(v_t), ViscousDrag::from_bits(drags.0),
            NewtonMetres::from_bits(drags.1),
        ).unwrap();
        let mut fast = FrictionState::new();
        let mut slow = false;
        if slipping {
            // Start slipping: one sample far above the band (its upper edge is at most 2²⁵ raw,
            // as stick ≤ 2²⁴ and the hysteresis < 2·stick), compared as every other.
            let (v, t, c) = (RadPerSec::MAX, Celsius::from_bits(ts[0]), Ratio::ONE);
            let got = fast.update(&cfg, v, t, c);
            prop_assert_eq!(got, plain::friction::update(&mut slow, &cfg, v, t, c));
        }
        prop_assert_eq!((fast.is_slipping(), slow), (slipping, slipping));
        for (v, t, c) in inputs {
            let v = raw_or(&[0, i32::MIN, i32::MAX, -1, 1, stick, -v_t, v_t - 1], v);
            let t = raw_or(&[ts[0], ts[1], ts[2], ts[2].saturating_add(1), i32::MIN, i32::MAX], t);
            let c = raw_or(&[1 << 30, 1 << 30, 1 << 30, 0, -1, i32::MAX, i32::MIN], c);
            let (v, t, c) = (RadPerSec::from_bits(v), Celsius::from_bits(t), Ratio::from_bits(c));
            let got = fast.update(&cfg, v, t, c);
            let want = plain::friction::update(&mut slow, &cfg, v, t, c);
            prop_assert_eq!(got, want, "v={:?} t={:?} c={:?}", v, t, c);
            prop_assert_eq!(fast.is_slipping(), slow);
        }
    }
}
