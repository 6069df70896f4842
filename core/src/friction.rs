//! Friction coefficient: kinetic μ from a table over lining temperature × |slip speed|, static
//! μ for holding capacity, the stick/slip decision with hysteresis, a smooth transition near zero
//! slip, and the viscous and no-load drag of wet clutches.
//!
//! [`FrictionConfig`] is validated once and never changes; [`FrictionState`] holds the only thing
//! that persists between samples (whether the contact is slipping). [`FrictionState::update`] is
//! integer-only, O(NT + NV) (a bounded scan of each table axis), and cannot fail or panic.
//! It divides nowhere: the running and the standstill μ share one search of the temperature
//! axis ([`Table2::lookup_with_first_y`]), the table's fractions use per-segment reciprocals,
//! the correction multiply is skipped for a correction of exactly 1 (the estimator's case,
//! bit for bit the same), and saturation is kept only where a value can reach a limit.
//! Measured on x86-64 with callgrind on the bench device (6 × 5 table): about 200 instructions
//! per call, lookups included; a property test in clampwise-tests (`friction_plain`) holds the
//! result bit for bit to a plain dividing, saturating implementation over every input.
//!
//! ## Model
//!
//! With `μ_k(T, |v|)` the table value and `c` the correction factor (from the adaptation):
//!
//! ```text
//! μ_k' = c · μ_k(T, |v|)                    kinetic, corrected
//! μ_s  = r_s · c · μ_k(T, v₀)               static, v₀ the first speed breakpoint
//! φ(s) = 3s² − 2s³,  s = min(|v| / v_t, 1)  smoothstep over the transition speed v_t
//! μ    = μ_k' + (μ_s − μ_k') · (1 − φ)      μ_s at standstill, μ_k' from |v| ≥ v_t on
//! drag = −sign(v) · (c_v · |v| + T₀ · φ)    viscous + no-load drag, continuous through v = 0
//! ```
//!
//! `1 / v_t` is an integer reciprocal fixed at construction, so nothing divides by the (possibly
//! tiny) slip speed. The blend is bounded by μ_k' and μ_s and monotone in |v|, and φ is C¹, so
//! neither μ nor the drag torque steps as the slip speed passes zero.
//!
//! Stick/slip: the contact goes from holding to slipping when |v| rises above
//! `v_stick + h/2` and back to holding when |v| falls below `v_stick − h/2`. A slip-speed signal
//! whose noise spans less than the band `h` therefore changes state at most once (checked by a
//! property test). While holding, [`FrictionSample::direction`] is 0: static friction takes any
//! value within the holding capacity, so no friction direction is defined.
//!
//! ## Resolution and measured error
//!
//! μ is a [`Ratio`] (I2F30, LSB 0.93·10⁻⁹). The table lookup is within 1 LSB of the exact
//! bilinear interpolant of its stored values and exact at breakpoints (see [`crate::table`]).
//! Against the f64 model `clampwise_tests::f64_model::friction` (in the tests crate) over the
//! envelope (−50…1000 °C, ±2000 rad/s with fine steps near zero slip, correction 0…1.9; a wet-clutch and
//! a dry-caliper demo table; test `friction_envelope` in clampwise-tests), measured worst case:
//! **μ within 2.1 LSB (2.0·10⁻⁹)**, static μ within 1.8 LSB, drag torque within **0.9 LSB of
//! [`NewtonMetres`] (0.22 mN·m)**; the tests hold these to 3 LSB and 1 LSB. The stick/slip
//! state, the direction and the clamped flag agree exactly.

use core::fmt;

use fixed::types::I16F16;
use fixed::types::extra::{U16, U30};

use crate::table::Table2;
use crate::units::{Celsius, NewtonMetres, RadPerSec, Ratio};

/// Viscous drag coefficient of a wet clutch in N·m per rad/s (= N·m·s), I16F16: 0…32 767
/// N·m·s at 15 µN·m·s resolution.
pub type ViscousDrag = I16F16;

/// The kinetic μ table: lining temperature (°C, first axis) × |slip speed| (rad/s, second axis)
/// → μ.
pub type MuTable<const NT: usize, const NV: usize> = Table2<U16, U16, U30, NT, NV>;

/// Largest μ a table may hold (the static μ, `r_s · μ`, must stay inside [`Ratio`]).
pub const MU_MAX: Ratio = Ratio::lit("1.2");
/// Largest static-to-kinetic ratio accepted.
pub const STATIC_RATIO_MAX: Ratio = Ratio::lit("1.6");

/// Why a friction configuration was rejected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum FrictionError {
    /// A μ table value is negative or above [`MU_MAX`]; `temperature` and `speed` index it.
    MuOutOfRange {
        /// Index on the temperature axis.
        temperature: usize,
        /// Index on the slip-speed axis.
        speed: usize,
    },
    /// The first slip-speed breakpoint is negative (the table is entered with |v|).
    NegativeSpeedBreakpoint,
    /// `static_to_kinetic` is not in (0, [`STATIC_RATIO_MAX`]].
    StaticRatioOutOfRange,
    /// `stick_speed` is not positive.
    StickSpeedNotPositive,
    /// `stick_hysteresis` is not in (0, 2·`stick_speed`): the band must be non-empty and its
    /// lower edge above zero.
    HysteresisOutOfRange,
    /// `transition_speed` is not positive.
    TransitionSpeedNotPositive,
    /// `viscous_drag` is negative.
    ViscousDragNegative,
    /// `no_load_drag` is negative.
    NoLoadDragNegative,
    /// An SI value given as f64 is NaN, infinite or outside its fixed-point type.
    NotRepresentable {
        /// The field concerned.
        field: &'static str,
    },
}

impl fmt::Display for FrictionError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::MuOutOfRange { temperature, speed } => write!(
                f,
                "mu_kinetic[{temperature}][{speed}] is outside 0..={MU_MAX}"
            ),
            Self::NegativeSpeedBreakpoint => {
                f.write_str("mu_kinetic: the first slip-speed breakpoint is negative")
            }
            Self::StaticRatioOutOfRange => write!(
                f,
                "static_to_kinetic must be above 0 and at most {STATIC_RATIO_MAX}"
            ),
            Self::StickSpeedNotPositive => f.write_str("stick_speed must be above 0 rad/s"),
            Self::HysteresisOutOfRange => {
                f.write_str("stick_hysteresis must be above 0 and below twice stick_speed")
            }
            Self::TransitionSpeedNotPositive => {
                f.write_str("transition_speed must be above 0 rad/s")
            }
            Self::ViscousDragNegative => f.write_str("viscous_drag must not be negative"),
            Self::NoLoadDragNegative => f.write_str("no_load_drag must not be negative"),
            Self::NotRepresentable { field } => {
                write!(f, "{field} is not finite or is out of range")
            }
        }
    }
}

impl core::error::Error for FrictionError {}

/// Friction parameters in SI units as f64 (host, start-up or build time; never per sample).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FrictionParams {
    /// Static-to-kinetic ratio μ_s/μ_k at the first speed breakpoint, (0, 1.6]. Dry linings
    /// about 1.1–1.3 (sintered clutch 0.36/0.30 = 1.2 \[pub: Tribology Handbook\]); below 1 for
    /// wet materials whose μ rises with slip speed.
    pub static_to_kinetic: f64,
    /// Centre of the stick/slip band, rad/s, > 0.
    pub stick_speed: f64,
    /// Width of the stick/slip band, rad/s, in (0, 2·`stick_speed`).
    pub stick_hysteresis: f64,
    /// Slip speed over which μ moves from static to kinetic and the no-load drag builds up,
    /// rad/s, > 0.
    pub transition_speed: f64,
    /// Viscous drag, N·m per rad/s, ≥ 0 (0 for dry contacts).
    pub viscous_drag: f64,
    /// No-load drag torque at full transition, N·m, ≥ 0 (0 for dry contacts).
    pub no_load_drag: f64,
}

/// Validated friction configuration. Immutable; one config serves any number of
/// [`FrictionState`]s.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FrictionConfig<const NT: usize, const NV: usize> {
    mu_kinetic: MuTable<NT, NV>,
    static_to_kinetic: Ratio,
    /// Holding → slipping above this |v| (raw I16F16 bits).
    slip_above: i32,
    /// Slipping → holding below this |v| (raw I16F16 bits).
    stick_below: i32,
    transition_speed: RadPerSec,
    /// ⌊2⁴⁶ / v_t⌋ with v_t in raw bits: s = |v|·recip / 2³² is Q0.30.
    transition_recip: i64,
    viscous_drag: ViscousDrag,
    no_load_drag: NewtonMetres,
    /// The largest μ the lining can show anywhere in the table, static or kinetic: the table's
    /// largest value times max(1, `static_to_kinetic`), rounded up (Q30 bits).
    mu_ceiling: i64,
}

fn fixed_from_f64<F: fixed::types::extra::LeEqU32>(
    v: f64,
    field: &'static str,
) -> Result<fixed::FixedI32<F>, FrictionError> {
    if v.is_finite() {
        fixed::FixedI32::<F>::checked_from_num(v).ok_or(FrictionError::NotRepresentable { field })
    } else {
        Err(FrictionError::NotRepresentable { field })
    }
}

impl<const NT: usize, const NV: usize> FrictionConfig<NT, NV> {
    /// Build from a μ table and SI parameters.
    ///
    /// # Errors
    /// [`FrictionError::NotRepresentable`] for non-finite or out-of-range values, then as
    /// [`FrictionConfig::from_bits`].
    ///
    /// ```
    /// use clampwise_core::friction::{FrictionConfig, FrictionParams, MuTable};
    /// // Demo lining (invented numbers): μ fades with heat, dips slightly with slip speed.
    /// let mu = MuTable::<2, 2>::new(&[20.0, 400.0], &[0.0, 100.0], &[[0.40, 0.38], [0.30, 0.28]])?;
    /// let p = FrictionParams {
    ///     static_to_kinetic: 1.2, stick_speed: 0.05, stick_hysteresis: 0.04,
    ///     transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0,
    /// };
    /// let cfg = FrictionConfig::new(mu, &p)?;
    /// assert!((cfg.static_to_kinetic().to_num::<f64>() - 1.2).abs() < 1e-9);
    /// # Ok::<(), Box<dyn core::error::Error>>(())
    /// ```
    pub fn new(mu_kinetic: MuTable<NT, NV>, p: &FrictionParams) -> Result<Self, FrictionError> {
        Self::from_bits(
            mu_kinetic,
            fixed_from_f64(p.static_to_kinetic, "static_to_kinetic")?,
            fixed_from_f64(p.stick_speed, "stick_speed")?,
            fixed_from_f64(p.stick_hysteresis, "stick_hysteresis")?,
            fixed_from_f64(p.transition_speed, "transition_speed")?,
            fixed_from_f64(p.viscous_drag, "viscous_drag")?,
            fixed_from_f64(p.no_load_drag, "no_load_drag")?,
        )
    }

    /// Build from values already in fixed point (usable in `const` items kept in flash).
    ///
    /// # Errors
    /// [`FrictionError::MuOutOfRange`], [`FrictionError::NegativeSpeedBreakpoint`],
    /// [`FrictionError::StaticRatioOutOfRange`], [`FrictionError::StickSpeedNotPositive`],
    /// [`FrictionError::HysteresisOutOfRange`], [`FrictionError::TransitionSpeedNotPositive`],
    /// [`FrictionError::ViscousDragNegative`], [`FrictionError::NoLoadDragNegative`].
    ///
    /// ```
    /// use clampwise_core::friction::{FrictionConfig, MuTable, ViscousDrag};
    /// use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec, Ratio};
    /// const MU: MuTable<1, 1> = match MuTable::from_bits([Celsius::lit("20")], [RadPerSec::ZERO], [[Ratio::lit("0.35")]]) {
    ///     Ok(t) => t,
    ///     Err(_) => panic!("bad table"),
    /// };
    /// const CFG: FrictionConfig<1, 1> = match FrictionConfig::from_bits(
    ///     MU, Ratio::lit("1.15"), RadPerSec::lit("0.05"), RadPerSec::lit("0.04"),
    ///     RadPerSec::lit("0.5"), ViscousDrag::ZERO, NewtonMetres::ZERO,
    /// ) {
    ///     Ok(c) => c,
    ///     Err(_) => panic!("bad friction config"),
    /// };
    /// assert_eq!(CFG.stick_speed(), RadPerSec::lit("0.05"));
    /// ```
    #[allow(clippy::too_many_arguments)]
    pub const fn from_bits(
        mu_kinetic: MuTable<NT, NV>,
        static_to_kinetic: Ratio,
        stick_speed: RadPerSec,
        stick_hysteresis: RadPerSec,
        transition_speed: RadPerSec,
        viscous_drag: ViscousDrag,
        no_load_drag: NewtonMetres,
    ) -> Result<Self, FrictionError> {
        // Entries beyond the breakpoints in use are zero, inside the range checked here.
        let z = mu_kinetic.capacity_grid();
        let mut largest = 0i64;
        let mut i = 0;
        while i < NT {
            let mut j = 0;
            while j < NV {
                // i < NT, j < NV by the loop bounds; `get` is not usable in a const fn.
                #[allow(clippy::indexing_slicing)]
                let v = z[i][j].to_bits();
                if v < 0 || v > MU_MAX.to_bits() {
                    return Err(FrictionError::MuOutOfRange {
                        temperature: i,
                        speed: j,
                    });
                }
                if v as i64 > largest {
                    largest = v as i64;
                }
                j += 1;
            }
            i += 1;
        }
        if NV > 0 && mu_kinetic.capacity_y()[0].to_bits() < 0 {
            return Err(FrictionError::NegativeSpeedBreakpoint);
        }
        let r = static_to_kinetic.to_bits();
        if r <= 0 || r > STATIC_RATIO_MAX.to_bits() {
            return Err(FrictionError::StaticRatioOutOfRange);
        }
        let v_s = stick_speed.to_bits();
        if v_s <= 0 {
            return Err(FrictionError::StickSpeedNotPositive);
        }
        let h = stick_hysteresis.to_bits();
        // h < 2·v_s keeps the lower edge above zero; compare in i64 so 2·v_s cannot overflow.
        if h <= 0 || h as i64 >= 2 * v_s as i64 {
            return Err(FrictionError::HysteresisOutOfRange);
        }
        let v_t = transition_speed.to_bits();
        if v_t <= 0 {
            return Err(FrictionError::TransitionSpeedNotPositive);
        }
        if viscous_drag.to_bits() < 0 {
            return Err(FrictionError::ViscousDragNegative);
        }
        if no_load_drag.to_bits() < 0 {
            return Err(FrictionError::NoLoadDragNegative);
        }
        // Band edges: the upper edge rounds up and the lower one down, so the band is never
        // narrower than asked. v_s + ⌈h/2⌉ < 3·2³⁰ fits i64 and saturates into i32.
        let upper = v_s as i64 + (h as i64 + 1) / 2;
        // Checked against i32::MAX just before the cast.
        #[allow(clippy::cast_possible_truncation)]
        let slip_above = if upper > i32::MAX as i64 {
            i32::MAX
        } else {
            upper as i32
        };
        let stick_below = v_s - h / 2 - (h & 1);
        Ok(Self {
            mu_kinetic,
            static_to_kinetic,
            slip_above,
            stick_below: if stick_below < 1 { 1 } else { stick_below },
            transition_speed,
            transition_recip: (1i64 << 46) / v_t as i64,
            viscous_drag,
            no_load_drag,
            // μ ≤ 1.2 and the ratio ≤ 1.6 (validated): the product is far inside i64.
            mu_ceiling: if r > 1 << 30 {
                (largest * r as i64 + (1 << 30) - 1) >> 30
            } else {
                largest
            },
        })
    }

    /// The kinetic μ table.
    pub const fn mu_kinetic(&self) -> &MuTable<NT, NV> {
        &self.mu_kinetic
    }

    /// Static-to-kinetic ratio.
    pub const fn static_to_kinetic(&self) -> Ratio {
        self.static_to_kinetic
    }

    /// Centre of the stick/slip band (rad/s), rounded to the raw LSB.
    pub const fn stick_speed(&self) -> RadPerSec {
        // The mean of two i32 values computed in i64 lies between them: the cast is exact.
        #[allow(clippy::cast_possible_truncation)]
        RadPerSec::from_bits(((self.slip_above as i64 + self.stick_below as i64) / 2) as i32)
    }

    /// |v| above which a holding contact starts slipping (rad/s).
    pub const fn slip_threshold(&self) -> RadPerSec {
        RadPerSec::from_bits(self.slip_above)
    }

    /// |v| below which a slipping contact sticks (rad/s).
    pub const fn stick_threshold(&self) -> RadPerSec {
        RadPerSec::from_bits(self.stick_below)
    }

    /// Transition speed v_t (rad/s).
    pub const fn transition_speed(&self) -> RadPerSec {
        self.transition_speed
    }

    /// Viscous drag coefficient (N·m per rad/s).
    pub const fn viscous_drag(&self) -> ViscousDrag {
        self.viscous_drag
    }

    /// No-load drag torque (N·m).
    pub const fn no_load_drag(&self) -> NewtonMetres {
        self.no_load_drag
    }
}

/// What [`FrictionState::update`] reports for one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrictionSample {
    /// μ to use for the slipping torque: corrected, blended from static toward kinetic over the
    /// transition speed. 0…1.99; within 3 LSB of the f64 reference (measured 2.1).
    pub mu_kinetic: Ratio,
    /// Static μ for the holding capacity (corrected), 0…1.99.
    pub mu_static: Ratio,
    /// How far the blend near zero slip moved `mu_kinetic` from the kinetic table's own μ at
    /// this speed, |μ_blend − μ_k| (≥ 0; 0 at and above the transition speed): what the
    /// transition model adds to μ's uncertainty.
    pub transition_span: Ratio,
    /// True while the contact slips (decided with hysteresis).
    pub slipping: bool,
    /// Sign of the friction torque, opposing slip: −1 for v > 0, +1 for v < 0; 0 while holding.
    pub direction: i8,
    /// Viscous plus no-load drag torque (N·m), signed to oppose slip; 0 at v = 0.
    pub drag_torque: NewtonMetres,
    /// True when the temperature or |slip speed| lay outside the μ table (edge value used).
    pub clamped: bool,
    /// True when a product saturated (μ above [`Ratio`]'s range after correction, drag above
    /// [`NewtonMetres`]'s range) or the correction was negative (taken as 0).
    pub saturated: bool,
}

/// Per-contact friction state: whether the contact is slipping. Starts holding.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct FrictionState {
    slipping: bool,
}

const ONE_Q30: i64 = 1 << 30;

/// Saturate a non-negative i64 into a Ratio's raw range; reports whether it saturated.
///
/// Only used on corrected μ values, which are ≥ 0 (table μ validated ≥ 0, interpolation stays
/// between stored values, correction taken as ≥ 0, `static_to_kinetic` > 0, and the rounded
/// product of non-negative values is non-negative), so only the upper bound can be reached.
#[inline]
fn ratio_from_non_negative(v: i64) -> (Ratio, bool) {
    // v ≥ 0 and v.min(i32::MAX) ≤ i32::MAX: the cast is exact.
    #[allow(clippy::cast_possible_truncation)]
    let bits = v.min(i64::from(i32::MAX)) as i32;
    (Ratio::from_bits(bits), v > i64::from(i32::MAX))
}

/// a·b for two Q30 values, rounded to nearest, for |a·b| < 2⁶³ − 2²⁹.
///
/// Every use stays far inside that bound, so the wrapping forms are exact (and one multiply,
/// not an overflow-checked one, which on Cortex-M0 is four library multiplies): the table μ is
/// validated to [0, 1.2] (below 2^30.3), the correction below 2³¹, the corrected μ below 2^31.3,
/// `static_to_kinetic` at most 1.6 (below 2^30.7), and a blend weight 1 − φ in [0, 2³⁰] times
/// a difference of two i32 values below 2³²: every product is below 2⁶².
fn mul_q30(a: i64, b: i64) -> i64 {
    a.wrapping_mul(b).wrapping_add(ONE_Q30 >> 1) >> 30
}

/// A table μ times the correction factor (Q30). The estimator passes exactly 1, for which
/// `mul_q30(a, 2³⁰) = ⌊a + ½⌋ = a`: skip the multiply, bit for bit the same.
fn correct(mu: i64, corr: i64) -> i64 {
    if corr == ONE_Q30 {
        mu
    } else {
        mul_q30(mu, corr)
    }
}

impl FrictionState {
    /// A contact that starts holding.
    ///
    /// ```
    /// use clampwise_core::friction::FrictionState;
    /// assert!(!FrictionState::new().is_slipping());
    /// ```
    pub const fn new() -> Self {
        Self { slipping: false }
    }

    /// Whether the contact is slipping after the last update.
    pub const fn is_slipping(&self) -> bool {
        self.slipping
    }

    /// One sample: decide stick/slip, look up and correct μ, blend near zero slip, compute drag.
    ///
    /// `slip_speed` is signed (rad/s), `lining_temp` in °C, `correction` the adaptation factor
    /// (1 = table as is; negative is taken as 0 and flagged). Integer-only, cannot panic.
    ///
    /// ```
    /// use clampwise_core::friction::{FrictionConfig, FrictionParams, FrictionState, MuTable};
    /// use clampwise_core::units::{Celsius, RadPerSec, Ratio};
    /// let mu = MuTable::<2, 2>::new(&[20.0, 400.0], &[0.0, 100.0], &[[0.40, 0.38], [0.30, 0.28]])?;
    /// let p = FrictionParams {
    ///     static_to_kinetic: 1.2, stick_speed: 0.05, stick_hysteresis: 0.04,
    ///     transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0,
    /// };
    /// let cfg = FrictionConfig::new(mu, &p)?;
    /// let mut state = FrictionState::new();
    /// let s = state.update(&cfg, RadPerSec::lit("50"), Celsius::lit("20"), Ratio::ONE);
    /// assert!(s.slipping);
    /// assert_eq!(s.direction, -1);
    /// assert!((s.mu_kinetic.to_num::<f64>() - 0.39).abs() < 1e-8);
    /// assert!((s.mu_static.to_num::<f64>() - 0.48).abs() < 1e-8);
    /// # Ok::<(), Box<dyn core::error::Error>>(())
    /// ```
    pub fn update<const NT: usize, const NV: usize>(
        &mut self,
        cfg: &FrictionConfig<NT, NV>,
        slip_speed: RadPerSec,
        lining_temp: Celsius,
        correction: Ratio,
    ) -> FrictionSample {
        let v = slip_speed.to_bits();
        // |i32::MIN| saturates to i32::MAX: far outside any table anyway. (The same as
        // `saturating_abs`, in fewer instructions.)
        #[allow(clippy::cast_possible_wrap)]
        let speed = v.unsigned_abs().min(i32::MAX.unsigned_abs()) as i32;
        self.slipping = if self.slipping {
            speed >= cfg.stick_below
        } else {
            speed > cfg.slip_above
        };

        let mut saturated = correction.to_bits() < 0;
        let corr = i64::from(correction.to_bits().max(0));

        // One search of the temperature axis serves both the running and the standstill μ.
        let (running, standstill) = cfg
            .mu_kinetic
            .lookup_with_first_y(lining_temp, RadPerSec::from_bits(speed));

        let (mu_k, sat_k) =
            ratio_from_non_negative(correct(i64::from(running.value.to_bits()), corr));
        let mu_s_corr = correct(i64::from(standstill.value.to_bits()), corr);
        let (mu_s, sat_s) = ratio_from_non_negative(mul_q30(
            mu_s_corr,
            i64::from(cfg.static_to_kinetic.to_bits()),
        ));
        saturated |= sat_k || sat_s;

        let phi = smoothstep_q30(speed, cfg.transition_speed.to_bits(), cfg.transition_recip);
        let mk = i64::from(mu_k.to_bits());
        let ms = i64::from(mu_s.to_bits());
        // mk + (ms − mk)·(1 − φ) rounded lies between mk and ms (0 ≤ 1 − φ ≤ 1), both Ratio
        // bits: the narrowing is exact.
        #[allow(clippy::cast_possible_truncation)]
        let mu = Ratio::from_bits(
            mk.wrapping_add(mul_q30(ms.wrapping_sub(mk), ONE_Q30.wrapping_sub(phi))) as i32,
        );

        let (drag_torque, sat_d) = drag(cfg, speed, phi, v);
        saturated |= sat_d;

        let direction = if self.slipping {
            if v > 0 { -1 } else { 1 }
        } else {
            0
        };

        FrictionSample {
            mu_kinetic: mu,
            mu_static: mu_s,
            // Two non-negative Ratio values: their distance fits.
            transition_span: Ratio::from_bits(
                i32::try_from(mu.to_bits().abs_diff(mu_k.to_bits())).unwrap_or(i32::MAX),
            ),
            slipping: self.slipping,
            direction,
            drag_torque,
            clamped: running.clamped || standstill.clamped,
            saturated,
        }
    }
}

impl<const NT: usize, const NV: usize> FrictionConfig<NT, NV> {
    /// A sample for a slip speed that is not known: the contact may be holding or slipping at
    /// any speed and temperature the table knows, so both μ are the ceiling of the whole table
    /// (its largest value, times the static ratio when that is above 1, rounded up), times
    /// `correction` — a bound, looser than the μ at this temperature but one that needs no
    /// search. Not slipping, no direction, no drag (it cannot be known without the speed); the
    /// friction state is left as it is. O(1), integers only.
    ///
    /// ```
    /// use clampwise_core::friction::{FrictionConfig, FrictionParams, MuTable};
    /// use clampwise_core::units::Ratio;
    /// let mu = MuTable::<1, 2>::new(&[20.0], &[0.0, 100.0], &[[0.30, 0.36]])?;
    /// let p = FrictionParams {
    ///     static_to_kinetic: 1.1, stick_speed: 0.05, stick_hysteresis: 0.04,
    ///     transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0,
    /// };
    /// let cfg = FrictionConfig::new(mu, &p)?;
    /// // The table's largest μ, 0.36, times the static ratio 1.1: at least any μ it can give.
    /// let s = cfg.slip_unknown(Ratio::ONE);
    /// assert!((s.mu_static.to_num::<f64>() - 0.396).abs() < 1e-8);
    /// assert!(!s.slipping);
    /// # Ok::<(), Box<dyn core::error::Error>>(())
    /// ```
    pub fn slip_unknown(&self, correction: Ratio) -> FrictionSample {
        let saturated = correction.to_bits() < 0;
        let corr = i64::from(correction.to_bits().max(0));
        let (bound, sat) = ratio_from_non_negative(correct(self.mu_ceiling, corr));
        FrictionSample {
            mu_kinetic: bound,
            mu_static: bound,
            transition_span: Ratio::ZERO,
            slipping: false,
            direction: 0,
            drag_torque: NewtonMetres::ZERO,
            clamped: false,
            saturated: saturated || sat,
        }
    }
}

/// φ(s) = 3s² − 2s³ in Q30 for s = min(speed / v_t, 1), speed and v_t in raw I16F16 bits ≥ 0.
fn smoothstep_q30(speed: i32, v_t: i32, recip: i64) -> i64 {
    if speed >= v_t {
        return ONE_Q30;
    }
    // 0 ≤ speed < v_t and 0 < recip ≤ 2⁴⁶/v_t: the product is in [0, 2⁴⁶), so s in [0, 2³⁰).
    let s = i64::from(speed).wrapping_mul(recip) >> 16;
    let s2 = s.wrapping_mul(s) >> 30;
    // s2 ≤ s²/2³⁰ < 2³⁰ and 2³⁰ < 3·2³⁰ − 2s ≤ 3·2³⁰: the product is in [0, 2⁶²), and the result
    // ≤ s²·(3·2³⁰ − 2s)/2⁶⁰ = 2³⁰·(3u² − 2u³) ≤ 2³⁰ (u = s/2³⁰ in [0, 1)): already in [0, 2³⁰].
    s2.wrapping_mul((3 * ONE_Q30).wrapping_sub(s.wrapping_mul(2))) >> 30
}

/// Signed drag torque opposing slip, and whether it saturated.
fn drag<const NT: usize, const NV: usize>(
    cfg: &FrictionConfig<NT, NV>,
    speed: i32,
    phi: i64,
    v: i32,
) -> (NewtonMetres, bool) {
    if v == 0 {
        return (NewtonMetres::ZERO, false);
    }
    // c_v (Q16, ≥ 0) · |v| (Q16, ≥ 0) is Q32, in [0, 2⁶²); to Q12 rounded, below 2⁴².
    let viscous = i64::from(cfg.viscous_drag.to_bits())
        .wrapping_mul(i64::from(speed))
        .wrapping_add(1 << 19)
        >> 20;
    // T₀ (Q12, ≥ 0) · φ (Q30, in [0, 2³⁰]) in [0, 2⁶¹]; to Q12 rounded, below 2³¹.
    let no_load = i64::from(cfg.no_load_drag.to_bits())
        .wrapping_mul(phi)
        .wrapping_add(ONE_Q30 >> 1)
        >> 30;
    // Below 2⁴³: neither the sum nor the negation can wrap. Only the narrowing can saturate.
    let magnitude = viscous.wrapping_add(no_load);
    let signed = if v > 0 {
        magnitude.wrapping_neg()
    } else {
        magnitude
    };
    match i32::try_from(signed) {
        Ok(b) => (NewtonMetres::from_bits(b), false),
        Err(_) => (
            NewtonMetres::from_bits(if signed < 0 { -i32::MAX } else { i32::MAX }),
            true,
        ),
    }
}

// Part of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for FrictionState {
    const LEN: usize = 1;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.bool(self.slipping);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        let slipping = r.bool("friction.slipping")?;
        Some(Self { slipping })
    }
}

#[cfg(test)]
#[allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Demo lining (invented numbers, not a product's data): a resin-like dry lining whose μ
    /// falls above about 230 °C, the onset of drift for resin-bonded linings \[pub: Day ch. 2\].
    pub(crate) fn demo_table() -> MuTable<5, 4> {
        MuTable::new(
            &[-40.0, 100.0, 230.0, 400.0, 650.0],
            &[0.0, 10.0, 100.0, 1000.0],
            &[
                [0.36, 0.35, 0.34, 0.33],
                [0.38, 0.37, 0.36, 0.35],
                [0.37, 0.36, 0.35, 0.34],
                [0.31, 0.30, 0.29, 0.28],
                [0.26, 0.25, 0.24, 0.23],
            ],
        )
        .unwrap()
    }

    pub(crate) fn demo_params() -> FrictionParams {
        FrictionParams {
            static_to_kinetic: 1.2,
            stick_speed: 0.05,
            stick_hysteresis: 0.04,
            transition_speed: 0.5,
            viscous_drag: 0.8,
            no_load_drag: 2.5,
        }
    }

    fn cfg() -> FrictionConfig<5, 4> {
        FrictionConfig::new(demo_table(), &demo_params()).unwrap()
    }

    fn slip(c: &FrictionConfig<5, 4>, v: f64, t: f64, corr: f64) -> FrictionSample {
        let mut s = FrictionState::new();
        s.update(
            c,
            RadPerSec::from_num(v),
            Celsius::from_num(t),
            Ratio::from_num(corr),
        )
    }

    #[test]
    fn breakpoints_reproduced_exactly_above_transition() {
        let c = cfg();
        let t = c.mu_kinetic();
        for (i, temp) in t.x_breakpoints().iter().enumerate() {
            for (j, v) in t.y_breakpoints().iter().enumerate().skip(1) {
                let mut s = FrictionState::new();
                let out = s.update(&c, *v, *temp, Ratio::ONE);
                assert_eq!(out.mu_kinetic, t.value(i, j).unwrap(), "({i},{j})");
                assert!(!out.clamped);
            }
        }
    }

    #[test]
    fn standstill_is_static_mu() {
        let c = cfg();
        let out = slip(&c, 0.0, 100.0, 1.0);
        assert_eq!(out.mu_kinetic, out.mu_static);
        assert!((out.mu_static.to_num::<f64>() - 0.38 * 1.2).abs() < 2e-9);
        assert_eq!(out.direction, 0);
        assert_eq!(out.drag_torque, NewtonMetres::ZERO);
    }

    #[test]
    fn out_of_range_is_clamped_and_flagged() {
        let c = cfg();
        let hot = slip(&c, 2000.0, 1000.0, 1.0);
        assert!(hot.clamped);
        assert_eq!(hot.mu_kinetic, c.mu_kinetic().value(4, 3).unwrap());
        let cold = slip(&c, -5.0, -50.0, 1.0);
        assert!(cold.clamped);
        assert!(!slip(&c, 5.0, 300.0, 1.0).clamped);
    }

    #[test]
    fn correction_scales_and_negative_is_flagged() {
        let c = cfg();
        let a = slip(&c, 100.0, 100.0, 1.0);
        let b = slip(&c, 100.0, 100.0, 0.8);
        let ratio = b.mu_kinetic.to_num::<f64>() / a.mu_kinetic.to_num::<f64>();
        assert!((ratio - 0.8).abs() < 1e-8);
        let n = slip(&c, 100.0, 100.0, -0.5);
        assert!(n.saturated);
        assert_eq!(n.mu_kinetic, Ratio::ZERO);
        let big = slip(&c, 0.0, 100.0, 1.99);
        assert!(!big.saturated); // 0.38·1.2·1.99 = 0.907
    }

    #[test]
    fn drag_opposes_slip_and_is_continuous() {
        let c = cfg();
        let pos = slip(&c, 10.0, 20.0, 1.0);
        let neg = slip(&c, -10.0, 20.0, 1.0);
        // 0.8·10 + 2.5 = 10.5 N·m opposing slip.
        assert!((pos.drag_torque.to_num::<f64>() + 10.5).abs() < 1e-3);
        assert_eq!(pos.drag_torque, -neg.drag_torque);
        assert_eq!((pos.direction, neg.direction), (-1, 1));
        let tiny = slip(&c, 1e-4, 20.0, 1.0);
        assert!(tiny.drag_torque.to_num::<f64>().abs() < 1e-3);
    }

    #[test]
    fn rejects_bad_configs() {
        let t = demo_table();
        let base = demo_params();
        let check = |p: FrictionParams, e: FrictionError| {
            assert_eq!(FrictionConfig::new(t, &p).unwrap_err(), e);
        };
        check(
            FrictionParams {
                static_to_kinetic: 0.0,
                ..base
            },
            FrictionError::StaticRatioOutOfRange,
        );
        check(
            FrictionParams {
                stick_speed: 0.0,
                ..base
            },
            FrictionError::StickSpeedNotPositive,
        );
        check(
            FrictionParams {
                stick_hysteresis: 0.1,
                ..base
            },
            FrictionError::HysteresisOutOfRange,
        );
        check(
            FrictionParams {
                transition_speed: -1.0,
                ..base
            },
            FrictionError::TransitionSpeedNotPositive,
        );
        check(
            FrictionParams {
                viscous_drag: -1.0,
                ..base
            },
            FrictionError::ViscousDragNegative,
        );
        check(
            FrictionParams {
                no_load_drag: f64::NAN,
                ..base
            },
            FrictionError::NotRepresentable {
                field: "no_load_drag",
            },
        );
        let bad = MuTable::<1, 1>::new(&[0.0], &[0.0], &[[1.5]]).unwrap();
        assert_eq!(
            FrictionConfig::new(bad, &base).unwrap_err(),
            FrictionError::MuOutOfRange {
                temperature: 0,
                speed: 0
            }
        );
        let neg = MuTable::<1, 2>::new(&[0.0], &[-1.0, 1.0], &[[0.3, 0.3]]).unwrap();
        assert_eq!(
            FrictionConfig::new(neg, &base).unwrap_err(),
            FrictionError::NegativeSpeedBreakpoint
        );
        let msg = format!("{}", FrictionError::HysteresisOutOfRange);
        assert!(msg.contains("stick_hysteresis"));
    }

    #[test]
    fn band_edges_are_at_least_the_configured_width() {
        let c = cfg();
        let width = c.slip_threshold() - c.stick_threshold();
        assert!(width >= RadPerSec::from_num(0.04) - RadPerSec::DELTA);
        assert!(c.stick_threshold() > RadPerSec::ZERO);
    }

    proptest! {
        // Stick/slip must not chatter: a slip signal dithering around any point of the band
        // with noise that spans less than the band changes state at most once.
        #[test]
        fn no_chatter_with_noise_inside_band(
            base in 0.0f64..0.12,
            amplitude_share in 0.0f64..0.999,
            sign in prop::bool::ANY,
            noise in prop::collection::vec(-1.0f64..1.0, 200..400),
        ) {
            let c = cfg();
            let band = (c.slip_threshold() - c.stick_threshold()).to_num::<f64>();
            // peak-to-peak 2a < band
            let a = 0.5 * band * amplitude_share;
            let mut st = FrictionState::new();
            let mut transitions = 0;
            let mut last = st.is_slipping();
            for n in &noise {
                let v = (base + a * n) * if sign { 1.0 } else { -1.0 };
                let out = st.update(&c, RadPerSec::from_num(v), Celsius::from_num(100), Ratio::ONE);
                if out.slipping != last { transitions += 1; last = out.slipping; }
            }
            prop_assert!(transitions <= 1, "transitions = {}", transitions);
        }

        // μ lies between the kinetic and static values and the blend never leaves Ratio's range.
        #[test]
        fn mu_bounded_by_kinetic_and_static(v in -2000.0f64..2000.0, t in -50.0f64..1000.0, corr in 0.0f64..1.9) {
            let c = cfg();
            let out = slip(&c, v, t, corr);
            let table = c.mu_kinetic().lookup(Celsius::from_num(t), RadPerSec::from_num(v.abs()));
            let kinetic = table.value.to_num::<f64>() * Ratio::from_num(corr).to_num::<f64>();
            let (lo, hi) = (kinetic.min(out.mu_static.to_num()), kinetic.max(out.mu_static.to_num()));
            let mu: f64 = out.mu_kinetic.to_num();
            prop_assert!(mu >= lo - 4e-9 && mu <= hi + 4e-9, "{} not in [{}, {}]", mu, lo, hi);
        }
    }
}
