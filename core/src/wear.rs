//! Dissipated energy, bedding and lining wear.
//!
//! ## Model
//!
//! ```text
//! E    = Σ |P|·dt                     friction work dissipated in the contact, J
//! db   = (1 − b)·dE / E₀              bedding: b = 1 − exp(−E/E₀) for a new lining (b = 0)
//! Δh   = k·E / A                      thickness loss: k the specific wear rate (m³/J),
//!                                     A the lining area that shares the work
//! ```
//!
//! Bedding `b` goes from 0 (new lining, contact close to uniform pressure) to 1 (bedded, close
//! to uniform wear, p·r = const); the estimator uses it to move the effective radius between the
//! two models. The energy constant E₀ is the work after which 63 % of the change has happened.
//! Lining wear is quoted per unit friction work in 10⁻⁷ cm³/(N·m) (= 10⁻¹³ m³/J)
//! \[pub: JIS D 4411, GB 5763 use this unit\]; [`WEAR_RATE_UNIT`] converts. The rate is
//! taken as constant here: real linings wear several times faster at 400 °C than at 100 °C
//! \[pub: Tribology Handbook\], so fit `k` at the duty the brake sees.
//!
//! ## Resolution
//!
//! The state keeps more bits than its outputs so nothing is lost over the life of a lining:
//!
//! | quantity | state | output |
//! |---|---|---|
//! | energy | u128 Q64 J (2⁻⁶⁴ J, up to 2.1·10¹⁴ J) | [`Joules`] (I48F16, 15 µJ) |
//! | bedding | `1 − b` as u64 Q62 (2.2·10⁻¹⁹) | [`Ratio`] (I2F30) |
//! | thickness loss | u128 Q96 m | [`Metres`] (I8F24, 60 nm) |
//!
//! dt is held as Q63 s, so a per-sample increment `|P|·dt` is exact to 2⁻⁶⁴ J: a 3 mJ increment
//! still counts in full at 10¹⁰ J and beyond (tested). Each bedding step multiplies `1 − b` by
//! the fourth-order Taylor polynomial of `exp(−dE/E₀)` rounded down, so `b` is monotone, never
//! above 1, and within `Σ (dE/E₀)⁵/120 + n·2⁻⁶²` of `1 − exp(−E/E₀)`. Measured against the
//! f64 model `clampwise_tests::f64_model::wear` (in the tests crate) over powers 0…10 MW,
//! dt 0.1…10 ms and starting energies 0…10¹⁰ J (test `wear_envelope` in clampwise-tests): bedding within
//! **1 LSB of [`Ratio`]** (9.3·10⁻¹⁰; the tests allow 2), energy within **1 LSB of [`Joules`]**
//! (15 µJ; the output truncates), thickness loss within **1 LSB of [`Metres`]** (60 nm).
//!
//! ## Cost
//!
//! A sample with energy takes seven exact widening products (energy, `dE/E₀`, three powers,
//! the bedding step, the loss) and two divisions by 3 (`crate::wide`: a multiply by the inverse
//! of 3 on 32-bit cores); a sample without energy only reads the state. Measured (callgrind,
//! x86-64): 110–130 instructions for an update with energy. The read-outs (bedding, loss,
//! worn out, against a limit fixed at configuration) are a few instructions each.

use core::fmt;

use crate::units::{Joules, Metres, Ratio, Seconds, Watts};
use crate::wide;

/// 1 · 10⁻⁷ cm³/(N·m), the trade's unit of specific wear rate, in m³/J.
pub const WEAR_RATE_UNIT: f64 = 1e-13;

const ONE_Q62: u128 = 1 << 62;
const ONE_Q62_U64: u64 = 1 << 62;

/// `a · b` in Q62 for `a, b ≤ 1` (2⁶²): the product, truncated, is at most 1 again.
fn mul_q62(a: u64, b: u64) -> u64 {
    u64::try_from(wide::mul_u64(a, b) >> 62).unwrap_or(u64::MAX)
}
/// `1 − b` after a bedding step of `x = dE/E₀` (both Q62, at most 1): `unbedded · g(x)`, with
/// `g` the fourth-order Taylor polynomial of `exp(−x)`, each power and the product truncated.
fn bedding_step(unbedded: u64, x: u64) -> u64 {
    let x2 = mul_q62(x, x);
    let x3 = mul_q62(x2, x);
    let x4 = mul_q62(x3, x);
    // exp(−x) ≈ 1 − x + x²/2 − x³/6 + x⁴/24, in [3/8, 1] and decreasing for x ∈ [0, 1].
    // Each term is at most 1 in Q62, so the sums stay below 2⁶³. ⌊n/6⌋ = ⌊⌊n/2⌋/3⌋ and
    // ⌊n/24⌋ = ⌊⌊n/8⌋/3⌋ (a division by 3 is a multiply on a 32-bit core).
    let g = (ONE_Q62_U64 + x2 / 2 + wide::div3(x4 >> 3))
        .saturating_sub(x + wide::div3(x3 >> 1))
        .min(ONE_Q62_U64);
    mul_q62(unbedded, g).min(unbedded)
}

/// Energy the state can hold: the top of [`Joules`], in Q64.
pub(crate) const ENERGY_MAX_Q64: u128 = (i64::MAX as u128) << 48;
/// A single sample's energy is capped at 2³² J (4.3 GJ) before the wear product.
const STEP_MAX_Q48: u128 = 1 << 80;

/// Wear parameters in SI units as f64 (host, start-up or build time; never per sample).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct WearParams {
    /// Bedding energy constant E₀ in J, 1 … 10¹³.
    pub bedding_energy: f64,
    /// Specific wear rate in m³/J, ≥ 0 (× [`WEAR_RATE_UNIT`] from 10⁻⁷ cm³/(N·m)).
    pub specific_wear_rate: f64,
    /// Lining area that shares the friction work (all pads or facings), m², > 0.
    pub lining_area: f64,
    /// Thickness of a new lining, m.
    pub initial_thickness: f64,
    /// Thickness at which the lining counts as worn out, m, ≥ 0 and below `initial_thickness`.
    pub minimum_thickness: f64,
}

/// Why a wear configuration was rejected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum WearError {
    /// A value is NaN, infinite, or outside its fixed-point type.
    NotRepresentable {
        /// The field concerned.
        field: &'static str,
    },
    /// `dt` is not in (0, 1] s.
    DtOutOfRange,
    /// `bedding_energy` is not in 1 … 10¹³ J.
    BeddingEnergyOutOfRange,
    /// `specific_wear_rate / lining_area` is negative, or above 10⁻⁵ m/J, or so small (but not
    /// zero) that it cannot be represented.
    WearRateOutOfRange,
    /// `lining_area` is not above zero.
    AreaNotPositive,
    /// `minimum_thickness` is negative or not below `initial_thickness`.
    ThicknessLimits,
}

impl fmt::Display for WearError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NotRepresentable { field } => {
                write!(f, "{field} is not finite or is out of range")
            }
            Self::DtOutOfRange => f.write_str("dt must be above 0 and at most 1 s"),
            Self::BeddingEnergyOutOfRange => {
                f.write_str("bedding_energy must be within 1 J ..= 1e13 J")
            }
            Self::WearRateOutOfRange => f.write_str(
                "specific_wear_rate / lining_area must be 0 or within 1e-30 ..= 1e-5 m/J",
            ),
            Self::AreaNotPositive => f.write_str("lining_area must be above zero"),
            Self::ThicknessLimits => {
                f.write_str("minimum_thickness must be at least 0 and below initial_thickness")
            }
        }
    }
}

impl core::error::Error for WearError {}

/// Largest E₀ accepted, 10¹³ J, in Q48 J.
const E0_MAX_Q48: u128 = 10_000_000_000_000 << 48;
/// `bedding_recip · e0_q48` is 2¹²⁷ to within `e0_q48 + bedding_recip` (the rounding of each
/// factor to an integer) plus this: a relative 2⁻⁵⁰, as the f64 quotient behind the reciprocal
/// carries 53 bits.
const RECIP_SLACK: u128 = 1 << 77;
/// Largest thickness-rate shift: a rate of 10⁻³⁰ m/J has its binary exponent at −99.
const WEAR_SHIFT_MAX: u32 = 83;

/// A [`WearConfig`] as its integer coefficients, for configurations computed once (on the host
/// or in a build script) and kept in flash as `const` items.
///
/// [`WearConfig::to_raw`] gives them; [`WearConfig::from_bits`] checks them and builds the
/// configuration in a `const` context.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct WearRaw {
    /// Sample period in Q63 s, (0, 2⁶³] (at most 1 s).
    pub dt_q63: u64,
    /// Bedding energy E₀ in Q48 J, 1 J ..= 10¹³ J.
    pub e0_q48: u128,
    /// round(2⁷⁹ / E₀) with E₀ in J, so that `e0_q48 · bedding_recip` ≈ 2¹²⁷.
    pub bedding_recip: u128,
    /// Thickness rate k/A = `wear_mant · 2^−(wear_shift + 48)` m/J: the mantissa, 0 (no wear)
    /// or 2³¹ ..= 2³².
    pub wear_mant: u64,
    /// The thickness rate's shift, 0 ..= 83 (0 when `wear_mant` is 0).
    pub wear_shift: u32,
    /// Thickness of a new lining, m.
    pub initial_thickness: Metres,
    /// Worn-out limit, m, ≥ 0 and below `initial_thickness`.
    pub minimum_thickness: Metres,
}

/// Validated wear configuration. Immutable.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct WearConfig {
    /// dt in Q63 s.
    dt_q63: u64,
    /// E₀ in Q48 J: a sample's energy is capped here before the bedding step (x ≤ 1).
    e0_q48: u128,
    /// round(2⁷⁹ / E₀): x(Q62) = dE(Q48) · recip >> 65.
    bedding_recip: u128,
    /// Thickness rate k/A = mant · 2^−(shift + 48) m/J: dL(Q96) = dE(Q48) · mant >> shift.
    wear_mant: u64,
    wear_shift: u32,
    initial_thickness: Metres,
    minimum_thickness: Metres,
    /// `initial_thickness − minimum_thickness` (> 0): the loss at which the lining is worn out.
    worn_loss: Metres,
}

fn finite(v: f64, field: &'static str) -> Result<f64, WearError> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(WearError::NotRepresentable { field })
    }
}

fn metres(v: f64, field: &'static str) -> Result<Metres, WearError> {
    Metres::checked_from_num(finite(v, field)?).ok_or(WearError::NotRepresentable { field })
}

impl WearConfig {
    /// Validate parameters and fix the integer coefficients.
    ///
    /// # Errors
    /// A [`WearError`] naming the offending field.
    ///
    /// ```
    /// use clampwise_core::wear::{WearConfig, WearParams, WEAR_RATE_UNIT};
    /// // Demo holding-brake pads (invented): 0.4·10⁻⁷ cm³/(N·m), 2 pads of 40 cm², 10 mm thick.
    /// let cfg = WearConfig::new(&WearParams {
    ///     bedding_energy: 5e6, specific_wear_rate: 0.4 * WEAR_RATE_UNIT,
    ///     lining_area: 2.0 * 40e-4, initial_thickness: 0.010, minimum_thickness: 0.002,
    /// }, 1e-3)?;
    /// assert!((cfg.minimum_thickness().to_num::<f64>() - 0.002).abs() < 1e-7);
    /// # Ok::<(), clampwise_core::wear::WearError>(())
    /// ```
    pub fn new(p: &WearParams, dt_s: f64) -> Result<Self, WearError> {
        let dt = finite(dt_s, "dt")?;
        if !(dt > 0.0 && dt <= 1.0) {
            return Err(WearError::DtOutOfRange);
        }
        let e0 = finite(p.bedding_energy, "bedding_energy")?;
        if !(1.0..=1e13).contains(&e0) {
            return Err(WearError::BeddingEnergyOutOfRange);
        }
        let area = finite(p.lining_area, "lining_area")?;
        if area <= 0.0 {
            return Err(WearError::AreaNotPositive);
        }
        let rate = finite(p.specific_wear_rate, "specific_wear_rate")? / area;
        let (wear_mant, wear_shift) = wear_coefficients(rate)?;
        let initial_thickness = metres(p.initial_thickness, "initial_thickness")?;
        let minimum_thickness = metres(p.minimum_thickness, "minimum_thickness")?;
        if minimum_thickness < Metres::ZERO || minimum_thickness >= initial_thickness {
            return Err(WearError::ThicknessLimits);
        }
        // The casts take values already checked to lie well inside the target types.
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let (dt_q63, e0_q48, bedding_recip) = (
            libm::round(dt * 9_223_372_036_854_775_808.0) as u64,
            libm::round(e0 * 281_474_976_710_656.0) as u128,
            libm::round(libm::ldexp(1.0, 79) / e0) as u128,
        );
        Self::from_bits(WearRaw {
            dt_q63,
            e0_q48,
            bedding_recip,
            wear_mant,
            wear_shift,
            initial_thickness,
            minimum_thickness,
        })
    }

    /// Check integer coefficients (from [`WearConfig::to_raw`], usually emitted by a build
    /// script) and build the configuration; `const`, so a firmware keeps it in flash and a bad
    /// value fails the build.
    ///
    /// # Errors
    /// [`WearError::DtOutOfRange`], [`WearError::BeddingEnergyOutOfRange`] (E₀ outside
    /// 1 J ..= 10¹³ J, or a reciprocal that does not belong to it),
    /// [`WearError::WearRateOutOfRange`] (mantissa or shift outside their ranges),
    /// [`WearError::ThicknessLimits`].
    ///
    /// ```
    /// use clampwise_core::wear::{WearConfig, WearParams};
    /// let built = WearConfig::new(&WearParams { bedding_energy: 5e6,
    ///     specific_wear_rate: 4e-14, lining_area: 8e-3, initial_thickness: 0.01,
    ///     minimum_thickness: 0.002 }, 1e-3)?;
    /// let raw = built.to_raw();
    /// assert_eq!(WearConfig::from_bits(raw), Ok(built));
    /// let mut bad = raw;
    /// bad.bedding_recip *= 2; // belongs to E₀/2, not E₀
    /// assert!(WearConfig::from_bits(bad).is_err());
    /// # Ok::<(), clampwise_core::wear::WearError>(())
    /// ```
    pub const fn from_bits(raw: WearRaw) -> Result<Self, WearError> {
        if raw.dt_q63 == 0 || raw.dt_q63 > 1 << 63 {
            return Err(WearError::DtOutOfRange);
        }
        if raw.e0_q48 < 1 << 48 || raw.e0_q48 > E0_MAX_Q48 {
            return Err(WearError::BeddingEnergyOutOfRange);
        }
        let recip_ok = match raw.e0_q48.checked_mul(raw.bedding_recip) {
            Some(p) => p.abs_diff(1 << 127) <= RECIP_SLACK + raw.e0_q48 + raw.bedding_recip,
            None => false,
        };
        if !recip_ok {
            return Err(WearError::BeddingEnergyOutOfRange);
        }
        let rate_ok = if raw.wear_mant == 0 {
            raw.wear_shift == 0
        } else {
            raw.wear_mant >= 1 << 31 && raw.wear_mant <= 1 << 32 && raw.wear_shift <= WEAR_SHIFT_MAX
        };
        if !rate_ok {
            return Err(WearError::WearRateOutOfRange);
        }
        let (min, initial) = (
            raw.minimum_thickness.to_bits(),
            raw.initial_thickness.to_bits(),
        );
        if min < 0 || min >= initial {
            return Err(WearError::ThicknessLimits);
        }
        Ok(Self {
            dt_q63: raw.dt_q63,
            e0_q48: raw.e0_q48,
            bedding_recip: raw.bedding_recip,
            wear_mant: raw.wear_mant,
            wear_shift: raw.wear_shift,
            initial_thickness: raw.initial_thickness,
            minimum_thickness: raw.minimum_thickness,
            // 0 ≤ min < initial: the difference is positive and cannot overflow.
            worn_loss: Metres::from_bits(initial.wrapping_sub(min)),
        })
    }

    /// The integer coefficients, for [`WearConfig::from_bits`] (e.g. to emit them as Rust
    /// source); `from_bits(cfg.to_raw())` gives `cfg` back, equal in every bit.
    pub const fn to_raw(&self) -> WearRaw {
        WearRaw {
            dt_q63: self.dt_q63,
            e0_q48: self.e0_q48,
            bedding_recip: self.bedding_recip,
            wear_mant: self.wear_mant,
            wear_shift: self.wear_shift,
            initial_thickness: self.initial_thickness,
            minimum_thickness: self.minimum_thickness,
        }
    }

    /// Thickness of a new lining (m).
    /// Sample period the configuration was built for, s (rounded to Q32).
    pub const fn dt(&self) -> Seconds {
        // dt ≤ 1 s is below 2⁶³ in Q63, so after the shift it is below 2³² and the sign bit is clear.
        Seconds::from_bits((self.dt_q63 >> 31).cast_signed())
    }

    /// Initial lining thickness, m.
    pub const fn initial_thickness(&self) -> Metres {
        self.initial_thickness
    }

    /// Worn-out limit (m).
    pub const fn minimum_thickness(&self) -> Metres {
        self.minimum_thickness
    }

    /// Thickness loss for an energy in Q48 J: k·E/A, truncated to Q96 m.
    pub(crate) fn loss_q96(&self, energy_q48: u128) -> u128 {
        // The state's energy is below 2⁹⁶ in Q48; the cap only states it.
        self.step_loss_q96(energy_q48.min(ENERGY_MAX_Q64 >> 16))
    }

    /// [`WearConfig::loss_q96`] for an energy below 2⁹⁶ (Q48 J).
    fn step_loss_q96(&self, energy_q48: u128) -> u128 {
        // The energy is below 2⁹⁶ and the mantissa at most 2³², so the product is below 2¹²⁸:
        // a widening multiply of the 96-bit energy by the 33-bit mantissa, exact. The shift is
        // at most 83 (`from_bits`), so it never wraps.
        wide::mul_u96(energy_q48, u128::from(self.wear_mant)).wrapping_shr(self.wear_shift)
    }
}

/// Split a thickness rate (m/J) into a 32-bit mantissa and a shift for Q48 J → Q96 m.
fn wear_coefficients(rate: f64) -> Result<(u64, u32), WearError> {
    if rate == 0.0 {
        return Ok((0, 0));
    }
    if !(1e-30..=1e-5).contains(&rate) {
        return Err(WearError::WearRateOutOfRange);
    }
    let (f, ex) = libm::frexp(rate); // rate = f·2^ex, f in [0.5, 1)
    // ex in about −99 ..= −16 by the range check: r_shift = 32 − ex in 48 ..= 131.
    let r_shift = 32 - ex;
    let shift = u32::try_from(r_shift - 48).map_err(|_| WearError::WearRateOutOfRange)?;
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let mant = libm::round(f * 4_294_967_296.0) as u64;
    Ok((mant, shift))
}

/// What [`WearState::update`] reports for one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WearSample {
    /// Energy dissipated over the life of the lining (J), saturating at [`Joules::MAX`].
    pub energy: Joules,
    /// Bedding, 0 (new) … 1 (bedded), monotone.
    pub bedding: Ratio,
    /// Lining thickness lost (m).
    pub thickness_loss: Metres,
    /// Remaining lining thickness (m), not below 0.
    pub remaining_thickness: Metres,
    /// Remaining thickness at or below the minimum.
    pub worn_out: bool,
}

/// Wear and bedding state of one lining set. Starts new: no energy, not bedded.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct WearState {
    energy_q64: u128,
    unbedded_q62: u64,
    loss_q96: u128,
}

impl Default for WearState {
    fn default() -> Self {
        Self::new()
    }
}

impl WearState {
    /// A new lining: no energy, bedding 0, no wear.
    ///
    /// ```
    /// use clampwise_core::wear::WearState;
    /// use clampwise_core::units::Ratio;
    /// assert_eq!(WearState::new().bedding(), Ratio::ZERO);
    /// ```
    pub const fn new() -> Self {
        Self {
            energy_q64: 0,
            unbedded_q62: 1 << 62,
            loss_q96: 0,
        }
    }

    /// A lining with a known history: `energy` dissipated since it was new, bedding and wear
    /// as the model gives for that energy. Start-up only (uses floating point).
    ///
    /// ```
    /// use clampwise_core::wear::{WearConfig, WearParams, WearState};
    /// use clampwise_core::units::Joules;
    /// # let cfg = WearConfig::new(&WearParams { bedding_energy: 5e6,
    /// #     specific_wear_rate: 4e-14, lining_area: 8e-3, initial_thickness: 0.01, minimum_thickness: 0.002 }, 1e-3)?;
    /// let s = WearState::with_history(&cfg, Joules::from_num(5e6));
    /// assert!((s.bedding().to_num::<f64>() - (1.0 - (-1.0f64).exp())).abs() < 1e-8);
    /// # Ok::<(), clampwise_core::wear::WearError>(())
    /// ```
    pub fn with_history(cfg: &WearConfig, energy: Joules) -> Self {
        let e = energy.max(Joules::ZERO);
        #[allow(clippy::cast_sign_loss)] // not negative after the max above
        let energy_q64 = (e.to_bits() as u128) << 48;
        let x = e.to_num::<f64>() / (cfg.e0_q48 as f64 / 281_474_976_710_656.0);
        #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
        let unbedded_q62 = libm::round(libm::exp(-x) * 4_611_686_018_427_387_904.0) as u64;
        Self {
            energy_q64,
            unbedded_q62: unbedded_q62.min(1 << 62),
            loss_q96: cfg.loss_q96(energy_q64 >> 16),
        }
    }

    /// Restore from raw state words (as saved by [`crate::state_record`]); `None` if out of range.
    pub(crate) fn from_bits(energy_q64: u128, unbedded_q62: u64, loss_q96: u128) -> Option<Self> {
        (energy_q64 <= ENERGY_MAX_Q64 && u128::from(unbedded_q62) <= ONE_Q62).then_some(Self {
            energy_q64,
            unbedded_q62,
            loss_q96,
        })
    }

    pub(crate) const fn raw(&self) -> (u128, u64, u128) {
        (self.energy_q64, self.unbedded_q62, self.loss_q96)
    }

    /// Energy dissipated (J).
    #[inline]
    pub fn energy(&self) -> Joules {
        // ≤ ENERGY_MAX_Q64, so the shifted value fits i64.
        Joules::from_bits(i64::try_from(self.energy_q64 >> 48).unwrap_or(i64::MAX))
    }

    /// Bedding 0 … 1.
    #[inline]
    pub fn bedding(&self) -> Ratio {
        // At most 2⁶² >> 32 = 2³⁰: the conversion cannot fail.
        let b = ONE_Q62_U64.saturating_sub(self.unbedded_q62) >> 32;
        Ratio::from_bits(i32::try_from(b).unwrap_or(1 << 30))
    }

    /// Thickness lost (m).
    #[inline]
    pub fn thickness_loss(&self) -> Metres {
        Metres::from_bits(i32::try_from(self.loss_q96 >> 72).unwrap_or(i32::MAX))
    }

    /// One sample: accumulate `|power|·dt`, advance bedding and wear. Integer-only, O(1).
    ///
    /// ```
    /// use clampwise_core::wear::{WearConfig, WearParams, WearState};
    /// use clampwise_core::units::Watts;
    /// let cfg = WearConfig::new(&WearParams { bedding_energy: 5e6,
    ///     specific_wear_rate: 4e-14, lining_area: 8e-3, initial_thickness: 0.01, minimum_thickness: 0.002 }, 1e-3)?;
    /// let mut s = WearState::new();
    /// let out = s.update(&cfg, Watts::from_num(-50_000)); // sign does not matter
    /// assert_eq!(out.energy.to_num::<f64>(), 50.0);
    /// assert!(out.bedding.to_num::<f64>() > 0.0 && !out.worn_out);
    /// # Ok::<(), clampwise_core::wear::WearError>(())
    /// ```
    pub fn update(&mut self, cfg: &WearConfig, power: Watts) -> WearSample {
        self.advance(cfg, power);
        self.sample(cfg)
    }

    /// [`WearState::update`] without building the sample, for callers that read only part of
    /// it.
    pub(crate) fn advance(&mut self, cfg: &WearConfig, power: Watts) {
        // |P| (Q32) · dt (Q63) ≤ 2¹²⁷: Q95 → Q64.
        let step_q64 = wide::mul_u64(power.to_bits().unsigned_abs(), cfg.dt_q63) >> 31;
        // No energy (holding, released without drag): nothing moves — the energy adds 0, the
        // bedding factor is exactly 1 and the loss adds 0 — so skip the polynomial.
        if step_q64 != 0 {
            // At most 2⁹⁵ >> 16 < 2⁸⁰: a sample's energy is inside the single-sample cap.
            self.accumulate(cfg, step_q64, step_q64 >> 16);
        }
    }

    /// Add an energy directly (J; its magnitude is used), for callers that integrate power
    /// themselves. Integer-only, O(1).
    pub fn add_energy(&mut self, cfg: &WearConfig, energy: Joules) -> WearSample {
        let step_q64 = u128::from(energy.to_bits().unsigned_abs()) << 48;
        self.accumulate(cfg, step_q64, (step_q64 >> 16).min(STEP_MAX_Q48));
        self.sample(cfg)
    }

    /// Add a step of energy `step_q64` (Q64 J, at most 2¹¹¹), whose Q48 value capped at the
    /// single-sample limit is `step_q48` (at most 2⁸⁰).
    fn accumulate(&mut self, cfg: &WearConfig, step_q64: u128, step_q48: u128) {
        // The state holds at most ENERGY_MAX_Q64 < 2¹¹¹ and a step is at most 2¹¹¹: the sum
        // cannot wrap, and the cap keeps the invariant.
        self.energy_q64 = self.energy_q64.wrapping_add(step_q64).min(ENERGY_MAX_Q64);

        // x = dE/E₀ in Q62, capped at 1; ≤ E₀·2⁴⁸ · 2⁷⁹/E₀ ≈ 2¹²⁷ before the shift. From here
        // on every factor is at most 1 in Q62, so the polynomial runs on u64 with 64 × 64-bit
        // products (far less code on a 32-bit core than u128 × u128; the same values).
        // The product is at most e0_q48 · bedding_recip, which `WearConfig::from_bits` holds
        // to 2¹²⁷ within 2⁷⁸: exact in u128, and both factors are below 2⁹⁶ (e0_q48 < 2⁹²,
        // so bedding_recip < 2⁸⁰), which is all `mul_u96` needs.
        let x = u64::try_from(wide::mul_u96(step_q48.min(cfg.e0_q48), cfg.bedding_recip) >> 65)
            .unwrap_or(u64::MAX)
            .min(ONE_Q62_U64);
        self.unbedded_q62 = bedding_step(self.unbedded_q62, x);

        self.loss_q96 = self.loss_q96.saturating_add(cfg.step_loss_q96(step_q48));
    }

    /// The state as a sample, without adding energy (e.g. while no force is known).
    pub fn sample(&self, cfg: &WearConfig) -> WearSample {
        let loss = self.thickness_loss();
        let remaining = Self::remaining(cfg, loss);
        WearSample {
            energy: self.energy(),
            bedding: self.bedding(),
            thickness_loss: loss,
            remaining_thickness: remaining,
            worn_out: loss >= cfg.worn_loss,
        }
    }

    /// Whether the remaining thickness is at or below the minimum (see
    /// [`WearSample::worn_out`]).
    #[inline]
    pub fn worn_out(&self, cfg: &WearConfig) -> bool {
        // The loss is not negative and 0 ≤ minimum < initial, so `max(initial − loss, 0) ≤
        // minimum` (the remaining thickness at or below the limit) is `loss ≥ initial −
        // minimum`.
        self.thickness_loss() >= cfg.worn_loss
    }

    fn remaining(cfg: &WearConfig, loss: Metres) -> Metres {
        cfg.initial_thickness.saturating_sub(loss).max(Metres::ZERO)
    }
}

// Part of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for WearState {
    const LEN: usize = 16 + 8 + 16;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.u128(self.energy_q64);
        w.u64(self.unbedded_q62);
        w.u128(self.loss_q96);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        let energy_q64 = r.u128()?;
        r.check(energy_q64 <= ENERGY_MAX_Q64, "wear.energy")?;
        let unbedded_q62 = r.u64()?;
        r.check(u128::from(unbedded_q62) <= ONE_Q62, "wear.unbedded")?;
        let loss_q96 = r.u128()?;
        Some(Self {
            energy_q64,
            unbedded_q62,
            loss_q96,
        })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::float_cmp, clippy::cast_precision_loss)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// The demo lining, built for a 0.1 ms step ([`DT`]).
    /// The step the demo lining is built for, s.
    pub(crate) const DT: f64 = 1e-4;

    pub(crate) fn demo() -> WearParams {
        // Invented demo values: 0.4·10⁻⁷ cm³/(N·m) over 80 cm² of pads.
        WearParams {
            bedding_energy: 5e6,
            specific_wear_rate: 0.4 * WEAR_RATE_UNIT,
            lining_area: 80e-4,
            initial_thickness: 0.010,
            minimum_thickness: 0.002,
        }
    }

    #[test]
    fn no_overflow_and_full_resolution_at_1e10_j() {
        let cfg = WearConfig::new(&demo(), DT).unwrap();
        let mut s = WearState::with_history(&cfg, Joules::from_num(1e10));
        let start = s.raw().0;
        // 30 W for 0.1 ms = 3 mJ a sample, 10⁵ samples = 300 J exactly (dt held as Q63).
        let n = 100_000u32;
        let mut out = None;
        for _ in 0..n {
            out = Some(s.update(&cfg, Watts::from_num(30)));
        }
        let added = (s.raw().0 - start) as f64 / 2f64.powi(64);
        assert!((added - 300.0).abs() < 1e-9, "{added}");
        let e = out.unwrap().energy.to_num::<f64>();
        assert!((e - (1e10 + 300.0)).abs() <= 2.0 * 2f64.powi(-16), "{e}");
        // Bedding is 1 at 2000 E₀ and stays there.
        assert_eq!(out.unwrap().bedding, Ratio::ONE);
    }

    #[test]
    fn saturates_at_the_top_of_joules() {
        let cfg = WearConfig::new(&demo(), DT).unwrap();
        let mut s = WearState::with_history(&cfg, Joules::MAX);
        let out = s.update(&cfg, Watts::MAX);
        assert_eq!(out.energy, Joules::MAX);
        assert!(out.worn_out);
        assert_eq!(out.remaining_thickness, Metres::ZERO);
    }

    // Thickness loss k·E/A with k in 10⁻⁷ cm³/(N·m) [pub: JIS D 4411 unit]: 1 GJ at
    // 0.4·10⁻¹³ m³/J over 80 cm² → 5.0 mm [calc].
    #[test]
    fn thickness_loss_from_specific_wear_rate() {
        let cfg = WearConfig::new(&demo(), DT).unwrap();
        let s = WearState::with_history(&cfg, Joules::from_num(1e9));
        let loss = s.thickness_loss().to_num::<f64>();
        assert!((loss - 0.005).abs() < 1e-7, "{loss}");
        let mut s = WearState::with_history(&cfg, Joules::from_num(1.6e9 - 2e5));
        assert!(!s.add_energy(&cfg, Joules::ZERO).worn_out);
        // 8 mm lost at 1.6 GJ; ±1 µm = ±2·10⁵ J at 5·10⁻¹² m/J.
        assert!(s.add_energy(&cfg, Joules::from_num(4e5)).worn_out);
    }

    #[test]
    fn rejects_bad_configs() {
        let b = demo();
        let e = |p: WearParams| WearConfig::new(&p, DT).unwrap_err();
        assert_eq!(
            WearConfig::new(&b, 0.0).unwrap_err(),
            WearError::DtOutOfRange
        );
        assert_eq!(
            e(WearParams {
                bedding_energy: 0.5,
                ..b
            }),
            WearError::BeddingEnergyOutOfRange
        );
        assert_eq!(
            e(WearParams {
                specific_wear_rate: -1e-13,
                ..b
            }),
            WearError::WearRateOutOfRange
        );
        assert_eq!(
            e(WearParams {
                lining_area: 0.0,
                ..b
            }),
            WearError::AreaNotPositive
        );
        assert_eq!(
            e(WearParams {
                minimum_thickness: 0.02,
                ..b
            }),
            WearError::ThicknessLimits
        );
        assert_eq!(
            e(WearParams {
                initial_thickness: f64::INFINITY,
                ..b
            }),
            WearError::NotRepresentable {
                field: "initial_thickness"
            }
        );
        assert!(
            WearConfig::new(
                &WearParams {
                    specific_wear_rate: 0.0,
                    ..b
                },
                DT
            )
            .is_ok()
        );
    }

    #[test]
    fn raw_round_trip_is_exact() {
        let b = demo();
        for (p, dt) in [
            (b, DT),
            (
                WearParams {
                    specific_wear_rate: 0.0,
                    ..b
                },
                DT,
            ),
            (
                WearParams {
                    bedding_energy: 1.0,
                    specific_wear_rate: 1e-5 * b.lining_area,
                    ..b
                },
                1.0,
            ),
            (
                WearParams {
                    bedding_energy: 1e13,
                    specific_wear_rate: 1e-30 * b.lining_area,
                    ..b
                },
                DT,
            ),
        ] {
            let cfg = WearConfig::new(&p, dt).unwrap();
            let raw = cfg.to_raw();
            assert_eq!(WearConfig::from_bits(raw), Ok(cfg), "{p:?}");
        }
    }

    #[test]
    fn raw_in_const_context() {
        const RAW: WearRaw = WearRaw {
            dt_q63: 1 << 53,        // 2⁻¹⁰ s
            e0_q48: 1 << 68,        // 2²⁰ J
            bedding_recip: 1 << 59, // 2⁷⁹ / 2²⁰
            wear_mant: 1 << 31,     // 0.5 · 2^−(40 + 48) m/J
            wear_shift: 40,
            initial_thickness: Metres::lit("0.01"),
            minimum_thickness: Metres::lit("0.002"),
        };
        const CFG: WearConfig = match WearConfig::from_bits(RAW) {
            Ok(c) => c,
            Err(_) => panic!("bad wear config"),
        };
        assert_eq!(CFG.to_raw(), RAW);
        assert_eq!(CFG.dt(), Seconds::from_num(1.0 / 1024.0));
    }

    #[test]
    fn raw_rejects_what_new_would_not_build() {
        let raw = WearConfig::new(&demo(), DT).unwrap().to_raw();
        let e = |r: WearRaw| WearConfig::from_bits(r).unwrap_err();
        assert_eq!(e(WearRaw { dt_q63: 0, ..raw }), WearError::DtOutOfRange);
        assert_eq!(
            e(WearRaw {
                dt_q63: (1 << 63) + 1,
                ..raw
            }),
            WearError::DtOutOfRange
        );
        assert!(
            WearConfig::from_bits(WearRaw {
                dt_q63: 1 << 63,
                ..raw
            })
            .is_ok(),
            "1 s"
        );
        for e0_q48 in [(1 << 48) - 1, E0_MAX_Q48 + 1] {
            assert_eq!(
                e(WearRaw { e0_q48, ..raw }),
                WearError::BeddingEnergyOutOfRange
            );
        }
        for bedding_recip in [0, raw.bedding_recip + raw.bedding_recip / 1000, u128::MAX] {
            assert_eq!(
                e(WearRaw {
                    bedding_recip,
                    ..raw
                }),
                WearError::BeddingEnergyOutOfRange,
                "{bedding_recip}"
            );
        }
        for (wear_mant, wear_shift) in [
            (0, 1),
            ((1 << 31) - 1, 10),
            ((1 << 32) + 1, 10),
            (1 << 31, 84),
        ] {
            assert_eq!(
                e(WearRaw {
                    wear_mant,
                    wear_shift,
                    ..raw
                }),
                WearError::WearRateOutOfRange,
                "{wear_mant} >> {wear_shift}"
            );
        }
        assert_eq!(
            e(WearRaw {
                minimum_thickness: raw.initial_thickness,
                ..raw
            }),
            WearError::ThicknessLimits
        );
        assert_eq!(
            e(WearRaw {
                minimum_thickness: Metres::from_bits(-1),
                ..raw
            }),
            WearError::ThicknessLimits
        );
    }

    proptest! {
        // The u64 polynomial (with its divisions by 3) gives the very bits of the plain u128
        // polynomial.
        #[test]
        fn bedding_step_same_bits_as_u128(x in 0u64..=(1 << 62), unbedded in 0u64..=(1 << 62)) {
            let wide = {
                let x = u128::from(x);
                let x2 = (x * x) >> 62;
                let x3 = (x2 * x) >> 62;
                let x4 = (x3 * x) >> 62;
                let g = (ONE_Q62 + x2 / 2 + x4 / 24).saturating_sub(x + x3 / 6).min(ONE_Q62);
                u64::try_from((u128::from(unbedded) * g) >> 62).unwrap_or(0).min(unbedded)
            };
            prop_assert_eq!(bedding_step(unbedded, x), wide);
        }

        // The read-outs (bedding in u64, worn out against the limit fixed at configuration)
        // give what the direct forms give, for every state and thickness limit.
        #[test]
        fn read_outs_same_as_direct_forms(
            unbedded in 0u64..=(1 << 62), loss in 0u128..(1 << 105), min in 0i32..i32::MAX,
            span in 1i32..i32::MAX,
        ) {
            let cfg = WearConfig::from_bits(WearRaw {
                minimum_thickness: Metres::from_bits(min),
                initial_thickness: Metres::from_bits(min.saturating_add(span).max(min + 1)),
                ..WearConfig::new(&demo(), DT).unwrap().to_raw()
            }).unwrap();
            let s = WearState::from_bits(0, unbedded, loss).unwrap();
            let b = (ONE_Q62.saturating_sub(u128::from(unbedded))) >> 32;
            prop_assert_eq!(s.bedding(), Ratio::from_bits(i32::try_from(b).unwrap()));
            let remaining = cfg.initial_thickness.saturating_sub(s.thickness_loss()).max(Metres::ZERO);
            let worn = remaining <= cfg.minimum_thickness;
            prop_assert_eq!(s.worn_out(&cfg), worn);
            prop_assert_eq!(s.sample(&cfg).worn_out, worn);
        }

        // Bedding never decreases, never exceeds 1, and follows 1 − exp(−E/E₀) (the solution
        // of db = (1 − b)·dE/E₀) for any split of the energy into samples.
        #[test]
        fn bedding_monotone_and_bounded(powers in prop::collection::vec(0.0f64..2e7, 1..300)) {
            let p = WearParams { bedding_energy: 1e6, ..demo() };
            let cfg = WearConfig::new(&p, 1e-2).unwrap();
            let mut s = WearState::new();
            let mut last = Ratio::ZERO;
            let mut taylor = 0.0; // Σ (dE/E₀)⁵/120, the relative shortfall of 1 − b
            for w in powers {
                let out = s.update(&cfg, Watts::from_num(w));
                prop_assert!(out.bedding >= last);
                prop_assert!(out.bedding <= Ratio::ONE);
                last = out.bedding;
                let x = w * 1e-2 / 1e6;
                taylor += x.powi(5) / 120.0 * x.exp(); // (e^{-x} − g(x)) / e^{-x}
                let e = out.energy.to_num::<f64>();
                let unbedded = (-e / 1e6).exp();
                let err = (out.bedding.to_num::<f64>() - (1.0 - unbedded)).abs();
                prop_assert!(err <= 1.01 * taylor * unbedded + 3e-9, "{} > {}", err, taylor * unbedded);
            }
        }
    }
}
