//! The example firmware's binary: replays the recorded trace through the application.
//!
//! * On a `thumbv*` target (`target_os = "none"`): a `no_std`, `no_main` Cortex-M image.
//!   With the default `semihosting` feature it prints each line over semihosting, measures its
//!   stack by painting, and exits with a status (for QEMU and CI). With `defmt` it logs over
//!   defmt-rtt and panics through panic-probe (for a debug probe on a board).
//! * On the host: a plain program that runs the same replay and prints the same lines to
//!   stdout, the reference the QEMU output is compared with (`qemu-check.sh`).
#![cfg_attr(target_os = "none", no_std, no_main)]

#[cfg(all(target_os = "none", feature = "semihosting"))]
mod stack;
#[cfg(target_os = "none")]
mod target;

#[cfg(not(target_os = "none"))]
fn main() {
    use std::io::Write as _;

    use clampwise_firmware_example::line::LineSink;
    use clampwise_firmware_example::replay::{demo_processor, replay};

    struct Stdout(std::io::BufWriter<std::io::StdoutLock<'static>>, bool);
    impl LineSink for Stdout {
        fn emit(&mut self, line: &[u8]) {
            let ok = self.0.write_all(line).is_ok() && self.0.write_all(b"\n").is_ok();
            self.1 &= ok;
        }
    }

    let mut out = Stdout(std::io::BufWriter::new(std::io::stdout().lock()), true);
    let result = demo_processor()
        .map_err(|e| e.to_string())
        .and_then(|p| replay(p, &mut out).map_err(|e| e.to_string()));
    let flushed = out.0.flush().is_ok() && out.1;
    match result {
        Ok(_) if flushed => {}
        Ok(_) => {
            eprintln!("clampwise-fw: cannot write to stdout");
            std::process::exit(1);
        }
        Err(e) => {
            eprintln!("clampwise-fw: {e}");
            std::process::exit(1);
        }
    }
}
