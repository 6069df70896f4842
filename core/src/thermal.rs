//! Lumped thermal state of the rotor (disc, drum, plate pack) and optionally the lining.
//!
//! ## Model
//!
//! The dissipated power `P = |T·v|` heats the rotor with the share γ and the lining node with
//! `1 − γ`; the lining conducts to the rotor through `G`, and the rotor cools toward ambient
//! through `h·A` (given directly, or as the time constant `τ = m·c/(h·A)`):
//!
//! ```text
//! C_L dT_L/dt = (1 − γ)·P − G·(T_L − T_R)                       (lining node, optional)
//! C_R dT_R/dt =      γ ·P + G·(T_L − T_R) − h·A·(T_R − T∞)
//! ```
//!
//! Without a lining node the lining temperature is the rotor's and `(1 − γ)·P` leaves the model
//! (it heats the pad, which is not tracked). The single-node case is the lumped-capacitance rotor
//! of Shigley ch. 16 (ΔT = γ·E/(m·c) for a short pulse) \[pub\] with Newtonian cooling
//! `T − T∞ = (T₀ − T∞)·exp(−t/τ)` \[pub: Day ch. 8\].
//!
//! ## Discretisation
//!
//! The update is the exact solution of the linear system for power held over the sample
//! (zero-order hold): `x ← x − K·(x − T∞) + Γ·P` with `K = I − exp(A·dt)` and
//! `Γ = ∫₀^dt exp(A·s) ds · B`, computed in f64 once at construction and stored as Q62
//! integers. `exp(A·dt)` has its eigenvalues in (0, 1] for every dt, so the update is stable
//! for any dt; dt is still checked against the time constants: not longer than the shortest one
//! (a longer sample would hide the lining's peak temperature that the fade flag watches) and
//! not so short against the longest one that `K` loses its resolution (`dt/τ ≥ 2⁻⁴⁰`).
//!
//! The state is kept in Q32 °C (i64) so that per-sample changes far below the [`Celsius`] LSB
//! (e.g. 9·10⁻⁶ K per 0.1 ms sample for a 55 K excess with τ = 613 s) are not lost; products are
//! exact 64 × 64 → 128-bit widening products (`crate::wide`). Outputs are rounded to [`Celsius`]
//! (I16F16, LSB 15 µK).
//!
//! ## Cost
//!
//! One update takes two widening products with a single node (the lining row is skipped: its
//! coefficients are zero) and six with a lining node, then the measured-temperature check and
//! the flag latches (thresholds fixed in Q32 at configuration). Measured (callgrind, x86-64):
//! about 100 instructions for one node and 150 for two. On ARMv6-M each product is four
//! 32 × 32-bit pieces of four 16-bit multiplies, none a library call (see `crate::wide`).
//!
//! ## Measured error
//!
//! Against the f64 model `clampwise_tests::f64_model::thermal` (in the tests crate; RK4 with
//! sub-steps, not the same formula) over the envelope — powers 0…10 MW, dt 0.1 ms, 1 ms and 10 ms, one and two
//! nodes, −50…1000 °C (test `thermal_envelope` in clampwise-tests) — the measured worst case is
//! **7.7·10⁻⁶ K**, i.e. the ½ LSB rounding of the [`Celsius`] output; the tests hold it to
//! 1·10⁻⁵ K. Against the published formulas: the pulse rise γ·E/(m·c) and the cooling curve
//! `(T₀ − T∞)·exp(−t/τ)` both within 0.5 % (tested; the actual deviation is below 0.1 %).

use core::fmt;

use crate::units::{Celsius, Seconds, Watts};

/// Lowest temperature the state holds: absolute zero, rounded up (°C).
const T_FLOOR_Q32: i64 = -273 << 32;
/// Highest temperature the state holds: the top of [`Celsius`] (°C).
const T_CEIL_Q32: i64 = 32_767 << 32;
const Q62: f64 = 4_611_686_018_427_387_904.0; // 2⁶²
/// Smallest decay coefficient accepted for the longest time constant (2⁻⁴⁰ of full scale).
const K_MIN_Q62: i64 = 1 << 22;

/// How the rotor cools toward ambient.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Cooling {
    /// No cooling (adiabatic rotor): short events, or a test of ΔT = γ·E/(m·c).
    Adiabatic,
    /// Rotor time constant `τ = m·c/(h·A)` in seconds, > 0.
    TimeConstant(f64),
    /// Rotor heat-transfer conductance `h·A` in W/K, > 0.
    Conductance(f64),
}

/// The optional lining node.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LiningNode {
    /// Lining mass in kg (all pads or facings that share the heat), > 0.
    pub mass: f64,
    /// Lining specific heat in J/(kg·K) (resin facing 1250, sintered 420 [pub: Tribology
    /// Handbook]), > 0.
    pub specific_heat: f64,
    /// Conductance from lining to rotor in W/K, > 0.
    pub conductance_to_rotor: f64,
}

/// Plausibility limits for a measured lining temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MeasuredPlausibility {
    /// Lowest plausible reading, °C.
    pub min: f64,
    /// Highest plausible reading, °C, > `min`.
    pub max: f64,
    /// Largest plausible change between two consecutive readings, K/s, > 0.
    pub max_rate: f64,
}

/// Thermal parameters in SI units as f64 (host, start-up or build time; never per sample).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ThermalParams {
    /// Rotor mass in kg, > 0.
    pub rotor_mass: f64,
    /// Rotor specific heat in J/(kg·K) (grey cast iron ≈ 460–500 \[mem\]), > 0.
    pub rotor_specific_heat: f64,
    /// Share γ of the dissipated power that goes into the rotor, 0…1 (≈ 0.89–0.90 for cast
    /// iron against a resin pad \[calc from Limpert's partition formula, mem\]).
    pub rotor_share: f64,
    /// Rotor cooling.
    pub cooling: Cooling,
    /// Ambient (cooling air or oil) temperature, °C.
    pub ambient: f64,
    /// Optional lining node.
    pub lining: Option<LiningNode>,
    /// Fade warning above this temperature, °C.
    pub fade_warning: f64,
    /// Over-temperature fault above this temperature, °C, > `fade_warning`.
    pub over_temperature: f64,
    /// A flag clears only below its threshold minus this, K, ≥ 0.
    pub flag_hysteresis: f64,
    /// Plausibility of a measured lining temperature; `None`: measured inputs are ignored.
    pub measured: Option<MeasuredPlausibility>,
}

/// Why a thermal configuration was rejected.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ThermalError {
    /// A value is NaN, infinite, or outside its fixed-point type.
    NotRepresentable {
        /// The field concerned.
        field: &'static str,
    },
    /// A value that must be above zero is not.
    NotPositive {
        /// The field concerned.
        field: &'static str,
    },
    /// `dt` is above 1 s.
    DtTooLong,
    /// `rotor_share` is outside 0…1.
    RotorShareOutOfRange,
    /// `dt` is longer than the shortest time constant of the model (`seconds`, rounded down).
    DtAboveTimeConstant {
        /// The shortest time constant, s.
        seconds: u32,
    },
    /// The longest time constant is so long against `dt` that the per-sample decay would lose
    /// its resolution (dt/τ below 2⁻⁴⁰).
    TimeConstantTooLongForDt,
    /// A heat capacity is so small that one sample at 1 W would raise it by 1 K or more.
    HeatCapacityTooSmall {
        /// The field concerned.
        field: &'static str,
    },
    /// `over_temperature` is not above `fade_warning`, or `flag_hysteresis` is negative.
    FlagThresholds,
    /// `measured.max` is not above `measured.min`, or `max_rate · dt` is below one LSB.
    MeasuredLimits,
    /// A raw coefficient ([`ThermalRaw`]) lies outside what the model can produce: a decay
    /// coefficient outside `0 ≤ K_ii < 1`, `−1 < K_ij ≤ 0`, a negative Γ, or lining-node
    /// coefficients set on a single-node model.
    Coefficient {
        /// The field concerned.
        field: &'static str,
    },
}

impl fmt::Display for ThermalError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::NotRepresentable { field } => {
                write!(f, "{field} is not finite or is out of range")
            }
            Self::NotPositive { field } => write!(f, "{field} must be above zero"),
            Self::DtTooLong => f.write_str("dt must not exceed 1 s"),
            Self::RotorShareOutOfRange => f.write_str("rotor_share must be within 0..=1"),
            Self::DtAboveTimeConstant { seconds } => write!(
                f,
                "dt is longer than the model's shortest time constant ({seconds} s)"
            ),
            Self::TimeConstantTooLongForDt => {
                f.write_str("cooling time constant too long for dt: dt/tau must be at least 2^-40")
            }
            Self::HeatCapacityTooSmall { field } => write!(
                f,
                "{field}: heat capacity too small for dt (1 W for one sample would add 1 K)"
            ),
            Self::FlagThresholds => f.write_str(
                "over_temperature must be above fade_warning and flag_hysteresis not negative",
            ),
            Self::MeasuredLimits => f.write_str(
                "measured: max must be above min and max_rate * dt at least one Celsius LSB",
            ),
            Self::Coefficient { field } => write!(
                f,
                "{field}: raw coefficient outside the range the thermal model can produce"
            ),
        }
    }
}

impl core::error::Error for ThermalError {}

/// Plausibility limits of a measured lining temperature in fixed point (part of
/// [`ThermalRaw`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Plausibility {
    /// Lowest plausible reading, °C.
    pub min: Celsius,
    /// Highest plausible reading, °C, above `min`.
    pub max: Celsius,
    /// Largest step between consecutive readings, raw [`Celsius`] bits per sample, ≥ 1.
    pub max_step: i32,
}

/// A [`ThermalConfig`] as its integer coefficients, for configurations computed once (on the
/// host or in a build script) and kept in flash as `const` items.
///
/// [`ThermalConfig::to_raw`] gives them; [`ThermalConfig::from_bits`] checks them and builds the
/// configuration in a `const` context. State order of the 2 × 2 arrays: `[lining, rotor]`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ThermalRaw {
    /// Sample period, s, (0, 1].
    pub dt: Seconds,
    /// Per-sample decay `K = I − exp(A·dt)` in Q62 (2⁶² = 1): `0 ≤ K_ii < 1`, `−1 < K_ij ≤ 0`.
    pub k_q62: [[i64; 2]; 2],
    /// Per-sample heating `Γ` in K/W in Q62, `0 ≤ Γ_i < 1`.
    pub gamma_q62: [i64; 2],
    /// Whether the lining has its own node; without it row 0 of `k_q62`, `k_q62[1][0]` and
    /// `gamma_q62[0]` are zero.
    pub two_node: bool,
    /// Ambient temperature, °C.
    pub ambient: Celsius,
    /// Fade-warning threshold, °C.
    pub fade_warning: Celsius,
    /// Over-temperature threshold, °C, above `fade_warning`.
    pub over_temperature: Celsius,
    /// Hysteresis of both flags, K, ≥ 0.
    pub flag_hysteresis: Celsius,
    /// Plausibility of a measured lining temperature, or `None`.
    pub measured: Option<Plausibility>,
}

/// Validated thermal configuration. Immutable; coefficients fixed at construction.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct ThermalConfig {
    dt: Seconds,
    /// K = I − exp(A·dt), Q62, state order [lining, rotor].
    k: [[i64; 2]; 2],
    /// Γ in K/W per sample, Q62.
    gamma: [i64; 2],
    two_node: bool,
    ambient: Celsius,
    fade_warning: Celsius,
    over_temperature: Celsius,
    flag_hysteresis: Celsius,
    measured: Option<Plausibility>,
    /// The flag thresholds in Q32 °C, as the update compares them: `[fade, over]`, each
    /// `(set above, clear below)` with the hysteresis taken off.
    latch_q32: [(i64, i64); 2],
}

fn finite(v: f64, field: &'static str) -> Result<f64, ThermalError> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(ThermalError::NotRepresentable { field })
    }
}

fn positive(v: f64, field: &'static str) -> Result<f64, ThermalError> {
    if finite(v, field)? > 0.0 {
        Ok(v)
    } else {
        Err(ThermalError::NotPositive { field })
    }
}

fn celsius(v: f64, field: &'static str) -> Result<Celsius, ThermalError> {
    Celsius::checked_from_num(finite(v, field)?).ok_or(ThermalError::NotRepresentable { field })
}

/// f64 → Q62 i64 for a coefficient known to lie in (−2, 2).
fn q62(v: f64, field: &'static str) -> Result<i64, ThermalError> {
    let scaled = libm::round(v * Q62);
    if scaled.is_finite() && scaled.abs() < 2.0 * Q62 {
        // In range by the check above; `as` on an in-range f64 is exact after rounding.
        #[allow(clippy::cast_possible_truncation)]
        Ok(scaled as i64)
    } else {
        Err(ThermalError::HeatCapacityTooSmall { field })
    }
}

/// (e^{λt} − 1)/λ, → t as λ → 0.
fn phi1(lambda: f64, t: f64) -> f64 {
    if lambda == 0.0 {
        t
    } else {
        libm::expm1(lambda * t) / lambda
    }
}

impl ThermalConfig {
    /// Validate parameters and fix the per-sample coefficients.
    ///
    /// # Errors
    /// A [`ThermalError`] naming the offending field.
    ///
    /// ```
    /// use clampwise_core::thermal::{Cooling, ThermalConfig, ThermalParams};
    /// // Demo winch brake disc (invented): 8 kg cast iron, τ = 613 s.
    /// let cfg = ThermalConfig::new(&ThermalParams {
    ///     rotor_mass: 8.0, rotor_specific_heat: 460.0, rotor_share: 1.0,
    ///     cooling: Cooling::TimeConstant(613.0), ambient: 20.0, lining: None,
    ///     fade_warning: 300.0, over_temperature: 450.0, flag_hysteresis: 10.0, measured: None,
    /// }, 1e-3)?;
    /// assert!(!cfg.has_lining_node());
    /// # Ok::<(), clampwise_core::thermal::ThermalError>(())
    /// ```
    pub fn new(p: &ThermalParams, dt_s: f64) -> Result<Self, ThermalError> {
        let dt = positive(dt_s, "dt")?;
        if dt > 1.0 {
            return Err(ThermalError::DtTooLong);
        }
        let c_r = positive(p.rotor_mass, "rotor_mass")?
            * positive(p.rotor_specific_heat, "rotor_specific_heat")?;
        let share = finite(p.rotor_share, "rotor_share")?;
        if !(0.0..=1.0).contains(&share) {
            return Err(ThermalError::RotorShareOutOfRange);
        }
        let h_a = match p.cooling {
            Cooling::Adiabatic => 0.0,
            Cooling::TimeConstant(tau) => c_r / positive(tau, "cooling.time_constant")?,
            Cooling::Conductance(g) => positive(g, "cooling.conductance")?,
        };
        let (k, gamma, two_node) = match p.lining {
            None => {
                let lambda = -h_a / c_r;
                let k_r = -libm::expm1(lambda * dt);
                let g_r = share / c_r * phi1(lambda, dt);
                (
                    [[0, 0], [0, q62(k_r, "rotor")?]],
                    [0, q62(g_r, "rotor_mass")?],
                    false,
                )
            }
            Some(l) => {
                let c_l = positive(l.mass, "lining.mass")?
                    * positive(l.specific_heat, "lining.specific_heat")?;
                let g = positive(l.conductance_to_rotor, "lining.conductance_to_rotor")?;
                let (kk, gg) = two_node_coefficients(c_l, c_r, g, h_a, share, dt);
                (
                    [
                        [q62(kk[0][0], "lining")?, q62(kk[0][1], "lining")?],
                        [q62(kk[1][0], "rotor")?, q62(kk[1][1], "rotor")?],
                    ],
                    [q62(gg[0], "lining.mass")?, q62(gg[1], "rotor_mass")?],
                    true,
                )
            }
        };
        for (g, field) in gamma.iter().zip(["lining.mass", "rotor_mass"]) {
            if *g >= 1 << 62 {
                return Err(ThermalError::HeatCapacityTooSmall { field });
            }
        }
        // Time constants: the eigenvalues of A. Shortest must not be below dt; the longest
        // (nonzero) must keep its decay coefficient resolved.
        let (fast, slow) = rates(p, c_r, h_a);
        if fast > 0.0 && dt * fast > 1.0 {
            #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
            let seconds = (1.0 / fast) as u32;
            return Err(ThermalError::DtAboveTimeConstant { seconds });
        }
        if slow > 0.0 && -libm::expm1(-slow * dt) * Q62 < K_MIN_Q62 as f64 {
            return Err(ThermalError::TimeConstantTooLongForDt);
        }

        let fade_warning = celsius(p.fade_warning, "fade_warning")?;
        let over_temperature = celsius(p.over_temperature, "over_temperature")?;
        let flag_hysteresis = celsius(p.flag_hysteresis, "flag_hysteresis")?;
        if over_temperature <= fade_warning || flag_hysteresis < Celsius::ZERO {
            return Err(ThermalError::FlagThresholds);
        }
        let measured = match p.measured {
            None => None,
            Some(m) => {
                let min = celsius(m.min, "measured.min")?;
                let max = celsius(m.max, "measured.max")?;
                let rate = positive(m.max_rate, "measured.max_rate")?;
                let step = Celsius::checked_from_num(rate * dt)
                    .ok_or(ThermalError::NotRepresentable {
                        field: "measured.max_rate",
                    })?
                    .to_bits();
                if max <= min || step < 1 {
                    return Err(ThermalError::MeasuredLimits);
                }
                Some(Plausibility {
                    min,
                    max,
                    max_step: step,
                })
            }
        };
        Self::from_bits(ThermalRaw {
            dt: Seconds::checked_from_num(dt)
                .ok_or(ThermalError::NotRepresentable { field: "dt" })?,
            k_q62: k,
            gamma_q62: gamma,
            two_node,
            ambient: celsius(p.ambient, "ambient")?,
            fade_warning,
            over_temperature,
            flag_hysteresis,
            measured,
        })
    }

    /// Check integer coefficients (from [`ThermalConfig::to_raw`], usually emitted by a build
    /// script) and build the configuration; `const`, so a firmware keeps it in flash and a bad
    /// value fails the build.
    ///
    /// Checked here: everything the per-sample arithmetic relies on (dt in (0, 1] s, the ranges
    /// of `K` and `Γ` that keep the update's products inside i128, a single-node model carrying
    /// no lining coefficients, the single node's decay resolved: `K ≥ 2⁻⁴⁰` unless adiabatic)
    /// and the flag and plausibility limits. Not checked: the time constants of a two-node
    /// model against dt, which need its eigenvalues ([`ThermalConfig::new`] checks those).
    ///
    /// # Errors
    /// [`ThermalError::NotPositive`] / [`ThermalError::DtTooLong`] for dt,
    /// [`ThermalError::Coefficient`] or [`ThermalError::HeatCapacityTooSmall`] for `K` and `Γ`,
    /// [`ThermalError::TimeConstantTooLongForDt`], [`ThermalError::FlagThresholds`],
    /// [`ThermalError::MeasuredLimits`].
    ///
    /// ```
    /// use clampwise_core::thermal::{Cooling, ThermalConfig, ThermalParams};
    /// let built = ThermalConfig::new(&ThermalParams {
    ///     rotor_mass: 8.0, rotor_specific_heat: 460.0, rotor_share: 1.0,
    ///     cooling: Cooling::TimeConstant(613.0), ambient: 20.0, lining: None,
    ///     fade_warning: 300.0, over_temperature: 450.0, flag_hysteresis: 10.0, measured: None,
    /// }, 1e-3)?;
    /// // In a firmware the raw values are literals emitted at build time.
    /// let raw = built.to_raw();
    /// assert_eq!(ThermalConfig::from_bits(raw), Ok(built));
    /// let mut bad = raw;
    /// bad.k_q62[1][1] = -1;
    /// assert!(ThermalConfig::from_bits(bad).is_err());
    /// # Ok::<(), clampwise_core::thermal::ThermalError>(())
    /// ```
    pub const fn from_bits(raw: ThermalRaw) -> Result<Self, ThermalError> {
        const ONE: i64 = 1 << 62;
        let dt = raw.dt.to_bits();
        if dt <= 0 {
            return Err(ThermalError::NotPositive { field: "dt" });
        }
        if dt > Seconds::ONE.to_bits() {
            return Err(ThermalError::DtTooLong);
        }
        let [[k_ll, k_lr], [k_rl, k_rr]] = raw.k_q62;
        let diagonal_ok = k_ll >= 0 && k_ll < ONE && k_rr >= 0 && k_rr < ONE;
        let coupling_ok = k_lr <= 0 && k_lr > -ONE && k_rl <= 0 && k_rl > -ONE;
        if !diagonal_ok || !coupling_ok {
            return Err(ThermalError::Coefficient { field: "k" });
        }
        let [g_l, g_r] = raw.gamma_q62;
        if g_l < 0 || g_r < 0 {
            return Err(ThermalError::Coefficient { field: "gamma" });
        }
        if g_l >= ONE {
            return Err(ThermalError::HeatCapacityTooSmall {
                field: "lining.mass",
            });
        }
        if g_r >= ONE {
            return Err(ThermalError::HeatCapacityTooSmall {
                field: "rotor_mass",
            });
        }
        if !raw.two_node {
            if k_ll != 0 || k_lr != 0 || k_rl != 0 || g_l != 0 {
                return Err(ThermalError::Coefficient {
                    field: "lining (single-node model)",
                });
            }
            if k_rr != 0 && k_rr < K_MIN_Q62 {
                return Err(ThermalError::TimeConstantTooLongForDt);
            }
        }
        if raw.over_temperature.to_bits() <= raw.fade_warning.to_bits()
            || raw.flag_hysteresis.to_bits() < 0
        {
            return Err(ThermalError::FlagThresholds);
        }
        if let Some(m) = &raw.measured
            && (m.max.to_bits() <= m.min.to_bits() || m.max_step < 1)
        {
            return Err(ThermalError::MeasuredLimits);
        }
        let hysteresis = const_q32(raw.flag_hysteresis);
        let (fade, over) = (const_q32(raw.fade_warning), const_q32(raw.over_temperature));
        Ok(Self {
            latch_q32: [
                (fade, fade.saturating_sub(hysteresis)),
                (over, over.saturating_sub(hysteresis)),
            ],
            dt: raw.dt,
            k: raw.k_q62,
            gamma: raw.gamma_q62,
            two_node: raw.two_node,
            ambient: raw.ambient,
            fade_warning: raw.fade_warning,
            over_temperature: raw.over_temperature,
            flag_hysteresis: raw.flag_hysteresis,
            measured: raw.measured,
        })
    }

    /// The integer coefficients, for [`ThermalConfig::from_bits`] (e.g. to emit them as Rust
    /// source); `from_bits(cfg.to_raw())` gives `cfg` back, equal in every bit.
    pub const fn to_raw(&self) -> ThermalRaw {
        ThermalRaw {
            dt: self.dt,
            k_q62: self.k,
            gamma_q62: self.gamma,
            two_node: self.two_node,
            ambient: self.ambient,
            fade_warning: self.fade_warning,
            over_temperature: self.over_temperature,
            flag_hysteresis: self.flag_hysteresis,
            measured: self.measured,
        }
    }

    /// Sample period (s).
    pub const fn dt(&self) -> Seconds {
        self.dt
    }

    /// Ambient temperature (°C).
    pub const fn ambient(&self) -> Celsius {
        self.ambient
    }

    /// Whether the lining is modelled as its own node.
    pub const fn has_lining_node(&self) -> bool {
        self.two_node
    }

    /// Fade-warning threshold (°C).
    pub const fn fade_warning(&self) -> Celsius {
        self.fade_warning
    }

    /// Over-temperature threshold (°C).
    pub const fn over_temperature(&self) -> Celsius {
        self.over_temperature
    }
}

/// Decay rates (1/s) of the fastest and slowest nonzero modes.
fn rates(p: &ThermalParams, c_r: f64, h_a: f64) -> (f64, f64) {
    match p.lining {
        None => {
            let r = h_a / c_r;
            (r, r)
        }
        Some(l) => {
            let c_l = l.mass * l.specific_heat;
            let g = l.conductance_to_rotor;
            let (l1, l2) = eigenvalues(-g / c_l, g / c_l, g / c_r, -(g + h_a) / c_r);
            // l2 ≤ l1 ≤ 0; l1 = 0 when adiabatic.
            (-l2, if l1 < 0.0 { -l1 } else { -l2 })
        }
    }
}

/// Eigenvalues of [[a, b], [c, d]] with b·c > 0 (real, distinct): (larger, smaller).
fn eigenvalues(a: f64, b: f64, c: f64, d: f64) -> (f64, f64) {
    let half_tr = 0.5 * (a + d);
    let det = a * d - b * c;
    let disc = libm::sqrt(0.25 * (a - d) * (a - d) + b * c);
    let small = half_tr - disc; // both terms ≤ 0: no cancellation
    let large = if small == 0.0 { 0.0 } else { det / small };
    (large, small)
}

/// K = I − exp(A dt) and Γ = ∫ exp(A s) ds · B for the two-node model, state [lining, rotor].
fn two_node_coefficients(
    c_l: f64,
    c_r: f64,
    g: f64,
    h_a: f64,
    share: f64,
    dt: f64,
) -> ([[f64; 2]; 2], [f64; 2]) {
    let a = [[-g / c_l, g / c_l], [g / c_r, -(g + h_a) / c_r]];
    let b = [(1.0 - share) / c_l, share / c_r];
    let (l1, l2) = eigenvalues(a[0][0], a[0][1], a[1][0], a[1][1]);
    let span = l1 - l2;
    // exp(A t) − I = [expm1(l1 t)(A − l2 I) − expm1(l2 t)(A − l1 I)] / (l1 − l2)
    let (e1, e2) = (libm::expm1(l1 * dt), libm::expm1(l2 * dt));
    let (p1, p2) = (phi1(l1, dt), phi1(l2, dt));
    let mut k = [[0.0; 2]; 2];
    let mut m = [[0.0; 2]; 2];
    for (i, (krow, mrow)) in k.iter_mut().zip(m.iter_mut()).enumerate() {
        for (j, (kv, mv)) in krow.iter_mut().zip(mrow.iter_mut()).enumerate() {
            let aij = a.get(i).and_then(|r| r.get(j)).copied().unwrap_or(0.0);
            let eye = if i == j { 1.0 } else { 0.0 };
            let (x2, x1) = (aij - l2 * eye, aij - l1 * eye);
            *kv = -(e1 * x2 - e2 * x1) / span;
            *mv = (p1 * x2 - p2 * x1) / span;
        }
    }
    let gamma = [
        m[0][0] * b[0] + m[0][1] * b[1],
        m[1][0] * b[0] + m[1][1] * b[1],
    ];
    (k, gamma)
}

/// What [`ThermalState::update`] reports for one sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ThermalSample {
    /// Lining temperature to use (°C): the accepted measurement, else the model.
    pub lining_temperature: Celsius,
    /// Rotor temperature (°C), model.
    pub rotor_temperature: Celsius,
    /// The hotter of lining and rotor is above the fade threshold (with hysteresis).
    pub fade_warning: bool,
    /// The hotter of lining and rotor is above the over-temperature threshold (with hysteresis).
    pub over_temperature: bool,
    /// A measured temperature was given, plausible, and used.
    pub measured_used: bool,
    /// A measured temperature was given but failed the range or rate check; the model was used.
    pub measured_rejected: bool,
}

/// Per-brake thermal state. Temperatures in Q32 °C.
///
/// Both temperatures stay within [−2⁴⁷, 2⁴⁷) (−32 768 … 32 768 °C): the model clamps them to
/// −273 … 32 767 °C and an accepted measurement is a [`Celsius`]; the update and the output
/// rounding rely on this bound.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct ThermalState {
    lining_q32: i64,
    rotor_q32: i64,
    last_measured: Option<Celsius>,
    fade: bool,
    over: bool,
}

fn to_q32(t: Celsius) -> i64 {
    i64::from(t.to_bits()) << 16
}

/// [`to_q32`] in a `const` context.
const fn const_q32(t: Celsius) -> i64 {
    // i32 → i64 is lossless (`From` is not available in `const`).
    (t.to_bits() as i64) << 16
}

fn from_q32(t: i64) -> Celsius {
    // A state temperature lies in [−2⁴⁷, 2⁴⁷ − 2¹⁶] (see `ThermalState`), so adding ½ LSB
    // cannot overflow and the rounded value lies in [−2³¹, 2³¹ − 1]: the cast is exact.
    #[allow(clippy::cast_possible_truncation)]
    Celsius::from_bits((t.wrapping_add(1 << 15) >> 16) as i32)
}

/// One node's update: `x + ⌊(Γ·P − Σ K·θ + 2⁶¹) / 2⁶²⌋` (the Q62 change rounded to the
/// nearest Q32 step), clamped to the state's range; `decay_gain = Γ·P − Σ K·θ` is exact (below
/// 2¹²⁷ in magnitude, see the update).
// Out of line on 32-bit cores: three copies of the i128 rounding cost more flash than calls.
#[cfg_attr(not(target_pointer_width = "64"), inline(never))]
fn node_step(x: i64, decay_gain: i128) -> i64 {
    const LIMIT: i128 = 1 << 62;
    let delta = decay_gain.wrapping_add(1i128 << 61) >> 62;
    // |x| < 2⁴⁷: a |delta| beyond 2⁶² leaves the range whichever way it is cut, so limiting it
    // to ±2⁶² first gives the clamp of the exact sum, and the sum then cannot wrap.
    #[allow(clippy::cast_possible_truncation)] // within ±2⁶² after the clamp
    let delta = delta.clamp(-LIMIT, LIMIT) as i64;
    x.wrapping_add(delta).clamp(T_FLOOR_Q32, T_CEIL_Q32)
}

/// Γ·P, exact: 0 ≤ Γ < 2⁶² (checked by `from_bits`, so the sign cast keeps the value) and
/// P ≤ 2⁶³ give a product below 2¹²⁵.
#[inline(always)]
fn heating(gamma: i64, power: u64) -> i128 {
    crate::wide::mul_u64(gamma.cast_unsigned(), power).cast_signed()
}

/// K·θ, exact: |K| < 2⁶² and |θ| < 2⁴⁸ give a product below 2¹¹⁰ in magnitude.
#[inline(always)]
fn decay(k: i64, theta: i64) -> i128 {
    crate::wide::mul_i64(k, theta)
}

impl ThermalState {
    /// Rotor and lining at ambient.
    ///
    /// ```
    /// use clampwise_core::thermal::{Cooling, ThermalConfig, ThermalParams, ThermalState};
    /// # let cfg = ThermalConfig::new(&ThermalParams {
    /// #     rotor_mass: 8.0, rotor_specific_heat: 460.0, rotor_share: 1.0,
    /// #     cooling: Cooling::TimeConstant(613.0), ambient: 20.0, lining: None,
    /// #     fade_warning: 300.0, over_temperature: 450.0, flag_hysteresis: 10.0, measured: None,
    /// # }, 1e-3)?;
    /// let s = ThermalState::new(&cfg);
    /// assert_eq!(s.rotor_temperature(), cfg.ambient());
    /// # Ok::<(), clampwise_core::thermal::ThermalError>(())
    /// ```
    pub fn new(cfg: &ThermalConfig) -> Self {
        Self::with_temperatures(cfg.ambient, cfg.ambient)
    }

    /// Start from known temperatures (°C), e.g. after a power cycle.
    pub fn with_temperatures(rotor: Celsius, lining: Celsius) -> Self {
        Self::from_bits(to_q32(rotor), to_q32(lining))
    }

    /// Restore from Q32 °C values (as saved by [`crate::state_record`]); clamped to the state's range.
    pub(crate) fn from_bits(rotor_q32: i64, lining_q32: i64) -> Self {
        Self {
            lining_q32: lining_q32.clamp(T_FLOOR_Q32, T_CEIL_Q32),
            rotor_q32: rotor_q32.clamp(T_FLOOR_Q32, T_CEIL_Q32),
            last_measured: None,
            fade: false,
            over: false,
        }
    }

    pub(crate) const fn raw(&self) -> (i64, i64) {
        (self.rotor_q32, self.lining_q32)
    }

    /// Model rotor temperature (°C).
    #[inline]
    pub fn rotor_temperature(&self) -> Celsius {
        from_q32(self.rotor_q32)
    }

    /// Model lining temperature (°C); the rotor's without a lining node.
    #[inline]
    pub fn lining_temperature(&self) -> Celsius {
        from_q32(self.lining_q32)
    }

    /// The fade warning as last latched (see [`ThermalSample::fade_warning`]).
    pub const fn fade_warning(&self) -> bool {
        self.fade
    }

    /// The over-temperature flag as last latched (see [`ThermalSample::over_temperature`]).
    pub const fn over_temperature(&self) -> bool {
        self.over
    }

    /// One sample: heat with `power` (W; its magnitude is used) held over dt, cool, then take a
    /// plausible `measured` lining temperature (°C) over the model. Integer-only, O(1).
    ///
    /// An accepted measurement also moves the model's lining node (the rotor without a lining
    /// node) to it, so a later drop-out continues from the last good reading.
    ///
    /// ```
    /// use clampwise_core::thermal::{Cooling, ThermalConfig, ThermalParams, ThermalState};
    /// use clampwise_core::units::Watts;
    /// let cfg = ThermalConfig::new(&ThermalParams {
    ///     rotor_mass: 8.0, rotor_specific_heat: 460.0, rotor_share: 1.0,
    ///     cooling: Cooling::Adiabatic, ambient: 20.0, lining: None,
    ///     fade_warning: 300.0, over_temperature: 450.0, flag_hysteresis: 10.0, measured: None,
    /// }, 1e-3)?;
    /// let mut s = ThermalState::new(&cfg);
    /// // 202.5 kJ as 67.5 kW over 3 s → +55.03 K (202.5e3 / (8 · 460)).
    /// let mut out = s.update(&cfg, Watts::from_num(67_500), None);
    /// for _ in 1..3000 { out = s.update(&cfg, Watts::from_num(67_500), None); }
    /// let rise = out.rotor_temperature.to_num::<f64>() - 20.0;
    /// assert!((rise - 202.5e3 / (8.0 * 460.0)).abs() < 1e-4);
    /// # Ok::<(), clampwise_core::thermal::ThermalError>(())
    /// ```
    pub fn update(
        &mut self,
        cfg: &ThermalConfig,
        power: Watts,
        measured: Option<Celsius>,
    ) -> ThermalSample {
        self.update_with_ambient(cfg, power, measured, None)
    }

    /// As [`ThermalState::update`], cooling toward a measured `ambient` (°C) instead of the
    /// configured one when it is given (cooling air or oil temperature changes over a duty).
    pub fn update_with_ambient(
        &mut self,
        cfg: &ThermalConfig,
        power: Watts,
        measured: Option<Celsius>,
        ambient: Option<Celsius>,
    ) -> ThermalSample {
        let (measured_used, measured_rejected) = self.advance(cfg, power, measured, ambient);
        ThermalSample {
            lining_temperature: self.lining_temperature(),
            rotor_temperature: self.rotor_temperature(),
            fade_warning: self.fade,
            over_temperature: self.over,
            measured_used,
            measured_rejected,
        }
    }

    /// [`ThermalState::update_with_ambient`] without building the sample, for callers that
    /// read only part of it: `(measured_used, measured_rejected)`.
    pub(crate) fn advance(
        &mut self,
        cfg: &ThermalConfig,
        power: Watts,
        measured: Option<Celsius>,
        ambient: Option<Celsius>,
    ) -> (bool, bool) {
        let p = power.to_bits().unsigned_abs();
        let amb = to_q32(ambient.unwrap_or(cfg.ambient));
        // Temperatures lie within [−2⁴⁷, 2⁴⁷) in Q32 (see `ThermalState`) and so does the
        // ambient, so each difference is exact (|θ| < 2⁴⁸). Every product below is exact and
        // every sum stays far inside i128 (each K·θ below 2¹¹⁰, Γ·P below 2¹²⁵): `wrapping_`
        // is the exact result here, states that no overflow is handled, and has no panic path.
        let theta_r = self.rotor_q32.wrapping_sub(amb);
        let [[k_ll, k_lr], [k_rl, k_rr]] = cfg.k;
        let [g_l, g_r] = cfg.gamma;
        if cfg.two_node {
            let theta_l = self.lining_q32.wrapping_sub(amb);
            let lining = heating(g_l, p)
                .wrapping_sub(decay(k_ll, theta_l))
                .wrapping_sub(decay(k_lr, theta_r));
            let rotor = heating(g_r, p)
                .wrapping_sub(decay(k_rl, theta_l))
                .wrapping_sub(decay(k_rr, theta_r));
            self.lining_q32 = node_step(self.lining_q32, lining);
            self.rotor_q32 = node_step(self.rotor_q32, rotor);
        } else {
            // A single-node model has no lining coefficients (`from_bits` holds them at zero),
            // so the rotor row is the whole update.
            self.rotor_q32 = node_step(
                self.rotor_q32,
                heating(g_r, p).wrapping_sub(decay(k_rr, theta_r)),
            );
            self.lining_q32 = self.rotor_q32;
        }

        let mut measured_used = false;
        let mut measured_rejected = false;
        if let (Some(m), Some(pl)) = (measured, cfg.measured) {
            let in_range = m >= pl.min && m <= pl.max;
            let rate_ok = self.last_measured.is_none_or(|last| {
                (i64::from(m.to_bits()) - i64::from(last.to_bits())).abs() <= i64::from(pl.max_step)
            });
            if in_range && rate_ok {
                measured_used = true;
                self.lining_q32 = to_q32(m);
                if !cfg.two_node {
                    self.rotor_q32 = self.lining_q32;
                }
            } else {
                measured_rejected = true;
            }
        }
        self.last_measured = if cfg.measured.is_some() {
            measured
        } else {
            None
        };

        let hottest = self.lining_q32.max(self.rotor_q32);
        let latch = |on: bool, (set, clear): (i64, i64)| {
            if on { hottest >= clear } else { hottest > set }
        };
        let [fade, over] = cfg.latch_q32;
        self.fade = latch(self.fade, fade);
        self.over = latch(self.over, over);
        (measured_used, measured_rejected)
    }
}

// Part of the estimator's snapshot (`crate::estimator::snapshot`).
impl crate::estimator::snapshot::Snapshot for ThermalState {
    const LEN: usize = 2 * 8 + 5 + 2;
    fn write(&self, w: &mut crate::estimator::snapshot::Writer<'_>) {
        w.i64(self.lining_q32);
        w.i64(self.rotor_q32);
        w.option_i32(self.last_measured.map(Celsius::to_bits));
        w.bool(self.fade);
        w.bool(self.over);
    }
    fn read(r: &mut crate::estimator::snapshot::Reader<'_>) -> Option<Self> {
        let in_range = |t: i64| (T_FLOOR_Q32..=T_CEIL_Q32).contains(&t);
        let lining_q32 = r.i64()?;
        r.check(in_range(lining_q32), "thermal.lining")?;
        let rotor_q32 = r.i64()?;
        r.check(in_range(rotor_q32), "thermal.rotor")?;
        Some(Self {
            lining_q32,
            rotor_q32,
            last_measured: r
                .option_i32("thermal.last_measured")?
                .map(Celsius::from_bits),
            fade: r.bool("thermal.fade")?,
            over: r.bool("thermal.over")?,
        })
    }
}

#[cfg(test)]
mod tests;
