//! A decoded record against one device configuration: the configuration checksum, then the
//! rules of the wear, thermal and adaptation models (see the table in the module docs).
//!
//! Integers only: the expected bedding `exp(−E/E₀)` comes from a Horner-form Taylor series in
//! Q62 and a power of `e⁻¹`, not from `libm`, so the check runs on the target at start-up.

use crate::config::{DeviceConfig, TableSet};
use crate::units::{Metres, Ratio};
use crate::wear::{ENERGY_MAX_Q64, WearConfig};

use super::{RecordError, StateRecord};

const ONE_Q62: u64 = 1 << 62;

/// How far bedding may run *ahead* of its energy: `1 − b` may lie this far below
/// `exp(−E/E₀)`, 2⁻²⁰ (about 10⁻⁶).
///
/// In the wear model the state can only fall behind the closed form: each step multiplies
/// `1 − b` by `g(x) = 1 − x + x²/2 − x³/6 + x⁴/24 ≥ exp(−x)` for `x = dE/E₀ ∈ [0, 1]` (the
/// alternating Taylor series' first omitted term is negative), a step above E₀ is taken as
/// `x = 1`, and `x` itself is truncated. What moves it ahead is truncation only — a few 2⁻⁶²
/// per step, below 2⁻²⁰ for 2⁴⁰ steps (35 years at 1 kHz) \[calc\] — and energy that stops at
/// the top of [`Joules`](crate::units::Joules) while bedding goes on, where
/// `exp(−E/E₀) ≤ exp(−14) < 2⁻²⁰` already. A record of energy 0 and bedding 1 is 1 − 2⁻²⁰
/// ahead.
pub const BEDDING_AHEAD: Ratio = Ratio::from_bits(1 << 10);
const BEDDING_AHEAD_Q62: u64 = 1 << 42;

/// How far bedding may run *behind* its energy: `1 − b` may lie this far above
/// `exp(−E/E₀)`, 2⁻⁷ (0.0078).
///
/// With `r(x) = g(x)·eˣ − 1`, convex on [0, 1] and 0.0194 at `x = 1`, every history whose single
/// steps are at most E₀ gives `1 − b ≤ exp(−0.9806·E/E₀)`, so the lag is at most
/// `max_X (e^{−0.9806·X} − e^{−X}) = 0.0074` at `X ≈ 1` \[calc\]. A history with steps above E₀
/// (a lump of energy through `WearState::add_energy`, or a sample dissipating more than E₀)
/// can lag further and is refused: its bedding is not the model's.
pub const BEDDING_BEHIND: Ratio = Ratio::from_bits(1 << 23);
const BEDDING_BEHIND_Q62: u64 = 1 << 55;

/// How far the thickness loss may lie from `min(k·E/A, initial thickness)`: 2⁻²⁰ m (0.95 µm),
/// either way.
///
/// The state sums each step's loss truncated, from each step's energy truncated to Q48 J: below
/// 2³³ Q96 m per step, below 2⁻²⁰ m for 2⁴³ steps \[calc\]. A loss past the lining is kept at the
/// lining's thickness by [`Estimator::save`](crate::estimator::Estimator::save), so a lining run
/// past its end stays worn out after a restart. Once the energy stops at the top of
/// [`Joules`](crate::units::Joules) the loss goes on: only the lower side is checked then.
pub const LOSS_TOLERANCE: Metres = Metres::from_bits(1 << 4);
const LOSS_TOLERANCE_Q96: u128 = 1 << 76;

/// `e⁻¹` in Q62, rounded to nearest \[calc: e⁻¹ = 0.367 879 441 171 442 32…].
const INV_E_Q62: u64 = 1_696_544_475_317_221_319;
/// Beyond `E = 40·E₀`, `exp(−E/E₀) < 2⁻⁵⁷`: taken as 0 (far inside [`BEDDING_AHEAD`]).
const X_MAX: u64 = 40;

fn mul_q62(a: u64, b: u64) -> u64 {
    u64::try_from((u128::from(a) * u128::from(b)) >> 62).unwrap_or(u64::MAX)
}

/// `exp(−f)` in Q62 for `f ∈ [0, 1)` in Q62: `1 − f·(1 − f/2·(1 − f/3·(…(1 − f/20))))`. Each
/// bracket lies in [0, 1], so every value stays within Q62; the series' remainder is below
/// 1/21! (2⁻⁶⁵) and each of the 20 steps truncates by at most 2 LSB.
fn exp_neg_fraction(f: u64) -> u64 {
    let mut t = ONE_Q62;
    for k in (1..=20u64).rev() {
        t = ONE_Q62.saturating_sub(mul_q62(f, t).checked_div(k).unwrap_or(0));
    }
    t
}

/// `exp(−E/E₀)` in Q62 (the `1 − b` of a lining that took `energy_q64`, Q64 J, in small steps),
/// to within about 2⁻³⁰ of its value: `x = E/E₀` is formed in Q32 from the configuration's
/// reciprocal of E₀, then `exp(−x) = e^{−⌊x⌋} · exp(−frac x)`.
pub(crate) fn unbedded_for_energy(wear: &WearConfig, energy_q64: u128) -> u64 {
    let raw = wear.to_raw();
    let energy_q32 = energy_q64 >> 32;
    let e0_q32 = raw.e0_q48 >> 16;
    if energy_q32 >= e0_q32.saturating_mul(u128::from(X_MAX)) {
        return 0;
    }
    // E < 40·E₀ and bedding_recip ≈ 2⁷⁹/E₀ (J), so the product is below 40·2¹¹¹ < 2¹¹⁷.
    let x_q32 = energy_q32
        .checked_mul(raw.bedding_recip)
        .map_or(X_MAX << 32, |p| {
            u64::try_from(p >> 79).unwrap_or(X_MAX << 32)
        })
        .min(X_MAX << 32);
    let whole = x_q32 >> 32;
    let mut u = exp_neg_fraction((x_q32 & 0xFFFF_FFFF) << 30);
    for _ in 0..whole {
        u = mul_q62(u, INV_E_Q62);
    }
    u
}

fn ratio_from_unbedded(unbedded_q62: u64) -> Ratio {
    let b = ONE_Q62.saturating_sub(unbedded_q62) >> 32;
    Ratio::from_bits(i32::try_from(b).unwrap_or(1 << 30))
}

fn metres_q96(loss_q96: u128) -> Metres {
    Metres::from_bits(i32::try_from(loss_q96 >> 72).unwrap_or(i32::MAX))
}

impl StateRecord {
    /// Check the record against the configuration it is to be loaded into: the configuration
    /// checksum first, then the rules of the module docs' table, in that order.
    /// [`Estimator::restore`](crate::estimator::Estimator::restore) runs it; integers only.
    ///
    /// # Errors
    /// [`RecordError::ConfigMismatch`] (naming both checksums),
    /// [`RecordError::BeddingContradictsEnergy`], [`RecordError::ThicknessLossBeyondLining`],
    /// [`RecordError::ThicknessLossContradictsEnergy`], [`RecordError::TwoTemperaturesOneNode`],
    /// [`RecordError::CorrectionOutOfBand`], [`RecordError::CovarianceOutOfRange`].
    pub fn check<T: TableSet, const C: usize>(
        &self,
        cfg: &DeviceConfig<T, C>,
    ) -> Result<(), RecordError> {
        let config = cfg.checksum();
        if self.config_checksum != config {
            return Err(RecordError::ConfigMismatch {
                record: self.config_checksum,
                config,
            });
        }
        self.check_wear(&cfg.wear)?;
        let (rotor, lining) = self.thermal.raw();
        if !cfg.thermal.has_lining_node() && rotor != lining {
            return Err(RecordError::TwoTemperaturesOneNode);
        }
        let (band, bounds) = cfg.adapt.as_ref().map_or(
            ((Ratio::ONE, Ratio::ONE), (Ratio::ZERO, Ratio::ZERO)),
            |a| {
                let r = a.to_raw();
                (
                    (r.min_factor, r.max_factor),
                    (r.min_covariance, r.max_covariance),
                )
            },
        );
        let factor = self.adaptation_factor;
        if factor < band.0 || factor > band.1 {
            return Err(RecordError::CorrectionOutOfBand {
                factor,
                min: band.0,
                max: band.1,
            });
        }
        let covariance = self.adaptation_covariance;
        if covariance < bounds.0 || covariance > bounds.1 {
            return Err(RecordError::CovarianceOutOfRange {
                covariance,
                min: bounds.0,
                max: bounds.1,
            });
        }
        Ok(())
    }

    fn check_wear(&self, wear: &WearConfig) -> Result<(), RecordError> {
        let (energy_q64, unbedded_q62, loss_q96) = self.wear.raw();
        let expected = unbedded_for_energy(wear, energy_q64);
        let ahead = expected.saturating_sub(unbedded_q62) > BEDDING_AHEAD_Q62;
        let behind = unbedded_q62.saturating_sub(expected) > BEDDING_BEHIND_Q62;
        if ahead || behind {
            return Err(RecordError::BeddingContradictsEnergy {
                bedding: ratio_from_unbedded(unbedded_q62),
                expected: ratio_from_unbedded(expected),
            });
        }

        let lining = wear.initial_thickness();
        // The initial thickness is positive (`WearConfig` holds 0 ≤ minimum < initial).
        let lining_q96 = u128::from(lining.to_bits().unsigned_abs()) << 72;
        if loss_q96 > lining_q96 {
            return Err(RecordError::ThicknessLossBeyondLining {
                loss: metres_q96(loss_q96),
                lining,
            });
        }
        let expected = wear.loss_q96(energy_q64 >> 16).min(lining_q96);
        let short = expected.saturating_sub(loss_q96) > LOSS_TOLERANCE_Q96;
        let over =
            loss_q96.saturating_sub(expected) > LOSS_TOLERANCE_Q96 && energy_q64 < ENERGY_MAX_Q64;
        if short || over {
            return Err(RecordError::ThicknessLossContradictsEnergy {
                loss: metres_q96(loss_q96),
                expected: metres_q96(expected),
            });
        }
        Ok(())
    }
}

#[cfg(test)]
#[allow(
    clippy::unwrap_used,
    clippy::cast_precision_loss,
    clippy::cast_possible_truncation,
    clippy::cast_sign_loss
)]
mod tests {
    use super::*;
    use crate::units::{Joules, Watts};
    use crate::wear::{WEAR_RATE_UNIT, WearParams, WearState};
    use proptest::prelude::*;

    const Q62: f64 = 4_611_686_018_427_387_904.0;

    fn wear_cfg(bedding_energy: f64, dt: f64) -> WearConfig {
        WearConfig::new(
            &WearParams {
                bedding_energy,
                specific_wear_rate: 0.4 * WEAR_RATE_UNIT,
                lining_area: 80e-4,
                initial_thickness: 0.010,
                minimum_thickness: 0.002,
            },
            dt,
        )
        .unwrap()
    }

    // exp(−f) against std's f64 exp [arithmetic check against the f64 library function].
    #[test]
    fn exp_of_the_fraction_matches_f64() {
        for i in 0..=1000u64 {
            let f = (i << 62) / 1001;
            let got = exp_neg_fraction(f) as f64 / Q62;
            let want = (-(f as f64) / Q62).exp();
            assert!((got - want).abs() < 1e-15, "{i}: {got} {want}");
        }
    }

    proptest! {
        // exp(−E/E₀) over the whole energy range and E₀ range, against f64 [arithmetic check
        // against the f64 library function].
        #[test]
        fn unbedded_matches_f64(e0 in 1.0f64..1e13, x in 0.0f64..45.0) {
            let cfg = wear_cfg(e0, 1e-3);
            let energy = (x * e0).min(1.4e14);
            let q64 = (energy * 2f64.powi(64)) as u128;
            let got = unbedded_for_energy(&cfg, q64) as f64 / Q62;
            let want = (-energy / e0).exp();
            prop_assert!((got - want).abs() < 2e-9, "{} vs {}", got, want);
        }

        // Any history of steps up to E₀ stays inside the band, from either side [calc: the
        // bounds at BEDDING_AHEAD and BEDDING_BEHIND].
        #[test]
        fn histories_of_steps_up_to_e0_are_consistent(
            steps in prop::collection::vec(0.0f64..=1.0, 1..60), e0 in 10.0f64..1e9,
        ) {
            let cfg = wear_cfg(e0, 1.0);
            let mut s = WearState::new();
            for x in steps {
                s.update(&cfg, Watts::from_num((x * e0).min(2e9)));
                let (e, u, _) = s.raw();
                let expected = unbedded_for_energy(&cfg, e);
                prop_assert!(expected.saturating_sub(u) <= BEDDING_AHEAD_Q62);
                prop_assert!(u.saturating_sub(expected) <= BEDDING_BEHIND_Q62,
                    "lag {}", (u - expected) as f64 / Q62);
            }
        }
    }

    // The worst lag [calc]: one step of exactly E₀ leaves g(1) = 0.375 against e⁻¹ = 0.3679.
    #[test]
    fn the_largest_lag_is_inside_the_band() {
        let cfg = wear_cfg(1e6, 1.0);
        let mut s = WearState::new();
        s.update(&cfg, Watts::from_num(1e6));
        let (e, u, _) = s.raw();
        let lag = (u - unbedded_for_energy(&cfg, e)) as f64 / Q62;
        assert!((lag - (0.375 - (-1f64).exp())).abs() < 1e-9, "{lag}");
        assert!(lag < 1.0 / 128.0);
        // A lump of 3·E₀ in one step is not the model's bedding: it lags by far more.
        let mut lump = WearState::new();
        lump.add_energy(&cfg, Joules::from_num(3e6));
        let (e, u, _) = lump.raw();
        assert!(u - unbedded_for_energy(&cfg, e) > BEDDING_BEHIND_Q62);
    }

    // `with_history` (f64 exp at start-up) gives the closed form: inside the band.
    #[test]
    fn with_history_is_consistent() {
        let cfg = wear_cfg(5e6, 1e-3);
        for e in [0.0, 1.0, 5e6, 3.3e7, 1e10, 1.4e14] {
            let s = WearState::with_history(&cfg, Joules::from_num(e));
            let (q, u, _) = s.raw();
            let exp = unbedded_for_energy(&cfg, q);
            assert!(exp.abs_diff(u) < 1 << 34, "{e}");
        }
    }
}
