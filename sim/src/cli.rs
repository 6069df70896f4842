//! Command-line interface: subcommands and options.

use std::path::PathBuf;

use clap::{Args, Parser, Subcommand};

/// clampwise: replay clamp-force traces through the clampwise estimator, compare, fit and
/// emit tables.
///
/// CAUTION: an estimate, not a certified safety function. Validate on the bench; follow the
/// applicable functional-safety process (ISO 26262, IEC 61508, ISO 13849), local codes and
/// licensed engineering practice.
///
/// Exit codes: 0 ok; 1 usage or config error; 2 data error in a trace or estimate file;
/// 3 accuracy threshold or coverage requirement failed; 4 I/O error; 5 internal error.
#[derive(Debug, Parser)]
#[command(name = "clampwise", version, about, long_about = None, after_help = "Exit codes: 0 ok, 1 usage/config error, 2 data error, 3 threshold failed, 4 I/O error, 5 internal error.")]
pub struct Cli {
    /// Print a JSON summary instead of the human text: on standard output, or on standard
    /// error when standard output carries data (`-o -`), never mixed with the data.
    #[arg(long, global = true)]
    pub json: bool,
    /// No progress bars.
    #[arg(long, short, global = true)]
    pub quiet: bool,
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Run the built-in demo: synthesise the demo hoist-brake scenario, replay, compare, fit,
    /// replay again with the fitted table, write plots and a summary.
    Demo(DemoArgs),
    /// Replay traces through the estimator into estimate traces (several traces run in
    /// parallel).
    Replay(ReplayArgs),
    /// Compare estimate traces with their reference torque: bias, RMS, max, P95/P99, by region.
    Compare(CompareArgs),
    /// Fit the μ table from a trace with a reference torque, with a coverage map.
    Fit(FitArgs),
    /// Print the friction-radius and μ tables; emit the device as Rust source for the firmware.
    Tables(TablesArgs),
    /// Synthesise a trace from the independent f64 plant model.
    Synth(SynthArgs),
    /// Validate configs (errors located by key, line and column).
    Check(CheckArgs),
    /// Plot an estimate trace (SVG or PNG by extension).
    Plot(PlotArgs),
    /// Write one self-contained HTML report: provenance, comparison, holding gate, flag
    /// timelines, plots, fit coverage.
    Report(crate::report::ReportArgs),
}

impl Command {
    /// Whether the command writes data (a trace, estimates, CSV, source) to standard output;
    /// the summary then goes to standard error.
    pub fn writes_data_to_stdout(&self) -> bool {
        let dash = |o: &Option<String>| o.as_deref() == Some("-");
        match self {
            Self::Replay(a) => dash(&a.out),
            Self::Synth(a) => a.out == "-",
            Self::Compare(a) => dash(&a.regions_csv),
            Self::Fit(a) => dash(&a.out) || dash(&a.coverage_csv) || dash(&a.plot),
            Self::Tables(a) => dash(&a.emit) || dash(&a.emit_c),
            Self::Plot(a) => a.out == "-",
            Self::Demo(_) | Self::Check(_) | Self::Report(_) => false,
        }
    }
}

/// `demo`.
#[derive(Debug, Args)]
pub struct DemoArgs {
    /// Run the demo's pipeline (scenario, faults, fit, plots) on this device config instead of
    /// the built-in demo device, e.g. `sim/configs/example-crane-drum-brake.toml`.
    #[arg(long, short)]
    pub config: Option<PathBuf>,
    /// Directory for the demo's files.
    #[arg(long, default_value = "clampwise-demo")]
    pub out_dir: PathBuf,
    /// Seconds of scenario to synthesise.
    #[arg(long, default_value_t = 400.0)]
    pub duration_s: f64,
    /// RNG seed of the plant.
    #[arg(long, default_value_t = 2027)]
    pub seed: u64,
    /// Skip the plots.
    #[arg(long)]
    pub no_plots: bool,
}

/// `replay`.
#[derive(Debug, Args)]
pub struct ReplayArgs {
    /// Device config (TOML; `-` for standard input).
    #[arg(long, short)]
    pub config: PathBuf,
    /// Trace files: CSV (`-` for standard input), ASAM MDF4 (`.mf4`) or, when built with the
    /// `parquet` feature, Parquet (`.parquet`), by extension.
    #[arg(required = true)]
    pub traces: Vec<String>,
    /// Estimate file for a single trace (`-` for standard output): CSV, or Parquet for a
    /// `.parquet` name (with the `parquet` feature).
    #[arg(long, short, conflicts_with = "out_dir")]
    pub out: Option<String>,
    /// Directory for estimate files, named TRACE-STEM.estimate.csv.
    #[arg(long)]
    pub out_dir: Option<PathBuf>,
    /// Skip bad rows (counted and listed in the summary) instead of stopping.
    #[arg(long)]
    pub skip_bad_rows: bool,
    /// Also plot each replay (a file for one trace; for several, use --plot-dir).
    #[arg(long, conflicts_with = "plot_dir")]
    pub plot: Option<String>,
    /// Directory for plots, named TRACE-STEM.svg.
    #[arg(long)]
    pub plot_dir: Option<PathBuf>,
    /// Parallel jobs (default: all cores).
    #[arg(long, short)]
    pub jobs: Option<usize>,
    /// Write only these estimate columns, comma-separated, in this order (e.g.
    /// t_s,torque_Nm,uncertainty_Nm).
    #[arg(long, value_delimiter = ',')]
    pub columns: Option<Vec<String>>,
    /// How the traces are read.
    #[command(flatten)]
    pub reading: TraceArgs,
}

/// How a trace is read: dialect, time base, column map, resampling (`replay`, `fit`).
#[derive(Debug, Args, Default)]
pub struct TraceArgs {
    /// Column separator (default: sniffed from the header and the first rows).
    #[arg(long, value_enum)]
    pub delimiter: Option<crate::csv_input::Delimiter>,
    /// Decimal mark of the numbers (default: sniffed; a ','-separated file has a point).
    #[arg(long, value_enum)]
    pub decimal: Option<crate::csv_input::DecimalMark>,
    /// The trace's own sample period, s: the time check's base instead of
    /// device.sample_period_s (another rate needs --resample).
    #[arg(long)]
    pub sample_period_s: Option<f64>,
    /// Map a quantity to a trace column, `QUANTITY=NAME[:UNIT]` (repeatable), over the config's
    /// `[trace.columns]`; UNIT as in the config (default: the quantity's canonical unit), e.g.
    /// force_1=Kraft1:kN.
    #[arg(long = "column", id = "column", value_name = "QUANTITY=NAME[:UNIT]")]
    pub column_map: Vec<crate::trace::ColumnOverride>,
    /// Resample a trace recorded at another rate (--sample-period-s) onto the device's
    /// period: hold = the last sample at or before each tick, linear = interpolated. For an
    /// MDF4 file with channels in several channel groups: how the groups are aligned onto
    /// the device's period (default hold; no --sample-period-s).
    #[arg(long, value_enum)]
    pub resample: Option<crate::resample::Resample>,
}

impl TraceArgs {
    /// The options for [`crate::trace::TraceReader::open_with`].
    pub fn options(&self) -> crate::trace::TraceOptions {
        crate::trace::TraceOptions {
            dialect: crate::csv_input::DialectChoice {
                delimiter: self.delimiter,
                decimal: self.decimal,
            },
            sample_period_s: self.sample_period_s,
            columns: self.column_map.clone(),
            resample: self.resample,
        }
    }
}

/// `compare`.
#[derive(Debug, Args)]
pub struct CompareArgs {
    /// Estimate files written by `replay`.
    #[arg(required = true)]
    pub estimates: Vec<String>,
    /// Config whose μ breakpoints and force limit define the region bands.
    #[arg(long, short)]
    pub config: Option<PathBuf>,
    /// Fail (exit 3) when |bias| of the gated rows exceeds this, N·m.
    #[arg(long)]
    pub max_bias_nm: Option<f64>,
    /// Fail (exit 3) when the RMS error of the gated rows exceeds this, N·m.
    #[arg(long)]
    pub max_rms_nm: Option<f64>,
    /// Fail (exit 3) when the P99 of |error| of the gated rows exceeds this, N·m.
    #[arg(long)]
    pub max_p99_nm: Option<f64>,
    /// Fail (exit 3) when the largest |error| of the gated rows exceeds this, N·m.
    #[arg(long)]
    pub max_abs_nm: Option<f64>,
    /// Fail (exit 3) when the RMS of error / |reference| of the gated rows exceeds this, %
    /// (rows with |reference| at or above --relative-floor-nm only).
    #[arg(long)]
    pub max_rms_pct: Option<f64>,
    /// Fail (exit 3) when the P99 of |error| / |reference| of the gated rows exceeds this, %.
    #[arg(long)]
    pub max_p99_pct: Option<f64>,
    /// Which core states the --max-* error gates apply to, comma-separated: slipping,
    /// released.
    #[arg(long, value_delimiter = ',', default_value = "slipping")]
    pub gate_states: Vec<String>,
    /// Fail (exit 3) when more than this many holding rows have a reference torque outside
    /// ±capacity.
    #[arg(long)]
    pub max_holding_violations: Option<u64>,
    /// Relative figures (% of |reference|) count only rows with |reference| at or above this,
    /// N·m (small references would turn any error into a huge percentage).
    #[arg(long, default_value_t = 10.0)]
    pub relative_floor_nm: f64,
    /// Write the per-region numbers as CSV (`-` for standard output).
    #[arg(long)]
    pub regions_csv: Option<String>,
}

/// `fit`.
#[derive(Debug, Args)]
pub struct FitArgs {
    /// Device config (TOML; `-` for standard input) holding the prior μ table.
    #[arg(long, short)]
    pub config: PathBuf,
    /// Trace with a reference-torque column: CSV, ASAM MDF4 (`.mf4`) or Parquet (`.parquet`),
    /// as for `replay`.
    pub trace: String,
    /// Write the config with the fitted μ table (comments kept).
    #[arg(long, short)]
    pub out: Option<String>,
    /// Write the coverage map as CSV.
    #[arg(long)]
    pub coverage_csv: Option<String>,
    /// Plot the fitted surface and its coverage (SVG or PNG).
    #[arg(long)]
    pub plot: Option<String>,
    /// Coverage (sample-equivalents) an entry needs to be fitted.
    #[arg(long, default_value_t = 200.0)]
    pub min_coverage: f64,
    /// Smallest clamp force of a usable sample, N (default 10 % of limits.max_clamp_force_n).
    #[arg(long)]
    pub min_force_n: Option<f64>,
    /// Fail (exit 3, nothing written) unless every entry is reached.
    #[arg(long)]
    pub require_full_coverage: bool,
    /// Skip bad rows (counted) instead of stopping.
    #[arg(long)]
    pub skip_bad_rows: bool,
    /// How the trace is read.
    #[command(flatten)]
    pub reading: TraceArgs,
}

/// `tables`.
#[derive(Debug, Args)]
pub struct TablesArgs {
    /// Device config (TOML; `-` for standard input).
    #[arg(long, short)]
    pub config: PathBuf,
    /// Write the whole device (configuration, checksum, starting state) as Rust source for the
    /// firmware, the source its `build.rs` writes (`-` for standard output).
    #[arg(long)]
    pub emit: Option<String>,
    /// Write the device as C source for the C API: a `const cw_device_desc` of raw bits with
    /// its checksum, and the starting state record (`-` for standard output).
    #[arg(long)]
    pub emit_c: Option<String>,
}

/// `synth`.
#[derive(Debug, Args)]
pub struct SynthArgs {
    /// Device config (TOML; `-` for standard input).
    #[arg(long, short)]
    pub config: PathBuf,
    /// Output trace (`-` for standard output).
    #[arg(long, short)]
    pub out: String,
    /// Scenario: hoist, steady or sweep.
    #[arg(long, default_value = "hoist")]
    pub scenario: String,
    /// Rows to write, at least 1 (overrides --duration-s).
    #[arg(long)]
    pub rows: Option<u64>,
    /// Seconds of scenario (default: one cycle).
    #[arg(long)]
    pub duration_s: Option<f64>,
    /// RNG seed.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// True μ = config table × this factor.
    #[arg(long, default_value_t = 1.0)]
    pub mu_scale: f64,
    /// Extra relative fall of the true μ per K above the fade threshold.
    #[arg(long, default_value_t = 0.0)]
    pub mu_fade_per_k: f64,
    /// Take the true μ table from this config instead.
    #[arg(long)]
    pub truth_config: Option<PathBuf>,
    /// Force noise on each channel, N (σ).
    #[arg(long, default_value_t = 30.0)]
    pub force_noise_n: f64,
    /// Inject a sensor fault, KIND:CHANNEL@START..END[=VALUE] (repeatable), e.g. stuck:2@30..35;
    /// kinds: stuck, rail_high, rail_low, offset, noise, dropout, drift, gain, sign, spike,
    /// flicker, copy1 … copy4 (sim/README.md).
    #[arg(long = "fault")]
    pub faults: Vec<String>,
}

/// `check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Config files (`-` for standard input).
    #[arg(required_unless_present = "units")]
    pub configs: Vec<PathBuf>,
    /// List the trace column units the mapping accepts.
    #[arg(long)]
    pub units: bool,
}

/// `plot`.
#[derive(Debug, Args)]
pub struct PlotArgs {
    /// Estimate file written by `replay`.
    pub estimate: String,
    /// Plot file (.svg or .png).
    #[arg(long, short)]
    pub out: String,
    /// Time window.
    #[command(flatten)]
    pub window: crate::report::WindowArgs,
}
