//! Time-stamp checks of a trace: non-monotonic steps (an error), duplicates and gaps
//! (counted and reported), and a sample period that does not match the config (a likely wrong
//! time unit: an error).

use serde::Serialize;

/// How many steps are looked at before the sample period is judged.
const PERIOD_WINDOW: usize = 64;

/// Running time-stamp checks.
#[derive(Debug, Clone)]
pub struct TimeCheck {
    period_s: f64,
    tolerance: f64,
    period_name: &'static str,
    gap_s: f64,
    prev: Option<f64>,
    first_steps: Vec<f64>,
    period_checked: bool,
    report: TimeReport,
}

/// What the checks found.
#[derive(Debug, Clone, Default, Serialize, PartialEq)]
pub struct TimeReport {
    /// Rows whose time equals the row before (kept).
    pub duplicates: u64,
    /// Line of the first duplicate.
    pub first_duplicate_line: Option<u64>,
    /// Steps longer than the gap threshold.
    pub gaps: u64,
    /// Line of the first row after a gap.
    pub first_gap_line: Option<u64>,
    /// Longest step, s (written to 12 significant digits: a difference of two time stamps
    /// carries their rounding, e.g. 0.0010000000000000009 for 1 ms).
    #[serde(serialize_with = "step_digits")]
    pub largest_step_s: f64,
    /// Rows dropped for going back in time (only with `--skip-bad-rows`).
    pub non_monotonic_skipped: u64,
    /// First time stamp, s.
    pub first_t_s: Option<f64>,
    /// Last time stamp, s.
    pub last_t_s: Option<f64>,
    /// Median of the first steps, s (written to 12 significant digits).
    #[serde(serialize_with = "optional_step_digits")]
    pub median_step_s: Option<f64>,
}

/// `x` to 12 significant digits, the precision of a time step taken as a difference of two
/// stamps of a trace: 0.0010000000000000009 → 0.001.
pub fn step_precision(x: f64) -> f64 {
    if !x.is_finite() || x == 0.0 {
        return x;
    }
    format!("{x:.11e}").parse().unwrap_or(x)
}

/// A time step for a human summary: 12 significant digits, shortest form (`0.001`).
pub fn step_text(x: f64) -> String {
    format!("{}", step_precision(x))
}

fn step_digits<S: serde::Serializer>(x: &f64, s: S) -> Result<S::Ok, S::Error> {
    s.serialize_f64(step_precision(*x))
}

// serde's `serialize_with` hands the field by reference.
#[allow(clippy::ref_option)]
fn optional_step_digits<S: serde::Serializer>(x: &Option<f64>, s: S) -> Result<S::Ok, S::Error> {
    match x {
        Some(v) => s.serialize_some(&step_precision(*v)),
        None => s.serialize_none(),
    }
}

impl TimeCheck {
    /// Checks against `period_s` (called `period_name` in messages); a step above `(1 +
    /// gap_tolerance) · period` is a gap; a median step more than `tolerance` times the
    /// period, or less than its `1/tolerance`, is an error.
    pub fn new(
        period_s: f64,
        gap_tolerance: f64,
        tolerance: f64,
        period_name: &'static str,
    ) -> Self {
        Self {
            period_s,
            tolerance,
            period_name,
            gap_s: period_s * (1.0 + gap_tolerance),
            prev: None,
            first_steps: Vec::with_capacity(PERIOD_WINDOW),
            period_checked: false,
            report: TimeReport::default(),
        }
    }

    /// Check the next time stamp.
    ///
    /// # Errors
    /// A message when `t` goes back in time, or when the first steps show a period more than
    /// twice or less than half the configured one.
    pub fn check(&mut self, t: f64, line: u64) -> Result<(), String> {
        if let Some(prev) = self.prev {
            let dt = t - prev;
            if dt < 0.0 {
                return Err(format!(
                    "time goes backwards: {t} s after {prev} s (non-monotonic time stamps)"
                ));
            }
            if dt == 0.0 {
                self.report.duplicates += 1;
                self.report.first_duplicate_line.get_or_insert(line);
            } else if dt > self.gap_s {
                self.report.gaps += 1;
                self.report.first_gap_line.get_or_insert(line);
            }
            self.report.largest_step_s = self.report.largest_step_s.max(dt);
            if !self.period_checked && dt > 0.0 {
                self.first_steps.push(dt);
                if self.first_steps.len() >= PERIOD_WINDOW {
                    self.judge_period()?;
                }
            }
        } else {
            self.report.first_t_s = Some(t);
        }
        self.prev = Some(t);
        self.report.last_t_s = Some(t);
        Ok(())
    }

    fn judge_period(&mut self) -> Result<(), String> {
        self.period_checked = true;
        if self.first_steps.is_empty() {
            return Ok(());
        }
        let mut s = std::mem::take(&mut self.first_steps);
        s.sort_by(f64::total_cmp);
        let median = s.get(s.len() / 2).copied().unwrap_or(self.period_s);
        self.report.median_step_s = Some(median);
        let ratio = median / self.period_s;
        if !(1.0 / self.tolerance..=self.tolerance).contains(&ratio) {
            let step = step_text(median);
            return Err(format!(
                "time stamps step by {step} s (median of the first {} steps) but {} is {} s: wrong time unit for the time column? If the trace was recorded at another rate, state its period and resample it to the device's: --sample-period-s {step} --resample hold (or linear)",
                s.len(),
                self.period_name,
                self.period_s
            ));
        }
        Ok(())
    }

    /// Count a row skipped for going backwards.
    pub fn count_skipped(&mut self) {
        self.report.non_monotonic_skipped += 1;
    }

    /// Finish (judges the period on short traces too).
    ///
    /// # Errors
    /// As [`TimeCheck::check`] for the period.
    pub fn finish(&mut self) -> Result<TimeReport, String> {
        if !self.period_checked && self.first_steps.len() >= 8 {
            self.judge_period()?;
        }
        Ok(self.report.clone())
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn duplicates_gaps_and_backwards() {
        let mut c = TimeCheck::new(0.001, 0.5, 1.5, "device.sample_period_s");
        for (i, t) in [0.0, 0.001, 0.001, 0.002, 0.010, 0.011].iter().enumerate() {
            c.check(*t, i as u64 + 2).unwrap();
        }
        assert!(c.check(0.005, 8).unwrap_err().contains("backwards"));
        let r = c.finish().unwrap();
        assert_eq!((r.duplicates, r.first_duplicate_line), (1, Some(4)));
        assert_eq!((r.gaps, r.first_gap_line), (1, Some(6)));
        assert!((r.largest_step_s - 0.008).abs() < 1e-12);
    }

    #[test]
    fn wrong_time_unit() {
        let mut c = TimeCheck::new(0.001, 0.5, 1.5, "device.sample_period_s");
        let mut err = None;
        for i in 0..100 {
            if let Err(e) = c.check(f64::from(i), 2 + u64::try_from(i).unwrap()) {
                err = Some(e);
                break;
            }
        }
        assert!(err.unwrap().contains("wrong time unit"));
    }

    /// A median step beyond the gap threshold (1 + 0.5 periods) either way is another rate:
    /// 2 ms against 1 ms (a 500 Hz log on a 1 kHz device) fails and says how to resample;
    /// 1.4 ms and 0.7 ms pass (jitter).
    #[test]
    fn another_rate_is_refused_with_the_way_to_resample() {
        let run = |step: f64| {
            let mut c = TimeCheck::new(0.001, 0.5, 1.5, "device.sample_period_s");
            for i in 0..100u32 {
                c.check(f64::from(i) * step, u64::from(i) + 2)?;
            }
            c.finish().map(|_| ())
        };
        let e = run(0.002).unwrap_err();
        assert!(e.contains("--sample-period-s 0.002 --resample hold"), "{e}");
        assert!(run(0.0016).is_err());
        assert!(run(0.0006).is_err());
        assert!(run(0.0014).is_ok());
        assert!(run(0.0007).is_ok());
    }

    /// [calc: 9 · 0.001 − 0.008 in f64 is 0.0010000000000000009; 1 ms is what the trace says]
    #[test]
    fn steps_are_reported_without_float_noise() {
        let dt = 9.0 * 0.001f64 - 0.008;
        assert_eq!(format!("{dt}"), "0.0010000000000000009");
        assert_eq!(step_text(dt), "0.001");
        let r = TimeReport {
            largest_step_s: dt,
            median_step_s: Some(dt),
            ..TimeReport::default()
        };
        let js = serde_json::to_string(&r).unwrap();
        assert!(js.contains("\"largest_step_s\":0.001,"), "{js}");
        assert!(js.contains("\"median_step_s\":0.001}"), "{js}");
        assert_eq!(step_text(12.5), "12.5");
    }
}
