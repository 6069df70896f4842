//! Unit tests of the thermal model: published formulas, flags, configuration errors, the raw
//! form, and the update against its plain saturating definition.
#![allow(
    clippy::unwrap_used,
    clippy::indexing_slicing,
    clippy::float_cmp,
    clippy::cast_possible_truncation,
    clippy::cast_sign_loss
)]

use super::*;

/// The clamp of the saturating i128 update.
fn narrow_q32(v: i128) -> i64 {
    let c = v.clamp(i128::from(T_FLOOR_Q32), i128::from(T_CEIL_Q32));
    i64::try_from(c).unwrap_or(0)
}

/// The test disc; the caller gives `ThermalConfig::new` the step it is built for.
pub(crate) fn disc(cooling: Cooling) -> ThermalParams {
    // Check vector [calc: τ = m·c/(h·A), Day ch. 8]: 8 kg, c = 460 J/(kg·K); h = 50,
    // A = 0.12 → τ = 613 s.
    ThermalParams {
        rotor_mass: 8.0,
        rotor_specific_heat: 460.0,
        rotor_share: 1.0,
        cooling,
        ambient: 20.0,
        lining: None,
        fade_warning: 300.0,
        over_temperature: 450.0,
        flag_hysteresis: 10.0,
        measured: None,
    }
}

fn run(cfg: &ThermalConfig, s: &mut ThermalState, watts: f64, steps: usize) -> ThermalSample {
    let p = Watts::from_num(watts);
    let mut out = s.update(cfg, p, None);
    for _ in 1..steps {
        out = s.update(cfg, p, None);
    }
    out
}

// Lumped capacitance ΔT = γ·E/(m·c) [pub: Shigley ch. 16]; check vector 202.5 kJ into 8 kg,
// c = 460 → 55.0 K [calc], here with γ = 0.9 → 49.5 K.
#[test]
fn pulse_rise_is_gamma_e_over_mc() {
    for dt in [1e-4, 1e-3, 1e-2] {
        let mut p = disc(Cooling::Adiabatic);
        p.rotor_share = 0.9;
        let cfg = ThermalConfig::new(&p, dt).unwrap();
        let mut s = ThermalState::new(&cfg);
        let steps = (1.0 / dt).round() as usize; // 202.5 kW for 1 s
        let out = run(&cfg, &mut s, 202_500.0, steps);
        let rise = out.rotor_temperature.to_num::<f64>() - 20.0;
        let expected = 0.9 * 202_500.0 / (8.0 * 460.0);
        assert!(
            (rise - expected).abs() <= 0.005 * expected,
            "dt {dt}: {rise}"
        );
        assert!(
            (rise - expected).abs() < 1e-3,
            "dt {dt}: {rise} vs {expected}"
        );
    }
}

// Newtonian cooling T − T∞ = (T0 − T∞)·exp(−t/τ) [pub: Day ch. 8], τ = 613 s.
#[test]
fn cooling_follows_exponential() {
    let cfg = ThermalConfig::new(&disc(Cooling::Conductance(50.0 * 0.12)), 1e-2).unwrap();
    let tau: f64 = 8.0 * 460.0 / (50.0 * 0.12);
    let mut s = ThermalState::with_temperatures(Celsius::from_num(75), Celsius::from_num(75));
    let mut t = 0.0;
    for check in [10.0, 100.0, 613.0, 1500.0] {
        let mut out = None;
        while t < check - 1e-9 {
            out = Some(s.update(&cfg, Watts::ZERO, None));
            t += 1e-2;
        }
        let got = out.unwrap().rotor_temperature.to_num::<f64>() - 20.0;
        let expected = 55.0 * (-check / tau).exp();
        assert!(
            (got - expected).abs() <= 0.005 * expected,
            "t {check}: {got} vs {expected}"
        );
        assert!(
            (got - expected).abs() < 1e-3,
            "t {check}: {got} vs {expected}"
        );
    }
}

#[test]
fn flags_latch_with_hysteresis() {
    let cfg = ThermalConfig::new(&disc(Cooling::Adiabatic), 1e-3).unwrap();
    let mut s = ThermalState::with_temperatures(Celsius::from_num(305), Celsius::from_num(305));
    let out = s.update(&cfg, Watts::ZERO, None);
    assert!(out.fade_warning && !out.over_temperature);
    // Still on 5 K below the threshold (hysteresis 10 K).
    let mut s2 = ThermalState::with_temperatures(Celsius::from_num(295), Celsius::from_num(295));
    s2.fade = true;
    assert!(s2.update(&cfg, Watts::ZERO, None).fade_warning);
    let mut s3 = ThermalState::with_temperatures(Celsius::from_num(289), Celsius::from_num(289));
    s3.fade = true;
    assert!(!s3.update(&cfg, Watts::ZERO, None).fade_warning);
    let mut hot = ThermalState::with_temperatures(Celsius::from_num(451), Celsius::from_num(451));
    assert!(hot.update(&cfg, Watts::ZERO, None).over_temperature);
}

#[test]
fn measured_takes_over_when_plausible() {
    let mut p = disc(Cooling::Adiabatic);
    p.measured = Some(MeasuredPlausibility {
        min: -40.0,
        max: 900.0,
        max_rate: 2000.0, // 2 K per 1 ms sample
    });
    let cfg = ThermalConfig::new(&p, 1e-3).unwrap();
    let mut s = ThermalState::new(&cfg);
    let a = s.update(&cfg, Watts::ZERO, Some(Celsius::from_num(100)));
    assert!(a.measured_used && !a.measured_rejected);
    assert_eq!(a.lining_temperature, Celsius::from_num(100));
    let b = s.update(&cfg, Watts::ZERO, Some(Celsius::from_num(101.5)));
    assert!(b.measured_used);
    // Jump of 50 K in 1 ms: rejected, model kept (it was re-anchored at 101.5).
    let c = s.update(&cfg, Watts::ZERO, Some(Celsius::from_num(151.5)));
    assert!(c.measured_rejected && !c.measured_used);
    assert_eq!(c.lining_temperature, Celsius::from_num(101.5));
    // Out of range: rejected.
    let d = s.update(&cfg, Watts::ZERO, Some(Celsius::from_num(2000)));
    assert!(d.measured_rejected);
    // Absent: neither flag.
    let e = s.update(&cfg, Watts::ZERO, None);
    assert!(!e.measured_used && !e.measured_rejected);
    // Without plausibility limits the input is ignored.
    let cfg2 = ThermalConfig::new(&disc(Cooling::Adiabatic), 1e-3).unwrap();
    let mut s2 = ThermalState::new(&cfg2);
    let f = s2.update(&cfg2, Watts::ZERO, Some(Celsius::from_num(100)));
    assert!(!f.measured_used && f.lining_temperature == Celsius::from_num(20));
}

#[test]
fn two_node_energy_balance_adiabatic() {
    // No cooling: all energy stays; C_L·ΔT_L + C_R·ΔT_R = E.
    let mut p = disc(Cooling::Adiabatic);
    p.rotor_share = 0.5;
    p.lining = Some(LiningNode {
        mass: 0.4,
        specific_heat: 1250.0,
        conductance_to_rotor: 20.0,
    });
    let cfg = ThermalConfig::new(&p, 1e-3).unwrap();
    assert!(cfg.has_lining_node());
    let mut s = ThermalState::new(&cfg);
    let out = run(&cfg, &mut s, 100_000.0, 1000);
    let dl = out.lining_temperature.to_num::<f64>() - 20.0;
    let dr = out.rotor_temperature.to_num::<f64>() - 20.0;
    let e = 0.4 * 1250.0 * dl + 8.0 * 460.0 * dr;
    assert!((e - 100_000.0).abs() < 0.1, "{e}");
    // Half the power into a lining of 1/7 the heat capacity: the lining runs hotter.
    assert!(dl > dr);
}

#[test]
fn rejects_bad_configs() {
    let base = disc(Cooling::TimeConstant(613.0));
    let e = |p: ThermalParams, dt: f64| ThermalConfig::new(&p, dt).unwrap_err();
    assert_eq!(e(base, 0.0), ThermalError::NotPositive { field: "dt" });
    assert_eq!(e(base, 2.0), ThermalError::DtTooLong);
    assert_eq!(
        e(
            ThermalParams {
                rotor_share: 1.1,
                ..base
            },
            1e-3,
        ),
        ThermalError::RotorShareOutOfRange
    );
    assert_eq!(
        e(
            ThermalParams {
                cooling: Cooling::TimeConstant(0.5),
                ..base
            },
            1.0,
        ),
        ThermalError::DtAboveTimeConstant { seconds: 0 }
    );
    assert_eq!(
        e(
            ThermalParams {
                cooling: Cooling::TimeConstant(1e12),
                ..base
            },
            1e-4,
        ),
        ThermalError::TimeConstantTooLongForDt
    );
    assert_eq!(
        e(
            ThermalParams {
                rotor_mass: 1e-3,
                rotor_specific_heat: 1.0,
                cooling: Cooling::Adiabatic,
                ..base
            },
            0.1,
        ),
        ThermalError::HeatCapacityTooSmall {
            field: "rotor_mass"
        }
    );
    assert_eq!(
        e(
            ThermalParams {
                over_temperature: 200.0,
                ..base
            },
            1e-3,
        ),
        ThermalError::FlagThresholds
    );
    assert_eq!(
        e(
            ThermalParams {
                measured: Some(MeasuredPlausibility {
                    min: 10.0,
                    max: 0.0,
                    max_rate: 1.0
                }),
                ..base
            },
            1e-3,
        ),
        ThermalError::MeasuredLimits
    );
    assert_eq!(
        e(
            ThermalParams {
                ambient: f64::NAN,
                ..base
            },
            1e-3,
        ),
        ThermalError::NotRepresentable { field: "ambient" }
    );
    assert!(format!("{}", ThermalError::DtTooLong).contains("dt"));
}

fn two_node_measured() -> ThermalParams {
    let mut p = disc(Cooling::TimeConstant(613.0));
    p.rotor_share = 0.6;
    p.lining = Some(LiningNode {
        mass: 0.4,
        specific_heat: 1250.0,
        conductance_to_rotor: 20.0,
    });
    p.measured = Some(MeasuredPlausibility {
        min: -40.0,
        max: 900.0,
        max_rate: 2000.0,
    });
    p
}

/// The plain update: saturating i128 products and sums over both rows, the lining row dropped
/// without a lining node. The definition the widening update must match bit for bit; it needs
/// the configuration's coefficients and the state's Q32 bits, which are crate-private, so it
/// lives here rather than in clampwise-tests. Returns `(rotor, lining)`.
fn saturating_i128_update(
    cfg: &ThermalConfig,
    (rotor, lining): (i64, i64),
    amb: Celsius,
    power: i64,
) -> (i64, i64) {
    let p = i128::from(power.unsigned_abs());
    let a = i128::from(to_q32(amb));
    let theta = [
        i128::from(lining).saturating_sub(a),
        i128::from(rotor).saturating_sub(a),
    ];
    let mut want = [lining, rotor];
    for ((out, krow), gg) in want.iter_mut().zip(cfg.k.iter()).zip(cfg.gamma.iter()) {
        let decay = krow.iter().zip(theta.iter()).fold(0i128, |acc, (k, t)| {
            acc.saturating_add(i128::from(*k).saturating_mul(*t))
        });
        let delta = i128::from(*gg)
            .saturating_mul(p)
            .saturating_sub(decay)
            .saturating_add(1i128 << 61)
            >> 62;
        *out = narrow_q32(i128::from(*out).saturating_add(delta));
    }
    (want[1], if cfg.two_node { want[0] } else { want[1] })
}

/// Every temperature the state can hold: the model's range, and below it what an accepted
/// measurement can set (any [`Celsius`]).
fn state_q32() -> impl proptest::strategy::Strategy<Value = i64> {
    -(1i64 << 47)..=i64::from(i32::MAX) << 16
}

proptest::proptest! {
    // The widening products give the very bits of the saturating i128 update, over every
    // state, power and coefficient the configuration allows.
    #[test]
    fn update_same_bits_as_saturating_i128(
        lining in state_q32(), rotor in state_q32(),
        amb in proptest::prelude::any::<i32>(), power in proptest::prelude::any::<i64>(),
        k in proptest::array::uniform4(-(1i64 << 62) + 1..(1i64 << 62)),
        g in proptest::array::uniform2(0i64..(1i64 << 62)),
    ) {
        let cfg = ThermalConfig {
            k: [[k[0], k[1]], [k[2], k[3]]],
            gamma: g,
            two_node: true,
            ..ThermalConfig::new(&disc(Cooling::Adiabatic), 1e-3).unwrap()
        };
        let amb_c = Celsius::from_bits(amb);
        let want = saturating_i128_update(&cfg, (rotor, lining), amb_c, power);
        let mut s = ThermalState { lining_q32: lining, rotor_q32: rotor, ..ThermalState::new(&cfg) };
        s.update_with_ambient(&cfg, Watts::from_bits(power), None, Some(amb_c));
        proptest::prop_assert_eq!(s.raw(), want);
    }

    // A single-node model updates its rotor row alone: the same bits as the plain update
    // that also runs the all-zero lining row.
    #[test]
    fn single_node_same_bits_as_both_rows(
        rotor in state_q32(), amb in proptest::prelude::any::<i32>(),
        power in proptest::prelude::any::<i64>(), k in 0i64..(1i64 << 62), g in 0i64..(1i64 << 62),
    ) {
        let cfg = ThermalConfig::from_bits(ThermalRaw {
            k_q62: [[0, 0], [0, k.max(K_MIN_Q62)]],
            gamma_q62: [0, g],
            ..ThermalConfig::new(&disc(Cooling::Adiabatic), 1e-3).unwrap().to_raw()
        }).unwrap();
        let amb_c = Celsius::from_bits(amb);
        let want = saturating_i128_update(&cfg, (rotor, rotor), amb_c, power);
        let mut s = ThermalState { lining_q32: rotor, rotor_q32: rotor, ..ThermalState::new(&cfg) };
        s.update_with_ambient(&cfg, Watts::from_bits(power), None, Some(amb_c));
        proptest::prop_assert_eq!(s.raw(), want);
    }

    // The thresholds fixed in Q32 at configuration latch as the direct comparisons do.
    #[test]
    fn flags_same_as_direct_comparison(
        t in state_q32(), fade in -20_000i32..20_000, gap in 1i32..10_000,
        hyst in 0i32..i32::MAX, was_fade: bool, was_over: bool,
    ) {
        let raw = ThermalRaw {
            fade_warning: Celsius::from_bits(fade << 16),
            over_temperature: Celsius::from_bits((fade + gap) << 16),
            flag_hysteresis: Celsius::from_bits(hyst),
            ..ThermalConfig::new(&disc(Cooling::Adiabatic), 1e-3).unwrap().to_raw()
        };
        let cfg = ThermalConfig::from_bits(raw).unwrap();

        let mut s = ThermalState {
            lining_q32: t, rotor_q32: t, fade: was_fade, over: was_over, ..ThermalState::new(&cfg)
        };
        let out = s.update(&cfg, Watts::ZERO, None);
        // The temperature after the update (no power, no cooling: clamped to the model's
        // range only).
        let t = s.raw().0;
        let latch = |on: bool, threshold: Celsius| {
            let th = to_q32(threshold);
            if on { t >= th.saturating_sub(to_q32(raw.flag_hysteresis)) } else { t > th }
        };
        proptest::prop_assert_eq!(out.fade_warning, latch(was_fade, raw.fade_warning));
        proptest::prop_assert_eq!(out.over_temperature, latch(was_over, raw.over_temperature));
    }

    // The output rounding is exact over the whole state range (no saturation needed).
    #[test]
    fn output_rounding_exact(t in state_q32()) {
        let want = (i128::from(t) + (1 << 15)) >> 16;
        proptest::prop_assert_eq!(i128::from(from_q32(t).to_bits()), want);
    }
}

#[test]
fn raw_round_trip_is_exact() {
    for (p, dt) in [
        (disc(Cooling::Adiabatic), 1e-3),
        (disc(Cooling::TimeConstant(613.0)), 1e-4),
        (disc(Cooling::Conductance(6.0)), 1e-2),
        (two_node_measured(), 1e-3),
    ] {
        let cfg = ThermalConfig::new(&p, dt).unwrap();
        let raw = cfg.to_raw();
        assert_eq!(ThermalConfig::from_bits(raw), Ok(cfg), "{p:?}");
        // Same coefficients, so the same bits out of the update.
        let back = ThermalConfig::from_bits(raw).unwrap();
        let (mut a, mut b) = (ThermalState::new(&cfg), ThermalState::new(&back));
        for _ in 0..100 {
            assert_eq!(
                a.update(&cfg, Watts::from_num(50_000), None),
                b.update(&back, Watts::from_num(50_000), None)
            );
        }
    }
}

#[test]
fn raw_in_const_context() {
    const RAW: ThermalRaw = ThermalRaw {
        dt: Seconds::lit("0.001"),
        k_q62: [[0, 0], [0, 1 << 40]],
        gamma_q62: [0, 1 << 48],
        two_node: false,
        ambient: Celsius::lit("20"),
        fade_warning: Celsius::lit("300"),
        over_temperature: Celsius::lit("450"),
        flag_hysteresis: Celsius::lit("10"),
        measured: None,
    };
    const CFG: ThermalConfig = match ThermalConfig::from_bits(RAW) {
        Ok(c) => c,
        Err(_) => panic!("bad thermal config"),
    };
    assert_eq!(CFG.to_raw(), RAW);
}

#[test]
fn raw_rejects_what_the_model_cannot_produce() {
    let one = ThermalConfig::new(&disc(Cooling::TimeConstant(613.0)), 1e-3)
        .unwrap()
        .to_raw();
    let two = ThermalConfig::new(&two_node_measured(), 1e-3)
        .unwrap()
        .to_raw();
    let e = |r: ThermalRaw| ThermalConfig::from_bits(r).unwrap_err();
    let coefficient = |field| ThermalError::Coefficient { field };
    assert_eq!(
        e(ThermalRaw {
            dt: Seconds::ZERO,
            ..one
        }),
        ThermalError::NotPositive { field: "dt" }
    );
    assert_eq!(
        e(ThermalRaw {
            dt: Seconds::lit("1.5"),
            ..one
        }),
        ThermalError::DtTooLong
    );
    for (i, j, v) in [
        (1, 1, -1),
        (1, 1, 1 << 62),
        (0, 0, -1),
        (0, 1, 1),
        (1, 0, -(1 << 62)),
    ] {
        let mut r = two;
        r.k_q62[i][j] = v;
        assert_eq!(e(r), coefficient("k"), "k[{i}][{j}] = {v}");
    }
    let mut r = two;
    r.gamma_q62[0] = -1;
    assert_eq!(e(r), coefficient("gamma"));
    let mut r = one;
    r.gamma_q62[1] = 1 << 62;
    assert_eq!(
        e(r),
        ThermalError::HeatCapacityTooSmall {
            field: "rotor_mass"
        }
    );
    let mut r = two;
    r.gamma_q62[0] = 1 << 62;
    assert_eq!(
        e(r),
        ThermalError::HeatCapacityTooSmall {
            field: "lining.mass"
        }
    );
    // Lining coefficients on a single-node model.
    let mut r = one;
    r.gamma_q62[0] = 5;
    assert_eq!(e(r), coefficient("lining (single-node model)"));
    let r = ThermalRaw {
        two_node: false,
        ..two
    };
    assert_eq!(e(r), coefficient("lining (single-node model)"));
    // Decay below 2⁻⁴⁰ per sample, but not adiabatic.
    let mut r = one;
    r.k_q62[1][1] = K_MIN_Q62 - 1;
    assert_eq!(e(r), ThermalError::TimeConstantTooLongForDt);
    r.k_q62[1][1] = 0;
    assert!(ThermalConfig::from_bits(r).is_ok(), "adiabatic");
    assert_eq!(
        e(ThermalRaw {
            over_temperature: one.fade_warning,
            ..one
        }),
        ThermalError::FlagThresholds
    );
    assert_eq!(
        e(ThermalRaw {
            flag_hysteresis: Celsius::from_bits(-1),
            ..one
        }),
        ThermalError::FlagThresholds
    );
    let pl = two.measured.unwrap();
    for bad in [
        Plausibility { max: pl.min, ..pl },
        Plausibility { max_step: 0, ..pl },
    ] {
        assert_eq!(
            e(ThermalRaw {
                measured: Some(bad),
                ..two
            }),
            ThermalError::MeasuredLimits
        );
    }
    assert!(coefficient("k").to_string().contains("k: raw coefficient"));
}
