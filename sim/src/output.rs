//! Outputs that are never passed off as complete, never lost half-way, and never written over an
//! input. Every writer of the simulator goes through this module.
//!
//! Data flow of a file output `NAME`:
//!
//! ```text
//! create ─► .NAME.XXXXXX.tmp.EXT (same folder, hidden) ─► write … ─┬─ commit: fsync file, rename to NAME, fsync folder
//!                                                                └─ abandon: append "# INCOMPLETE: why", fsync, rename to NAME.partial
//! ```
//!
//! - The previous file under `NAME` stays untouched until the rename, so a failed or killed run
//!   leaves the last good output in place. A successful run removes a stale `NAME.partial`.
//! - `NAME.partial` exists only when it ends with its `# INCOMPLETE: …` line: when even that
//!   line cannot be written (a full disk), the temporary file is deleted instead.
//! - A run that dies without committing (a panic, a kill) leaves at most the hidden temporary
//!   file, never a complete-looking file.
//! - Standard output (`-`) cannot be renamed: a failed run ends it with a `# INCOMPLETE` line
//!   (best effort) and the exit code is non-zero. An existing device or pipe (`/dev/null`, a
//!   FIFO) is written in place, never replaced.
//! - [`refuse_overwriting_inputs`] checks, before anything is written, that no output is one
//!   of the inputs (same path, or the same file through a hard or symbolic link: same device
//!   and inode).
//!
//! Writers that need a path rather than a [`Write`] (plotting backends) take a [`TempTarget`]:
//! they write to [`TempTarget::path`], then [`TempTarget::commit`] publishes the file.
//!
//! ```
//! use clampwise_sim::output::{AtomicFile, write_file};
//! let dir = std::env::temp_dir().join(format!("clampwise-output-doc-{}", std::process::id()));
//! std::fs::create_dir_all(&dir).unwrap();
//! let name = dir.join("table.txt").display().to_string();
//! write_file(&name, b"first\n").unwrap();
//!
//! let mut f = AtomicFile::create(&name).unwrap();
//! f.write_all(b"second, cut short\n").unwrap();
//! let partial = f.abandon("disk unplugged").unwrap();
//! // The good file is still there; the incomplete one says so on its last line.
//! assert_eq!(std::fs::read_to_string(&name).unwrap(), "first\n");
//! assert!(std::fs::read_to_string(&partial).unwrap().ends_with("# INCOMPLETE: disk unplugged\n"));
//! # std::fs::remove_dir_all(&dir).unwrap();
//! ```

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};

use tempfile::NamedTempFile;

use crate::error::SimError;

/// How standard output is named in messages.
pub const STDOUT_NAME: &str = "standard output";

/// The `.partial` name of an output path.
pub fn partial_path(dest: &Path) -> PathBuf {
    let mut s = dest.as_os_str().to_owned();
    s.push(".partial");
    PathBuf::from(s)
}

/// The folder a file output is written in (`.` for a bare file name).
pub(crate) fn folder_of(dest: &Path) -> &Path {
    match dest.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    }
}

/// Make a rename or removal in `dir` durable.
fn sync_folder(dir: &Path) -> Result<(), SimError> {
    // Opening a directory read-only and syncing it is how POSIX persists its entries; other
    // systems may refuse to open a directory, where there is nothing more to do.
    match File::open(dir) {
        Ok(d) => match d.sync_all() {
            Ok(()) => Ok(()),
            // Some file systems cannot sync a directory handle; the rename itself succeeded.
            Err(e) if e.kind() == std::io::ErrorKind::InvalidInput => Ok(()),
            Err(e) => Err(SimError::io(dir, e)),
        },
        Err(_) if !cfg!(unix) => Ok(()),
        Err(e) => Err(SimError::io(dir, e)),
    }
}

/// Whether `path` names an existing device, pipe or socket (written in place).
fn is_special(path: &Path) -> bool {
    std::fs::metadata(path).is_ok_and(|m| !m.is_file() && !m.is_dir())
}

/// A hidden temporary file beside a destination, published by renaming.
///
/// The temporary name keeps the destination's extension (`.plot.svg.a1B2c3.tmp.svg`), for
/// writers that choose a format by extension.
pub struct TempTarget {
    tmp: NamedTempFile,
    dest: PathBuf,
}

impl TempTarget {
    /// A temporary file in the folder of `dest` (created if missing).
    ///
    /// # Errors
    /// [`SimError::Io`] when the folder or the file cannot be created.
    pub fn new(dest: &Path) -> Result<Self, SimError> {
        let dir = folder_of(dest);
        std::fs::create_dir_all(dir).map_err(|e| SimError::io(dir, e))?;
        let file_name = dest
            .file_name()
            .map_or_else(|| "output".into(), |n| n.to_string_lossy().into_owned());
        let suffix = match dest.extension() {
            Some(ext) => format!(".tmp.{}", ext.to_string_lossy()),
            None => ".tmp".into(),
        };
        let tmp = tempfile::Builder::new()
            .prefix(&format!(".{file_name}."))
            .suffix(&suffix)
            .tempfile_in(dir)
            .map_err(|e| SimError::io(dest, e))?;
        Ok(Self {
            tmp,
            dest: dest.to_path_buf(),
        })
    }

    /// Where to write.
    pub fn path(&self) -> &Path {
        self.tmp.path()
    }

    /// The destination.
    pub fn dest(&self) -> &Path {
        &self.dest
    }

    /// The open temporary file.
    pub fn file(&mut self) -> &mut File {
        self.tmp.as_file_mut()
    }

    /// fsync the file, rename it to the destination, fsync the folder, and remove a stale
    /// `DEST.partial`.
    ///
    /// # Errors
    /// [`SimError::Io`]; the temporary file is then deleted and the destination untouched.
    pub fn commit(self) -> Result<(), SimError> {
        self.tmp
            .as_file()
            .sync_all()
            .map_err(|e| SimError::io(&self.dest, e))?;
        let dest = self.dest;
        self.tmp
            .persist(&dest)
            .map_err(|e| SimError::io(&dest, e.error))?;
        let stale = partial_path(&dest);
        if let Err(e) = std::fs::remove_file(&stale)
            && e.kind() != std::io::ErrorKind::NotFound
        {
            return Err(SimError::io(&stale, e));
        }
        sync_folder(folder_of(&dest))
    }

    /// Publish as `DEST.partial` (the caller has written its INCOMPLETE line).
    fn publish_partial(self) -> Option<PathBuf> {
        self.tmp.as_file().sync_all().ok()?;
        let partial = partial_path(&self.dest);
        self.tmp.persist(&partial).ok()?;
        sync_folder(folder_of(&partial)).ok()?;
        Some(partial)
    }
}

enum Sink {
    File {
        target: TempTarget,
        w: BufWriter<File>,
    },
    Stdout(BufWriter<std::io::Stdout>),
    Direct(BufWriter<File>),
}

/// A buffered output that becomes visible under its name only on success.
pub struct AtomicFile {
    sink: Sink,
    name: String,
    /// The last byte written, so that the INCOMPLETE line starts on a line of its own.
    last: Option<u8>,
}

impl AtomicFile {
    /// Start the output `path` (`-` for standard output). Nothing appears under `path` before
    /// [`AtomicFile::commit`]; whatever is there stays until then.
    ///
    /// # Errors
    /// [`SimError::Io`] when the temporary file cannot be created.
    pub fn create(path: &str) -> Result<Self, SimError> {
        let sink = if path == "-" {
            Sink::Stdout(BufWriter::with_capacity(1 << 16, std::io::stdout()))
        } else if is_special(Path::new(path)) {
            let f = std::fs::OpenOptions::new()
                .write(true)
                .open(path)
                .map_err(|e| SimError::io(path, e))?;
            Sink::Direct(BufWriter::with_capacity(1 << 16, f))
        } else {
            let mut target = TempTarget::new(Path::new(path))?;
            let f = target
                .file()
                .try_clone()
                .map_err(|e| SimError::io(path, e))?;
            Sink::File {
                target,
                w: BufWriter::with_capacity(1 << 16, f),
            }
        };
        Ok(Self {
            sink,
            name: path.to_string(),
            last: None,
        })
    }

    /// The name as given.
    pub fn name(&self) -> &str {
        &self.name
    }

    fn error_name(&self) -> PathBuf {
        if self.name == "-" {
            PathBuf::from(STDOUT_NAME)
        } else {
            PathBuf::from(&self.name)
        }
    }

    fn writer(&mut self) -> &mut dyn Write {
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
        if let Some(&l) = b.last() {
            self.last = Some(l);
        }
        res.map_err(|e| SimError::io(self.error_name(), e))
    }

    /// Flush, fsync and rename to the final name (see the module docs).
    ///
    /// # Errors
    /// [`SimError::Io`]; a file output then leaves the destination as it was.
    pub fn commit(mut self) -> Result<(), SimError> {
        let name = self.error_name();
        self.writer().flush().map_err(|e| SimError::io(&name, e))?;
        match self.sink {
            Sink::File { target, w } => {
                drop(w);
                target.commit()
            }
            Sink::Stdout(_) => Ok(()),
            Sink::Direct(w) => w
                .get_ref()
                .sync_all()
                // A device or pipe may not support fsync; the data was flushed.
                .or_else(|e| {
                    if e.kind() == std::io::ErrorKind::InvalidInput {
                        Ok(())
                    } else {
                        Err(e)
                    }
                })
                .map_err(|e| SimError::io(&name, e)),
        }
    }

    /// Mark the output incomplete after a failure. A file output is kept as `NAME.partial`,
    /// ending with `# INCOMPLETE: why`, and its path is returned; when that line cannot be
    /// written the temporary file is deleted and `None` returned. Standard output and devices
    /// get the line as a best effort.
    pub fn abandon(mut self, why: &str) -> Option<PathBuf> {
        let why = one_line(why);
        let lead = if self.last.is_some_and(|b| b != b'\n') {
            "\n"
        } else {
            ""
        };
        let marker = format!("{lead}# INCOMPLETE: {why}\n");
        // Best effort everywhere: the run has already failed, the error reported is the first.
        let written =
            self.writer().write_all(marker.as_bytes()).is_ok() && self.writer().flush().is_ok();
        match self.sink {
            Sink::File { target, w } => {
                drop(w);
                if written {
                    target.publish_partial()
                } else {
                    None
                }
            }
            Sink::Stdout(_) | Sink::Direct(_) => None,
        }
    }
}

/// `text` on one line, so that a message cannot end a comment line early.
fn one_line(text: &str) -> String {
    text.replace(['\n', '\r'], " ")
}

/// Write a whole small file atomically (summaries, generated source, configs).
///
/// # Errors
/// [`SimError::Io`].
pub fn write_file(path: &str, content: &[u8]) -> Result<(), SimError> {
    let mut f = AtomicFile::create(path)?;
    if let Err(e) = f.write_all(content) {
        f.abandon(&e.to_string());
        return Err(e);
    }
    f.commit()
}

/// The identity of an existing file: device and inode on Unix, the canonical path elsewhere.
#[cfg(unix)]
fn identity(path: &Path) -> Option<(u64, u64)> {
    use std::os::unix::fs::MetadataExt;
    std::fs::metadata(path).ok().map(|m| (m.dev(), m.ino()))
}

#[cfg(not(unix))]
fn identity(path: &Path) -> Option<PathBuf> {
    std::fs::canonicalize(path).ok()
}

/// The path made absolute without touching the file system, for outputs that do not exist.
fn lexical(path: &Path) -> PathBuf {
    std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf())
}

/// Refuse a run, before anything is written, in which an output would replace one of its
/// inputs (the same path, or the same file by a hard or symbolic link), two outputs share a
/// name, or standard input is read twice. Inputs and outputs are `(what, path)` pairs; `-`
/// (standard input or output) and devices such as `/dev/null` are not files to protect.
///
/// # Errors
/// [`SimError::Usage`] (exit 1) naming both sides.
pub fn refuse_overwriting_inputs(
    inputs: &[(&str, &str)],
    outputs: &[(&str, &str)],
) -> Result<(), SimError> {
    let stdin_uses: Vec<&str> = inputs
        .iter()
        .filter(|(_, p)| *p == "-")
        .map(|(w, _)| *w)
        .collect();
    if stdin_uses.len() > 1 {
        return Err(SimError::Usage(format!(
            "standard input ('-') can be read only once, but is given for {}",
            stdin_uses.join(" and ")
        )));
    }
    let files = |list: &[(&str, &str)]| -> Vec<(String, PathBuf)> {
        list.iter()
            .filter(|(_, p)| *p != "-" && !is_special(Path::new(p)))
            .map(|(w, p)| ((*w).to_string(), PathBuf::from(p)))
            .collect()
    };
    let ins = files(inputs);
    let outs = files(outputs);
    for (ow, op) in &outs {
        let out_id = identity(op);
        for (iw, ip) in &ins {
            let same_path = lexical(op) == lexical(ip);
            let same_file = out_id.is_some() && out_id == identity(ip);
            if same_path || same_file {
                let how = if same_path {
                    String::new()
                } else {
                    " (the same file under another name: a hard or symbolic link)".into()
                };
                return Err(SimError::Usage(format!(
                    "refusing to write {ow} '{}': it is the {iw} '{}'{how}; nothing was written (choose another output name)",
                    op.display(),
                    ip.display()
                )));
            }
        }
    }
    for (i, (aw, ap)) in outs.iter().enumerate() {
        for (bw, bp) in outs.iter().skip(i + 1) {
            let same =
                lexical(ap) == lexical(bp) || identity(ap).is_some_and(|a| Some(a) == identity(bp));
            if same {
                return Err(SimError::Usage(format!(
                    "{aw} and {bw} are both '{}': one would replace the other; nothing was written",
                    ap.display()
                )));
            }
        }
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    fn dir(name: &str) -> PathBuf {
        let d =
            std::env::temp_dir().join(format!("clampwise-output-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    fn entries(d: &Path) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(d)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn the_previous_file_stays_until_commit_and_no_temporary_is_left() {
        let d = dir("commit");
        let p = d.join("e.csv");
        let name = p.display().to_string();
        std::fs::write(&p, "old\n").unwrap();
        std::fs::write(partial_path(&p), "stale\n# INCOMPLETE: x\n").unwrap();
        let mut f = AtomicFile::create(&name).unwrap();
        f.write_all(b"new\n").unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "old\n");
        f.commit().unwrap();
        assert_eq!(std::fs::read_to_string(&p).unwrap(), "new\n");
        assert_eq!(entries(&d), ["e.csv"]);
        std::fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn an_abandoned_output_ends_with_its_marker_on_a_line_of_its_own() {
        let d = dir("abandon");
        let p = d.join("e.csv");
        let mut f = AtomicFile::create(&p.display().to_string()).unwrap();
        f.write_all(b"1,2,3\n4,5").unwrap();
        let partial = f.abandon("cut\nshort").unwrap();
        assert_eq!(
            std::fs::read_to_string(&partial).unwrap(),
            "1,2,3\n4,5\n# INCOMPLETE: cut short\n"
        );
        assert_eq!(entries(&d), ["e.csv.partial"]);
        std::fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn a_dropped_output_leaves_nothing() {
        let d = dir("drop");
        let mut f = AtomicFile::create(&d.join("x.svg").display().to_string()).unwrap();
        f.write_all(b"<svg>").unwrap();
        drop(f);
        assert!(entries(&d).is_empty());
        std::fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn a_temporary_target_keeps_the_extension() {
        let d = dir("ext");
        let t = TempTarget::new(&d.join("plot.png")).unwrap();
        let tmp = t.path().to_path_buf();
        assert_eq!(tmp.extension().unwrap(), "png");
        assert_eq!(tmp.parent(), Some(d.as_path()));
        std::fs::write(&tmp, b"png").unwrap();
        t.commit().unwrap();
        assert_eq!(entries(&d), ["plot.png"]);
        std::fs::remove_dir_all(&d).unwrap();
    }

    #[test]
    fn an_output_that_is_an_input_is_refused() {
        let d = dir("clobber");
        let a = d.join("t.csv");
        std::fs::write(&a, "x").unwrap();
        let link = d.join("link.csv");
        std::fs::hard_link(&a, &link).unwrap();
        let a_s = a.display().to_string();
        let link_s = link.display().to_string();
        let other = d.join("o.csv").display().to_string();
        let dotted = format!("{}/./t.csv", d.display());
        let input = [("trace", a_s.as_str())];
        assert!(refuse_overwriting_inputs(&input, &[("estimate", other.as_str())]).is_ok());
        for out in [&a_s, &link_s, &dotted] {
            let e = refuse_overwriting_inputs(&input, &[("estimate", out.as_str())])
                .unwrap_err()
                .to_string();
            assert!(
                e.contains("refusing to write estimate") && e.contains("trace"),
                "{e}"
            );
        }
        let e = refuse_overwriting_inputs(&[], &[("a", other.as_str()), ("b", other.as_str())]);
        assert!(e.is_err());
        let e = refuse_overwriting_inputs(&[("config", "-"), ("trace", "-")], &[]);
        assert!(e.unwrap_err().to_string().contains("only once"));
        assert!(refuse_overwriting_inputs(&input, &[("estimate", "/dev/null")]).is_ok());
        std::fs::remove_dir_all(&d).unwrap();
    }
}
