//! Runs N steps of one variant over the bench input sequence, for instruction counting under
//! `valgrind --tool=callgrind` (`benches/instructions.sh` runs it for N and 2N steps; the
//! difference divided by N is the cost of one step, set-up excluded).
//!
//! `step_count <fixed-full|f32-full|fixed-minimal|f32-minimal> <N>`; prints a checksum of the
//! outputs so the optimiser cannot drop the steps.

use std::hint::black_box;
use std::process::ExitCode;

use clampwise_benches::plain_f32::{PlainEstimate, PlainEstimator};
use clampwise_benches::run::{self, INPUTS, Variant};
use clampwise_benches::{baseline, device};
use clampwise_core::estimator::{Estimate, Estimator, Inputs};

fn fixed_sum(e: &Estimate) -> i64 {
    i64::from(e.torque.map_or(0, |t| t.to_bits()))
        ^ i64::from(e.holding_capacity.map_or(0, |t| t.to_bits()))
        ^ i64::from(e.lining_temperature.to_bits())
}

#[allow(clippy::cast_possible_truncation)]
fn plain_sum(e: &PlainEstimate) -> i64 {
    (e.torque.unwrap_or(0.0) + e.capacity + e.lining_temperature) as i64
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().collect();
    let (Some(variant), Some(n)) = (
        args.get(1).and_then(|s| Variant::parse(s)),
        args.get(2).and_then(|s| s.parse::<usize>().ok()),
    ) else {
        eprintln!("usage: step_count <fixed-full|f32-full|fixed-minimal|f32-minimal> <N>");
        return ExitCode::from(2);
    };
    match run_variant(variant, n) {
        Ok(sum) => {
            println!("{} {n} steps, checksum {sum}", variant.name());
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("step_count: {e}");
            ExitCode::FAILURE
        }
    }
}

fn run_variant(variant: Variant, n: usize) -> Result<i64, Box<dyn std::error::Error>> {
    let mut sum = 0i64;
    match variant {
        Variant::FixedFull => {
            let cfg = device::full()?;
            let mut inputs = vec![Inputs::<3>::at_rest(0); INPUTS];
            run::fill(&mut inputs, |s| s.inputs::<3>(true));
            let fresh = Estimator::new(&cfg);
            let mut est = fresh.clone();
            for (k, inp) in inputs.iter().cycle().take(n).enumerate() {
                if k % INPUTS == 0 {
                    est = fresh.clone();
                }
                sum ^= fixed_sum(&run::step_fixed_full(&mut est, black_box(inp)));
            }
        }
        Variant::FixedMinimal => {
            let cfg = device::minimal()?;
            let mut inputs = vec![Inputs::<1>::at_rest(0); INPUTS];
            run::fill(&mut inputs, |s| s.inputs::<1>(false));
            let fresh = Estimator::new(&cfg);
            let mut est = fresh.clone();
            for (k, inp) in inputs.iter().cycle().take(n).enumerate() {
                if k % INPUTS == 0 {
                    est = fresh.clone();
                }
                sum ^= fixed_sum(&run::step_fixed_minimal(&mut est, black_box(inp)));
            }
        }
        Variant::F32Full => {
            let cfg = baseline::full()?;
            let mut inputs = Vec::with_capacity(INPUTS);
            let mut w = clampwise_benches::workload::Workload::new(run::SEED);
            inputs.extend((0..INPUTS).map(|_| w.next_sample().plain::<3>(true)));
            let fresh = PlainEstimator::new(&cfg);
            let mut est = fresh;
            for (k, inp) in inputs.iter().cycle().take(n).enumerate() {
                if k % INPUTS == 0 {
                    est = fresh;
                }
                sum ^= plain_sum(&run::step_f32_full(&mut est, &cfg, black_box(inp)));
            }
        }
        Variant::F32Minimal => {
            let cfg = baseline::minimal()?;
            let mut inputs = Vec::with_capacity(INPUTS);
            let mut w = clampwise_benches::workload::Workload::new(run::SEED);
            inputs.extend((0..INPUTS).map(|_| w.next_sample().plain::<1>(false)));
            let fresh = PlainEstimator::new(&cfg);
            let mut est = fresh;
            for (k, inp) in inputs.iter().cycle().take(n).enumerate() {
                if k % INPUTS == 0 {
                    est = fresh;
                }
                sum ^= plain_sum(&run::step_f32_minimal(&mut est, &cfg, black_box(inp)));
            }
        }
    }
    Ok(sum)
}
