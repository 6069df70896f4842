//! The thermal and wear states as a sub-rate task inside the step.
//!
//! Heat and wear change over seconds to hours, so a controller need not advance them at the
//! force-loop rate. Every sample's dissipated power is summed (saturating); every
//! `thermal_wear_every`-th sample (n = 1, 2, 4, … 32) the thermal model advances over the whole
//! interval with the interval's mean power (it is built for the period n·dt) and the wear model
//! takes the energy of all n samples (its dt is the sample period, so the power sum times dt is
//! their summed energy, truncated once instead of n times). Between updates the states are
//! reported as they stand. With n = 1 this is the plain per-sample update, bit for bit.
//!
//! What the sub-rate changes against per-sample updates, for n > 1:
//! - wear and bedding see the same energy (exp(−Σx) = Π exp(−x), so the bedding is the same
//!   within the series' rounding);
//! - the thermal state sees the interval's mean power instead of its shape within the
//!   interval, a difference of order n·dt/τ of the interval's own temperature rise (τ the
//!   shortest thermal time constant), and the mean is rounded down to 2⁻³² W;
//! - the lining temperature that μ is read at, and the fade and over-temperature flags, lag by
//!   up to n − 1 samples; a measured lining or ambient temperature is taken at the update
//!   samples only (so only they can report it rejected).
//!
//! Cost: n − 1 of n samples add one power and read the states out (inlined into the step, about
//! 20 instructions on x86-64); the n-th carries the whole thermal and wear update (out of line:
//! about 280 instructions on x86-64 with a lining node and 210 without; about 2 360 on ARMv6-M
//! for the example firmware's single-node model), so the worst-case step is the same as with
//! n = 1 and only the mean falls.

use crate::flags::Flags;
use crate::thermal::{ThermalConfig, ThermalState};
use crate::units::{Celsius, Metres, Ratio, Watts};
use crate::wear::{WearConfig, WearState};

/// The sums of power since the last update.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct SubRate {
    /// Σ|P| of the samples since the last update (W, saturating): all the heat, friction and
    /// drag.
    pending: Watts,
    /// The part of `pending` from solid friction, the only part that wears and beds the
    /// lining (viscous drag of an open wet clutch shears oil, not lining).
    pending_wear: Watts,
    /// Samples summed in `pending`.
    samples: u8,
}

/// What one sample of the sub-rate task reports: the part of the thermal and wear samples the
/// estimate uses.
pub(crate) struct SlowSample {
    pub lining_temperature: Celsius,
    pub fade_warning: bool,
    pub over_temperature: bool,
    /// A measured lining temperature was checked this sample and rejected.
    pub measured_rejected: bool,
    pub bedding: Ratio,
    pub thickness_loss: Metres,
    pub worn_out: bool,
    /// The power sum reached the top of [`Watts`].
    pub saturated: bool,
}

impl SlowSample {
    /// Set the thermal and wear flags of an estimate from this sample.
    pub(crate) fn set_flags(&self, flags: &mut Flags) {
        flags.set(Flags::FADE_WARNING, self.fade_warning);
        flags.set(Flags::OVER_TEMPERATURE, self.over_temperature);
        flags.set(Flags::TEMPERATURE_REJECTED, self.measured_rejected);
        flags.set(Flags::LINING_WORN, self.worn_out);
    }
}

impl SubRate {
    /// Nothing pending.
    pub(crate) const NEW: Self = Self {
        pending: Watts::ZERO,
        pending_wear: Watts::ZERO,
        samples: 0,
    };

    /// The friction power summed since the last update (W): what the wear model has yet to
    /// see.
    pub(crate) const fn pending_wear(&self) -> Watts {
        self.pending_wear
    }

    /// Add this sample's `power` (W, ≥ 0; all the heat) and `wearing` (W, the part from solid
    /// friction); on every `1 << shift`-th sample advance `thermal` with the heat and `wear`
    /// with the friction energy.
    #[inline(always)]
    pub(crate) fn step(
        &mut self,
        shift: u8,
        (thermal, thermal_cfg): (&mut ThermalState, &ThermalConfig),
        (wear, wear_cfg): (&mut WearState, &WearConfig),
        (power, wearing): (Watts, Watts),
        measured: Option<Celsius>,
        ambient: Option<Celsius>,
    ) -> SlowSample {
        let (sum, overflow) = self.pending.overflowing_add(power.max(Watts::ZERO));
        let sum = if overflow { Watts::MAX } else { sum };
        let wear_sum = self
            .pending_wear
            .saturating_add(wearing.max(Watts::ZERO))
            .min(sum);
        let samples = self.samples.saturating_add(1);
        let measured_rejected = if u32::from(samples) < 1u32 << shift {
            self.pending = sum;
            self.pending_wear = wear_sum;
            self.samples = samples;
            false
        } else {
            *self = Self::NEW;
            advance(
                shift,
                (thermal, thermal_cfg),
                (wear, wear_cfg),
                (sum, wear_sum),
                measured,
                ambient,
            )
        };
        SlowSample {
            lining_temperature: thermal.lining_temperature(),
            fade_warning: thermal.fade_warning(),
            over_temperature: thermal.over_temperature(),
            measured_rejected,
            bedding: wear.bedding(),
            thickness_loss: wear.thickness_loss(),
            worn_out: wear.worn_out(wear_cfg),
            saturated: overflow,
        }
    }
}

/// The update sample: advance `thermal` with the mean of the power sum `sum` over `1 << shift`
/// samples and `wear` with the friction part `wear_sum`; whether a measured temperature was
/// rejected. Kept out of
/// line so the samples in between, inlined into the step, carry none of its register load.
#[inline(never)]
fn advance(
    shift: u8,
    (thermal, thermal_cfg): (&mut ThermalState, &ThermalConfig),
    (wear, wear_cfg): (&mut WearState, &WearConfig),
    (sum, wear_sum): (Watts, Watts),
    measured: Option<Celsius>,
    ambient: Option<Celsius>,
) -> bool {
    // The mean over the interval, rounded down (exact for one sample).
    let mean = Watts::from_bits(sum.to_bits() >> shift);
    let (_, rejected) = thermal.advance(thermal_cfg, mean, measured, ambient);
    wear.advance(wear_cfg, wear_sum);
    rejected
}

// Part of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for SubRate {
    const LEN: usize = 8 + 8 + 1;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.i64(self.pending.to_bits());
        w.i64(self.pending_wear.to_bits());
        w.u8(self.samples);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        let pending = Watts::from_bits(r.i64()?);
        r.check(pending >= Watts::ZERO, "sub_rate.pending")?;
        let pending_wear = Watts::from_bits(r.i64()?);
        // The friction part of the power sum, which `step` keeps at most the sum.
        r.check(
            pending_wear >= Watts::ZERO && pending_wear <= pending,
            "sub_rate.pending_wear",
        )?;
        Some(Self {
            pending,
            pending_wear,
            samples: r.u8()?,
        })
    }
}
