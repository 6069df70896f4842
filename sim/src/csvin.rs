//! Located, streaming CSV input: every problem names its file, line, column and header.
//!
//! Rows are read one at a time into a reused [`csv::ByteRecord`], so memory stays bounded
//! whatever the file length. `#` starts a comment line. A row with fewer or more fields than
//! the header is an error; when it is the last line and the file does not end with a line
//! terminator it is reported as a truncated last line. Cells are parsed as f64; NaN and
//! infinities are rejected (Rust's parser accepts `NaN` and `inf`, a trace must not).

use std::fs::File;
use std::io::{BufReader, Read, Seek, SeekFrom};

use crate::error::{DataError, SimError};

/// A CSV file (or standard input, `-`) opened for row-by-row reading.
pub struct CsvIn {
    reader: csv::Reader<Box<dyn Read + Send>>,
    file: String,
    headers: Vec<String>,
    header_line: u64,
    record: csv::ByteRecord,
    len: Option<u64>,
    ends_with_newline: Option<bool>,
    unterminated_last_line: Option<u64>,
}

fn last_byte(path: &str) -> std::io::Result<(u64, Option<u8>)> {
    let mut f = File::open(path)?;
    let len = f.metadata()?.len();
    if len == 0 {
        return Ok((0, None));
    }
    f.seek(SeekFrom::End(-1))?;
    let mut b = [0u8; 1];
    f.read_exact(&mut b)?;
    Ok((len, b.first().copied()))
}

impl CsvIn {
    /// Open `path` (`-` for standard input) and read its header line.
    ///
    /// # Errors
    /// [`SimError::Io`] when the file cannot be opened; [`SimError::Data`] for an empty file,
    /// a file of comments only, an unreadable or duplicated header.
    pub fn open(path: &str) -> Result<Self, SimError> {
        let (input, len, ends_with_newline): (Box<dyn Read + Send>, _, _) = if path == "-" {
            (Box::new(std::io::stdin()), None, None)
        } else {
            let f = File::open(path).map_err(|e| SimError::io(path, e))?;
            let (len, last) = last_byte(path).map_err(|e| SimError::io(path, e))?;
            (
                Box::new(BufReader::with_capacity(1 << 16, f)),
                Some(len),
                Some(last == Some(b'\n')),
            )
        };
        let reader = csv::ReaderBuilder::new()
            .comment(Some(b'#'))
            .flexible(true)
            .has_headers(true)
            .from_reader(input);
        let mut me = Self {
            reader,
            file: path.to_string(),
            headers: Vec::new(),
            header_line: 1,
            record: csv::ByteRecord::new(),
            len,
            ends_with_newline,
            unterminated_last_line: None,
        };
        let err = |m: &Self, line: Option<u64>, message: String| DataError {
            file: m.file.clone(),
            line,
            column: None,
            header: None,
            message,
        };
        let h = match me.reader.byte_headers() {
            Ok(h) => h.clone(),
            Err(e) => {
                return Err(err(
                    &me,
                    e.position().map(|p| p.line()),
                    format!("cannot read the header: {e}"),
                )
                .into());
            }
        };
        if h.is_empty() || (h.len() == 1 && h.get(0).is_some_and(|f| f.is_empty())) {
            return Err(err(&me, None, "empty file: no header line (expected column names such as t_s, force_1_N, omega_in_rad_s)".into()).into());
        }
        // The header record's own position ignores the comment lines before it; the reader's
        // position after it is the start of the next line, which counts them.
        me.header_line = me.reader.position().line().saturating_sub(1).max(1);
        for (i, f) in h.iter().enumerate() {
            let name = String::from_utf8_lossy(f).trim().to_string();
            if me.headers.contains(&name) {
                return Err(DataError {
                    file: me.file.clone(),
                    line: Some(me.header_line),
                    column: Some(i + 1),
                    header: Some(name.clone()),
                    message: format!("header name '{name}' appears twice"),
                }
                .into());
            }
            me.headers.push(name);
        }
        Ok(me)
    }

    /// File name as given.
    pub fn file(&self) -> &str {
        &self.file
    }

    /// Header names, trimmed.
    pub fn headers(&self) -> &[String] {
        &self.headers
    }

    /// Line of the header.
    pub fn header_line(&self) -> u64 {
        self.header_line
    }

    /// Index of a header name.
    pub fn column(&self, name: &str) -> Option<usize> {
        self.headers.iter().position(|h| h == name)
    }

    /// File length in bytes, when known (not for standard input).
    pub fn len_bytes(&self) -> Option<u64> {
        self.len
    }

    /// Bytes consumed so far.
    pub fn bytes_read(&self) -> u64 {
        self.reader.position().byte()
    }

    /// The line of a last row that had no line terminator (its values were used).
    pub fn unterminated_last_line(&self) -> Option<u64> {
        self.unterminated_last_line
    }

    /// A located error in the header line.
    pub fn header_error(&self, column: Option<usize>, message: String) -> DataError {
        DataError {
            file: self.file.clone(),
            line: Some(self.header_line),
            column: column.map(|c| c + 1),
            header: column.and_then(|c| self.headers.get(c).cloned()),
            message,
        }
    }

    /// Read the next data row; `Ok(None)` at the end of the file.
    ///
    /// # Errors
    /// A [`DataError`] for a row that cannot be read or has the wrong number of fields. The
    /// reader can go on after a field-count error (the row is consumed).
    pub fn next_row(&mut self) -> Result<Option<Row<'_>>, DataError> {
        match self.reader.read_byte_record(&mut self.record) {
            Ok(false) => Ok(None),
            Ok(true) => {
                let line = self.record.position().map_or(0, |p| p.line());
                let at_end = self.len.is_some_and(|l| self.reader.position().byte() >= l);
                let unterminated = at_end && self.ends_with_newline == Some(false);
                if self.record.len() != self.headers.len() {
                    let message = if unterminated && self.record.len() < self.headers.len() {
                        format!(
                            "truncated last line: {} of {} fields and no line terminator",
                            self.record.len(),
                            self.headers.len()
                        )
                    } else {
                        format!(
                            "row has {} fields, the header has {}",
                            self.record.len(),
                            self.headers.len()
                        )
                    };
                    return Err(DataError {
                        file: self.file.clone(),
                        line: Some(line),
                        column: Some(self.record.len().min(self.headers.len()) + 1),
                        header: None,
                        message,
                    });
                }
                if unterminated {
                    self.unterminated_last_line = Some(line);
                }
                Ok(Some(Row {
                    record: &self.record,
                    headers: &self.headers,
                    file: &self.file,
                    line,
                }))
            }
            Err(e) => Err(DataError {
                file: self.file.clone(),
                line: e.position().map(|p| p.line()),
                column: None,
                header: None,
                message: format!("cannot read row: {e}"),
            }),
        }
    }
}

/// One data row, borrowed from the reader.
pub struct Row<'a> {
    record: &'a csv::ByteRecord,
    headers: &'a [String],
    file: &'a str,
    /// 1-based line of the row.
    pub line: u64,
}

impl Row<'_> {
    /// A located error about cell `col` (0-based index).
    pub fn error(&self, col: usize, message: String) -> DataError {
        DataError {
            file: self.file.to_string(),
            line: Some(self.line),
            column: Some(col + 1),
            header: self.headers.get(col).cloned(),
            message,
        }
    }

    /// The raw text of cell `col`, trimmed.
    pub fn text(&self, col: usize) -> &str {
        self.record
            .get(col)
            .and_then(|b| std::str::from_utf8(b).ok())
            .map_or("", str::trim)
    }

    /// Cell `col` as a finite number; `Ok(None)` for an empty cell.
    ///
    /// # Errors
    /// A located [`DataError`] for text that is not a number, or NaN/infinite.
    pub fn f64(&self, col: usize) -> Result<Option<f64>, DataError> {
        let raw = self.record.get(col).unwrap_or(b"");
        let text = std::str::from_utf8(raw)
            .map_err(|_| self.error(col, "cell is not valid UTF-8".into()))?
            .trim();
        if text.is_empty() {
            return Ok(None);
        }
        match text.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(Some(v)),
            Ok(_) => Err(self.error(
                col,
                format!("'{text}' is not a finite number (NaN and infinities are rejected)"),
            )),
            Err(_) => Err(self.error(col, format!("cannot read '{text}' as a number"))),
        }
    }

    /// Cell `col` as a required finite number.
    ///
    /// # Errors
    /// As [`Row::f64`], and for an empty cell.
    pub fn required_f64(&self, col: usize) -> Result<f64, DataError> {
        self.f64(col)?
            .ok_or_else(|| self.error(col, "empty cell where a number is required".into()))
    }
}
