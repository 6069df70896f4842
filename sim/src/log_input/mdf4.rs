//! ASAM MDF4 logs (`.mf4`, MDF 4.10 and later), read through `mdf4_rs::MdfIndex`: the file's
//! block structure is indexed with streaming reads, then each mapped channel is read whole
//! (uncompressed DT, deflate DZ and transposed-deflate DZ blocks alike).
//!
//! - Channel names are the columns: `[trace.columns]` and `--column` name channels as they
//!   name CSV header fields. A channel's time is the master channel of its channel group, in
//!   the master's unit (seconds when the file states none).
//! - All mapped channels in one group: the group's records are the rows, checked and resampled
//!   exactly as a CSV's (`--sample-period-s`, `--resample`).
//! - Mapped channels in several groups (recorded at different rates): the groups are aligned
//!   onto the device's sample ticks ([`super::align`]) by zero-order hold, or by linear
//!   interpolation with `--resample linear`; the summary says which, never silently.
//! - An invalid sample (its invalidation bit set) is a missing value, as an empty CSV cell.
//!
//! Memory: the mapped channels and their groups' time stamps are held in memory, 8 bytes per
//! value (plus, while one channel is being decoded, the library's decoded values).
//!
//! Errors name the file and where: a truncated file (the block past the end of the file), a
//! missing channel (with the channels the file has), a channel in two groups, time stamps that
//! do not increase (the group and the sample index).

use mdf4_rs::{DecodedValue, FileRangeReader, MdfIndex};

use super::align::Ticks;
use super::{
    ColumnKind, ColumnUse, ColumnarLog, LogFormat, LogReport, Rows, SourceReport, Timing, log_error,
};
use crate::error::{DataError, SimError};
use crate::resample::Resample;

/// Channel type of a master channel (time) in a CN block [pub: ASAM MDF 4.2, cn_type 2].
const MASTER: u8 = 2;
/// Channel type of a virtual master channel [pub: ASAM MDF 4.2, cn_type 3].
const VIRTUAL_MASTER: u8 = 3;

/// A mapped channel's values.
struct Column {
    /// Index into [`Mdf4Log::groups`].
    group: usize,
    kind: ColumnKind,
    values: Vec<Option<f64>>,
}

/// A channel group in use: its time stamps and the sample the current row is at.
struct Group {
    /// Index in the file.
    index: usize,
    name: String,
    time: Vec<f64>,
    cursor: usize,
}

enum Timeline {
    /// One group's records as they are.
    Records { next: usize },
    /// The device's ticks over several groups.
    Ticks { ticks: Ticks, tick: f64 },
}

/// An MDF4 file opened for reading.
pub struct Mdf4Log {
    file: String,
    file_size: u64,
    index: MdfIndex,
    /// Non-master channel names, first occurrence of each, in file order.
    names: Vec<String>,
    /// Where each name is: (group, channel) of every occurrence.
    places: Vec<Vec<(usize, usize)>>,
    /// The unit of the masters (of the first group that has one).
    time_unit: String,
    groups: Vec<Group>,
    columns: Vec<(usize, Column)>,
    timeline: Timeline,
}

fn group_label(index: &MdfIndex, g: usize) -> String {
    let name = index
        .channel_groups
        .get(g)
        .and_then(|c| c.name.as_deref())
        .unwrap_or("");
    format!("channel group {g} ('{name}')")
}

fn number(v: Option<DecodedValue>) -> Option<f64> {
    v.and_then(|v| v.as_f64()).filter(|x| x.is_finite())
}

impl Mdf4Log {
    /// Open `path` and index its blocks.
    ///
    /// # Errors
    /// [`SimError::Io`] when it cannot be opened; a data error when it is not a readable MDF4
    /// file (not MDF, an older version, a block past the end of a truncated file).
    pub fn open(path: &str) -> Result<Self, SimError> {
        let file_size = std::fs::metadata(path)
            .map_err(|e| SimError::io(path, e))?
            .len();
        let index = MdfIndex::from_file_streaming(path).map_err(|e| {
            let why = match e {
                mdf4_rs::Error::IOError(io) if io.kind() == std::io::ErrorKind::UnexpectedEof => {
                    format!(
                        "truncated MDF4 file: a block of its structure lies past the end of the file ({file_size} bytes)"
                    )
                }
                mdf4_rs::Error::TooShortBuffer {
                    actual, expected, ..
                } => format!(
                    "truncated MDF4 file: a block of its structure needs {expected} bytes, {actual} are left before the end of the file ({file_size} bytes)"
                ),
                e => format!("not a readable MDF4 file: {e}"),
            };
            log_error(path, why)
        })?;
        let mut names: Vec<String> = Vec::new();
        let mut places: Vec<Vec<(usize, usize)>> = Vec::new();
        let mut time_unit = None;
        for (g, group) in index.channel_groups.iter().enumerate() {
            for (c, ch) in group.channels.iter().enumerate() {
                if matches!(ch.channel_type, MASTER | VIRTUAL_MASTER) {
                    if time_unit.is_none() {
                        time_unit = ch.unit.clone().filter(|u| !u.trim().is_empty());
                    }
                    continue;
                }
                let name = ch.name.clone().unwrap_or_default();
                match names.iter().position(|n| *n == name) {
                    Some(i) => {
                        if let Some(p) = places.get_mut(i) {
                            p.push((g, c));
                        }
                    }
                    None => {
                        names.push(name);
                        places.push(vec![(g, c)]);
                    }
                }
            }
        }
        Ok(Self {
            file: path.to_string(),
            file_size,
            index,
            names,
            places,
            time_unit: time_unit.unwrap_or_default(),
            groups: Vec::new(),
            columns: Vec::new(),
            timeline: Timeline::Records { next: 0 },
        })
    }

    fn error(&self, message: String) -> SimError {
        log_error(&self.file, message).into()
    }

    /// Check that a group's data blocks lie within the file.
    fn check_blocks(&self, g: usize) -> Result<(), SimError> {
        let Some(group) = self.index.channel_groups.get(g) else {
            return Ok(());
        };
        for b in &group.data_blocks {
            let end = b.file_offset.saturating_add(b.size);
            if end > self.file_size {
                return Err(self.error(format!(
                    "truncated MDF4 file: {}: the data block at byte {} needs {} bytes, the file ends at byte {}",
                    group_label(&self.index, g),
                    b.file_offset,
                    b.size,
                    self.file_size
                )));
            }
        }
        Ok(())
    }

    /// Read one channel's values, checking the group's record count.
    fn read_channel(
        &mut self,
        reader: &mut FileRangeReader,
        g: usize,
        c: usize,
    ) -> Result<Vec<Option<f64>>, SimError> {
        self.check_blocks(g)?;
        let label = || {
            let ch = self
                .index
                .get_channel_info(g, c)
                .and_then(|ch| ch.name.clone())
                .unwrap_or_default();
            format!("{}, channel '{ch}'", group_label(&self.index, g))
        };
        let raw = self
            .index
            .read_channel_values(g, c, reader)
            .map_err(|e| self.error(format!("{}: cannot read its values: {e}", label())))?;
        let expected = self
            .index
            .channel_groups
            .get(g)
            .map_or(0, |x| x.record_count);
        if (raw.len() as u64) < expected {
            return Err(self.error(format!(
                "truncated MDF4 file: {}: {} of its {expected} records are in the file",
                label(),
                raw.len()
            )));
        }
        Ok(raw.into_iter().map(number).collect())
    }

    /// Read a group's master channel and check its time stamps increase.
    fn read_time(&mut self, reader: &mut FileRangeReader, g: usize) -> Result<Group, SimError> {
        let master = self
            .index
            .channel_groups
            .get(g)
            .and_then(|x| x.channels.iter().position(|ch| ch.channel_type == MASTER));
        let Some(m) = master else {
            return Err(self.error(format!(
                "{} has no master (time) channel stored in its records",
                group_label(&self.index, g)
            )));
        };
        let values = self.read_channel(reader, g, m)?;
        let mut time = Vec::with_capacity(values.len());
        for (i, v) in values.into_iter().enumerate() {
            let Some(t) = v else {
                return Err(self.error(format!(
                    "{}: sample index {i}: the time stamp is missing or not a finite number",
                    group_label(&self.index, g)
                )));
            };
            if let Some(&before) = time.last()
                && t <= before
            {
                return Err(self.error(format!(
                    "{}: sample index {i}: time does not increase ({t} s after {before} s); the log must be sorted by time",
                    group_label(&self.index, g)
                )));
            }
            time.push(t);
        }
        if time.is_empty() {
            return Err(self.error(format!("{} has no samples", group_label(&self.index, g))));
        }
        let name = self
            .index
            .channel_groups
            .get(g)
            .and_then(|x| x.name.clone())
            .unwrap_or_default();
        Ok(Group {
            index: g,
            name,
            time,
            cursor: 0,
        })
    }

    /// The (group, channel) of a used name; an error when it is in several groups.
    fn place(&self, name_index: usize) -> Result<(usize, usize), SimError> {
        let places = self.places.get(name_index).map_or(&[][..], Vec::as_slice);
        match places {
            [one] => Ok(*one),
            [] => Err(SimError::Internal(format!(
                "no channel at name index {name_index}"
            ))),
            many => {
                let groups: Vec<String> = many
                    .iter()
                    .map(|&(g, _)| group_label(&self.index, g))
                    .collect();
                Err(self.error(format!(
                    "channel '{}' is in {}: which one is meant is ambiguous; rename one of them",
                    self.names.get(name_index).map_or("", String::as_str),
                    groups.join(" and ")
                )))
            }
        }
    }
}

impl ColumnarLog for Mdf4Log {
    fn file(&self) -> &str {
        &self.file
    }

    fn names(&self) -> &[String] {
        &self.names
    }

    fn own_time_unit(&self) -> Option<&str> {
        Some(&self.time_unit)
    }

    fn start(&mut self, used: &[ColumnUse], timing: Timing) -> Result<Rows, SimError> {
        let mut reader = FileRangeReader::new(&self.file).map_err(|e| match e {
            mdf4_rs::Error::IOError(io) => SimError::io(&self.file, io),
            e => self.error(e.to_string()),
        })?;
        let mut group_of: Vec<usize> = Vec::new();
        // The own time base (index past the names) comes with each group.
        let n_names = self.names.len();
        for u in used.iter().filter(|u| u.index < n_names) {
            let (g, c) = self.place(u.index)?;
            let slot = match group_of.iter().position(|&x| x == g) {
                Some(s) => s,
                None => {
                    let group = self.read_time(&mut reader, g)?;
                    self.groups.push(group);
                    group_of.push(g);
                    group_of.len() - 1
                }
            };
            let values = self.read_channel(&mut reader, g, c)?;
            let column = Column {
                group: slot,
                kind: u.kind,
                values,
            };
            self.columns.push((u.index, column));
        }
        if self.groups.len() <= 1 {
            return Ok(Rows::AsRecorded);
        }
        if timing.stated_period {
            return Err(SimError::Usage(format!(
                "{}: --sample-period-s does not apply: the mapped channels are in {} channel groups, each timed by its own master channel; they are aligned onto device.sample_period_s ({} s) by --resample hold (the default) or linear",
                self.file,
                self.groups.len(),
                timing.device_period_s
            )));
        }
        let times: Vec<&[f64]> = self.groups.iter().map(|g| g.time.as_slice()).collect();
        let method = timing.resample.unwrap_or(Resample::Hold);
        let ticks =
            Ticks::new(method, timing.device_period_s, &times).map_err(|m| self.error(m))?;
        self.timeline = Timeline::Ticks { ticks, tick: 0.0 };
        Ok(Rows::OnDeviceTicks)
    }

    fn next_row(&mut self, values: &mut [Option<f64>]) -> Result<bool, DataError> {
        let time_slot = self.names.len();
        match &mut self.timeline {
            Timeline::Records { next } => {
                let k = *next;
                let Some(t) = self.groups.first().and_then(|g| g.time.get(k)) else {
                    return Ok(false);
                };
                if let Some(v) = values.get_mut(time_slot) {
                    *v = Some(*t);
                }
                for (i, c) in &self.columns {
                    if let Some(v) = values.get_mut(*i) {
                        *v = c.values.get(k).copied().flatten();
                    }
                }
                *next += 1;
            }
            Timeline::Ticks { ticks, tick } => {
                let Some(t) = ticks.next_tick() else {
                    return Ok(false);
                };
                *tick = t;
                for g in &mut self.groups {
                    ticks.advance(&g.time, &mut g.cursor, t);
                }
                if let Some(v) = values.get_mut(time_slot) {
                    *v = Some(t);
                }
                for (i, c) in &self.columns {
                    let Some(g) = self.groups.get(c.group) else {
                        continue;
                    };
                    if let Some(v) = values.get_mut(*i) {
                        *v = ticks.value(&g.time, &c.values, g.cursor, t, c.kind);
                    }
                }
            }
        }
        Ok(true)
    }

    fn row_location(&self) -> String {
        match &self.timeline {
            Timeline::Records { next } => match self.groups.first() {
                Some(g) => format!(
                    "channel group {} ('{}'), sample index {}",
                    g.index,
                    g.name,
                    next.saturating_sub(1)
                ),
                None => "no channel group".into(),
            },
            Timeline::Ticks { ticks, tick } => format!(
                "tick {} (t = {tick} s, {} aligned)",
                ticks.count().saturating_sub(1),
                match ticks.method() {
                    Resample::Hold => "held",
                    Resample::Linear => "interpolated",
                }
            ),
        }
    }

    fn report(&self) -> LogReport {
        LogReport {
            format: LogFormat::Mdf4,
            sources: self
                .groups
                .iter()
                .map(|g| SourceReport {
                    group: Some(g.index),
                    name: g.name.clone(),
                    samples: g.time.len() as u64,
                    mean_period_s: mean_period(&g.time),
                })
                .collect(),
            aligned: match &self.timeline {
                Timeline::Records { .. } => None,
                Timeline::Ticks { ticks, .. } => Some(ticks.method()),
            },
        }
    }

    fn progress(&self) -> (Option<u64>, u64) {
        match &self.timeline {
            Timeline::Records { next } => (
                self.groups.first().map(|g| g.time.len() as u64),
                *next as u64,
            ),
            Timeline::Ticks { ticks, .. } => (None, ticks.count()),
        }
    }
}

fn mean_period(time: &[f64]) -> Option<f64> {
    let (first, last) = (time.first()?, time.last()?);
    // Sample counts stay far below 2⁵³.
    #[allow(clippy::cast_precision_loss)]
    let steps = time.len().checked_sub(1).filter(|&n| n > 0)? as f64;
    Some((last - first) / steps)
}
