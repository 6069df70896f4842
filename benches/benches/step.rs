//! Criterion benches of one `Estimator::step` against the plain f32 baseline, and of the table
//! lookups alone. `cargo bench -p clampwise-benches --bench step` (BENCHMARKS.md has the
//! figures and the shorter settings used on a shared machine).
//!
//! Every iteration takes the next of 4096 pre-generated inputs (a seeded mix of operating
//! points, `workload` module docs) so the branch predictor cannot learn one path; the state is
//! reset to its start each time the inputs wrap (once per 4096 steps).
#![allow(missing_docs, clippy::expect_used, clippy::indexing_slicing)]

use std::hint::black_box;
use std::time::Duration;

use clampwise_benches::plain_f32::{PlainEstimator, Table1F32, Table2F32};
use clampwise_benches::run::{self, INPUTS};
use clampwise_benches::{baseline, device};
use clampwise_core::estimator::{Estimator, Inputs};
use clampwise_core::table::{Table1, Table2};
use clampwise_core::units::{Celsius, Newtons, RadPerSec, Ratio};
use criterion::{Criterion, Throughput, criterion_group, criterion_main};
use fixed::types::extra::{U16, U24, U30};

const MASK: usize = INPUTS - 1;

fn inputs<T: Clone>(make: impl Fn(&clampwise_benches::workload::Sample) -> T, zero: T) -> Vec<T> {
    let mut v = vec![zero; INPUTS];
    run::fill(&mut v, make);
    v
}

fn step(c: &mut Criterion) {
    // Criterion draws its plots with plotters, which reads no system font.
    clampwise_benches::envelope::register_plot_font();
    let full = device::full().expect("full device");
    let minimal = device::minimal().expect("minimal device");
    let plain_full = baseline::full().expect("full f32 device");
    let plain_minimal = baseline::minimal().expect("minimal f32 device");
    let in_full = inputs(|s| s.inputs::<3>(true), Inputs::<3>::at_rest(0));
    let in_min = inputs(|s| s.inputs::<1>(false), Inputs::<1>::at_rest(0));
    let zero3 = clampwise_benches::workload::Workload::new(0)
        .next_sample()
        .plain::<3>(true);
    let zero1 = zero3_to_1(&zero3);
    let pin_full = inputs(|s| s.plain::<3>(true), zero3);
    let pin_min = inputs(|s| s.plain::<1>(false), zero1);

    let mut g = c.benchmark_group("step");
    g.throughput(Throughput::Elements(1));

    g.bench_function("fixed/full", |b| {
        let fresh = Estimator::new(&full);
        let mut est = fresh.clone();
        let mut i = 0;
        b.iter(|| {
            let out = run::step_fixed_full(&mut est, black_box(&in_full[i]));
            i = (i + 1) & MASK;
            if i == 0 {
                est = fresh.clone();
            }
            black_box(out)
        });
    });
    g.bench_function("f32/full", |b| {
        let fresh = PlainEstimator::new(&plain_full);
        let mut est = fresh;
        let mut i = 0;
        b.iter(|| {
            let out = run::step_f32_full(&mut est, black_box(&plain_full), black_box(&pin_full[i]));
            i = (i + 1) & MASK;
            if i == 0 {
                est = fresh;
            }
            black_box(out)
        });
    });
    g.bench_function("fixed/minimal", |b| {
        let fresh = Estimator::new(&minimal);
        let mut est = fresh.clone();
        let mut i = 0;
        b.iter(|| {
            let out = run::step_fixed_minimal(&mut est, black_box(&in_min[i]));
            i = (i + 1) & MASK;
            if i == 0 {
                est = fresh.clone();
            }
            black_box(out)
        });
    });
    g.bench_function("f32/minimal", |b| {
        let fresh = PlainEstimator::new(&plain_minimal);
        let mut est = fresh;
        let mut i = 0;
        b.iter(|| {
            let out =
                run::step_f32_minimal(&mut est, black_box(&plain_minimal), black_box(&pin_min[i]));
            i = (i + 1) & MASK;
            if i == 0 {
                est = fresh;
            }
            black_box(out)
        });
    });
    g.finish();
}

fn zero3_to_1(
    p: &clampwise_benches::plain_f32::PlainInputs<3>,
) -> clampwise_benches::plain_f32::PlainInputs<1> {
    clampwise_benches::plain_f32::PlainInputs {
        counts: [p.counts[0]],
        valid: [p.valid[0]],
        input_speed: p.input_speed,
        output_speed: p.output_speed,
        command: None,
        sensor_temperature: None,
        reference_torque: None,
    }
}

/// A seeded sequence of `INPUTS` values in `[lo, hi)`.
fn spread(lo: f64, hi: f64, seed: u64) -> Vec<f64> {
    let mut x = seed | 1;
    (0..INPUTS)
        .map(|_| {
            x ^= x >> 12;
            x ^= x << 25;
            x ^= x >> 27;
            #[allow(clippy::cast_precision_loss)]
            let u = (x.wrapping_mul(0x2545_F491_4F6C_DD1D) >> 11) as f64 / (1u64 << 53) as f64;
            lo + (hi - lo) * u
        })
        .collect()
}

#[allow(clippy::cast_possible_truncation)]
fn lookup(c: &mut Criterion) {
    clampwise_benches::envelope::register_plot_font();
    let full = device::full().expect("full device");
    let plain = baseline::full().expect("full f32 device");
    // Table1: μ against temperature, 8 breakpoints (the doc example of `table`, extended).
    let t1x = [-40.0, 50.0, 100.0, 200.0, 300.0, 400.0, 600.0, 900.0];
    let t1y = [0.36, 0.38, 0.38, 0.37, 0.33, 0.30, 0.24, 0.18];
    let t1 = Table1::<U16, U30, 8>::new(&t1x, &t1y).expect("table1");
    let t1f = Table1F32 {
        x: t1x.map(|v| v as f32),
        y: t1y.map(|v| v as f32),
    };
    // Table2: a generic 8 × 8 grid (Q16 axes, Q24 values).
    let ax: [f64; 8] = core::array::from_fn(|i| (i * i) as f64 * 10.0);
    let z: [[f64; 8]; 8] =
        core::array::from_fn(|i| core::array::from_fn(|j| ((i + 2 * j) as f64).sqrt()));
    let t2 = Table2::<U16, U16, U24, 8, 8>::new(&ax, &ax, &z).expect("table2");
    let t2f = Table2F32::from_f64(&ax, &ax, &z);

    let temps = spread(-60.0, 950.0, 3);
    let xs = spread(-5.0, 500.0, 5);
    let ys = spread(-5.0, 500.0, 7);
    let forces = spread(0.0, 260e3, 11);
    let beds = spread(0.0, 1.0, 13);
    let speeds = spread(0.0, 2100.0, 17);
    let q = |v: &[f64], f: fn(f64) -> i32| v.iter().map(|&x| f(x)).collect::<Vec<i32>>();
    let temps_q = q(&temps, |x| Celsius::from_num(x).to_bits());
    let xs_q = q(&xs, |x| fixed::FixedI32::<U16>::from_num(x).to_bits());
    let ys_q = q(&ys, |x| fixed::FixedI32::<U16>::from_num(x).to_bits());
    let forces_q = q(&forces, |x| Newtons::from_num(x).to_bits());
    let beds_q = q(&beds, |x| Ratio::from_num(x).to_bits());
    let speeds_q = q(&speeds, |x| RadPerSec::from_num(x).to_bits());
    let f32s = |v: &[f64]| v.iter().map(|&x| x as f32).collect::<Vec<f32>>();
    let (temps_f, xs_f, ys_f, forces_f, beds_f, speeds_f) = (
        f32s(&temps),
        f32s(&xs),
        f32s(&ys),
        f32s(&forces),
        f32s(&beds),
        f32s(&speeds),
    );

    let mut g = c.benchmark_group("lookup");
    g.throughput(Throughput::Elements(1));
    let mut i = 0;
    let mut next = move || {
        i = (i + 1) & MASK;
        i
    };
    g.bench_function("fixed/Table1-8", |b| {
        b.iter(|| t1.lookup(Celsius::from_bits(black_box(temps_q[next()]))));
    });
    g.bench_function("f32/Table1-8", |b| {
        b.iter(|| t1f.lookup(black_box(temps_f[next()])))
    });
    g.bench_function("fixed/Table2-8x8", |b| {
        b.iter(|| {
            let k = next();
            t2.lookup(
                fixed::FixedI32::from_bits(black_box(xs_q[k])),
                fixed::FixedI32::from_bits(black_box(ys_q[k])),
            )
        });
    });
    g.bench_function("f32/Table2-8x8", |b| {
        b.iter(|| {
            let k = next();
            t2f.lookup(black_box(xs_f[k]), black_box(ys_f[k]))
        });
    });
    let radius = full.tables().radius();
    g.bench_function("fixed/radius-3x3", |b| {
        b.iter(|| {
            let k = next();
            radius.lookup(
                Newtons::from_bits(black_box(forces_q[k])),
                Ratio::from_bits(black_box(beds_q[k])),
            )
        });
    });
    g.bench_function("f32/radius-3x3", |b| {
        b.iter(|| {
            let k = next();
            plain
                .radius
                .lookup(black_box(forces_f[k]), black_box(beds_f[k]))
        });
    });
    let mu = full.tables().friction().mu_kinetic();
    g.bench_function("fixed/mu-6x5", |b| {
        b.iter(|| {
            let k = next();
            mu.lookup(
                Celsius::from_bits(black_box(temps_q[k])),
                RadPerSec::from_bits(black_box(speeds_q[k])),
            )
        });
    });
    g.bench_function("f32/mu-6x5", |b| {
        b.iter(|| {
            let k = next();
            plain
                .mu
                .lookup(black_box(temps_f[k]), black_box(speeds_f[k]))
        });
    });
    g.finish();
}

// Modest defaults for a shared machine; `-- --warm-up-time S --measurement-time S` overrides.
criterion_group! {
    name = benches;
    config = Criterion::default()
        .warm_up_time(Duration::from_secs(1))
        .measurement_time(Duration::from_secs(3));
    targets = step, lookup
}
criterion_main!(benches);
