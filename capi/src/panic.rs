//! Panics on a bare-metal target, where no `std` handles them.
//!
//! The core and this crate never panic on purpose (saturating arithmetic, no indexing that can
//! fail, no `unwrap`); the handler is what the language requires of a `no_std` binary. With
//! the `panic-check` feature it calls a symbol defined nowhere, so a C image linked with
//! `--gc-sections` only links when no panic path is reachable from the functions it calls
//! (`ci.sh`, its panic check). Hosted targets use `std`'s handler, and the release profiles
//! abort on panic: nothing unwinds into C.

#[cfg(all(target_os = "none", not(feature = "panic-check")))]
#[panic_handler]
fn on_panic(_: &core::panic::PanicInfo<'_>) -> ! {
    loop {
        core::hint::spin_loop();
    }
}

#[cfg(all(target_os = "none", feature = "panic-check"))]
#[panic_handler]
fn on_panic(_: &core::panic::PanicInfo<'_>) -> ! {
    unsafe extern "C" {
        /// Defined nowhere: a reference to it that survives linking fails the link.
        fn clampwise_capi_panic_path_is_reachable() -> !;
    }
    // SAFETY: never runs in an image that links; the link fails first.
    unsafe { clampwise_capi_panic_path_is_reachable() }
}

/// Negative control of the panic check: a panic the optimiser cannot remove.
#[cfg(feature = "panic-canary")]
#[allow(clippy::panic)]
pub(crate) fn canary() {
    if core::hint::black_box(true) {
        panic!("planted panic (panic-canary)");
    }
}
