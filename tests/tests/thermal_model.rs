//! Thermal model against published lumped-capacitance formulas and against the f64 reference
//! (RK4) over the envelope.
#![allow(clippy::indexing_slicing)]
#![allow(
    clippy::unwrap_used,
    clippy::cast_precision_loss,
    clippy::cast_possible_truncation,
    clippy::cast_sign_loss
)]

use clampwise_core::thermal::{Cooling, LiningNode, ThermalConfig, ThermalParams, ThermalState};
use clampwise_core::units::{Celsius, Watts};
use clampwise_tests::f64_model::thermal::ThermalModel;
use proptest::prelude::*;

/// Check vector [calc: Newtonian cooling, Day, Braking of Road Vehicles, ch. 8]: 8 kg disc,
/// c = 460 J/(kg·K), h = 50 W/(m²·K),
/// A = 0.12 m² → τ = m·c/(h·A) = 613 s.
fn disc(cooling: Cooling, share: f64) -> ThermalParams {
    ThermalParams {
        rotor_mass: 8.0,
        rotor_specific_heat: 460.0,
        rotor_share: share,
        cooling,
        ambient: 20.0,
        lining: None,
        fade_warning: 300.0,
        over_temperature: 900.0,
        flag_hysteresis: 10.0,
        measured: None,
    }
}

// ΔT = γ·E/(m·c) [pub: Shigley ch. 16, energy considerations]; check vector [calc]: 202.5 kJ into
// 8 kg, c = 460 → 55.0 K. Delivered as a pulse over 50 ms (short against τ = 613 s), with
// cooling on, the rise is γ·E/(m·c) within 0.5 %.
#[test]
fn pulse_rise_matches_lumped_capacitance() {
    for dt in [1e-4, 1e-3, 1e-2] {
        let cfg = ThermalConfig::new(&disc(Cooling::Conductance(50.0 * 0.12), 1.0), dt).unwrap();
        let mut s = ThermalState::new(&cfg);
        let steps = (0.05 / dt).round() as usize;
        let p = Watts::from_num(202_500.0 / 0.05);
        let mut out = s.update(&cfg, p, None);
        for _ in 1..steps {
            out = s.update(&cfg, p, None);
        }
        let rise = out.rotor_temperature.to_num::<f64>() - 20.0;
        assert!(
            (rise - 55.0).abs() <= 0.005 * 55.0,
            "dt {dt}: rise {rise} K"
        );
    }
    // With the heat partition γ = 0.9 and no cooling: 49.5 K.
    let cfg = ThermalConfig::new(&disc(Cooling::Adiabatic, 0.9), 1e-3).unwrap();
    let mut s = ThermalState::new(&cfg);
    let mut out = s.update(&cfg, Watts::from_num(202_500), None);
    for _ in 1..1000 {
        out = s.update(&cfg, Watts::from_num(202_500), None);
    }
    let rise = out.rotor_temperature.to_num::<f64>() - 20.0;
    assert!((rise - 49.5).abs() <= 0.005 * 49.5, "{rise}");
}

// T − T∞ = (T0 − T∞)·exp(−t/τ) [pub: Day, Braking of Road Vehicles, ch. 8], τ = 613 s [calc].
#[test]
fn cooling_curve_matches_exponential() {
    let tau = 8.0 * 460.0 / (50.0 * 0.12);
    assert!((tau - 613.0_f64).abs() < 0.5, "check vector τ = 613 s");
    for (dt, cooling) in [
        (1e-3, Cooling::Conductance(50.0 * 0.12)),
        (1e-2, Cooling::TimeConstant(tau)),
    ] {
        let cfg = ThermalConfig::new(&disc(cooling, 1.0), dt).unwrap();
        let mut s = ThermalState::with_temperatures(Celsius::from_num(75), Celsius::from_num(75));
        let mut n = 0u64;
        for t_check in [30.0, 300.0, 613.0, 1200.0, 2500.0] {
            let target = (t_check / dt).round() as u64;
            let mut out = None;
            while n < target {
                out = Some(s.update(&cfg, Watts::ZERO, None));
                n += 1;
            }
            let got = out.unwrap().rotor_temperature.to_num::<f64>() - 20.0;
            let expected = 55.0 * (-t_check / tau).exp();
            assert!(
                (got - expected).abs() <= 0.005 * expected,
                "dt {dt}, t {t_check}: {got} vs {expected}"
            );
        }
    }
}

fn two_node() -> ThermalParams {
    // Demo winch-brake values (invented): resin pads 0.4 kg, c = 1250 J/(kg·K) [pub: Tribology
    // Handbook, resin facing]; γ = 0.9 [calc from Limpert's partition, mem].
    ThermalParams {
        lining: Some(LiningNode {
            mass: 0.4,
            specific_heat: 1250.0,
            conductance_to_rotor: 20.0,
        }),
        ..disc(Cooling::TimeConstant(613.0), 0.9)
    }
}

/// Run fixed and reference side by side over a power trace; return the worst |ΔT| in K.
fn worst_error(p: &ThermalParams, dt: f64, powers: &[(f64, u32)]) -> (f64, f64) {
    let cfg = ThermalConfig::new(p, dt).unwrap();
    let mut fixed = ThermalState::new(&cfg);
    let mut reference = ThermalModel::new(p);
    let mut worst = 0.0f64;
    let mut hottest = 0.0f64;
    for &(watts, samples) in powers {
        for _ in 0..samples {
            // Keep the envelope: no more heat once the lining passes 1000 °C.
            let w = if reference.lining > 1000.0 {
                0.0
            } else {
                watts
            };
            let pq = Watts::from_num(w);
            let out = fixed.update(&cfg, pq, None);
            reference.step(dt, pq.to_num());
            worst = worst
                .max((out.rotor_temperature.to_num::<f64>() - reference.rotor).abs())
                .max((out.lining_temperature.to_num::<f64>() - reference.lining).abs());
            hottest = hottest.max(reference.lining);
        }
    }
    (worst, hottest)
}

/// Measured worst case of the fixed-point thermal path against the RK4 reference, stated in the
/// docs of `clampwise_core::thermal`.
const THERMAL_MAX_ERROR_K: f64 = 1e-5; // measured 7.7·10⁻⁶ K: the output's ½ LSB

#[test]
fn thermal_envelope() {
    let mut overall = 0.0f64;
    for dt in [1e-4, 1e-3, 1e-2] {
        // A hard stop at 10 MW, a long drag at 50 kW, then a cool-down; samples scaled to dt.
        let k = |s: f64| (s / dt).round() as u32;
        let trace = [(1e7, k(0.3)), (0.0, k(2.0)), (5e4, k(20.0)), (0.0, k(20.0))];
        let cold = ThermalParams {
            ambient: -50.0,
            ..two_node()
        };
        for p in [disc(Cooling::TimeConstant(613.0), 0.9), two_node(), cold] {
            let (worst, hottest) = worst_error(&p, dt, &trace);
            println!(
                "dt {dt:e}, lining node {}: worst {worst:.3e} K, peak {hottest:.0} °C",
                p.lining.is_some()
            );
            assert!(
                hottest > 700.0,
                "the trace must reach the hot end of the envelope"
            );
            overall = overall.max(worst);
        }
    }
    println!("thermal worst case over the envelope: {overall:.3e} K");
    assert!(overall <= THERMAL_MAX_ERROR_K, "{overall}");
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]
    #[test]
    fn thermal_random_traces(
        dt_index in 0usize..3,
        lining in prop::bool::ANY,
        segments in prop::collection::vec((0.0f64..1e7, 1u32..400), 1..12),
    ) {
        let dt = [1e-4, 1e-3, 1e-2][dt_index];
        let p = if lining { two_node() } else { disc(Cooling::TimeConstant(613.0), 0.9) };
        let (worst, _) = worst_error(&p, dt, &segments);
        prop_assert!(worst <= THERMAL_MAX_ERROR_K, "{}", worst);
    }
}
