//! Bounded-memory min/max envelope of a long trace, for plotting.
//!
//! Rows are gathered into buckets of consecutive samples; each bucket keeps, per quantity, the
//! smallest and largest value it saw, the states it passed through and every flag raised in
//! it. When the buckets fill, neighbours merge in pairs (min of mins, max of maxes, union of
//! states and flags) and the bucket length doubles, so memory stays at most [`BUCKETS`]
//! buckets whatever the trace length. At drawing time the buckets are merged again into one
//! column per pixel ([`Envelope::columns`]): a panel draws each column as a vertical stroke
//! from its minimum to its maximum, so a single-sample spike or a 50 ms fault in a million
//! rows stays visible (decimation by keeping every n-th sample would drop it).
//!
//! A [`TimeWindow`] keeps only the rows with `from_s ≤ t ≤ to_s`.
//!
//! ```
//! use clampwise_sim::plot::{Envelope, TimeWindow, BUCKETS};
//! use clampwise_convert::{EstimateRow, Flags, ContactState};
//!
//! let mut env = Envelope::new(BUCKETS, TimeWindow::default());
//! for i in 0..100_000u32 {
//!     let torque = if i == 40_000 { 9_000.0 } else { 1_000.0 }; // one-sample spike
//!     let row = EstimateRow {
//!         line: u64::from(i), t_s: f64::from(i) * 1e-3, torque_nm: Some(torque),
//!         capacity_nm: None, uncertainty_nm: 50.0, mu: 0.4, radius_m: 0.2,
//!         clamp_force_n: 10_000.0, slip_speed_rad_s: 2.0, lining_temp_c: 80.0, bedding: 1.0,
//!         wear_m: 0.0, correction: 1.0, state: ContactState::Slipping, flags: Flags::empty(),
//!         torque_ref_nm: None,
//!     };
//!     env.push(&row, None);
//! }
//! let cols = env.columns(0.0, 99.999, 800); // one per pixel column
//! assert!(cols.iter().any(|c| c.torque_nm.hi == 9_000.0));
//! ```

use clampwise_convert::{Channel, ChannelCal, ContactState, EstimateRow, Flags, TraceSample};

/// Buckets kept at most (at least [`BUCKETS`] / 2 once the trace is longer): about twice the
/// widest plot's data area in pixels, so every pixel column gets at least one bucket.
pub const BUCKETS: usize = 4096;

/// The smallest and largest value seen; empty until the first value.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Span {
    /// Smallest value.
    pub lo: f64,
    /// Largest value.
    pub hi: f64,
}

impl Default for Span {
    fn default() -> Self {
        Self::EMPTY
    }
}

impl Span {
    /// No value seen.
    pub const EMPTY: Self = Self {
        lo: f64::INFINITY,
        hi: f64::NEG_INFINITY,
    };

    /// Take in a value (non-finite values are ignored: they have no place on an axis).
    pub fn add(&mut self, v: f64) {
        if v.is_finite() {
            self.lo = self.lo.min(v);
            self.hi = self.hi.max(v);
        }
    }

    /// Take in a value if there is one.
    pub fn add_opt(&mut self, v: Option<f64>) {
        if let Some(v) = v {
            self.add(v);
        }
    }

    /// Union of two spans.
    pub fn merge(&mut self, o: &Self) {
        self.lo = self.lo.min(o.lo);
        self.hi = self.hi.max(o.hi);
    }

    /// Whether no value was seen.
    pub fn is_empty(&self) -> bool {
        self.lo > self.hi
    }

    /// `Some(self)` unless empty.
    pub fn get(&self) -> Option<Self> {
        (!self.is_empty()).then_some(*self)
    }
}

/// What one bucket (or pixel column) of the trace held.
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct Bucket {
    /// Time of the first row, s.
    pub t_first: f64,
    /// Time of the last row, s.
    pub t_last: f64,
    /// Rows in the bucket.
    pub rows: u64,
    /// Estimated torque, N·m.
    pub torque_nm: Span,
    /// Reference torque, N·m.
    pub reference_nm: Span,
    /// Holding capacity while holding, N·m (the ± band of the torque panel).
    pub holding_capacity_nm: Span,
    /// Error = estimate − reference, N·m.
    pub error_nm: Span,
    /// Uncertainty (±) of the rows that have an error, N·m.
    pub error_band_nm: Span,
    /// Lining temperature used, °C.
    pub temp_c: Span,
    /// μ used.
    pub mu: Span,
    /// Clamp force used by the estimator (after filtering and voting), N.
    pub clamp_force_n: Span,
    /// Slip speed ω_in − ω_out, rad/s.
    pub slip_rad_s: Span,
    /// Force channels 1–4 as logged, N (empty when the data has no such channel).
    pub channel_force_n: [Span; 4],
    /// Actuator command, in the trace's converted unit.
    pub command: Span,
    /// States passed through, bit i for [`ContactState::ALL`]\[i\].
    pub states: u8,
    /// Every flag raised in the bucket.
    pub flags: Flags,
}

impl Bucket {
    fn merge(&mut self, o: &Self) {
        if self.rows == 0 {
            *self = *o;
            return;
        }
        if o.rows == 0 {
            return;
        }
        self.t_first = self.t_first.min(o.t_first);
        self.t_last = self.t_last.max(o.t_last);
        self.rows += o.rows;
        self.torque_nm.merge(&o.torque_nm);
        self.reference_nm.merge(&o.reference_nm);
        self.holding_capacity_nm.merge(&o.holding_capacity_nm);
        self.error_nm.merge(&o.error_nm);
        self.error_band_nm.merge(&o.error_band_nm);
        self.temp_c.merge(&o.temp_c);
        self.mu.merge(&o.mu);
        self.clamp_force_n.merge(&o.clamp_force_n);
        self.slip_rad_s.merge(&o.slip_rad_s);
        for (a, b) in self.channel_force_n.iter_mut().zip(&o.channel_force_n) {
            a.merge(b);
        }
        self.command.merge(&o.command);
        self.states |= o.states;
        self.flags |= o.flags;
    }

    /// Whether the bucket passed through state `s`.
    pub fn has_state(&self, s: ContactState) -> bool {
        ContactState::ALL
            .iter()
            .position(|&x| x == s)
            .is_some_and(|i| self.states & (1 << i) != 0)
    }
}

/// Rows kept: `from_s ≤ t ≤ to_s` (either end open when `None`).
#[derive(Debug, Clone, Copy, Default, PartialEq)]
pub struct TimeWindow {
    /// First time kept, s.
    pub from_s: Option<f64>,
    /// Last time kept, s.
    pub to_s: Option<f64>,
}

impl TimeWindow {
    /// Whether `t` is inside.
    pub fn contains(&self, t: f64) -> bool {
        self.from_s.is_none_or(|f| t >= f) && self.to_s.is_none_or(|e| t <= e)
    }

    /// Whether the window is unbounded.
    pub fn is_all(&self) -> bool {
        self.from_s.is_none() && self.to_s.is_none()
    }

    /// Check the ends: finite, and from before to.
    ///
    /// # Errors
    /// A message naming the options.
    pub fn validate(&self) -> Result<(), String> {
        for (name, v) in [("--from-s", self.from_s), ("--to-s", self.to_s)] {
            if v.is_some_and(|v| !v.is_finite()) {
                return Err(format!("{name} must be a finite number of seconds"));
            }
        }
        if let (Some(f), Some(t)) = (self.from_s, self.to_s)
            && f >= t
        {
            return Err(format!("--from-s {f} must be before --to-s {t}"));
        }
        Ok(())
    }
}

/// The min/max envelope of a trace (see the module docs).
#[derive(Debug, Clone)]
pub struct Envelope {
    capacity: usize,
    rows_per_bucket: u64,
    window: TimeWindow,
    cal: Vec<ChannelCal>,
    buckets: Vec<Bucket>,
    open: Bucket,
    seen: u64,
    kept: u64,
}

impl Envelope {
    /// An envelope of at most `capacity` buckets (at least 2) keeping the rows in `window`.
    pub fn new(capacity: usize, window: TimeWindow) -> Self {
        Self {
            capacity: capacity.max(2),
            rows_per_bucket: 1,
            window,
            cal: Vec::new(),
            buckets: Vec::new(),
            open: Bucket::default(),
            seen: 0,
            kept: 0,
        }
    }

    /// Calibrations that turn force channels logged in counts into newtons for the input
    /// panels (channels logged in newtons need none).
    #[must_use]
    pub fn with_calibration(mut self, cal: Vec<ChannelCal>) -> Self {
        self.cal = cal;
        self
    }

    /// Take in one estimate row, with the trace sample it came from when there is one (the
    /// per-channel forces and the command are only in the trace).
    pub fn push(&mut self, row: &EstimateRow, sample: Option<&TraceSample>) {
        self.seen += 1;
        if !self.window.contains(row.t_s) {
            return;
        }
        self.kept += 1;
        let b = &mut self.open;
        if b.rows == 0 {
            b.t_first = row.t_s;
        }
        b.t_last = row.t_s;
        b.rows += 1;
        b.torque_nm.add_opt(row.torque_nm);
        b.reference_nm.add_opt(row.torque_ref_nm);
        if row.state == ContactState::Holding {
            b.holding_capacity_nm.add_opt(row.capacity_nm);
        }
        if let (Some(t), Some(r)) = (row.torque_nm, row.torque_ref_nm) {
            b.error_nm.add(t - r);
            b.error_band_nm.add(row.uncertainty_nm);
        }
        b.temp_c.add(row.lining_temp_c);
        b.mu.add(row.mu);
        b.clamp_force_n.add(row.clamp_force_n);
        b.slip_rad_s.add(row.slip_speed_rad_s);
        if let Some(i) = ContactState::ALL.iter().position(|&s| s == row.state) {
            b.states |= 1 << i;
        }
        b.flags |= row.flags;
        if let Some(s) = sample {
            for (k, (span, ch)) in b.channel_force_n.iter_mut().zip(&s.force).enumerate() {
                match *ch {
                    Channel::Absent => {}
                    Channel::Newtons(f) => span.add(f),
                    Channel::Counts(n) => {
                        if let Some(c) = self.cal.get(k) {
                            span.add((f64::from(n) - c.offset_counts) * c.gain_n_per_count);
                        }
                    }
                }
            }
            b.command.add_opt(s.command);
        }
        if b.rows >= self.rows_per_bucket {
            let full = std::mem::take(&mut self.open);
            self.buckets.push(full);
            if self.buckets.len() >= self.capacity {
                self.halve();
            }
        }
    }

    /// Merge neighbouring buckets in pairs and double the bucket length.
    fn halve(&mut self) {
        let old = std::mem::take(&mut self.buckets);
        let mut it = old.into_iter();
        while let Some(mut a) = it.next() {
            if let Some(b) = it.next() {
                a.merge(&b);
            }
            self.buckets.push(a);
        }
        self.rows_per_bucket = self.rows_per_bucket.saturating_mul(2);
    }

    /// Rows offered.
    pub fn seen(&self) -> u64 {
        self.seen
    }

    /// Rows inside the time window.
    pub fn kept(&self) -> u64 {
        self.kept
    }

    /// The time window.
    pub fn window(&self) -> TimeWindow {
        self.window
    }

    /// The buckets, in time order (the last one may be partly filled).
    pub fn buckets(&self) -> Vec<Bucket> {
        let mut v = self.buckets.clone();
        if self.open.rows > 0 {
            v.push(self.open);
        }
        v
    }

    /// Time of the first and last kept row, s; `None` when no row was kept.
    pub fn time_span(&self) -> Option<(f64, f64)> {
        let first = self
            .buckets
            .first()
            .or(Some(&self.open).filter(|b| b.rows > 0))?;
        let last = if self.open.rows > 0 {
            &self.open
        } else {
            self.buckets.last()?
        };
        Some((first.t_first, last.t_last))
    }

    /// The buckets merged into `width` equal time columns over `t0 … t1`: column `i` holds
    /// every bucket whose first row falls in `[t0 + i·w, t0 + (i+1)·w)`, the last column
    /// also `t1`. Columns without rows have `rows == 0`.
    pub fn columns(&self, t0: f64, t1: f64, width: usize) -> Vec<Bucket> {
        let width = width.max(1);
        let mut out = vec![Bucket::default(); width];
        let span = t1 - t0;
        for b in self.buckets() {
            let x = if span > 0.0 {
                (b.t_first - t0) / span * width as f64
            } else {
                0.0
            };
            // Clamped to 0 … width − 1 before the cast.
            #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
            let i = x.floor().clamp(0.0, (width - 1) as f64) as usize;
            if let Some(c) = out.get_mut(i) {
                c.merge(&b);
            }
        }
        out
    }

    /// Whether the data had any per-channel force (logged in newtons, or in counts with a
    /// calibration) or a command.
    pub fn has_inputs(&self) -> bool {
        self.buckets()
            .iter()
            .any(|b| !b.command.is_empty() || b.channel_force_n.iter().any(|s| !s.is_empty()))
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::indexing_slicing, clippy::unwrap_used, clippy::float_cmp)]
    use super::*;

    fn row(t: f64, torque: f64) -> EstimateRow {
        EstimateRow {
            line: 0,
            t_s: t,
            torque_nm: Some(torque),
            capacity_nm: Some(1000.0),
            uncertainty_nm: 10.0,
            mu: 0.4,
            radius_m: 0.2,
            clamp_force_n: 1000.0,
            slip_speed_rad_s: 1.0,
            lining_temp_c: 50.0,
            bedding: 0.0,
            wear_m: 0.0,
            correction: 1.0,
            state: ContactState::Slipping,
            flags: Flags::empty(),
            torque_ref_nm: Some(torque),
        }
    }

    /// A single-sample spike in 10⁶ rows survives into the drawn columns (keeping every n-th
    /// sample, as a plain decimator does, keeps it with probability 1/n).
    #[test]
    fn single_sample_spike_in_a_million_rows_is_visible() {
        let mut env = Envelope::new(BUCKETS, TimeWindow::default());
        let n = 1_000_000u32;
        let spike_at = 654_321u32;
        for i in 0..n {
            let t = f64::from(i) * 1e-3;
            let mut r = row(t, 100.0);
            if i == spike_at {
                r.torque_nm = Some(5000.0);
                r.flags = Flags::all();
            }
            env.push(&r, None);
        }
        assert!(env.buckets().len() <= BUCKETS);
        let (t0, t1) = env.time_span().unwrap();
        let cols = env.columns(t0, t1, 1200);
        let top = cols.iter().map(|c| c.torque_nm.hi).fold(f64::MIN, f64::max);
        assert_eq!(top, 5000.0);
        let with_spike: Vec<usize> = cols
            .iter()
            .enumerate()
            .filter(|(_, c)| c.torque_nm.hi == 5000.0)
            .map(|(i, _)| i)
            .collect();
        assert_eq!(with_spike.len(), 1);
        // [calc] column of t = 654.321 s in 0 … 999.999 s over 1200 columns: ⌊785.19⌋ = 785;
        // a bucket (here 512 rows = 0.512 s, under a column's 0.833 s) is placed by its first
        // row, so the spike may show one column early.
        assert!((784..=785).contains(&with_spike[0]), "{with_spike:?}");
        assert!(cols[with_spike[0]].flags == Flags::all());
        assert!(cols.iter().all(|c| c.torque_nm.lo == 100.0 || c.rows == 0));
        // The error span carries the spike too (reference 100 N·m).
        assert!(cols[with_spike[0]].error_nm.hi == 4900.0);
    }

    /// A 50 ms fault (50 rows at 1 kHz) in a 10⁶-row trace is raised in the columns.
    #[test]
    fn short_fault_keeps_its_flag() {
        let mut env = Envelope::new(BUCKETS, TimeWindow::default());
        let bit = Flags::all().iter().next().unwrap();
        for i in 0..1_000_000u32 {
            let mut r = row(f64::from(i) * 1e-3, 10.0);
            if (300_000..300_050).contains(&i) {
                r.flags = bit;
            }
            env.push(&r, None);
        }
        let cols = env.columns(0.0, 999.999, 1200);
        let raised: Vec<usize> = cols
            .iter()
            .enumerate()
            .filter(|(_, c)| c.flags.contains(bit))
            .map(|(i, _)| i)
            .collect();
        // [calc] 300.000–300.049 s lies in column ⌊300.0003·1.2⌋ = 360; the bucket holding its
        // start may begin in column 359 (placement by a bucket's first row).
        assert!(
            !raised.is_empty() && raised.iter().all(|i| (359..=360).contains(i)),
            "{raised:?}"
        );
    }

    #[test]
    fn time_window_keeps_only_its_rows() {
        let w = TimeWindow {
            from_s: Some(2.0),
            to_s: Some(3.0),
        };
        let mut env = Envelope::new(64, w);
        for i in 0..1000u32 {
            env.push(&row(f64::from(i) * 0.01, 1.0), None);
        }
        assert_eq!(env.seen(), 1000);
        // [calc] t = 2.00 … 3.00 s in steps of 0.01 s: 101 rows.
        assert_eq!(env.kept(), 101);
        let (a, b) = env.time_span().unwrap();
        assert!((a - 2.0).abs() < 1e-12 && (b - 3.0).abs() < 1e-12);
        assert!(
            TimeWindow {
                from_s: Some(3.0),
                to_s: Some(2.0)
            }
            .validate()
            .is_err()
        );
    }

    #[test]
    fn counts_channels_are_calibrated() {
        let mut env = Envelope::new(16, TimeWindow::default()).with_calibration(vec![ChannelCal {
            gain_n_per_count: 2.0,
            offset_counts: 100.0,
        }]);
        let s = TraceSample {
            force: [
                Channel::Counts(600),
                Channel::Newtons(7.0),
                Channel::Absent,
                Channel::Absent,
            ],
            command: Some(0.5),
            ..TraceSample::default()
        };
        env.push(&row(0.0, 1.0), Some(&s));
        let b = env.buckets()[0];
        // [calc] F = (counts − offset)·gain = (600 − 100)·2 = 1000 N.
        assert_eq!(b.channel_force_n[0].hi, 1000.0);
        assert_eq!(b.channel_force_n[1].hi, 7.0);
        assert!(b.channel_force_n[2].is_empty());
        assert_eq!(b.command.lo, 0.5);
        assert!(env.has_inputs());
    }
}
