//! Channel groups recorded at different rates, brought onto the device's sample ticks by a
//! stated method (`--resample hold|linear`; zero-order hold when none is stated).
//!
//! Ticks are `t₀ + k·P` (P `device.sample_period_s`, k = 0, 1, …, one multiplication each so
//! no error accumulates), from the latest first sample of the groups (t₀) to the earliest last
//! one, so that every group has a sample at or before each tick. As in
//! [`crate::resample`], a sample within 10⁻⁶·P after a tick counts as at the tick.
//!
//! - [`Resample::Hold`]: each tick takes each group's last sample at or before it.
//! - [`Resample::Linear`]: each tick takes the straight line between that sample (a) and the
//!   next one (b), x = xₐ + (x_b − xₐ)·(t − tₐ)/(t_b − tₐ); a tick on a sample takes it
//!   unchanged. ADC counts are rounded to the nearest count (halves away from zero); a value
//!   missing at either end is missing; a valid bit is 0 when it is 0 at either end.

use super::ColumnKind;
use crate::resample::Resample;

/// The ticks over several groups' time stamps.
#[derive(Debug, Clone)]
pub struct Ticks {
    method: Resample,
    t0: f64,
    period: f64,
    last: f64,
    eps: f64,
    k: u64,
}

impl Ticks {
    /// Ticks of `period` over the overlap of the groups' `times` (each sorted, none empty).
    ///
    /// # Errors
    /// A message when the groups do not overlap in time.
    pub fn new(method: Resample, period: f64, times: &[&[f64]]) -> Result<Self, String> {
        let t0 = times
            .iter()
            .filter_map(|t| t.first().copied())
            .fold(f64::NEG_INFINITY, f64::max);
        let last = times
            .iter()
            .filter_map(|t| t.last().copied())
            .fold(f64::INFINITY, f64::min);
        if !matches!(
            t0.partial_cmp(&last),
            Some(std::cmp::Ordering::Less | std::cmp::Ordering::Equal)
        ) {
            return Err(format!(
                "the channel groups do not overlap in time (the latest starts at {t0} s, the earliest ends at {last} s): there is no tick at which all have a sample"
            ));
        }
        Ok(Self {
            method,
            t0,
            period,
            last,
            eps: period * 1e-6,
            k: 0,
        })
    }

    /// The method.
    pub fn method(&self) -> Resample {
        self.method
    }

    /// Ticks handed out so far.
    pub fn count(&self) -> u64 {
        self.k
    }

    /// The next tick's time; `None` past the last sample of the earliest-ending group.
    pub fn next_tick(&mut self) -> Option<f64> {
        // Tick counts stay far below 2⁵³.
        #[allow(clippy::cast_precision_loss)]
        let tick = self.t0 + self.k as f64 * self.period;
        if tick > self.last + self.eps {
            return None;
        }
        self.k += 1;
        Some(tick)
    }

    /// Move `cursor` to the last sample of `time` at or before `tick`.
    pub fn advance(&self, time: &[f64], cursor: &mut usize, tick: f64) {
        while time.get(*cursor + 1).is_some_and(|&t| t <= tick + self.eps) {
            *cursor += 1;
        }
    }

    /// The value of a column at `tick`, its group's cursor at `at`.
    pub fn value(
        &self,
        time: &[f64],
        values: &[Option<f64>],
        at: usize,
        tick: f64,
        kind: ColumnKind,
    ) -> Option<f64> {
        let a = values.get(at).copied().flatten();
        let ta = time.get(at).copied()?;
        if self.method == Resample::Hold || tick <= ta + self.eps {
            return a;
        }
        // Within the overlap a tick after a group's sample always has a next one.
        let tb = time.get(at + 1).copied()?;
        let b = values.get(at + 1).copied().flatten();
        let (a, b) = (a?, b?);
        let w = (tick - ta) / (tb - ta);
        Some(match kind {
            ColumnKind::Number => a + (b - a) * w,
            ColumnKind::Counts => (a + (b - a) * w).round(),
            ColumnKind::Flag => a.min(b),
        })
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::float_cmp)]
    use super::*;

    /// Hold over a 1 kHz group and a 250 Hz one: the slow group's value steps every fourth
    /// tick [calc: zero-order hold, the last sample at or before each tick].
    #[test]
    fn hold_steps_with_the_slow_group() {
        let fast: Vec<f64> = (0..9).map(|k| f64::from(k) * 0.001).collect();
        let slow = [0.0, 0.004, 0.008];
        let v = [Some(1.0), Some(2.0), Some(3.0)];
        let mut t = Ticks::new(Resample::Hold, 0.001, &[&fast, &slow]).unwrap();
        let mut at = 0;
        let mut got = Vec::new();
        while let Some(tick) = t.next_tick() {
            t.advance(&slow, &mut at, tick);
            got.push(t.value(&slow, &v, at, tick, ColumnKind::Number).unwrap());
        }
        assert_eq!(got, [1.0, 1.0, 1.0, 1.0, 2.0, 2.0, 2.0, 2.0, 3.0]);
    }

    /// Linear: a quarter of the way from 1 to 2 is 1.25 [calc: x = xₐ + (x_b − xₐ)·w]; counts
    /// 10 → 13 at ½ is 11.5 → 12 (halves away from zero); a valid bit 1 → 0 is 0 between.
    #[test]
    fn linear_interpolates_counts_round_and_flags_take_the_lower() {
        let slow = [0.0, 0.004];
        let t = Ticks::new(Resample::Linear, 0.001, &[&slow]).unwrap();
        let x = [Some(1.0), Some(2.0)];
        assert_eq!(t.value(&slow, &x, 0, 0.001, ColumnKind::Number), Some(1.25));
        let c = [Some(10.0), Some(13.0)];
        assert_eq!(t.value(&slow, &c, 0, 0.002, ColumnKind::Counts), Some(12.0));
        let f = [Some(1.0), Some(0.0)];
        assert_eq!(t.value(&slow, &f, 0, 0.002, ColumnKind::Flag), Some(0.0));
        let gap = [Some(1.0), None];
        assert_eq!(t.value(&slow, &gap, 0, 0.002, ColumnKind::Number), None);
        assert_eq!(t.value(&slow, &x, 0, 0.0, ColumnKind::Number), Some(1.0));
    }

    /// Ticks run from the latest start to the earliest end.
    #[test]
    fn ticks_cover_the_overlap_only() {
        let a = [0.0, 0.001, 0.002, 0.003, 0.004, 0.005];
        let b = [0.002, 0.004];
        let mut t = Ticks::new(Resample::Hold, 0.001, &[&a, &b]).unwrap();
        let ticks: Vec<f64> = std::iter::from_fn(|| t.next_tick()).collect();
        assert_eq!(ticks, [0.002, 0.003, 0.004]);
        assert!(Ticks::new(Resample::Hold, 0.001, &[&[0.0, 0.001], &[0.5]]).is_err());
    }
}
