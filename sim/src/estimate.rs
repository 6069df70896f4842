//! Estimate traces: the CSV that `replay` writes and `compare`, `plot` read.
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

use crate::csvin::CsvIn;
use crate::error::{DataError, SimError};
use crate::output::AtomicFile;
use crate::seam::{EstimateRow, Flags, State};

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

/// `fmt::Write` into a byte buffer.
struct FmtBytes<'a>(&'a mut Vec<u8>);

impl std::fmt::Write for FmtBytes<'_> {
    fn write_str(&mut self, s: &str) -> std::fmt::Result {
        self.0.extend_from_slice(s.as_bytes());
        Ok(())
    }
}

/// Streams [`EstimateRow`]s to a file.
pub struct EstimateWriter {
    out: AtomicFile,
    buf: Vec<u8>,
}

/// Append the shortest decimal that reads back to exactly `v` (Ryū [pub: Adams, PLDI 2018]).
pub fn push_f64(buf: &mut Vec<u8>, v: f64) {
    if v.is_finite() {
        buf.extend_from_slice(ryu::Buffer::new().format_finite(v).as_bytes());
    } else {
        buf.extend_from_slice(b"NaN");
    }
}

fn opt(buf: &mut Vec<u8>, v: Option<f64>) {
    if let Some(v) = v {
        push_f64(buf, v);
    }
}

impl EstimateWriter {
    /// Create the file and write the comment lines and the header.
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn create(path: &str, comments: &[String]) -> Result<Self, SimError> {
        let mut out = AtomicFile::create(path)?;
        let mut buf = Vec::with_capacity(1 << 16);
        for c in comments {
            for l in c.lines() {
                let _ = writeln!(buf, "# {l}");
            }
        }
        let _ = writeln!(buf, "{}", HEADER.join(","));
        out.write_all(&buf)?;
        buf.clear();
        Ok(Self { out, buf })
    }

    /// Append one row (buffered).
    ///
    /// # Errors
    /// [`SimError::Io`].
    pub fn write(&mut self, r: &EstimateRow) -> Result<(), SimError> {
        let b = &mut self.buf;
        b.extend_from_slice(itoa::Buffer::new().format(r.line).as_bytes());
        b.push(b',');
        push_f64(b, r.t_s);
        b.push(b',');
        opt(b, r.torque_nm);
        b.push(b',');
        opt(b, r.capacity_nm);
        for v in [
            r.uncertainty_nm,
            r.mu,
            r.radius_m,
            r.clamp_force_n,
            r.slip_speed_rad_s,
            r.lining_temp_c,
            r.bedding,
            r.wear_m,
            r.correction,
        ] {
            b.push(b',');
            push_f64(b, v);
        }
        b.push(b',');
        b.extend_from_slice(r.state.name().as_bytes());
        b.push(b',');
        if !r.flags.is_empty() {
            // Names only, never commas: bitflags' text form is `A | B`.
            let _ = bitflags::parser::to_writer(&r.flags, &mut FmtBytes(b));
        }
        b.push(b',');
        opt(b, r.torque_ref_nm);
        b.push(b'\n');
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

/// Reads an estimate file row by row.
pub struct EstimateReader {
    csv: CsvIn,
    cols: [usize; 16],
}

impl EstimateReader {
    /// Open an estimate file and check its header.
    ///
    /// # Errors
    /// I/O, or a located error naming a missing column.
    pub fn open(path: &str) -> Result<Self, SimError> {
        let csv = CsvIn::open(path)?;
        let mut cols = [0usize; 16];
        for (c, name) in cols.iter_mut().zip(HEADER) {
            *c = csv.column(name).ok_or_else(|| {
                csv.header_error(
                    None,
                    format!("missing column '{name}': not an estimate file written by `clampwise replay`? (header: {})", csv.headers().join(", ")),
                )
            })?;
        }
        Ok(Self { csv, cols })
    }

    /// File name.
    pub fn file(&self) -> &str {
        self.csv.file()
    }

    /// File length and bytes read (for progress).
    pub fn progress(&self) -> (Option<u64>, u64) {
        (self.csv.len_bytes(), self.csv.bytes_read())
    }

    /// The next row; `Ok(None)` at the end.
    ///
    /// # Errors
    /// A located [`DataError`].
    pub fn next_row(&mut self) -> Result<Option<EstimateRow>, DataError> {
        let c = self.cols;
        let Some(row) = self.csv.next_row()? else {
            return Ok(None);
        };
        let g = |i: usize| row.required_f64(c.get(i).copied().unwrap_or(0));
        let o = |i: usize| row.f64(c.get(i).copied().unwrap_or(0));
        let state_col = c.get(13).copied().unwrap_or(0);
        let state = State::parse(row.text(state_col)).ok_or_else(|| {
            row.error(
                state_col,
                format!("unknown state '{}'", row.text(state_col)),
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
                        "flags must be the core's flag names joined by ' | ', got '{text}': {e}"
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
