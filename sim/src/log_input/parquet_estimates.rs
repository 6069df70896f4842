//! Estimate files as Parquet (the sim's `parquet` feature): written by `replay -o OUT.parquet`,
//! read by `compare`, `plot` and `report` as the CSV form is.
//!
//! [`ParquetEstimateWriter`]: the estimate columns of [`HEADER`] (or those `--columns`
//! selects, in its order): `line` as UInt64, `state` and `flags` as UTF-8 text (flags as in
//! the CSV, names joined by ` | `, empty when none), the rest Float64, null where the CSV cell
//! is empty. Row groups hold at most [`ROW_GROUP_ROWS`] rows, Snappy pages of at most
//! [`PAGE_ROWS`] rows, dictionaries for `state` and `flags` only, min/max statistics per column
//! chunk. A row group's finished pages wait on disk ([`super::parquet_spill`]), so memory stays
//! flat whatever the file length. The comment lines of the CSV form are stored as the file's
//! key-value metadata under `clampwise`. Nothing appears under the name until the file is
//! complete.
//!
//! [`ParquetEstimateReader`]: every [`HEADER`] column by name, in batches of [`BATCH_ROWS`]
//! rows (memory bounded by a row group); errors name the file and the row.

use std::fs::File;
use std::io::BufWriter;
use std::sync::Arc;

use arrow_array::builder::{Float64Builder, StringBuilder, UInt64Builder};
use arrow_array::cast::AsArray;
use arrow_array::types::{Float64Type, UInt64Type};
use arrow_array::{Array, ArrayRef, RecordBatch};
use arrow_schema::{DataType, Field, Schema};
use parquet::arrow::ArrowWriter;
use parquet::arrow::ProjectionMask;
use parquet::arrow::arrow_reader::{ParquetRecordBatchReader, ParquetRecordBatchReaderBuilder};
use parquet::arrow::arrow_writer::ArrowWriterOptions;
use parquet::basic::Compression;
use parquet::file::metadata::KeyValue;
use parquet::file::properties::{EnabledStatistics, WriterProperties};
use parquet::schema::types::ColumnPath;

use super::log_error;
use super::parquet::BATCH_ROWS;
use super::parquet_spill::SpillPages;
use crate::csv_input::echo;
use crate::error::{DataError, SimError};
use crate::estimate::HEADER;
use crate::output::{TempTarget, folder_of};
use clampwise_convert::{ContactState, EstimateRow, Flags};

/// Largest row group written: the `parquet` crate's (and pyarrow's) default. The pages of a
/// group in progress are spilled to disk ([`SpillPages`]), so its size costs no memory; fewer
/// groups keep the footer, held in memory until the file is closed, small.
pub const ROW_GROUP_ROWS: usize = 1024 * 1024;

/// Largest data page, in rows: each column's encoder holds a page's values (64 KiB of f64)
/// until the page is compressed and spilled.
pub const PAGE_ROWS: usize = 8192;

/// Streams [`EstimateRow`]s to a Parquet file.
pub struct ParquetEstimateWriter {
    target: TempTarget,
    writer: ArrowWriter<BufWriter<File>>,
    /// Indices into [`HEADER`] in output order.
    select: Vec<usize>,
    schema: Arc<Schema>,
    line: UInt64Builder,
    /// t_s … correction and the reference torque, in [`HEADER`] order.
    numbers: Vec<Float64Builder>,
    state: StringBuilder,
    flags: StringBuilder,
    text: String,
    pending: usize,
}

/// The [`HEADER`] index of the reference torque, after `state` and `flags`.
const TORQUE_REF: usize = 15;

fn field(i: usize) -> Field {
    let name = HEADER.get(i).copied().unwrap_or("");
    match i {
        0 => Field::new(name, DataType::UInt64, false),
        13 | 14 => Field::new(name, DataType::Utf8, false),
        // torque, capacity, reference torque: empty (null) at times.
        2 | 3 | TORQUE_REF => Field::new(name, DataType::Float64, true),
        _ => Field::new(name, DataType::Float64, false),
    }
}

impl ParquetEstimateWriter {
    /// Create the file (under a temporary name until [`ParquetEstimateWriter::commit`]).
    ///
    /// # Errors
    /// [`SimError::Io`]; [`SimError::Internal`] when the writer cannot start.
    pub fn create(
        path: &str,
        comments: &[String],
        select: Option<Vec<usize>>,
    ) -> Result<Self, SimError> {
        Self::with_row_groups(path, comments, select, ROW_GROUP_ROWS)
    }

    /// [`ParquetEstimateWriter::create`] with row groups of at most `row_group_rows` (> 0).
    fn with_row_groups(
        path: &str,
        comments: &[String],
        select: Option<Vec<usize>>,
        row_group_rows: usize,
    ) -> Result<Self, SimError> {
        let select = select.unwrap_or_else(|| (0..HEADER.len()).collect());
        let schema = Arc::new(Schema::new(
            select.iter().map(|&i| field(i)).collect::<Vec<_>>(),
        ));
        let mut target = TempTarget::new(std::path::Path::new(path))?;
        let f = target
            .file()
            .try_clone()
            .map_err(|e| SimError::io(path, e))?;
        let props = WriterProperties::builder()
            .set_compression(Compression::SNAPPY)
            .set_max_row_group_row_count(Some(row_group_rows))
            .set_data_page_row_count_limit(PAGE_ROWS)
            // Min and max per column chunk; per-page ones would be held until the footer.
            .set_statistics_enabled(EnabledStatistics::Chunk)
            // Dictionaries pay for the few words of `state` and `flags`; hashing every float
            // costs more than it saves.
            .set_dictionary_enabled(false)
            .set_column_dictionary_enabled(ColumnPath::from("state"), true)
            .set_column_dictionary_enabled(ColumnPath::from("flags"), true)
            .set_key_value_metadata(Some(vec![KeyValue::new(
                "clampwise".to_string(),
                comments.join("\n"),
            )]))
            .build();
        // Finished pages wait in temporary files beside the output, not on the heap.
        let dir = folder_of(std::path::Path::new(path)).to_path_buf();
        let options = ArrowWriterOptions::new()
            .with_properties(props)
            .with_page_store_factory(Arc::new(SpillPages::new(dir)));
        let writer = ArrowWriter::try_new_with_options(
            BufWriter::with_capacity(1 << 16, f),
            schema.clone(),
            options,
        )
        .map_err(|e| SimError::Internal(format!("{path}: cannot start the Parquet writer: {e}")))?;
        Ok(Self {
            target,
            writer,
            select,
            schema,
            line: UInt64Builder::with_capacity(BATCH_ROWS),
            numbers: (0..13)
                .map(|_| Float64Builder::with_capacity(BATCH_ROWS))
                .collect(),
            state: StringBuilder::new(),
            flags: StringBuilder::new(),
            text: String::new(),
            pending: 0,
        })
    }

    fn io(&self, e: &parquet::errors::ParquetError) -> SimError {
        SimError::io(self.target.dest(), std::io::Error::other(e.to_string()))
    }

    /// Append one row (written a batch at a time).
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn write(&mut self, r: &EstimateRow) -> Result<(), SimError> {
        self.line.append_value(r.line);
        let values = [
            Some(r.t_s),
            r.torque_nm,
            r.capacity_nm,
            Some(r.uncertainty_nm),
            Some(r.mu),
            Some(r.radius_m),
            Some(r.clamp_force_n),
            Some(r.slip_speed_rad_s),
            Some(r.lining_temp_c),
            Some(r.bedding),
            Some(r.wear_m),
            Some(r.correction),
            r.torque_ref_nm,
        ];
        for (b, v) in self.numbers.iter_mut().zip(values) {
            b.append_option(v);
        }
        self.state.append_value(r.state.name());
        self.text.clear();
        if !r.flags.is_empty() {
            // Names only: bitflags' text form is `A | B`.
            let _ = bitflags::parser::to_writer(&r.flags, &mut self.text);
        }
        self.flags.append_value(&self.text);
        self.pending += 1;
        if self.pending >= BATCH_ROWS {
            self.flush()?;
        }
        Ok(())
    }

    /// Hand the rows gathered so far to the Parquet writer.
    fn flush(&mut self) -> Result<(), SimError> {
        if self.pending == 0 {
            return Ok(());
        }
        let line: ArrayRef = Arc::new(self.line.finish());
        let numbers: Vec<ArrayRef> = self
            .numbers
            .iter_mut()
            .map(|b| Arc::new(b.finish()) as ArrayRef)
            .collect();
        let state: ArrayRef = Arc::new(self.state.finish());
        let flags: ArrayRef = Arc::new(self.flags.finish());
        let column = |i: usize| -> Option<ArrayRef> {
            match i {
                0 => Some(line.clone()),
                13 => Some(state.clone()),
                14 => Some(flags.clone()),
                TORQUE_REF => numbers.get(12).cloned(),
                n => numbers.get(n - 1).cloned(),
            }
        };
        let columns: Vec<ArrayRef> = self.select.iter().filter_map(|&i| column(i)).collect();
        let batch = RecordBatch::try_new(self.schema.clone(), columns)
            .map_err(|e| SimError::Internal(format!("estimate batch: {e}")))?;
        self.writer.write(&batch).map_err(|e| self.io(&e))?;
        self.pending = 0;
        Ok(())
    }

    /// Finish the file and publish it under its name.
    ///
    /// # Errors
    /// [`SimError::Io`]; the destination is then left as it was.
    pub fn commit(mut self) -> Result<(), SimError> {
        self.flush()?;
        let mut w = match self.writer.into_inner() {
            Ok(w) => w,
            Err(e) => {
                return Err(SimError::io(
                    self.target.dest(),
                    std::io::Error::other(e.to_string()),
                ));
            }
        };
        std::io::Write::flush(&mut w).map_err(|e| SimError::io(self.target.dest(), e))?;
        drop(w);
        self.target.commit()
    }

    /// Drop the incomplete output (a cut Parquet file has no footer and cannot be read);
    /// nothing is left under the name or beside it.
    pub fn abandon(self) -> Option<std::path::PathBuf> {
        None
    }
}

/// Reads an estimate file written as Parquet, row by row.
pub struct ParquetEstimateReader {
    file: String,
    total_rows: u64,
    reader: ParquetRecordBatchReader,
    batch: Option<RecordBatch>,
    at: usize,
    rows: u64,
}

impl ParquetEstimateReader {
    /// Open `path` and check that it has every estimate column with its type.
    ///
    /// # Errors
    /// I/O; a data error for a file that is not Parquet or lacks a column.
    pub fn open(path: &str) -> Result<Self, SimError> {
        let f = File::open(path).map_err(|e| SimError::io(path, e))?;
        let builder = ParquetRecordBatchReaderBuilder::try_new(f).map_err(|e| {
            SimError::from(log_error(path, format!("not a readable Parquet file: {e}")))
        })?;
        let schema = builder.schema().clone();
        let mut roots = Vec::with_capacity(HEADER.len());
        for (i, name) in HEADER.iter().enumerate() {
            let want = field(i);
            let found = schema
                .fields()
                .iter()
                .position(|f| f.name() == name && f.data_type() == want.data_type());
            let Some(at) = found else {
                let names: Vec<String> = schema
                    .fields()
                    .iter()
                    .map(|f| format!("{} ({})", f.name(), f.data_type()))
                    .collect();
                return Err(log_error(
                    path,
                    format!(
                        "missing column '{name}' of type {}: not an estimate file written by `clampwise replay`? (columns: {})",
                        want.data_type(),
                        names.join(", ")
                    ),
                )
                .into());
            };
            roots.push(at);
        }
        let total_rows = u64::try_from(builder.metadata().file_metadata().num_rows()).unwrap_or(0);
        let mut sorted = roots.clone();
        sorted.sort_unstable();
        if sorted != roots {
            return Err(log_error(
                path,
                format!(
                    "the estimate columns are not in the order {}",
                    HEADER.join(", ")
                ),
            )
            .into());
        }
        let mask = ProjectionMask::roots(builder.parquet_schema(), roots);
        let reader = builder
            .with_projection(mask)
            .with_batch_size(BATCH_ROWS)
            .build()
            .map_err(|e| {
                SimError::from(log_error(path, format!("not a readable Parquet file: {e}")))
            })?;
        Ok(Self {
            file: path.to_string(),
            total_rows,
            reader,
            batch: None,
            at: 0,
            rows: 0,
        })
    }

    /// File name.
    pub fn file(&self) -> &str {
        &self.file
    }

    /// Rows in the file and rows read (for progress).
    pub fn progress(&self) -> (Option<u64>, u64) {
        (Some(self.total_rows), self.rows)
    }

    fn error(&self, message: String) -> DataError {
        log_error(&self.file, format!("row {}: {message}", self.rows + 1))
    }

    /// The next row; `Ok(None)` at the end.
    ///
    /// # Errors
    /// A data error naming the row.
    pub fn next_row(&mut self) -> Result<Option<EstimateRow>, DataError> {
        while self.batch.as_ref().is_none_or(|b| self.at >= b.num_rows()) {
            match self.reader.next() {
                None => return Ok(None),
                Some(Ok(b)) => {
                    self.batch = Some(b);
                    self.at = 0;
                }
                Some(Err(e)) => return Err(self.error(format!("cannot read the rows: {e}"))),
            }
        }
        let Some(b) = &self.batch else {
            return Ok(None);
        };
        let i = self.at;
        let float = |c: usize| -> Option<f64> {
            let a = b.column(c).as_primitive::<Float64Type>();
            (!a.is_null(i)).then(|| a.value(i))
        };
        let text = |c: usize| b.column(c).as_string::<i32>().value(i);
        let required = |c: usize| {
            float(c).ok_or_else(|| {
                self.error(format!(
                    "'{}' is null where a number is required",
                    HEADER.get(c).copied().unwrap_or("")
                ))
            })
        };
        let state = ContactState::from_name(text(13))
            .ok_or_else(|| self.error(format!("unknown state '{}'", echo(text(13)))))?;
        let flags = match text(14) {
            "" => Flags::empty(),
            t => bitflags::parser::from_str_strict::<Flags>(t).map_err(|e| {
                self.error(format!(
                    "flags must be the core's flag names joined by ' | ', got '{}': {}",
                    echo(t),
                    echo(&e.to_string())
                ))
            })?,
        };
        let row = EstimateRow {
            line: b.column(0).as_primitive::<UInt64Type>().value(i),
            t_s: required(1)?,
            torque_nm: float(2),
            capacity_nm: float(3),
            uncertainty_nm: required(4)?,
            mu: required(5)?,
            radius_m: required(6)?,
            clamp_force_n: required(7)?,
            slip_speed_rad_s: required(8)?,
            lining_temp_c: required(9)?,
            bedding: required(10)?,
            wear_m: required(11)?,
            correction: required(12)?,
            state,
            flags,
            torque_ref_nm: float(15),
        };
        self.at += 1;
        self.rows += 1;
        Ok(Some(row))
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;

    fn row(i: u32) -> EstimateRow {
        let x = f64::from(i);
        EstimateRow {
            line: u64::from(i) + 3,
            t_s: x * 1e-3,
            torque_nm: (!i.is_multiple_of(5)).then_some(-12.5 * x),
            capacity_nm: (!i.is_multiple_of(11)).then_some(40.0 + x),
            uncertainty_nm: 0.25 * x,
            mu: 0.4 - x * 1e-6,
            radius_m: 0.6,
            clamp_force_n: 1000.0 + x,
            slip_speed_rad_s: x.sin(),
            lining_temp_c: 20.0 + x * 0.01,
            bedding: 0.5,
            wear_m: x * 1e-9,
            correction: 1.0,
            state: [
                ContactState::Slipping,
                ContactState::Holding,
                ContactState::Released,
            ][i as usize % 3],
            flags: if i.is_multiple_of(4) {
                Flags::SENSOR_DEGRADED | Flags::FORCE_LOST
            } else {
                Flags::empty()
            },
            torque_ref_nm: (i.is_multiple_of(2)).then_some(x),
        }
    }

    /// Rows written through the spilling writer read back as written (an arithmetic check of
    /// the round trip), in row groups of at most the size asked for, and only the output is
    /// left in its folder.
    #[test]
    fn rows_read_back_in_bounded_row_groups() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("e.parquet");
        let p = path.to_str().unwrap();
        let n = 2500;
        let mut w =
            ParquetEstimateWriter::with_row_groups(p, &["# note".into()], None, 1000).unwrap();
        for i in 0..n {
            w.write(&row(i)).unwrap();
        }
        w.commit().unwrap();

        let meta = ParquetRecordBatchReaderBuilder::try_new(File::open(p).unwrap()).unwrap();
        let groups: Vec<i64> = meta
            .metadata()
            .row_groups()
            .iter()
            .map(|g| g.num_rows())
            .collect();
        assert_eq!(groups, [1000, 1000, 500]);
        let mut r = ParquetEstimateReader::open(p).unwrap();
        for i in 0..n {
            assert_eq!(r.next_row().unwrap(), Some(row(i)), "row {i}");
        }
        assert_eq!(r.next_row().unwrap(), None);
        let left: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        assert_eq!(left, ["e.parquet"]);
    }
}
