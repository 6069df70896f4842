//! `replay`: a trace and a config in, an estimate trace out, through the estimator behind
//! [`clampwise_convert`]. Streams row by row: memory does not grow with the trace length.

use std::collections::BTreeMap;
use std::time::Instant;

use indicatif::ProgressBar;
use serde::Serialize;

use crate::build_core::CoreDevice;
use crate::config::LoadedConfig;
use crate::csv_input::Dialect;
use crate::error::SimError;
use crate::estimate::EstimateOut;
use crate::log_input::{LogFormat, LogReport};
use crate::plot::Envelope;
use crate::resample::ResampleReport;
use crate::timestamps::TimeReport;
use crate::trace::{RowPolicy, SkipReport, TraceOptions, TraceReader};
use clampwise_convert::{
    self as convert, ContactState, EstimateRow, Flags, SampleEstimator, TraceSample,
};

/// The caution printed with every human summary.
pub use clampwise_device::CAUTION;

/// Name of the estimator in use, written into outputs so a reader knows what produced them.
pub const ESTIMATOR_NAME: &str = "clampwise_core::estimator::Estimator::step";

/// Counts and extremes of a replay.
///
/// Rows per state and per flag are counted in fixed arrays (no map lookup or allocation per
/// row) and named only when read ([`Tally::states`], [`Tally::flags`]) or serialised; the
/// JSON form is `{rows, states: {name: rows}, flags: {name: rows}, max_…}` with only the
/// states and flags that occurred.
#[derive(Debug, Clone, Default)]
pub struct Tally {
    /// Rows replayed.
    pub rows: u64,
    /// Rows per state, in [`ContactState::ALL`] order.
    state_rows: [u64; 5],
    /// Rows per flag, by bit of the core's flags word.
    flag_rows: [u64; 32],
    /// Largest |torque|, N·m.
    pub max_abs_torque_nm: f64,
    /// Largest capacity, N·m.
    pub max_capacity_nm: f64,
    /// Largest lining temperature, °C.
    pub max_lining_temp_c: f64,
    /// Largest clamp force, N.
    pub max_clamp_force_n: f64,
}

fn state_index(s: ContactState) -> usize {
    match s {
        ContactState::Slipping => 0,
        ContactState::Holding => 1,
        ContactState::Released => 2,
        ContactState::Unavailable => 3,
        ContactState::SlipUnknown => 4,
    }
}

impl Tally {
    /// Count one row.
    pub fn add(&mut self, r: &EstimateRow) {
        self.rows += 1;
        if let Some(n) = self.state_rows.get_mut(state_index(r.state)) {
            *n += 1;
        }
        let mut bits = r.flags.bits();
        while bits != 0 {
            if let Some(n) = self.flag_rows.get_mut(bits.trailing_zeros() as usize) {
                *n += 1;
            }
            bits &= bits - 1;
        }
        if let Some(t) = r.torque_nm {
            self.max_abs_torque_nm = self.max_abs_torque_nm.max(t.abs());
        }
        if let Some(c) = r.capacity_nm {
            self.max_capacity_nm = self.max_capacity_nm.max(c);
        }
        self.max_lining_temp_c = self.max_lining_temp_c.max(r.lining_temp_c);
        self.max_clamp_force_n = self.max_clamp_force_n.max(r.clamp_force_n);
    }

    /// Rows per state that occurred, by the state's name.
    pub fn states(&self) -> BTreeMap<&'static str, u64> {
        ContactState::ALL
            .into_iter()
            .filter_map(|st| {
                let n = self.state_rows.get(state_index(st)).copied().unwrap_or(0);
                (n > 0).then_some((st.name(), n))
            })
            .collect()
    }

    /// Rows per flag that occurred, by the core's flag name.
    pub fn flags(&self) -> BTreeMap<&'static str, u64> {
        Flags::all()
            .iter_names()
            .filter_map(|(name, f)| {
                let n = self
                    .flag_rows
                    .get(f.bits().trailing_zeros() as usize)
                    .copied()
                    .unwrap_or(0);
                (n > 0).then_some((name, n))
            })
            .collect()
    }
}

impl Serialize for Tally {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        #[derive(Serialize)]
        struct View {
            rows: u64,
            states: BTreeMap<&'static str, u64>,
            flags: BTreeMap<&'static str, u64>,
            max_abs_torque_nm: f64,
            max_capacity_nm: f64,
            max_lining_temp_c: f64,
            max_clamp_force_n: f64,
        }
        View {
            rows: self.rows,
            states: self.states(),
            flags: self.flags(),
            max_abs_torque_nm: self.max_abs_torque_nm,
            max_capacity_nm: self.max_capacity_nm,
            max_lining_temp_c: self.max_lining_temp_c,
            max_clamp_force_n: self.max_clamp_force_n,
        }
        .serialize(s)
    }
}

/// What one replay did.
#[derive(Debug, Clone, Serialize)]
pub struct ReplaySummary {
    /// Input trace.
    pub trace: String,
    /// Estimate file written.
    pub output: String,
    /// Estimator used.
    pub estimator: &'static str,
    /// Separator and decimal mark a CSV trace was read with, and where each came from.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dialect: Option<Dialect>,
    /// How an MDF4 or Parquet log was read: its channel groups, and how groups at other
    /// rates were aligned onto the device's ticks.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub log: Option<LogReport>,
    /// The trace's period stated with `--sample-period-s`, s (the time check's base).
    pub sample_period_s: Option<f64>,
    /// Resampling onto the device's period (`--resample`): method, periods, rows in and out.
    pub resample: Option<ResampleReport>,
    /// The estimate columns written (`--columns`); `None`: all of them.
    pub columns: Option<Vec<String>>,
    /// Data rows read (good and skipped).
    pub rows_read: u64,
    /// Counts and extremes.
    pub tally: Tally,
    /// Skipped rows (with `--skip-bad-rows`).
    pub skipped: SkipReport,
    /// Time-stamp checks.
    pub time: TimeReport,
    /// A last line without terminator (its values were used).
    pub unterminated_last_line: Option<u64>,
    /// Wall time, s.
    pub elapsed_s: f64,
    /// Throughput, rows/s.
    pub rows_per_s: f64,
    /// Peak resident memory of the whole process at the end of this replay, bytes (Linux).
    pub peak_rss_bytes: Option<u64>,
}

/// Options of one replay.
#[derive(Clone, Default)]
pub struct ReplayOptions {
    /// Skip and count bad rows instead of stopping.
    pub skip_bad_rows: bool,
    /// Progress bar to drive (by bytes read).
    pub progress: Option<ProgressBar>,
    /// Dialect, time base, column overrides and resampling of the trace.
    pub trace: TraceOptions,
    /// Estimate columns to write, as indices into [`crate::estimate::HEADER`] in output
    /// order (`--columns`); `None`: all.
    pub columns: Option<Vec<usize>>,
}

/// Run every sample of `reader` through `est`, handing each pair to `sink`.
///
/// # Errors
/// The first located data error (under [`RowPolicy::Stop`]) or the sink's error.
pub fn run_stream(
    reader: &mut TraceReader,
    est: &mut dyn SampleEstimator,
    progress: Option<&ProgressBar>,
    mut sink: impl FnMut(&TraceSample, &EstimateRow) -> Result<(), SimError>,
) -> Result<TimeReport, SimError> {
    if let (Some(pb), (Some(len), _)) = (progress, reader.progress()) {
        pb.set_length(len);
    }
    let mut n: u64 = 0;
    while let Some(s) = reader.next_sample()? {
        let row = est.step(&s);
        sink(&s, &row)?;
        n += 1;
        if n.is_multiple_of(8192)
            && let Some(pb) = progress
        {
            pb.set_position(reader.progress().1);
        }
    }
    if let Some(pb) = progress {
        pb.set_position(reader.progress().1);
    }
    Ok(reader.finish()?)
}

/// Replay one trace into an estimate file, collecting plot points when `plot` is given.
///
/// # Errors
/// I/O, config-to-trace mapping and located data errors. On error the output is left only as
/// `OUTPUT.partial`, never under its final name.
pub fn replay_file(
    cfg: &LoadedConfig,
    core: &CoreDevice,
    input: &str,
    output: &str,
    opts: &ReplayOptions,
    mut plot: Option<&mut Envelope>,
) -> Result<ReplaySummary, SimError> {
    let start = Instant::now();
    let policy = if opts.skip_bad_rows {
        RowPolicy::Skip
    } else {
        RowPolicy::Stop
    };
    let mut reader = TraceReader::open_with(input, &cfg.config, policy, false, &opts.trace)?;
    let comments = vec![
        format!("clampwise estimate of {input} with config {}", cfg.file),
        format!("device: {}", cfg.config.device.name),
        format!("estimator: {ESTIMATOR_NAME}"),
        CAUTION.to_string(),
    ];
    let mut writer = EstimateOut::create(output, &comments, opts.columns.clone())?;
    let mut est = convert::new_estimator(&cfg.config, core)
        .map_err(|e| SimError::Internal(format!("starting state: {e}")))?;
    let mut tally = Tally::default();
    let result = run_stream(
        &mut reader,
        est.as_mut(),
        opts.progress.as_ref(),
        |sample, row| {
            tally.add(row);
            if let Some(d) = plot.as_deref_mut() {
                d.push(row, Some(sample));
            }
            writer.write(row)
        },
    );
    let time = match result {
        Ok(t) => t,
        Err(e) => {
            let left = writer.abandon(&e.to_string());
            return Err(match (e, left) {
                (SimError::Data(mut d), Some(p)) => {
                    d.message.push_str(&format!(
                        " [output not written; partial rows left in {}]",
                        p.display()
                    ));
                    SimError::Data(d)
                }
                (e, _) => e,
            });
        }
    };
    writer.commit()?;
    let elapsed = start.elapsed().as_secs_f64();
    Ok(ReplaySummary {
        trace: input.to_string(),
        output: output.to_string(),
        estimator: ESTIMATOR_NAME,
        dialect: reader.dialect(),
        log: reader.log_report(),
        sample_period_s: opts.trace.sample_period_s,
        resample: reader.resampled().cloned(),
        columns: opts.columns.as_ref().map(|c| {
            c.iter()
                .filter_map(|&i| crate::estimate::HEADER.get(i).map(|h| (*h).to_string()))
                .collect()
        }),
        rows_read: reader.rows_read(),
        rows_per_s: rows_per_s(tally.rows, elapsed),
        tally,
        skipped: reader.skipped().clone(),
        time,
        unterminated_last_line: reader.unterminated_last_line(),
        elapsed_s: elapsed,
        peak_rss_bytes: crate::memory::peak_rss_bytes(),
    })
}

/// Rows per second, 0 for a zero duration.
pub fn rows_per_s(rows: u64, elapsed_s: f64) -> f64 {
    // Row counts stay far below 2⁵³.
    #[allow(clippy::cast_precision_loss)]
    let r = rows as f64;
    if elapsed_s > 0.0 { r / elapsed_s } else { 0.0 }
}

/// Human lines about how a log was read.
pub fn log_lines(l: &LogReport) -> String {
    let mut o = format!(
        "  read as: {}\n",
        match l.format {
            LogFormat::Csv => "CSV",
            LogFormat::Mdf4 => "ASAM MDF4",
            LogFormat::Parquet => "Parquet",
        }
    );
    for src in &l.sources {
        o.push_str(&format!(
            "    {}'{}': {} samples{}\n",
            src.group
                .map_or(String::new(), |g| format!("channel group {g} ")),
            src.name,
            src.samples,
            src.mean_period_s
                .map_or(String::new(), |p| format!(", mean period {p} s"))
        ));
    }
    if let Some(m) = l.aligned {
        o.push_str(&format!(
            "  channel groups aligned onto the device's sample period by {} (--resample {})\n",
            match m {
                crate::resample::Resample::Hold =>
                    "zero-order hold: the last sample at or before each tick",
                crate::resample::Resample::Linear =>
                    "linear interpolation between the samples either side of each tick",
            },
            match m {
                crate::resample::Resample::Hold => "hold",
                crate::resample::Resample::Linear => "linear",
            }
        ));
    }
    o
}

/// Human lines of a summary.
pub fn human(s: &ReplaySummary) -> String {
    let mut o = String::new();
    o.push_str(&format!("replayed {} → {}\n", s.trace, s.output));
    if let Some(d) = &s.dialect {
        o.push_str(&format!("  read as: {d}\n"));
    }
    if let Some(l) = &s.log {
        o.push_str(&log_lines(l));
    }
    if let Some(r) = &s.resample {
        o.push_str(&format!(
            "  resampled ({}) from the trace's {} s to the device's {} s period: {} samples in, {} out (the estimate's line is the source line of the sample {})\n",
            match r.method {
                crate::resample::Resample::Hold => "zero-order hold",
                crate::resample::Resample::Linear => "linear interpolation",
            },
            r.trace_period_s,
            r.device_period_s,
            r.input_rows,
            r.output_rows,
            match r.method {
                crate::resample::Resample::Hold => "held",
                crate::resample::Resample::Linear => "before each tick",
            }
        ));
    } else if let Some(p) = s.sample_period_s {
        o.push_str(&format!("  time base: {p} s (--sample-period-s)\n"));
    }
    if let Some(c) = &s.columns {
        o.push_str(&format!("  columns written: {}\n", c.join(", ")));
    }
    o.push_str(&format!(
        "  rows: {} read, {} replayed, {} skipped\n",
        s.rows_read, s.tally.rows, s.skipped.count
    ));
    for line in &s.skipped.first {
        o.push_str(&format!("    skipped: {line}\n"));
    }
    if s.skipped.count > s.skipped.first.len() as u64 {
        o.push_str(&format!(
            "    … and {} more skipped rows\n",
            s.skipped.count - s.skipped.first.len() as u64
        ));
    }
    let t = &s.time;
    o.push_str(&format!(
        "  time: {:.3} … {:.3} s, median step {} s, {} duplicate stamps{}, {} gaps{} (largest step {} s), {} non-monotonic rows skipped\n",
        t.first_t_s.unwrap_or(0.0),
        t.last_t_s.unwrap_or(0.0),
        t.median_step_s.map_or("?".into(), crate::timestamps::step_text),
        t.duplicates,
        t.first_duplicate_line.map_or(String::new(), |l| format!(" (first at line {l})")),
        t.gaps,
        t.first_gap_line.map_or(String::new(), |l| format!(" (first at line {l})")),
        crate::timestamps::step_text(t.largest_step_s),
        t.non_monotonic_skipped
    ));
    if let Some(l) = s.unterminated_last_line {
        o.push_str(&format!("  note: last line {l} has no line terminator (its values were used; check the file was not cut)\n"));
    }
    let states: Vec<String> = s
        .tally
        .states()
        .iter()
        .map(|(k, v)| format!("{k} {v}"))
        .collect();
    o.push_str(&format!("  states: {}\n", states.join(", ")));
    let flags = s.tally.flags();
    if !flags.is_empty() {
        let f: Vec<String> = flags.iter().map(|(k, v)| format!("{k} {v}")).collect();
        o.push_str(&format!("  flagged rows: {}\n", f.join(", ")));
    }
    o.push_str(&format!(
        "  max |torque| {:.1} N·m, max capacity {:.1} N·m, max clamp force {:.0} N, max lining temperature {:.1} °C\n",
        s.tally.max_abs_torque_nm, s.tally.max_capacity_nm, s.tally.max_clamp_force_n, s.tally.max_lining_temp_c
    ));
    o.push_str(&format!(
        "  {:.2} s, {:.0} rows/s, peak memory {}; estimator: {}\n",
        s.elapsed_s,
        s.rows_per_s,
        s.peak_rss_bytes
            .map_or("?".into(), |b| format!("{:.1} MiB", b as f64 / 1_048_576.0)),
        s.estimator
    ));
    o
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn row(state: ContactState, flags: Flags) -> EstimateRow {
        EstimateRow {
            line: 2,
            t_s: 0.0,
            torque_nm: Some(-5.0),
            capacity_nm: Some(7.0),
            uncertainty_nm: 1.0,
            mu: 0.4,
            radius_m: 0.6,
            clamp_force_n: 100.0,
            slip_speed_rad_s: 1.0,
            lining_temp_c: 30.0,
            bedding: 0.0,
            wear_m: 0.0,
            correction: 1.0,
            state,
            flags,
            torque_ref_nm: None,
        }
    }

    /// Counted by name as the summaries show them: only what occurred, each flag of a row
    /// counted once, names sorted (the JSON keys of `summary.json`).
    #[test]
    fn tally_counts_states_and_flags_by_name() {
        let mut t = Tally::default();
        let both = Flags::TORQUE_BOUNDED | Flags::ADAPTATION_FROZEN;
        t.add(&row(ContactState::Holding, both));
        t.add(&row(ContactState::Holding, Flags::TORQUE_BOUNDED));
        t.add(&row(ContactState::Slipping, Flags::empty()));
        t.add(&row(
            ContactState::Slipping,
            Flags::LINING_WORN | Flags::SENSOR_DEGRADED,
        ));
        t.add(&row(ContactState::Slipping, Flags::empty()));
        let json = serde_json::to_value(&t).unwrap();
        assert_eq!(
            json,
            serde_json::json!({
                "rows": 5,
                "states": {"holding": 2, "slipping": 3},
                "flags": {
                    "ADAPTATION_FROZEN": 1,
                    "LINING_WORN": 1,
                    "SENSOR_DEGRADED": 1,
                    "TORQUE_BOUNDED": 2
                },
                "max_abs_torque_nm": 5.0,
                "max_capacity_nm": 7.0,
                "max_lining_temp_c": 30.0,
                "max_clamp_force_n": 100.0
            })
        );
        assert_eq!(t.states().get("released"), None);
        let names: Vec<&str> = t.flags().into_keys().collect();
        assert_eq!(
            names,
            [
                "ADAPTATION_FROZEN",
                "LINING_WORN",
                "SENSOR_DEGRADED",
                "TORQUE_BOUNDED"
            ]
        );
    }
}
