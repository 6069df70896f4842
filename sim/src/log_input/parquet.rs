//! Apache Parquet logs (the sim's `parquet` feature); estimate files in Parquet are in
//! [`super::parquet_estimates`].
//!
//! [`ParquetLog`]: the top-level columns are the names the column map refers to, as
//! a CSV's header fields; only the mapped columns are decoded (a projection), in record
//! batches of [`BATCH_ROWS`] rows streamed page by page, so memory stays bounded whatever the
//! file length. What stays is set by the file's writer: one decompressed data page and the
//! decoded dictionary per mapped column (pyarrow's defaults: pages and dictionaries of up to
//! 1 MiB). Number columns may be float or integer (any width) or boolean (a valid bit); a null
//! is a missing value, as an empty CSV cell.

use std::fs::File;

use arrow_array::cast::AsArray;
use arrow_array::types::{
    Float32Type, Float64Type, Int8Type, Int16Type, Int32Type, Int64Type, UInt8Type, UInt16Type,
    UInt32Type, UInt64Type,
};
use arrow_array::{Array, RecordBatch};
use arrow_schema::DataType;
use parquet::arrow::ProjectionMask;
use parquet::arrow::arrow_reader::{ParquetRecordBatchReader, ParquetRecordBatchReaderBuilder};

use super::{ColumnUse, ColumnarLog, LogFormat, LogReport, Rows, SourceReport, Timing, log_error};
use crate::error::{DataError, SimError};

/// Rows decoded at a time when reading (and gathered before writing): the batch's arrays and
/// their f64 copy are a few hundred KiB; the decoded pages behind them are the input's choice.
pub const BATCH_ROWS: usize = 1024;

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

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use crate::log_input::ColumnKind;
    use arrow_array::{BooleanArray, Float32Array, Int32Array, StringArray};
    use arrow_schema::{Field, Schema};
    use parquet::arrow::ArrowWriter;
    use std::sync::Arc;

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
