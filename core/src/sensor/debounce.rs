//! Debounce of a diagnostic: raise after N bad samples, clear after M good ones.
//!
//! Each diagnostic gives one piece of [`Evidence`] per sample. `Bad` and `Good` count towards
//! raising and clearing; `None` (the check could not be made this sample, e.g. the stuck check
//! while the actuator command is still) leaves the counters as they are, so "consecutive" means
//! consecutive among the samples that carried evidence.
//!
//! Latency, exactly: a flag that is down is raised *in* the sample that brings the
//! `raise_after`-th bad sample in a row; a raised flag is cleared in the sample that brings the
//! `clear_after`-th good sample in a row. `raise_after = 1` raises on the first bad sample.
//!
//! ```
//! use clampwise_core::sensor::{Debounce, DebounceState, Evidence};
//!
//! let cfg = Debounce::new(3, 2).unwrap();
//! let mut s = DebounceState::new();
//! assert!(!s.update(&cfg, Evidence::Bad));
//! assert!(!s.update(&cfg, Evidence::Bad));
//! assert!(!s.update(&cfg, Evidence::None)); // no evidence: the count is kept
//! assert!(s.update(&cfg, Evidence::Bad)); // third bad sample: raised
//! assert!(s.update(&cfg, Evidence::Good));
//! assert!(!s.update(&cfg, Evidence::Good)); // second good sample: cleared
//! ```

use super::error::{Problem, SensorError};

/// What one sample says about one diagnostic.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Evidence {
    /// The check failed this sample.
    Bad,
    /// The check passed this sample.
    Good,
    /// The check could not be made this sample; the debounce counters are kept.
    None,
}

/// Debounce counts for one diagnostic (configuration).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Debounce {
    /// Consecutive bad samples that raise the flag, 1 ..= 65 535.
    pub raise_after: u16,
    /// Consecutive good samples that clear a raised flag, 1 ..= 65 535.
    pub clear_after: u16,
}

impl Debounce {
    /// Raise on the first bad sample, clear on the first good one.
    pub const IMMEDIATE: Self = Self {
        raise_after: 1,
        clear_after: 1,
    };

    /// Build and validate.
    ///
    /// # Errors
    /// [`SensorError::Field`] with [`Problem::NotPositive`] when a count is zero.
    pub const fn new(raise_after: u16, clear_after: u16) -> Result<Self, SensorError> {
        let d = Self {
            raise_after,
            clear_after,
        };
        match d.validate("debounce") {
            Ok(()) => Ok(d),
            Err(e) => Err(e),
        }
    }

    pub(crate) const fn validate(&self, field: &'static str) -> Result<(), SensorError> {
        if self.raise_after == 0 || self.clear_after == 0 {
            return Err(SensorError::Field {
                field,
                problem: Problem::NotPositive,
            });
        }
        Ok(())
    }
}

/// Debounce state of one diagnostic (mutated every sample, cannot fail).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct DebounceState {
    raised: bool,
    /// Consecutive samples of evidence against the current state.
    run: u16,
}

impl DebounceState {
    /// Flag down, no history.
    pub const fn new() -> Self {
        Self {
            raised: false,
            run: 0,
        }
    }

    /// Whether the flag is raised.
    pub const fn raised(&self) -> bool {
        self.raised
    }

    /// Take one sample of evidence; returns whether the flag is raised afterwards.
    pub fn update(&mut self, cfg: &Debounce, evidence: Evidence) -> bool {
        let against = matches!(
            (self.raised, evidence),
            (false, Evidence::Bad) | (true, Evidence::Good)
        );
        let towards = matches!(
            (self.raised, evidence),
            (false, Evidence::Good) | (true, Evidence::Bad)
        );
        if against {
            self.run = self.run.saturating_add(1);
            let needed = if self.raised {
                cfg.clear_after
            } else {
                cfg.raise_after
            };
            if self.run >= needed {
                self.raised = !self.raised;
                self.run = 0;
            }
        } else if towards {
            self.run = 0;
        }
        self.raised
    }
}

/// The debounce state of up to [`BANK`] diagnostics of one channel at once (bit i =
/// diagnostic i), each behaving exactly as its own [`DebounceState`].
///
/// One sample's evidence comes as two bit masks (bad, good; a bit in neither is
/// [`Evidence::None`]). A run is kept only for the bits in `counting`, so evidence that agrees
/// with the current state (the common case: a healthy channel passing its checks) costs a few
/// bit operations for the whole bank, and only a bit that sees evidence against its state
/// touches its counter.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub(crate) struct DebounceBank {
    /// Raised flags.
    raised: u8,
    /// Bits whose run (in `runs`) is non-zero; a run with its bit clear counts as 0.
    counting: u8,
    /// Consecutive samples of evidence against the current state, per bit.
    runs: [u16; BANK],
}

/// Diagnostics a [`DebounceBank`] holds.
pub(crate) const BANK: usize = 7;

impl DebounceBank {
    pub(crate) const fn new() -> Self {
        Self {
            raised: 0,
            counting: 0,
            runs: [0; BANK],
        }
    }

    /// The raised flags (bit i = diagnostic i).
    pub(crate) const fn raised(&self) -> u8 {
        self.raised
    }

    /// Take one sample of evidence: `bad` and `good` are disjoint bit masks (a bit in both
    /// counts as bad; bits from [`BANK`] on are ignored), `cfg(i)` gives diagnostic i's counts.
    #[inline]
    pub(crate) fn update(&mut self, bad: u8, good: u8, cfg: impl Fn(usize) -> Debounce) {
        let good = good & !bad;
        let against = (bad & !self.raised) | (good & self.raised);
        // Evidence towards the current state ends any run against it.
        self.counting &= !((bad | good) & !against);
        if against != 0 {
            self.count_against(against, cfg);
        }
    }

    /// The bits in `against` saw evidence against their state: count it, and change the state
    /// of those whose run is complete.
    #[cold]
    #[inline(never)]
    fn count_against(&mut self, against: u8, cfg: impl Fn(usize) -> Debounce) {
        for (i, run) in self.runs.iter_mut().enumerate() {
            let bit = 1u8 << i;
            if against & bit == 0 {
                continue;
            }
            let before = if self.counting & bit != 0 { *run } else { 0 };
            let now = before.saturating_add(1);
            let c = cfg(i);
            let needed = if self.raised & bit != 0 {
                c.clear_after
            } else {
                c.raise_after
            };
            if now >= needed {
                self.raised ^= bit;
                self.counting &= !bit;
            } else {
                *run = now;
                self.counting |= bit;
            }
        }
    }
}

// Part of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for DebounceBank {
    const LEN: usize = 2 + 2 * BANK;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.u8(self.raised);
        w.u8(self.counting);
        for run in self.runs {
            w.u16(run);
        }
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        const BITS: u8 = (1 << BANK) - 1;
        let raised = r.u8()?;
        r.check(raised & !BITS == 0, "debounce.raised")?;
        let counting = r.u8()?;
        r.check(counting & !BITS == 0, "debounce.counting")?;
        let mut runs = [0; BANK];
        for run in &mut runs {
            *run = r.u16()?;
        }
        Some(Self {
            raised,
            counting,
            runs,
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp, clippy::indexing_slicing)]
mod tests {
    use super::*;

    /// Sample index (from 1) at which the state changes, for a run of identical evidence.
    fn change_after(cfg: &Debounce, s: &mut DebounceState, e: Evidence, limit: u32) -> u32 {
        let before = s.raised();
        for i in 1..=limit {
            if s.update(cfg, e) != before {
                return i;
            }
        }
        0
    }

    #[test]
    fn raise_and_clear_latencies_are_exact() {
        for (n, m) in [(1u16, 1u16), (3, 5), (10, 2), (u16::MAX, 1)] {
            let cfg = Debounce::new(n, m).unwrap();
            let mut s = DebounceState::new();
            assert_eq!(
                change_after(&cfg, &mut s, Evidence::Bad, 70_000),
                u32::from(n)
            );
            assert_eq!(
                change_after(&cfg, &mut s, Evidence::Good, 70_000),
                u32::from(m)
            );
        }
    }

    #[test]
    fn an_interrupted_run_starts_again() {
        let cfg = Debounce::new(3, 3).unwrap();
        let mut s = DebounceState::new();
        for _ in 0..10 {
            assert!(!s.update(&cfg, Evidence::Bad));
            assert!(!s.update(&cfg, Evidence::Bad));
            assert!(!s.update(&cfg, Evidence::Good));
        }
    }

    proptest::proptest! {
        // The bank against one DebounceState per diagnostic, over any evidence sequence and
        // any counts (small ones, so flags rise and fall, and the extremes).
        #[test]
        fn a_bank_behaves_as_separate_states(
            counts in proptest::collection::vec(
                proptest::prop_oneof![
                    4 => (1u16..5, 1u16..5),
                    1 => (proptest::num::u16::ANY, proptest::num::u16::ANY),
                ],
                BANK,
            ),
            evidence in proptest::collection::vec((proptest::num::u8::ANY, proptest::num::u8::ANY), 0..400),
        ) {
            let cfg: Vec<Debounce> = counts
                .iter()
                .map(|&(r, c)| Debounce { raise_after: r.max(1), clear_after: c.max(1) })
                .collect();
            let mut bank = DebounceBank::new();
            let mut one = [DebounceState::new(); BANK];
            for &(bad, good) in &evidence {
                bank.update(bad, good, |i| cfg[i]);
                let mut want = 0u8;
                for (i, s) in one.iter_mut().enumerate() {
                    let bit = 1 << i;
                    let e = if bad & bit != 0 {
                        Evidence::Bad
                    } else if good & bit != 0 {
                        Evidence::Good
                    } else {
                        Evidence::None
                    };
                    if s.update(&cfg[i], e) {
                        want |= bit;
                    }
                }
                proptest::prop_assert_eq!(bank.raised(), want);
            }
        }
    }

    #[test]
    fn zero_counts_are_rejected() {
        assert!(Debounce::new(0, 1).is_err());
        assert!(Debounce::new(1, 0).is_err());
    }
}
