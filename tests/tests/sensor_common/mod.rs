//! A small test bench for the sensor conditioning: one fictional actuator (a winch holding
//! brake) sampled at 1 kHz. All numbers are invented for the tests, not check values.
#![allow(dead_code, clippy::unwrap_used, clippy::cast_possible_truncation)]

use clampwise_core::sensor::*;
use clampwise_core::units::{Newtons, Seconds};

pub const FS: u32 = 1000;
/// 0.01 N per count: counts = 100 · F.
pub const COUNTS_PER_N: i32 = 100;
pub const RAIL_LOW: i32 = -8_388_608;
pub const RAIL_HIGH: i32 = 8_388_607;

pub const CAL: ChannelCalibration = ChannelCalibration {
    gain: NewtonsPerCount::lit("0.01"),
    offset: Newtons::ZERO,
    rails: AdcRails {
        low: RAIL_LOW,
        high: RAIL_HIGH,
        margin: 8,
    },
    temperature: None,
};

/// Distinct debounce counts per check, so a test can tell which one fired.
pub const DEBOUNCE: DebounceSet = DebounceSet {
    invalid: Debounce {
        raise_after: 3,
        clear_after: 5,
    },
    rail: Debounce {
        raise_after: 2,
        clear_after: 4,
    },
    range: Debounce {
        raise_after: 4,
        clear_after: 3,
    },
    rate: Debounce {
        raise_after: 3,
        clear_after: 6,
    },
    stuck: Debounce {
        raise_after: 5,
        clear_after: 5,
    },
    disagreement: Debounce {
        raise_after: 6,
        clear_after: 8,
    },
};

pub const LIMITS: DiagnosticLimits = DiagnosticLimits {
    force_min: Newtons::lit("-2000"),
    force_max: Newtons::lit("60000"),
    // 200 N per sample at 1 kHz.
    max_rate: NewtonsPerSecond::lit("200000"),
    noise_band: Newtons::lit("20"),
    stuck: Some(StuckCheck {
        // 50 samples.
        time: Seconds::lit("0.05"),
        command_span: ActuatorCommand::lit("1"),
    }),
    debounce: DEBOUNCE,
    max_hold_samples: 2,
};

pub const VOTING: VotingLimits = VotingLimits {
    tolerance: Newtons::lit("300"),
    channel_uncertainty: Newtons::lit("100"),
};

/// 1 kN per command unit, centre line through zero, 400 N band.
pub const TRANSFER: ActuatorTransfer = ActuatorTransfer {
    gain: NewtonsPerCommand::lit("1000"),
    offset: Newtons::ZERO,
    hysteresis: Newtons::lit("400"),
    uncertainty: Newtons::lit("2000"),
    response_time: Seconds::ZERO,
};

/// 50 Hz at 1 kHz: α = 1 − e^(−π/10) = 0.2696.
pub fn filter() -> LowPass {
    LowPass::new(50.0, FS).unwrap()
}

pub fn config<const C: usize>(limits: DiagnosticLimits) -> SensorConfig<C> {
    SensorConfig::new(FS, [CAL; C], filter(), limits, VOTING, Some(TRANSFER)).unwrap()
}

pub fn counts(newtons: f64) -> i32 {
    (newtons * f64::from(COUNTS_PER_N)).round() as i32
}

pub fn n(v: f64) -> Newtons {
    Newtons::from_num(v)
}

pub fn ok(c: i32) -> RawChannel {
    RawChannel {
        counts: c,
        valid: true,
    }
}

/// Sensor state plus configuration, stepped one sample at a time.
pub struct Bench<const C: usize> {
    pub cfg: SensorConfig<C>,
    pub state: SensorState<C>,
}

impl<const C: usize> Bench<C> {
    pub fn new(limits: DiagnosticLimits) -> Self {
        Self {
            cfg: config(limits),
            state: SensorState::new(),
        }
    }

    pub fn step(&mut self, raw: [RawChannel; C], command: Option<f64>) -> ForceReading {
        let cmd = command.map(ActuatorCommand::from_num);
        self.state.update(&self.cfg, &raw, cmd, None)
    }

    /// All channels at `force` with the command matching it, `samples` times.
    pub fn settle(&mut self, force: f64, samples: usize) -> ForceReading {
        let mut last = None;
        for _ in 0..samples {
            last = Some(self.step([ok(counts(force)); C], Some(force / 1000.0)));
        }
        last.unwrap()
    }
}

/// Channel mask of the source, if from channels.
pub fn used(r: &ForceReading) -> Option<u8> {
    match r.source {
        ForceSource::Channels { mask } => Some(mask.bits()),
        _ => None,
    }
}
