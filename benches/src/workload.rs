//! The benchmark's input sequence: a deterministic mix of operating points that changes every
//! few samples, so the branches of the step (released / holding / slipping, table segment,
//! voting outcome, adaptation gate) do not settle into a pattern a branch predictor learns.
//!
//! Segments of 1–24 samples, each in one mode, drawn from an xorshift generator (seeded, so
//! every run, host or target, sees the same sequence):
//!
//! | mode | share | clamp force | slip speed |
//! |---|---|---|---|
//! | slipping | 50 % | 2–60 kN | ±1…300 rad/s |
//! | holding | 25 % | 2–60 kN | within ±0.01 rad/s |
//! | transition | 10 % | 2–60 kN | 0.05…0.6 rad/s (the static-to-kinetic blend) |
//! | released | 15 % | 0–80 N | 0…300 rad/s |
//!
//! Each channel adds ±40 N of noise; one sample in 32 puts channel 3 2 kN off (out-voted) and
//! one in 64 drops a channel's valid bit. The reference torque is the demo model with a 10 %
//! lower μ than the table (so the adaptation has something to learn), the actuator command
//! follows the force, the sensor temperature wanders between 15 and 45 °C.
//!
//! Generation uses f64 and runs outside the measured step.

use clampwise_core::estimator::Inputs;
use clampwise_core::sensor::{ActuatorCommand, RawChannel};
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};

use crate::device::COUNTS_PER_NEWTON;
use crate::plain_f32::PlainInputs;

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Mode {
    Slipping,
    Holding,
    Transition,
    Released,
}

/// One sample in physical units (before it is turned into either implementation's inputs).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Sample {
    /// Raw counts of the three channels.
    pub counts: [i32; 3],
    /// Valid bits of the three channels.
    pub valid: [bool; 3],
    /// Input-shaft speed, rad/s.
    pub input_speed: f64,
    /// Output-shaft speed, rad/s (0: a brake).
    pub output_speed: f64,
    /// Actuator command (command units).
    pub command: f64,
    /// Force-sensor temperature, °C.
    pub sensor_temperature: f64,
    /// Reference torque, N·m.
    pub reference_torque: f64,
}

impl Sample {
    /// The fixed-point estimator's inputs with the first `C` channels; `full` adds the
    /// optional inputs (actuator command, sensor temperature, reference torque).
    pub fn inputs<const C: usize>(&self, full: bool) -> Inputs<C> {
        let mut i = Inputs::<C>::at_rest(0);
        for ((ch, &counts), &valid) in i
            .force_channels
            .iter_mut()
            .zip(self.counts.iter())
            .zip(self.valid.iter())
        {
            *ch = RawChannel { counts, valid };
        }
        i.input_speed = Some(RadPerSec::saturating_from_num(self.input_speed));
        i.output_speed = Some(RadPerSec::saturating_from_num(self.output_speed));
        if full {
            i.actuator_command = Some(ActuatorCommand::saturating_from_num(self.command));
            i.sensor_temperature = Some(Celsius::saturating_from_num(self.sensor_temperature));
            i.reference_torque = Some(NewtonMetres::saturating_from_num(self.reference_torque));
        }
        i
    }

    /// The plain f32 implementation's inputs (floats where a practitioner would have them).
    #[allow(clippy::cast_possible_truncation)] // f64 → f32 is the point here
    pub fn plain<const C: usize>(&self, full: bool) -> PlainInputs<C> {
        let mut counts = [0; C];
        let mut valid = [false; C];
        for ((c, v), (&sc, &sv)) in counts
            .iter_mut()
            .zip(valid.iter_mut())
            .zip(self.counts.iter().zip(self.valid.iter()))
        {
            *c = sc;
            *v = sv;
        }
        PlainInputs {
            counts,
            valid,
            input_speed: self.input_speed as f32,
            output_speed: self.output_speed as f32,
            command: full.then_some(self.command as f32),
            sensor_temperature: full.then_some(self.sensor_temperature as f32),
            reference_torque: full.then_some(self.reference_torque as f32),
        }
    }
}

/// The deterministic sample generator.
#[derive(Clone, Debug)]
pub struct Workload {
    state: u64,
    left: u32,
    mode: Mode,
    force: f64,
    speed: f64,
    sensor_temperature: f64,
}

impl Workload {
    /// A generator; the same seed gives the same sequence on every target.
    pub const fn new(seed: u64) -> Self {
        Self {
            state: seed | 1,
            left: 0,
            mode: Mode::Released,
            force: 0.0,
            speed: 0.0,
            sensor_temperature: 30.0,
        }
    }

    fn next_u64(&mut self) -> u64 {
        // xorshift64*: small, fast, and identical everywhere.
        self.state ^= self.state >> 12;
        self.state ^= self.state << 25;
        self.state ^= self.state >> 27;
        self.state.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }

    /// Uniform in [0, 1).
    #[allow(clippy::cast_precision_loss)] // 53 bits into an f64 mantissa: exact
    fn unit(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 / (1u64 << 53) as f64
    }

    fn uniform(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * self.unit()
    }

    fn one_in(&mut self, n: u64) -> bool {
        self.next_u64().is_multiple_of(n)
    }

    fn new_segment(&mut self) {
        let pick = self.unit();
        self.mode = if pick < 0.50 {
            Mode::Slipping
        } else if pick < 0.75 {
            Mode::Holding
        } else if pick < 0.85 {
            Mode::Transition
        } else {
            Mode::Released
        };
        #[allow(clippy::cast_possible_truncation)] // 0..24
        let len = (self.next_u64() % 24) as u32;
        self.left = len + 1;
        let sign = if self.one_in(2) { 1.0 } else { -1.0 };
        (self.force, self.speed) = match self.mode {
            Mode::Slipping => (self.uniform(2e3, 60e3), sign * self.uniform(1.0, 300.0)),
            Mode::Holding => (self.uniform(2e3, 60e3), 0.0),
            Mode::Transition => (self.uniform(2e3, 60e3), self.uniform(0.05, 0.6)),
            Mode::Released => (self.uniform(0.0, 80.0), self.uniform(0.0, 300.0)),
        };
    }

    /// The next sample.
    #[allow(clippy::cast_possible_truncation)] // counts of at most 60 kN · 256 fit i32
    pub fn next_sample(&mut self) -> Sample {
        if self.left == 0 {
            self.new_segment();
        }
        self.left -= 1;
        let speed = match self.mode {
            Mode::Holding => self.uniform(-0.01, 0.01),
            _ => self.speed + self.uniform(-0.02, 0.02) * self.speed.abs(),
        };
        let mut counts = [0; 3];
        for c in &mut counts {
            let f = self.force + self.uniform(-40.0, 40.0);
            *c = libm::round(f * COUNTS_PER_NEWTON) as i32;
        }
        if self.one_in(32)
            && let Some(c) = counts.get_mut(2)
        {
            *c = c.saturating_add((2000.0 * COUNTS_PER_NEWTON) as i32);
        }
        let mut valid = [true; 3];
        if self.one_in(64) {
            #[allow(clippy::cast_possible_truncation)] // 0..3
            let which = (self.next_u64() % 3) as usize;
            if let Some(v) = valid.get_mut(which) {
                *v = false;
            }
        }
        self.sensor_temperature =
            (self.sensor_temperature + self.uniform(-0.05, 0.05)).clamp(15.0, 45.0);
        // Demo model torque with μ 10 % below a mid-table 0.36 and uniform-wear radius 80 mm.
        let reference = if speed.abs() > 0.05 {
            -speed.signum() * 2.0 * 0.9 * 0.36 * self.force * 0.080
        } else {
            0.0
        };
        Sample {
            counts,
            valid,
            input_speed: speed,
            output_speed: 0.0,
            command: self.force / 5000.0,
            sensor_temperature: self.sensor_temperature,
            reference_torque: reference,
        }
    }
}
