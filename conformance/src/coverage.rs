//! Evidence that each injected sensor fault is the fault the core sees: a second sensor
//! conditioner (`SensorState`, the core's own) runs beside the estimator on the same inputs,
//! and for each fault kind counts the blocks in which its flag was raised on the faulty
//! channel during that fault's segment. The counts are printed on host and target alike (so
//! they are compared too) and `check.sh` requires each applicable one to be above zero.

use core::fmt::Write as _;

use clampwise_core::estimator::Inputs;
use clampwise_core::sensor::{ChannelFlags, ForceReading, ForceSource, SensorConfig, SensorState};

use crate::scenario::{Fault, Segment};
use crate::sink::{Line, Sink};

/// Every fault kind, in the order of the output line, with its name.
const KINDS: [(Fault, &str); 10] = [
    (Fault::InvalidBit, "invalid"),
    (Fault::RailLow, "rail_low"),
    (Fault::RailHigh, "rail_high"),
    (Fault::OutOfRange, "out_of_range"),
    (Fault::Rate, "rate"),
    (Fault::Stuck, "stuck"),
    (Fault::Disagree, "disagree"),
    (Fault::Saturated, "saturated"),
    (Fault::AllInvalidWithCommand, "fallback"),
    (Fault::AllInvalid, "lost"),
];

/// Per fault kind: in how many blocks it was seen.
pub struct FaultCoverage<const C: usize> {
    state: SensorState<C>,
    blocks: [u32; KINDS.len()],
    this_block: [bool; KINDS.len()],
}

impl<const C: usize> Default for FaultCoverage<C> {
    fn default() -> Self {
        Self::new()
    }
}

impl<const C: usize> FaultCoverage<C> {
    /// Nothing seen yet.
    pub const fn new() -> Self {
        Self {
            state: SensorState::new(),
            blocks: [0; KINDS.len()],
            this_block: [false; KINDS.len()],
        }
    }

    /// Condition one sample's readings; `segment` and `faulty` are the scenario's for it.
    pub fn observe(
        &mut self,
        cfg: &SensorConfig<C>,
        inputs: &Inputs<C>,
        segment: Segment,
        faulty: usize,
    ) {
        let r = self.state.update(
            cfg,
            &inputs.force_channels,
            inputs.actuator_command,
            inputs.sensor_temperature,
        );
        let Segment::Fault(fault) = segment else {
            return;
        };
        if !seen(&r, fault, faulty) {
            return;
        }
        let hit = KINDS.iter().zip(self.this_block.iter_mut());
        for ((kind, _), flag) in hit {
            *flag |= *kind == fault;
        }
    }

    /// Close a block: each kind seen in it counts once.
    pub fn end_block(&mut self) {
        for (n, seen) in self.blocks.iter_mut().zip(self.this_block.iter_mut()) {
            *n += u32::from(*seen);
            *seen = false;
        }
    }

    /// Emit `faults,<shape>,<kind>=<blocks>,…`; `n/a` where the device cannot show the
    /// fault (no stuck check configured; disagreement with one channel; no actuator).
    pub fn emit<S: Sink>(&self, cfg: &SensorConfig<C>, name: &str, sink: &mut S) {
        let mut line = Line::new();
        let _ = write!(line, "faults,{name}");
        for ((kind, label), n) in KINDS.iter().zip(self.blocks) {
            let applies = match kind {
                Fault::Stuck => cfg.stuck_window_samples().is_some(),
                Fault::Disagree => C > 1,
                Fault::AllInvalidWithCommand => cfg.fallback().is_some(),
                _ => true,
            };
            let _ = if applies {
                write!(line, ",{label}={n}")
            } else {
                write!(line, ",{label}=n/a")
            };
        }
        sink.emit(&line);
    }
}

/// Whether the reading shows `fault` (on channel `faulty` where it is a channel's fault).
fn seen(r: &ForceReading, fault: Fault, faulty: usize) -> bool {
    let flags = r
        .channel_flags
        .get(faulty)
        .copied()
        .unwrap_or(ChannelFlags::empty());
    let flag = match fault {
        Fault::InvalidBit => ChannelFlags::INVALID,
        Fault::RailLow => ChannelFlags::RAIL_LOW,
        Fault::RailHigh => ChannelFlags::RAIL_HIGH,
        Fault::OutOfRange => ChannelFlags::OUT_OF_RANGE,
        Fault::Rate => ChannelFlags::RATE,
        Fault::Stuck => ChannelFlags::STUCK,
        Fault::Disagree => ChannelFlags::DISAGREE,
        Fault::Saturated => return r.saturated,
        Fault::AllInvalidWithCommand => return r.source == ForceSource::ActuatorFallback,
        Fault::AllInvalid => return r.source == ForceSource::Unavailable,
    };
    flags.contains(flag)
}
