//! What a controller hands the estimator every sample.

use crate::sensor::{ActuatorCommand, MAX_CHANNELS, RawChannel};
use crate::units::{Celsius, NewtonMetres, RadPerSec};

/// One sample of inputs. Only the force channels and shaft speeds are required; every optional
/// input is `None` when the controller does not have it this sample.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Inputs<const C: usize> {
    /// Raw clamp-force channels (ADC counts and the acquisition's valid bit).
    pub force_channels: [RawChannel; C],
    /// Input-shaft (rotor, driving plate) speed, rad/s; `None` when it could not be read this
    /// sample (never stand-in zero: a failed read is not a standstill).
    pub input_speed: Option<RadPerSec>,
    /// Output-shaft (driven plate) speed, rad/s; `Some(0)` for a brake, whose housing does not
    /// turn; `None` when it could not be read.
    pub output_speed: Option<RadPerSec>,
    /// Actuator command (motor current, line pressure …) for stuck detection, voting
    /// tie-breaks and the force fallback.
    pub actuator_command: Option<ActuatorCommand>,
    /// Temperature at the force sensor, °C, for its zero and span compensation.
    pub sensor_temperature: Option<Celsius>,
    /// Measured lining temperature, °C; takes over from the thermal model while plausible.
    pub lining_temperature: Option<Celsius>,
    /// Ambient (cooling air or oil) temperature, °C; the configured ambient when absent.
    pub ambient_temperature: Option<Celsius>,
    /// Reference friction torque, N·m, same sign convention as [`Estimate::torque`]
    /// (a bench torque flange, or deceleration × inertia); feeds the adaptation.
    ///
    /// [`Estimate::torque`]: crate::estimator::Estimate::torque
    pub reference_torque: Option<NewtonMetres>,
}

impl<const C: usize> Inputs<C> {
    /// Inputs with all channels at `counts` (valid), both shafts at rest, nothing optional.
    pub const fn at_rest(counts: i32) -> Self {
        Self {
            force_channels: [RawChannel {
                counts,
                valid: true,
            }; C],
            input_speed: Some(RadPerSec::ZERO),
            output_speed: Some(RadPerSec::ZERO),
            actuator_command: None,
            sensor_temperature: None,
            lining_temperature: None,
            ambient_temperature: None,
            reference_torque: None,
        }
    }
}

impl<const C: usize> Inputs<C> {
    /// Slip speed v = ω_in − ω_out (rad/s, saturating), `None` unless both speeds are known.
    pub fn slip_speed(&self) -> Option<RadPerSec> {
        match (self.input_speed, self.output_speed) {
            (Some(input), Some(output)) => Some(input.saturating_sub(output)),
            _ => None,
        }
    }
}

// C is checked against MAX_CHANNELS by the sensor configuration.
const _: () = assert!(MAX_CHANNELS == 4);
