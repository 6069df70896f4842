//! Apache Parquet logs in and estimate files out (the sim's `parquet` feature).
//!
//! Reading ([`ParquetLog`]): the top-level columns are the names the column map refers to, as
//! a CSV's header fields; only the mapped columns are decoded (a projection), in record
//! batches of [`BATCH_ROWS`] rows streamed row group by row group, so memory stays bounded
//! whatever the file length. Number columns may be float or integer (any width) or boolean
//! (a valid bit); a null is a missing value, as an empty CSV cell.
//!
//! Writing ([`ParquetEstimateWriter`]): the estimate columns of [`crate::estimate::HEADER`]
//! (or those `--columns` selects, in its order): `line` as UInt64, `state` and `flags` as
//! UTF-8 text (flags as in the CSV, names joined by ` | `, empty when none), the rest Float64,
//! null where the CSV cell is empty. Row groups hold at most [`ROW_GROUP_ROWS`] rows, Snappy
//! pages, dictionaries for `state` and `flags` only. The comment lines of the CSV form are
//! stored as the file's key-value metadata under `clampwise`. Nothing appears under the name
//! until the file is complete.

use std::fs::File;
use std::io::BufWriter;
use std::sync::Arc;

use arrow_array::builder::{Float64Builder, StringBuilder, UInt64Builder};
use arrow_array::cast::AsArray;
use arrow_array::types::{
    Float32Type, Float64Type, Int8Type, Int16Type, Int32Type, Int64Type, UInt8Type, UInt16Type,
    UInt32Type, UInt64Type,
};
use arrow_array::{Array, ArrayRef, RecordBatch};
use arrow_schema::{DataType, Field, Schema};
use parquet::arrow::ArrowWriter;
use parquet::arrow::ProjectionMask;
use parquet::arrow::arrow_reader::{ParquetRecordBatchReader, ParquetRecordBatchReaderBuilder};
use parquet::basic::Compression;
use parquet::file::metadata::KeyValue;
use parquet::file::properties::WriterProperties;
use parquet::schema::types::ColumnPath;

use super::{ColumnUse, ColumnarLog, LogFormat, LogReport, Rows, SourceReport, Timing, log_error};
use crate::error::{DataError, SimError};
use crate::estimate::HEADER;
use crate::output::TempTarget;
use clampwise_convert::EstimateRow;

/// Rows decoded at a time when reading.
pub const BATCH_ROWS: usize = 8192;
/// Largest row group written.
pub const ROW_GROUP_ROWS: usize = 64 * 1024;

/// A Parquet file opened for reading.
pub struct ParquetLog {
    file: String,
    len: u64,
    names: Vec<String>,
    types: Vec<DataType>,
    total_rows: u64,
    builder: Option<ParquetRecordBatchReaderBuilder<File>>,
    reader: Option<ParquetRecordBatchReader>,
    /// The name index of each projected column, in the batches' column order.
    projected: Vec<usize>,
    /// The current batch, converted: one column per projected column.
    batch: Vec<Vec<Option<f64>>>,
    batch_len: usize,
    at: usize,
    /// Rows handed out.
    rows: u64,
}

fn parquet_error(file: &str, e: &dyn std::fmt::Display) -> SimError {
    log_error(file, format!("not a readable Parquet file: {e}")).into()
}

/// The types [`push_f64`] reads.
fn readable(t: &DataType) -> bool {
    matches!(
        t,
        DataType::Float64
            | DataType::Float32
            | DataType::Int8
            | DataType::Int16
            | DataType::Int32
            | DataType::Int64
            | DataType::UInt8
            | DataType::UInt16
            | DataType::UInt32
            | DataType::UInt64
            | DataType::Boolean
    )
}

/// Append `a`'s values as f64 (nulls as `None`); `false` for a type that is not a number.
fn push_f64(a: &dyn Array, out: &mut Vec<Option<f64>>) -> bool {
    macro_rules! exact {
        ($t:ty) => {
            out.extend(a.as_primitive::<$t>().iter().map(|v| v.map(f64::from)))
        };
    }
    // 64-bit integers: the nearest f64 (exact below 2⁵³, as a CSV cell's text would read).
    #[allow(clippy::cast_precision_loss)]
    match a.data_type() {
        DataType::Float64 => out.extend(a.as_primitive::<Float64Type>().iter()),
        DataType::Float32 => exact!(Float32Type),
        DataType::Int8 => exact!(Int8Type),
        DataType::Int16 => exact!(Int16Type),
        DataType::Int32 => exact!(Int32Type),
        DataType::Int64 => out.extend(
            a.as_primitive::<Int64Type>()
                .iter()
                .map(|v| v.map(|x| x as f64)),
        ),
        DataType::UInt8 => exact!(UInt8Type),
        DataType::UInt16 => exact!(UInt16Type),
        DataType::UInt32 => exact!(UInt32Type),
        DataType::UInt64 => out.extend(
            a.as_primitive::<UInt64Type>()
                .iter()
                .map(|v| v.map(|x| x as f64)),
        ),
        DataType::Boolean => out.extend(
            a.as_boolean()
                .iter()
                .map(|v| v.map(|b| f64::from(u8::from(b)))),
        ),
        _ => return false,
    }
    true
}

impl ParquetLog {
    /// Open `path` and read its footer (schema, row groups).
    ///
    /// # Errors
    /// [`SimError::Io`] when it cannot be opened; a data error when it is not Parquet.
    pub fn open(path: &str) -> Result<Self, SimError> {
        let f = File::open(path).map_err(|e| SimError::io(path, e))?;
        let len = f.metadata().map_err(|e| SimError::io(path, e))?.len();
        let builder = ParquetRecordBatchReaderBuilder::try_new(f)
            .map_err(|e| parquet_error(path, &e))?
            .with_batch_size(BATCH_ROWS);
        let fields = builder.schema().fields();
        let names = fields.iter().map(|f| f.name().clone()).collect();
        let types = fields.iter().map(|f| f.data_type().clone()).collect();
        let total_rows = u64::try_from(builder.metadata().file_metadata().num_rows()).unwrap_or(0);
        Ok(Self {
            file: path.to_string(),
            len,
            names,
            types,
            total_rows,
            builder: Some(builder),
            reader: None,
            projected: Vec::new(),
            batch: Vec::new(),
            batch_len: 0,
            at: 0,
            rows: 0,
        })
    }

    /// Decode the next batch; `Ok(false)` at the end.
    fn next_batch(&mut self) -> Result<bool, DataError> {
        let Some(reader) = self.reader.as_mut() else {
            return Ok(false);
        };
        let batch: RecordBatch = match reader.next() {
            None => return Ok(false),
            Some(Ok(b)) => b,
            Some(Err(e)) => {
                return Err(log_error(
                    &self.file,
                    format!("after row {}: cannot read the next rows: {e}", self.rows),
                ));
            }
        };
        self.batch.resize_with(batch.num_columns(), Vec::new);
        for (out, col) in self.batch.iter_mut().zip(batch.columns()) {
            out.clear();
            if !push_f64(col.as_ref(), out) {
                return Err(log_error(
                    &self.file,
                    format!(
                        "a column of type {} where numbers are needed",
                        col.data_type()
                    ),
                ));
            }
        }
        self.batch_len = batch.num_rows();
        self.at = 0;
        Ok(true)
    }
}

impl ColumnarLog for ParquetLog {
    fn file(&self) -> &str {
        &self.file
    }

    fn names(&self) -> &[String] {
        &self.names
    }

    fn own_time_unit(&self) -> Option<&str> {
        None
    }

    fn start(&mut self, used: &[ColumnUse], _timing: Timing) -> Result<Rows, SimError> {
        let mut roots: Vec<usize> = used.iter().map(|u| u.index).collect();
        roots.sort_unstable();
        roots.dedup();
        for &i in &roots {
            if let Some(t) = self.types.get(i)
                && !readable(t)
            {
                return Err(log_error(
                    &self.file,
                    format!(
                        "column '{}' has type {t}: a number (float, integer) or boolean column is needed",
                        self.names.get(i).map_or("", String::as_str)
                    ),
                )
                .into());
            }
        }
        let builder = self
            .builder
            .take()
            .ok_or_else(|| SimError::Internal("Parquet log started twice".into()))?;
        let mask = ProjectionMask::roots(builder.parquet_schema(), roots.iter().copied());
        self.reader = Some(
            builder
                .with_projection(mask)
                .build()
                .map_err(|e| parquet_error(&self.file, &e))?,
        );
        self.projected = roots;
        Ok(Rows::AsRecorded)
    }

    fn next_row(&mut self, values: &mut [Option<f64>]) -> Result<bool, DataError> {
        while self.at >= self.batch_len {
            if !self.next_batch()? {
                return Ok(false);
            }
        }
        for (col, &i) in self.batch.iter().zip(&self.projected) {
            if let Some(v) = values.get_mut(i) {
                *v = col.get(self.at).copied().flatten();
            }
        }
        self.at += 1;
        self.rows += 1;
        Ok(true)
    }

    fn row_location(&self) -> String {
        format!("row {}", self.rows)
    }

    fn report(&self) -> LogReport {
        LogReport {
            format: LogFormat::Parquet,
            sources: vec![SourceReport {
                group: None,
                name: String::new(),
                samples: self.total_rows,
                mean_period_s: None,
            }],
            aligned: None,
        }
    }

    fn progress(&self) -> (Option<u64>, u64) {
        // Rows, not bytes: the file is read by column chunks.
        let _ = self.len;
        (Some(self.total_rows), self.rows)
    }
}

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
            .set_max_row_group_row_count(Some(ROW_GROUP_ROWS))
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
        let writer = ArrowWriter::try_new(
            BufWriter::with_capacity(1 << 16, f),
            schema.clone(),
            Some(props),
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

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::log_input::ColumnKind;
    use arrow_array::{BooleanArray, Float32Array, Int32Array, StringArray};

    fn timing() -> Timing {
        Timing {
            device_period_s: 0.001,
            resample: None,
            stated_period: false,
        }
    }

    /// Integer, f32 and boolean columns read as the numbers they hold; a null is a missing
    /// value; only the mapped columns are decoded; a text column is named in its error.
    #[test]
    fn column_types_nulls_and_projection() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("t.parquet");
        let schema = Arc::new(Schema::new(vec![
            Field::new("counts", DataType::Int32, true),
            Field::new("note", DataType::Utf8, false),
            Field::new("speed", DataType::Float32, false),
            Field::new("valid", DataType::Boolean, false),
        ]));
        let batch = RecordBatch::try_new(
            schema.clone(),
            vec![
                Arc::new(Int32Array::from(vec![Some(-7), None, Some(123_456)])),
                Arc::new(StringArray::from(vec!["a", "b", "c"])),
                Arc::new(Float32Array::from(vec![0.5, 1.25, -2.0])),
                Arc::new(BooleanArray::from(vec![true, false, true])),
            ],
        )
        .unwrap();
        let mut w = ArrowWriter::try_new(File::create(&path).unwrap(), schema, None).unwrap();
        w.write(&batch).unwrap();
        w.close().unwrap();
        let p = path.to_str().unwrap();

        let mut log = ParquetLog::open(p).unwrap();
        assert_eq!(log.names(), ["counts", "note", "speed", "valid"]);
        let used = [0, 2, 3].map(|index| ColumnUse {
            index,
            kind: ColumnKind::Number,
        });
        assert_eq!(log.start(&used, timing()).unwrap(), Rows::AsRecorded);
        let mut v = vec![None; 5];
        let mut rows = Vec::new();
        while log.next_row(&mut v).unwrap() {
            rows.push(v.clone());
        }
        assert_eq!(
            rows,
            [
                [Some(-7.0), None, Some(0.5), Some(1.0), None],
                [None, None, Some(1.25), Some(0.0), None],
                [Some(123_456.0), None, Some(-2.0), Some(1.0), None],
            ]
        );
        assert_eq!(log.row_location(), "row 3");

        let mut log = ParquetLog::open(p).unwrap();
        let text = [ColumnUse {
            index: 1,
            kind: ColumnKind::Number,
        }];
        let e = log.start(&text, timing()).err().unwrap().to_string();
        assert!(e.contains("column 'note' has type Utf8"), "{e}");
    }
}
