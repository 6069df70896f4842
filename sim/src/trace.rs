//! Input traces: the config's column mapping applied to a CSV file, row by row, with unit
//! conversion, time-stamp checks and the bad-row policy.
//!
//! Header names carry their unit (`t_s`, `force_1_N`, `omega_in_rad_s`, `torque_ref_Nm`,
//! `temp_C`); `[trace.columns]` in the config maps other names and units. A bad row stops the
//! run with its line, column and header named, unless [`RowPolicy::Skip`] is chosen; then it is
//! skipped and counted in [`SkipReport`], never dropped silently.

use serde::Serialize;

use crate::column_units::{self, Conversion};
use crate::csv_input::{CsvIn, Dialect, DialectChoice, Row, echo};
use crate::error::{DataError, SimError};
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
    /// [`SimError::Usage`] for a period that is not a positive number, `--resample` without
    /// `--sample-period-s`, a stated period the estimator would be stepped at wrongly (another
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
        } else if self.resample.is_some() {
            return Err(SimError::Usage(
                "--resample needs the trace's own period, --sample-period-s S (checked against its time stamps)".into(),
            ));
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

/// A trace opened against a config.
pub struct TraceReader {
    csv: CsvIn,
    resampler: Option<Resampler>,
    layout: Layout,
    policy: RowPolicy,
    time: TimeCheck,
    skipped: SkipReport,
    rows_read: u64,
    good_rows: u64,
}

fn find_column(
    csv: &CsvIn,
    c: &DeviceSpec,
    overrides: &[ColumnOverride],
    name: &str,
    required: bool,
) -> Result<Option<Col>, DataError> {
    let &(_, canon_col, canon_unit, q) = CANONICAL
        .iter()
        .find(|e| e.0 == name)
        .ok_or_else(|| csv.header_error(None, format!("internal: unknown quantity {name}")))?;
    let from_config: Option<&ColumnSpec> = c.trace.columns.get(name);
    let over = overrides.iter().find(|o| o.quantity == name);
    let (col_name, unit, area, source) = match (over, from_config) {
        (Some(o), m) => (
            o.column.as_str(),
            o.unit.as_deref().unwrap_or(canon_unit),
            m.and_then(|m| m.piston_area_m2),
            format!("--column {name}"),
        ),
        (None, Some(m)) => (
            m.column.as_str(),
            m.unit.as_str(),
            m.piston_area_m2,
            format!("trace.columns.{name}"),
        ),
        (None, None) => (canon_col, canon_unit, None, name.to_string()),
    };
    let conv = column_units::conversion(q, unit, area)
        .map_err(|m| csv.header_error(None, format!("{source}: {m}")))?;
    match csv.column(col_name) {
        Some(index) => Ok(Some(Col { index, conv })),
        None if !required => Ok(None),
        None => {
            let mut msg = format!(
                "missing column '{col_name}' ({} for {source}); the header has: {}",
                q.name(),
                csv.headers_for_message()
            );
            // Same stem, other unit: a wrong-units header. Say how to map it.
            let stem = col_name
                .strip_suffix(canon_unit)
                .filter(|s| s.ends_with('_'));
            if let Some(stem) = stem
                && let Some(other) = csv
                    .headers()
                    .iter()
                    .find(|h| h.starts_with(stem) && column_units::unit_suffix(q, h).is_some())
            {
                let u = column_units::unit_suffix(q, other).unwrap_or("?");
                msg = format!(
                    "missing column '{col_name}': the trace has '{other}' in unit '{u}' instead; map it in the config: [trace.columns] {name} = {{ column = \"{other}\", unit = \"{u}\" }}, or on the command line: --column {name}={other}:{u}"
                );
            }
            if csv.headers().iter().all(|h| h.parse::<f64>().is_ok()) {
                msg.push_str(" (the first line looks like data: is the header line missing?)");
            }
            Err(csv.header_error(None, msg))
        }
    }
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
    /// overrides, resampling).
    ///
    /// # Errors
    /// As [`TraceReader::open`], and the usage errors of [`TraceOptions::check`].
    pub fn open_with(
        path: &str,
        c: &DeviceSpec,
        policy: RowPolicy,
        need_reference: bool,
        opts: &TraceOptions,
    ) -> Result<Self, SimError> {
        opts.check(c)?;
        let csv = CsvIn::open_with(path, opts.dialect)?;
        let ov = opts.columns.as_slice();
        let time = find_column(&csv, c, ov, "time", true)?
            .ok_or_else(|| csv.header_error(None, "no time column".into()))?;
        let n = c.sensors.len();
        let mut force = [None; 4];
        let mut valid = [None; 4];
        for i in 0..n.min(4) {
            if let Some(slot) = force.get_mut(i) {
                *slot = find_column(&csv, c, ov, &format!("force_{}", i + 1), true)?;
            }
            if let Some(slot) = valid.get_mut(i) {
                *slot = find_column(&csv, c, ov, &format!("force_{}_valid", i + 1), false)?;
            }
        }
        let layout = Layout {
            time,
            force,
            valid,
            omega_in: find_column(&csv, c, ov, "omega_in", true)?
                .ok_or_else(|| csv.header_error(None, "no omega_in column".into()))?,
            omega_out: find_column(
                &csv,
                c,
                ov,
                "omega_out",
                c.device.kind == DeviceKind::Clutch,
            )?,
            command: find_column(&csv, c, ov, "command", false)?,
            temperature: find_column(&csv, c, ov, "temperature", false)?,
            ambient: find_column(&csv, c, ov, "ambient", false)?,
            torque_ref: find_column(&csv, c, ov, "torque_ref", need_reference)?,
        };
        let period = opts.sample_period_s.unwrap_or(c.device.sample_period_s);
        Ok(Self {
            csv,
            resampler: opts
                .resample
                .map(|m| Resampler::new(m, period, c.device.sample_period_s)),
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
        self.csv.file()
    }

    /// The dialect the trace is read with.
    pub fn dialect(&self) -> Dialect {
        self.csv.dialect()
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
        (self.csv.len_bytes(), self.csv.bytes_read())
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
        self.csv.unterminated_last_line()
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
            .map_err(|m| self.csv.header_error(Some(time_col), m))
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

    /// The next good sample of the file as it is.
    fn next_trace_sample(&mut self) -> Result<Option<TraceSample>, DataError> {
        loop {
            let parsed = match self.csv.next_row() {
                Ok(None) => {
                    if self.rows_read == 0 {
                        let line = self.csv.header_line() + 1;
                        return Err(DataError {
                            file: self.csv.file().to_string(),
                            line: Some(line),
                            column: None,
                            header: None,
                            message: "the trace has a header but no data rows".into(),
                        });
                    }
                    if self.good_rows == 0 {
                        // Every row was skipped: an empty result is not a success.
                        return Err(DataError {
                            file: self.csv.file().to_string(),
                            line: None,
                            column: None,
                            header: None,
                            message: format!(
                                "no good data row: all {} rows were bad and skipped{}",
                                self.rows_read,
                                self.skipped
                                    .first
                                    .first()
                                    .map_or(String::new(), |f| format!(" (first: {f})"))
                            ),
                        });
                    }
                    return Ok(None);
                }
                Ok(Some(row)) => parse_row(&row, &self.layout),
                Err(e) => Err(e),
            };
            self.rows_read += 1;
            match parsed {
                Ok(s) => match self.time.check(s.t_s, s.line) {
                    Ok(()) => {
                        self.good_rows += 1;
                        return Ok(Some(s));
                    }
                    Err(msg) => {
                        let e = DataError {
                            file: self.csv.file().to_string(),
                            line: Some(s.line),
                            column: Some(self.layout.time.index + 1),
                            header: self.csv.headers().get(self.layout.time.index).cloned(),
                            message: msg,
                        };
                        // A wrong period is a unit error of the whole file, never skippable.
                        if e.message.contains("wrong time unit") {
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

fn value(row: &Row<'_>, c: Col) -> Result<f64, DataError> {
    Ok(c.conv.apply(row.required_f64(c.index)?))
}

fn optional(row: &Row<'_>, c: Option<Col>) -> Result<Option<f64>, DataError> {
    match c {
        None => Ok(None),
        Some(c) => Ok(row.f64(c.index)?.map(|v| c.conv.apply(v))),
    }
}

fn parse_row(row: &Row<'_>, l: &Layout) -> Result<TraceSample, DataError> {
    let mut s = TraceSample {
        line: row.line,
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
            // The usual spellings straight from the bytes (no allocation); anything else
            // (blanks to trim, other words) through the trimmed text.
            *valid = match row.bytes(vc.index) {
                b"1" => true,
                b"0" => false,
                _ => match row.text(vc.index) {
                    "1" | "1.0" | "true" => true,
                    "0" | "0.0" | "false" => false,
                    other => {
                        return Err(row.error(
                            vc.index,
                            format!("valid bit must be 0 or 1, got '{}'", echo(other)),
                        ));
                    }
                },
            };
        }
        let Some(fc) = fc else { continue };
        let raw = match row.f64(fc.index)? {
            Some(v) => v,
            // An empty force cell is a missing reading: only allowed when the channel says so.
            None if !*valid => continue,
            None => return Err(row.error(fc.index, "empty cell where a number is required".into())),
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
