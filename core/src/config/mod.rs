//! One validated configuration for a whole device: the friction-radius table, the μ model, the
//! thermal and wear models, the force sensors, the optional adaptation, limits, tolerances and
//! the sample period.
//!
//! Two ways in:
//!
//! - [`DeviceConfig::new`] from SI values ([`DeviceParams`]): the sample period is stated once
//!   and every model is built for it (host, start-up, bindings);
//! - [`DeviceConfig::from_parts`] from parts already in fixed point ([`DeviceParts`], each
//!   validated by its own `from_bits` constructor), a `const fn`: a firmware builds its
//!   configuration at compile time and keeps it in flash, and a mistake in it fails the build.
//!   Parts built apart are checked against each other (one sample period everywhere).
//!
//! Each error names the offending field. The device is generic over its tables `T`
//! ([`Tables`], exact sizes) and its number of force channels `C`.

use core::fmt;
use core::mem::MaybeUninit;

mod params;
mod tables;

pub use params::{DeviceError, DeviceParams, SensorParams};
pub use tables::{AxisKind, ByBedding, ByEither, ByMu, LeverAxis, TableSet, Tables};

use crate::adapt::AdaptConfig;
use crate::estimator::Combination;
use crate::sensor::SensorConfig;
use crate::thermal::ThermalConfig;
use crate::units::{Newtons, Ratio, Seconds};
use crate::wear::WearConfig;

/// A configuration field that failed validation, with the reason.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum ConfigError {
    /// `faces` must be 1…255 friction interfaces.
    Faces,
    /// `sample_period_s` must be positive and at most 1 s.
    SamplePeriod,
    /// The thermal model was built for a different period than `sample_period` ×
    /// `thermal_wear_every`.
    ThermalSamplePeriod,
    /// `thermal_wear_every` must be 1, 2, 4, 8, 16 or 32 samples.
    ThermalWearEvery,
    /// The wear model was built for a different sample period.
    WearSamplePeriod,
    /// The sensor conditioning was built for a different sample rate.
    SensorSampleRate,
    /// `limits.touch_force_n` must be ≥ 0.
    TouchForce,
    /// `limits.adapt_min_force_n` must be ≥ `limits.touch_force_n`.
    AdaptMinForce,
    /// `tolerances.mu` must be in [0, 1).
    MuTolerance,
    /// `tolerances.radius` must be in [0, 1).
    RadiusTolerance,
}

impl ConfigError {
    /// The configuration key at fault, as spelled in the simulator's TOML files.
    pub const fn field(&self) -> &'static str {
        match self {
            Self::Faces => "contact.faces",
            Self::SamplePeriod => "sample_period_s",
            Self::ThermalSamplePeriod => "thermal (sample period)",
            Self::ThermalWearEvery => "device.thermal_wear_every",
            Self::WearSamplePeriod => "wear (sample period)",
            Self::SensorSampleRate => "sensors (sample rate)",
            Self::TouchForce => "limits.touch_force_n",
            Self::AdaptMinForce => "limits.adapt_min_force_n",
            Self::MuTolerance => "tolerances.mu",
            Self::RadiusTolerance => "tolerances.radius",
        }
    }
}

impl fmt::Display for ConfigError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let why = match self {
            Self::Faces => "must be between 1 and 255 friction interfaces",
            Self::SamplePeriod => "must be positive and at most 1 s",
            Self::ThermalSamplePeriod => {
                "was built for a different period than the device's sample period × thermal_wear_every"
            }
            Self::ThermalWearEvery => "must be 1, 2, 4, 8, 16 or 32 samples",
            Self::WearSamplePeriod => "was built for a different sample period than the device",
            Self::SensorSampleRate => "was built for a different sample rate than the device",
            Self::TouchForce => "must not be negative",
            Self::AdaptMinForce => "must not be below limits.touch_force_n",
            Self::MuTolerance => "must be within [0, 1)",
            Self::RadiusTolerance => "must be within [0, 1)",
        };
        write!(f, "`{}` {why}", self.field())
    }
}

impl core::error::Error for ConfigError {}

/// Force thresholds of the pipeline.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Limits {
    /// Below this clamp force the contact is released: torque is the drag alone (N).
    pub touch_force: Newtons,
    /// The adaptation learns only above this clamp force (N).
    pub adapt_min_force: Newtons,
}

/// Relative tolerances behind the reported ± uncertainty.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Tolerances {
    /// Relative tolerance of μ (e.g. 0.20 for ±20 %; μ dominates the budget \[practice\]).
    pub mu: Ratio,
    /// Relative tolerance of the effective radius.
    pub radius: Ratio,
    /// How the relative tolerances combine.
    pub combination: Combination,
}

/// A value from f64 into a fixed-point type, or `error`.
fn fixed_or<F: fixed::traits::Fixed>(v: f64, error: ConfigError) -> Result<F, ConfigError> {
    if v.is_finite() {
        F::checked_from_num(v).ok_or(error)
    } else {
        Err(error)
    }
}

impl Limits {
    /// Thresholds from SI values: the touch force and the least force the adaptation learns
    /// at (N, 0 ≤ touch ≤ adapt).
    ///
    /// # Errors
    /// [`ConfigError::TouchForce`] or [`ConfigError::AdaptMinForce`].
    pub fn new(touch_force_n: f64, adapt_min_force_n: f64) -> Result<Self, ConfigError> {
        let limits = Self {
            touch_force: fixed_or(touch_force_n, ConfigError::TouchForce)?,
            adapt_min_force: fixed_or(adapt_min_force_n, ConfigError::AdaptMinForce)?,
        };
        if limits.touch_force < Newtons::ZERO {
            return Err(ConfigError::TouchForce);
        }
        if limits.adapt_min_force < limits.touch_force {
            return Err(ConfigError::AdaptMinForce);
        }
        Ok(limits)
    }
}

impl Tolerances {
    /// Relative tolerances of μ and r_e (each in [0, 1)) combined as the worst case, so that
    /// the reported ± is a bound.
    ///
    /// # Errors
    /// [`ConfigError::MuTolerance`] or [`ConfigError::RadiusTolerance`].
    pub fn worst_case(mu: f64, radius: f64) -> Result<Self, ConfigError> {
        let in_range = |v: f64| (0.0..1.0).contains(&v);
        if !in_range(mu) {
            return Err(ConfigError::MuTolerance);
        }
        if !in_range(radius) {
            return Err(ConfigError::RadiusTolerance);
        }
        Ok(Self {
            mu: fixed_or(mu, ConfigError::MuTolerance)?,
            radius: fixed_or(radius, ConfigError::RadiusTolerance)?,
            combination: Combination::WorstCase,
        })
    }
}

/// The whole device: its tables `T` (usually [`Tables`], at their exact sizes) and `C` force
/// channels.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DeviceConfig<T, const C: usize> {
    pub(crate) sample_period: Seconds,
    /// log₂ of `thermal_wear_every` (0 ..= 5).
    pub(crate) thermal_wear_shift: u8,
    pub(crate) faces: u8,
    pub(crate) tables: T,
    pub(crate) thermal: ThermalConfig,
    pub(crate) wear: WearConfig,
    pub(crate) sensor: SensorConfig<C>,
    pub(crate) adapt: Option<AdaptConfig>,
    pub(crate) limits: Limits,
    pub(crate) tolerances: Tolerances,
}

/// The parts of a [`DeviceConfig`], each already validated by its own constructor.
#[derive(Clone, Copy, Debug)]
pub struct DeviceParts<T, const C: usize> {
    /// Control-loop sample period (s).
    pub sample_period: Seconds,
    /// The thermal and wear states advance once every this many samples (1, 2, 4, 8, 16 or
    /// 32), with the energy of all of them: a sub-rate task inside the step. 1 advances them
    /// every sample. The thermal model must be built for `sample_period` × this; the wear
    /// model for `sample_period`.
    pub thermal_wear_every: u8,
    /// Number of friction interfaces sharing the clamp force (1…255).
    pub faces: u8,
    /// The friction-radius table (per-face lever arm r_e in m, already divided by sin α for a
    /// cone, over force × bedding) and the μ model.
    pub tables: T,
    /// Thermal model.
    pub thermal: ThermalConfig,
    /// Wear and bedding model.
    pub wear: WearConfig,
    /// Force-sensor conditioning.
    pub sensor: SensorConfig<C>,
    /// Optional online μ correction.
    pub adapt: Option<AdaptConfig>,
    /// Force thresholds.
    pub limits: Limits,
    /// Tolerances behind the uncertainty.
    pub tolerances: Tolerances,
}

/// Whether `a` and `b` are the same period to within 1 ppm (sample periods that went through
/// different unit conversions).
const fn same_period(a: Seconds, b: Seconds) -> bool {
    let (a, b) = (a.to_bits(), b.to_bits());
    let diff = if a > b { a - b } else { b - a };
    diff <= a / 1_000_000 + 1
}

impl<T: TableSet, const C: usize> DeviceConfig<T, C> {
    /// Check the parts against each other and build the device configuration.
    ///
    /// # Errors
    /// The [`ConfigError`] naming the first field at fault.
    pub const fn from_parts(parts: DeviceParts<T, C>) -> Result<Self, ConfigError> {
        match Self::checked_shift(&parts) {
            Ok(thermal_wear_shift) => Ok(Self::assemble(&parts, thermal_wear_shift)),
            Err(e) => Err(e),
        }
    }

    /// As [`Self::from_parts`], but the configuration is written into `out` and the parts are
    /// borrowed: a run-time build (a C firmware's device, kept in the caller's storage) then
    /// holds no by-value copy of the whole configuration on its stack. On an error `out` is
    /// left as it was.
    ///
    /// # Errors
    /// The [`ConfigError`] naming the first field at fault.
    pub fn from_parts_in<'o>(
        out: &'o mut MaybeUninit<Self>,
        parts: &DeviceParts<T, C>,
    ) -> Result<&'o mut Self, ConfigError> {
        let thermal_wear_shift = Self::checked_shift(parts)?;
        Ok(out.write(Self::assemble(parts, thermal_wear_shift)))
    }

    /// The parts checked against each other: log₂ of `thermal_wear_every`, or the first field
    /// at fault.
    const fn checked_shift(parts: &DeviceParts<T, C>) -> Result<u8, ConfigError> {
        let period = parts.sample_period.to_bits();
        if period <= 0 || period > Seconds::ONE.to_bits() {
            return Err(ConfigError::SamplePeriod);
        }
        if parts.faces == 0 {
            return Err(ConfigError::Faces);
        }
        let every = parts.thermal_wear_every;
        if !every.is_power_of_two() || every > 32 {
            return Err(ConfigError::ThermalWearEvery);
        }
        // period ≤ 2³² and every ≤ 2⁵: the product fits the i64 bits of `Seconds`.
        let thermal_period = Seconds::from_bits(period * every as i64);
        if !same_period(parts.thermal.dt(), thermal_period) {
            return Err(ConfigError::ThermalSamplePeriod);
        }
        if !same_period(parts.wear.dt(), parts.sample_period) {
            return Err(ConfigError::WearSamplePeriod);
        }
        // rate · period = 1 s within 1 ppm.
        let rate = parts.sensor.sample_rate_hz() as i64;
        let product = rate * period;
        let one = Seconds::ONE.to_bits();
        let diff = if product > one {
            product - one
        } else {
            one - product
        };
        if rate == 0 || diff > one / 1_000_000 + rate {
            return Err(ConfigError::SensorSampleRate);
        }
        if parts.limits.touch_force.to_bits() < 0 {
            return Err(ConfigError::TouchForce);
        }
        if parts.limits.adapt_min_force.to_bits() < parts.limits.touch_force.to_bits() {
            return Err(ConfigError::AdaptMinForce);
        }
        let mu = parts.tolerances.mu.to_bits();
        if mu < 0 || mu >= Ratio::ONE.to_bits() {
            return Err(ConfigError::MuTolerance);
        }
        let radius = parts.tolerances.radius.to_bits();
        if radius < 0 || radius >= Ratio::ONE.to_bits() {
            return Err(ConfigError::RadiusTolerance);
        }
        // A power of two up to 32: the shift is 0 ..= 5.
        #[allow(clippy::cast_possible_truncation)]
        let thermal_wear_shift = every.trailing_zeros() as u8;
        Ok(thermal_wear_shift)
    }

    /// The configuration of checked parts.
    #[inline]
    const fn assemble(parts: &DeviceParts<T, C>, thermal_wear_shift: u8) -> Self {
        Self {
            sample_period: parts.sample_period,
            thermal_wear_shift,
            faces: parts.faces,
            tables: parts.tables,
            thermal: parts.thermal,
            wear: parts.wear,
            sensor: parts.sensor,
            adapt: parts.adapt,
            limits: parts.limits,
            tolerances: parts.tolerances,
        }
    }

    /// Control-loop sample period (s).
    pub const fn sample_period(&self) -> Seconds {
        self.sample_period
    }

    /// The thermal and wear states advance once every this many samples.
    pub const fn thermal_wear_every(&self) -> u8 {
        1 << self.thermal_wear_shift
    }

    /// Number of friction interfaces.
    pub const fn faces(&self) -> u8 {
        self.faces
    }

    /// The friction-radius and μ tables.
    pub const fn tables(&self) -> &T {
        &self.tables
    }

    /// The thermal model.
    pub const fn thermal(&self) -> &ThermalConfig {
        &self.thermal
    }

    /// The wear model.
    pub const fn wear(&self) -> &WearConfig {
        &self.wear
    }

    /// The sensor conditioning.
    pub const fn sensor(&self) -> &SensorConfig<C> {
        &self.sensor
    }

    /// The adaptation, when configured.
    pub const fn adapt(&self) -> Option<&AdaptConfig> {
        self.adapt.as_ref()
    }

    /// Force thresholds.
    pub const fn limits(&self) -> &Limits {
        &self.limits
    }

    /// Tolerances behind the uncertainty.
    pub const fn tolerances(&self) -> &Tolerances {
        &self.tolerances
    }
}
