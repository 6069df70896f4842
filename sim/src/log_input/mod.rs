//! Logs other than CSV, read as named numeric columns row by row: ASAM MDF4 (`.mf4`, module
//! [`mdf4`]) and, with the `parquet` feature, Parquet (`.parquet`, module `parquet`).
//!
//! The format is chosen by the file extension ([`LogFormat::of`]); everything else is CSV.
//! [`crate::trace::TraceReader`] maps the columns to quantities exactly as for a CSV header
//! (`[trace.columns]`, `--column`), so a log and the CSV with the same numbers give the same
//! estimates. A missing or invalid value reads as an empty cell would.

pub mod align;
pub mod cells;
pub mod mdf4;
#[cfg(feature = "parquet")]
pub mod parquet;
#[cfg(feature = "parquet")]
pub mod parquet_estimates;
#[cfg(feature = "parquet")]
pub mod parquet_spill;

use serde::Serialize;

use crate::error::{DataError, SimError};
use crate::resample::Resample;

/// A trace's file format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum LogFormat {
    /// Text with a header line (the default for any other extension).
    Csv,
    /// ASAM MDF 4.x (`.mf4`, `.mdf`).
    Mdf4,
    /// Apache Parquet (`.parquet`).
    Parquet,
}

impl LogFormat {
    /// The format of `path`, by its extension (case ignored).
    ///
    /// ```
    /// use clampwise_sim::log_input::LogFormat;
    /// assert_eq!(LogFormat::of("run/brake.MF4"), LogFormat::Mdf4);
    /// assert_eq!(LogFormat::of("fleet.parquet"), LogFormat::Parquet);
    /// assert_eq!(LogFormat::of("-"), LogFormat::Csv);
    /// ```
    pub fn of(path: &str) -> Self {
        let ext = std::path::Path::new(path)
            .extension()
            .map(|e| e.to_string_lossy().to_ascii_lowercase());
        match ext.as_deref() {
            Some("mf4" | "mdf") => Self::Mdf4,
            Some("parquet") => Self::Parquet,
            _ => Self::Csv,
        }
    }
}

/// One channel group (MDF4) or file (Parquet) a trace's columns come from.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct SourceReport {
    /// Channel group index in the file (0-based), `None` for a Parquet file.
    pub group: Option<usize>,
    /// Its name (the group's acquisition name; empty when it has none).
    pub name: String,
    /// Samples recorded.
    pub samples: u64,
    /// Its mean sample period over the record, s (`None` below two samples or when unknown
    /// before reading).
    pub mean_period_s: Option<f64>,
}

/// How a log was read (in the replay summary).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct LogReport {
    /// The file format.
    pub format: LogFormat,
    /// Where the mapped columns come from.
    pub sources: Vec<SourceReport>,
    /// How channel groups at different rates were brought onto the device's sample ticks;
    /// `None` when every mapped channel is in one group (its records are the rows, as a CSV's).
    pub aligned: Option<Resample>,
}

/// What a column carries, for alignment by interpolation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ColumnKind {
    /// A measured value: interpolated on a straight line.
    Number,
    /// Whole ADC counts: interpolated, then rounded to the nearest count (halves away from
    /// zero).
    Counts,
    /// A 0/1 valid bit: invalid at a tick when invalid at either sample beside it.
    Flag,
}

/// A column a trace uses, by its index in [`ColumnarLog::names`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ColumnUse {
    /// Index into [`ColumnarLog::names`].
    pub index: usize,
    /// What it carries.
    pub kind: ColumnKind,
}

/// How the rows of a log are timed, set before reading.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Timing {
    /// `device.sample_period_s`: the ticks that groups at other rates are aligned onto.
    pub device_period_s: f64,
    /// The method stated with `--resample`, if any.
    pub resample: Option<Resample>,
    /// Whether `--sample-period-s` was given.
    pub stated_period: bool,
}

/// What [`ColumnarLog::start`] decided about the rows.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Rows {
    /// The rows are the records as they are: the time checks and `--resample` apply as to a
    /// CSV.
    AsRecorded,
    /// The rows are already on the device's ticks (channel groups aligned).
    OnDeviceTicks,
}

/// A log read as named numeric columns, row by row.
pub trait ColumnarLog: Send {
    /// File name as given.
    fn file(&self) -> &str;
    /// Every column the file has, in file order (MDF4: the channels other than the masters).
    fn names(&self) -> &[String];
    /// `Some(unit)` when the time is the log's own time base (MDF4 master channels) rather
    /// than a named column; the unit as the file states it (empty when it states none).
    fn own_time_unit(&self) -> Option<&str>;
    /// Start reading the columns `used`.
    ///
    /// # Errors
    /// Located data errors (a truncated file, unsorted time, a channel in two groups) and
    /// usage errors (an option that does not fit the file).
    fn start(&mut self, used: &[ColumnUse], timing: Timing) -> Result<Rows, SimError>;
    /// Fill `values` (one slot per name, and one more at the end for an own time base) with
    /// the next row's values of the columns in use; `Ok(false)` at the end.
    ///
    /// # Errors
    /// A located data error of the file (truncated, unsorted, unreadable): the reading ends
    /// there, whatever the bad-row policy.
    fn next_row(&mut self, values: &mut [Option<f64>]) -> Result<bool, DataError>;
    /// Where the last row came from, for messages (`channel group 0 ('fast'), sample 12`).
    fn row_location(&self) -> String;
    /// How the log is read.
    fn report(&self) -> LogReport;
    /// File length and bytes consumed, for progress.
    fn progress(&self) -> (Option<u64>, u64);
}

/// A located error in a log: the file and a message that names where.
pub fn log_error(file: &str, message: String) -> DataError {
    DataError {
        file: file.to_string(),
        line: None,
        column: None,
        header: None,
        message,
    }
}

/// Open a columnar log of `format` (not [`LogFormat::Csv`]).
///
/// # Errors
/// I/O and data errors; [`SimError::Usage`] for a Parquet file when the `parquet` feature is
/// not built in.
pub fn open(path: &str, format: LogFormat) -> Result<Box<dyn ColumnarLog>, SimError> {
    match format {
        LogFormat::Mdf4 => Ok(Box::new(mdf4::Mdf4Log::open(path)?)),
        #[cfg(feature = "parquet")]
        LogFormat::Parquet => Ok(Box::new(parquet::ParquetLog::open(path)?)),
        #[cfg(not(feature = "parquet"))]
        LogFormat::Parquet => Err(no_parquet(path)),
        LogFormat::Csv => Err(SimError::Internal(format!(
            "{path}: a CSV file is not a columnar log"
        ))),
    }
}

/// The error for a Parquet file when the `parquet` feature is not built in.
#[cfg(not(feature = "parquet"))]
pub fn no_parquet(path: &str) -> SimError {
    SimError::Usage(format!(
        "{path}: this clampwise is built without Parquet support; build it with `cargo build -p clampwise-sim --release --features parquet`, or write the log as CSV or MDF4"
    ))
}
