//! The `clampwise` command-line program. See `clampwise --help` and the crate docs of
//! `clampwise_sim`.
//!
//! Where the text goes: the human summary on standard output, or on standard error when
//! standard output carries data (`-o -`). With `--json` the JSON summary takes the human
//! summary's place: on standard output, or on standard error (alone, without the human text)
//! when standard output carries data, so that the data stream is never mixed with it. Nothing
//! here panics on a closed or full stream: a failed write to standard output is an I/O error
//! (exit 4); a failed write to standard error is ignored (there is nowhere left to report it).

use std::io::Write;
use std::process::ExitCode;

use clampwise_sim::cli::{Cli, Command};
use clampwise_sim::commands::{self, Outcome};
use clampwise_sim::demo;
use clampwise_sim::error::{EXIT_IO, EXIT_OK, EXIT_USAGE, SimError};
use clampwise_sim::output::STDOUT_NAME;
use clap::Parser;

fn exit(code: i32) -> ExitCode {
    ExitCode::from(u8::try_from(code).unwrap_or(1))
}

/// Write `text` to standard error, ignoring failure.
fn to_stderr(text: &str) {
    let mut e = std::io::stderr().lock();
    let _ = e.write_all(text.as_bytes());
    let _ = e.flush();
}

/// Write `text` to standard output.
fn to_stdout(text: &str) -> std::io::Result<()> {
    let mut o = std::io::stdout().lock();
    o.write_all(text.as_bytes())?;
    o.flush()
}

fn error_json(e: &SimError) -> serde_json::Value {
    serde_json::json!({"kind": e.kind(), "message": e.to_string(), "exit_code": e.exit_code()})
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
    let data_on_stdout = cli.command.writes_data_to_stdout();
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
    let (summary, failure, human_to_stderr) = match result {
        Ok(o) => {
            let text = if cli.json {
                let mut js = o.json;
                if let serde_json::Value::Object(m) = &mut js {
                    m.insert("ok".into(), o.failure.is_none().into());
                    if let Some(f) = &o.failure {
                        m.insert("error".into(), error_json(f));
                    }
                }
                format!(
                    "{}\n",
                    serde_json::to_string_pretty(&js).unwrap_or_default()
                )
            } else {
                o.human
            };
            (text, o.failure, o.human_to_stderr || data_on_stdout)
        }
        Err(e) => {
            let text = if cli.json {
                let js = serde_json::json!({"ok": false, "error": error_json(&e)});
                format!(
                    "{}\n",
                    serde_json::to_string_pretty(&js).unwrap_or_default()
                )
            } else {
                String::new()
            };
            (text, Some(e), data_on_stdout)
        }
    };
    let mut code = failure.as_ref().map_or(EXIT_OK, SimError::exit_code);
    if human_to_stderr {
        to_stderr(&summary);
    } else if let Err(e) = to_stdout(&summary) {
        to_stderr(&format!("clampwise: {STDOUT_NAME}: {e}\n"));
        if code == EXIT_OK {
            code = EXIT_IO;
        }
    }
    // With --json on standard error, the error is in the JSON document: a second line there
    // would make it unreadable by a JSON parser.
    if let Some(f) = failure
        && !(cli.json && human_to_stderr)
    {
        to_stderr(&format!("clampwise: {f}\n"));
    }
    exit(code)
}
