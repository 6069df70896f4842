//! A whole device from SI values, with the sample period stated once: [`DeviceConfig::new`]
//! builds the thermal and wear models, the sensor conditioning and its filter for that period
//! and checks the parts against each other.

use core::fmt;

use super::{ConfigError, DeviceConfig, DeviceParts, Limits, TableSet, Tolerances};
use crate::adapt::AdaptConfig;
use crate::friction::FrictionError;
use crate::geometry::GeometryError;
use crate::sensor::{
    ActuatorTransfer, ChannelCalibration, DiagnosticLimits, LowPass, SensorConfig, SensorError,
    VotingLimits,
};
use crate::table::TableError;
use crate::thermal::{ThermalConfig, ThermalError, ThermalParams};
use crate::units::Seconds;
use crate::wear::{WearConfig, WearError, WearParams};

/// The force sensors of a device, in SI values; the sample rate comes from the device.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SensorParams<const C: usize> {
    /// Calibration of each force channel (1 to 4).
    pub channels: [ChannelCalibration; C],
    /// Cut-off of the first-order low-pass on the voted force (Hz, below Nyquist).
    pub filter_cutoff_hz: f64,
    /// Diagnostic limits shared by the channels.
    pub limits: DiagnosticLimits,
    /// How far the channels may disagree and what a healthy one is worth.
    pub voting: VotingLimits,
    /// The actuator's command-to-force transfer, or `None` when no command is available.
    pub fallback: Option<ActuatorTransfer>,
}

/// Every setting of a device in SI values (f64 where a model's coefficients are derived, the
/// core's fixed-point types where a value is used as it is). The sample period appears here
/// once; [`DeviceConfig::new`] builds each model for it.
#[derive(Clone, Copy, Debug)]
pub struct DeviceParams<T, const C: usize> {
    /// Control-loop sample period (s, 0 < period ≤ 1, the period of a whole sample rate in Hz
    /// within 1 ppm).
    pub sample_period_s: f64,
    /// The thermal and wear states advance once every this many samples (1, 2, 4, 8, 16 or
    /// 32), with the energy of all of them.
    pub thermal_wear_every: u8,
    /// Number of friction interfaces sharing the clamp force (1…255).
    pub faces: u8,
    /// The friction-radius and μ tables.
    pub tables: T,
    /// Thermal model.
    pub thermal: ThermalParams,
    /// Wear and bedding model.
    pub wear: WearParams,
    /// Force sensors.
    pub sensor: SensorParams<C>,
    /// Optional online μ correction.
    pub adapt: Option<AdaptConfig>,
    /// Force thresholds.
    pub limits: Limits,
    /// Tolerances behind the uncertainty.
    pub tolerances: Tolerances,
}

/// Why a device could not be built from its [`DeviceParams`]: the part and its own error.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum DeviceError {
    /// The device-level settings (period, faces, limits, tolerances).
    Config(ConfigError),
    /// The thermal model.
    Thermal(ThermalError),
    /// The wear model.
    Wear(WearError),
    /// The force sensors or their filter.
    Sensor(SensorError),
    /// The contact geometry or the friction-radius table built from it.
    Geometry(GeometryError),
    /// A lookup table's breakpoints or values.
    Table(TableError),
    /// The μ model's parameters.
    Friction(FrictionError),
}

impl fmt::Display for DeviceError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Config(e) => write!(f, "device: {e}"),
            Self::Thermal(e) => write!(f, "thermal: {e}"),
            Self::Wear(e) => write!(f, "wear: {e}"),
            Self::Sensor(e) => write!(f, "sensors: {e}"),
            Self::Geometry(e) => write!(f, "geometry: {e}"),
            Self::Table(e) => write!(f, "table: {e}"),
            Self::Friction(e) => write!(f, "friction: {e}"),
        }
    }
}

impl core::error::Error for DeviceError {}

/// `From` each part's error into [`DeviceError`], so `?` works across the parts.
macro_rules! device_error_from {
    ($($error:ty => $variant:ident),* $(,)?) => {
        $(impl From<$error> for DeviceError {
            fn from(e: $error) -> Self {
                Self::$variant(e)
            }
        })*
    };
}

device_error_from!(
    ConfigError => Config,
    ThermalError => Thermal,
    WearError => Wear,
    SensorError => Sensor,
    GeometryError => Geometry,
    TableError => Table,
    FrictionError => Friction,
);

/// The whole sample rate in Hz of a period in seconds, when there is one within 1 ppm.
fn sample_rate_hz(period_s: f64) -> Option<u32> {
    let rate = libm::round(1.0 / period_s);
    let whole = rate >= 1.0 && rate <= f64::from(u32::MAX);
    // The float-to-int cast saturates; `whole` has already bounded it.
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    (whole && libm::fabs(rate * period_s - 1.0) <= 1e-6).then_some(rate as u32)
}

impl<T: TableSet, const C: usize> DeviceConfig<T, C> {
    /// Build every part for the one sample period and check them against each other.
    ///
    /// # Errors
    /// The [`DeviceError`] of the first part at fault; a period that is not positive, above
    /// 1 s or not a whole sample rate in Hz is [`ConfigError::SamplePeriod`].
    pub fn new(p: &DeviceParams<T, C>) -> Result<Self, DeviceError> {
        let period = p.sample_period_s;
        if !(period > 0.0 && period <= 1.0) {
            return Err(ConfigError::SamplePeriod.into());
        }
        let rate = sample_rate_hz(period).ok_or(ConfigError::SamplePeriod)?;
        let every = p.thermal_wear_every;
        if !every.is_power_of_two() || every > 32 {
            return Err(ConfigError::ThermalWearEvery.into());
        }
        let thermal = ThermalConfig::new(&p.thermal, period * f64::from(every))?;
        let wear = WearConfig::new(&p.wear, period)?;
        let s = &p.sensor;
        let filter = LowPass::new(s.filter_cutoff_hz, rate)?;
        let sensor = SensorConfig::new(rate, s.channels, filter, s.limits, s.voting, s.fallback)?;
        let sample_period = Seconds::checked_from_num(period).ok_or(ConfigError::SamplePeriod)?;
        Ok(Self::from_parts(DeviceParts {
            sample_period,
            thermal_wear_every: every,
            faces: p.faces,
            tables: p.tables,
            thermal,
            wear,
            sensor,
            adapt: p.adapt,
            limits: p.limits,
            tolerances: p.tolerances,
        })?)
    }
}
