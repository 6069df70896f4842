//! Runs N steps of one variant over the bench input sequence, for instruction counting under
//! `valgrind --tool=callgrind` (`benches/instructions.sh` runs it for N and 2N steps; the
//! difference divided by N is the cost of one step, set-up excluded).
//!
//! `step_count <fixed-full|f32-full|fixed-minimal|f32-minimal> <N> [--checksum]`. Each output
//! goes through `black_box`, so the optimiser cannot drop the steps; with `--checksum` every
//! field of every estimate is hashed and the hash printed (to confirm that a performance change
//! keeps the results bit-identical; the hashing costs instructions, so not while counting).

use std::hint::black_box;
use std::process::ExitCode;

use clampwise_benches::plain_f32::{PlainEstimate, PlainEstimator};
use clampwise_benches::run::{self, INPUTS, Variant};
use clampwise_benches::{baseline, device};
use clampwise_core::estimator::{Estimate, Estimator, Inputs};

/// FNV-1a over every field of the estimate, so a changed bit anywhere changes the checksum
/// (it confirms that a performance change keeps the results bit-identical).
fn fixed_sum(e: &Estimate) -> i64 {
    let words = [
        i64::from(e.torque.map_or(i32::MIN, |t| t.to_bits())),
        i64::from(e.holding_capacity.map_or(i32::MIN, |t| t.to_bits())),
        i64::from(e.uncertainty.to_bits()),
        i64::from(e.mu.to_bits()),
        i64::from(e.effective_radius.to_bits()),
        i64::from(e.clamp_force.to_bits()),
        i64::from(e.force_channels_used.bits()),
        i64::from(e.lining_temperature.to_bits()),
        i64::from(e.bedding.to_bits()),
        i64::from(e.wear.to_bits()),
        i64::from(e.correction.to_bits()),
        i64::from(e.state as u8),
        i64::from(e.flags.bits()),
    ];
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for w in words {
        for b in w.to_le_bytes() {
            h = (h ^ u64::from(b)).wrapping_mul(0x0100_0000_01b3);
        }
    }
    i64::from_le_bytes(h.to_le_bytes())
}

#[allow(clippy::cast_possible_truncation)]
fn plain_sum(e: &PlainEstimate) -> i64 {
    (e.torque.unwrap_or(0.0) + e.capacity + e.lining_temperature) as i64
}

fn main() -> ExitCode {
    let args: Vec<String> = std::env::args().collect();
    let checksum = args.iter().any(|a| a == "--checksum");
    let (Some(variant), Some(n)) = (
        args.get(1).and_then(|s| Variant::parse(s)),
        args.get(2).and_then(|s| s.parse::<usize>().ok()),
    ) else {
        eprintln!(
            "usage: step_count <fixed-full|f32-full|fixed-minimal|f32-minimal> <N> [--checksum]"
        );
        return ExitCode::from(2);
    };
    match run_variant(variant, n, checksum) {
        Ok(sum) => {
            if checksum {
                println!("{} {n} steps, checksum {sum}", variant.name());
            } else {
                println!("{} {n} steps", variant.name());
            }
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!("step_count: {e}");
            ExitCode::FAILURE
        }
    }
}

fn run_variant(
    variant: Variant,
    n: usize,
    checksum: bool,
) -> Result<i64, Box<dyn std::error::Error>> {
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
                let out = black_box(run::step_fixed_full(&mut est, black_box(inp)));
                if checksum {
                    sum = sum.rotate_left(5) ^ fixed_sum(&out);
                }
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
                let out = black_box(run::step_fixed_minimal(&mut est, black_box(inp)));
                if checksum {
                    sum = sum.rotate_left(5) ^ fixed_sum(&out);
                }
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
                let out = black_box(run::step_f32_full(&mut est, &cfg, black_box(inp)));
                if checksum {
                    sum ^= plain_sum(&out);
                }
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
                let out = black_box(run::step_f32_minimal(&mut est, &cfg, black_box(inp)));
                if checksum {
                    sum ^= plain_sum(&out);
                }
            }
        }
    }
    Ok(sum)
}
