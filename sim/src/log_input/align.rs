//! Channel groups recorded at different rates, brought onto the device's sample ticks by a
//! stated method (`--resample hold|linear`; zero-order hold when none is stated).
//!
//! Ticks are `t₀ + k·P` (P `device.sample_period_s`, k = 0, 1, …, one multiplication each so
//! no error accumulates), t₀ the latest first sample of the groups, so that every group has a
//! sample at or before each tick; they end after the earliest last sample of the groups. As
//! in [`crate::resample`], a sample within 10⁻⁶·P after a tick counts as at the tick.
//!
//! - [`Resample::Hold`]: each tick takes each group's last sample at or before it.
//! - [`Resample::Linear`]: each tick takes the straight line between that sample (a) and the
//!   next one (b), x = xₐ + (x_b − xₐ)·(t − tₐ)/(t_b − tₐ); a tick on a sample takes it
//!   unchanged. ADC counts are rounded to the nearest count (halves away from zero); a value
//!   missing at either end is missing; a valid bit is 0 when it is 0 at either end.

use super::ColumnKind;
use crate::resample::Resample;

/// The device's ticks over several groups.
#[derive(Debug, Clone)]
pub struct Ticks {
    method: Resample,
    t0: f64,
    period: f64,
    eps: f64,
    k: u64,
}

impl Ticks {
    /// Ticks of `period` from `t0` (the latest first sample of the groups).
    pub fn new(method: Resample, period: f64, t0: f64) -> Self {
        Self {
            method,
            t0,
            period,
            eps: period * 1e-6,
            k: 0,
        }
    }

    /// The method.
    pub fn method(&self) -> Resample {
        self.method
    }

    /// Ticks handed out so far.
    pub fn count(&self) -> u64 {
        self.k
    }

    /// The next tick's time.
    pub fn next_tick(&mut self) -> f64 {
        // Tick counts stay far below 2⁵³.
        #[allow(clippy::cast_precision_loss)]
        let tick = self.t0 + self.k as f64 * self.period;
        self.k += 1;
        tick
    }

    /// Whether a sample at `t` is at or before `tick` (within the rounding allowance).
    pub fn reached(&self, t: f64, tick: f64) -> bool {
        t <= tick + self.eps
    }

    /// The value of a column at `tick` from the group's sample at or before it, `a` = (time,
    /// value), and the next one, `b`.
    pub fn value(
        &self,
        tick: f64,
        a: (f64, Option<f64>),
        b: Option<(f64, Option<f64>)>,
        kind: ColumnKind,
    ) -> Option<f64> {
        let (ta, va) = a;
        if self.method == Resample::Hold || tick <= ta + self.eps {
            return va;
        }
        // Within the overlap a tick after a group's sample always has a next one.
        let (tb, vb) = b?;
        let (xa, xb) = (va?, vb?);
        let w = (tick - ta) / (tb - ta);
        Some(match kind {
            ColumnKind::Number => xa + (xb - xa) * w,
            ColumnKind::Counts => (xa + (xb - xa) * w).round(),
            ColumnKind::Flag => xa.min(xb),
        })
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used, clippy::float_cmp, clippy::indexing_slicing)]
    use super::*;

    /// Hold over a 250 Hz group onto 1 kHz ticks: its value steps every fourth tick
    /// [calc: zero-order hold, the last sample at or before each tick].
    #[test]
    fn hold_steps_with_the_slow_group() {
        let slow = [(0.0, Some(1.0)), (0.004, Some(2.0)), (0.008, Some(3.0))];
        let mut t = Ticks::new(Resample::Hold, 0.001, 0.0);
        let mut at = 0;
        let mut got = Vec::new();
        for _ in 0..9 {
            let tick = t.next_tick();
            while slow.get(at + 1).is_some_and(|s| t.reached(s.0, tick)) {
                at += 1;
            }
            let b = slow.get(at + 1).copied();
            got.push(t.value(tick, slow[at], b, ColumnKind::Number).unwrap());
        }
        assert_eq!(got, [1.0, 1.0, 1.0, 1.0, 2.0, 2.0, 2.0, 2.0, 3.0]);
    }

    /// Linear: a quarter of the way from 1 to 2 is 1.25 [calc: x = xₐ + (x_b − xₐ)·w]; counts
    /// 10 → 13 at ½ is 11.5 → 12 (halves away from zero); a valid bit 1 → 0 is 0 between; a
    /// value missing at either end is missing; a tick on a sample takes it.
    #[test]
    fn linear_interpolates_counts_round_and_flags_take_the_lower() {
        let t = Ticks::new(Resample::Linear, 0.001, 0.0);
        let v = |a: f64, b: Option<f64>, tick: f64, kind| {
            t.value(tick, (0.0, Some(a)), Some((0.004, b)), kind)
        };
        assert_eq!(v(1.0, Some(2.0), 0.001, ColumnKind::Number), Some(1.25));
        assert_eq!(v(10.0, Some(13.0), 0.002, ColumnKind::Counts), Some(12.0));
        assert_eq!(v(1.0, Some(0.0), 0.002, ColumnKind::Flag), Some(0.0));
        assert_eq!(v(1.0, None, 0.002, ColumnKind::Number), None);
        assert_eq!(v(1.0, Some(2.0), 0.0, ColumnKind::Number), Some(1.0));
    }

    /// Decimal stamps off the tick by their last bits count as at the tick.
    #[test]
    fn stamps_within_rounding_of_a_tick_are_at_it() {
        let mut t = Ticks::new(Resample::Hold, 0.1, 0.0);
        let ticks: Vec<f64> = (0..4).map(|_| t.next_tick()).collect();
        assert_eq!(ticks[3], 0.30000000000000004);
        assert!(
            t.reached(0.3 + 5e-8, ticks[3]),
            "within 10⁻⁶·P after the tick"
        );
        assert!(!t.reached(0.3 + 2e-7, ticks[3]));
    }
}
