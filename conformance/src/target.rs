//! Bare-metal entry point, semihosting output and the panic handlers.

use clampwise_conformance::sink::{LINE_CAPACITY, Sink};

/// One semihosting write per line (bytes, not `println!`: its formatting adapter has a panic
/// path).
struct Semihosting;

impl Sink for Semihosting {
    fn emit(&mut self, line: &str) {
        use semihosting::io::Write as _;
        let mut buf = heapless::Vec::<u8, { LINE_CAPACITY + 1 }>::new();
        if buf.extend_from_slice(line.as_bytes()).is_err() || buf.push(b'\n').is_err() {
            return;
        }
        let Ok(mut out) = semihosting::io::stdout() else {
            return;
        };
        let mut rest: &[u8] = &buf;
        while let Ok(n @ 1..) = out.write(rest) {
            rest = rest.get(n..).unwrap_or(&[]);
            if rest.is_empty() {
                break;
            }
        }
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
    Semihosting.emit("#target panic");
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
