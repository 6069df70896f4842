//! ASAM MDF4 logs (`.mf4`, MDF 4.10 and later), read through `mdf4_rs::MdfIndex`: the file's
//! block structure is indexed with streaming reads, then each channel group in use is read
//! record by record, one data block at a time (uncompressed DT blocks in windows of
//! [`WINDOW_RECORDS`] records; deflate and transposed-deflate DZ blocks decompressed by
//! `mdf4_rs::blocks::DzBlock`), each value decoded by `mdf4_rs`'s own decoder and conversion.
//! Memory is bounded by one data block per group, whatever the file length.
//!
//! - Channel names are the columns: `[trace.columns]` and `--column` name channels as they
//!   name CSV header fields. A channel's time is the master channel of its channel group, in
//!   the master's unit (that of the `time` mapping when the file states none).
//! - All mapped channels in one group: the group's records are the rows, checked and resampled
//!   exactly as a CSV's (`--sample-period-s`, `--resample`).
//! - Mapped channels in several groups (recorded at different rates): the groups are aligned
//!   onto the device's sample ticks ([`super::align`]) by zero-order hold, or by linear
//!   interpolation with `--resample linear`; the summary says which, never silently.
//! - An invalid sample (its invalidation bit set) is a missing value, as an empty CSV cell.
//!
//! Files are read sorted (one channel group per data group, no record IDs, as asammdf writes
//! them); an unsorted file is an error that says how to sort it.
//!
//! Errors name the file and where: a truncated file (a block past the end of the file, fewer
//! records than the group declares), a missing channel (with the channels the file has), a
//! channel in two groups, time stamps that do not increase (the group and the sample index).

use mdf4_rs::blocks::{BlockHeader, BlockParse, ChannelBlock, DzBlock};
use mdf4_rs::index::{DataBlockInfo, IndexedChannel};
use mdf4_rs::parsing::decoder::decode_channel_value_with_validity;
use mdf4_rs::{ByteRangeReader, FileRangeReader, MdfIndex};

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
/// Length of a block header, before a DT block's records [pub: ASAM MDF 4.2, 24 bytes].
const BLOCK_HEADER: u64 = 24;
/// Records read from an uncompressed block at a time.
pub const WINDOW_RECORDS: u64 = 8192;

/// One record's time and the values of the group's channels in use.
struct Sample {
    t: f64,
    values: Vec<Option<f64>>,
}

/// A channel in use: its name index, what it carries and how to decode it.
struct GroupChannel {
    name: usize,
    kind: ColumnKind,
    block: ChannelBlock,
}

/// A channel group read record by record.
struct GroupStream {
    index: usize,
    label: String,
    name: String,
    blocks: Vec<DataBlockInfo>,
    next_block: usize,
    /// Bytes of the current uncompressed block read so far.
    block_pos: u64,
    record_len: usize,
    id_size: usize,
    data_bytes: u32,
    buf: Vec<u8>,
    pos: usize,
    master: ChannelBlock,
    channels: Vec<GroupChannel>,
    /// Records read, and how many the group declares.
    records: u64,
    record_count: u64,
    first_t: Option<f64>,
    last_t: Option<f64>,
    /// The sample at or before the current row, and the one after it.
    a: Option<Sample>,
    b: Option<Sample>,
    bytes_read: u64,
}

fn channel_block(ch: &IndexedChannel) -> ChannelBlock {
    ChannelBlock {
        header: BlockHeader {
            id: "##CN".to_string(),
            reserved: 0,
            length: 160,
            link_count: 8,
        },
        next_ch_addr: 0,
        component_addr: 0,
        name_addr: 0,
        source_addr: 0,
        conversion_addr: 0,
        data_addr: 0,
        unit_addr: 0,
        comment_addr: 0,
        channel_type: ch.channel_type,
        sync_type: 0,
        data_type: ch.data_type,
        bit_offset: ch.bit_offset,
        byte_offset: ch.byte_offset,
        bit_count: ch.bit_count,
        flags: ch.flags,
        pos_invalidation_bit: ch.pos_invalidation_bit,
        precision: 0,
        reserved1: 0,
        attachment_count: 0,
        min_raw_value: 0.0,
        max_raw_value: 0.0,
        lower_limit: 0.0,
        upper_limit: 0.0,
        lower_ext_limit: 0.0,
        upper_ext_limit: 0.0,
        name: ch.name.clone(),
        conversion: ch.conversion.clone(),
    }
}

impl GroupStream {
    /// Decode one channel of `record`: `None` when invalid or not a number.
    fn decode(&self, record: &[u8], ch: &ChannelBlock) -> Option<f64> {
        let d = decode_channel_value_with_validity(record, self.id_size, self.data_bytes, ch)?;
        if !d.is_valid {
            return None;
        }
        let v = match &ch.conversion {
            Some(c) => c.apply_decoded(d.value, &[]).ok()?,
            None => d.value,
        };
        v.as_f64()
    }

    /// Make at least one record available in `buf`; `Ok(false)` after the last block.
    fn fill(&mut self, file: &str, reader: &mut FileRangeReader) -> Result<bool, DataError> {
        while self.buf.len() - self.pos < self.record_len {
            let Some(block) = self.blocks.get(self.next_block) else {
                return Ok(false);
            };
            let (offset, size, compressed) = (block.file_offset, block.size, block.is_compressed);
            self.buf.drain(..self.pos);
            self.pos = 0;
            let read = |reader: &mut FileRangeReader, at: u64, n: u64| {
                reader.read_range(at, n).map_err(|e| {
                    log_error(
                        file,
                        format!(
                            "{}: cannot read the data block at byte {offset}: {e}",
                            self.label
                        ),
                    )
                })
            };
            if compressed {
                let bytes = read(reader, offset, size)?;
                let data = DzBlock::from_bytes(&bytes)
                    .and_then(|dz| dz.decompress())
                    .map_err(|e| {
                        log_error(
                            file,
                            format!(
                                "{}: the DZ block at byte {offset} cannot be decompressed: {e}",
                                self.label
                            ),
                        )
                    })?;
                if self.buf.is_empty() {
                    self.buf = data;
                } else {
                    self.buf.extend_from_slice(&data);
                }
                self.bytes_read += size;
                self.next_block += 1;
            } else {
                let left = size.saturating_sub(BLOCK_HEADER + self.block_pos);
                let window = left.min(WINDOW_RECORDS * self.record_len as u64);
                let bytes = read(reader, offset + BLOCK_HEADER + self.block_pos, window)?;
                self.buf.extend_from_slice(&bytes);
                self.block_pos += window;
                self.bytes_read += window;
                if self.block_pos + BLOCK_HEADER >= size {
                    self.next_block += 1;
                    self.block_pos = 0;
                }
            }
        }
        Ok(true)
    }

    /// The next record; `Ok(None)` after the last one the group declares.
    fn read(
        &mut self,
        file: &str,
        reader: &mut FileRangeReader,
    ) -> Result<Option<Sample>, DataError> {
        if self.records >= self.record_count {
            return Ok(None);
        }
        if !self.fill(file, reader)? {
            return Err(log_error(
                file,
                format!(
                    "truncated MDF4 file: {}: {} of its {} records are in the file",
                    self.label, self.records, self.record_count
                ),
            ));
        }
        let i = self.records;
        let record = self
            .buf
            .get(self.pos..self.pos + self.record_len)
            .unwrap_or_default();
        let t = self.decode(record, &self.master).filter(|t| t.is_finite());
        let Some(t) = t else {
            return Err(log_error(
                file,
                format!(
                    "{}: sample index {i}: the time stamp is missing or not a finite number",
                    self.label
                ),
            ));
        };
        if let Some(before) = self.last_t
            && t <= before
        {
            return Err(log_error(
                file,
                format!(
                    "{}: sample index {i}: time does not increase ({t} s after {before} s); the log must be sorted by time",
                    self.label
                ),
            ));
        }
        let values = self
            .channels
            .iter()
            .map(|c| self.decode(record, &c.block))
            .collect();
        self.pos += self.record_len;
        self.records += 1;
        self.first_t.get_or_insert(t);
        self.last_t = Some(t);
        Ok(Some(Sample { t, values }))
    }
}

enum Timeline {
    /// One group's records as they are.
    Records,
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
    /// The unit of the masters (of the first group that states one).
    time_unit: String,
    reader: Option<FileRangeReader>,
    groups: Vec<GroupStream>,
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
            reader: None,
            groups: Vec::new(),
            timeline: Timeline::Records,
        })
    }

    fn error(&self, message: String) -> SimError {
        log_error(&self.file, message).into()
    }

    /// A stream over group `g`, its data blocks checked to lie within the file.
    fn stream(&self, g: usize) -> Result<GroupStream, SimError> {
        let label = group_label(&self.index, g);
        let group = self
            .index
            .channel_groups
            .get(g)
            .ok_or_else(|| SimError::Internal(format!("no channel group {g}")))?;
        for b in &group.data_blocks {
            let end = b.file_offset.saturating_add(b.size);
            if end > self.file_size {
                return Err(self.error(format!(
                    "truncated MDF4 file: {label}: the data block at byte {} needs {} bytes, the file ends at byte {}",
                    b.file_offset, b.size, self.file_size
                )));
            }
        }
        let Some(master) = group.channels.iter().find(|ch| ch.channel_type == MASTER) else {
            return Err(self.error(format!(
                "{label} has no master (time) channel stored in its records"
            )));
        };
        if group.record_id_size != 0 {
            // Record IDs mean groups may share a data group, their records interleaved.
            return Err(self.error(format!(
                "{label}: an unsorted MDF4 file (records carry {}-byte record IDs); sort it first, e.g. with asammdf: MDF(path).save(sorted_path)",
                group.record_id_size
            )));
        }
        let id_size = usize::from(group.record_id_size);
        let record_len = id_size + group.record_size as usize + group.invalidation_bytes as usize;
        Ok(GroupStream {
            index: g,
            label,
            name: group.name.clone().unwrap_or_default(),
            blocks: group.data_blocks.clone(),
            next_block: 0,
            block_pos: 0,
            record_len: record_len.max(1),
            id_size,
            data_bytes: group.record_size,
            buf: Vec::new(),
            pos: 0,
            master: channel_block(master),
            channels: Vec::new(),
            records: 0,
            record_count: group.record_count,
            first_t: None,
            last_t: None,
            a: None,
            b: None,
            bytes_read: 0,
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

    /// Read each group's first sample (and, for alignment, the one after it).
    fn prime(&mut self, lookahead: bool) -> Result<(), SimError> {
        let reader = self
            .reader
            .as_mut()
            .ok_or_else(|| SimError::Internal("MDF4 reader not started".into()))?;
        for g in &mut self.groups {
            g.a = g.read(&self.file, reader)?;
            if g.a.is_none() {
                return Err(log_error(&self.file, format!("{} has no samples", g.label)).into());
            }
            if lookahead {
                g.b = g.read(&self.file, reader)?;
            }
        }
        Ok(())
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
        // The own time base (index past the names) comes with each group.
        let n_names = self.names.len();
        for u in used.iter().filter(|u| u.index < n_names) {
            let (g, c) = self.place(u.index)?;
            let slot = match self.groups.iter().position(|s| s.index == g) {
                Some(s) => s,
                None => {
                    let stream = self.stream(g)?;
                    self.groups.push(stream);
                    self.groups.len() - 1
                }
            };
            let block = self
                .index
                .get_channel_info(g, c)
                .map(channel_block)
                .ok_or_else(|| SimError::Internal(format!("no channel {c} in group {g}")))?;
            if let Some(s) = self.groups.get_mut(slot) {
                s.channels.push(GroupChannel {
                    name: u.index,
                    kind: u.kind,
                    block,
                });
            }
        }
        self.reader = Some(FileRangeReader::new(&self.file).map_err(|e| match e {
            mdf4_rs::Error::IOError(io) => SimError::io(&self.file, io),
            e => self.error(e.to_string()),
        })?);
        if self.groups.len() <= 1 {
            self.prime(false)?;
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
        self.prime(true)?;
        let t0 = self
            .groups
            .iter()
            .filter_map(|g| g.a.as_ref().map(|a| a.t))
            .fold(f64::NEG_INFINITY, f64::max);
        let method = timing.resample.unwrap_or(Resample::Hold);
        self.timeline = Timeline::Ticks {
            ticks: Ticks::new(method, timing.device_period_s, t0),
            tick: t0,
        };
        Ok(Rows::OnDeviceTicks)
    }

    fn next_row(&mut self, values: &mut [Option<f64>]) -> Result<bool, DataError> {
        let time_slot = self.names.len();
        let Some(reader) = self.reader.as_mut() else {
            return Ok(false);
        };
        match &mut self.timeline {
            Timeline::Records => {
                let Some(g) = self.groups.first_mut() else {
                    return Ok(false);
                };
                let Some(s) = g.a.take() else {
                    return Ok(false);
                };
                g.a = g.read(&self.file, reader)?;
                if let Some(v) = values.get_mut(time_slot) {
                    *v = Some(s.t);
                }
                for (c, x) in g.channels.iter().zip(s.values) {
                    if let Some(v) = values.get_mut(c.name) {
                        *v = x;
                    }
                }
            }
            Timeline::Ticks { ticks, tick } => {
                let t = ticks.next_tick();
                *tick = t;
                for g in &mut self.groups {
                    while g.b.as_ref().is_some_and(|b| ticks.reached(b.t, t)) {
                        g.a = g.b.take();
                        g.b = g.read(&self.file, reader)?;
                    }
                    let Some(a) = &g.a else { return Ok(false) };
                    // Past the last sample of a group: the overlap has ended.
                    if g.b.is_none() && !ticks.reached(t, a.t) {
                        return Ok(false);
                    }
                }
                if let Some(v) = values.get_mut(time_slot) {
                    *v = Some(t);
                }
                for g in &self.groups {
                    let Some(a) = &g.a else { continue };
                    for (i, c) in g.channels.iter().enumerate() {
                        let va = a.values.get(i).copied().flatten();
                        let b =
                            g.b.as_ref()
                                .map(|b| (b.t, b.values.get(i).copied().flatten()));
                        if let Some(v) = values.get_mut(c.name) {
                            *v = ticks.value(t, (a.t, va), b, c.kind);
                        }
                    }
                }
            }
        }
        Ok(true)
    }

    fn row_location(&self) -> String {
        match &self.timeline {
            Timeline::Records => match self.groups.first() {
                Some(g) => format!(
                    "{}, sample index {}",
                    g.label,
                    // The current row's record: the one before the sample read ahead.
                    g.records.saturating_sub(1 + u64::from(g.a.is_some()))
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
                    samples: g.record_count,
                    mean_period_s: mean_period(g),
                })
                .collect(),
            aligned: match &self.timeline {
                Timeline::Records => None,
                Timeline::Ticks { ticks, .. } => Some(ticks.method()),
            },
        }
    }

    fn progress(&self) -> (Option<u64>, u64) {
        let read: u64 = self.groups.iter().map(|g| g.bytes_read).sum();
        (Some(self.file_size), read.min(self.file_size))
    }
}

/// The mean step of the samples read so far.
fn mean_period(g: &GroupStream) -> Option<f64> {
    let (first, last) = (g.first_t?, g.last_t?);
    // Sample counts stay far below 2⁵³.
    #[allow(clippy::cast_precision_loss)]
    let steps = g.records.checked_sub(1).filter(|&n| n > 0)? as f64;
    Some((last - first) / steps)
}
