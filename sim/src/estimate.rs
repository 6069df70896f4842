//! Estimate traces: the CSV that `replay` writes and `compare`, `plot` read (and, with the
//! `parquet` feature, the same columns as Parquet for a `.parquet` name: [`EstimateOut`],
//! [`EstimateReader`]).
//!
//! Columns: `line, t_s, torque_Nm, capacity_Nm, uncertainty_Nm, mu, radius_m, clamp_force_N,
//! slip_speed_rad_s, lining_temp_C, bedding, wear_m, correction, state, flags, torque_ref_Nm`.
//! `torque_Nm` is empty while holding (the torque is then set by the load, within ±capacity)
//! or unavailable; `capacity_Nm` is empty when unavailable. `state` is the core's
//! `ContactState::name()`; `flags` lists the core's set `Flags` by their names, separated by
//! ` | ` (bitflags' own text form; empty when none). Numbers are printed as the shortest
//! decimal that reads back to the same f64, so the file carries the core's fixed-point
//! results exactly.

use std::io::Write;

use crate::csv_input::{CsvIn, echo};
use crate::error::{DataError, SimError};
use crate::output::AtomicFile;
use clampwise_convert::{ContactState, EstimateRow, Flags};

/// Header of an estimate file.
pub const HEADER: [&str; 16] = [
    "line",
    "t_s",
    "torque_Nm",
    "capacity_Nm",
    "uncertainty_Nm",
    "mu",
    "radius_m",
    "clamp_force_N",
    "slip_speed_rad_s",
    "lining_temp_C",
    "bedding",
    "wear_m",
    "correction",
    "state",
    "flags",
    "torque_ref_Nm",
];

/// The [`HEADER`] indices of the estimate columns `names` asks for, in its order
/// (`replay --columns`).
///
/// # Errors
/// A message naming an unknown or repeated column and listing the valid ones.
///
/// ```
/// use clampwise_sim::estimate::select_columns;
/// assert_eq!(select_columns(&["t_s", "torque_Nm"]).unwrap(), [1, 2]);
/// assert!(select_columns(&["torque"]).unwrap_err().contains("torque_Nm"));
/// ```
pub fn select_columns<S: AsRef<str>>(names: &[S]) -> Result<Vec<usize>, String> {
    let mut out = Vec::with_capacity(names.len());
    for n in names {
        let n = n.as_ref().trim();
        let i = HEADER.iter().position(|h| *h == n).ok_or_else(|| {
            format!(
                "--columns: unknown estimate column '{}'; the columns are: {}",
                echo(n),
                HEADER.join(", ")
            )
        })?;
        if out.contains(&i) {
            return Err(format!("--columns: '{n}' is named twice"));
        }
        out.push(i);
    }
    if out.is_empty() {
        return Err(format!(
            "--columns: no column named; the columns are: {}",
            HEADER.join(", ")
        ));
    }
    Ok(out)
}

/// `fmt::Write` into a byte buffer.
struct FmtBytes<'a>(&'a mut Vec<u8>);

impl std::fmt::Write for FmtBytes<'_> {
    fn write_str(&mut self, s: &str) -> std::fmt::Result {
        self.0.extend_from_slice(s.as_bytes());
        Ok(())
    }
}

/// The text last written in one column, kept so that a run of equal values (a settled radius,
/// bedding or correction, zero slip, a flags word that does not change) is formatted once.
#[derive(Default)]
struct LastText<K> {
    key: Option<K>,
    text: Vec<u8>,
}

impl<K: PartialEq + Copy> LastText<K> {
    /// Append the text of `key`, formatting it with `format` only when it differs from the
    /// previous one.
    fn push(&mut self, buf: &mut Vec<u8>, key: K, format: impl FnOnce(&mut Vec<u8>)) {
        if self.key != Some(key) {
            self.text.clear();
            format(&mut self.text);
            self.key = Some(key);
        }
        buf.extend_from_slice(&self.text);
    }
}

/// Number columns of a row, in file order after `line`: t_s, torque, capacity, uncertainty,
/// mu, radius, clamp force, slip speed, lining temperature, bedding, wear, correction,
/// reference torque.
const NUMBER_COLUMNS: usize = 13;

/// Streams [`EstimateRow`]s to a file.
pub struct EstimateWriter {
    out: AtomicFile,
    buf: Vec<u8>,
    /// `--columns`: indices into [`HEADER`] in output order.
    select: Option<Vec<usize>>,
    row: Vec<u8>,
    numbers: [LastText<u64>; NUMBER_COLUMNS],
    flags: LastText<Flags>,
}

/// Append the shortest decimal that reads back to exactly `v`, in Ryū's layout (`1.0`,
/// `0.001`, `1e-7`, `1.5e16`) [pub: Adams, PLDI 2018]; `NaN` for a non-finite value.
///
/// The digits come from Żmij (the `zmij` crate), which finds the same shortest, closest
/// digits as Ryū and lays them out the same except for a `+` in a positive exponent, taken
/// out here; the property test `same_text_as_ryu` holds it to the `ryu` crate bit for bit.
pub fn push_f64(buf: &mut Vec<u8>, v: f64) {
    if !v.is_finite() {
        buf.extend_from_slice(b"NaN");
        return;
    }
    let mut z = zmij::Buffer::new();
    let text = z.format_finite(v).as_bytes();
    // Both write plain decimals for 1e-5 ≤ |v| < 1e16, exponents outside.
    if v.abs() >= 1e16
        && let Some(at) = text.iter().position(|&b| b == b'+')
    {
        let (mantissa, exponent) = text.split_at(at);
        buf.extend_from_slice(mantissa);
        buf.extend_from_slice(exponent.get(1..).unwrap_or_default());
    } else {
        buf.extend_from_slice(text);
    }
}

fn opt(col: &mut LastText<u64>, buf: &mut Vec<u8>, v: Option<f64>) {
    if let Some(v) = v {
        col.push(buf, v.to_bits(), |t| push_f64(t, v));
    }
}

impl EstimateWriter {
    /// Create the file and write the comment lines and the header.
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn create(path: &str, comments: &[String]) -> Result<Self, SimError> {
        Self::create_with_columns(path, comments, None)
    }

    /// [`EstimateWriter::create`] writing only the columns `select` names, as indices into
    /// [`HEADER`] in output order (`None`: all of them).
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn create_with_columns(
        path: &str,
        comments: &[String],
        select: Option<Vec<usize>>,
    ) -> Result<Self, SimError> {
        let mut out = AtomicFile::create(path)?;
        let mut buf = Vec::with_capacity(1 << 16);
        for c in comments {
            for l in c.lines() {
                let _ = writeln!(buf, "# {l}");
            }
        }
        match &select {
            None => {
                let _ = writeln!(buf, "{}", HEADER.join(","));
            }
            Some(sel) => {
                let names: Vec<&str> = sel.iter().filter_map(|&i| HEADER.get(i).copied()).collect();
                let _ = writeln!(buf, "{}", names.join(","));
            }
        }
        out.write_all(&buf)?;
        buf.clear();
        Ok(Self {
            out,
            buf,
            select,
            row: Vec::new(),
            numbers: Default::default(),
            flags: LastText::default(),
        })
    }

    /// Append one row (buffered).
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn write(&mut self, r: &EstimateRow) -> Result<(), SimError> {
        let start = self.buf.len();
        let b = &mut self.buf;
        b.extend_from_slice(itoa::Buffer::new().format(r.line).as_bytes());
        let [
            t_s,
            torque,
            capacity,
            uncertainty,
            mu,
            radius,
            force,
            slip,
            temp,
            bedding,
            wear,
            correction,
            torque_ref,
        ] = &mut self.numbers;
        b.push(b',');
        t_s.push(b, r.t_s.to_bits(), |t| push_f64(t, r.t_s));
        b.push(b',');
        opt(torque, b, r.torque_nm);
        b.push(b',');
        opt(capacity, b, r.capacity_nm);
        for (col, v) in [
            (uncertainty, r.uncertainty_nm),
            (mu, r.mu),
            (radius, r.radius_m),
            (force, r.clamp_force_n),
            (slip, r.slip_speed_rad_s),
            (temp, r.lining_temp_c),
            (bedding, r.bedding),
            (wear, r.wear_m),
            (correction, r.correction),
        ] {
            b.push(b',');
            col.push(b, v.to_bits(), |t| push_f64(t, v));
        }
        b.push(b',');
        b.extend_from_slice(r.state.name().as_bytes());
        b.push(b',');
        self.flags.push(b, r.flags, |t| {
            if !r.flags.is_empty() {
                // Names only, never commas: bitflags' text form is `A | B`.
                let _ = bitflags::parser::to_writer(&r.flags, &mut FmtBytes(t));
            }
        });
        b.push(b',');
        opt(torque_ref, b, r.torque_ref_nm);
        b.push(b'\n');
        if let Some(sel) = &self.select {
            // No field holds a comma (flags are joined by ` | `): split the row written above.
            self.row.clear();
            self.row
                .extend_from_slice(self.buf.get(start..self.buf.len() - 1).unwrap_or_default());
            self.buf.truncate(start);
            let fields: Vec<&[u8]> = self.row.split(|&c| c == b',').collect();
            for (n, &i) in sel.iter().enumerate() {
                if n > 0 {
                    self.buf.push(b',');
                }
                self.buf
                    .extend_from_slice(fields.get(i).copied().unwrap_or_default());
            }
            self.buf.push(b'\n');
        }
        let b = &mut self.buf;
        if b.len() >= 1 << 16 {
            self.out.write_all(&self.buf)?;
            self.buf.clear();
        }
        Ok(())
    }

    /// Flush and publish the file under its name.
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn commit(mut self) -> Result<(), SimError> {
        self.out.write_all(&self.buf)?;
        self.out.commit()
    }

    /// Leave the output marked incomplete (see [`AtomicFile::abandon`]).
    pub fn abandon(mut self, why: &str) -> Option<std::path::PathBuf> {
        let _ = self.out.write_all(&self.buf);
        self.out.abandon(why)
    }
}

/// An estimate file being written: CSV, or Parquet for a `.parquet` name (with the
/// `parquet` feature; see [`crate::log_input`]).
// One per replay: the CSV writer stays inline, without a pointer hop per row.
#[allow(clippy::large_enum_variant)]
pub enum EstimateOut {
    /// CSV text.
    Csv(EstimateWriter),
    /// Parquet.
    #[cfg(feature = "parquet")]
    Parquet(Box<crate::log_input::parquet_estimates::ParquetEstimateWriter>),
}

impl EstimateOut {
    /// Create the output, its format chosen by the extension of `path`; `select` as for
    /// [`EstimateWriter::create_with_columns`].
    ///
    /// # Errors
    /// [`SimError::Io`]; [`SimError::Usage`] for an `.mf4` name (estimates are written as CSV
    /// or Parquet) or a `.parquet` name without the `parquet` feature.
    pub fn create(
        path: &str,
        comments: &[String],
        select: Option<Vec<usize>>,
    ) -> Result<Self, SimError> {
        match crate::log_input::LogFormat::of(path) {
            crate::log_input::LogFormat::Csv => Ok(Self::Csv(EstimateWriter::create_with_columns(
                path, comments, select,
            )?)),
            crate::log_input::LogFormat::Mdf4 => Err(SimError::Usage(format!(
                "{path}: estimates are written as CSV or, with a .parquet name, as Parquet; not as MDF4"
            ))),
            #[cfg(feature = "parquet")]
            crate::log_input::LogFormat::Parquet => Ok(Self::Parquet(Box::new(
                crate::log_input::parquet_estimates::ParquetEstimateWriter::create(
                    path, comments, select,
                )?,
            ))),
            #[cfg(not(feature = "parquet"))]
            crate::log_input::LogFormat::Parquet => Err(crate::log_input::no_parquet(path)),
        }
    }

    /// Append one row.
    ///
    /// # Errors
    /// [`SimError::Io`].
    #[inline]
    pub fn write(&mut self, r: &EstimateRow) -> Result<(), SimError> {
        match self {
            Self::Csv(w) => w.write(r),
            #[cfg(feature = "parquet")]
            Self::Parquet(w) => w.write(r),
        }
    }

    /// Finish and publish the file under its name.
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn commit(self) -> Result<(), SimError> {
        match self {
            Self::Csv(w) => w.commit(),
            #[cfg(feature = "parquet")]
            Self::Parquet(w) => w.commit(),
        }
    }

    /// Leave the output marked incomplete (CSV, see [`AtomicFile::abandon`]) or remove it
    /// (Parquet); the path of what is left, if anything.
    pub fn abandon(self, why: &str) -> Option<std::path::PathBuf> {
        match self {
            Self::Csv(w) => w.abandon(why),
            #[cfg(feature = "parquet")]
            Self::Parquet(w) => w.abandon(),
        }
    }
}

/// Reads an estimate file row by row: CSV, or (with the `parquet` feature) Parquet for a
/// `.parquet` name.
pub struct EstimateReader {
    source: EstimateSource,
}

// One per reader: the CSV reader stays inline, without a pointer hop per row.
#[allow(clippy::large_enum_variant)]
enum EstimateSource {
    Csv {
        csv: CsvIn,
        cols: [usize; 16],
    },
    #[cfg(feature = "parquet")]
    Parquet(Box<crate::log_input::parquet_estimates::ParquetEstimateReader>),
}

impl EstimateReader {
    /// Open an estimate file and check its header.
    ///
    /// # Errors
    /// I/O, or a located error naming a missing column; [`SimError::Usage`] for a `.parquet`
    /// name without the `parquet` feature.
    pub fn open(path: &str) -> Result<Self, SimError> {
        if crate::log_input::LogFormat::of(path) == crate::log_input::LogFormat::Parquet {
            #[cfg(feature = "parquet")]
            return Ok(Self {
                source: EstimateSource::Parquet(Box::new(
                    crate::log_input::parquet_estimates::ParquetEstimateReader::open(path)?,
                )),
            });
            #[cfg(not(feature = "parquet"))]
            return Err(crate::log_input::no_parquet(path));
        }
        let csv = CsvIn::open(path)?;
        let mut cols = [0usize; 16];
        for (c, name) in cols.iter_mut().zip(HEADER) {
            *c = csv.column(name).ok_or_else(|| {
                csv.header_error(
                    None,
                    format!("missing column '{name}': not an estimate file written by `clampwise replay`? (header: {})", csv.headers_for_message()),
                )
            })?;
        }
        Ok(Self {
            source: EstimateSource::Csv { csv, cols },
        })
    }

    /// File name.
    pub fn file(&self) -> &str {
        match &self.source {
            EstimateSource::Csv { csv, .. } => csv.file(),
            #[cfg(feature = "parquet")]
            EstimateSource::Parquet(p) => p.file(),
        }
    }

    /// File length and bytes read, or rows and rows read (Parquet), for progress.
    pub fn progress(&self) -> (Option<u64>, u64) {
        match &self.source {
            EstimateSource::Csv { csv, .. } => (csv.len_bytes(), csv.bytes_read()),
            #[cfg(feature = "parquet")]
            EstimateSource::Parquet(p) => p.progress(),
        }
    }

    /// The next row; `Ok(None)` at the end.
    ///
    /// # Errors
    /// A located [`DataError`].
    pub fn next_row(&mut self) -> Result<Option<EstimateRow>, DataError> {
        let (csv, c) = match &mut self.source {
            EstimateSource::Csv { csv, cols } => (csv, *cols),
            #[cfg(feature = "parquet")]
            EstimateSource::Parquet(p) => return p.next_row(),
        };
        let Some(row) = csv.next_row()? else {
            return Ok(None);
        };
        let g = |i: usize| row.required_f64(c.get(i).copied().unwrap_or(0));
        let o = |i: usize| row.f64(c.get(i).copied().unwrap_or(0));
        let state_col = c.get(13).copied().unwrap_or(0);
        let state = ContactState::from_name(row.text(state_col)).ok_or_else(|| {
            row.error(
                state_col,
                format!("unknown state '{}'", echo(row.text(state_col))),
            )
        })?;
        let flags_col = c.get(14).copied().unwrap_or(0);
        let text = row.text(flags_col).trim();
        let flags = if text.is_empty() {
            Flags::empty()
        } else {
            bitflags::parser::from_str_strict::<Flags>(text).map_err(|e| {
                row.error(
                    flags_col,
                    format!(
                        "flags must be the core's flag names joined by ' | ', got '{}': {}",
                        echo(text),
                        echo(&e.to_string())
                    ),
                )
            })?
        };
        let line = g(0)?;
        Ok(Some(EstimateRow {
            // Line numbers are whole and far below 2⁵³.
            #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
            line: line.max(0.0) as u64,
            t_s: g(1)?,
            torque_nm: o(2)?,
            capacity_nm: o(3)?,
            uncertainty_nm: g(4)?,
            mu: g(5)?,
            radius_m: g(6)?,
            clamp_force_n: g(7)?,
            slip_speed_rad_s: g(8)?,
            lining_temp_c: g(9)?,
            bedding: g(10)?,
            wear_m: g(11)?,
            correction: g(12)?,
            state,
            flags,
            torque_ref_nm: o(15)?,
        }))
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::indexing_slicing)]
    use super::*;
    use proptest::prelude::*;

    /// The text the writer had before Żmij: Ryū's, `NaN` for non-finite values.
    fn ryu_text(v: f64) -> String {
        if v.is_finite() {
            ryu::Buffer::new().format_finite(v).to_string()
        } else {
            "NaN".into()
        }
    }

    fn ours(v: f64) -> String {
        let mut b = Vec::new();
        push_f64(&mut b, v);
        String::from_utf8(b).unwrap()
    }

    #[test]
    fn same_text_as_ryu_at_the_layout_edges() {
        let mut edges = vec![
            0.0,
            -0.0,
            1.0,
            -1.0,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            f64::MAX,
            f64::MIN,
            f64::MIN_POSITIVE,
            f64::EPSILON,
            5e-324,
            1e-5,
            -1e-5,
            1e16,
            -1e16,
            1.5e16,
            1e21,
            1e22,
            1e23,
            123_456_789_012_345_680.0,
            0.1 + 0.2,
            499.996_000_000_000_04,
        ];
        for e in [1e-5f64, 1e15, 1e16, 1e17] {
            edges.extend([e, e.next_up(), e.next_down()]);
        }
        for v in edges {
            assert_eq!(ours(v), ryu_text(v), "{v:e}");
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(50_000))]

        /// Any f64 bit pattern, and values k / 2^F as the core's fixed-point results are.
        #[test]
        fn same_text_as_ryu(
            bits in any::<u64>(),
            k in any::<i64>(),
            frac in prop::sample::select(vec![8u32, 12, 16, 24, 30, 32]),
        ) {
            let v = f64::from_bits(bits);
            prop_assert_eq!(ours(v), ryu_text(v));
            #[allow(clippy::cast_precision_loss)]
            let fixed = (k >> 8) as f64 / f64::from_bits((1023 + u64::from(frac)) << 52);
            prop_assert_eq!(ours(fixed), ryu_text(fixed));
        }
    }

    fn row(t: f64, torque: Option<f64>, radius: f64, flags: Flags) -> EstimateRow {
        EstimateRow {
            line: 7,
            t_s: t,
            torque_nm: torque,
            capacity_nm: None,
            uncertainty_nm: 1.5,
            mu: 0.4,
            radius_m: radius,
            clamp_force_n: 1000.0,
            slip_speed_rad_s: 0.0,
            lining_temp_c: 20.0,
            bedding: 0.0,
            wear_m: 0.0,
            correction: 1.0,
            state: ContactState::Slipping,
            flags,
            torque_ref_nm: Some(-2.25),
        }
    }

    /// A column whose value repeats, disappears and comes back, and a flags word that changes
    /// and returns, are written exactly as each row says (the per-column text reuse never
    /// shows a stale value).
    #[test]
    fn repeated_and_changing_values_are_written_as_given() {
        let dir = std::env::temp_dir().join(format!("clampwise-estimate-{}", std::process::id()));
        let path = dir.join("e.csv");
        let path_s = path.display().to_string();
        let mut w = EstimateWriter::create(&path_s, &[]).unwrap();
        let f1 = Flags::TORQUE_BOUNDED | Flags::ADAPTATION_FROZEN;
        let rows = [
            row(0.0, Some(-3.0), 0.6, Flags::empty()),
            row(0.001, Some(-3.0), 0.6, f1),
            row(0.002, None, 0.6, f1),
            row(0.003, Some(-3.0), -0.0, Flags::empty()),
            row(0.004, Some(1e17), 0.0, f1),
        ];
        for r in &rows {
            w.write(r).unwrap();
        }
        w.commit().unwrap();
        let text = std::fs::read_to_string(&path).unwrap();
        std::fs::remove_dir_all(&dir).unwrap();
        let lines: Vec<&str> = text.lines().skip(1).collect();
        assert_eq!(
            lines,
            [
                "7,0.0,-3.0,,1.5,0.4,0.6,1000.0,0.0,20.0,0.0,0.0,1.0,slipping,,-2.25",
                "7,0.001,-3.0,,1.5,0.4,0.6,1000.0,0.0,20.0,0.0,0.0,1.0,slipping,ADAPTATION_FROZEN | TORQUE_BOUNDED,-2.25",
                "7,0.002,,,1.5,0.4,0.6,1000.0,0.0,20.0,0.0,0.0,1.0,slipping,ADAPTATION_FROZEN | TORQUE_BOUNDED,-2.25",
                "7,0.003,-3.0,,1.5,0.4,-0.0,1000.0,0.0,20.0,0.0,0.0,1.0,slipping,,-2.25",
                "7,0.004,1e17,,1.5,0.4,0.0,1000.0,0.0,20.0,0.0,0.0,1.0,slipping,ADAPTATION_FROZEN | TORQUE_BOUNDED,-2.25",
            ]
        );
    }
}
