//! The `clampwise` command-line program. See `clampwise --help` and the crate docs of
//! `clampwise_sim`.

use std::process::ExitCode;

use clampwise_sim::cli::{Cli, Command};
use clampwise_sim::commands::{self, Outcome};
use clampwise_sim::demo;
use clampwise_sim::error::{EXIT_OK, EXIT_USAGE, SimError};
use clap::Parser;

fn exit(code: i32) -> ExitCode {
    ExitCode::from(u8::try_from(code).unwrap_or(1))
}

fn main() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            // Help and version are not errors; every usage error is exit code 1.
            let code = if e.use_stderr() { EXIT_USAGE } else { EXIT_OK };
            let _ = e.print();
            return exit(code);
        }
    };
    let q = cli.quiet;
    let result: Result<Outcome, SimError> = match &cli.command {
        Command::Demo(a) => demo::run(a, q),
        Command::Replay(a) => commands::replay(a, q),
        Command::Compare(a) => commands::compare(a, q),
        Command::Fit(a) => commands::fit(a, q),
        Command::Tables(a) => commands::tables(a),
        Command::Synth(a) => commands::synth(a, q),
        Command::Check(a) => commands::check(a),
        Command::Plot(a) => commands::plot(a, q),
        Command::Report(a) => clampwise_sim::report::run(a, q),
    };
    match result {
        Ok(o) => {
            if cli.json {
                let mut js = o.json;
                if let serde_json::Value::Object(m) = &mut js {
                    m.insert("ok".into(), o.failure.is_none().into());
                    if let Some(f) = &o.failure {
                        m.insert("error".into(), serde_json::json!({"kind": f.kind(), "message": f.to_string(), "exit_code": f.exit_code()}));
                    }
                }
                println!("{}", serde_json::to_string_pretty(&js).unwrap_or_default());
                if o.human_to_stderr {
                    eprint!("{}", o.human);
                }
            } else if o.human_to_stderr {
                eprint!("{}", o.human);
            } else {
                print!("{}", o.human);
            }
            match o.failure {
                Some(f) => {
                    eprintln!("clampwise: {f}");
                    exit(f.exit_code())
                }
                None => exit(EXIT_OK),
            }
        }
        Err(e) => {
            if cli.json {
                println!(
                    "{}",
                    serde_json::to_string_pretty(&serde_json::json!({"ok": false, "error": {"kind": e.kind(), "message": e.to_string(), "exit_code": e.exit_code()}}))
                        .unwrap_or_default()
                );
            }
            eprintln!("clampwise: {e}");
            exit(e.exit_code())
        }
    }
}
