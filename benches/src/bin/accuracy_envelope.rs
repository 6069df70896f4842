//! Writes the accuracy-envelope report: `benches/output/accuracy-envelope.{md,csv,svg,png}`
//! (or into the directory given as the first argument), and prints the markdown.
//! Exits with status 1 when a cell at or above 5 % of full scale exceeds the bound.
//!
//! `cargo run --release -p clampwise-benches --bin accuracy_envelope [-- OUT_DIR [DATE]]`

use std::path::PathBuf;
use std::process::ExitCode;

use clampwise_benches::envelope::{self, BOUND};

fn main() -> ExitCode {
    let mut args = std::env::args().skip(1);
    let dir = args.next().map_or_else(
        || PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("output"),
        PathBuf::from,
    );
    let date = args.next().unwrap_or_else(|| "2026-12-02".to_owned());
    match run(&dir, &date) {
        Ok(true) => ExitCode::SUCCESS,
        Ok(false) => ExitCode::FAILURE,
        Err(e) => {
            eprintln!("accuracy_envelope: {e}");
            ExitCode::from(2)
        }
    }
}

fn run(dir: &std::path::Path, date: &str) -> Result<bool, Box<dyn std::error::Error>> {
    std::fs::create_dir_all(dir)?;
    let env = envelope::run()?;
    let md = env.markdown(date);
    std::fs::write(dir.join("accuracy-envelope.md"), &md)?;
    std::fs::write(dir.join("accuracy-envelope.csv"), env.csv())?;
    env.plot(&dir.join("accuracy-envelope.svg"))?;
    env.plot(&dir.join("accuracy-envelope.png"))?;
    print!("{md}");
    let ok = env.state_mismatches() == 0
        && env
            .worst_bounded()
            .is_some_and(|w| w.relative_error <= BOUND);
    eprintln!(
        "wrote {} (accuracy-envelope.md, .csv, .svg, .png); {}",
        dir.display(),
        if ok {
            "within the bound"
        } else {
            "BOUND EXCEEDED"
        }
    );
    Ok(ok)
}
