//! The inputs of a conformance run, generated on the fly: a scripted cycle of segments
//! ([`SCRIPT`], one cycle per block of [`BLOCK_SAMPLES`]) shaped by a seeded PCG32 (`oorandom`)
//! for noise, sweeps and the arbitrary-bits segment. The same seed gives the same inputs on
//! every target: integer arithmetic only.
//!
//! Per block the sweeps move on: the shaft speed (2 … 42 rad/s), the faulty channel
//! (block mod C), the reference torque's bias (−6 … +6 %), whether the lining temperature is
//! measured and whether the ambient temperature is given.

use clampwise_core::estimator::Inputs;
use clampwise_core::sensor::{ActuatorCommand, RawChannel};
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};
use oorandom::Rand32;

/// Samples per block (one cycle of [`SCRIPT`]).
pub const BLOCK_SAMPLES: u32 = 10_000;

/// What the scenario needs to know of a device, as integers (from its TOML, by `build.rs`).
#[derive(Clone, Copy, Debug)]
pub struct Plant<const C: usize> {
    /// Counts per newton of each channel, Q16 (the inverse of `gain_n_per_count`).
    pub counts_per_newton_q16: [i64; C],
    /// Counts at zero force of each channel.
    pub offset_counts: [i64; C],
    /// Lowest count of each channel's ADC.
    pub rail_low: [i64; C],
    /// Highest count of each channel's ADC.
    pub rail_high: [i64; C],
    /// Lower end of the plausible force range, N.
    pub range_low_n: i64,
    /// Upper end of the plausible force range, N.
    pub range_high_n: i64,
    /// Largest clamp force, N.
    pub max_force_n: i64,
    /// Vote tolerance, N.
    pub vote_tolerance_n: i64,
    /// Actuator transfer, N per command unit (0: no actuator, no command is given).
    pub newtons_per_command: i64,
    /// Both members rotate (a clutch); otherwise the output member stands still.
    pub clutch: bool,
}

/// A sensor fault the scenario injects (on one channel unless said otherwise).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Fault {
    /// The acquisition's valid bit cleared.
    InvalidBit,
    /// The reading at the low rail.
    RailLow,
    /// The reading at the high rail.
    RailHigh,
    /// A force outside the plausible range (above it where the ADC reaches, else below).
    OutOfRange,
    /// Steps faster than the rate limit, held longer than the debounce.
    Rate,
    /// A frozen reading while the force and the command move.
    Stuck,
    /// A constant offset of four vote tolerances against the other channels.
    Disagree,
    /// Every channel far above the largest clamp force, one at the extreme counts of an i32.
    Saturated,
    /// Every channel invalid, the actuator command present (fallback).
    AllInvalidWithCommand,
    /// Every channel invalid and no command (force lost).
    AllInvalid,
}

/// One segment of the script.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Segment {
    /// No force, shaft turning.
    Released,
    /// Force ramps up while the shaft slows to a stop.
    Engage,
    /// Standstill under a slowly varying force.
    Hold,
    /// Slipping under load, speed and force varying.
    Slip,
    /// A sensor fault during moderate slip.
    Fault(Fault),
    /// No speed measurement.
    SlipUnknown,
    /// Force ramps down, shaft speeding up.
    Release,
    /// Every input field raw random bits (the fuzz inputs).
    Arbitrary,
}

/// One block's script: segments and their lengths (they add up to [`BLOCK_SAMPLES`]).
pub const SCRIPT: [(Segment, u32); 17] = [
    (Segment::Released, 600),
    (Segment::Engage, 1200),
    (Segment::Hold, 1200),
    (Segment::Slip, 1500),
    (Segment::Fault(Fault::InvalidBit), 300),
    (Segment::Fault(Fault::RailLow), 300),
    (Segment::Fault(Fault::RailHigh), 300),
    (Segment::Fault(Fault::OutOfRange), 300),
    (Segment::Fault(Fault::Rate), 300),
    (Segment::Fault(Fault::Stuck), 500),
    (Segment::Fault(Fault::Disagree), 300),
    (Segment::Fault(Fault::Saturated), 300),
    (Segment::Fault(Fault::AllInvalidWithCommand), 300),
    (Segment::Fault(Fault::AllInvalid), 300),
    (Segment::SlipUnknown, 300),
    (Segment::Release, 600),
    (Segment::Arbitrary, 1400),
];

const _: () = {
    let mut total = 0;
    let mut i = 0;
    while i < SCRIPT.len() {
        #[allow(clippy::indexing_slicing)] // a const block: `i` is in range, and checked
        let len = SCRIPT[i].1;
        total += len;
        i += 1;
    }
    assert!(total == BLOCK_SAMPLES);
};

/// The segment at `at` samples into a block, with the samples since its start and its length.
pub fn segment_at(at: u32) -> (Segment, u32, u32) {
    let mut start = 0;
    for (segment, len) in SCRIPT {
        if at < start + len {
            return (segment, at - start, len);
        }
        start += len;
    }
    (Segment::Arbitrary, 0, 1)
}

/// `num/den` of `x`, in i64 (den > 0).
const fn part(x: i64, num: i64, den: i64) -> i64 {
    x.saturating_mul(num) / den
}

/// A triangle wave 0 → 1000 → 0 over `period` samples, in thousandths.
const fn triangle(p: u32, period: u32) -> i64 {
    let period = if period < 2 { 2 } else { period };
    let half = period / 2;
    let q = p % period;
    let up = if q < half { q } else { period - q };
    (up as i64) * 1000 / (half as i64)
}

fn sat_i32(x: i64) -> i32 {
    i32::try_from(x.clamp(i64::from(i32::MIN), i64::from(i32::MAX))).unwrap_or(0)
}

/// A fixed-point value in Q16 from a whole-unit value in thousandths.
fn q16_milli(milli: i64) -> i32 {
    sat_i32(milli.saturating_mul(65_536) / 1000)
}

/// The scenario's generator for a device with `C` force channels.
pub struct Scenario<'p, const C: usize> {
    plant: &'p Plant<C>,
    rng: Rand32,
    block: u32,
    at: u32,
    /// The stuck channel's frozen counts.
    frozen: i32,
}

impl<'p, const C: usize> Scenario<'p, C> {
    /// A generator seeded with `seed`, at the start of block 0.
    pub fn new(plant: &'p Plant<C>, seed: u64) -> Self {
        Self {
            plant,
            rng: Rand32::new(seed),
            block: 0,
            at: 0,
            frozen: 0,
        }
    }

    /// The PRNG, for the decoders' corrupted bytes.
    pub fn rng(&mut self) -> &mut Rand32 {
        &mut self.rng
    }

    /// The segment of the next sample.
    pub fn segment(&self) -> Segment {
        segment_at(self.at).0
    }

    /// The channel the next sample's fault segments act on (block mod C).
    pub fn faulty_channel(&self) -> usize {
        usize::try_from(self.block).unwrap_or(0) % C
    }

    /// Uniform in `-n ..= n`.
    fn noise(&mut self, n: u32) -> i64 {
        let span = n.saturating_mul(2).saturating_add(1);
        i64::from(self.rng.rand_range(0..span)) - i64::from(n)
    }

    /// The inputs of the next sample. `last_torque` is the previous estimate's torque: the
    /// reference torque (for adaptation) is it with the block's bias.
    pub fn next(&mut self, last_torque: Option<NewtonMetres>) -> Inputs<C> {
        let (segment, p, len) = segment_at(self.at);
        let inputs = if segment == Segment::Arbitrary {
            self.arbitrary()
        } else {
            self.scripted(segment, p, len, last_torque)
        };
        self.at += 1;
        if self.at >= BLOCK_SAMPLES {
            self.at = 0;
            self.block = self.block.wrapping_add(1);
        }
        inputs
    }

    /// The true clamp force (N), shaft speed (mrad/s) of a scripted segment.
    fn motion(&self, segment: Segment, p: u32, len: u32) -> (i64, i64) {
        let fmax = self.plant.max_force_n;
        let vmax = 2_000 + 8_000 * i64::from(self.block % 6);
        let ramp = i64::from(p) * 1000 / i64::from(len.max(1));
        match segment {
            Segment::Released | Segment::Arbitrary => (0, vmax),
            Segment::Engage => (part(fmax, 6 * ramp, 10_000), part(vmax, 1000 - ramp, 1000)),
            Segment::Hold => (part(fmax, 400 + part(triangle(p, 800), 4, 10), 1000), 0),
            Segment::Slip => (
                part(fmax, 300 + part(triangle(p, 700), 5, 10), 1000),
                part(vmax, 500 + triangle(p, 1100) / 2, 1000),
            ),
            Segment::Fault(Fault::Stuck) => {
                (part(fmax, 200 + triangle(p, 300) / 2, 1000), vmax / 2)
            }
            Segment::Fault(_) | Segment::SlipUnknown => (part(fmax, 4, 10), vmax / 2),
            Segment::Release => (
                part(fmax, 5 * (1000 - ramp), 10_000),
                part(vmax, ramp, 1000),
            ),
        }
    }

    fn scripted(
        &mut self,
        segment: Segment,
        p: u32,
        len: u32,
        last_torque: Option<NewtonMetres>,
    ) -> Inputs<C> {
        let plant = self.plant;
        let (force, speed) = self.motion(segment, p, len);
        let faulty = self.faulty_channel();
        let mut channels = [RawChannel {
            counts: 0,
            valid: true,
        }; C];
        for (i, ch) in channels.iter_mut().enumerate() {
            let (cpn, off) = (
                plant.counts_per_newton_q16.get(i).copied().unwrap_or(1),
                plant.offset_counts.get(i).copied().unwrap_or(0),
            );
            let (low, high) = (
                plant.rail_low.get(i).copied().unwrap_or(0),
                plant.rail_high.get(i).copied().unwrap_or(0),
            );
            let counts_of = |f: i64| off.saturating_add(f.saturating_mul(cpn) >> 16);
            // ±30 N of noise on every reading.
            let noise = part(self.noise(30), cpn, 65_536);
            let mut counts = counts_of(force).saturating_add(noise);
            if let Segment::Fault(fault) = segment {
                let here = i == faulty;
                match fault {
                    Fault::InvalidBit if here => ch.valid = false,
                    Fault::RailLow if here => counts = low,
                    Fault::RailHigh if here => counts = high,
                    Fault::OutOfRange if here => {
                        // Above the range where the ADC reaches it, else below.
                        let above = counts_of(plant.range_high_n.saturating_add(5_000));
                        counts = if above < high.saturating_sub(64) {
                            above
                        } else {
                            counts_of(plant.range_low_n.saturating_sub(5_000))
                        };
                    }
                    Fault::Rate if here => {
                        // A square wave of ±30 % of the largest force, 25 samples per level:
                        // each step takes longer than the debounce to be accepted.
                        let jump = part(plant.max_force_n, 3, 10);
                        let up = (p / 25).is_multiple_of(2);
                        counts = counts_of(if up { force + jump } else { force - jump });
                    }
                    Fault::Stuck if here => {
                        if p == 0 {
                            self.frozen = sat_i32(counts);
                        }
                        counts = i64::from(self.frozen);
                    }
                    Fault::Disagree if here => {
                        counts = counts_of(force.saturating_add(4 * plant.vote_tolerance_n));
                    }
                    Fault::Saturated => {
                        counts = if here && p.is_multiple_of(3) {
                            i64::from(if p.is_multiple_of(2) {
                                i32::MAX
                            } else {
                                i32::MIN
                            })
                        } else {
                            counts_of(part(plant.max_force_n, 3, 2))
                        };
                    }
                    Fault::AllInvalidWithCommand | Fault::AllInvalid => ch.valid = false,
                    _ => {}
                }
            }
            // Inside the rails unless a rail or saturation is the point.
            if !matches!(segment, Segment::Fault(Fault::Saturated)) {
                counts = counts.max(low).min(high);
            }
            ch.counts = sat_i32(counts);
        }

        let command = (plant.newtons_per_command > 0
            && segment != Segment::Fault(Fault::AllInvalid))
        .then(|| {
            ActuatorCommand::from_bits(sat_i32(
                force.saturating_mul(65_536) / plant.newtons_per_command,
            ))
        });
        let (input, output) = match segment {
            Segment::SlipUnknown => (None, None),
            _ if plant.clutch => {
                // Both members turn; the output trails the input by the slip speed.
                let base = 5_000 + 1_000 * i64::from(self.block % 4);
                (Some(base + speed), Some(base))
            }
            _ => (Some(speed), Some(0)),
        };
        let speed_of = |milli: i64| RadPerSec::from_bits(q16_milli(milli));
        Inputs {
            force_channels: channels,
            input_speed: input.map(speed_of),
            output_speed: output.map(speed_of),
            actuator_command: command,
            sensor_temperature: Some(self.sensor_temperature()),
            lining_temperature: self.lining_temperature(),
            ambient_temperature: self
                .block
                .is_multiple_of(2)
                .then(|| Celsius::from_bits(q16_milli(20_000 + 1_000 * i64::from(self.block)))),
            reference_torque: self.reference(segment, last_torque),
        }
    }

    /// Sweeps −40 … +120 °C over a block.
    fn sensor_temperature(&self) -> Celsius {
        let t = -40_000 + 160 * triangle(self.at, BLOCK_SAMPLES);
        Celsius::from_bits(q16_milli(t))
    }

    /// A measured lining temperature sweeping 20 … 520 °C over a block with a 300 K spike every
    /// 997 samples (a broken-wire jump to reject); absent (model only) in every third block.
    fn lining_temperature(&mut self) -> Option<Celsius> {
        if self.block % 3 == 2 {
            return None;
        }
        let spike = if self.at % 997 == 500 { 300_000 } else { 0 };
        let t = 20_000 + 500 * triangle(self.at, BLOCK_SAMPLES) + spike + self.noise(200);
        Some(Celsius::from_bits(q16_milli(t)))
    }

    /// The reference torque while the device works (engage, hold, slip): the last estimate's
    /// torque with a bias of −6 … +6 % that changes per block.
    fn reference(&self, segment: Segment, last: Option<NewtonMetres>) -> Option<NewtonMetres> {
        if !matches!(segment, Segment::Engage | Segment::Hold | Segment::Slip) {
            return None;
        }
        let bias = 3 * (i64::from(self.block % 5) - 2);
        last.map(|t| {
            let bits = i64::from(t.to_bits());
            NewtonMetres::from_bits(sat_i32(bits + part(bits, bias, 100)))
        })
    }

    /// Every field raw random bits: counts over the whole i32 (or near the device's readings
    /// half the time), random valid bits, each optional input present or not at random.
    fn arbitrary(&mut self) -> Inputs<C> {
        let plant = self.plant;
        let mut channels = [RawChannel {
            counts: 0,
            valid: true,
        }; C];
        for (i, ch) in channels.iter_mut().enumerate() {
            let raw = self.rng.rand_i32();
            ch.counts = if self.rng.rand_u32() & 1 == 0 {
                raw
            } else {
                let off = plant.offset_counts.get(i).copied().unwrap_or(0);
                sat_i32(off + i64::from(raw >> 12))
            };
            ch.valid = self.rng.rand_u32() & 3 != 0;
        }
        Inputs {
            force_channels: channels,
            input_speed: self.maybe().map(RadPerSec::from_bits),
            output_speed: self.maybe().map(RadPerSec::from_bits),
            actuator_command: self.maybe().map(ActuatorCommand::from_bits),
            sensor_temperature: self.maybe().map(Celsius::from_bits),
            lining_temperature: self.maybe().map(Celsius::from_bits),
            ambient_temperature: self.maybe().map(Celsius::from_bits),
            reference_torque: self.maybe().map(NewtonMetres::from_bits),
        }
    }

    /// Random bits, present three times in four.
    fn maybe(&mut self) -> Option<i32> {
        let present = self.rng.rand_u32() & 3 != 0;
        let bits = self.rng.rand_i32();
        present.then_some(bits)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_script_fills_a_block_and_every_sample_has_a_segment() {
        assert_eq!(segment_at(0).0, Segment::Released);
        assert_eq!(segment_at(BLOCK_SAMPLES - 1).0, Segment::Arbitrary);
        let faults = (0..BLOCK_SAMPLES)
            .filter(|&at| matches!(segment_at(at).0, Segment::Fault(_)))
            .count();
        assert_eq!(faults, 3_200);
    }

    #[test]
    fn triangle_spans_zero_to_a_thousand() {
        assert_eq!(triangle(0, 100), 0);
        assert_eq!(triangle(50, 100), 1000);
        assert_eq!(triangle(75, 100), 500);
    }
}
