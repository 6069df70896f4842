//! Wear and bedding against the f64 reference (closed-form bedding, compensated energy sum).
#![allow(clippy::indexing_slicing)]
#![allow(
    clippy::unwrap_used,
    clippy::cast_precision_loss,
    clippy::cast_possible_truncation,
    clippy::cast_sign_loss
)]

use clampwise_core::units::{Joules, Watts};
use clampwise_core::wear::{WEAR_RATE_UNIT, WearConfig, WearParams, WearState};
use clampwise_tests::f64_model::wear::WearModel;
use proptest::prelude::*;

fn params() -> WearParams {
    // Invented demo values; the unit 10⁻⁷ cm³/(N·m) is the trade's [pub: JIS D 4411].
    WearParams {
        bedding_energy: 2e7,
        specific_wear_rate: 0.4 * WEAR_RATE_UNIT,
        lining_area: 80e-4,
        initial_thickness: 0.010,
        minimum_thickness: 0.002,
    }
}

/// Measured worst cases, stated in the docs of `clampwise_core::wear`.
/// Measured: 1.53·10⁻⁵ J, 9.3·10⁻¹⁰, 5.96·10⁻⁸ m — one output LSB each (outputs truncate).
const ENERGY_MAX_ERROR_J: f64 = 1.53e-5; // 1 LSB of Joules (2⁻¹⁶ J)
const BEDDING_MAX_ERROR: f64 = 1.87e-9; // 2 LSB of Ratio
const LOSS_MAX_ERROR_M: f64 = 5.97e-8; // 1 LSB of Metres (2⁻²⁴ m)

fn run(dt: f64, start: f64, segments: &[(f64, u32)]) -> (f64, f64, f64) {
    let p = params();
    let cfg = WearConfig::new(&p, dt).unwrap();
    let mut fixed = WearState::with_history(&cfg, Joules::from_num(start));
    let mut reference = WearModel::with_energy(&p, Joules::from_num(start).to_num());
    let (mut de, mut db, mut dl) = (0.0f64, 0.0f64, 0.0f64);
    for &(w, n) in segments {
        let pq = Watts::from_num(w);
        for _ in 0..n {
            let a = fixed.update(&cfg, pq);
            let b = reference.step(dt, pq.to_num());
            de = de.max((a.energy.to_num::<f64>() - b.energy).abs());
            db = db.max((a.bedding.to_num::<f64>() - b.bedding).abs());
            dl = dl.max((a.thickness_loss.to_num::<f64>() - b.thickness_loss).abs());
        }
    }
    (de, db, dl)
}

#[test]
fn wear_envelope() {
    let mut worst = (0.0f64, 0.0f64, 0.0f64);
    for dt in [1e-4, 1e-3, 1e-2] {
        let k = |s: f64| (s / dt).round() as u32;
        // A 10 MW stop, 20 s of 50 kW drag, then a long creep at 3 W (a few mJ a sample).
        let trace = [(1e7, k(0.3)), (5e4, k(20.0)), (3.0, k(10.0))];
        for start in [0.0, 1e7, 1e10] {
            let (de, db, dl) = run(dt, start, &trace);
            worst = (worst.0.max(de), worst.1.max(db), worst.2.max(dl));
        }
    }
    println!(
        "wear worst case: energy {:.3e} J, bedding {:.3e}, thickness {:.3e} m",
        worst.0, worst.1, worst.2
    );
    assert!(worst.0 <= ENERGY_MAX_ERROR_J);
    assert!(worst.1 <= BEDDING_MAX_ERROR);
    assert!(worst.2 <= LOSS_MAX_ERROR_M);
}

// Energy accumulation over the life of a lining: at 10¹⁰ J, a 3 mJ increment still counts.
#[test]
fn millijoule_increments_count_at_1e10_j() {
    let dt = 1e-4;
    let cfg = WearConfig::new(&params(), dt).unwrap();
    let mut s = WearState::with_history(&cfg, Joules::from_num(1e10));
    let before = s.energy();
    let mut out = None;
    for _ in 0..1_000_000 {
        out = Some(s.update(&cfg, Watts::from_num(30))); // 3 mJ a sample
    }
    let added = (out.unwrap().energy - before).to_num::<f64>();
    assert!((added - 3000.0).abs() < 2.0 * 1.53e-5, "{added}");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(32))]
    #[test]
    fn wear_random_traces(
        dt_index in 0usize..3,
        start in prop::sample::select(vec![0.0, 1e5, 3e7, 1e10]),
        segments in prop::collection::vec((0.0f64..1e7, 1u32..500), 1..10),
    ) {
        let dt = [1e-4, 1e-3, 1e-2][dt_index];
        let (de, db, dl) = run(dt, start, &segments);
        prop_assert!(de <= ENERGY_MAX_ERROR_J, "energy {}", de);
        prop_assert!(db <= BEDDING_MAX_ERROR, "bedding {}", db);
        prop_assert!(dl <= LOSS_MAX_ERROR_M, "loss {}", dl);
    }

    // Bedding is monotone in energy and never exceeds 1, whatever the increments.
    #[test]
    fn bedding_monotone(increments in prop::collection::vec(0.0f64..5e6, 1..200)) {
        let cfg = WearConfig::new(&params(), 1e-3).unwrap();
        let mut s = WearState::new();
        let mut last = s.bedding();
        for e in increments {
            let out = s.add_energy(&cfg, Joules::from_num(e));
            prop_assert!(out.bedding >= last && out.bedding.to_num::<f64>() <= 1.0);
            last = out.bedding;
        }
    }
}
