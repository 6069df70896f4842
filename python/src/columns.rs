//! Estimate rows as columns: the estimate file's columns ([`HEADER`]) as vectors, handed to
//! Python as numpy arrays. A missing torque, capacity or reference is NaN (an empty cell in the
//! file); the state is a code into `ContactState::ALL` and the flags the core's word, with the
//! text of each distinct word (the file's `A | B` form) given once.

use std::collections::BTreeMap;

use clampwise_convert::{ContactState, EstimateRow, Flags};
use numpy::IntoPyArray;
use pyo3::prelude::*;
use pyo3::types::PyDict;

use clampwise_sim::estimate::HEADER;

/// The estimate columns of a run of rows.
#[derive(Default)]
pub struct Columns {
    line: Vec<i64>,
    numbers: [Vec<f64>; 13],
    state: Vec<u8>,
    flags: Vec<u32>,
}

/// The file columns held in [`Columns::numbers`], in that order.
const NUMBER_NAMES: [&str; 13] = [
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
    "torque_ref_Nm",
];

fn state_code(s: ContactState) -> u8 {
    let i = ContactState::ALL.iter().position(|&x| x == s).unwrap_or(0);
    u8::try_from(i).unwrap_or(0)
}

/// The flags word as the estimate file writes it: the set flags' names joined by ` | `.
fn flags_text(f: Flags) -> String {
    let mut s = String::new();
    if !f.is_empty() {
        let _ = bitflags::parser::to_writer(&f, &mut s);
    }
    s
}

impl Columns {
    /// Room for `n` rows.
    pub fn with_capacity(n: usize) -> Self {
        Self {
            line: Vec::with_capacity(n),
            numbers: std::array::from_fn(|_| Vec::with_capacity(n)),
            state: Vec::with_capacity(n),
            flags: Vec::with_capacity(n),
        }
    }

    /// Append one row.
    pub fn push(&mut self, r: &EstimateRow) {
        self.line.push(i64::try_from(r.line).unwrap_or(i64::MAX));
        let values = [
            r.t_s,
            r.torque_nm.unwrap_or(f64::NAN),
            r.capacity_nm.unwrap_or(f64::NAN),
            r.uncertainty_nm,
            r.mu,
            r.radius_m,
            r.clamp_force_n,
            r.slip_speed_rad_s,
            r.lining_temp_c,
            r.bedding,
            r.wear_m,
            r.correction,
            r.torque_ref_nm.unwrap_or(f64::NAN),
        ];
        for (col, v) in self.numbers.iter_mut().zip(values) {
            col.push(v);
        }
        self.state.push(state_code(r.state));
        self.flags.push(r.flags.bits());
    }

    /// Rows held.
    pub fn len(&self) -> usize {
        self.line.len()
    }

    /// `{column: array}` for every [`HEADER`] column except `state` and `flags`, plus
    /// `state_code` (uint8, into `STATE_NAMES`), `flags_bits` (uint32) and `flags_text`
    /// (`{bits: text}` of each distinct word).
    pub fn into_dict(self, py: Python<'_>) -> PyResult<Bound<'_, PyDict>> {
        let d = PyDict::new(py);
        let texts: BTreeMap<u32, String> = self
            .flags
            .iter()
            .map(|&b| (b, flags_text(Flags::from_bits_retain(b))))
            .collect();
        d.set_item("line", self.line.into_pyarray(py))?;
        for (name, col) in NUMBER_NAMES.iter().zip(self.numbers) {
            d.set_item(*name, col.into_pyarray(py))?;
        }
        d.set_item("state_code", self.state.into_pyarray(py))?;
        d.set_item("flags_bits", self.flags.into_pyarray(py))?;
        d.set_item("flags_text", texts)?;
        Ok(d)
    }
}

// The numbers, the line, the state and the flags: every column of the estimate file.
const _: () = assert!(NUMBER_NAMES.len() + 3 == HEADER.len());
