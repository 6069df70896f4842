//! The ± of a voted clamp force: what the vote cannot rule out (the witnesses, the filter's
//! trail, held samples) and, where an actuator model predicts the force, whether every gauge
//! may be wrong alike.

use super::{ActuatorTransfer, ChannelFlags, MAX_CHANNELS, Vote};
use crate::units::Newtons;

/// The uncertainty of a voted force and whether the actuator model contradicts it.
pub(super) struct ForceBound {
    pub(super) uncertainty: Newtons,
    pub(super) implausible: bool,
}

/// What the vote cannot rule out, as a ± on the voted force (Q8 N, all in i64, saturated to
/// the format at the end):
///
/// - `channel_uncertainty` plus the largest hold allowance of a used channel (`held`);
/// - plus the largest distance from the voted force to a *witness*: a used channel, or one
///   the vote left out only because it disagrees (its own checks pass). Agreeing channels may
///   still differ by twice the tolerance, and an out-voted channel may be the one telling the
///   truth (two channels failing the same way out-vote a healthy third): as long as one
///   witness is healthy, the truth lies within `channel_uncertainty` of it. An out-voted
///   channel stops being a witness only for a reason of its own — a raised invalid, rail,
///   range, rate or stuck flag — or when the actuator model, where there is one, puts it
///   beyond the model's band plus `channel_uncertainty`;
/// - where the actuator model gives a prediction: a voted force farther from it than its own
///   uncertainty (without the out-voted witnesses) may be wrong alike on every channel, which
///   no vote can see; the ± then widens to reach the model's band as well, since the model may
///   be the one that is right. Farther than that plus the band, the two contradict each other
///   and the force is *implausible*. A model whose band is honest and tight therefore keeps
///   the ± tight and still covers a fault shared by every channel; one that disagrees with
///   healthy channels by more than their ± widens it.
pub(super) fn force_bound(
    channel_uncertainty: Newtons,
    v: &Vote,
    channel_force: &[Option<Newtons>; MAX_CHANNELS],
    channel_flags: &[ChannelFlags; MAX_CHANNELS],
    (held, trailing): (u64, u32),
    model: Option<(Newtons, &ActuatorTransfer)>,
) -> ForceBound {
    // Distances between i32 values are exact in u32; every sum saturates (at the top the ±
    // is the whole format anyway). All in 32 bits: single instructions on a Cortex-M0.
    let voted = v.force.to_bits();
    // channel_uncertainty ≥ 0 and the band's parts ≥ 0 (validated): exact.
    let own = channel_uncertainty.to_bits().unsigned_abs();
    let model = model.map(|(p, tr)| (p.to_bits(), tr.plausibility_band().to_bits().unsigned_abs()));
    let mut spread_used = 0u32;
    let mut spread_out = 0u32;
    let local_fault = ChannelFlags::UNUSABLE.difference(ChannelFlags::DISAGREE);
    for (i, (value, flags)) in channel_force.iter().zip(channel_flags.iter()).enumerate() {
        let Some(x) = value else { continue };
        let x = x.to_bits();
        let distance = x.abs_diff(voted);
        if v.used.contains(i) {
            spread_used = spread_used.max(distance);
        } else if !flags.intersects(local_fault) {
            let ruled_out = model.is_some_and(|(p, band)| x.abs_diff(p) > band.saturating_add(own));
            if !ruled_out {
                spread_out = spread_out.max(distance);
            }
        }
    }
    let held = u32::try_from(held).unwrap_or(u32::MAX);
    // What the channels that were used claim on their own, before the filter's trail.
    let own_claim = own.saturating_add(held).saturating_add(spread_used);
    let consensus = own_claim.saturating_add(trailing);
    let mut bound = own
        .saturating_add(held)
        .saturating_add(trailing)
        .saturating_add(spread_used.max(spread_out));
    let mut implausible = false;
    if let Some((p, band)) = model {
        let gap = voted.abs_diff(p);
        // Farther from the model than the channels' own ± reaches (a filter trailing a moving
        // force is no reason to trust them more): every channel may be wrong alike, so the ±
        // covers the model's band too. Beyond the trail and the band as well, the two
        // contradict each other outright.
        if gap > own_claim {
            bound = bound.max(gap.saturating_add(band));
            implausible = gap > consensus.saturating_add(band);
        }
    }
    ForceBound {
        uncertainty: Newtons::from_bits(i32::try_from(bound).unwrap_or(i32::MAX)),
        implausible,
    }
}
