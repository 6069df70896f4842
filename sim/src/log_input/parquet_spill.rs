//! Where the Parquet estimate writer keeps a row group's finished pages until the group is
//! closed (the sim's `parquet` feature).
//!
//! A Parquet column chunk must be contiguous in the file while rows arrive with every column
//! at once, so each column's encoded pages wait for the end of the row group. The Arrow
//! writer's default store keeps them on the heap, which grows with the row group;
//! [`SpillPages`] writes them to an unnamed temporary file per column chunk, in the folder of
//! the output, and reads them back one page at a time when the group is written out. Memory
//! then no longer depends on the row group size, so row groups can be large and the file's
//! footer (which the writer holds until the end) small.

use std::fs::File;
use std::io::{Read, Seek, SeekFrom, Write};
use std::path::PathBuf;

use bytes::Bytes;
use parquet::arrow::arrow_writer::{PageKey, PageStore, PageStoreArgs, PageStoreFactory};
use parquet::errors::{ParquetError, Result};

/// Makes a [`SpilledChunk`] per column chunk, in `dir`.
#[derive(Debug)]
pub struct SpillPages {
    dir: PathBuf,
}

impl SpillPages {
    /// Temporary files go in `dir` (the output's folder: the same disk the user chose for the
    /// output, and not a RAM-backed `/tmp`).
    pub fn new(dir: PathBuf) -> Self {
        Self { dir }
    }
}

impl PageStoreFactory for SpillPages {
    fn create(&self, _args: &PageStoreArgs<'_>) -> Result<Box<dyn PageStore>> {
        // Unnamed (or removed at once where the system cannot): nothing is left behind.
        Ok(Box::new(SpilledChunk {
            file: tempfile::tempfile_in(&self.dir)?,
            end: 0,
            pages: Vec::new(),
        }))
    }
}

/// One column chunk's pages, one after the other in a temporary file.
struct SpilledChunk {
    file: File,
    end: u64,
    /// Offset and length of each page, by key.
    pages: Vec<(u64, usize)>,
}

impl PageStore for SpilledChunk {
    fn put(&mut self, page: Bytes) -> Result<PageKey> {
        self.file.seek(SeekFrom::Start(self.end))?;
        self.file.write_all(&page)?;
        let key = PageKey::new(self.pages.len() as u64);
        self.pages.push((self.end, page.len()));
        self.end += page.len() as u64;
        Ok(key)
    }

    fn take(&mut self, key: PageKey) -> Result<Bytes> {
        let &(offset, len) = usize::try_from(key.get())
            .ok()
            .and_then(|i| self.pages.get(i))
            .ok_or_else(|| ParquetError::General(format!("no spilled page {}", key.get())))?;
        let mut page = vec![0; len];
        self.file.seek(SeekFrom::Start(offset))?;
        self.file.read_exact(&mut page)?;
        Ok(Bytes::from(page))
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use arrow_array::{ArrayRef, Float64Array, RecordBatch, StringArray};
    use arrow_schema::{DataType, Field, Schema};
    use parquet::arrow::ArrowWriter;
    use parquet::arrow::arrow_writer::ArrowWriterOptions;
    use parquet::file::properties::WriterProperties;
    use std::sync::Arc;

    /// The file is byte for byte the one the `parquet` crate writes with its own in-memory
    /// page store (the reference), over several row groups (a store each) of several pages,
    /// with nulls and a dictionary column; no temporary file is left in the folder.
    #[test]
    fn same_bytes_as_the_in_memory_store() {
        let schema = Arc::new(Schema::new(vec![
            Field::new("x", DataType::Float64, true),
            Field::new("s", DataType::Utf8, false),
        ]));
        let n: u32 = 5000;
        let x: Float64Array = (0..n)
            .map(|i| (!i.is_multiple_of(7)).then(|| f64::from(i) * 0.37 - 100.0))
            .collect();
        let s: StringArray = (0..n)
            .map(|i| Some(["a", "bb", "ccc"][i as usize % 3]))
            .collect();
        let batch =
            RecordBatch::try_new(schema.clone(), vec![Arc::new(x) as ArrayRef, Arc::new(s)])
                .unwrap();
        let props = WriterProperties::builder()
            .set_max_row_group_row_count(Some(2000))
            .set_data_page_row_count_limit(300)
            .set_write_batch_size(100)
            .build();
        let dir = tempfile::tempdir().unwrap();
        let write = |spill: bool| {
            let mut options = ArrowWriterOptions::new().with_properties(props.clone());
            if spill {
                options = options
                    .with_page_store_factory(Arc::new(SpillPages::new(dir.path().to_path_buf())));
            }
            let mut out = Vec::new();
            let mut w =
                ArrowWriter::try_new_with_options(&mut out, schema.clone(), options).unwrap();
            w.write(&batch).unwrap();
            w.close().unwrap();
            out
        };
        let reference = write(false);
        let spilled = write(true);
        assert!(reference.len() > 10_000);
        assert!(reference == spilled, "the spilled file differs");
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
    }
}
