//! CSV dialects: the column separator (`,` `;` or tab) and the decimal mark (`.` or `,`),
//! sniffed from the header and the first data rows (after the `#` comment lines) by [`sniff`],
//! or set by a [`DialectChoice`]; see [`Dialect`].

use std::io::Read;

use serde::Serialize;

use super::echo;
use crate::error::{DataError, SimError};

/// The column separator of a CSV file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, clap::ValueEnum)]
#[serde(rename_all = "lowercase")]
pub enum Delimiter {
    /// `,`
    Comma,
    /// `;` (spreadsheet exports in locales whose decimal mark is a comma)
    Semicolon,
    /// a tab character
    Tab,
}

impl Delimiter {
    /// The separator byte.
    pub fn byte(self) -> u8 {
        match self {
            Self::Comma => b',',
            Self::Semicolon => b';',
            Self::Tab => b'\t',
        }
    }

    /// How a message shows it.
    pub fn shown(self) -> &'static str {
        match self {
            Self::Comma => "','",
            Self::Semicolon => "';'",
            Self::Tab => "tab",
        }
    }

    const ALL: [Self; 3] = [Self::Comma, Self::Semicolon, Self::Tab];
}

/// The decimal mark of the numbers in a CSV file.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, clap::ValueEnum)]
#[serde(rename_all = "lowercase")]
pub enum DecimalMark {
    /// `1.5`
    Point,
    /// `1,5` (never in a `,`-separated file)
    Comma,
}

/// Where a part of the [`Dialect`] came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "lowercase")]
pub enum DialectSource {
    /// Read from the header and the first data rows.
    Sniffed,
    /// Set on the command line (`--delimiter`, `--decimal`).
    Option,
    /// Nothing to tell it by: a `,`-separated file, or no number with a fraction in the
    /// first rows, is read with a decimal point.
    Default,
}

/// What the command line sets of the dialect; `None` parts are sniffed.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct DialectChoice {
    /// `--delimiter`
    pub delimiter: Option<Delimiter>,
    /// `--decimal`
    pub decimal: Option<DecimalMark>,
}

/// The dialect a file is read with, and where each part came from (shown in summaries).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub struct Dialect {
    /// Column separator.
    pub delimiter: Delimiter,
    /// Where it came from.
    pub delimiter_from: DialectSource,
    /// Decimal mark.
    pub decimal: DecimalMark,
    /// Where it came from.
    pub decimal_from: DialectSource,
}

impl Default for Dialect {
    fn default() -> Self {
        Self {
            delimiter: Delimiter::Comma,
            delimiter_from: DialectSource::Default,
            decimal: DecimalMark::Point,
            decimal_from: DialectSource::Default,
        }
    }
}

impl std::fmt::Display for Dialect {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let from = |s: DialectSource| match s {
            DialectSource::Sniffed => "sniffed",
            DialectSource::Option => "set by option",
            DialectSource::Default => "default",
        };
        write!(
            f,
            "{}-separated ({}), decimal {} ({})",
            self.delimiter.shown(),
            from(self.delimiter_from),
            match self.decimal {
                DecimalMark::Point => "point",
                DecimalMark::Comma => "comma",
            },
            from(self.decimal_from)
        )
    }
}

/// How much of the start of a file [`sniff`] looks at.
pub const SNIFF_BYTES: usize = 64 * 1024;
/// How many data rows after the header [`sniff`] looks at.
pub const SNIFF_ROWS: usize = 16;

const DIALECT_OPTIONS: &str =
    "set it with --delimiter comma|semicolon|tab and --decimal point|comma";

/// Whether `cell` is digits, `mark`, digits (a number with a fraction in that mark).
pub(super) fn has_fraction(cell: &[u8], mark: u8) -> bool {
    let cell = cell.trim_ascii();
    let cell = cell
        .strip_prefix(b"-")
        .or_else(|| cell.strip_prefix(b"+"))
        .unwrap_or(cell);
    match cell.iter().position(|&b| b == mark) {
        Some(at) => {
            let (int, frac) = cell.split_at(at);
            let frac = frac.get(1..).unwrap_or_default();
            !int.is_empty()
                && !frac.is_empty()
                && int.iter().all(u8::is_ascii_digit)
                && frac.iter().take_while(|b| b.is_ascii_digit()).count() > 0
                && !frac.contains(&mark)
        }
        None => false,
    }
}

/// Tell the dialect of a file from its first bytes `head` (`complete`: `head` is the whole
/// file, so its last line is whole too), with what `choice` sets kept as it is.
///
/// The separator is the one of `,` `;` tab that the header line contains; a header with
/// several of them is settled by the data rows (the one that splits every sniffed row into as
/// many fields as the header), a header with none is an unrecognised dialect. A data row that
/// another separator would split into the header's number of fields, but the chosen one does
/// not, is a mixed dialect. The decimal mark is a point in a `,`-separated file; otherwise a
/// comma when a cell of the first rows reads `digits,digits`, a point when one reads
/// `digits.digits`, both an error.
///
/// # Errors
/// A located [`DataError`] (`unrecognised CSV dialect: …`, naming what was seen and the
/// options that set it), or [`SimError::Usage`] for `--decimal comma` with `,` separators.
pub fn sniff(
    file: &str,
    head: &[u8],
    complete: bool,
    choice: DialectChoice,
) -> Result<Dialect, SimError> {
    if choice.delimiter == Some(Delimiter::Comma) && choice.decimal == Some(DecimalMark::Comma) {
        return Err(SimError::Usage(
            "--decimal comma cannot go with --delimiter comma: in a ','-separated file a comma always separates columns".into(),
        ));
    }
    let lines = head_lines(head, complete);
    let Some(&(header_line, header)) = lines.first() else {
        // Empty or comments only: the reader reports it.
        return Ok(Dialect::default());
    };
    let rows = lines.get(1..).unwrap_or_default();
    let (delimiter, delimiter_from) = match choice.delimiter {
        Some(d) => (d, DialectSource::Option),
        None => (
            sniff_delimiter(file, header_line, header, rows)?,
            DialectSource::Sniffed,
        ),
    };
    check_row_delimiters(file, header, rows, delimiter)?;
    let (decimal, decimal_from) = match (choice.decimal, delimiter) {
        (Some(DecimalMark::Comma), Delimiter::Comma) => {
            return Err(SimError::Usage(
                "--decimal comma cannot read a ','-separated file: a comma there always separates columns (the file was sniffed as ','-separated; set --delimiter semicolon or tab if it is not)".into(),
            ));
        }
        (Some(m), _) => (m, DialectSource::Option),
        (None, Delimiter::Comma) => (DecimalMark::Point, DialectSource::Default),
        (None, d) => sniff_decimal(file, rows, d)?,
    };
    Ok(Dialect {
        delimiter,
        delimiter_from,
        decimal,
        decimal_from,
    })
}

/// The first non-comment lines of the head (header and up to [`SNIFF_ROWS`] rows), with their
/// 1-based line numbers; a last line cut by an incomplete head is left out.
fn head_lines(head: &[u8], complete: bool) -> Vec<(u64, &[u8])> {
    let mut lines: Vec<(u64, &[u8])> = Vec::new();
    let mut pieces = head.split(|&b| b == b'\n').peekable();
    let mut number = 0u64;
    while let Some(l) = pieces.next() {
        number += 1;
        // A last piece of an incomplete head may be cut anywhere.
        if pieces.peek().is_none() && !complete {
            break;
        }
        let l = l.strip_suffix(b"\r").unwrap_or(l);
        if l.is_empty() || l.first() == Some(&b'#') {
            continue;
        }
        lines.push((number, l));
        if lines.len() > SNIFF_ROWS {
            break;
        }
    }
    lines
}

/// How often the delimiter occurs in a line.
fn count(l: &[u8], d: Delimiter) -> usize {
    l.iter().filter(|&&b| b == d.byte()).count()
}

/// The located error of a dialect that cannot be read.
fn dialect_error(file: &str, line: u64, message: String) -> SimError {
    DataError {
        file: file.to_string(),
        line: Some(line),
        column: None,
        header: None,
        message: format!("unrecognised CSV dialect: {message}; {DIALECT_OPTIONS}"),
    }
    .into()
}

/// The one delimiter the header has, or the one the header shares with every data row.
fn sniff_delimiter(
    file: &str,
    header_line: u64,
    header: &[u8],
    rows: &[(u64, &[u8])],
) -> Result<Delimiter, SimError> {
    let present: Vec<Delimiter> = Delimiter::ALL
        .into_iter()
        .filter(|&d| count(header, d) > 0)
        .collect();
    let consistent: Vec<Delimiter> = present
        .iter()
        .copied()
        .filter(|&d| !rows.is_empty() && rows.iter().all(|r| count(r.1, d) == count(header, d)))
        .collect();
    match (present.as_slice(), consistent.as_slice()) {
        ([d], _) | (_, [d]) => Ok(*d),
        ([], _) => Err(dialect_error(file, header_line, no_separator(header))),
        _ => {
            let list: Vec<String> = present
                .iter()
                .map(|&d| format!("{} {} times", d.shown(), count(header, d)))
                .collect();
            Err(dialect_error(
                file,
                header_line,
                format!(
                    "the header line mixes separators ({}) and the data rows do not tell which one separates columns",
                    list.join(", ")
                ),
            ))
        }
    }
}

/// What a header without any delimiter clampwise reads has instead.
fn no_separator(header: &[u8]) -> String {
    let text = String::from_utf8_lossy(header);
    let mut others: Vec<char> = text
        .chars()
        .filter(|c| {
            c.is_ascii_punctuation()
                && !matches!(c, '_' | '.' | '-' | '(' | ')' | '[' | ']' | '/' | '%' | '°')
        })
        .collect();
    others.sort_unstable();
    others.dedup();
    if others.is_empty() {
        format!(
            "the header line '{}' has no ',', ';' or tab (a single column)",
            echo(&text)
        )
    } else {
        let list: Vec<String> = others
            .iter()
            .map(|c| format!("'{c}' {} times", text.matches(*c).count()))
            .collect();
        format!(
            "the header line has no ',', ';' or tab but {} (separators clampwise does not read)",
            list.join(", ")
        )
    }
}

/// A data row that splits into the header's column count only at another delimiter is an
/// error naming both.
fn check_row_delimiters(
    file: &str,
    header: &[u8],
    rows: &[(u64, &[u8])],
    delimiter: Delimiter,
) -> Result<(), SimError> {
    let fields = count(header, delimiter);
    for &(line, row) in rows {
        if count(row, delimiter) != fields
            && let Some(other) = Delimiter::ALL
                .into_iter()
                .find(|&d| d != delimiter && count(row, d) == fields && fields > 0)
        {
            return Err(dialect_error(
                file,
                line,
                format!(
                    "mixed separators: the header is {}-separated ({} columns) but this line splits into as many only at {}",
                    delimiter.shown(),
                    fields + 1,
                    other.shown()
                ),
            ));
        }
    }
    Ok(())
}

/// The decimal mark of a file not separated by commas: the one its data cells use; both in
/// one file is an error naming a line of each.
fn sniff_decimal(
    file: &str,
    rows: &[(u64, &[u8])],
    d: Delimiter,
) -> Result<(DecimalMark, DialectSource), SimError> {
    let mut comma_at = None;
    let mut point_at = None;
    for &(line, row) in rows {
        for cell in row.split(|&b| b == d.byte()) {
            if comma_at.is_none() && has_fraction(cell, b',') {
                comma_at = Some((line, String::from_utf8_lossy(cell).trim().to_string()));
            }
            if point_at.is_none() && has_fraction(cell, b'.') {
                point_at = Some((line, String::from_utf8_lossy(cell).trim().to_string()));
            }
        }
    }
    match (comma_at, point_at) {
        (Some((lc, c)), Some((lp, p))) => Err(dialect_error(
            file,
            lc.max(lp),
            format!(
                "mixed decimal marks: line {lc} has '{}' (decimal comma) and line {lp} has '{}' (decimal point)",
                echo(&c),
                echo(&p)
            ),
        )),
        (Some(_), None) => Ok((DecimalMark::Comma, DialectSource::Sniffed)),
        (None, Some(_)) => Ok((DecimalMark::Point, DialectSource::Sniffed)),
        (None, None) => Ok((DecimalMark::Point, DialectSource::Default)),
    }
}

/// Read up to [`SNIFF_BYTES`] from `r`; `true` with them when that was the whole input.
pub(super) fn read_head(r: &mut dyn Read) -> std::io::Result<(Vec<u8>, bool)> {
    let mut head = Vec::with_capacity(SNIFF_BYTES);
    let n = r.take(SNIFF_BYTES as u64).read_to_end(&mut head)?;
    Ok((head, n < SNIFF_BYTES))
}
