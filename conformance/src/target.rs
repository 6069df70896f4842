//! Bare-metal entry point, semihosting output and the panic handlers.

use clampwise_conformance::sink::Sink;

/// One semihosting write per line.
struct Semihosting;

impl Sink for Semihosting {
    fn emit(&mut self, line: &str) {
        semihosting::println!("{line}");
    }
}

#[cfg_attr(target_arch = "arm", cortex_m_rt::entry)]
#[cfg_attr(target_arch = "riscv32", riscv_rt::entry)]
fn main() -> ! {
    #[cfg(feature = "panic-canary")]
    canary();
    let ok = clampwise_conformance::shapes::run_all(clampwise_conformance::SEED, &mut Semihosting);
    semihosting::process::exit(if ok { 0 } else { 1 })
}

/// Negative control for the panic check: a panic the optimiser cannot remove.
#[cfg(feature = "panic-canary")]
#[inline(never)]
fn canary() {
    let table = [1u8, 2, 3];
    let i = core::hint::black_box(table.len());
    #[allow(clippy::indexing_slicing)] // the planted panic path
    core::hint::black_box(table[i]);
}

/// Report the panic and exit with failure, so QEMU never hangs.
#[cfg(not(feature = "panic-check"))]
#[panic_handler]
fn panic(_info: &core::panic::PanicInfo<'_>) -> ! {
    semihosting::println!("#target panic");
    semihosting::process::exit(101)
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
