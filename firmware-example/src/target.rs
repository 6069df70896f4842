//! Cortex-M entry point, output sinks and panic handlers.

use clampwise_firmware_example::line::LineSink;
use clampwise_firmware_example::replay::{demo_processor, replay};
use cortex_m_rt::entry;

#[cfg(all(feature = "semihosting", feature = "defmt"))]
compile_error!(
    "features `semihosting` and `defmt` are exclusive: build with --no-default-features --features defmt"
);
#[cfg(not(any(feature = "semihosting", feature = "defmt")))]
compile_error!("the firmware needs an output: feature `semihosting` (default) or `defmt`");

// ---------------------------------------------------------------------------------------------
// QEMU mode: semihosting output, stack painting, exit status.

#[cfg(feature = "semihosting")]
struct Semihosting(Option<cortex_m_semihosting::hio::HostStream>);

#[cfg(feature = "semihosting")]
impl LineSink for Semihosting {
    fn emit(&mut self, line: &[u8]) {
        if let Some(out) = self.0.as_mut() {
            // One write per line keeps host-side interleaving impossible.
            let mut buf =
                heapless::Vec::<u8, { clampwise_firmware_example::line::LINE_CAPACITY + 1 }>::new();
            let fits = buf.extend_from_slice(line).is_ok() && buf.push(b'\n').is_ok();
            if !fits || out.write_all(&buf).is_err() {
                self.0 = None;
            }
        }
    }
}

#[cfg(feature = "semihosting")]
#[entry]
fn main() -> ! {
    use clampwise_firmware_example::line::{Discard, Line};
    use cortex_m_semihosting::debug;

    // Painted before anything else runs, so the scan after the replay sees the deepest point
    // the whole program reached.
    let painted = crate::stack::paint_free_stack();

    #[cfg(feature = "panic-canary")]
    canary();

    let mut out = Semihosting(cortex_m_semihosting::hio::hstdout().ok());
    let ok = demo_processor().is_ok_and(|p| replay(p, &mut out).is_ok());
    let total = crate::stack::peak_use(painted);

    // A second, silent replay measures the processing step alone: each call is made from a
    // freshly painted stack and the depth below the call site is kept.
    let step = demo_processor().ok().and_then(|p| {
        let mut probe = crate::stack::StackProbe::new(p);
        replay(&mut probe, &mut Discard)
            .is_ok()
            .then(|| probe.deepest())
    });

    let bytes = |n: usize| i64::try_from(n).unwrap_or(-1);
    let mut line = Line::new();
    line.push_str("#target stack");
    line.key_value("total_bytes", i64::from(total));
    line.key_value("step_bytes", step.map_or(-1, i64::from));
    line.key_value("painted_bytes", i64::from(painted.len_bytes()));
    out.emit(line.as_bytes());
    // Sizes on this target: the estimator's state (RAM, inside the loop's frame here), the
    // adapter around it, and the device configuration (flash).
    let mut line = Line::new();
    line.push_str("#target sizes");
    line.key_value(
        "estimator_state_bytes",
        bytes(core::mem::size_of::<
            clampwise_core::estimator::EstimatorState<
                { clampwise_firmware_example::generated::DEVICE_CHANNELS },
            >,
        >()),
    );
    line.key_value(
        "processor_bytes",
        bytes(core::mem::size_of::<
            clampwise_firmware_example::replay::DemoProcessor,
        >()),
    );
    line.key_value(
        "device_config_bytes",
        bytes(core::mem::size_of::<
            clampwise_firmware_example::generated::Device,
        >()),
    );
    line.key_value(
        "estimate_bytes",
        bytes(core::mem::size_of::<clampwise_core::estimator::Estimate>()),
    );
    out.emit(line.as_bytes());

    let ok = ok && step.is_some() && out.0.is_some();
    debug::exit(if ok {
        debug::EXIT_SUCCESS
    } else {
        debug::EXIT_FAILURE
    });
    loop {
        cortex_m::asm::wfi();
    }
}

/// Negative control for the panic check: a panic the optimiser cannot remove.
#[cfg(feature = "panic-canary")]
#[inline(never)]
fn canary() {
    let trace = &clampwise_firmware_example::generated::TRACE;
    let i = core::hint::black_box(trace.len());
    #[allow(clippy::indexing_slicing)] // the planted panic path
    core::hint::black_box(&trace[i]);
}

/// QEMU mode: report the panic and exit with failure, so QEMU never hangs.
#[cfg(all(feature = "semihosting", not(feature = "panic-check")))]
#[panic_handler]
fn panic(_info: &core::panic::PanicInfo<'_>) -> ! {
    if let Ok(mut out) = cortex_m_semihosting::hio::hstdout() {
        let _ = out.write_all(b"#target panic\n");
    }
    cortex_m_semihosting::debug::exit(cortex_m_semihosting::debug::EXIT_FAILURE);
    loop {
        cortex_m::asm::wfi();
    }
}

/// Link-time panic check: this handler refers to a symbol that exists nowhere, so the image
/// links only if the optimiser proved every panic path unreachable and dropped this handler.
#[cfg(feature = "panic-check")]
#[panic_handler]
#[allow(unsafe_code)]
fn panic(_info: &core::panic::PanicInfo<'_>) -> ! {
    unsafe extern "C" {
        fn clampwise_panic_path_is_reachable() -> !;
    }
    // SAFETY: never runs; the link fails first if any call to the handler survives.
    unsafe { clampwise_panic_path_is_reachable() }
}

// ---------------------------------------------------------------------------------------------
// Probe mode: defmt over RTT, panic-probe.

#[cfg(feature = "defmt")]
use defmt_rtt as _;
// With `panic-check` the link-time handler below replaces panic-probe's (the defmt image's
// panic check, panic-check.sh).
#[cfg(all(feature = "defmt", not(feature = "panic-check")))]
use panic_probe as _;

#[cfg(feature = "defmt")]
struct Defmt;

#[cfg(feature = "defmt")]
impl LineSink for Defmt {
    fn emit(&mut self, line: &[u8]) {
        defmt::info!("{=[u8]:a}", line);
    }
}

/// Counts the core cycles of each processing step with the DWT cycle counter (real boards;
/// QEMU does not model it, and ARMv6-M parts have none).
#[cfg(all(feature = "defmt", not(armv6m)))]
struct CycleProbe<P> {
    inner: P,
    max: u32,
    total: u64,
    steps: u32,
}

#[cfg(all(feature = "defmt", not(armv6m)))]
impl<P: clampwise_firmware_example::app::Processor<CH>, const CH: usize>
    clampwise_firmware_example::app::Processor<CH> for CycleProbe<P>
{
    type Estimate = P::Estimate;
    fn step(&mut self, inputs: &clampwise_firmware_example::app::Inputs<CH>) -> P::Estimate {
        let start = cortex_m::peripheral::DWT::cycle_count();
        let estimate = self.inner.step(inputs);
        let cycles = cortex_m::peripheral::DWT::cycle_count().wrapping_sub(start);
        self.max = self.max.max(cycles);
        self.total = self.total.saturating_add(u64::from(cycles));
        self.steps = self.steps.saturating_add(1);
        estimate
    }
}

#[cfg(all(feature = "defmt", not(armv6m)))]
clampwise_firmware_example::forward_persist!(CycleProbe, inner);

#[cfg(feature = "defmt")]
#[entry]
fn main() -> ! {
    #[cfg(feature = "panic-canary")]
    canary();
    #[cfg(not(armv6m))]
    if let Some(mut cp) = cortex_m::Peripherals::take() {
        cp.DCB.enable_trace();
        cp.DWT.enable_cycle_counter();
    }
    let Ok(processor) = demo_processor() else {
        defmt::error!("initial state record rejected");
        loop {
            cortex_m::asm::bkpt();
        }
    };
    #[cfg(not(armv6m))]
    {
        let mut probe = CycleProbe {
            inner: processor,
            max: 0,
            total: 0,
            steps: 0,
        };
        match replay(&mut probe, &mut Defmt) {
            Ok(s) => {
                let mean = probe.total / u64::from(probe.steps.max(1));
                defmt::info!(
                    "replay done: {=u32} samples; step cycles max {=u32}, mean {=u64}",
                    s.samples,
                    probe.max,
                    mean
                );
            }
            Err(_) => defmt::error!("replay could not start"),
        }
    }
    #[cfg(armv6m)]
    match replay(processor, &mut Defmt) {
        Ok(s) => defmt::info!("replay done: {=u32} samples", s.samples),
        Err(_) => defmt::error!("replay could not start"),
    }
    loop {
        // Stops a probe runner (probe-rs) at the end of the replay.
        cortex_m::asm::bkpt();
    }
}
