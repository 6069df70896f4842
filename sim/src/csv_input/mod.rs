//! Located, streaming CSV input: every problem names its file, line, column and header.
//!
//! Rows are read one at a time into reused buffers, so memory stays bounded whatever the file
//! length (it follows the longest line). Plain lines (no quote, no lone carriage return) are
//! split by a line splitter (`lines.rs`: `memchr` for line ends, eight bytes at a time for the
//! separators), about half the `csv` crate's instructions per row; from the first line that
//! is not plain to the end of the file, the `csv` crate reads. Both give the same rows, cells
//! and errors (property test `lines_tests.rs`), except that the splitter names the true line of
//! a row after a CRLF or a blank line, where the `csv` crate names the line before it.
//!
//! `#` starts a comment line. A row with fewer or more fields than the header is an error;
//! when it is the last line and the file does not end with a line terminator it is reported as
//! a truncated last line. Cells are parsed as f64; NaN and
//! infinities are rejected (Rust's parser accepts `NaN` and `inf`, a trace must not).
//!
//! Speed: a cell written as a plain decimal (`-12.345`, at most 19 characters after the sign,
//! no blanks around it) is read straight from its bytes by [`plain_decimal`]: the
//! digits as an integer, divided once by a power of ten, which is the correctly rounded value
//! whenever both are exact in f64 (Clinger's fast path [pub: Clinger, PLDI 1990]) — the same
//! bits as `str::parse::<f64>`, which is itself correctly rounded. Every other cell (exponents,
//! blanks to trim, long mantissas, anything malformed) takes `str::parse`, so what is accepted
//! and every error message are unchanged.
//!
//! Dialects: the column separator (`,` `;` or tab) and the decimal mark (`.` or `,`) are
//! sniffed from the header and the first data rows (after the `#` comment lines) by
//! [`sniff`], or set by a [`DialectChoice`]; see [`Dialect`]. A decimal-comma cell is read
//! as the same text with a point would be, bit for bit.

mod decimal;
mod dialect;
mod lines;

pub use decimal::{plain_decimal, plain_decimal_comma};
pub use dialect::{
    DecimalMark, Delimiter, Dialect, DialectChoice, DialectSource, SNIFF_BYTES, SNIFF_ROWS, sniff,
};
use dialect::{has_fraction, read_head};
use lines::LineReader;

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};

use crate::error::{DataError, SimError};

/// A CSV file (or standard input, `-`) opened for row-by-row reading.
pub struct CsvIn {
    source: Source,
    /// Each field of the current row as a range of its bytes.
    bounds: Vec<(usize, usize)>,
    file: String,
    headers: Vec<String>,
    header_line: u64,
    len: Option<u64>,
    ends_with_newline: Option<bool>,
    unterminated_last_line: Option<u64>,
    dialect: Dialect,
}

/// Where the rows come from: the line splitter while the lines are plain (no quote, no lone
/// carriage return), the `csv` crate from the first line that is not, to the end.
enum Source {
    Lines(LineReader),
    Csv(CsvRest),
    /// Only while one is replaced by the other.
    Switching,
}

/// The `csv` crate's reader over the stream from some line on.
struct CsvRest {
    reader: csv::Reader<Box<dyn Read + Send>>,
    record: csv::ByteRecord,
    /// Lines and bytes of the stream before the reader's start.
    lines_before: u64,
    bytes_before: u64,
}

impl CsvRest {
    fn new(input: Box<dyn Read + Send>, dialect: Dialect, has_headers: bool) -> Self {
        let reader = csv::ReaderBuilder::new()
            .buffer_capacity(1 << 16)
            .delimiter(dialect.delimiter.byte())
            .comment(Some(b'#'))
            .flexible(true)
            .has_headers(has_headers)
            .from_reader(input);
        Self {
            reader,
            record: csv::ByteRecord::new(),
            lines_before: 0,
            bytes_before: 0,
        }
    }
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

/// The header record of `reader` and the stream position after it, or the message of why it
/// cannot be read.
fn header_record(
    reader: &mut csv::Reader<impl Read>,
) -> Result<(csv::ByteRecord, csv::Position), (Option<u64>, String)> {
    match reader.byte_headers() {
        Ok(h) => Ok((h.clone(), reader.position().clone())),
        Err(e) => Err((
            e.position().map(|p| p.line()),
            format!("cannot read the header: {e}"),
        )),
    }
}

/// Where the line after a header ending at byte `end` of `head` starts, when the header line is
/// whole in `head` and ends with `\n`; `None` sends the file to the `csv` crate throughout.
fn line_after_header(head: &[u8], end: usize, complete: bool) -> Option<usize> {
    if end > 0 && head.get(end - 1) == Some(&b'\n') {
        return Some(end);
    }
    match head.get(end) {
        Some(b'\n') => Some(end + 1),
        // A header that is the whole file, with no terminator.
        None if complete => Some(end),
        _ => None,
    }
}

impl CsvIn {
    /// Open `path` (`-` for standard input) and read its header line, the dialect sniffed.
    ///
    /// # Errors
    /// As [`CsvIn::open_with`].
    pub fn open(path: &str) -> Result<Self, SimError> {
        Self::open_with(path, DialectChoice::default())
    }

    /// Open `path` (`-` for standard input) with the dialect parts `choice` sets and the
    /// others sniffed ([`sniff`]), and read its header line.
    ///
    /// # Errors
    /// [`SimError::Io`] when the file cannot be opened; [`SimError::Data`] for an
    /// unrecognised dialect, an empty file, a file of comments only, an unreadable or
    /// duplicated header; [`SimError::Usage`] for a decimal comma in a `,`-separated file.
    pub fn open_with(path: &str, choice: DialectChoice) -> Result<Self, SimError> {
        Self::open_reading(path, choice, true)
    }

    /// [`CsvIn::open_with`]; `lines = false` reads every row with the `csv` crate (the
    /// reference the line splitter is tested against).
    fn open_reading(path: &str, choice: DialectChoice, lines: bool) -> Result<Self, SimError> {
        let (mut raw, len, ends_with_newline): (Box<dyn Read + Send>, _, _) = if path == "-" {
            (Box::new(std::io::stdin()), None, None)
        } else {
            let f = File::open(path).map_err(|e| SimError::io(path, e))?;
            let (len, last) = last_byte(path).map_err(|e| SimError::io(path, e))?;
            // Both readers buffer themselves: a second buffer would only copy.
            (Box::new(f), Some(len), Some(last == Some(b'\n')))
        };
        let (head, complete) = read_head(&mut raw).map_err(|e| SimError::io(path, e))?;
        let dialect = sniff(path, &head, complete, choice)?;
        let located = |line: Option<u64>, message: String| -> SimError {
            DataError {
                file: path.to_string(),
                line,
                column: None,
                header: None,
                message,
            }
            .into()
        };
        // The header is read from the sniffed head when it is whole there; the rows then go
        // to the line splitter. Otherwise the `csv` crate reads the whole stream.
        let mut head_reader =
            CsvRest::new(Box::new(std::io::Cursor::new(head.clone())), dialect, true);
        let (record, at) =
            header_record(&mut head_reader.reader).map_err(|(l, m)| located(l, m))?;
        let header_end = usize::try_from(at.byte()).unwrap_or(usize::MAX);
        let whole = header_end < head.len() || complete;
        let (source, h, header_line) = match line_after_header(&head, header_end, complete) {
            Some(next) if whole && lines => {
                let before = head.get(..next).unwrap_or_default();
                let header_line = (memchr::memchr_iter(b'\n', before).count() as u64).max(1);
                let rest = head.get(next..).unwrap_or_default().to_vec();
                let lines = LineReader::new(raw, rest, next as u64, header_line + 1);
                (Source::Lines(lines), record, header_line)
            }
            _ => {
                let input: Box<dyn Read + Send> = Box::new(std::io::Cursor::new(head).chain(raw));
                let mut rest = CsvRest::new(input, dialect, true);
                let (record, at) =
                    header_record(&mut rest.reader).map_err(|(l, m)| located(l, m))?;
                // The header record's own position ignores the comment lines before it; the
                // reader's position after it is the start of the next line, which counts them.
                (
                    Source::Csv(rest),
                    record,
                    at.line().saturating_sub(1).max(1),
                )
            }
        };
        if h.is_empty() || (h.len() == 1 && h.get(0).is_some_and(|f| f.is_empty())) {
            return Err(located(None, "empty file: no header line (expected column names such as t_s, force_1_N, omega_in_rad_s)".into()));
        }
        let mut me = Self {
            source,
            bounds: Vec::with_capacity(h.len()),
            file: path.to_string(),
            headers: Vec::with_capacity(h.len()),
            header_line,
            len,
            ends_with_newline,
            unterminated_last_line: None,
            dialect,
        };
        // A set, not a scan of the names so far: linear in the number of columns.
        let mut seen = std::collections::HashSet::with_capacity(h.len());
        for (i, f) in h.iter().enumerate() {
            let name = String::from_utf8_lossy(f).trim().to_string();
            if !seen.insert(name.clone()) {
                let shown = echo(&name).into_owned();
                return Err(DataError {
                    file: me.file.clone(),
                    line: Some(me.header_line),
                    column: Some(i + 1),
                    header: Some(shown.clone()),
                    message: format!("header name '{shown}' appears twice"),
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

    /// The dialect the file is read with.
    pub fn dialect(&self) -> Dialect {
        self.dialect
    }

    /// Header names, trimmed.
    pub fn headers(&self) -> &[String] {
        &self.headers
    }

    /// Line of the header.
    pub fn header_line(&self) -> u64 {
        self.header_line
    }

    /// The header names for a message: at most [`ECHO_NAMES`] of them, each cut by [`echo`].
    pub fn headers_for_message(&self) -> String {
        let mut s: Vec<String> = self
            .headers
            .iter()
            .take(ECHO_NAMES)
            .map(|h| echo(h).into_owned())
            .collect();
        if self.headers.len() > ECHO_NAMES {
            s.push(format!("… ({} columns in all)", self.headers.len()));
        }
        s.join(", ")
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
        match &self.source {
            Source::Lines(lines) => lines.position(),
            Source::Csv(c) => c.bytes_before + c.reader.position().byte(),
            Source::Switching => 0,
        }
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
            header: column.and_then(|c| self.headers.get(c).map(|h| echo(h).into_owned())),
            message,
        }
    }

    /// Read the next data row; `Ok(None)` at the end of the file.
    ///
    /// # Errors
    /// A [`DataError`] for a row that cannot be read or has the wrong number of fields. The
    /// reader can go on after a field-count error (the row is consumed).
    pub fn next_row(&mut self) -> Result<Option<Row<'_>>, DataError> {
        let Some((line, unterminated)) = self.advance()? else {
            return Ok(None);
        };
        let fields = self.bounds.len();
        if fields != self.headers.len() {
            let message = if unterminated && fields < self.headers.len() {
                format!(
                    "truncated last line: {} of {} fields and no line terminator",
                    fields,
                    self.headers.len()
                )
            } else {
                format!(
                    "row has {} fields, the header has {}",
                    fields,
                    self.headers.len()
                )
            };
            return Err(DataError {
                file: self.file.clone(),
                line: Some(line),
                column: Some(fields.min(self.headers.len()) + 1),
                header: None,
                message,
            });
        }
        if unterminated {
            self.unterminated_last_line = Some(line);
        }
        let data = match &self.source {
            Source::Lines(lines) => lines.current(),
            Source::Csv(c) => c.record.as_slice(),
            Source::Switching => &[],
        };
        Ok(Some(Row {
            data,
            bounds: &self.bounds,
            headers: &self.headers,
            file: &self.file,
            line,
            decimal_comma: self.dialect.decimal == DecimalMark::Comma,
        }))
    }

    /// Move to the next data row, its fields' ranges in `self.bounds`: its line and whether it
    /// is a last line without a terminator; `None` at the end.
    fn advance(&mut self) -> Result<Option<(u64, bool)>, DataError> {
        loop {
            let switch_at = match &mut self.source {
                Source::Lines(lines) => {
                    let Some(line) = lines.next_line().map_err(|e| DataError {
                        file: self.file.clone(),
                        line: None,
                        column: None,
                        header: None,
                        message: format!("cannot read row: {e}"),
                    })?
                    else {
                        return Ok(None);
                    };
                    let bytes = lines.current();
                    // Blank lines and comments are skipped, as the `csv` crate skips them.
                    if bytes.first().is_none_or(|&b| b == b'#') {
                        continue;
                    }
                    if memchr::memchr2(b'"', b'\r', bytes).is_none() {
                        split_fields(bytes, self.dialect.delimiter.byte(), &mut self.bounds);
                        return Ok(Some((line.number, !line.terminated)));
                    }
                    (line.number, line.offset)
                }
                Source::Csv(c) => {
                    match c.reader.read_byte_record(&mut c.record) {
                        Ok(false) => return Ok(None),
                        Ok(true) => {}
                        Err(e) => {
                            return Err(DataError {
                                file: self.file.clone(),
                                line: e.position().map(|p| p.line() + c.lines_before),
                                column: None,
                                header: None,
                                message: format!("cannot read row: {e}"),
                            });
                        }
                    }
                    let line = c.record.position().map_or(0, |p| p.line()) + c.lines_before;
                    let read = c.bytes_before + c.reader.position().byte();
                    let at_end = self.len.is_some_and(|l| read >= l);
                    self.bounds.clear();
                    self.bounds.extend(
                        (0..c.record.len())
                            .filter_map(|i| c.record.range(i))
                            .map(|r| (r.start, r.end)),
                    );
                    return Ok(Some((
                        line,
                        at_end && self.ends_with_newline == Some(false),
                    )));
                }
                Source::Switching => return Ok(None),
            };
            // A quoted field or a lone carriage return: the `csv` crate reads from here on.
            self.switch_to_csv(switch_at.0, switch_at.1);
        }
    }

    /// Hand the stream from the line `number` starting at byte `offset` to the `csv` crate.
    fn switch_to_csv(&mut self, number: u64, offset: u64) {
        if let Source::Lines(lines) = std::mem::replace(&mut self.source, Source::Switching) {
            let mut rest = CsvRest::new(lines.into_rest(offset), self.dialect, false);
            rest.lines_before = number - 1;
            rest.bytes_before = offset;
            self.source = Source::Csv(rest);
        }
    }
}

/// The fields of a plain line, as ranges of its bytes, into `bounds`.
///
/// Eight bytes at a time: a byte of `w = word ^ delimiter×8` is zero exactly where the line
/// has the delimiter, and `!(((w & 0x7f…) + 0x7f…) | w) & 0x80…` sets the top bit of exactly
/// those bytes (no carry crosses a byte, unlike the shorter `(w − 0x01…) & !w` test)
/// [pub: Warren, *Hacker's Delight*, 2nd ed., §6-1 "Find First 0-Byte"].
#[inline]
fn split_fields(line: &[u8], delimiter: u8, bounds: &mut Vec<(usize, usize)>) {
    const LOW7: u64 = 0x7f7f_7f7f_7f7f_7f7f;
    const HIGH: u64 = 0x8080_8080_8080_8080;
    bounds.clear();
    let pattern = u64::from_ne_bytes([delimiter; 8]);
    let mut start = 0;
    let mut chunks = line.chunks_exact(8);
    let mut at = 0;
    for chunk in &mut chunks {
        let Ok(bytes) = <[u8; 8]>::try_from(chunk) else {
            break;
        };
        let w = u64::from_le_bytes(bytes) ^ pattern;
        let mut hits = !(((w & LOW7) + LOW7) | w) & HIGH;
        while hits != 0 {
            let i = at + (hits.trailing_zeros() / 8) as usize;
            bounds.push((start, i));
            start = i + 1;
            hits &= hits - 1;
        }
        at += 8;
    }
    for (i, &b) in chunks.remainder().iter().enumerate() {
        if b == delimiter {
            bounds.push((start, at + i));
            start = at + i + 1;
        }
    }
    bounds.push((start, line.len()));
}

/// One data row, borrowed from the reader.
pub struct Row<'a> {
    data: &'a [u8],
    bounds: &'a [(usize, usize)],
    headers: &'a [String],
    file: &'a str,
    /// 1-based line of the row.
    pub line: u64,
    decimal_comma: bool,
}

impl Row<'_> {
    /// A located error about cell `col` (0-based index).
    pub fn error(&self, col: usize, message: String) -> DataError {
        DataError {
            file: self.file.to_string(),
            line: Some(self.line),
            column: Some(col + 1),
            header: self.headers.get(col).map(|h| echo(h).into_owned()),
            message,
        }
    }

    /// The raw bytes of cell `col`, untrimmed (empty for a missing cell).
    pub fn bytes(&self, col: usize) -> &[u8] {
        self.cell(col)
    }

    #[inline]
    fn cell(&self, col: usize) -> &[u8] {
        self.bounds
            .get(col)
            .and_then(|&(a, b)| self.data.get(a..b))
            .unwrap_or_default()
    }

    /// The raw text of cell `col`, trimmed.
    pub fn text(&self, col: usize) -> &str {
        std::str::from_utf8(self.cell(col))
            .ok()
            .map_or("", str::trim)
    }

    /// Cell `col` as a finite number; `Ok(None)` for an empty cell.
    ///
    /// # Errors
    /// A located [`DataError`] for text that is not a number, or NaN/infinite.
    #[inline]
    pub fn f64(&self, col: usize) -> Result<Option<f64>, DataError> {
        let raw = self.cell(col);
        let fast = if self.decimal_comma {
            plain_decimal_comma(raw)
        } else {
            plain_decimal(raw)
        };
        match fast {
            Some(v) => Ok(Some(v)),
            None if raw.is_empty() => Ok(None),
            None => self.parse_text(col, raw),
        }
    }

    /// [`Row::f64`] through `str::parse`, for the cells [`plain_decimal`] leaves: kept out of
    /// line so the fast path stays small enough to inline.
    #[inline(never)]
    fn parse_text(&self, col: usize, raw: &[u8]) -> Result<Option<f64>, DataError> {
        let text = std::str::from_utf8(raw)
            .map_err(|_| self.error(col, "cell is not valid UTF-8".into()))?
            .trim();
        if text.is_empty() {
            return Ok(None);
        }
        let with_point;
        let parsed = if self.decimal_comma {
            if text.contains('.') {
                return Err(self.error(
                    col,
                    format!(
                        "'{}' has a '.' but the file is read with a decimal comma (thousands separators are not read; --decimal sets the mark)",
                        echo(text)
                    ),
                ));
            }
            with_point = text.replace(',', ".");
            with_point.parse::<f64>()
        } else {
            text.parse::<f64>()
        };
        match parsed {
            Ok(v) if v.is_finite() => Ok(Some(v)),
            Ok(_) => Err(self.error(
                col,
                format!(
                    "'{}' is not a finite number (NaN and infinities are rejected)",
                    echo(text)
                ),
            )),
            Err(_) if !self.decimal_comma && has_fraction(text.as_bytes(), b',') => Err(self.error(
                col,
                format!(
                    "cannot read '{}' as a number: the file is read with a decimal point (a decimal comma? set --decimal comma)",
                    echo(text)
                ),
            )),
            Err(_) => Err(self.error(col, format!("cannot read '{}' as a number", echo(text)))),
        }
    }

    /// Cell `col` as a required finite number.
    ///
    /// # Errors
    /// As [`Row::f64`], and for an empty cell.
    #[inline]
    pub fn required_f64(&self, col: usize) -> Result<f64, DataError> {
        self.f64(col)?
            .ok_or_else(|| self.error(col, "empty cell where a number is required".into()))
    }
}

/// How many characters of a cell or header name a message repeats.
pub const ECHO_CHARS: usize = 64;

/// How many header names a message lists.
pub const ECHO_NAMES: usize = 24;

/// `text` as a message repeats it: whole when short, else its first [`ECHO_CHARS`] characters
/// and its length, so that a huge bad cell is not copied into every message and file.
///
/// ```
/// use clampwise_sim::csv_input::echo;
/// assert_eq!(echo("abc"), "abc");
/// let big = "x".repeat(1000);
/// assert_eq!(echo(&big), format!("{}… (1000 bytes)", "x".repeat(64)));
/// ```
pub fn echo(text: &str) -> std::borrow::Cow<'_, str> {
    match text.char_indices().nth(ECHO_CHARS) {
        None => std::borrow::Cow::Borrowed(text),
        Some((at, _)) => std::borrow::Cow::Owned(format!(
            "{}… ({} bytes)",
            text.get(..at).unwrap_or_default(),
            text.len()
        )),
    }
}

#[cfg(test)]
mod lines_tests;

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::float_cmp)]
    use super::*;
    use proptest::prelude::*;

    /// Every accepted cell gives `str::parse`'s bits; everything else is left to `str::parse`.
    fn agrees(text: &str) {
        if let Some(v) = plain_decimal(text.as_bytes()) {
            let std = text.parse::<f64>().unwrap();
            assert_eq!(v.to_bits(), std.to_bits(), "{text}: {v} vs {std}");
        }
    }

    #[test]
    fn plain_decimals_are_read_and_the_rest_is_left_to_str_parse() {
        for (text, bits) in [
            ("0", 0f64.to_bits()),
            ("-0", (-0f64).to_bits()),
            ("-0.000", (-0f64).to_bits()),
            ("+1.5", 1.5f64.to_bits()),
            ("129404", 129_404f64.to_bits()),
            ("-750.459", (-750.459f64).to_bits()),
            ("0.001", 0.001f64.to_bits()),
            ("499.996", 499.996f64.to_bits()),
            ("9007199254740991", 9_007_199_254_740_991f64.to_bits()),
            ("0.00000000000000001", 1e-17f64.to_bits()),
        ] {
            assert_eq!(
                plain_decimal(text.as_bytes()).map(f64::to_bits),
                Some(bits),
                "{text}"
            );
            agrees(text);
        }
        // Exponents, blanks, NaN/inf, 2^53 and above, more than 22 decimals, 20 digits, lone
        // signs and points, a second point: not this path's business.
        for text in [
            "",
            "-",
            "+",
            ".",
            "1.",
            ".5",
            "-.5",
            "1e3",
            "1E3",
            " 1",
            "1 ",
            "nan",
            "inf",
            "NaN",
            "9007199254740992",
            "499.99600000000004",
            "0.0000000000000000001",
            "12345678901234567890",
            "1.2.3",
            "1,5",
            "--1",
            "+-1",
            "0x10",
            "\u{a0}1",
        ] {
            assert_eq!(plain_decimal(text.as_bytes()), None, "{text:?}");
        }
    }

    /// A decimal-comma cell gives the bits `str::parse` gives the same text with a point.
    fn agrees_with_comma(text: &str) {
        let with_comma = text.replace('.', ",");
        if let Some(v) = plain_decimal_comma(with_comma.as_bytes()) {
            let std = text.parse::<f64>().unwrap();
            assert_eq!(v.to_bits(), std.to_bits(), "{with_comma}: {v} vs {std}");
        }
        assert_eq!(
            plain_decimal_comma(with_comma.as_bytes()).map(f64::to_bits),
            plain_decimal(text.as_bytes()).map(f64::to_bits),
            "{text}"
        );
    }

    #[test]
    fn decimal_commas_read_as_points_do() {
        for text in ["-750.459", "0.001", "499.996", "-0.000", "+1.5", "129404"] {
            agrees_with_comma(text);
            assert!(plain_decimal_comma(text.replace('.', ",").as_bytes()).is_some());
        }
        // A point is not a decimal comma's business (thousands separators are not read).
        for text in ["1.5", "1,5,0", ",5", "1,", "1.000,5"] {
            assert_eq!(plain_decimal_comma(text.as_bytes()), None, "{text}");
        }
    }

    fn sniffed(head: &str) -> Result<Dialect, String> {
        sniff("t.csv", head.as_bytes(), true, DialectChoice::default()).map_err(|e| e.to_string())
    }

    #[test]
    fn sniffs_separator_and_decimal_mark() {
        let d = sniffed("# c,o;m\tment\nt_s;f_N\n0;1,5\n0,001;2\n").unwrap();
        assert_eq!(
            (d.delimiter, d.decimal),
            (Delimiter::Semicolon, DecimalMark::Comma)
        );
        assert_eq!(
            (d.delimiter_from, d.decimal_from),
            (DialectSource::Sniffed, DialectSource::Sniffed)
        );
        let d = sniffed("t_s\tf_N\r\n0\t1.5\r\n").unwrap();
        assert_eq!(
            (d.delimiter, d.decimal),
            (Delimiter::Tab, DecimalMark::Point)
        );
        let d = sniffed("t_s;f_N\n0;1\n").unwrap();
        assert_eq!(
            (d.decimal, d.decimal_from),
            (DecimalMark::Point, DialectSource::Default)
        );
        let d = sniffed("t_s,f_N\n0,1.5\n").unwrap();
        assert_eq!(
            (d.delimiter, d.decimal),
            (Delimiter::Comma, DecimalMark::Point)
        );
        // A header name with a comma in a ';' file: the rows settle it.
        let d = sniffed("t_s;force, kN\n0;1,5\n0,001;2,5\n").unwrap();
        assert_eq!(d.delimiter, Delimiter::Semicolon);
        // An empty file is left to the reader's own message.
        assert_eq!(sniffed("").unwrap(), Dialect::default());
        let e = sniffed("\n# x\nt_s|f_N|g\n0|1|2\n").unwrap_err();
        assert!(e.contains("t.csv:3:") && e.contains("'|' 2 times"), "{e}");
        // A cut last line of an incomplete head is not looked at.
        let d = sniff(
            "t",
            b"t_s;f_N\n0;1,5\n0;2.",
            false,
            DialectChoice::default(),
        )
        .unwrap();
        assert_eq!(d.decimal, DecimalMark::Comma);
        let e = sniff(
            "t",
            b"t_s,f\n",
            true,
            DialectChoice {
                delimiter: None,
                decimal: Some(DecimalMark::Comma),
            },
        )
        .unwrap_err()
        .to_string();
        assert!(e.contains("','-separated"), "{e}");
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(20_000))]

        #[test]
        fn decimal_comma_matches_str_parse_of_the_point_text(
            int in 0u64..10_000_000_000,
            frac in proptest::option::of("[0-9]{1,12}"),
            sign in prop_oneof![Just(""), Just("-"), Just("+")],
        ) {
            let text = match &frac {
                Some(f) => format!("{sign}{int}.{f}"),
                None => format!("{sign}{int}"),
            };
            agrees_with_comma(&text);
        }

        #[test]
        fn decimal_comma_matches_on_printed_floats(bits in any::<u64>()) {
            let v = f64::from_bits(bits);
            prop_assume!(v.is_finite());
            agrees_with_comma(&format!("{v}"));
            agrees_with_comma(&format!("{v:.3}"));
        }

        #[test]
        fn fast_path_matches_str_parse_on_decimal_text(
            int in 0u64..10_000_000_000,
            frac in proptest::option::of("[0-9]{1,12}"),
            sign in prop_oneof![Just(""), Just("-"), Just("+")],
        ) {
            let text = match &frac {
                Some(f) => format!("{sign}{int}.{f}"),
                None => format!("{sign}{int}"),
            };
            let v = plain_decimal(text.as_bytes());
            // Up to 15 digits the fast path always applies (10¹⁵ < 2⁵³).
            let digits = text.bytes().filter(u8::is_ascii_digit).count();
            prop_assert!(v.is_some() || digits > 15, "{text}");
            agrees(&text);
        }

        #[test]
        fn fast_path_matches_str_parse_on_printed_floats(bits in any::<u64>()) {
            let v = f64::from_bits(bits);
            prop_assume!(v.is_finite());
            // Rust's shortest round-trip printing: plain decimals of every size.
            agrees(&format!("{v}"));
            agrees(&format!("{v:.3}"));
        }

        #[test]
        fn fast_path_matches_str_parse_on_any_ascii(text in "[-+0-9.]{0,24}") {
            agrees(&text);
        }
    }
}
