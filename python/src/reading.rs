//! How a trace is read (dialect, time base, column map, resampling), from keyword arguments,
//! through the CLI's own option parser so that values and messages are the CLI's.

use clampwise_sim::cli::TraceArgs;
use clampwise_sim::error::SimError;
use clampwise_sim::trace::TraceOptions;
use clap::Parser;

/// The reading options of `replay` and `fit`, as keyword arguments.
#[derive(Default)]
pub struct Reading {
    /// `--delimiter`.
    pub delimiter: Option<String>,
    /// `--decimal`.
    pub decimal: Option<String>,
    /// `--sample-period-s`.
    pub sample_period_s: Option<f64>,
    /// `--column QUANTITY=NAME[:UNIT]`, each.
    pub column_map: Vec<String>,
    /// `--resample`.
    pub resample: Option<String>,
}

#[derive(Parser)]
#[command(name = "clampwise", no_binary_name = true)]
struct ReadingOnly {
    #[command(flatten)]
    reading: TraceArgs,
}

impl Reading {
    /// The reader's options, or the CLI's usage message for a bad value.
    pub fn options(&self) -> Result<TraceOptions, SimError> {
        let mut argv: Vec<String> = Vec::new();
        let mut flag = |name: &str, v: Option<String>| {
            if let Some(v) = v {
                argv.push(format!("--{name}={v}"));
            }
        };
        flag("delimiter", self.delimiter.clone());
        flag("decimal", self.decimal.clone());
        flag(
            "sample-period-s",
            self.sample_period_s.map(|p| p.to_string()),
        );
        flag("resample", self.resample.clone());
        for c in &self.column_map {
            flag("column", Some(c.clone()));
        }
        let parsed = ReadingOnly::try_parse_from(argv)
            .map_err(|e| SimError::Usage(e.render().to_string().trim().to_string()))?;
        Ok(parsed.reading.options())
    }
}
