//! Flag timelines: for every flag of the core, when it was raised (intervals of consecutive
//! rows), in bounded memory.

use clampwise_convert::{EstimateRow, Flags};

/// Intervals listed per flag; later ones are counted, not listed.
pub const LISTED: usize = 20;

/// One flag's history.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct FlagHistory {
    /// The flag's name (the core's).
    pub name: &'static str,
    /// Rows with the flag raised.
    pub rows: u64,
    /// Intervals of consecutive raised rows.
    pub intervals: u64,
    /// The first [`LISTED`] intervals: (first raised, first cleared or last row), s.
    pub listed: Vec<(f64, f64)>,
    /// Summed length of the intervals, s.
    pub raised_s: f64,
}

/// Streaming accumulator of flag histories.
#[derive(Debug, Clone)]
pub struct Timeline {
    bits: Vec<(&'static str, Flags)>,
    open: Vec<Option<f64>>,
    hist: Vec<FlagHistory>,
    last_t: Option<f64>,
}

impl Default for Timeline {
    fn default() -> Self {
        let bits: Vec<(&'static str, Flags)> = Flags::all().iter_names().collect();
        let n = bits.len();
        Self {
            hist: bits
                .iter()
                .map(|(name, _)| FlagHistory {
                    name,
                    ..FlagHistory::default()
                })
                .collect(),
            open: vec![None; n],
            bits,
            last_t: None,
        }
    }
}

impl Timeline {
    /// Take in the next row (rows in time order).
    pub fn add(&mut self, r: &EstimateRow) {
        for (((_, bit), open), h) in self.bits.iter().zip(&mut self.open).zip(&mut self.hist) {
            let on = r.flags.intersects(*bit);
            match (on, *open) {
                (true, None) => {
                    *open = Some(r.t_s);
                    h.rows += 1;
                }
                (true, Some(_)) => h.rows += 1,
                (false, Some(start)) => {
                    close(h, start, r.t_s);
                    *open = None;
                }
                (false, None) => {}
            }
        }
        self.last_t = Some(r.t_s);
    }

    /// The histories of the flags raised at least once (intervals still open end at the last
    /// row).
    pub fn finish(mut self) -> Vec<FlagHistory> {
        let end = self.last_t.unwrap_or(0.0);
        for (open, h) in self.open.iter().zip(&mut self.hist) {
            if let Some(start) = *open {
                close(h, start, end);
            }
        }
        self.hist.into_iter().filter(|h| h.rows > 0).collect()
    }
}

fn close(h: &mut FlagHistory, start: f64, end: f64) {
    h.intervals += 1;
    h.raised_s += end - start;
    if h.listed.len() < LISTED {
        h.listed.push((start, end));
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::indexing_slicing, clippy::float_cmp)]
    use super::*;
    use clampwise_convert::ContactState;

    fn row(t: f64, flags: Flags) -> EstimateRow {
        EstimateRow {
            line: 0,
            t_s: t,
            torque_nm: None,
            capacity_nm: None,
            uncertainty_nm: 0.0,
            mu: 0.0,
            radius_m: 0.0,
            clamp_force_n: 0.0,
            slip_speed_rad_s: 0.0,
            lining_temp_c: 0.0,
            bedding: 0.0,
            wear_m: 0.0,
            correction: 1.0,
            state: ContactState::Slipping,
            flags,
            torque_ref_nm: None,
        }
    }

    #[test]
    fn intervals_of_a_flag() {
        let (na, a) = Flags::all()
            .iter_names()
            .next()
            .unwrap_or(("", Flags::empty()));
        let mut tl = Timeline::default();
        // Raised at rows 2–4 and 8–9 (of 0–9, 0.1 s apart), still raised at the end.
        for i in 0..10u32 {
            let on = (2..5).contains(&i) || i >= 8;
            tl.add(&row(
                f64::from(i) * 0.1,
                if on { a } else { Flags::empty() },
            ));
        }
        let h = tl.finish();
        assert_eq!(h.len(), 1);
        assert_eq!(h[0].name, na);
        assert_eq!(h[0].rows, 5);
        assert_eq!(h[0].intervals, 2);
        // [calc] (0.5 − 0.2) + (0.9 − 0.8) = 0.4 s.
        assert!((h[0].raised_s - 0.4).abs() < 1e-12);
        assert!((h[0].listed[0].0 - 0.2).abs() < 1e-12);
    }
}
