//! One view of a CSV file and a columnar log for the trace reader: the column names with
//! their located errors ([`Header`]) and a row's cells ([`Cells`]), so that both are mapped
//! and parsed by the same code.

use super::ColumnarLog;
use crate::csv_input::{CsvIn, Row, echo};
use crate::error::DataError;

/// The column names a trace has, and how an error about them is located.
pub trait Header {
    /// Index of a column name.
    fn column(&self, name: &str) -> Option<usize>;
    /// Every column name.
    fn headers(&self) -> &[String];
    /// The names for a message (shortened when there are many).
    fn headers_for_message(&self) -> String;
    /// A located error about the header (`column`: 0-based index).
    fn header_error(&self, column: Option<usize>, message: String) -> DataError;
    /// `column` or `channel`.
    fn what(&self) -> &'static str;
    /// `the header` or `the file`.
    fn holder(&self) -> &'static str;
}

impl Header for CsvIn {
    fn column(&self, name: &str) -> Option<usize> {
        CsvIn::column(self, name)
    }
    fn headers(&self) -> &[String] {
        CsvIn::headers(self)
    }
    fn headers_for_message(&self) -> String {
        CsvIn::headers_for_message(self)
    }
    fn header_error(&self, column: Option<usize>, message: String) -> DataError {
        CsvIn::header_error(self, column, message)
    }
    fn what(&self) -> &'static str {
        "column"
    }
    fn holder(&self) -> &'static str {
        "the header has"
    }
}

/// How many names a message lists before it says how many there are.
const ECHO_NAMES: usize = 40;

/// A columnar log's channel or column names as a [`Header`].
pub struct LogHeader<'a>(pub &'a dyn ColumnarLog);

impl Header for LogHeader<'_> {
    fn column(&self, name: &str) -> Option<usize> {
        self.0.names().iter().position(|n| n == name)
    }
    fn headers(&self) -> &[String] {
        self.0.names()
    }
    fn headers_for_message(&self) -> String {
        let names = self.0.names();
        let mut s: Vec<String> = names
            .iter()
            .take(ECHO_NAMES)
            .map(|h| format!("'{}'", echo(h)))
            .collect();
        if names.len() > ECHO_NAMES {
            s.push(format!("… ({} in all)", names.len()));
        }
        if s.is_empty() {
            return "no channels".into();
        }
        s.join(", ")
    }
    fn header_error(&self, column: Option<usize>, message: String) -> DataError {
        let at = column
            .and_then(|c| self.0.names().get(c))
            .map_or(String::new(), |n| format!("'{}': ", echo(n)));
        super::log_error(self.0.file(), format!("{at}{message}"))
    }
    fn what(&self) -> &'static str {
        "channel"
    }
    fn holder(&self) -> &'static str {
        "the file has"
    }
}

/// The cells of one row.
pub trait Cells {
    /// The row's place for estimate rows: the CSV line, or the log's 1-based row number.
    fn line(&self) -> u64;
    /// A located error about cell `col`.
    fn error(&self, col: usize, message: String) -> DataError;
    /// The number in cell `col`; `None` when it is empty or missing.
    ///
    /// # Errors
    /// A located error for text that is not a finite number.
    fn f64(&self, col: usize) -> Result<Option<f64>, DataError>;
    /// A 0/1 valid bit.
    ///
    /// # Errors
    /// A located error for anything else.
    fn valid_bit(&self, col: usize) -> Result<bool, DataError>;
    /// What an empty cell is called in messages.
    fn empty(&self) -> &'static str;

    /// The number in cell `col`, which must be there.
    ///
    /// # Errors
    /// A located error for an empty cell or text that is not a finite number.
    #[inline]
    fn required_f64(&self, col: usize) -> Result<f64, DataError> {
        self.f64(col)?
            .ok_or_else(|| self.error(col, format!("{} where a number is required", self.empty())))
    }
}

impl Cells for Row<'_> {
    #[inline]
    fn line(&self) -> u64 {
        self.line
    }
    fn error(&self, col: usize, message: String) -> DataError {
        Row::error(self, col, message)
    }
    #[inline]
    fn f64(&self, col: usize) -> Result<Option<f64>, DataError> {
        Row::f64(self, col)
    }
    #[inline]
    fn valid_bit(&self, col: usize) -> Result<bool, DataError> {
        // The usual spellings straight from the bytes (no allocation); anything else (blanks
        // to trim, other words) through the trimmed text.
        match self.bytes(col) {
            b"1" => Ok(true),
            b"0" => Ok(false),
            _ => match self.text(col) {
                "1" | "1.0" | "true" => Ok(true),
                "0" | "0.0" | "false" => Ok(false),
                other => Err(self.error(
                    col,
                    format!("valid bit must be 0 or 1, got '{}'", echo(other)),
                )),
            },
        }
    }
    fn empty(&self) -> &'static str {
        "empty cell"
    }
}

/// One row of a columnar log: the values of the columns in use, by name index.
pub struct LogRow<'a> {
    /// The values, one slot per name and one more for an own time base.
    pub values: &'a [Option<f64>],
    /// The log, for locating errors.
    pub log: &'a dyn ColumnarLog,
    /// 1-based row number.
    pub line: u64,
}

impl Cells for LogRow<'_> {
    fn line(&self) -> u64 {
        self.line
    }
    fn error(&self, col: usize, message: String) -> DataError {
        let name = self
            .log
            .names()
            .get(col)
            .map_or("time".into(), |n| echo(n).into_owned());
        super::log_error(
            self.log.file(),
            format!("{}, '{name}': {message}", self.log.row_location()),
        )
    }
    fn f64(&self, col: usize) -> Result<Option<f64>, DataError> {
        match self.values.get(col).copied().flatten() {
            Some(v) if !v.is_finite() => {
                Err(self.error(col, format!("value must be a finite number, got {v}")))
            }
            v => Ok(v),
        }
    }
    fn valid_bit(&self, col: usize) -> Result<bool, DataError> {
        match self.values.get(col).copied().flatten() {
            Some(1.0) => Ok(true),
            Some(0.0) => Ok(false),
            Some(v) => Err(self.error(col, format!("valid bit must be 0 or 1, got {v}"))),
            None => Err(self.error(col, "valid bit missing (invalid sample)".into())),
        }
    }
    fn empty(&self) -> &'static str {
        "no value (a missing or invalid sample)"
    }
}
