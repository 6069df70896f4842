//! Resampling a trace recorded at another rate onto the device's sample ticks, by a stated
//! method, never silently (`replay --sample-period-s S --resample hold|linear`).
//!
//! Ticks are `t₀ + k·P` (t₀ the first good sample's time, P `device.sample_period_s`, k =
//! 0, 1, …, computed by one multiplication each so no error accumulates), up to the last
//! sample's time. A sample within 10⁻⁶·P after a tick counts as at the tick (decimal time
//! stamps such as 0.006 and 6 × 0.001 differ in their last bits).
//!
//! - [`Resample::Hold`] (zero-order hold): each tick takes the last sample at or before it,
//!   its values unchanged. Downsampling this way drops the samples between ticks (no
//!   anti-alias filter); a gap is bridged by the sample before it.
//! - [`Resample::Linear`]: each tick takes the straight line between the last sample at or
//!   before it (a) and the next one (b): x = xₐ + (x_b − xₐ)·(t − tₐ)/(t_b − tₐ). A tick on a
//!   sample takes that sample unchanged. ADC counts are rounded to the nearest whole count
//!   (halves away from zero). A force channel invalid at either end is invalid at the tick
//!   (a's reading kept); an optional value (command, temperatures, reference torque) empty at
//!   either end is empty.
//!
//! The resampled sample's `line` is the source line of the sample used (hold) or of the
//! earlier of the two (linear), so an estimate row still points into the trace.

use serde::Serialize;

use crate::error::DataError;
use clampwise_convert::{Channel, TraceSample};

/// How a trace recorded at another rate is brought to the device's sample period.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, clap::ValueEnum)]
#[serde(rename_all = "lowercase")]
pub enum Resample {
    /// Zero-order hold: the last sample at or before each tick.
    Hold,
    /// Linear interpolation between the samples either side of each tick.
    Linear,
}

/// What a resampling did (shown in the replay summary).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ResampleReport {
    /// Method used.
    pub method: Resample,
    /// The trace's own sample period (`--sample-period-s`), s.
    pub trace_period_s: f64,
    /// The device's sample period (the ticks), s.
    pub device_period_s: f64,
    /// Good samples read from the trace.
    pub input_rows: u64,
    /// Samples handed to the estimator (one per tick).
    pub output_rows: u64,
}

/// Streaming resampler: pulls samples from its source as the ticks need them.
#[derive(Debug, Clone)]
pub struct Resampler {
    report: ResampleReport,
    t0: f64,
    /// The last sample at or before the current tick.
    a: Option<TraceSample>,
    /// The sample after it, read ahead.
    b: Option<TraceSample>,
    eof: bool,
}

fn lerp(x: f64, y: f64, w: f64) -> f64 {
    x + (y - x) * w
}

fn lerp_opt(x: Option<f64>, y: Option<f64>, w: f64) -> Option<f64> {
    Some(lerp(x?, y?, w))
}

/// The straight line between `a` and `b` at fraction `w` of the way.
fn interpolate(a: &TraceSample, b: &TraceSample, w: f64) -> TraceSample {
    let mut s = *a;
    for i in 0..4 {
        let (Some(slot), Some(va), Some(vb), Some(fa), Some(fb)) = (
            s.force.get_mut(i),
            s.force_valid.get(i).copied(),
            b.force_valid.get(i).copied(),
            a.force.get(i),
            b.force.get(i),
        ) else {
            continue;
        };
        if !(va && vb) {
            if let Some(v) = s.force_valid.get_mut(i) {
                *v = false;
            }
            continue;
        }
        *slot = match (*fa, *fb) {
            (Channel::Newtons(x), Channel::Newtons(y)) => Channel::Newtons(lerp(x, y, w)),
            (Channel::Counts(x), Channel::Counts(y)) => {
                let v = lerp(f64::from(x), f64::from(y), w).round();
                // Between two i32 values: within the i32 range.
                #[allow(clippy::cast_possible_truncation)]
                let n = v as i32;
                Channel::Counts(n)
            }
            (other, _) => other,
        };
    }
    s.omega_in_rad_s = lerp(a.omega_in_rad_s, b.omega_in_rad_s, w);
    s.omega_out_rad_s = lerp(a.omega_out_rad_s, b.omega_out_rad_s, w);
    s.command = lerp_opt(a.command, b.command, w);
    s.temp_c = lerp_opt(a.temp_c, b.temp_c, w);
    s.ambient_c = lerp_opt(a.ambient_c, b.ambient_c, w);
    s.torque_ref_nm = lerp_opt(a.torque_ref_nm, b.torque_ref_nm, w);
    s
}

impl Resampler {
    /// A resampler onto ticks of `device_period_s` for a trace of `trace_period_s`.
    pub fn new(method: Resample, trace_period_s: f64, device_period_s: f64) -> Self {
        Self {
            report: ResampleReport {
                method,
                trace_period_s,
                device_period_s,
                input_rows: 0,
                output_rows: 0,
            },
            t0: 0.0,
            a: None,
            b: None,
            eof: false,
        }
    }

    /// What it did so far.
    pub fn report(&self) -> &ResampleReport {
        &self.report
    }

    fn pull(
        &mut self,
        source: &mut dyn FnMut() -> Result<Option<TraceSample>, DataError>,
    ) -> Result<Option<TraceSample>, DataError> {
        if self.eof {
            return Ok(None);
        }
        let s = source()?;
        match s {
            Some(_) => self.report.input_rows += 1,
            None => self.eof = true,
        }
        Ok(s)
    }

    /// The sample at the next tick; `Ok(None)` after the last tick within the trace.
    ///
    /// # Errors
    /// The source's error.
    pub fn next(
        &mut self,
        source: &mut dyn FnMut() -> Result<Option<TraceSample>, DataError>,
    ) -> Result<Option<TraceSample>, DataError> {
        if self.a.is_none() {
            let Some(first) = self.pull(source)? else {
                return Ok(None);
            };
            self.t0 = first.t_s;
            self.a = Some(first);
        }
        let p = self.report.device_period_s;
        // Tick counts stay far below 2⁵³.
        #[allow(clippy::cast_precision_loss)]
        let tick = self.t0 + self.report.output_rows as f64 * p;
        let eps = p * 1e-6;
        loop {
            if self.b.is_none() {
                self.b = self.pull(source)?;
            }
            match &self.b {
                Some(b) if b.t_s <= tick + eps => self.a = self.b.take(),
                _ => break,
            }
        }
        let Some(a) = &self.a else { return Ok(None) };
        let mut s = match (&self.b, self.report.method) {
            // Past the last sample: the trace has ended.
            (None, _) if tick > a.t_s + eps => return Ok(None),
            (Some(b), Resample::Linear) if tick > a.t_s + eps => {
                interpolate(a, b, (tick - a.t_s) / (b.t_s - a.t_s))
            }
            _ => *a,
        };
        s.t_s = tick;
        self.report.output_rows += 1;
        Ok(Some(s))
    }
}

#[cfg(test)]
mod tests {
    #![allow(
        clippy::unwrap_used,
        clippy::float_cmp,
        clippy::indexing_slicing,
        clippy::panic
    )]
    use super::*;

    fn sample(line: u64, t: f64, f: f64, counts: i32, r: Option<f64>) -> TraceSample {
        TraceSample {
            line,
            t_s: t,
            force: [
                Channel::Newtons(f),
                Channel::Counts(counts),
                Channel::Absent,
                Channel::Absent,
            ],
            force_valid: [true; 4],
            omega_in_rad_s: f / 10.0,
            torque_ref_nm: r,
            ..TraceSample::default()
        }
    }

    fn run(method: Resample, input: Vec<TraceSample>, period: f64) -> Vec<TraceSample> {
        let mut it = input.into_iter();
        let mut src = move || Ok(it.next());
        let mut r = Resampler::new(method, 0.002, period);
        let mut out = Vec::new();
        while let Some(s) = r.next(&mut src).unwrap() {
            out.push(s);
        }
        out
    }

    /// 500 Hz onto 1 kHz: ticks at 0, 1, …, 6 ms over samples at 0, 2, 4, 6 ms.
    fn trace() -> Vec<TraceSample> {
        vec![
            sample(2, 0.0, 100.0, 10, Some(1.0)),
            sample(3, 0.002, 200.0, 13, Some(3.0)),
            sample(4, 0.004, 400.0, 20, None),
            sample(5, 0.006, 300.0, 20, Some(5.0)),
        ]
    }

    /// Hold: tick k takes the sample at ⌊k/2⌋·2 ms [calc: zero-order hold, last sample at or
    /// before each tick].
    #[test]
    fn hold_takes_the_last_sample_at_or_before_each_tick() {
        let out = run(Resample::Hold, trace(), 0.001);
        let lines: Vec<u64> = out.iter().map(|s| s.line).collect();
        assert_eq!(lines, [2, 2, 3, 3, 4, 4, 5]);
        let forces: Vec<Channel> = out.iter().map(|s| s.force[0]).collect();
        assert_eq!(
            forces,
            [100.0, 100.0, 200.0, 200.0, 400.0, 400.0, 300.0].map(Channel::Newtons)
        );
        for (k, s) in out.iter().enumerate() {
            assert_eq!(s.t_s, k as f64 * 0.001);
        }
    }

    /// Linear: odd ticks are midpoints [calc: x = xₐ + (x_b − xₐ)·½]: force 150, 300, 350 N;
    /// counts (10+13)/2 = 11.5 → 12, (13+20)/2 = 16.5 → 17 (halves away from zero), 20;
    /// reference (1+3)/2 = 2, then empty where either end is empty.
    #[test]
    fn linear_interpolates_between_the_samples_either_side() {
        let out = run(Resample::Linear, trace(), 0.001);
        let f: Vec<Channel> = out.iter().map(|s| s.force[0]).collect();
        assert_eq!(
            f,
            [100.0, 150.0, 200.0, 300.0, 400.0, 350.0, 300.0].map(Channel::Newtons)
        );
        let c: Vec<Channel> = out.iter().map(|s| s.force[1]).collect();
        assert_eq!(c, [10, 12, 13, 17, 20, 20, 20].map(Channel::Counts));
        let r: Vec<Option<f64>> = out.iter().map(|s| s.torque_ref_nm).collect();
        assert_eq!(
            r,
            [Some(1.0), Some(2.0), Some(3.0), None, None, None, Some(5.0)]
        );
        assert_eq!(out[3].omega_in_rad_s, 30.0);
        let lines: Vec<u64> = out.iter().map(|s| s.line).collect();
        assert_eq!(lines, [2, 2, 3, 3, 4, 4, 5]);
    }

    /// A third of the way: 100 + (400 − 100)/3 = 200 N [calc], at tick 1 ms of a 3 ms step.
    #[test]
    fn linear_weights_by_time() {
        let out = run(
            Resample::Linear,
            vec![
                sample(2, 0.0, 100.0, 0, None),
                sample(3, 0.003, 400.0, 0, None),
            ],
            0.001,
        );
        assert_eq!(out.len(), 4);
        let Channel::Newtons(f) = out[1].force[0] else {
            panic!()
        };
        assert!((f - 200.0).abs() < 1e-12, "{f}");
    }

    /// Decimal stamps off the tick by their last bits still count as at the tick.
    #[test]
    fn stamps_within_rounding_of_a_tick_are_at_it() {
        let ts = [0.0, 0.1, 0.2, 0.30000000000000004, 0.4];
        let input: Vec<TraceSample> = ts
            .iter()
            .enumerate()
            .map(|(i, &t)| sample(i as u64 + 2, t, i as f64, 0, None))
            .collect();
        let out = run(Resample::Hold, input, 0.1);
        let lines: Vec<u64> = out.iter().map(|s| s.line).collect();
        assert_eq!(lines, [2, 3, 4, 5, 6]);
    }
}
