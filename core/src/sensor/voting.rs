//! Voting among the usable force channels.
//!
//! The consensus is the **largest set of usable channels that all lie within `tolerance` of the
//! set's median** (median of an even count: the mean of the middle two, rounded down). With at
//! most four channels every subset is tried (≤ 15, each sorted in place: bounded, O(1)).
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

use super::ChannelMask;
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

/// The usable candidates in increasing order of value, each with its channel's mask bit
/// (unused entries: bit 0). Sorted once per vote, by rank, so each subset below is gathered
/// already in order instead of being sorted again.
type Sorted = [(i32, u8); 4];

fn sort_candidates(candidates: &[Option<Newtons>]) -> Sorted {
    let mut vals = [None; 4];
    for (v, c) in vals.iter_mut().zip(candidates.iter()) {
        *v = c.map(|x| x.to_bits());
    }
    let mut out = [(0i32, 0u8); 4];
    for (i, vi) in vals.iter().enumerate() {
        let Some(x) = *vi else { continue };
        // Rank: usable values below x, plus equal ones on an earlier channel.
        let rank = vals
            .iter()
            .enumerate()
            .filter(|&(j, vj)| vj.is_some_and(|y| y < x || (y == x && j < i)))
            .count();
        if let Some(slot) = out.get_mut(rank) {
            *slot = (x, 1 << i);
        }
    }
    out
}

/// Sorted values of the channels in `mask`, and how many.
fn gather(sorted: &Sorted, mask: u8) -> ([i32; 4], usize) {
    let mut v = [0i32; 4];
    let mut n = 0usize;
    for &(x, bit) in sorted {
        if bit & mask != 0
            && let Some(slot) = v.get_mut(n)
        {
            *slot = x;
            n += 1;
        }
    }
    (v, n)
}

/// Median of the first `n` sorted values (lower-rounded mean of the middle two when even).
fn median(v: &[i32; 4], n: usize) -> i64 {
    let at = |i: usize| v.get(i).map_or(0, |&x| i64::from(x));
    if n == 0 {
        0
    } else if n % 2 == 1 {
        at(n / 2)
    } else {
        (at(n / 2 - 1) + at(n / 2)) >> 1
    }
}

/// Median and largest distance from it to a member.
fn centre(sorted: &Sorted, mask: u8) -> (i64, i64, usize) {
    let (v, n) = gather(sorted, mask);
    let m = median(&v, n);
    let lo = i64::from(v.first().copied().unwrap_or(0));
    let hi = i64::from(v.get(n.saturating_sub(1)).copied().unwrap_or(0));
    (m, (m - lo).max(hi - m), n)
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
    let usable = candidates
        .iter()
        .take(4)
        .enumerate()
        .fold(0u8, |m, (i, c)| if c.is_some() { m | (1 << i) } else { m });
    if usable == 0 {
        return Vote {
            used: ChannelMask::EMPTY,
            force: Newtons::ZERO,
            agreement: Agreement::NoChannels,
            spread: Newtons::ZERO,
        };
    }
    let tol = i64::from(tolerance.to_bits());
    if usable.count_ones() == 1 {
        // One usable channel: the only candidate set is that channel alone, with spread 0. It
        // passes when the tolerance is not negative; otherwise no set passes and the search
        // below would report it unresolved. Same result, without the search.
        let force = candidates
            .get(usable.trailing_zeros() as usize)
            .copied()
            .flatten()
            .unwrap_or(Newtons::ZERO);
        return Vote {
            used: ChannelMask::from_bits(usable),
            force,
            agreement: if tol >= 0 {
                Agreement::Single
            } else {
                Agreement::Unresolved
            },
            spread: Newtons::ZERO,
        };
    }
    let model = model.map(|m| i64::from(m.to_bits()));
    let sorted = sort_candidates(candidates);
    let mut best_size = 0usize;
    let mut ties = 0u32;
    let mut first = (0u8, 0i64);
    // Nearest maximal set to the model: (mask, median, distance, unique).
    let mut nearest: Option<(u8, i64, i64, bool)> = None;
    for mask in 1u8..16 {
        if mask & usable != mask {
            continue;
        }
        let (m, reach, n) = centre(&sorted, mask);
        if reach > tol || n < best_size {
            continue;
        }
        if n > best_size {
            (best_size, ties, first, nearest) = (n, 0, (mask, m), None);
        }
        ties += 1;
        if let Some(p) = model {
            let d = (m - p).abs();
            nearest = match nearest {
                Some((_, _, nd, _)) if d > nd => nearest,
                Some((nm, nmed, nd, _)) if d == nd => Some((nm, nmed, nd, false)),
                _ => Some((mask, m, d, true)),
            };
        }
    }
    let (mask, m, agreement) = if ties == 1 {
        let agreement = if best_size == 1 && usable.count_ones() == 1 {
            Agreement::Single
        } else if first.0 == usable {
            Agreement::Unanimous
        } else {
            Agreement::Majority
        };
        (first.0, first.1, agreement)
    } else if let Some((nm, nmed, _, true)) = nearest {
        (nm, nmed, Agreement::ModelTieBreak)
    } else {
        let (m, reach, _) = centre(&sorted, usable);
        return Vote {
            used: ChannelMask::from_bits(usable),
            force: to_newtons(m),
            agreement: Agreement::Unresolved,
            spread: to_newtons(reach),
        };
    };
    Vote {
        used: ChannelMask::from_bits(mask),
        force: to_newtons(m),
        agreement,
        spread: Newtons::ZERO,
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp, clippy::indexing_slicing)]
mod tests {
    use super::*;

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

    proptest::proptest! {
        // The once-sorted gather gives each subset's values in order, exactly as collecting
        // and sorting that subset does.
        #[test]
        fn gathered_subsets_are_sorted_subsets(
            vals in proptest::collection::vec(proptest::option::of(proptest::num::i32::ANY), 0..=4),
            mask in 1u8..16,
        ) {
            let c: Vec<Option<Newtons>> = vals.iter().map(|v| v.map(Newtons::from_bits)).collect();
            let (got, n) = gather(&sort_candidates(&c), mask);
            let mut want: Vec<i32> = vals
                .iter()
                .enumerate()
                .filter_map(|(i, v)| v.filter(|_| mask & (1 << i) != 0))
                .collect();
            want.sort_unstable();
            proptest::prop_assert_eq!(&got[..n], &want[..]);
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
