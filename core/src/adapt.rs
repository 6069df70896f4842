//! Bounded online correction of μ from a reference torque.
//!
//! The estimator's torque model is `T = k · T₀`, where `T₀ = n · μ_table · F · r_e` is the
//! uncorrected model torque and `k` a dimensionless correction factor on μ. When a reference
//! torque `T_ref` is available (a bench torque flange, or deceleration × inertia on a vehicle),
//! `k` is identified by **scalar recursive least squares with exponential forgetting**
//! [pub: Åström & Wittenmark, *Adaptive Control*, 2nd ed., §2.2, RLS with forgetting factor λ
//! — equation numbers mem]:
//!
//! ```text
//! φ = T₀ / T_fs,   y = T_ref / T_fs             (normalised to the torque full scale)
//! K = P·φ / (λ + φ²·P)
//! k ← clamp(k + K·(y − φ·k), k_min, k_max)
//! P ← clamp((P − K·φ·P) / λ, P_min, P_max)
//! ```
//!
//! Normalising by the full-scale torque keeps every term inside Q2.30 (`Ratio`), so one update
//! is a handful of 64-bit multiplies and two 64-bit divisions, integer only. Bounding `P` above
//! stops covariance wind-up while the data carry no information; bounding it below keeps the
//! estimator alert. `k` never leaves its configured band.
//!
//! Updates happen only while the lining slips with enough clamp force, healthy sensors and a
//! reference present, with a model torque large enough to carry information; otherwise the
//! factor is held (frozen) and the estimator raises its adaptation-frozen flag.
//!
//! ```
//! use clampwise_core::adapt::{AdaptConfig, AdaptGate, AdaptState};
//! use clampwise_core::units::{NewtonMetres, Ratio};
//!
//! let cfg = AdaptConfig::new(0.8, 1.2, 0.995, NewtonMetres::from_num(2000), 0.05).unwrap();
//! let mut state = AdaptState::new(&cfg);
//! let gate = AdaptGate { slipping: true, force_sufficient: true, sensors_healthy: true };
//! // The lining delivers 10 % more torque than the table says.
//! for _ in 0..2000 {
//!     state.update(&cfg, NewtonMetres::from_num(500), Some(NewtonMetres::from_num(550)), gate);
//! }
//! let k: f64 = state.factor().to_num();
//! assert!((k - 1.10).abs() < 0.001);
//! ```

use core::fmt;

use crate::divide::{Reciprocal, ratio_q30_down};
use crate::units::{NewtonMetres, Ratio};

/// Why an adaptation configuration was rejected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum AdaptError {
    /// The band is not 0 < `min_factor` ≤ 1 ≤ `max_factor` < 2.
    Band,
    /// `forgetting_factor` is not in [0.9, 1].
    ForgettingFactor,
    /// `torque_full_scale_nm` is not a positive, representable torque.
    TorqueFullScale,
    /// `min_excitation` is not in (0, 1).
    MinExcitation,
    /// The covariance bounds ([`AdaptRaw`]) are not 0 < min ≤ initial ≤ max.
    Covariance,
}

impl fmt::Display for AdaptError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Self::Band => "adaptation band must satisfy 0 < min_factor <= 1 <= max_factor < 2",
            Self::ForgettingFactor => "adaptation forgetting_factor must be within [0.9, 1]",
            Self::TorqueFullScale => {
                "adaptation torque_full_scale_nm must be positive and at most 500000 N·m"
            }
            Self::MinExcitation => "adaptation min_excitation must be within (0, 1)",
            Self::Covariance => {
                "adaptation covariance bounds must satisfy 0 < min <= initial <= max"
            }
        })
    }
}

impl core::error::Error for AdaptError {}

/// Validated adaptation settings.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdaptConfig {
    min_factor: Ratio,
    max_factor: Ratio,
    forgetting: Ratio,
    torque_full_scale: NewtonMetres,
    min_excitation: Ratio,
    initial_covariance: Ratio,
    min_covariance: Ratio,
    max_covariance: Ratio,
    /// Derived: division by the full scale and by λ without a divide per sample.
    full_scale_divisor: Reciprocal,
    forgetting_divisor: Reciprocal,
}

const ONE_Q30: i64 = 1 << 30;
/// λ = 0.9 as [`Ratio`] bits, rounded to nearest as `AdaptConfig::new` rounds it.
const FORGETTING_MIN_BITS: i32 = 966_367_642;

/// An [`AdaptConfig`] as its fixed-point values, for configurations computed once (on the
/// host or in a build script) and kept in flash as `const` items.
///
/// [`AdaptConfig::to_raw`] gives them; [`AdaptConfig::from_bits`] checks them and builds the
/// configuration in a `const` context.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct AdaptRaw {
    /// Lower end of the band on k, (0, 1].
    pub min_factor: Ratio,
    /// Upper end of the band on k, [1, 2).
    pub max_factor: Ratio,
    /// Forgetting factor λ, [0.9, 1].
    pub forgetting: Ratio,
    /// Torque full scale used to normalise, N·m, > 0.
    pub torque_full_scale: NewtonMetres,
    /// Smallest |T₀|/T_fs that updates, (0, 1).
    pub min_excitation: Ratio,
    /// Covariance P at start, within `[min_covariance, max_covariance]`.
    pub initial_covariance: Ratio,
    /// Lower bound on P, > 0.
    pub min_covariance: Ratio,
    /// Upper bound on P, < 2.
    pub max_covariance: Ratio,
}

impl AdaptConfig {
    /// Settings from SI values: the correction band `[min_factor, max_factor]` (must contain 1),
    /// the forgetting factor λ ∈ [0.9, 1] (memory ≈ 1/(1 − λ) updates), the torque full scale
    /// used to normalise (N·m), and the minimum |T₀|/T_fs for an update to carry information.
    ///
    /// # Errors
    /// The [`AdaptError`] variant naming the offending setting.
    pub fn new(
        min_factor: f64,
        max_factor: f64,
        forgetting_factor: f64,
        torque_full_scale: NewtonMetres,
        min_excitation: f64,
    ) -> Result<Self, AdaptError> {
        let band_ok = min_factor > 0.0 && min_factor <= 1.0 && (1.0..2.0).contains(&max_factor);
        if !band_ok {
            return Err(AdaptError::Band);
        }
        if !(0.9..=1.0).contains(&forgetting_factor) {
            return Err(AdaptError::ForgettingFactor);
        }
        if torque_full_scale <= NewtonMetres::ZERO {
            return Err(AdaptError::TorqueFullScale);
        }
        if !(min_excitation > 0.0 && min_excitation < 1.0) {
            return Err(AdaptError::MinExcitation);
        }
        let ratio = |v: f64| Ratio::saturating_from_num(v);
        // A setting that rounds to the edge of its range in Q30 (e.g. a band end below one
        // LSB) is rejected by `from_bits`, with the same error.
        Self::from_bits(AdaptRaw {
            min_factor: ratio(min_factor),
            max_factor: ratio(max_factor),
            forgetting: ratio(forgetting_factor),
            torque_full_scale,
            min_excitation: ratio(min_excitation),
            // P₀ = 1: a prior of ±1 on k in normalised units, i.e. little trust in the table.
            initial_covariance: Ratio::ONE,
            min_covariance: ratio(1e-6),
            max_covariance: ratio(1.9),
        })
    }

    /// Check fixed-point settings (from [`AdaptConfig::to_raw`], usually emitted by a build
    /// script) and build the configuration; `const`, so a firmware keeps it in flash and a bad
    /// value fails the build. The bounds are those of [`AdaptConfig::new`], on the Q30 values,
    /// plus 0 < `min_covariance` ≤ `initial_covariance` ≤ `max_covariance`, which keeps every
    /// term of the update below 2 in Q30.
    ///
    /// # Errors
    /// The [`AdaptError`] variant naming the offending setting.
    ///
    /// ```
    /// use clampwise_core::adapt::{AdaptConfig, AdaptRaw};
    /// use clampwise_core::units::{NewtonMetres, Ratio};
    /// const RAW: AdaptRaw = AdaptRaw {
    ///     min_factor: Ratio::lit("0.8"), max_factor: Ratio::lit("1.2"),
    ///     forgetting: Ratio::lit("0.995"), torque_full_scale: NewtonMetres::lit("2000"),
    ///     min_excitation: Ratio::lit("0.05"), initial_covariance: Ratio::ONE,
    ///     min_covariance: Ratio::lit("0.000001"), max_covariance: Ratio::lit("1.9"),
    /// };
    /// const CFG: AdaptConfig = match AdaptConfig::from_bits(RAW) {
    ///     Ok(c) => c,
    ///     Err(_) => panic!("bad adaptation settings"),
    /// };
    /// assert_eq!(CFG.to_raw(), RAW);
    /// assert!(AdaptConfig::from_bits(AdaptRaw { max_factor: Ratio::lit("0.9"), ..RAW }).is_err());
    /// ```
    pub const fn from_bits(raw: AdaptRaw) -> Result<Self, AdaptError> {
        let one = Ratio::ONE.to_bits();
        let (lo, hi) = (raw.min_factor.to_bits(), raw.max_factor.to_bits());
        if lo <= 0 || lo > one || hi < one {
            return Err(AdaptError::Band);
        }
        let lambda = raw.forgetting.to_bits();
        if lambda < FORGETTING_MIN_BITS || lambda > one {
            return Err(AdaptError::ForgettingFactor);
        }
        if raw.torque_full_scale.to_bits() <= 0 {
            return Err(AdaptError::TorqueFullScale);
        }
        let excitation = raw.min_excitation.to_bits();
        if excitation <= 0 || excitation >= one {
            return Err(AdaptError::MinExcitation);
        }
        let (p_min, p0, p_max) = (
            raw.min_covariance.to_bits(),
            raw.initial_covariance.to_bits(),
            raw.max_covariance.to_bits(),
        );
        if p_min <= 0 || p0 < p_min || p_max < p0 {
            return Err(AdaptError::Covariance);
        }
        // Both checked positive above, so the casts keep the value.
        #[allow(clippy::cast_sign_loss)]
        let (full_scale, forgetting) = (raw.torque_full_scale.to_bits() as u32, lambda as u32);
        Ok(Self {
            min_factor: raw.min_factor,
            max_factor: raw.max_factor,
            forgetting: raw.forgetting,
            torque_full_scale: raw.torque_full_scale,
            min_excitation: raw.min_excitation,
            initial_covariance: raw.initial_covariance,
            min_covariance: raw.min_covariance,
            max_covariance: raw.max_covariance,
            full_scale_divisor: Reciprocal::new(full_scale),
            forgetting_divisor: Reciprocal::new(forgetting),
        })
    }

    /// The fixed-point settings, for [`AdaptConfig::from_bits`] (e.g. to emit them as Rust
    /// source); `from_bits(cfg.to_raw())` gives `cfg` back, equal in every bit.
    pub const fn to_raw(&self) -> AdaptRaw {
        AdaptRaw {
            min_factor: self.min_factor,
            max_factor: self.max_factor,
            forgetting: self.forgetting,
            torque_full_scale: self.torque_full_scale,
            min_excitation: self.min_excitation,
            initial_covariance: self.initial_covariance,
            min_covariance: self.min_covariance,
            max_covariance: self.max_covariance,
        }
    }

    /// Lower end of the correction band.
    pub const fn min_factor(&self) -> Ratio {
        self.min_factor
    }

    /// Upper end of the correction band.
    pub const fn max_factor(&self) -> Ratio {
        self.max_factor
    }
}

/// Conditions under which an update is allowed (all must hold).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdaptGate {
    /// The lining is slipping (kinetic friction: μ is observable).
    pub slipping: bool,
    /// Clamp force above the configured minimum for adaptation.
    pub force_sufficient: bool,
    /// Force sensors healthy (no degraded or fallback force).
    pub sensors_healthy: bool,
}

/// What one adaptation step did.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdaptSample {
    /// Correction factor on μ after this step.
    pub factor: Ratio,
    /// True when the factor was held this step (gate closed, no reference, or too little
    /// excitation).
    pub frozen: bool,
    /// True when the update wanted to leave the band and was clamped to it.
    pub at_band_limit: bool,
}

/// Mutable adaptation state: the factor and its covariance. Part of the saved state record.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AdaptState {
    factor: Ratio,
    covariance: Ratio,
}

fn narrow_q30(v: i64) -> Ratio {
    Ratio::from_bits(i32::try_from(v).unwrap_or(if v < 0 { i32::MIN } else { i32::MAX }))
}

/// Normalise a torque to Q30 of the full scale (`full_scale`: its reciprocal), saturating at
/// ±1.99.
fn normalise(torque: NewtonMetres, full_scale: Reciprocal) -> i64 {
    full_scale
        .ratio_q30_toward_zero(i64::from(torque.to_bits()))
        .clamp(-2 * ONE_Q30 + 1, 2 * ONE_Q30 - 1)
}

impl AdaptState {
    /// Start at k = 1 with the configured initial covariance.
    pub const fn new(cfg: &AdaptConfig) -> Self {
        Self {
            factor: Ratio::ONE,
            covariance: cfg.initial_covariance,
        }
    }

    /// Restore from a saved factor and covariance, clamped into the configured bounds.
    pub fn restore(cfg: &AdaptConfig, factor: Ratio, covariance: Ratio) -> Self {
        Self {
            factor: factor.max(cfg.min_factor).min(cfg.max_factor),
            covariance: covariance.max(cfg.min_covariance).min(cfg.max_covariance),
        }
    }

    /// From a snapshot's factor and covariance bits, if both lie within the configured bounds;
    /// else the name of the first that does not.
    pub(crate) fn from_bits_within(
        cfg: &AdaptConfig,
        factor: i32,
        covariance: i32,
    ) -> Result<Self, &'static str> {
        let state = Self {
            factor: Ratio::from_bits(factor),
            covariance: Ratio::from_bits(covariance),
        };
        if state.factor < cfg.min_factor || state.factor > cfg.max_factor {
            return Err("adapt.factor");
        }
        if state.covariance < cfg.min_covariance || state.covariance > cfg.max_covariance {
            return Err("adapt.covariance");
        }
        Ok(state)
    }

    /// The current correction factor on μ.
    pub const fn factor(&self) -> Ratio {
        self.factor
    }

    /// The current covariance P (normalised units).
    pub const fn covariance(&self) -> Ratio {
        self.covariance
    }

    /// One RLS step with model torque `model` (uncorrected, k = 1) and optional reference
    /// torque. Integer only, O(1), cannot fail.
    pub fn update(
        &mut self,
        cfg: &AdaptConfig,
        model: NewtonMetres,
        reference: Option<NewtonMetres>,
        gate: AdaptGate,
    ) -> AdaptSample {
        let held = AdaptSample {
            factor: self.factor,
            frozen: true,
            at_band_limit: false,
        };
        let Some(reference) = reference else {
            return held;
        };
        if !(gate.slipping && gate.force_sufficient && gate.sensors_healthy) {
            return held;
        }
        let phi = normalise(model, cfg.full_scale_divisor);
        if phi.abs() < i64::from(cfg.min_excitation.to_bits()) {
            return held;
        }
        let y = normalise(reference, cfg.full_scale_divisor);
        let p = i64::from(self.covariance.to_bits());
        let lambda = i64::from(cfg.forgetting.to_bits()).max(1);
        let k = i64::from(self.factor.to_bits());

        // All quantities are Q30 with magnitude < 2 (so < 2³¹); each product < 2⁶².
        let p_phi = (p * phi) >> 30;
        // P ≥ 0 and φ² ≥ 0: the shift is the division by 2³⁰.
        let denom = (lambda + ((((phi * phi) >> 30) * p) >> 30)).max(1);
        // K = Pφ/(λ + φ²P), its magnitude from below without a 64-bit division; |Pφ| < 2³².
        let magnitude = u32::try_from(p_phi.unsigned_abs()).unwrap_or(u32::MAX);
        let gain =
            i64::try_from(ratio_q30_down(magnitude, denom.unsigned_abs())).unwrap_or(i64::MAX);
        let gain = if p_phi < 0 { -gain } else { gain };
        let innovation = y - ((phi * k) >> 30);
        let k_new = k + ((gain * innovation.clamp(-4 * ONE_Q30, 4 * ONE_Q30)) >> 30);
        // K has φ's sign, so K·φ·P ≥ 0 and the shift is the division by 2³⁰; ÷ λ by its
        // reciprocal: the same quotient as `/ lambda` (validated λ ≥ 0.9).
        let p_new = cfg
            .forgetting_divisor
            .ratio_q30_toward_zero(p - ((((gain * phi) >> 30) * p) >> 30));

        // `max`/`min` rather than `clamp`: the same value for validated bounds (min ≤ max),
        // and no assertion (panic path) on their order in the per-sample code.
        let k_bounded = narrow_q30(k_new).max(cfg.min_factor).min(cfg.max_factor);
        let at_band_limit = k_bounded.to_bits() != narrow_q30(k_new).to_bits();
        self.factor = k_bounded;
        self.covariance = narrow_q30(p_new)
            .max(cfg.min_covariance)
            .min(cfg.max_covariance);
        AdaptSample {
            factor: self.factor,
            frozen: false,
            at_band_limit,
        }
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn cfg() -> AdaptConfig {
        AdaptConfig::new(0.7, 1.3, 0.995, NewtonMetres::from_num(2000), 0.02).unwrap()
    }

    const OPEN: AdaptGate = AdaptGate {
        slipping: true,
        force_sufficient: true,
        sensors_healthy: true,
    };

    #[test]
    fn every_invalid_setting_has_its_error() {
        let fs = NewtonMetres::from_num(100);
        assert_eq!(
            AdaptConfig::new(1.1, 1.3, 0.99, fs, 0.1),
            Err(AdaptError::Band)
        );
        assert_eq!(
            AdaptConfig::new(0.0, 1.3, 0.99, fs, 0.1),
            Err(AdaptError::Band)
        );
        assert_eq!(
            AdaptConfig::new(0.8, 2.0, 0.99, fs, 0.1),
            Err(AdaptError::Band)
        );
        assert_eq!(
            AdaptConfig::new(0.8, f64::NAN, 0.99, fs, 0.1),
            Err(AdaptError::Band)
        );
        assert_eq!(
            AdaptConfig::new(0.8, 1.2, 0.5, fs, 0.1),
            Err(AdaptError::ForgettingFactor)
        );
        assert_eq!(
            AdaptConfig::new(0.8, 1.2, 1.01, fs, 0.1),
            Err(AdaptError::ForgettingFactor)
        );
        assert_eq!(
            AdaptConfig::new(0.8, 1.2, 0.99, NewtonMetres::ZERO, 0.1),
            Err(AdaptError::TorqueFullScale)
        );
        assert_eq!(
            AdaptConfig::new(0.8, 1.2, 0.99, fs, 0.0),
            Err(AdaptError::MinExcitation)
        );
    }

    #[test]
    fn converges_to_a_known_offset() {
        // Synthetic run: the lining gives 12 % less torque than the table. With λ = 0.995 the
        // RLS memory is 200 updates; within 1000 updates the factor is within 0.1 % of 0.88.
        let cfg = cfg();
        let mut s = AdaptState::new(&cfg);
        let mut converged_at = None;
        for i in 0..5000u32 {
            let model = NewtonMetres::from_num(200 + (i % 50) * 20);
            let reference = model * NewtonMetres::from_num(0.88);
            let out = s.update(&cfg, model, Some(reference), OPEN);
            let k: f64 = out.factor.to_num();
            if converged_at.is_none() && (k - 0.88).abs() < 0.00088 {
                converged_at = Some(i);
            }
        }
        let at = converged_at.unwrap();
        assert!(at < 1000, "converged after {at} updates");
        let k: f64 = s.factor().to_num();
        assert!((k - 0.88).abs() < 0.00088, "{k}");
    }

    #[test]
    fn freezes_without_gate_reference_or_excitation() {
        let cfg = cfg();
        let mut s = AdaptState::new(&cfg);
        let t = NewtonMetres::from_num(500);
        let r = Some(NewtonMetres::from_num(600));
        for gate in [
            AdaptGate {
                slipping: false,
                ..OPEN
            },
            AdaptGate {
                force_sufficient: false,
                ..OPEN
            },
            AdaptGate {
                sensors_healthy: false,
                ..OPEN
            },
        ] {
            let out = s.update(&cfg, t, r, gate);
            assert!(out.frozen);
            assert_eq!(out.factor, Ratio::ONE);
        }
        assert!(s.update(&cfg, t, None, OPEN).frozen);
        assert!(s.update(&cfg, NewtonMetres::from_num(10), r, OPEN).frozen);
        assert_eq!(s, AdaptState::new(&cfg));
    }

    #[test]
    fn forgetting_floor_is_nine_tenths_rounded_like_new() {
        // `new` rounds with `fixed`'s nearest rounding; the const bound must be that value.
        assert_eq!(
            Ratio::saturating_from_num(0.9).to_bits(),
            FORGETTING_MIN_BITS
        );
        let fs = NewtonMetres::from_num(100);
        assert!(AdaptConfig::new(0.8, 1.2, 0.9, fs, 0.1).is_ok());
        assert_eq!(
            AdaptConfig::new(0.8, 1.2, 0.899_999_999, fs, 0.1),
            Err(AdaptError::ForgettingFactor)
        );
    }

    #[test]
    fn raw_round_trip_is_exact() {
        let fs = NewtonMetres::from_num(2000);
        for c in [
            cfg(),
            AdaptConfig::new(1.0, 1.0, 1.0, fs, 0.5).unwrap(),
            AdaptConfig::new(0.5, 1.999, 0.9, NewtonMetres::MAX, 0.999).unwrap(),
        ] {
            assert_eq!(AdaptConfig::from_bits(c.to_raw()), Ok(c));
        }
    }

    #[test]
    fn raw_rejects_each_bad_setting() {
        let raw = cfg().to_raw();
        let e = |r: AdaptRaw| AdaptConfig::from_bits(r).unwrap_err();
        let bits = Ratio::from_bits;
        let one = Ratio::ONE.to_bits();
        for (lo, hi) in [(0, one), (one + 1, one + 2), (one / 2, one - 1)] {
            assert_eq!(
                e(AdaptRaw {
                    min_factor: bits(lo),
                    max_factor: bits(hi),
                    ..raw
                }),
                AdaptError::Band
            );
        }
        for f in [FORGETTING_MIN_BITS - 1, one + 1] {
            assert_eq!(
                e(AdaptRaw {
                    forgetting: bits(f),
                    ..raw
                }),
                AdaptError::ForgettingFactor
            );
        }
        assert_eq!(
            e(AdaptRaw {
                torque_full_scale: NewtonMetres::ZERO,
                ..raw
            }),
            AdaptError::TorqueFullScale
        );
        for x in [0, one] {
            assert_eq!(
                e(AdaptRaw {
                    min_excitation: bits(x),
                    ..raw
                }),
                AdaptError::MinExcitation
            );
        }
        for (p_min, p0, p_max) in [(0, one, one), (one / 2, one / 4, one), (1, one, one - 1)] {
            assert_eq!(
                e(AdaptRaw {
                    min_covariance: bits(p_min),
                    initial_covariance: bits(p0),
                    max_covariance: bits(p_max),
                    ..raw
                }),
                AdaptError::Covariance
            );
        }
        // A band end below one LSB fails in `new` too, with the same error.
        assert_eq!(
            AdaptConfig::new(1e-12, 1.2, 0.99, NewtonMetres::from_num(100), 0.1),
            Err(AdaptError::Band)
        );
        assert!(AdaptError::Covariance.to_string().contains("covariance"));
    }

    proptest! {
        #[test]
        fn never_leaves_its_band(
            samples in proptest::collection::vec((any::<i32>(), any::<i32>(), any::<bool>()), 1..400)
        ) {
            let cfg = cfg();
            let mut s = AdaptState::new(&cfg);
            for (m, r, has_ref) in samples {
                let out = s.update(
                    &cfg,
                    NewtonMetres::from_bits(m),
                    has_ref.then_some(NewtonMetres::from_bits(r)),
                    OPEN,
                );
                prop_assert!(out.factor >= cfg.min_factor() && out.factor <= cfg.max_factor());
                prop_assert!(s.covariance() > Ratio::ZERO);
            }
        }
    }
}
