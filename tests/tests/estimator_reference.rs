//! The fixed-point estimator against the f64 model (`f64_model::pipeline`): a property test
//! over the envelope (10⁵ random devices and operating points) and a sample-by-sample braking
//! event. The measured worst cases are printed (`--nocapture`) and stated in the docs of
//! `f64_model::pipeline`.
//!
//! The comparison starts at the conditioned clamp force: the channel's calibration maps counts
//! 1:1 onto the `Newtons` LSB and the force is constant within a case, so the sensor filter
//! (DC gain exactly 1, primed by its first sample) hands the estimator exactly the force the
//! reference is given. The sensor stage has its own f64 checks (`sensor_properties`).
#![allow(
    clippy::unwrap_used,
    clippy::expect_used,
    clippy::float_cmp,
    clippy::cast_precision_loss,
    clippy::cast_possible_truncation,
    clippy::panic
)]

mod estimator_common;
use estimator_common::*;

use std::cell::Cell;

use clampwise_core::adapt::AdaptConfig;
use clampwise_core::config::{DeviceConfig, DeviceParts, Limits, Tables, Tolerances};
use clampwise_core::estimator::{Combination, ContactState, Estimate, Estimator, Inputs};
use clampwise_core::flags::Flags;
use clampwise_core::friction::FrictionConfig;
use clampwise_core::geometry::{Annulus, Contact, build_radius_table};
use clampwise_core::state_record::StateRecord;
use clampwise_core::thermal::{ThermalConfig, ThermalState};
use clampwise_core::units::{Celsius, Joules, NewtonMetres, Newtons, RadPerSec, Ratio, Seconds};
use clampwise_core::wear::{WearConfig, WearState};
use clampwise_tests::f64_model::friction::FrictionModel;
use clampwise_tests::f64_model::pipeline::{
    PipelineEstimate, PipelineInputs, PipelineModel, PipelineParts, RlsParams,
};
use proptest::prelude::*;
use proptest::test_runner::{Config, TestRunner};

/// The project's accuracy target: 0.1 % of reading above 5 % of full scale.
const TARGET_RELATIVE: f64 = 1e-3;
const ABOVE_FULL_SCALE_FRACTION: f64 = 0.05;
/// Largest clamp force of the envelope, N.
const FORCE_MAX_N: f64 = 200_000.0;
/// Static μ is 1.2 × the demo table, whose largest value is 0.40.
const MU_STATIC_MAX: f64 = 1.2 * 0.40;
/// Uncertainty of one healthy channel in the test sensor (estimator_common).
const CHANNEL_UNCERTAINTY_N: f64 = 100.0;
/// Peak-to-peak noise band of the test sensor (estimator_common).
const NOISE_BAND_N: f64 = 50.0;
/// Largest torque the fixed-point format holds, N·m.
const TORQUE_FORMAT_MAX: f64 = 524_288.0 - 1.0 / 4096.0;

/// Everything that does not change between cases.
struct Common {
    friction: FrictionConfig<3, 3>,
    thermal: ThermalConfig,
    wear: WearConfig,
    sensor: clampwise_core::sensor::SensorConfig<1>,
}

fn common(spec: &Spec<'_>) -> Common {
    Common {
        friction: FrictionConfig::new(mu_table(), &friction_params(spec)).unwrap(),
        thermal: ThermalConfig::new(&thermal_params(), DT).unwrap(),
        wear: WearConfig::new(&wear_params(), DT).unwrap(),
        sensor: sensor_config::<1>(false),
    }
}

fn device_for(c: &Common, contact: &Contact<'_>, adapt: Option<AdaptConfig>) -> Device<1> {
    // The radius axis reaches past the envelope's 200 kN so no lookup is clamped in force.
    let radius = build_radius_table::<2, 2>(contact, &[0.0, 250_000.0], &[0.0, 1.0]).unwrap();
    DeviceConfig::from_parts(DeviceParts {
        sample_period: Seconds::from_num(DT),
        thermal_wear_every: 1,
        faces: contact.faces(),
        tables: Tables::new(radius, c.friction),
        thermal: c.thermal,
        wear: c.wear,
        sensor: c.sensor,
        adapt,
        limits: Limits {
            touch_force: Newtons::from_num(100),
            adapt_min_force: Newtons::from_num(500),
        },
        tolerances: Tolerances {
            mu: Ratio::from_num(0.20),
            radius: Ratio::from_num(0.01),
            combination: Combination::WorstCase,
        },
    })
    .unwrap()
}

/// n · μ_s,max · 200 kN · r_e,max, capped at the torque format (beyond it a reading saturates
/// and is flagged, checked separately).
fn full_scale(contact: &Contact<'_>) -> f64 {
    let arm = contact
        .lever_arm(0.0)
        .unwrap()
        .max(contact.lever_arm(1.0).unwrap());
    (f64::from(contact.faces()) * MU_STATIC_MAX * FORCE_MAX_N * arm).min(TORQUE_FORMAT_MAX)
}

/// Energy that gives `bedding` under 1 − exp(−E/E₀) (E₀ from the test wear parameters), capped
/// where the bedding is 1 to double precision.
fn energy_for_bedding(bedding: f64) -> f64 {
    let e0 = wear_params().bedding_energy;
    (-(-bedding).ln_1p() * e0).min(40.0 * e0)
}

/// Worst errors seen.
#[derive(Clone, Copy, Debug, Default)]
struct Worst {
    /// Largest |fixed − f64| / |f64| of a reading above 5 % of full scale.
    relative: f64,
    /// Largest |fixed − f64| (N·m) of a reading below 5 % of full scale.
    absolute_small: f64,
    /// Readings compared above / below 5 % of full scale.
    above: u64,
    below: u64,
    /// Readings beyond the torque format (saturated and flagged).
    saturated: u64,
    /// Cases stopped at a saturated torque.
    cut_short: u64,
}

impl Worst {
    fn merge(&mut self, other: &Self) {
        self.relative = self.relative.max(other.relative);
        self.absolute_small = self.absolute_small.max(other.absolute_small);
        self.above += other.above;
        self.below += other.below;
        self.saturated += other.saturated;
        self.cut_short += other.cut_short;
    }

    /// Compare one reading; `Err` describes a failure.
    fn reading(
        &mut self,
        what: &str,
        fixed: NewtonMetres,
        reference: f64,
        full_scale: f64,
        flags: Flags,
    ) -> Result<(), String> {
        let f: f64 = fixed.to_num();
        if reference.abs() > TORQUE_FORMAT_MAX + 0.5 / 4096.0 {
            self.saturated += 1;
            let pinned = fixed == NewtonMetres::MAX
                || fixed == NewtonMetres::MIN + NewtonMetres::DELTA
                || fixed == NewtonMetres::MIN;
            return if pinned && flags.contains(Flags::ARITHMETIC_SATURATED) {
                Ok(())
            } else {
                Err(format!(
                    "{what}: {reference} is beyond the format but got {f}, {flags:?}"
                ))
            };
        }
        let err = (f - reference).abs();
        if reference.abs() >= ABOVE_FULL_SCALE_FRACTION * full_scale {
            self.above += 1;
            let rel = err / reference.abs();
            self.relative = self.relative.max(rel);
            if rel > TARGET_RELATIVE {
                return Err(format!(
                    "{what}: {f} vs {reference}: relative error {rel:e}"
                ));
            }
        } else {
            self.below += 1;
            self.absolute_small = self.absolute_small.max(err);
            if err > TARGET_RELATIVE * ABOVE_FULL_SCALE_FRACTION * full_scale {
                return Err(format!("{what}: {f} vs {reference}: error {err:e} N·m"));
            }
        }
        Ok(())
    }

    /// Compare torque and capacity of one sample (and the state, exactly). `Ok(true)` when the
    /// torque saturated: the fixed-point path then heats and beds the lining with the
    /// saturated torque, so its state leaves the reference's and later samples of the case are
    /// not comparable.
    fn sample(
        &mut self,
        fixed: &Estimate,
        reference: &PipelineEstimate,
        full_scale: f64,
    ) -> Result<bool, String> {
        if fixed.state != reference.state {
            return Err(format!("state {:?} vs {:?}", fixed.state, reference.state));
        }
        let mut torque_saturated = false;
        match (fixed.torque, reference.torque) {
            (Some(t), Some(r)) => {
                let before = self.saturated;
                self.reading("torque", t, r, full_scale, fixed.flags)?;
                torque_saturated = self.saturated > before;
            }
            (None, None) => {}
            (t, r) => return Err(format!("torque {t:?} vs {r:?}")),
        }
        match (fixed.holding_capacity, reference.holding_capacity) {
            (Some(t), Some(r)) => self.reading("capacity", t, r, full_scale, fixed.flags)?,
            (t, r) => return Err(format!("capacity {t:?} vs {r:?}")),
        }
        Ok(torque_saturated)
    }
}

/// One case of the envelope.
#[derive(Clone, Copy, Debug)]
struct Case {
    faces: u8,
    inner_radius_m: f64,
    outer_radius_m: f64,
    cone_half_angle_deg: Option<f64>,
    clamp_force_n: f64,
    slip_speed: f64,
    lining_temperature: f64,
    bedding: f64,
}

fn case() -> impl Strategy<Value = Case> {
    // Radii spread evenly in log over 20 mm … 1 m, inner below outer by at least 0.1 %.
    let radii = ((0.02f64).ln()..(1.0f64).ln(), 0.001f64..1.0).prop_map(|(ln_ro, frac)| {
        let ro = ln_ro.exp().max(0.02 / 0.999);
        let ri = (0.02 + (ro - 0.02) * (1.0 - frac)).min(ro * 0.999);
        (ri, ro)
    });
    let force = prop_oneof![
        8 => 0.0..=FORCE_MAX_N,
        1 => 0.0..2_000.0, // around the 100 N touch threshold
    ];
    // Slipping from 0.1 rad/s (inside the stick/slip blend) to 2000 rad/s, either sign, or
    // held (at rest or below the stick band) to compare the capacity.
    let speed = prop_oneof![
        4 => ((0.1f64).ln()..(2000.0f64).ln(), any::<bool>())
            .prop_map(|(l, neg)| if neg { -l.exp() } else { l.exp() }),
        1 => -0.029f64..0.029,
    ];
    (
        1u8..=12,
        radii,
        prop_oneof![1 => Just(None), 1 => (8.0f64..30.0).prop_map(Some)],
        force,
        speed,
        -50.0f64..=1000.0,
        0.0f64..=1.0,
    )
        .prop_map(|(faces, (ri, ro), cone, f, v, t, b)| Case {
            faces,
            inner_radius_m: ri,
            outer_radius_m: ro,
            cone_half_angle_deg: cone,
            clamp_force_n: f,
            slip_speed: v,
            lining_temperature: t,
            bedding: b,
        })
}

/// An estimator resumed from a state record: rotor and lining at `temperature`, `energy`
/// dissipated since the lining was new (its bedding and wear follow from the wear model).
fn restored(dev: &Device<1>, temperature: Celsius, energy: Joules) -> Estimator<'_, TestTables, 1> {
    let record = StateRecord::new(
        0,
        dev.checksum(),
        &WearState::with_history(dev.wear(), energy),
        &ThermalState::with_temperatures(temperature, temperature),
        Ratio::ONE,
        Ratio::ZERO,
    );
    Estimator::restore(dev, &record.to_bytes()).unwrap()
}

/// Samples stepped per case: the first is already exact (the filter primes on it); the rest let
/// the temperature, bedding and stick/slip state move.
const SAMPLES_PER_CASE: usize = 4;

fn run_case(c: &Common, case: &Case) -> Result<Worst, String> {
    let contact = Contact::new(
        Annulus::new(case.inner_radius_m, case.outer_radius_m).unwrap(),
        case.faces,
        case.cone_half_angle_deg.map(f64::to_radians),
    )
    .unwrap();
    let dev = device_for(c, &contact, None);
    let fs = full_scale(&contact);

    let counts = counts(case.clamp_force_n);
    let temperature = Celsius::from_num(case.lining_temperature);
    let energy = Joules::from_num(energy_for_bedding(case.bedding));
    let mut est = restored(&dev, temperature, energy);
    let mut inputs = Inputs::<1>::at_rest(counts);
    inputs.input_speed = Some(RadPerSec::from_num(case.slip_speed));

    // The reference gets exactly the fixed-point inputs: force in whole LSBs, the quantised
    // slip speed, temperature and energy.
    let parts = PipelineParts::from_device(&dev, contact, &thermal_params(), &wear_params(), None);
    let mut model = PipelineModel::with_condition(parts, temperature.to_num(), energy.to_num());
    let ref_inputs = PipelineInputs::slipping(
        f64::from(counts) / COUNTS_PER_NEWTON,
        inputs.input_speed.unwrap_or_default().to_num(),
        CHANNEL_UNCERTAINTY_N,
    );

    let mut worst = Worst::default();
    for i in 0..SAMPLES_PER_CASE {
        let e = est.step(&inputs);
        let r = model.step(&ref_inputs);
        if e.clamp_force.to_num::<f64>() != f64::from(counts) / COUNTS_PER_NEWTON {
            return Err(format!(
                "sample {i}: conditioned force {} is not the input",
                e.clamp_force
            ));
        }
        let torque_saturated = worst
            .sample(&e, &r, fs)
            .map_err(|m| format!("sample {i}: {m}"))?;
        if torque_saturated {
            worst.cut_short += 1;
            break;
        }
    }
    Ok(worst)
}

#[test]
fn fixed_point_matches_the_f64_pipeline_over_the_envelope() {
    let c = common(&Spec::default());
    let config = Config {
        cases: 100_000,
        failure_persistence: None,
        ..Config::default()
    };
    // A fixed seed: the worst case stated in the docs is reproducible.
    let mut runner = TestRunner::new_with_rng(
        config,
        proptest::test_runner::TestRng::deterministic_rng(
            proptest::test_runner::RngAlgorithm::ChaCha,
        ),
    );
    let worst = Cell::new(Worst::default());
    let result = runner.run(&case(), |case| {
        let w = run_case(&c, &case).map_err(|m| TestCaseError::fail(format!("{case:?}: {m}")))?;
        let mut all = worst.get();
        all.merge(&w);
        worst.set(all);
        Ok(())
    });
    let w = worst.get();
    println!(
        "envelope: worst relative error above 5 % FS {:.3e} over {} readings; worst absolute \
         below 5 % FS {:.3e} N·m over {} readings; {} saturated readings (flagged), {} cases \
         stopped there",
        w.relative, w.above, w.absolute_small, w.below, w.saturated, w.cut_short
    );
    result.unwrap();
    assert!(
        w.above > 100_000,
        "too few readings above 5 % of full scale"
    );
    assert!(w.below > 1_000, "too few small readings");
}

/// A braking event on the estimator_common demo device with adaptation and wet-clutch drag:
/// force ramps 0 → 40 kN in 0.3 s through the 200 Hz sensor filter, the input shaft decays
/// from 300 rad/s to rest in 3.5 s, then holds for 0.5 s; the reference torque comes from an
/// f64 plant whose lining has 8 % less μ than the table (the adaptation learns k → 0.92).
#[test]
fn braking_event_matches_the_f64_pipeline_sample_by_sample() {
    let spec = Spec {
        adapt: true,
        viscous_drag: 0.02,
        no_load_drag: 1.5,
        ..Spec::default()
    };
    let dev = device::<1>(&spec);
    let fs = full_scale(&spec.contact);
    let rls = RlsParams::new(0.7, 1.3, 0.995, 5000.0, 0.02);
    let mut est = Estimator::new(&dev);
    let mut model = PipelineModel::new(PipelineParts::from_device(
        &dev,
        spec.contact,
        &thermal_params(),
        &wear_params(),
        Some(rls),
    ));
    // The plant: the same device with every μ of the table 8 % lower (invented offset).
    let table = mu_table();
    let plant_friction = FrictionModel::new(
        std::array::from_fn(|i| {
            table
                .x_breakpoints()
                .get(i)
                .map_or(f64::NAN, |v| v.to_num())
        }),
        std::array::from_fn(|j| {
            table
                .y_breakpoints()
                .get(j)
                .map_or(f64::NAN, |v| v.to_num())
        }),
        std::array::from_fn(|i| {
            std::array::from_fn(|j| 0.92 * table.value(i, j).unwrap().to_num::<f64>())
        }),
        &friction_params(&spec),
    );
    let mut plant = PipelineModel::new(PipelineParts {
        friction: plant_friction,
        ..PipelineParts::from_device(&dev, spec.contact, &thermal_params(), &wear_params(), None)
    });

    let mut worst = Worst::default();
    let (mut d_temp, mut d_bedding, mut d_k) = (0.0f64, 0.0f64, 0.0f64);
    let (mut d_unc, mut d_unc_small) = (0.0f64, 0.0f64);
    let mut states = std::collections::BTreeMap::<&str, u32>::new();
    let mut last = None;
    for i in 0..4000u32 {
        let t = f64::from(i) * DT;
        // 50 ms with the shaft turning and the brake open, then the ramp.
        let force = 40_000.0 * ((t - 0.05) / 0.3).clamp(0.0, 1.0);
        let speed = (300.0 * (1.0 - t / 3.5)).max(0.0);
        let mut inputs = Inputs::<1>::at_rest(counts(force));
        inputs.input_speed = Some(RadPerSec::from_num(speed));
        let v: f64 = inputs.input_speed.unwrap_or_default().to_num();
        let plant_out = plant.step(&PipelineInputs::slipping(force, v, CHANNEL_UNCERTAINTY_N));
        inputs.reference_torque = plant_out
            .torque
            .filter(|_| plant_out.state == ContactState::Slipping)
            .map(NewtonMetres::from_num);

        let e = est.step(&inputs);
        assert!(!e.flags.contains(Flags::SENSOR_DEGRADED), "sample {i}");
        // The sensor's ± grows by what its filter trails the ramp beyond half the noise band
        // (the core's sensor docs): the channel reads `force` exactly, the filter gives the
        // clamp force.
        let raw = f64::from(counts(force)) / COUNTS_PER_NEWTON;
        let trail = ((raw - e.clamp_force.to_num::<f64>()).abs() - NOISE_BAND_N / 2.0).max(0.0);
        let r = model.step(&PipelineInputs {
            clamp_force: Some(e.clamp_force.to_num()),
            force_uncertainty: CHANNEL_UNCERTAINTY_N + trail,
            sensors_healthy: true,
            slip_speed: v,
            reference_torque: inputs.reference_torque.map(|t| t.to_num()),
        });
        worst
            .sample(&e, &r, fs)
            .unwrap_or_else(|m| panic!("sample {i} (t = {t:.3} s): {m}"));
        *states.entry(e.state.name()).or_default() += 1;
        d_temp = d_temp.max((e.lining_temperature.to_num::<f64>() - r.lining_temperature).abs());
        d_bedding = d_bedding.max((e.bedding.to_num::<f64>() - r.bedding).abs());
        d_k = d_k.max((e.correction.to_num::<f64>() - r.correction).abs());
        // The ± is a product of the reported torque: relative above 5 % of full scale, else
        // in N·m.
        let reported = match r.state {
            ContactState::Holding => r.holding_capacity,
            _ => r.torque,
        }
        .unwrap()
        .abs();
        let d = (e.uncertainty.to_num::<f64>() - r.uncertainty).abs();
        if reported >= ABOVE_FULL_SCALE_FRACTION * fs {
            d_unc = d_unc.max(d / reported);
        } else {
            d_unc_small = d_unc_small.max(d);
        }
        last = Some((e, r));
    }
    let (e, r) = last.unwrap();
    println!(
        "braking event: worst relative error above 5 % FS {:.3e} ({} readings), worst absolute \
         below {:.3e} N·m ({} readings); lining temperature {:.3e} K, bedding {:.3e}, \
         factor k {:.3e}, uncertainty {:.3e} of reading ({:.3e} N·m below 5 % FS); states {states:?}; final T {:.1} °C, \
         k {:.5}",
        worst.relative,
        worst.above,
        worst.absolute_small,
        worst.below,
        d_temp,
        d_bedding,
        d_k,
        d_unc,
        d_unc_small,
        r.lining_temperature,
        r.correction,
    );
    // The run reached every part of the event it is meant to cover.
    for s in ["released", "slipping", "holding"] {
        assert!(states.get(s).copied().unwrap_or(0) > 10, "{s}: {states:?}");
    }
    assert!(r.lining_temperature > 100.0, "the lining heated");
    assert!(
        (r.correction - 0.92).abs() < 0.01,
        "adaptation learnt the offset"
    );
    assert_eq!(e.state, ContactState::Holding);
    assert!(worst.above > 2000);
    // Bounds on the state the torque depends on, about ten times the measured worst case.
    assert!(d_temp < 1e-3, "lining temperature {d_temp} K");
    assert!(d_bedding < 1e-6, "bedding {d_bedding}");
    assert!(d_k < 1e-6, "adaptation factor {d_k}");
    assert!(d_unc < 1e-5, "uncertainty {d_unc}");
    assert!(d_unc_small < 0.01, "uncertainty {d_unc_small} N·m");
}
