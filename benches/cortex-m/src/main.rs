//! Steps each bench variant `STEPS` times on a Cortex-M target, for instruction counting in
//! QEMU (`benches/cortex-m-count.sh`). Every step goes through a function that is never
//! inlined (`clampwise_benches::run::step_*`), so the counter sees one call per sample; the
//! configurations are built at start-up (floats, outside the counted calls) and the inputs are
//! generated between the calls. Prints one line per variant over semihosting and exits.
//!
//! On the host this compiles to an empty program, so workspace builds stay green.
#![cfg_attr(target_os = "none", no_std, no_main)]

#[cfg(not(target_os = "none"))]
fn main() {}

/// Steps per variant.
#[cfg(target_os = "none")]
const STEPS: usize = 200;

#[cfg(target_os = "none")]
mod target {
    use core::hint::black_box;

    use clampwise_benches::plain_f32::PlainEstimator;
    use clampwise_benches::run::{self, SEED};
    use clampwise_benches::workload::Workload;
    use clampwise_benches::{baseline, device};
    use clampwise_core::estimator::Estimator;
    use cortex_m_rt::entry;
    use cortex_m_semihosting::{debug, hprintln};

    use super::STEPS;

    fn run_all() -> bool {
        let (Ok(full), Ok(minimal), Ok(pfull), Ok(pmin)) = (
            device::full(),
            device::minimal(),
            baseline::full(),
            baseline::minimal(),
        ) else {
            return false;
        };
        let mut w = Workload::new(SEED);
        let mut est = Estimator::new(&full);
        for _ in 0..STEPS {
            let i = w.next_sample().inputs::<3>(true);
            black_box(run::step_fixed_full(&mut est, black_box(&i)));
        }
        hprintln!("fixed-full {} steps", STEPS);
        let mut w = Workload::new(SEED);
        let mut est = PlainEstimator::new(&pfull);
        for _ in 0..STEPS {
            let i = w.next_sample().plain::<3>(true);
            black_box(run::step_f32_full(&mut est, &pfull, black_box(&i)));
        }
        hprintln!("f32-full {} steps", STEPS);
        let mut w = Workload::new(SEED);
        let mut est = Estimator::new(&minimal);
        for _ in 0..STEPS {
            let i = w.next_sample().inputs::<1>(false);
            black_box(run::step_fixed_minimal(&mut est, black_box(&i)));
        }
        hprintln!("fixed-minimal {} steps", STEPS);
        let mut w = Workload::new(SEED);
        let mut est = PlainEstimator::new(&pmin);
        for _ in 0..STEPS {
            let i = w.next_sample().plain::<1>(false);
            black_box(run::step_f32_minimal(&mut est, &pmin, black_box(&i)));
        }
        hprintln!("f32-minimal {} steps", STEPS);
        true
    }

    #[entry]
    fn main() -> ! {
        let ok = run_all();
        debug::exit(if ok {
            debug::EXIT_SUCCESS
        } else {
            debug::EXIT_FAILURE
        });
        loop {
            cortex_m::asm::wfi();
        }
    }

    #[panic_handler]
    fn panic(_: &core::panic::PanicInfo<'_>) -> ! {
        hprintln!("panic");
        debug::exit(debug::EXIT_FAILURE);
        loop {
            cortex_m::asm::wfi();
        }
    }
}
