//! Input traces: the config's column mapping applied to a CSV file, row by row, with unit
//! conversion, time-stamp checks and the bad-row policy.
//!
//! Header names carry their unit (`t_s`, `force_1_N`, `omega_in_rad_s`, `torque_ref_Nm`,
//! `temp_C`); `[trace.columns]` in the config maps other names and units. A bad row stops the
//! run with its line, column and header named, unless [`RowPolicy::Skip`] is chosen; then it is
//! skipped and counted in [`SkipReport`], never dropped silently.
//!
//! ASAM MDF4 and Parquet logs ([`crate::log_input`], by file extension) are mapped the same
//! way, their channel or column names standing for the header fields.

use serde::Serialize;

use crate::column_units::{self, Conversion, Quantity};
use crate::csv_input::{CsvIn, Dialect, DialectChoice, echo};
use crate::error::{DataError, SimError};
use crate::log_input::cells::{Cells, Header, LogHeader, LogRow};
use crate::log_input::{
    self, ColumnKind, ColumnUse, ColumnarLog, LogFormat, LogReport, Rows, Timing,
};
use crate::resample::{Resample, ResampleReport, Resampler};
use crate::schema::{CANONICAL, ColumnSpec, DeviceKind, DeviceSpec};
use crate::timestamps::{TimeCheck, TimeReport};
use clampwise_convert::{Channel, TraceSample};

/// A `--column QUANTITY=NAME[:UNIT]` override of one `[trace.columns]` entry.
#[derive(Debug, Clone, PartialEq)]
pub struct ColumnOverride {
    /// Quantity name as in `[trace.columns]` (`force_1`, `time`, …).
    pub quantity: String,
    /// Header name in the trace.
    pub column: String,
    /// Unit (the config's unit names); `None`: the quantity's canonical unit.
    pub unit: Option<String>,
}

impl std::str::FromStr for ColumnOverride {
    type Err = String;

    /// `QUANTITY=NAME[:UNIT]`; the unit follows the last `:` (a name with a `:` in it needs
    /// the unit written out).
    fn from_str(s: &str) -> Result<Self, String> {
        let names = || CANONICAL.iter().map(|e| e.0).collect::<Vec<_>>().join(", ");
        let (q, rest) = s.split_once('=').ok_or_else(|| {
            format!(
                "'{}' is not QUANTITY=NAME[:UNIT] (quantities: {})",
                echo(s),
                names()
            )
        })?;
        let q = q.trim();
        if !CANONICAL.iter().any(|e| e.0 == q) {
            return Err(format!(
                "unknown quantity '{}' (quantities: {})",
                echo(q),
                names()
            ));
        }
        let (column, unit) = match rest.rsplit_once(':') {
            Some((c, u)) => (c, Some(u.trim().to_string())),
            None => (rest, None),
        };
        if column.trim().is_empty() {
            return Err(format!("'{}': empty column name", echo(s)));
        }
        Ok(Self {
            quantity: q.to_string(),
            column: column.trim().to_string(),
            unit,
        })
    }
}

/// Command-line settings of how one trace is read, over the config's `[trace]`.
#[derive(Debug, Clone, Default)]
pub struct TraceOptions {
    /// Separator and decimal mark set on the command line (the rest is sniffed).
    pub dialect: DialectChoice,
    /// The trace's own sample period, s (`--sample-period-s`): the time check's base
    /// instead of `device.sample_period_s`.
    pub sample_period_s: Option<f64>,
    /// Column map entries replacing the config's.
    pub columns: Vec<ColumnOverride>,
    /// Resample onto the device's ticks (needs `sample_period_s`).
    pub resample: Option<Resample>,
}

impl TraceOptions {
    /// Check the options against the config before any file is read.
    ///
    /// # Errors
    /// [`SimError::Usage`] for a period that is not a positive number, a stated period the estimator would be stepped at wrongly (another
    /// rate without `--resample`), a `--column` for a force channel the config does not have
    /// or given twice.
    pub fn check(&self, c: &DeviceSpec) -> Result<(), SimError> {
        let device = c.device.sample_period_s;
        if let Some(p) = self.sample_period_s {
            if !(p.is_finite() && p > 0.0) {
                return Err(SimError::Usage(format!(
                    "--sample-period-s must be a positive number of seconds, got {p}"
                )));
            }
            let tolerance = period_tolerance(c);
            let ratio = p / device;
            if self.resample.is_none() && !(1.0 / tolerance..=tolerance).contains(&ratio) {
                return Err(SimError::Usage(format!(
                    "--sample-period-s {p} is another rate than device.sample_period_s {device} s, at which the estimator steps: add --resample hold (zero-order hold) or --resample linear to bring the trace to the device's period"
                )));
            }
        }
        let mut seen = std::collections::HashSet::new();
        for o in &self.columns {
            if !seen.insert(o.quantity.as_str()) {
                return Err(SimError::Usage(format!(
                    "--column {} is given twice",
                    o.quantity
                )));
            }
            if let Some(ch) = o
                .quantity
                .strip_prefix("force_")
                .and_then(|s| s.chars().next())
                .and_then(|d| d.to_digit(10))
                && ch as usize > c.sensors.len()
            {
                return Err(SimError::Usage(format!(
                    "--column {}: the config has {} force channel(s)",
                    o.quantity,
                    c.sensors.len()
                )));
            }
        }
        Ok(())
    }
}

/// The largest ratio of a trace's time step to the expected period that is not a gap: the
/// period check accepts a median step within this ratio either way.
fn period_tolerance(c: &DeviceSpec) -> f64 {
    (1.0 + c.trace.gap_tolerance_ratio.unwrap_or(0.5)).min(2.0)
}

/// What to do with a bad data row.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RowPolicy {
    /// Stop with the row's located error (the default).
    Stop,
    /// Skip it and count it (`--skip-bad-rows`).
    Skip,
}

/// How many skipped rows are listed one by one in a report.
pub const SKIP_LIST_LEN: usize = 20;

/// Rows skipped under [`RowPolicy::Skip`].
#[derive(Debug, Clone, Default, Serialize)]
pub struct SkipReport {
    /// How many rows were skipped.
    pub count: u64,
    /// The first [`SKIP_LIST_LEN`] of them, as located messages.
    pub first: Vec<String>,
}

#[derive(Debug, Clone, Copy)]
struct Col {
    index: usize,
    conv: Conversion,
}

/// Which column feeds which quantity.
#[derive(Debug, Clone)]
struct Layout {
    time: Col,
    force: [Option<Col>; 4],
    valid: [Option<Col>; 4],
    omega_in: Col,
    omega_out: Option<Col>,
    command: Option<Col>,
    temperature: Option<Col>,
    ambient: Option<Col>,
    torque_ref: Option<Col>,
}

/// Where the rows come from.
// One per reader: the CSV reader stays inline, without a pointer hop per row.
#[allow(clippy::large_enum_variant)]
enum Input {
    Csv(CsvIn),
    Log {
        log: Box<dyn ColumnarLog>,
        /// The current row's values, by name index (and the own time base last).
        values: Vec<Option<f64>>,
    },
}

/// A trace opened against a config.
pub struct TraceReader {
    input: Input,
    resampler: Option<Resampler>,
    layout: Layout,
    policy: RowPolicy,
    time: TimeCheck,
    skipped: SkipReport,
    rows_read: u64,
    good_rows: u64,
}

/// The column, unit, piston area and the name of the setting that maps quantity `name`.
fn mapping<'a>(
    c: &'a DeviceSpec,
    overrides: &'a [ColumnOverride],
    name: &str,
) -> Option<(&'a str, &'a str, Option<f64>, String, Quantity)> {
    let &(_, canon_col, canon_unit, q) = CANONICAL.iter().find(|e| e.0 == name)?;
    let from_config: Option<&ColumnSpec> = c.trace.columns.get(name);
    let over = overrides.iter().find(|o| o.quantity == name);
    Some(match (over, from_config) {
        (Some(o), m) => (
            o.column.as_str(),
            o.unit.as_deref().unwrap_or(canon_unit),
            m.and_then(|m| m.piston_area_m2),
            format!("--column {name}"),
            q,
        ),
        (None, Some(m)) => (
            m.column.as_str(),
            m.unit.as_str(),
            m.piston_area_m2,
            format!("trace.columns.{name}"),
            q,
        ),
        (None, None) => (canon_col, canon_unit, None, name.to_string(), q),
    })
}

fn find_column(
    h: &dyn Header,
    c: &DeviceSpec,
    overrides: &[ColumnOverride],
    name: &str,
    required: bool,
) -> Result<Option<Col>, DataError> {
    let (col_name, unit, area, source, q) = mapping(c, overrides, name)
        .ok_or_else(|| h.header_error(None, format!("internal: unknown quantity {name}")))?;
    let canon_unit = CANONICAL.iter().find(|e| e.0 == name).map_or("", |e| e.2);
    let conv = column_units::conversion(q, unit, area)
        .map_err(|m| h.header_error(None, format!("{source}: {m}")))?;
    match h.column(col_name) {
        Some(index) => Ok(Some(Col { index, conv })),
        None if !required => Ok(None),
        None => {
            let mut msg = format!(
                "missing {} '{col_name}' ({} for {source}); {}: {}",
                h.what(),
                q.name(),
                h.holder(),
                h.headers_for_message()
            );
            // Same stem, other unit: a wrong-units header. Say how to map it.
            let stem = col_name
                .strip_suffix(canon_unit)
                .filter(|s| s.ends_with('_'));
            if let Some(stem) = stem
                && let Some(other) = h
                    .headers()
                    .iter()
                    .find(|x| x.starts_with(stem) && column_units::unit_suffix(q, x).is_some())
            {
                let u = column_units::unit_suffix(q, other).unwrap_or("?");
                msg = format!(
                    "missing {} '{col_name}': the trace has '{other}' in unit '{u}' instead; map it in the config: [trace.columns] {name} = {{ column = \"{other}\", unit = \"{u}\" }}, or on the command line: --column {name}={other}:{u}",
                    h.what()
                );
            }
            if h.what() == "column" && h.headers().iter().all(|x| x.parse::<f64>().is_ok()) {
                msg.push_str(" (the first line looks like data: is the header line missing?)");
            }
            Err(h.header_error(None, msg))
        }
    }
}

/// Map every quantity to its column; `time`: the log's own time base, when it has one.
fn layout(
    h: &dyn Header,
    c: &DeviceSpec,
    ov: &[ColumnOverride],
    need_reference: bool,
    time: Option<Col>,
) -> Result<Layout, DataError> {
    let time = match time {
        Some(t) => t,
        None => find_column(h, c, ov, "time", true)?
            .ok_or_else(|| h.header_error(None, "no time column".into()))?,
    };
    let n = c.sensors.len();
    let mut force = [None; 4];
    let mut valid = [None; 4];
    for i in 0..n.min(4) {
        if let Some(slot) = force.get_mut(i) {
            *slot = find_column(h, c, ov, &format!("force_{}", i + 1), true)?;
        }
        if let Some(slot) = valid.get_mut(i) {
            *slot = find_column(h, c, ov, &format!("force_{}_valid", i + 1), false)?;
        }
    }
    Ok(Layout {
        time,
        force,
        valid,
        omega_in: find_column(h, c, ov, "omega_in", true)?
            .ok_or_else(|| h.header_error(None, "no omega_in column".into()))?,
        omega_out: find_column(h, c, ov, "omega_out", c.device.kind == DeviceKind::Clutch)?,
        command: find_column(h, c, ov, "command", false)?,
        temperature: find_column(h, c, ov, "temperature", false)?,
        ambient: find_column(h, c, ov, "ambient", false)?,
        torque_ref: find_column(h, c, ov, "torque_ref", need_reference)?,
    })
}

impl Layout {
    /// The columns in use and what each carries (for a columnar log).
    fn uses(&self) -> Vec<ColumnUse> {
        let mut u = vec![ColumnUse {
            index: self.time.index,
            kind: ColumnKind::Number,
        }];
        for f in self.force.iter().flatten() {
            u.push(ColumnUse {
                index: f.index,
                kind: if f.conv.counts {
                    ColumnKind::Counts
                } else {
                    ColumnKind::Number
                },
            });
        }
        for v in self.valid.iter().flatten() {
            u.push(ColumnUse {
                index: v.index,
                kind: ColumnKind::Flag,
            });
        }
        let numbers = [
            Some(self.omega_in),
            self.omega_out,
            self.command,
            self.temperature,
            self.ambient,
            self.torque_ref,
        ];
        for n in numbers.into_iter().flatten() {
            u.push(ColumnUse {
                index: n.index,
                kind: ColumnKind::Number,
            });
        }
        u
    }
}

/// Open a columnar log and map it; the time check and resampler settings it leaves.
fn open_log(
    path: &str,
    format: LogFormat,
    c: &DeviceSpec,
    need_reference: bool,
    opts: &TraceOptions,
) -> Result<(Input, Layout, Rows), SimError> {
    let mut log = log_input::open(path, format)?;
    let ov = opts.columns.as_slice();
    let own_time = match log.own_time_unit() {
        None => None,
        Some(file_unit) => {
            let (_, mapped_unit, _, source, q) = mapping(c, ov, "time")
                .ok_or_else(|| SimError::Internal("no time quantity".into()))?;
            // The unit the file states wins: it describes the master channel itself.
            let (unit, source) = if file_unit.trim().is_empty() {
                (mapped_unit, source)
            } else {
                (file_unit, "the file's time unit".to_string())
            };
            let conv = column_units::conversion(q, unit, None)
                .map_err(|m| log_input::log_error(path, format!("{source}: {m}")))?;
            Some(Col {
                index: log.names().len(),
                conv,
            })
        }
    };
    let layout = layout(&LogHeader(&*log), c, ov, need_reference, own_time)?;
    let rows = log.start(
        &layout.uses(),
        Timing {
            device_period_s: c.device.sample_period_s,
            resample: opts.resample,
            stated_period: opts.sample_period_s.is_some(),
        },
    )?;
    let values = vec![None; log.names().len() + 1];
    Ok((Input::Log { log, values }, layout, rows))
}

impl TraceReader {
    /// Open a trace (`-` for standard input) against a config. `need_reference` makes the
    /// reference-torque column required (compare, fit).
    ///
    /// # Errors
    /// I/O and located header errors: empty file, wrong header, missing column, a header unit
    /// that disagrees with the mapping.
    pub fn open(
        path: &str,
        c: &DeviceSpec,
        policy: RowPolicy,
        need_reference: bool,
    ) -> Result<Self, SimError> {
        Self::open_with(path, c, policy, need_reference, &TraceOptions::default())
    }

    /// [`TraceReader::open`] with command-line [`TraceOptions`] (dialect, time base, column
    /// overrides, resampling). A `.mf4` or `.parquet` file is read as such
    /// ([`LogFormat::of`]).
    ///
    /// # Errors
    /// As [`TraceReader::open`], and the usage errors of [`TraceOptions::check`];
    /// `--resample` without `--sample-period-s` for a trace with one time base.
    pub fn open_with(
        path: &str,
        c: &DeviceSpec,
        policy: RowPolicy,
        need_reference: bool,
        opts: &TraceOptions,
    ) -> Result<Self, SimError> {
        opts.check(c)?;
        let format = LogFormat::of(path);
        let (input, layout, rows) = match format {
            LogFormat::Csv => {
                let csv = CsvIn::open_with(path, opts.dialect)?;
                let layout = layout(&csv, c, &opts.columns, need_reference, None)?;
                (Input::Csv(csv), layout, Rows::AsRecorded)
            }
            _ => open_log(path, format, c, need_reference, opts)?,
        };
        let resample = match rows {
            Rows::AsRecorded => opts.resample,
            Rows::OnDeviceTicks => None,
        };
        if resample.is_some() && opts.sample_period_s.is_none() {
            return Err(SimError::Usage(
                "--resample needs the trace's own period, --sample-period-s S (checked against its time stamps)".into(),
            ));
        }
        let period = match rows {
            Rows::AsRecorded => opts.sample_period_s.unwrap_or(c.device.sample_period_s),
            Rows::OnDeviceTicks => c.device.sample_period_s,
        };
        Ok(Self {
            input,
            resampler: resample.map(|m| Resampler::new(m, period, c.device.sample_period_s)),
            layout,
            policy,
            time: TimeCheck::new(
                period,
                c.trace.gap_tolerance_ratio.unwrap_or(0.5),
                period_tolerance(c),
                if opts.sample_period_s.is_some() {
                    "--sample-period-s"
                } else {
                    "device.sample_period_s"
                },
            ),
            skipped: SkipReport::default(),
            rows_read: 0,
            good_rows: 0,
        })
    }

    /// File name as given.
    pub fn file(&self) -> &str {
        match &self.input {
            Input::Csv(csv) => csv.file(),
            Input::Log { log, .. } => log.file(),
        }
    }

    /// The dialect a CSV trace is read with (`None` for another format).
    pub fn dialect(&self) -> Option<Dialect> {
        match &self.input {
            Input::Csv(csv) => Some(csv.dialect()),
            Input::Log { .. } => None,
        }
    }

    /// How an MDF4 or Parquet log is read (`None` for a CSV trace).
    pub fn log_report(&self) -> Option<LogReport> {
        match &self.input {
            Input::Csv(_) => None,
            Input::Log { log, .. } => Some(log.report()),
        }
    }

    fn header_error(&self, column: Option<usize>, message: String) -> DataError {
        match &self.input {
            Input::Csv(csv) => csv.header_error(column, message),
            Input::Log { log, .. } => LogHeader(&**log).header_error(column, message),
        }
    }

    /// What resampling did, when it is on.
    pub fn resampled(&self) -> Option<&ResampleReport> {
        self.resampler.as_ref().map(Resampler::report)
    }

    /// Whether the trace has a reference-torque column.
    pub fn has_reference(&self) -> bool {
        self.layout.torque_ref.is_some()
    }

    /// File length, when known, and bytes consumed (for progress).
    pub fn progress(&self) -> (Option<u64>, u64) {
        match &self.input {
            Input::Csv(csv) => (csv.len_bytes(), csv.bytes_read()),
            Input::Log { log, .. } => log.progress(),
        }
    }

    /// Data rows read so far (good and skipped).
    pub fn rows_read(&self) -> u64 {
        self.rows_read
    }

    /// Rows skipped so far.
    pub fn skipped(&self) -> &SkipReport {
        &self.skipped
    }

    /// The line of a last row without line terminator, if any.
    pub fn unterminated_last_line(&self) -> Option<u64> {
        match &self.input {
            Input::Csv(csv) => csv.unterminated_last_line(),
            Input::Log { .. } => None,
        }
    }

    /// Finish the time-stamp checks.
    ///
    /// # Errors
    /// A located error when the sample period does not match the config (short traces are
    /// judged here).
    pub fn finish(&mut self) -> Result<TimeReport, DataError> {
        let time_col = self.layout.time.index;
        self.time
            .finish()
            .map_err(|m| self.header_error(Some(time_col), m))
    }

    fn skip(&mut self, e: DataError) -> Result<(), DataError> {
        match self.policy {
            RowPolicy::Stop => Err(e),
            RowPolicy::Skip => {
                self.skipped.count += 1;
                if self.skipped.first.len() < SKIP_LIST_LEN {
                    self.skipped.first.push(e.to_string());
                }
                Ok(())
            }
        }
    }

    /// The next good sample (resampled onto the device's ticks when asked); `Ok(None)` at
    /// the end.
    ///
    /// # Errors
    /// The located error of a bad row under [`RowPolicy::Stop`].
    #[inline]
    pub fn next_sample(&mut self) -> Result<Option<TraceSample>, DataError> {
        match self.resampler.take() {
            None => self.next_trace_sample(),
            Some(mut r) => {
                let s = r.next(&mut || self.next_trace_sample());
                self.resampler = Some(r);
                s
            }
        }
    }

    /// The next row of the file parsed (a bad row: the inner error, skippable); `None` at the
    /// end.
    ///
    /// # Errors
    /// A log's own error (truncated, unsorted), which no row skipping can get past.
    fn next_parsed(&mut self) -> Result<Option<Result<TraceSample, DataError>>, DataError> {
        Ok(match &mut self.input {
            Input::Csv(csv) => match csv.next_row() {
                Ok(None) => None,
                Ok(Some(row)) => Some(parse_row(&row, &self.layout)),
                Err(e) => Some(Err(e)),
            },
            Input::Log { log, values } => {
                if !log.next_row(values)? {
                    return Ok(None);
                }
                let row = LogRow {
                    values,
                    log: &**log,
                    line: self.rows_read + 1,
                };
                Some(parse_row(&row, &self.layout))
            }
        })
    }

    /// The error at the end of a file without a good row.
    fn no_rows(&self) -> DataError {
        if self.rows_read == 0 {
            return match &self.input {
                Input::Csv(csv) => DataError {
                    file: csv.file().to_string(),
                    line: Some(csv.header_line() + 1),
                    column: None,
                    header: None,
                    message: "the trace has a header but no data rows".into(),
                },
                Input::Log { log, .. } => {
                    log_input::log_error(log.file(), "the log has no rows".into())
                }
            };
        }
        // Every row was skipped: an empty result is not a success.
        log_input::log_error(
            self.file(),
            format!(
                "no good data row: all {} rows were bad and skipped{}",
                self.rows_read,
                self.skipped
                    .first
                    .first()
                    .map_or(String::new(), |f| format!(" (first: {f})"))
            ),
        )
    }

    /// A located error about the time stamp of the row at `line`.
    fn time_error(&self, line: u64, message: String) -> DataError {
        let index = self.layout.time.index;
        match &self.input {
            Input::Csv(csv) => DataError {
                file: csv.file().to_string(),
                line: Some(line),
                column: Some(index + 1),
                header: csv.headers().get(index).cloned(),
                message,
            },
            Input::Log { log, .. } => log_input::log_error(
                log.file(),
                format!("{}: time: {message}", log.row_location()),
            ),
        }
    }

    /// The next good sample of the file as it is.
    fn next_trace_sample(&mut self) -> Result<Option<TraceSample>, DataError> {
        loop {
            let Some(parsed) = self.next_parsed()? else {
                if self.good_rows == 0 {
                    return Err(self.no_rows());
                }
                return Ok(None);
            };
            self.rows_read += 1;
            match parsed {
                Ok(s) => match self.time.check(s.t_s, s.line) {
                    Ok(()) => {
                        self.good_rows += 1;
                        return Ok(Some(s));
                    }
                    Err(msg) => {
                        // A wrong period is a unit error of the whole file, never skippable.
                        let fatal = msg.contains("wrong time unit");
                        let e = self.time_error(s.line, msg);
                        if fatal {
                            return Err(e);
                        }
                        self.skip(e)?;
                        self.time.count_skipped();
                    }
                },
                Err(e) => self.skip(e)?,
            }
        }
    }
}

#[inline]
fn value(row: &impl Cells, c: Col) -> Result<f64, DataError> {
    Ok(c.conv.apply(row.required_f64(c.index)?))
}

#[inline]
fn optional(row: &impl Cells, c: Option<Col>) -> Result<Option<f64>, DataError> {
    match c {
        None => Ok(None),
        Some(c) => Ok(row.f64(c.index)?.map(|v| c.conv.apply(v))),
    }
}

#[inline]
fn parse_row(row: &impl Cells, l: &Layout) -> Result<TraceSample, DataError> {
    let mut s = TraceSample {
        line: row.line(),
        t_s: value(row, l.time)?,
        force_valid: [true; 4],
        omega_in_rad_s: value(row, l.omega_in)?,
        omega_out_rad_s: optional(row, l.omega_out)?.unwrap_or(0.0),
        command: optional(row, l.command)?,
        temp_c: optional(row, l.temperature)?,
        ambient_c: optional(row, l.ambient)?,
        torque_ref_nm: optional(row, l.torque_ref)?,
        ..TraceSample::default()
    };
    for ((slot, valid), (fc, vc)) in s
        .force
        .iter_mut()
        .zip(s.force_valid.iter_mut())
        .zip(l.force.iter().zip(&l.valid))
    {
        if let Some(vc) = vc {
            *valid = row.valid_bit(vc.index)?;
        }
        let Some(fc) = fc else { continue };
        let raw = match row.f64(fc.index)? {
            Some(v) => v,
            // An empty force cell is a missing reading: only allowed when the channel says so.
            None if !*valid => continue,
            None => {
                return Err(row.error(
                    fc.index,
                    format!("{} where a number is required", row.empty()),
                ));
            }
        };
        *slot = if fc.conv.counts {
            if raw.fract() != 0.0 || raw < f64::from(i32::MIN) || raw > f64::from(i32::MAX) {
                return Err(row.error(
                    fc.index,
                    format!("ADC counts must be a whole number within the 32-bit range, got {raw}"),
                ));
            }
            // Whole and in range, checked just above.
            #[allow(clippy::cast_possible_truncation)]
            let n = raw as i32;
            Channel::Counts(n)
        } else {
            Channel::Newtons(fc.conv.apply(raw))
        };
    }
    Ok(s)
}
