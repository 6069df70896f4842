//! Voting among the usable force channels.
//!
//! The consensus is the **largest set of usable channels that all lie within `tolerance` of the
//! set's median** (median of an even count: the mean of the middle two, rounded down).
//!
//! Cost: the full usable set is tried first, from its sum and extremes alone (no sort: with at
//! most four values the median is the sum less the extremes, halved for four). When it agrees
//! — the usual case — it is the unique largest agreeing set and the vote ends there. Only when
//! it disagrees are the smaller subsets searched, largest first, stopping at the first size
//! that has an agreeing set (≤ 14 subsets in all: bounded, O(1)). Both are compared with the
//! every-subset definition by property tests.
//!
//! - 1 channel: passed through ([`Agreement::Single`]).
//! - 2 channels: the mean while |a − b| ≤ 2·tolerance ([`Agreement::Unanimous`]); otherwise
//!   the two one-channel sets tie, and the channel nearer the actuator model's predicted force
//!   is used ([`Agreement::ModelTieBreak`]); with no model, the mean of both is reported with an
//!   uncertainty covering both ([`Agreement::Unresolved`]).
//! - 3 or 4 channels: the median of the consensus. One of three, or two of four channels that
//!   do not agree with each other, are out-voted ([`Agreement::Majority`]); two pairs that each
//!   agree internally tie and go to the model, or stay unresolved.
//!
//! Flagged channels never reach the vote: the caller passes only usable ones.
//!
//! ```
//! use clampwise_core::sensor::{vote, Agreement};
//! use clampwise_core::units::Newtons;
//!
//! let n = |v: i32| Some(Newtons::from_num(v));
//! // One of three lying: out-voted, the other two are used.
//! let v = vote(&[n(10_000), n(10_040), n(13_000)], Newtons::from_num(100), None);
//! assert_eq!(v.agreement, Agreement::Majority);
//! assert_eq!(v.used.bits(), 0b011);
//! assert_eq!(v.force, Newtons::from_num(10_020));
//! ```

use super::error::si_field;
use super::{ChannelMask, SensorError};
use crate::units::Newtons;

/// Voting limits (configuration input; validated by [`super::SensorConfig::new`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct VotingLimits {
    /// Largest distance between a channel and the consensus median for the channel to agree
    /// (N, > 0). Two channels agree when they differ by at most twice this.
    pub tolerance: Newtons,
    /// Uncertainty (±N, ≥ 0) of one healthy calibrated and filtered channel: the uncertainty
    /// reported for a force from the channels before any widening.
    pub channel_uncertainty: Newtons,
}

impl VotingLimits {
    /// Limits from SI values: `tolerance_n` (N, > 0) and `channel_uncertainty_n` (±N, ≥ 0).
    ///
    /// # Errors
    /// [`SensorError::Field`] naming a value that is not finite or not representable; the
    /// signs are checked by [`super::SensorConfig::new`].
    pub fn new(tolerance_n: f64, channel_uncertainty_n: f64) -> Result<Self, SensorError> {
        Ok(Self {
            tolerance: si_field(tolerance_n, "voting.tolerance")?,
            channel_uncertainty: si_field(channel_uncertainty_n, "voting.channel_uncertainty")?,
        })
    }
}

/// How the channels agreed in one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub enum Agreement {
    /// No usable channel.
    NoChannels,
    /// One usable channel, passed through.
    Single,
    /// All usable channels agree.
    Unanimous,
    /// A unique largest agreeing set out-voted the rest.
    Majority,
    /// Agreeing sets tied; the actuator model chose one.
    ModelTieBreak,
    /// Agreeing sets tied and no model could choose: the median of all usable channels, with
    /// the uncertainty widened to cover each of them.
    Unresolved,
}

/// Result of a vote.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Vote {
    /// Channels the force came from.
    pub used: ChannelMask,
    /// The voted force (N); zero for [`Agreement::NoChannels`].
    pub force: Newtons,
    /// How the channels agreed.
    pub agreement: Agreement,
    /// For [`Agreement::Unresolved`], the largest distance from `force` to a used channel
    /// (N); zero otherwise.
    pub spread: Newtons,
}

impl Vote {
    /// The consensus a channel is compared with for the disagreement diagnostic: the voted
    /// force when one set of channels won, `None` when there is nothing to compare with.
    pub const fn reference(&self) -> Option<Newtons> {
        match self.agreement {
            Agreement::NoChannels | Agreement::Unresolved => None,
            _ => Some(self.force),
        }
    }
}

/// Median and reach (largest distance from the median to a member) of a set of `n` (1 ..= 4)
/// values given by their sum and extremes: the median is the middle value (n = 3: the sum
/// without the extremes), the lower-rounded mean of the middle two (n = 2, 4), or the value.
#[inline(always)]
fn median_reach(n: u32, sum: i64, lo: i64, hi: i64) -> (i64, i64) {
    let m = match n {
        1 => sum,
        2 => sum >> 1,
        3 => sum - lo - hi,
        _ => (sum - lo - hi) >> 1,
    };
    (m, (m - lo).max(hi - m))
}

fn to_newtons(v: i64) -> Newtons {
    // Medians and distances of i32 values: within i32 except a distance of a full-range
    // spread, which saturates.
    Newtons::from_bits(i32::try_from(v).unwrap_or(if v < 0 { i32::MIN } else { i32::MAX }))
}

/// Vote among `candidates` (index = channel; `None` = not usable), with `tolerance` (N) and
/// the actuator model's predicted force (N), if any, to break ties. At most the first four
/// entries are considered. O(1), integers only, any input.
pub fn vote(candidates: &[Option<Newtons>], tolerance: Newtons, model: Option<Newtons>) -> Vote {
    let mut values = [0i32; 4];
    let mut usable = 0u8;
    for (i, (v, c)) in values.iter_mut().zip(candidates.iter()).enumerate() {
        if let Some(x) = c {
            *v = x.to_bits();
            usable |= 1 << i;
        }
    }
    vote_among(
        &values,
        usable,
        tolerance.to_bits(),
        model.map(|m| m.to_bits()),
    )
}

/// [`vote`] on raw bits: `values` (Q8 N) of the channels in `usable` (bit i = channel i; the
/// other entries are ignored), tolerance and model in Q8 N.
///
/// The full usable set is tried first, from its sum and extremes alone: when it agrees it is
/// the unique largest agreeing set (no other set has as many members), which is what the
/// search would find. Only when it disagrees are the smaller subsets searched, largest first,
/// stopping at the first size with an agreeing set: the definition needs only the sets of the
/// largest agreeing size.
#[inline]
pub(crate) fn vote_among(
    values: &[i32; 4],
    usable: u8,
    tolerance: i32,
    model: Option<i32>,
) -> Vote {
    let usable = usable & 0x0f;
    let (mut lo, mut hi, mut sum) = (i64::MAX, i64::MIN, 0i64);
    for (i, &v) in values.iter().enumerate() {
        if usable & (1 << i) != 0 {
            let v = i64::from(v);
            lo = lo.min(v);
            hi = hi.max(v);
            sum += v;
        }
    }
    let n = usable.count_ones();
    if n == 0 {
        return Vote {
            used: ChannelMask::EMPTY,
            force: Newtons::ZERO,
            agreement: Agreement::NoChannels,
            spread: Newtons::ZERO,
        };
    }
    let (m, reach) = median_reach(n, sum, lo, hi);
    let tol = i64::from(tolerance);
    if reach <= tol {
        return Vote {
            used: ChannelMask::from_bits(usable),
            force: to_newtons(m),
            agreement: if n == 1 {
                Agreement::Single
            } else {
                Agreement::Unanimous
            },
            spread: Newtons::ZERO,
        };
    }
    search(values, usable, n, tol, model, m, reach)
}

/// The usable set (median `m`, reach `reach`) disagrees: the largest agreeing subsets, by
/// decreasing size.
#[inline(never)]
fn search(
    values: &[i32; 4],
    usable: u8,
    n: u32,
    tol: i64,
    model: Option<i32>,
    m: i64,
    reach: i64,
) -> Vote {
    let unresolved = Vote {
        used: ChannelMask::from_bits(usable),
        force: to_newtons(m),
        agreement: Agreement::Unresolved,
        spread: to_newtons(reach),
    };
    let model = model.map(i64::from);
    for k in (1..n).rev() {
        let mut ties = 0u32;
        let mut first = (0u8, 0i64);
        // Nearest agreeing set to the model: (mask, median, distance, unique).
        let mut nearest: Option<(u8, i64, i64, bool)> = None;
        for mask in 1u8..16 {
            if mask & usable != mask || mask.count_ones() != k {
                continue;
            }
            let (m, reach) = centre(values, mask, k);
            if reach > tol {
                continue;
            }
            ties += 1;
            if ties == 1 {
                first = (mask, m);
            }
            if let Some(p) = model {
                let d = (m - p).abs();
                nearest = match nearest {
                    Some((_, _, nd, _)) if d > nd => nearest,
                    Some((nm, nmed, nd, _)) if d == nd => Some((nm, nmed, nd, false)),
                    _ => Some((mask, m, d, true)),
                };
            }
        }
        let (mask, m, agreement) = match (ties, nearest) {
            (0, _) => continue,
            (1, _) => (first.0, first.1, Agreement::Majority),
            (_, Some((nm, nmed, _, true))) => (nm, nmed, Agreement::ModelTieBreak),
            _ => return unresolved,
        };
        return Vote {
            used: ChannelMask::from_bits(mask),
            force: to_newtons(m),
            agreement,
            spread: Newtons::ZERO,
        };
    }
    // No set agrees (only with a negative tolerance: one channel alone always agrees).
    unresolved
}

/// Median and reach of the `k` values in `mask`.
fn centre(values: &[i32; 4], mask: u8, k: u32) -> (i64, i64) {
    let (mut sum, mut lo, mut hi) = (0i64, i64::MAX, i64::MIN);
    for (i, &v) in values.iter().enumerate() {
        if mask & (1 << i) != 0 {
            let v = i64::from(v);
            sum += v;
            lo = lo.min(v);
            hi = hi.max(v);
        }
    }
    median_reach(k, sum, lo, hi)
}

#[cfg(test)]
#[allow(
    clippy::unwrap_used,
    clippy::float_cmp,
    clippy::indexing_slicing,
    clippy::cast_possible_truncation
)]
mod tests {
    use super::*;
    use proptest::strategy::Strategy as _;

    fn n(v: i32) -> Option<Newtons> {
        Some(Newtons::from_num(v))
    }
    const TOL: Newtons = Newtons::lit("100");

    #[test]
    fn two_channels_mean_while_they_agree() {
        let v = vote(&[n(1000), n(1200)], TOL, None);
        assert_eq!(v.agreement, Agreement::Unanimous);
        assert_eq!(v.force, Newtons::from_num(1100));
        assert_eq!(v.used.bits(), 0b11);
        // 201 apart: more than 2·tolerance.
        let v = vote(&[n(1000), n(1201)], TOL, None);
        assert_eq!(v.agreement, Agreement::Unresolved);
        assert_eq!(v.force, Newtons::lit("1100.5"));
        assert_eq!(v.spread, Newtons::lit("100.5"));
    }

    #[test]
    fn two_channels_disagreeing_go_to_the_model() {
        let v = vote(&[n(1000), n(5000)], TOL, n(4200));
        assert_eq!(v.agreement, Agreement::ModelTieBreak);
        assert_eq!(v.used.bits(), 0b10);
        assert_eq!(v.force, Newtons::from_num(5000));
        // Exactly half-way: no honest choice.
        let v = vote(&[n(1000), n(5000)], TOL, n(3000));
        assert_eq!(v.agreement, Agreement::Unresolved);
    }

    #[test]
    fn four_channels_two_liars() {
        // Two liars that disagree with each other: the agreeing pair wins.
        let v = vote(&[n(1000), n(4000), n(1050), n(9000)], TOL, None);
        assert_eq!(v.agreement, Agreement::Majority);
        assert_eq!(v.used.bits(), 0b0101);
        assert_eq!(v.force, Newtons::from_num(1025));
        // Two agreeing liars: a 2–2 tie, the model decides.
        let v = vote(&[n(1000), n(4000), n(1050), n(4010)], TOL, n(1300));
        assert_eq!(v.agreement, Agreement::ModelTieBreak);
        assert_eq!(v.used.bits(), 0b0101);
        let v = vote(&[n(1000), n(4000), n(1050), n(4010)], TOL, None);
        assert_eq!(v.agreement, Agreement::Unresolved);
        assert_eq!(v.used.bits(), 0b1111);
    }

    #[test]
    fn unusable_channels_are_skipped() {
        let v = vote(&[None, n(7), None, None], TOL, None);
        assert_eq!((v.agreement, v.used.bits()), (Agreement::Single, 0b10));
        let v = vote(&[None, None], TOL, n(5));
        assert_eq!(v.agreement, Agreement::NoChannels);
        assert!(v.reference().is_none());
    }

    /// The vote by its definition: every subset of the usable channels, each sorted, its
    /// median and reach taken from the sorted values; the largest agreeing sets compared.
    fn by_definition(c: &[Option<Newtons>], tolerance: Newtons, model: Option<Newtons>) -> Vote {
        let usable: Vec<(u8, i64)> = c
            .iter()
            .take(4)
            .enumerate()
            .filter_map(|(i, v)| v.map(|x| (1u8 << i, i64::from(x.to_bits()))))
            .collect();
        let all: u8 = usable.iter().map(|u| u.0).sum();
        let centre = |mask: u8| {
            let mut v: Vec<i64> = usable
                .iter()
                .filter(|u| u.0 & mask != 0)
                .map(|u| u.1)
                .collect();
            v.sort_unstable();
            let n = v.len();
            let m = if n % 2 == 1 {
                v[n / 2]
            } else {
                (v[n / 2 - 1] + v[n / 2]) >> 1
            };
            (m, (m - v[0]).max(v[n - 1] - m), n)
        };
        let pick = |mask: u8, med: i64, agreement| Vote {
            used: ChannelMask::from_bits(mask),
            force: to_newtons(med),
            agreement,
            spread: Newtons::ZERO,
        };
        if all == 0 {
            return pick(0, 0, Agreement::NoChannels);
        }
        let tol = i64::from(tolerance.to_bits());
        let mut agreeing: Vec<(u8, i64, usize)> = (1u8..16)
            .filter(|&m| m & all == m)
            .filter_map(|m| {
                let (med, reach, n) = centre(m);
                (reach <= tol).then_some((m, med, n))
            })
            .collect();
        let largest = agreeing.iter().map(|a| a.2).max().unwrap_or(0);
        agreeing.retain(|a| a.2 == largest);
        if let [(m, med, n)] = agreeing[..] {
            let agreement = if n == 1 && all.count_ones() == 1 {
                Agreement::Single
            } else if m == all {
                Agreement::Unanimous
            } else {
                Agreement::Majority
            };
            return pick(m, med, agreement);
        }
        if let Some(p) = model.map(|p| i64::from(p.to_bits())) {
            let best = agreeing.iter().map(|a| (a.1 - p).abs()).min();
            let nearest: Vec<_> = agreeing
                .iter()
                .filter(|a| Some((a.1 - p).abs()) == best)
                .collect();
            if let [&(m, med, _)] = nearest[..] {
                return pick(m, med, Agreement::ModelTieBreak);
            }
        }
        let (m, reach, _) = centre(all);
        Vote {
            used: ChannelMask::from_bits(all),
            force: to_newtons(m),
            agreement: Agreement::Unresolved,
            spread: to_newtons(reach),
        }
    }

    fn candidate() -> impl proptest::strategy::Strategy<Value = Option<Newtons>> {
        use proptest::prelude::*;
        // Clustered (agreeing sets, ties, models exactly half-way) or anything.
        prop_oneof![
            1 => Just(None),
            4 => (0i32..40).prop_map(|v| Some(Newtons::from_bits(v * 64))),
            1 => any::<i32>().prop_map(|v| Some(Newtons::from_bits(v))),
            1 => prop_oneof![Just(i32::MIN), Just(i32::MAX)].prop_map(|v| Some(Newtons::from_bits(v))),
        ]
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(10_000))]

        // Median and reach from the sum and extremes are those of the sorted values.
        #[test]
        fn median_and_reach_from_sum_and_extremes(
            vals in proptest::collection::vec(proptest::num::i32::ANY, 1..=4),
        ) {
            let mut v: Vec<i64> = vals.iter().map(|&x| i64::from(x)).collect();
            v.sort_unstable();
            let n = v.len();
            let m = if n % 2 == 1 { v[n / 2] } else { (v[n / 2 - 1] + v[n / 2]) >> 1 };
            let want = (m, (m - v[0]).max(v[n - 1] - m));
            let got = median_reach(n as u32, v.iter().sum(), v[0], v[n - 1]);
            proptest::prop_assert_eq!(got, want);
        }

        // The whole vote (fast path, then the search by decreasing size) against the
        // definition, for any candidates, tolerance (also negative) and model.
        #[test]
        fn the_vote_is_its_definition(
            c in proptest::collection::vec(candidate(), 0..=4),
            tol in proptest::prop_oneof![
                4 => (0i32..200).prop_map(|t| t * 16),
                1 => proptest::num::i32::ANY,
            ],
            model in proptest::option::of(proptest::prop_oneof![
                (0i32..80).prop_map(|v| v * 32),
                proptest::num::i32::ANY,
            ]),
        ) {
            let (tol, model) = (Newtons::from_bits(tol), model.map(Newtons::from_bits));
            proptest::prop_assert_eq!(vote(&c, tol, model), by_definition(&c, tol, model));
        }

        // Channels all within the tolerance of one another's centre: the fast path answers,
        // and its answer is the definition's.
        #[test]
        fn agreeing_channels_take_the_fast_path(
            centre in -(1i32 << 30)..(1i32 << 30),
            tol in 0i32..(1 << 20),
            offsets in proptest::collection::vec(proptest::num::i32::ANY, 1..=4),
            model in proptest::option::of(proptest::num::i32::ANY),
        ) {
            // All within tol/2 of `centre`, so within tol of one another and of their median
            // (which lies between them).
            let c: Vec<Option<Newtons>> = offsets
                .iter()
                .map(|o| Some(Newtons::from_bits(centre + o % (tol / 2 + 1))))
                .collect();
            let (tol, model) = (Newtons::from_bits(tol), model.map(Newtons::from_bits));
            let v = vote(&c, tol, model);
            proptest::prop_assert_eq!(v, by_definition(&c, tol, model));
            let want = if c.len() == 1 { Agreement::Single } else { Agreement::Unanimous };
            proptest::prop_assert_eq!(v.agreement, want);
            proptest::prop_assert_eq!(v.used, ChannelMask::first(c.len()));
        }

        // One usable channel: used alone, passed through; unresolved only for a negative
        // tolerance (no set can be within it).
        #[test]
        fn a_single_usable_channel_is_passed_through(
            x in proptest::num::i32::ANY, at in 0usize..4, tol in proptest::num::i32::ANY,
            model in proptest::option::of(proptest::num::i32::ANY),
        ) {
            let mut c = [None; 4];
            c[at] = Some(Newtons::from_bits(x));
            let v = vote(&c, Newtons::from_bits(tol), model.map(Newtons::from_bits));
            proptest::prop_assert_eq!(v.used.bits(), 1 << at);
            proptest::prop_assert_eq!(v.force, Newtons::from_bits(x));
            proptest::prop_assert_eq!(v.spread, Newtons::ZERO);
            let want = if tol >= 0 { Agreement::Single } else { Agreement::Unresolved };
            proptest::prop_assert_eq!(v.agreement, want);
        }
    }

    #[test]
    fn extreme_values_do_not_overflow() {
        let big = Some(Newtons::MAX);
        let small = Some(Newtons::MIN);
        // Tolerance one LSB short of the full swing: the two equal pairs tie, the model at
        // the bottom picks the low pair.
        let v = vote(&[big, small, big, small], Newtons::MAX, Some(Newtons::MIN));
        assert_eq!(
            (v.agreement, v.used.bits()),
            (Agreement::ModelTieBreak, 0b1010)
        );
        let v = vote(&[big, small], TOL, None);
        assert_eq!(v.agreement, Agreement::Unresolved);
        assert_eq!(v.spread, Newtons::MAX);
    }
}
