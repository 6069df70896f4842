//! A trace sample (f64, SI) to the core's fixed-point [`Inputs`].
//!
//! Force channels go in as raw counts ([`channel_counts`]); speeds, command, temperatures and
//! the reference torque as [`saturating_fixed`] gives them; a brake's output speed is 0
//! whatever the trace says (its stator does not turn).

use clampwise_core::estimator::Inputs;
use clampwise_core::sensor::RawChannel;
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};
use fixed::types::I16F16;

use crate::channel::{ChannelCal, channel_counts};
use crate::exact::saturating_fixed;
use crate::sample::TraceSample;

/// The core's [`Inputs`] for one trace sample (the conversion of the module docs).
pub fn core_inputs<const C: usize>(s: &TraceSample, cal: &[ChannelCal], brake: bool) -> Inputs<C> {
    let counts = channel_counts(s, cal);
    let mut force_channels = [RawChannel::default(); C];
    for (o, c) in force_channels.iter_mut().zip(counts) {
        *o = match c {
            Some(counts) => RawChannel {
                counts,
                valid: true,
            },
            None => RawChannel {
                counts: 0,
                valid: false,
            },
        };
    }
    Inputs {
        force_channels,
        input_speed: Some(saturating_fixed(s.omega_in_rad_s)),
        output_speed: Some(if brake {
            RadPerSec::ZERO
        } else {
            saturating_fixed(s.omega_out_rad_s)
        }),
        actuator_command: s.command.map(saturating_fixed::<I16F16>),
        sensor_temperature: None,
        lining_temperature: s.temp_c.map(saturating_fixed::<Celsius>),
        ambient_temperature: s.ambient_c.map(saturating_fixed::<Celsius>),
        reference_torque: s.torque_ref_nm.map(saturating_fixed::<NewtonMetres>),
    }
}
