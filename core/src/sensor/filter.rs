//! First-order fixed-point low-pass filter with an exact exponential pole.
//!
//! The difference equation is the single-pole recursive low-pass
//!
//! ```text
//! y[n] = y[n−1] + α·(x[n] − y[n−1]),   α = 1 − e^(−2π·f_c/f_s)
//! ```
//!
//! (Smith, *The Scientist and Engineer's Guide to Digital Signal Processing*, ch. 19,
//! "single pole recursive filters", eq. 19-5: a₀ = 1 − x, b₁ = x, x = e^(−2π f_c) with f_c as a
//! fraction of the sample rate \[mem\]). The pole z = e^(−T/τ), τ = 1/(2π f_c), is the image of
//! the continuous pole s = −1/τ (impulse invariance, Oppenheim & Schafer, *Discrete-Time
//! Signal Processing*, ch. 7 \[mem\]); the coefficients sum to one, so the DC gain is exactly 1.
//! With the input entering without delay this is the zero-order-hold (step-invariant)
//! discretisation advanced by one sample: after a unit step applied at sample 0, output sample
//! n equals the continuous first-order response 1 − e^(−t/τ) at t = (n + 1)·T \[calc\]. The cut-off
//! sets τ; the −3 dB frequency of the discrete filter is within 1 % of f_c for f_c ≤ f_s/20
//! (0.83 % at f_s/20, 3.5 % at f_s/10) \[calc\].
//!
//! ## Fixed point
//!
//! - α is stored in Q4.60 (i64), computed once at construction from `expm1` (f64); the update
//!   uses its 32 leading bits, α ≈ m/2^s with m ∈ [2³¹, 2³²) (truncated: below α, by less than
//!   2⁻³¹ of it), so the product is two 32 × 32 → 64-bit multiplies (one instruction each on a
//!   Cortex-M3/M4) instead of a 64 × 64 → 128-bit one.
//! - The state carries 24 fractional bits beyond [`Newtons`] (Q8), i.e. newtons in Q32 in an
//!   i64; the product α·(x − y) is rounded to nearest (halves away from zero).
//! - **No limit cycle, no offset, DC gain exactly 1.** Each step changes the error
//!   e = x − y by round(α·e), so |e| falls strictly while |α·e| ≥ ½ state LSB and then stays
//!   still: the only fixed points are |e| ≤ 1/(2α) state LSB. Construction rejects α < 2⁻²⁰,
//!   which keeps that dead band below 2¹⁹ state LSB = 2⁻⁵ output LSB, so a constant input held
//!   long enough is reproduced *exactly* and stays so (checked for 10⁶ samples).
//! - **Error bound** against the exact recursion with the ideal α (and so against the analytic
//!   step response at the sample instants): ≤ ½ output LSB from the final rounding, plus
//!   ≤ 2⁻⁵ LSB from the state rounding, plus α's truncation to 32 bits (below 2⁻³¹ of the step;
//!   the f64 error of α is far below that): ≤ 0.54 LSB = 2.1 mN plus 4.7·10⁻¹⁰ of the step
//!   (0.03 LSB for a 200 kN step).
//!
//! ```
//! use clampwise_core::sensor::{LowPass, LowPassState};
//! use clampwise_core::units::Newtons;
//!
//! let lp = LowPass::new(10.0, 1000).unwrap(); // 10 Hz cut-off at 1 kHz
//! let mut s = LowPassState::new();
//! s.reset(Newtons::ZERO);
//! let mut y = Newtons::ZERO;
//! for _ in 0..16 {
//!     y = s.update(&lp, Newtons::from_num(1000));
//! }
//! // 1 − e^(−16·2π·10/1000) = 0.6340 → 634.0 N
//! assert!((y.to_num::<f64>() - 634.0).abs() < 0.1);
//! ```

use super::error::{Problem, SensorError};
use crate::units::Newtons;

/// Fractional bits of α.
const ALPHA_FRAC: u32 = 60;
/// α = 1 exactly: the filter passes its input through.
const ALPHA_ONE: i64 = 1 << ALPHA_FRAC;
/// Smallest α accepted (2⁻²⁰): keeps the rounding dead band off the output.
const ALPHA_MIN: i64 = 1 << (ALPHA_FRAC - 20);
/// Extra fractional bits of the state beyond those of [`Newtons`].
const EXTRA: u32 = 24;

/// Low-pass coefficient for one sample rate (configuration; shared by all channels).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LowPass {
    alpha_q60: i64,
    sample_rate_hz: u32,
    /// α's 32 leading bits, m ∈ [2³¹, 2³²), and the shift s (31 ..= 51) with α ≈ m/2^s.
    mantissa: u32,
    shift: u8,
}

impl LowPass {
    /// Cut-off `cutoff_hz` (Hz, 0 < f_c < f_s/2) at `sample_rate_hz` (Hz, ≥ 1). Uses f64 once,
    /// here; never in the per-sample path.
    ///
    /// # Errors
    /// `filter.sample_rate_hz` zero; `filter.cutoff_hz` not finite, not positive, at or above
    /// half the sample rate, or so low that α < 2⁻²⁰ ([`Problem::CutOffTooLow`]).
    pub fn new(cutoff_hz: f64, sample_rate_hz: u32) -> Result<Self, SensorError> {
        let field = "filter.cutoff_hz";
        if sample_rate_hz == 0 {
            return Err(SensorError::Field {
                field: "filter.sample_rate_hz",
                problem: Problem::NotPositive,
            });
        }
        if !cutoff_hz.is_finite() {
            return Err(SensorError::Field {
                field,
                problem: Problem::NotFinite,
            });
        }
        if cutoff_hz <= 0.0 {
            return Err(SensorError::Field {
                field,
                problem: Problem::NotPositive,
            });
        }
        let fs = f64::from(sample_rate_hz);
        if cutoff_hz >= 0.5 * fs {
            return Err(SensorError::Field {
                field,
                problem: Problem::CutOffTooHigh,
            });
        }
        // 1 − e^(−x) via expm1 keeps full relative precision for small x.
        let alpha = -libm::expm1(-2.0 * core::f64::consts::PI * cutoff_hz / fs);
        let bits = fixed::types::I4F60::checked_from_num(alpha)
            .map(|a| a.to_bits())
            .ok_or(SensorError::Field {
                field,
                problem: Problem::OutOfRange,
            })?;
        Self::from_bits(bits, sample_rate_hz).map_err(|e| match e {
            SensorError::Field {
                problem: Problem::CutOffTooLow,
                ..
            } => SensorError::Field {
                field,
                problem: Problem::CutOffTooLow,
            },
            other => other,
        })
    }

    /// No filtering: the output is the input (α = 1).
    ///
    /// # Errors
    /// `filter.sample_rate_hz` zero.
    pub const fn pass_through(sample_rate_hz: u32) -> Result<Self, SensorError> {
        Self::from_bits(ALPHA_ONE, sample_rate_hz)
    }

    /// From a coefficient already computed (Q4.60 bits of α, 2⁻²⁰ ≤ α ≤ 1), e.g. emitted by a
    /// build script; `const`, so a firmware can keep the configuration in flash.
    ///
    /// # Errors
    /// `filter.sample_rate_hz` zero; `filter.coefficient` above 1 ([`Problem::OutOfRange`]) or
    /// below 2⁻²⁰ ([`Problem::CutOffTooLow`]).
    pub const fn from_bits(alpha_q60: i64, sample_rate_hz: u32) -> Result<Self, SensorError> {
        if sample_rate_hz == 0 {
            return Err(SensorError::Field {
                field: "filter.sample_rate_hz",
                problem: Problem::NotPositive,
            });
        }
        if alpha_q60 > ALPHA_ONE {
            return Err(SensorError::Field {
                field: "filter.coefficient",
                problem: Problem::OutOfRange,
            });
        }
        if alpha_q60 < ALPHA_MIN {
            return Err(SensorError::Field {
                field: "filter.coefficient",
                problem: Problem::CutOffTooLow,
            });
        }
        // 2⁴⁰ ≤ α ≤ 2⁶⁰ (checked above): 41 ..= 61 significant bits, the top 32 kept.
        let drop = 32 - alpha_q60.leading_zeros();
        // < 2³² after the shift: the cast is exact.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let mantissa = (alpha_q60 >> drop) as u32;
        #[allow(clippy::cast_possible_truncation)]
        let shift = (ALPHA_FRAC - drop) as u8;
        Ok(Self {
            alpha_q60,
            sample_rate_hz,
            mantissa,
            shift,
        })
    }

    /// α in Q4.60 (2⁶⁰ = 1).
    pub const fn coefficient_bits(&self) -> i64 {
        self.alpha_q60
    }

    /// The sample rate the coefficient was computed for, Hz.
    pub const fn sample_rate_hz(&self) -> u32 {
        self.sample_rate_hz
    }
}

/// State of one channel's low-pass (mutated every sample, cannot fail).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct LowPassState {
    /// Newtons in Q32 (Q8 of [`Newtons`] plus 24 extra fractional bits).
    acc: i64,
    primed: bool,
}

impl LowPassState {
    /// Not yet primed: the first [`update`](Self::update) sets the output to its input.
    pub const fn new() -> Self {
        Self {
            acc: 0,
            primed: false,
        }
    }

    /// Set the output to `value` (no start-up transient from zero).
    pub fn reset(&mut self, value: Newtons) {
        self.acc = i64::from(value.to_bits()) << EXTRA;
        self.primed = true;
    }

    /// Whether the filter holds a value.
    pub const fn is_primed(&self) -> bool {
        self.primed
    }

    /// The current output, `None` before the first sample.
    pub fn output(&self) -> Option<Newtons> {
        self.primed.then(|| Newtons::from_bits(round_out(self.acc)))
    }

    /// Filter one sample (N) and return the output (N). The first sample after
    /// [`new`](Self::new) primes the state with the input. O(1), integers only, cannot panic.
    pub fn update(&mut self, cfg: &LowPass, x: Newtons) -> Newtons {
        if !self.primed {
            self.reset(x);
        } else {
            // The state only ever moves from a past input towards the next one (|round(α·e)|
            // ≤ |e| for 0 < α ≤ 1), so it stays within the range of past inputs, |acc| < 2⁵⁵:
            // |e| < 2⁵⁶, the step fits i64 and the sums cannot overflow (`wrapping_`: no
            // overflow to handle, no panic path).
            let e = (i64::from(x.to_bits()) << EXTRA).wrapping_sub(self.acc);
            let magnitude = scale_rounded(e.unsigned_abs(), cfg.mantissa, cfg.shift);
            #[allow(clippy::cast_possible_wrap)] // ≤ |e| < 2⁵⁶, shown above
            let step = magnitude as i64;
            let step = if e < 0 { step.wrapping_neg() } else { step };
            self.acc = self.acc.wrapping_add(step);
        }
        Newtons::from_bits(round_out(self.acc))
    }
}

/// round(n·m / 2^s), halves up, for n < 2⁵⁷, m < 2³² and 31 ≤ s ≤ 51: n·m = big·2³² + low
/// from two 32 × 32 → 64-bit products (big < 2⁵⁷), then the rounding shift in 64 bits. For
/// s > 32 the low word cannot carry the quotient past an integer (it adds less than 2^(32−s)).
fn scale_rounded(n: u64, m: u32, s: u8) -> u64 {
    let m = u64::from(m);
    let lo = (n & 0xFFFF_FFFF) * m;
    let big = (n >> 32) * m + (lo >> 32);
    let low = lo & 0xFFFF_FFFF;
    match s {
        ..=31 => 2 * big + ((low + (1 << 30)) >> 31),
        32 => big + ((low + (1 << 31)) >> 32),
        _ => {
            let r = u32::from(s) - 32;
            (big + (1 << (r - 1))) >> r
        }
    }
}

/// Q32 state → Q8 newtons, round half up. The state stays within the range of past inputs,
/// −2³¹·2²⁴ ≤ acc ≤ (2³¹ − 1)·2²⁴, so the sum cannot overflow and the result is within i32:
/// at most (2⁵⁵ − 2²⁴ + 2²³) >> 24 = 2³¹ − 1.
#[allow(clippy::cast_possible_truncation)] // within i32, shown above
fn round_out(acc: i64) -> i32 {
    (acc.wrapping_add(1 << (EXTRA - 1)) >> EXTRA) as i32
}

// Part of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for LowPassState {
    const LEN: usize = 8 + 1;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.i64(self.acc);
        w.bool(self.primed);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        let acc = r.i64()?;
        // Within the range of past inputs (see `update`), which `round_out` relies on.
        let range = i64::from(i32::MIN) << EXTRA..=i64::from(i32::MAX) << EXTRA;
        r.check(range.contains(&acc), "low_pass.acc")?;
        let primed = r.bool("low_pass.primed")?;
        Some(Self { acc, primed })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp)]
mod tests {
    use super::*;

    proptest::proptest! {
        // Reference: the u128 product and rounding shift of Rust's `core`.
        #[test]
        fn scale_rounded_matches_the_wide_product(n in 0u64..(1 << 57), m in (1u32 << 31).., s in 31u8..=51) {
            let want = (u128::from(n) * u128::from(m) + (1u128 << (s - 1))) >> s;
            proptest::prop_assert_eq!(u128::from(scale_rounded(n, m, s)), want);
        }

        // The leading bits: m/2^s ≤ α < m/2^s·(1 + 2⁻³¹), m ∈ [2³¹, 2³²) [calc].
        #[test]
        fn leading_bits_of_alpha(alpha in ALPHA_MIN..=ALPHA_ONE) {
            let lp = LowPass::from_bits(alpha, 1000).unwrap();
            proptest::prop_assert!(lp.mantissa >= 1 << 31);
            let kept = i128::from(lp.mantissa) << (ALPHA_FRAC - u32::from(lp.shift));
            proptest::prop_assert!(kept <= i128::from(alpha));
            proptest::prop_assert!((i128::from(alpha) - kept) * (1 << 31) < kept);
        }
    }

    #[test]
    fn constant_input_is_exact_from_any_start() {
        // Reference: the DC gain of a0/(1 − b1·z⁻¹) with a0 + b1 = 1 is exactly 1
        // (Smith, DSP Guide ch. 19 [mem]); here checked bit for bit.
        for (fc, x) in [(0.2, 12_345.678), (10.0, -0.004), (400.0, 199_999.996)] {
            let lp = LowPass::new(fc, 1000).unwrap();
            let mut s = LowPassState::new();
            s.reset(Newtons::from_num(-150_000));
            let target = Newtons::from_num(x);
            let mut settled_at = None;
            for i in 0..1_000_000u32 {
                let y = s.update(&lp, target);
                match settled_at {
                    None if y == target => settled_at = Some(i),
                    Some(_) => assert_eq!(y, target, "left the input at sample {i}"),
                    None => {}
                }
            }
            assert!(settled_at.is_some(), "never reached {x} at fc = {fc}");
        }
    }

    #[test]
    fn pass_through_is_identity() {
        let lp = LowPass::pass_through(1000).unwrap();
        let mut s = LowPassState::new();
        for bits in [0, 1, -1, i32::MAX, i32::MIN, 123_456] {
            assert_eq!(s.update(&lp, Newtons::from_bits(bits)).to_bits(), bits);
        }
    }

    #[test]
    fn rejects_bad_cut_offs() {
        assert!(LowPass::new(f64::NAN, 1000).is_err());
        assert!(LowPass::new(0.0, 1000).is_err());
        assert!(LowPass::new(500.0, 1000).is_err());
        assert!(LowPass::new(1.0, 0).is_err());
        // α ≈ 2π·1e-5/1000 = 6.3e-8 < 2⁻²⁰ = 9.5e-7
        assert_eq!(
            LowPass::new(1e-5, 1000),
            Err(SensorError::Field {
                field: "filter.cutoff_hz",
                problem: Problem::CutOffTooLow
            })
        );
        assert!(LowPass::from_bits(ALPHA_ONE + 1, 1000).is_err());
    }

    #[test]
    fn full_scale_inputs_converge_exactly_without_overflow() {
        // The widest possible swing, rail to rail of the Q format, in both directions.
        let lp = LowPass::new(100.0, 1000).unwrap();
        let mut s = LowPassState::new();
        s.reset(Newtons::from_bits(i32::MIN));
        for target in [i32::MAX, i32::MIN, i32::MAX] {
            let mut y = 0;
            for _ in 0..10_000 {
                y = s.update(&lp, Newtons::from_bits(target)).to_bits();
            }
            assert_eq!(y, target);
        }
    }
}
