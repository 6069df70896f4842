//! The step's torque path for a contact whose torque is not linear in μ: a leading–trailing
//! pair of internal pivoted shoes (the textbook proportions of `drum_shoe.rs`), driven by one
//! measured actuating force F, torque T = F·g(μ).
//!
//! g(μ) comes from the core's f64 long-shoe model, itself checked in `drum_shoe.rs` against a
//! recalled worked example and an independent quadrature; the step looks up the equivalent
//! lever arm g(μ)/μ in a fixed-point table. So the checks here are arithmetic checks of the
//! step against that f64 model, and of the ± against the torque at every μ and force within
//! their tolerances: the true torque must lie within the reported ±, or a flag must say the
//! estimate cannot be trusted.
#![allow(clippy::unwrap_used, clippy::indexing_slicing, clippy::float_cmp)]

mod estimator_common;

use clampwise_core::config::{ByMu, DeviceConfig, DeviceParts, Limits, Tables, Tolerances};
use clampwise_core::estimator::{Combination, ContactState, Estimate, Estimator, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::friction::{FrictionConfig, FrictionParams, MuTable};
use clampwise_core::geometry::RadiusTable;
use clampwise_core::geometry::brake::{
    Mounting, PivotedShoe, ShoeAction, ShoeGeometry, ShoePair, TorqueGain,
};
use clampwise_core::sensor::RawChannel;
use clampwise_core::thermal::ThermalConfig;
use clampwise_core::units::{NewtonMetres, Newtons, RadPerSec, Ratio, Seconds};
use clampwise_core::wear::WearConfig;
use estimator_common::{DT, counts, sensor_config, thermal_params, wear_params};

const POINTS: usize = 16;
type DrumTables = Tables<2, POINTS, 1, 2, ByMu>;
type Drum = DeviceConfig<DrumTables, 1>;

const MU_TOLERANCE: f64 = 0.15;

fn shoes() -> ShoePair<PivotedShoe, PivotedShoe> {
    let geometry = ShoeGeometry {
        drum_radius_m: 0.150,
        pin_distance_m: 0.112f64.hypot(0.050),
        arc_start_rad: 0.0,
        arc_end_rad: 126f64.to_radians(),
        face_width_m: 0.032,
        actuation_arm_m: 0.212,
    };
    let shoe = |a| PivotedShoe::new(geometry, Mounting::Internal, a).unwrap();
    ShoePair::new(shoe(ShoeAction::Leading), shoe(ShoeAction::Trailing))
}

/// g(μ)/μ, its limit g′(0) at 0.
fn lever(mu: f64) -> f64 {
    let (g, slope) = shoes().gain_and_slope(mu).unwrap();
    if mu > 0.0 { g / mu } else { slope }
}

/// μ breakpoints 0 … `end`, closer towards the end.
fn breakpoints(end: f64) -> [f64; POINTS] {
    std::array::from_fn(|i| {
        let u = 1.0 - i as f64 / (POINTS - 1) as f64;
        end * (1.0 - u * u)
    })
}

/// The largest relative difference between linear interpolation of g/μ on the breakpoints
/// and the model [calc: 200 samples per segment].
fn interpolation_error(mus: &[f64; POINTS]) -> f64 {
    let mut worst = 0.0f64;
    for w in mus.windows(2) {
        let (r0, r1) = (lever(w[0]), lever(w[1]));
        for k in 1..200 {
            let t = f64::from(k) / 200.0;
            let exact = lever(w[0] + t * (w[1] - w[0]));
            worst = worst.max(((r0 + t * (r1 - r0)) - exact).abs() / exact);
        }
    }
    worst
}

/// A one-gauge drum device whose lining has μ = `mu` everywhere (static ratio 1.2), its gain
/// table up to `end`.
fn drum(mu: f64, end: f64) -> Drum {
    let mus = breakpoints(end);
    let row = mus.map(lever);
    let radius = RadiusTable::<2, POINTS>::new(&[0.0, 100_000.0], &mus, &[row, row]).unwrap();
    let mu_table = MuTable::<1, 2>::new(&[20.0], &[0.0, 100.0], &[[mu, mu]]).unwrap();
    let friction = FrictionConfig::new(
        mu_table,
        &FrictionParams {
            static_to_kinetic: 1.2,
            stick_speed: 0.05,
            stick_hysteresis: 0.04,
            transition_speed: 0.5,
            viscous_drag: 0.0,
            no_load_drag: 0.0,
        },
    )
    .unwrap();
    let epsilon = interpolation_error(&mus);
    let radius_tolerance = 0.01 + epsilon + 0.01 * epsilon;
    DeviceConfig::from_parts(DeviceParts {
        sample_period: Seconds::from_num(DT),
        thermal_wear_every: 1,
        faces: 1,
        tables: Tables::over_mu(radius, friction),
        thermal: ThermalConfig::new(&thermal_params(), DT).unwrap(),
        wear: WearConfig::new(&wear_params(), DT).unwrap(),
        sensor: sensor_config::<1>(false),
        adapt: None,
        limits: Limits {
            touch_force: Newtons::from_num(100),
            adapt_min_force: Newtons::from_num(500),
        },
        tolerances: Tolerances {
            mu: Ratio::from_num(MU_TOLERANCE),
            radius: Ratio::from_num(radius_tolerance),
            combination: Combination::WorstCase,
        },
    })
    .unwrap()
}

fn settle(dev: &Drum, force: f64, speed: f64) -> Estimate {
    let mut est = Estimator::new(dev);
    let mut i = Inputs::<1>::at_rest(0);
    i.force_channels[0] = RawChannel {
        counts: counts(force),
        valid: true,
    };
    i.input_speed = Some(RadPerSec::from_num(speed));
    let mut e = est.step(&i);
    for _ in 1..300 {
        e = est.step(&i);
    }
    e
}

#[test]
fn slipping_torque_is_the_actuating_force_times_g_of_mu() {
    // Arithmetic check against the f64 model: T = F·g(μ) [pub: Shigley, ch. 16, pivoted
    // long shoes; the model checked in drum_shoe.rs].
    for mu in [0.10, 0.25, 0.32, 0.40] {
        let dev = drum(mu, 0.9 * shoes().locking_coefficient().unwrap());
        let f = 12_000.0;
        let e = settle(&dev, f, 40.0);
        assert_eq!(e.state, ContactState::Slipping);
        assert!(!e.flags.contains(Flags::SELF_LOCKING));
        let want = f * shoes().torque_per_force(mu).unwrap();
        let got = -e.torque.unwrap().to_num::<f64>();
        assert!(
            (got - want).abs() <= 0.01 * want,
            "μ {mu}: {got} against {want} N·m"
        );
        // The reported lever arm is g(μ)/μ at the reported μ.
        let r = e.effective_radius.to_num::<f64>();
        assert!((r - lever(e.mu.to_num())).abs() <= 0.01 * r, "{r}");
    }
}

#[test]
fn the_true_torque_at_every_mu_and_force_within_tolerance_lies_within_the_plus_minus() {
    let lock = shoes().locking_coefficient().unwrap();
    for mu in [0.05, 0.2, 0.32, 0.45] {
        let dev = drum(mu, 0.9 * lock);
        for f in [2_000.0, 12_000.0, 40_000.0] {
            for (speed, slipping) in [(40.0, true), (0.0, false)] {
                let e = settle(&dev, f, speed);
                assert!(!e.flags.contains(Flags::SELF_LOCKING), "μ {mu}");
                let (reported, mu_nominal) = if slipping {
                    (-e.torque.unwrap().to_num::<f64>(), mu)
                } else {
                    (e.holding_capacity.unwrap().to_num::<f64>(), 1.2 * mu)
                };
                let u = e.uncertainty.to_num::<f64>();
                // The sensor's own ± on one healthy gauge (estimator_common: 100 N).
                let u_f = 100.0;
                for k in 0..=40 {
                    let scale = 1.0 - MU_TOLERANCE + 2.0 * MU_TOLERANCE * f64::from(k) / 40.0;
                    let mu_true = mu_nominal * scale;
                    for f_true in [f - u_f, f, f + u_f] {
                        let truth = f_true * shoes().torque_per_force(mu_true).unwrap();
                        assert!(
                            (truth - reported).abs() <= u,
                            "μ {mu}·{scale:.3}, F {f_true}: true {truth:.1}, reported \
                             {reported:.1} ± {u:.1} ({:?})",
                            e.state
                        );
                    }
                }
                // And the ± is not the linear one: where the pair is clearly self-energising
                // (S(μ) > 1.1 here) its upper side passes T·δμ, and the ± covers it.
                let s = shoes().sensitivity(mu_nominal).unwrap();
                if s > 1.1 {
                    let upper = f * shoes()
                        .torque_per_force(mu_nominal * (1.0 + MU_TOLERANCE))
                        .unwrap();
                    assert!(upper - reported > reported * MU_TOLERANCE, "S {s}");
                    assert!(u > reported * MU_TOLERANCE, "S {s}");
                }
            }
        }
    }
}

#[test]
fn mu_within_tolerance_beyond_the_table_flags_self_locking() {
    let end = 0.5;
    // 0.40 · 1.2 (static) · 1.15 = 0.552 > 0.5 while holding; 0.40 · 1.15 = 0.46 slipping.
    let dev = drum(0.40, end);
    let holding = settle(&dev, 12_000.0, 0.0);
    assert!(
        holding.flags.contains(Flags::SELF_LOCKING),
        "{:?}",
        holding.flags
    );
    assert_eq!(holding.uncertainty, NewtonMetres::MAX);
    let slipping = settle(&dev, 12_000.0, 40.0);
    assert!(
        !slipping.flags.contains(Flags::SELF_LOCKING),
        "{:?}",
        slipping.flags
    );
    assert!(slipping.uncertainty < NewtonMetres::MAX);
}
