//! One sample's inputs and its estimate as plain C structs of fixed-width integers in the
//! core's fixed-point formats (`_qN`: the value × 2ᴺ; `Qm.n` in the docs).
#![allow(non_camel_case_types)]

use clampwise_core::estimator::{ContactState, Estimate, Inputs};
use clampwise_core::sensor::{ActuatorCommand, RawChannel};
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};

use crate::desc::CW_CHANNELS_MAX;

/// `cw_inputs::present` bit: `input_speed_q16` holds the input (rotating) side's speed.
pub const CW_HAS_INPUT_SPEED: u8 = 1 << 0;
/// `cw_inputs::present` bit: `output_speed_q16` holds the output (held) side's speed.
pub const CW_HAS_OUTPUT_SPEED: u8 = 1 << 1;
/// `cw_inputs::present` bit: `actuator_command_q16` holds the controller's actuator command.
pub const CW_HAS_ACTUATOR_COMMAND: u8 = 1 << 2;
/// `cw_inputs::present` bit: `sensor_temperature_q16` holds the force sensor's temperature.
pub const CW_HAS_SENSOR_TEMPERATURE: u8 = 1 << 3;
/// `cw_inputs::present` bit: `lining_temperature_q16` holds a measured lining temperature.
pub const CW_HAS_LINING_TEMPERATURE: u8 = 1 << 4;
/// `cw_inputs::present` bit: `ambient_temperature_q16` holds a measured ambient temperature.
pub const CW_HAS_AMBIENT_TEMPERATURE: u8 = 1 << 5;
/// `cw_inputs::present` bit: `reference_torque_q12` holds a reference torque (torque flange).
pub const CW_HAS_REFERENCE_TORQUE: u8 = 1 << 6;
const ALL_PRESENT: u8 = (1 << 7) - 1;

/// `cw_estimate::present` bit: `torque_q12` holds the friction torque.
pub const CW_HAS_TORQUE: u8 = 1 << 0;
/// `cw_estimate::present` bit: `holding_capacity_q12` holds the holding capacity.
pub const CW_HAS_HOLDING_CAPACITY: u8 = 1 << 1;

/// Contact state of `cw_estimate::state`.
#[repr(u8)]
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum cw_contact_state {
    /// The faces slip: `torque_q12` is the kinetic friction torque.
    CW_STATE_SLIPPING = 0,
    /// The faces stick: the torque is not known, only bounded by `holding_capacity_q12`.
    CW_STATE_HOLDING = 1,
    /// No clamp force: the torque is the drag.
    CW_STATE_RELEASED = 2,
    /// No trustworthy clamp force (every channel out, no fallback).
    CW_STATE_UNAVAILABLE = 3,
    /// Clamped, slip speed unknown: only the capacity is known.
    CW_STATE_SLIP_UNKNOWN = 4,
}

/// One sample's inputs. Optional values count only when their `present` bit is set (the
/// value is ignored otherwise); a speed that could not be read is absent, never zero.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_inputs {
    /// ADC counts of each clamp-force channel (signed, as the converter gives them).
    pub counts: [i32; CW_CHANNELS_MAX],
    /// Bit i set: `counts[i]` is a clean conversion; clear: that reading failed.
    pub valid_mask: u8,
    /// Which optional values are there: `CW_HAS_*` bits.
    pub present: u8,
    /// Input (rotating) side speed, rad/s, Q15.16.
    pub input_speed_q16: i32,
    /// Output (held) side speed, rad/s, Q15.16 (0 for a brake against its housing).
    pub output_speed_q16: i32,
    /// The controller's actuator command, command unit, Q15.16.
    pub actuator_command_q16: i32,
    /// Force-sensor temperature, °C, Q15.16.
    pub sensor_temperature_q16: i32,
    /// Measured lining temperature, °C, Q15.16.
    pub lining_temperature_q16: i32,
    /// Measured ambient temperature, °C, Q15.16.
    pub ambient_temperature_q16: i32,
    /// Reference friction torque, N·m, Q19.12.
    pub reference_torque_q12: i32,
}

/// One sample's estimate — an estimate, not a certified safety function.
#[repr(C)]
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct cw_estimate {
    /// Friction torque, N·m, Q19.12 (when `CW_HAS_TORQUE`; signed against the slip).
    pub torque_q12: i32,
    /// Largest torque the contact holds, N·m, Q19.12 (when `CW_HAS_HOLDING_CAPACITY`).
    pub holding_capacity_q12: i32,
    /// Uncertainty of the torque (or capacity), N·m, Q19.12.
    pub uncertainty_q12: i32,
    /// Friction coefficient in use, 1, Q1.30.
    pub mu_q30: i32,
    /// Effective friction radius, m, Q7.24.
    pub effective_radius_q24: i32,
    /// Clamp force, N, Q23.8.
    pub clamp_force_q8: i32,
    /// Lining temperature, °C, Q15.16.
    pub lining_temperature_q16: i32,
    /// Bedding, fraction 0 … 1, Q1.30.
    pub bedding_q30: i32,
    /// Lining thickness lost to wear, m, Q7.24.
    pub wear_q24: i32,
    /// μ correction factor, 1, Q1.30.
    pub correction_q30: i32,
    /// The core's flags (`CW_FLAG_*` bits).
    pub flags: u32,
    /// Bit i set: force channel i was used for the clamp force.
    pub force_channels_used: u8,
    /// Contact state: a `cw_contact_state` value.
    pub state: u8,
    /// Which optional values are there: `CW_HAS_TORQUE`, `CW_HAS_HOLDING_CAPACITY`.
    pub present: u8,
}

/// The core's inputs of a C sample for a device of `C` channels, or `None` when the mask names
/// a channel beyond `C` or `present` has an unknown bit (`CW_ERR_INPUTS`).
pub fn core_inputs<const C: usize>(i: &cw_inputs) -> Option<Inputs<C>> {
    let channel_bits = u8::try_from((1u32 << C) - 1).unwrap_or(u8::MAX);
    if i.valid_mask & !channel_bits != 0 || i.present & !ALL_PRESENT != 0 {
        return None;
    }
    let mut force_channels = [RawChannel {
        counts: 0,
        valid: false,
    }; C];
    for (k, raw) in force_channels.iter_mut().enumerate() {
        if let Some(&counts) = i.counts.get(k)
            && i.valid_mask & (1 << k) != 0
        {
            *raw = RawChannel {
                counts,
                valid: true,
            };
        }
    }
    let has = |bit: u8| i.present & bit != 0;
    Some(Inputs {
        force_channels,
        input_speed: has(CW_HAS_INPUT_SPEED).then_some(RadPerSec::from_bits(i.input_speed_q16)),
        output_speed: has(CW_HAS_OUTPUT_SPEED).then_some(RadPerSec::from_bits(i.output_speed_q16)),
        actuator_command: has(CW_HAS_ACTUATOR_COMMAND)
            .then_some(ActuatorCommand::from_bits(i.actuator_command_q16)),
        sensor_temperature: has(CW_HAS_SENSOR_TEMPERATURE)
            .then_some(Celsius::from_bits(i.sensor_temperature_q16)),
        lining_temperature: has(CW_HAS_LINING_TEMPERATURE)
            .then_some(Celsius::from_bits(i.lining_temperature_q16)),
        ambient_temperature: has(CW_HAS_AMBIENT_TEMPERATURE)
            .then_some(Celsius::from_bits(i.ambient_temperature_q16)),
        reference_torque: has(CW_HAS_REFERENCE_TORQUE)
            .then_some(NewtonMetres::from_bits(i.reference_torque_q12)),
    })
}

/// The C state code of a contact state.
pub const fn state_code(s: ContactState) -> cw_contact_state {
    match s {
        ContactState::Slipping => cw_contact_state::CW_STATE_SLIPPING,
        ContactState::Holding => cw_contact_state::CW_STATE_HOLDING,
        ContactState::Released => cw_contact_state::CW_STATE_RELEASED,
        ContactState::Unavailable => cw_contact_state::CW_STATE_UNAVAILABLE,
        ContactState::SlipUnknown => cw_contact_state::CW_STATE_SLIP_UNKNOWN,
    }
}

/// The C struct of an estimate: every field's raw bits.
pub fn c_estimate(e: &Estimate) -> cw_estimate {
    let mut out = cw_estimate::default();
    fill_estimate(e, &mut out);
    out
}

/// Every field of `out` from an estimate's raw bits, written in place (the step's output goes
/// straight to the caller's struct, with no whole-struct copy).
pub fn fill_estimate(e: &Estimate, out: &mut cw_estimate) {
    let mut present = 0;
    if e.torque.is_some() {
        present |= CW_HAS_TORQUE;
    }
    if e.holding_capacity.is_some() {
        present |= CW_HAS_HOLDING_CAPACITY;
    }
    out.torque_q12 = e.torque.map_or(0, NewtonMetres::to_bits);
    out.holding_capacity_q12 = e.holding_capacity.map_or(0, NewtonMetres::to_bits);
    out.uncertainty_q12 = e.uncertainty.to_bits();
    out.mu_q30 = e.mu.to_bits();
    out.effective_radius_q24 = e.effective_radius.to_bits();
    out.clamp_force_q8 = e.clamp_force.to_bits();
    out.lining_temperature_q16 = e.lining_temperature.to_bits();
    out.bedding_q30 = e.bedding.to_bits();
    out.wear_q24 = e.wear.to_bits();
    out.correction_q30 = e.correction.to_bits();
    out.flags = e.flags.bits();
    out.force_channels_used = e.force_channels_used.bits();
    out.state = state_code(e.state) as u8;
    out.present = present;
}
