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
