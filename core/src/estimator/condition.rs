//! Start an estimator from a known lining condition (temperature and history) rather than from
//! a new, cold lining: after a power cycle without a saved record, on a test bench that starts
//! hot, or to set up a test at a chosen point of the envelope.

use super::{Estimator, EstimatorState};
use crate::adapt::AdaptState;
use crate::config::DeviceConfig;
use crate::friction::FrictionState;
use crate::sensor::SensorState;
use crate::thermal::ThermalState;
use crate::units::{Celsius, Joules};
use crate::wear::WearState;

impl<'c, const C: usize, const NF: usize, const NB: usize, const NT: usize, const NV: usize>
    Estimator<'c, C, NF, NB, NT, NV>
{
    /// An estimator whose lining (and rotor) start at `lining_temperature` (°C; the thermal
    /// state's range is −273 … 32 767 °C, values outside are clamped) and whose lining has
    /// already dissipated `energy` (J, ≥ 0; a negative value is taken as 0) since it was new,
    /// with the bedding and wear the wear model gives for that energy. Otherwise as
    /// [`Estimator::new`]: holding, sensors unprimed, adaptation factor 1.
    ///
    /// Rotor and lining start at the same temperature, as after a soak. Start-up only: the wear
    /// history is converted with floating point ([`WearState::with_history`]); the per-sample
    /// path stays integer-only.
    ///
    /// ```
    /// use clampwise_core::config::{DeviceConfig, DeviceParts, Limits, Tolerances};
    /// use clampwise_core::estimator::{Combination, Estimator, Inputs};
    /// use clampwise_core::friction::{FrictionConfig, FrictionParams, MuTable};
    /// use clampwise_core::geometry::{build_radius_table, Annulus, Contact};
    /// use clampwise_core::sensor::*;
    /// use clampwise_core::thermal::{Cooling, ThermalConfig, ThermalParams};
    /// use clampwise_core::units::{Celsius, Joules, Newtons, RadPerSec, Ratio, Seconds};
    /// use clampwise_core::wear::{WearConfig, WearParams};
    /// # fn main() -> Result<(), Box<dyn core::error::Error>> {
    /// // A fictional winch holding brake: two faces of a 60…100 mm annulus, 1 kHz.
    /// let contact = Contact::new(Annulus::new(0.060, 0.100)?, 2, None)?;
    /// # let cal = ChannelCalibration {
    /// #     gain: NewtonsPerCount::from_num(1.0 / 256.0), offset: Newtons::ZERO,
    /// #     rails: AdcRails { low: i32::MIN, high: i32::MAX, margin: 0 }, temperature: None,
    /// # };
    /// # let limits = DiagnosticLimits {
    /// #     force_min: Newtons::from_num(-5_000), force_max: Newtons::from_num(250_000),
    /// #     max_rate: NewtonsPerSecond::from_num(50_000_000), noise_band: Newtons::from_num(50),
    /// #     stuck: None, debounce: DebounceSet::uniform(Debounce { raise_after: 3, clear_after: 10 }),
    /// #     max_hold_samples: 2,
    /// # };
    /// # let voting = VotingLimits { tolerance: Newtons::from_num(500), channel_uncertainty: Newtons::from_num(100) };
    /// # let sensor = SensorConfig::new(1000, [cal], LowPass::new(200.0, 1000)?, limits, voting, None)?;
    /// # let mu = MuTable::<2, 2>::from_f64(&[0.0, 400.0], &[0.0, 200.0], &[[0.40, 0.37], [0.30, 0.27]])?;
    /// # let fp = FrictionParams { static_to_kinetic: 1.2, stick_speed: 0.05, stick_hysteresis: 0.04,
    /// #     transition_speed: 0.5, viscous_drag: 0.0, no_load_drag: 0.0 };
    /// # let thermal = ThermalConfig::new(&ThermalParams { dt: 1e-3, rotor_mass: 8.0,
    /// #     rotor_specific_heat: 460.0, rotor_share: 0.9, cooling: Cooling::TimeConstant(613.0),
    /// #     ambient: 20.0, lining: None, fade_warning: 350.0, over_temperature: 500.0,
    /// #     flag_hysteresis: 10.0, measured: None })?;
    /// # let wear = WearConfig::new(&WearParams { dt: 1e-3, bedding_energy: 5e6,
    /// #     specific_wear_rate: 4e-14, lining_area: 8e-3, initial_thickness: 0.010,
    /// #     minimum_thickness: 0.002 })?;
    /// let cfg = DeviceConfig::new(DeviceParts {
    ///     sample_period: Seconds::from_num(1e-3),
    ///     faces: contact.faces(),
    ///     radius: build_radius_table::<2, 2>(&contact, &[0.0, 250_000.0], &[0.0, 1.0])?,
    ///     friction: FrictionConfig::new(mu, &fp)?,
    ///     thermal,
    ///     wear,
    ///     sensor,
    ///     adapt: None,
    ///     limits: Limits { touch_force: Newtons::from_num(100), adapt_min_force: Newtons::from_num(500) },
    ///     tolerances: Tolerances { mu: Ratio::from_num(0.2), radius: Ratio::from_num(0.01),
    ///         combination: Combination::WorstCase },
    /// })?;
    /// // A hot, fully bedded lining: 300 °C, 100 MJ since new (bedding energy 5 MJ).
    /// let mut est = Estimator::with_condition(&cfg, Celsius::from_num(300), Joules::from_num(1e8));
    /// let mut inputs = Inputs::<1>::at_rest(10_000 * 256); // 10 kN, 1/256 N per count
    /// inputs.input_speed = RadPerSec::from_num(50);
    /// let e = est.step(&inputs);
    /// assert!(e.bedding.to_num::<f64>() > 0.999_999);
    /// assert!((e.lining_temperature.to_num::<f64>() - 300.0).abs() < 0.5);
    /// // Bedded: r_e is the uniform-wear radius (Ro + Ri)/2 = 80 mm [pub: Shigley ch. 16].
    /// assert!((e.effective_radius.to_num::<f64>() - 0.080).abs() < 1e-6);
    /// # Ok(())
    /// # }
    /// ```
    pub fn with_condition(
        cfg: &'c DeviceConfig<C, NF, NB, NT, NV>,
        lining_temperature: Celsius,
        energy: Joules,
    ) -> Self {
        let state = EstimatorState {
            sensor: SensorState::new(),
            friction: FrictionState::new(),
            thermal: ThermalState::with_temperatures(lining_temperature, lining_temperature),
            wear: WearState::with_history(&cfg.wear, energy),
            adapt: cfg.adapt.as_ref().map(AdaptState::new),
        };
        Self { cfg, state }
    }
}
