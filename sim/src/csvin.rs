//! Located, streaming CSV input: every problem names its file, line, column and header.
//!
//! Rows are read one at a time into a reused [`csv::ByteRecord`], so memory stays bounded
//! whatever the file length. `#` starts a comment line. A row with fewer or more fields than
//! the header is an error; when it is the last line and the file does not end with a line
//! terminator it is reported as a truncated last line. Cells are parsed as f64; NaN and
//! infinities are rejected (Rust's parser accepts `NaN` and `inf`, a trace must not).
//!
//! Speed: a cell written as a plain decimal (`-12.345`, at most 19 characters after the sign,
//! no blanks around it) is read straight from its bytes by [`plain_decimal`]: the
//! digits as an integer, divided once by a power of ten, which is the correctly rounded value
//! whenever both are exact in f64 (Clinger's fast path [pub: Clinger, PLDI 1990]) — the same
//! bits as `str::parse::<f64>`, which is itself correctly rounded. Every other cell (exponents,
//! blanks to trim, long mantissas, anything malformed) takes `str::parse`, so what is accepted
//! and every error message are unchanged.

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};

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
            // The csv reader buffers itself (64 KiB below): a second buffer would only copy.
            (Box::new(f), Some(len), Some(last == Some(b'\n')))
        };
        let reader = csv::ReaderBuilder::new()
            .buffer_capacity(1 << 16)
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
            header: self.headers.get(col).map(|h| echo(h).into_owned()),
            message,
        }
    }

    /// The raw bytes of cell `col`, untrimmed (empty for a missing cell).
    pub fn bytes(&self, col: usize) -> &[u8] {
        self.record.get(col).unwrap_or(b"")
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
    #[inline]
    pub fn f64(&self, col: usize) -> Result<Option<f64>, DataError> {
        let raw = self.record.get(col).unwrap_or(b"");
        match plain_decimal(raw) {
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
        match text.parse::<f64>() {
            Ok(v) if v.is_finite() => Ok(Some(v)),
            Ok(_) => Err(self.error(
                col,
                format!(
                    "'{}' is not a finite number (NaN and infinities are rejected)",
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
/// use clampwise_sim::csvin::echo;
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

/// Powers of ten exact in f64 (5²² < 2⁵³).
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// The value of a cell written as a plain decimal, `[+-]?digits[.digits]` with no blanks, at
/// most 19 characters after the sign, the digits below 2⁵³ as an integer: bit for bit what `str::parse::<f64>` gives; `None` for anything else (the caller then takes
/// `str::parse`, which also gives the located error).
///
/// Exact because the digits form an integer m < 2⁵³ and the divisor 10ᵏ (k ≤ 22) is exact in
/// f64, so the one IEEE division rounds the true quotient m / 10ᵏ correctly, as `str::parse`
/// does [pub: Clinger, "How to read floating point numbers accurately", PLDI 1990]. The sign
/// is applied after, so `-0` is −0.0 as in `str::parse`.
#[inline]
pub fn plain_decimal(cell: &[u8]) -> Option<f64> {
    let (negative, body) = match cell.split_first()? {
        (b'-', rest) => (true, rest),
        (b'+', rest) => (false, rest),
        _ => (false, cell),
    };
    // At most 19 characters, so at most 19 digits: below 10¹⁹ < 2⁶⁴, no overflow below.
    if body.len() > 19 {
        return None;
    }
    let mut mantissa: u64 = 0;
    let mut point: Option<usize> = None;
    for (i, &b) in body.iter().enumerate() {
        let digit = b.wrapping_sub(b'0');
        if digit <= 9 {
            mantissa = mantissa * 10 + u64::from(digit);
        } else if b == b'.' && point.is_none() {
            point = Some(i);
        } else {
            return None;
        }
    }
    let fraction_digits = match point {
        // `str::parse` also takes `1.` and `.5`, but not `.` nor an empty string: cells with
        // an empty part are left to it, which keeps this grammar a strict subset of its.
        Some(0) => return None,
        Some(at) if at + 1 == body.len() => return None,
        Some(at) => body.len() - at - 1,
        None if body.is_empty() => return None,
        None => 0,
    };
    if mantissa >= 1 << 53 {
        return None;
    }
    let divisor = *POW10.get(fraction_digits)?;
    // mantissa < 2⁵³: exact as f64.
    #[allow(clippy::cast_precision_loss)]
    let m = mantissa as f64;
    let v = m / divisor;
    Some(if negative { -v } else { v })
}

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

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(20_000))]

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
