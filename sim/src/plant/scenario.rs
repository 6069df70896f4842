//! Operating scenarios for the plant: piecewise-linear shaft speed and actuator command, with
//! the external load torque that a holding brake must carry.
//!
//! The built-in scenarios are invented for the demo and tests (a fictional mine-hoist drum
//! brake), never data of a real machine.

/// One phase: speed and command move linearly from start to end over `duration_s`.
#[derive(Debug, Clone, Copy)]
pub struct Phase {
    /// Length, s.
    pub duration_s: f64,
    /// Input speed at the start, rad/s.
    pub speed_start: f64,
    /// Input speed at the end, rad/s.
    pub speed_end: f64,
    /// Actuator command at the start (0 … 1 of full clamp force).
    pub command_start: f64,
    /// Actuator command at the end.
    pub command_end: f64,
    /// External load torque on the drum, N·m (what the brake must hold at standstill).
    pub load_nm: f64,
}

const fn ph(duration_s: f64, speed: (f64, f64), command: (f64, f64), load_nm: f64) -> Phase {
    Phase {
        duration_s,
        speed_start: speed.0,
        speed_end: speed.1,
        command_start: command.0,
        command_end: command.1,
        load_nm,
    }
}

/// The plant's inputs at one instant.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ScenarioPoint {
    /// Input speed, rad/s.
    pub omega_in: f64,
    /// Output speed, rad/s (0 for a brake).
    pub omega_out: f64,
    /// Actuator command, 0 … 1.
    pub command: f64,
    /// Load torque, N·m.
    pub load_nm: f64,
}

/// A cyclic scenario.
#[derive(Debug, Clone)]
pub struct Scenario {
    phases: Vec<Phase>,
    cycle_s: f64,
}

/// Names of the built-in scenarios.
pub const SCENARIOS: [&str; 3] = ["hoist", "steady", "sweep"];

impl Scenario {
    /// A built-in scenario by name (see [`SCENARIOS`]).
    ///
    /// - `hoist`: holds, releases, hoists, emergency stops and slow-slip brake tests that heat
    ///   the lining, then cooling (≈ 200 s cycle);
    /// - `steady`: constant slip at constant command (benchmarks);
    /// - `sweep`: slow slip stepping through speeds and commands while heating (fit coverage).
    pub fn builtin(name: &str) -> Option<Self> {
        let phases = match name {
            "hoist" => vec![
                ph(4.0, (0.0, 0.0), (1.0, 1.0), 8000.0), // holding the cage
                ph(1.0, (0.0, 0.0), (1.0, 0.0), 8000.0), // release
                ph(3.0, (0.0, 6.0), (0.0, 0.0), 0.0),    // accelerate
                ph(10.0, (6.0, 6.0), (0.0, 0.0), 0.0),   // hoisting
                ph(0.2, (6.0, 5.6), (0.0, 0.7), 0.0),    // emergency stop: apply
                ph(2.3, (5.6, 0.0), (0.7, 0.7), 0.0),    //   and decelerate
                ph(8.0, (0.0, 0.0), (0.7, 0.7), 8000.0), // hold
                ph(6.0, (0.0, 0.3), (0.5, 0.5), 0.0),    // brake test: motor drives slowly
                ph(6.0, (0.3, 1.0), (0.5, 0.5), 0.0),
                ph(6.0, (1.0, 3.0), (0.5, 0.5), 0.0),
                ph(1.0, (3.0, 0.0), (0.5, 1.0), 0.0),
                ph(3.0, (0.0, 0.0), (1.0, 1.0), 8000.0),
                ph(1.0, (0.0, 0.0), (1.0, 0.0), 8000.0), // release
                ph(4.0, (0.0, 12.0), (0.0, 0.0), 0.0),   // fast run
                ph(8.0, (12.0, 12.0), (0.0, 0.0), 0.0),
                ph(0.2, (12.0, 11.5), (0.0, 0.9), 0.0), // emergency stop from 12 rad/s
                ph(3.8, (11.5, 0.0), (0.9, 0.9), 0.0),
                ph(5.0, (0.0, 0.0), (0.9, 0.9), 9000.0),
                ph(8.0, (0.0, 2.0), (0.6, 0.6), 0.0), // hot brake test
                ph(8.0, (2.0, 5.0), (0.6, 0.6), 0.0),
                ph(8.0, (5.0, 8.0), (0.4, 0.4), 0.0),
                ph(2.0, (8.0, 0.0), (0.4, 1.0), 0.0),
                ph(5.0, (0.0, 0.0), (1.0, 1.0), 8000.0),
                ph(1.0, (0.0, 0.0), (1.0, 0.0), 0.0),
                ph(60.0, (0.0, 0.0), (0.0, 0.0), 0.0), // parked, released: cooling
                ph(1.0, (0.0, 0.0), (0.0, 1.0), 0.0),
                ph(25.0, (0.0, 0.0), (1.0, 1.0), 8000.0),
            ],
            "steady" => vec![ph(1.0, (4.0, 4.0), (0.5, 0.5), 0.0)],
            "sweep" => {
                let mut v = Vec::new();
                for (i, &w) in [0.25, 0.8, 1.5, 3.0, 6.0, 9.0].iter().enumerate() {
                    let cmd = 0.3 + 0.1 * f64::from(u8::try_from(i % 3).unwrap_or(0));
                    v.push(ph(6.0, (w, w), (cmd, cmd), 0.0));
                    v.push(ph(2.0, (w, w), (cmd, 1.0 - cmd), 0.0));
                }
                v.push(ph(20.0, (0.0, 0.0), (0.0, 0.0), 0.0));
                v
            }
            _ => return None,
        };
        Some(Self::new(phases))
    }

    /// A scenario from phases (repeated cyclically).
    pub fn new(phases: Vec<Phase>) -> Self {
        let cycle_s = phases.iter().map(|p| p.duration_s).sum::<f64>().max(1e-9);
        Self { phases, cycle_s }
    }

    /// Length of one cycle, s.
    pub fn cycle_s(&self) -> f64 {
        self.cycle_s
    }

    /// The inputs at time `t` (cyclic).
    pub fn at(&self, t: f64) -> ScenarioPoint {
        let mut tc = t.rem_euclid(self.cycle_s);
        for p in &self.phases {
            if tc < p.duration_s || std::ptr::eq(p, self.phases.last().unwrap_or(p)) {
                let f = if p.duration_s > 0.0 {
                    (tc / p.duration_s).clamp(0.0, 1.0)
                } else {
                    1.0
                };
                return ScenarioPoint {
                    omega_in: p.speed_start + f * (p.speed_end - p.speed_start),
                    omega_out: 0.0,
                    command: p.command_start + f * (p.command_end - p.command_start),
                    load_nm: p.load_nm,
                };
            }
            tc -= p.duration_s;
        }
        ScenarioPoint {
            omega_in: 0.0,
            omega_out: 0.0,
            command: 0.0,
            load_nm: 0.0,
        }
    }
}
