//! Output files that are never passed off as complete when a run fails.
//!
//! A file is written as `NAME.partial` and renamed to `NAME` only by [`AtomicFile::commit`];
//! a failed run leaves at most the `.partial` file (named in the error) and never a file under
//! the final name. Standard output (`-`) cannot be renamed: a failed run ends it with a
//! `# INCOMPLETE` comment line, and the exit code is non-zero. An existing device or pipe
//! (`/dev/null`, a FIFO) is written in place, never replaced.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use crate::error::SimError;

enum Sink {
    File {
        tmp: PathBuf,
        dest: PathBuf,
        w: BufWriter<File>,
    },
    Stdout(BufWriter<std::io::Stdout>),
    Direct(BufWriter<File>),
}

/// A buffered output that becomes visible under its name only on success.
pub struct AtomicFile {
    sink: Sink,
    name: String,
}

/// The `.partial` name of an output path.
pub fn partial_path(dest: &Path) -> PathBuf {
    let mut s = dest.as_os_str().to_owned();
    s.push(".partial");
    PathBuf::from(s)
}

impl AtomicFile {
    /// Create `path` (`-` for standard output). An existing file of that name is removed first,
    /// so a stale complete-looking file cannot survive a failed run.
    ///
    /// # Errors
    /// [`SimError::Io`] when the file cannot be created.
    pub fn create(path: &str) -> Result<Self, SimError> {
        if path == "-" {
            return Ok(Self {
                sink: Sink::Stdout(BufWriter::with_capacity(1 << 16, std::io::stdout())),
                name: "-".into(),
            });
        }
        let dest = PathBuf::from(path);
        // A device or pipe (e.g. /dev/null) is written in place: never renamed over or removed.
        if std::fs::metadata(&dest).is_ok_and(|m| !m.is_file() && !m.is_dir()) {
            let f = std::fs::OpenOptions::new()
                .write(true)
                .open(&dest)
                .map_err(|e| SimError::io(&dest, e))?;
            return Ok(Self {
                sink: Sink::Direct(BufWriter::with_capacity(1 << 16, f)),
                name: path.to_string(),
            });
        }
        if let Some(dir) = dest.parent().filter(|d| !d.as_os_str().is_empty()) {
            std::fs::create_dir_all(dir).map_err(|e| SimError::io(dir, e))?;
        }
        if dest.exists() {
            std::fs::remove_file(&dest).map_err(|e| SimError::io(&dest, e))?;
        }
        let tmp = partial_path(&dest);
        let f = File::create(&tmp).map_err(|e| SimError::io(&tmp, e))?;
        Ok(Self {
            sink: Sink::File {
                tmp,
                dest,
                w: BufWriter::with_capacity(1 << 16, f),
            },
            name: path.to_string(),
        })
    }

    /// The name as given.
    pub fn name(&self) -> &str {
        &self.name
    }

    /// The writer.
    pub fn writer(&mut self) -> &mut dyn Write {
        match &mut self.sink {
            Sink::File { w, .. } => w,
            Sink::Stdout(w) => w,
            Sink::Direct(w) => w,
        }
    }

    /// Write bytes, naming the file on failure.
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn write_all(&mut self, b: &[u8]) -> Result<(), SimError> {
        let res = self.writer().write_all(b);
        res.map_err(|e| SimError::io(&self.name, e))
    }

    /// Flush and rename to the final name.
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn commit(self) -> Result<(), SimError> {
        match self.sink {
            Sink::File { tmp, dest, mut w } => {
                w.flush().map_err(|e| SimError::io(&tmp, e))?;
                drop(w);
                std::fs::rename(&tmp, &dest).map_err(|e| SimError::io(&dest, e))
            }
            Sink::Stdout(mut w) => w.flush().map_err(|e| SimError::io("-", e)),
            Sink::Direct(mut w) => w.flush().map_err(|e| SimError::io(&self.name, e)),
        }
    }

    /// Mark the output incomplete after a failure: the `.partial` file stays (its path is
    /// returned for the message); standard output gets a closing `# INCOMPLETE` line.
    pub fn abandon(self, why: &str) -> Option<PathBuf> {
        match self.sink {
            Sink::File { tmp, mut w, .. } => {
                // Best effort: the run has already failed; the error reported is the first one.
                let _ = writeln!(w, "# INCOMPLETE: {why}");
                let _ = w.flush();
                Some(tmp)
            }
            Sink::Stdout(mut w) => {
                let _ = writeln!(w, "# INCOMPLETE: {why}");
                let _ = w.flush();
                None
            }
            Sink::Direct(mut w) => {
                let _ = writeln!(w, "# INCOMPLETE: {why}");
                let _ = w.flush();
                None
            }
        }
    }
}

/// Write a whole small file atomically (summaries, generated source, configs).
///
/// # Errors
/// [`SimError::Io`].
pub fn write_file(path: &str, content: &[u8]) -> Result<(), SimError> {
    let mut f = AtomicFile::create(path)?;
    f.write_all(content)?;
    f.commit()
}
