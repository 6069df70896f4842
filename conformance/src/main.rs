//! The conformance run: every device shape compiled in, stepped over its seeded scenario.
//!
//! * On the host: prints the lines to stdout; the reference.
//! * On a bare-metal target (`thumbv*` with cortex-m-rt, `riscv32*` with riscv-rt): prints the
//!   same lines over semihosting and exits with a status, for QEMU (`conformance/check.sh`).
#![cfg_attr(target_os = "none", no_std, no_main)]

#[cfg(target_os = "none")]
mod target;

#[cfg(not(target_os = "none"))]
fn main() {
    use std::io::Write as _;

    use clampwise_conformance::sink::Sink;

    struct Stdout(std::io::BufWriter<std::io::StdoutLock<'static>>, bool);
    impl Sink for Stdout {
        fn emit(&mut self, line: &str) {
            self.1 &= writeln!(self.0, "{line}").is_ok();
        }
    }

    let mut out = Stdout(std::io::BufWriter::new(std::io::stdout().lock()), true);
    let ok = clampwise_conformance::shapes::run_all(clampwise_conformance::SEED, &mut out);
    let written = out.0.flush().is_ok() && out.1;
    if !(ok && written) {
        eprintln!("clampwise-conformance: a run failed or stdout could not be written");
        std::process::exit(1);
    }
}
