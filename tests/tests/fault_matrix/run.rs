//! One run: the simulator's f64 plant and the core's estimator (through `clampwise-convert`)
//! stepped in lockstep, every estimate row checked against the plant's truth.

use clampwise_convert::{
    Channel, ContactState, CoreEstimator, EstimateRow, SampleEstimator, TraceSample,
};
use clampwise_core::flags::Flags;
use clampwise_sim::plant::faults::Fault;
use clampwise_sim::plant::scenario::Scenario;
use clampwise_sim::plant::{Plant, PlantOptions, PlantSample};

use super::devices::Device;

/// Flags that say the reported number cannot be trusted: a row carrying one (or in the
/// Unavailable state) is exempt from the invariant. Names as the core's `Flags` spells them;
/// a name the core does not have fails every test of the matrix.
pub const UNTRUSTED_FLAG_NAMES: &[&str] = &["FORCE_LOST"];

/// Flags that name a sensor fault: the first row with one of these (or an untrusted flag, or
/// the Unavailable state) after the fault starts is its detection.
pub const DETECTION_FLAG_NAMES: &[&str] = &[
    "SENSOR_DEGRADED",
    "FORCE_FALLBACK",
    "FORCE_LOST",
    "FORCE_SATURATED",
    "FORCE_IMPLAUSIBLE",
];

/// Flags that describe the operating point rather than a fault; left out of "flags seen".
pub const ROUTINE_FLAG_NAMES: &[&str] = &["TORQUE_BOUNDED", "ADAPTATION_FROZEN"];

/// The core's flags of these names.
pub fn flags_named(names: &[&str]) -> Flags {
    names.iter().fold(Flags::empty(), |acc, n| {
        acc | Flags::from_name(n).unwrap_or_else(|| panic!("the core has no flag named {n}"))
    })
}

/// Trace length, s (1 kHz: 16 000 rows).
pub const DURATION_S: f64 = 16.0;

/// The plant's truth in one run: the seed of its noise, and its μ as the config's table moved by
/// `mu_share` × the config's μ tolerance (`friction.mu_tolerance_ratio`). A truth at the
/// table's own μ leaves the whole μ share of the ± unspent, and a force error of up to that
/// share would pass unseen; near its edges, the ± must be carried by the rest of the budget.
#[derive(Clone, Copy, Debug)]
pub struct Truth {
    pub seed: u64,
    pub mu_share: f64,
}

pub const TRUTHS: [Truth; 3] = [
    Truth {
        seed: 11,
        mu_share: 0.0,
    },
    Truth {
        seed: 12,
        mu_share: -0.9,
    },
    Truth {
        seed: 13,
        mu_share: 0.9,
    },
];

/// A plant scenario: a built-in scenario entered `offset_s` into its cycle.
pub struct ScenarioCase {
    pub name: &'static str,
    pub what: &'static str,
    builtin: &'static str,
    offset_s: f64,
}

pub const SCENARIOS: [ScenarioCase; 2] = [
    ScenarioCase {
        name: "hoist",
        what: "built-in `hoist` from 15 s: running released at 6 rad/s, emergency stop, \
               holding 8 kN·m, slow-slip brake test",
        builtin: "hoist",
        offset_s: 15.0,
    },
    ScenarioCase {
        name: "sweep",
        what: "built-in `sweep` from 0 s: slipping at 0.25 and 0.8 rad/s, command 0.3 … 0.7",
        builtin: "sweep",
        offset_s: 0.0,
    },
];

/// What the invariant says about one row.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Verdict {
    /// Flagged as not to be trusted (or Unavailable): exempt.
    Exempt,
    /// Neither torque nor capacity reported (nothing to check).
    Withheld,
    /// Within its ±.
    Within,
    /// Slipping or released: |torque − true torque| exceeds the ± by this much, N·m.
    TorqueBeyond(f64),
    /// Holding: |capacity − true capacity| exceeds the ± by this much, N·m.
    CapacityBeyond(f64),
    /// Holding (capacity within its ±) while the plant slips or the brake is open.
    FalseHolding,
}

impl Verdict {
    pub fn is_beyond(self) -> bool {
        matches!(
            self,
            Verdict::TorqueBeyond(_) | Verdict::CapacityBeyond(_) | Verdict::FalseHolding
        )
    }
}

/// Where the plant is not holding whatever the estimator's threshold: the brake open (true
/// force below the touch force, N) or the plant slipping faster than the estimator's stick
/// band (stick speed + hysteresis, rad/s; the plant's own threshold is half the stick speed, so
/// slow slip inside the band is a difference of thresholds, not of the estimate).
#[derive(Clone, Copy, Debug)]
pub struct NotHolding {
    pub touch_force_n: f64,
    pub slip_band_rad_s: f64,
}

impl NotHolding {
    fn of(truth: &PlantSample, at: NotHolding) -> bool {
        truth.true_force_n < at.touch_force_n
            || (truth.omega_in - truth.omega_out).abs() > at.slip_band_rad_s
    }
}

/// The invariant on one row: every torque or holding capacity reported lies within its own ±
/// of the plant's truth, and Holding is not reported while the brake is open or clearly slips,
/// unless a flag says the number cannot be trusted.
pub fn verdict(
    row: &EstimateRow,
    truth: &PlantSample,
    not_holding: NotHolding,
    untrusted: Flags,
) -> Verdict {
    if row.state == ContactState::Unavailable || row.flags.intersects(untrusted) {
        return Verdict::Exempt;
    }
    let u = row.uncertainty_nm;
    match row.state {
        ContactState::Holding => match row.capacity_nm {
            None => Verdict::Withheld,
            Some(c) => {
                let excess = (c - truth.true_capacity_nm).abs() - u;
                if excess > 0.0 {
                    Verdict::CapacityBeyond(excess)
                } else if NotHolding::of(truth, not_holding) {
                    Verdict::FalseHolding
                } else {
                    Verdict::Within
                }
            }
        },
        _ => match row.torque_nm {
            None => Verdict::Withheld,
            Some(t) => {
                let excess = (t - truth.true_torque_nm).abs() - u;
                if excess > 0.0 {
                    Verdict::TorqueBeyond(excess)
                } else {
                    Verdict::Within
                }
            }
        },
    }
}

/// The sample a logger would record (as `synth` writes it and `replay` reads it back).
fn trace_sample(p: &PlantSample, line: u64, gauges: usize) -> TraceSample {
    let mut s = TraceSample {
        line,
        t_s: p.t_s,
        force_valid: [true; 4],
        omega_in_rad_s: p.omega_in,
        omega_out_rad_s: p.omega_out,
        command: Some(p.command),
        temp_c: Some(p.temp_meas_c),
        ambient_c: Some(p.ambient_c),
        torque_ref_nm: Some(p.torque_ref_nm),
        ..TraceSample::default()
    };
    for ch in 0..gauges {
        s.force_valid[ch] = p.valid[ch];
        if let Some(c) = p.counts[ch] {
            s.force[ch] = Channel::Counts(i32::try_from(c).expect("ADC rails lie in i32"));
        }
    }
    s
}

/// One run's rows: the verdict and flags of each, with the time.
pub struct Rows {
    pub t_s: Vec<f64>,
    pub verdicts: Vec<Verdict>,
    pub flags: Vec<Flags>,
    pub states: Vec<ContactState>,
}

/// Step the plant and the estimator together over the scenario.
pub fn run(dev: &Device, scenario: &ScenarioCase, truth: Truth, faults: Vec<Fault>) -> Rows {
    let c = &dev.config;
    let mut plant = Plant::new(
        c,
        PlantOptions {
            seed: truth.seed,
            mu_scale: 1.0 + truth.mu_share * c.friction.mu_tolerance_ratio,
            faults,
            ..PlantOptions::default()
        },
    )
    .expect("the plant builds for the demo's geometry");
    let mut est = CoreEstimator::new(c, &dev.core).expect("the starting state is accepted");
    let sc = Scenario::builtin(scenario.builtin).expect("a built-in scenario");
    let untrusted = flags_named(UNTRUSTED_FLAG_NAMES);
    let dt = c.device.sample_period_s;
    let not_holding = NotHolding {
        touch_force_n: c.limits.touch_force_n,
        slip_band_rad_s: c.friction.stick_speed_rad_s + c.friction.stick_hysteresis_rad_s,
    };
    #[allow(clippy::cast_possible_truncation, clippy::cast_sign_loss)]
    let n = (DURATION_S / dt).round() as usize;
    let mut rows = Rows {
        t_s: Vec::with_capacity(n),
        verdicts: Vec::with_capacity(n),
        flags: Vec::with_capacity(n),
        states: Vec::with_capacity(n),
    };
    for i in 0..n {
        #[allow(clippy::cast_precision_loss)]
        let t = i as f64 * dt;
        let truth = plant.step(&sc.at(t + scenario.offset_s));
        let row = est.step(&trace_sample(&truth, i as u64 + 1, dev.gauges));
        rows.t_s.push(truth.t_s);
        rows.verdicts
            .push(verdict(&row, &truth, not_holding, untrusted));
        rows.flags.push(row.flags);
        rows.states.push(row.state);
    }
    rows
}

/// What one faulted run showed, rows the fault-free run of the same device, scenario and seed
/// has beyond its ± left out.
#[derive(Clone, Debug, Default)]
pub struct RunTally {
    /// Rows reporting a torque or capacity that were checked.
    pub checked: u64,
    /// Rows beyond ± (any kind).
    pub beyond: u64,
    pub torque_beyond: u64,
    pub capacity_beyond: u64,
    pub false_holding: u64,
    /// Largest excess over the ±, N·m.
    pub worst_excess_nm: f64,
    /// Time of the first row beyond ±, s.
    pub first_beyond_s: Option<f64>,
    /// Rows exempt by a flag or the Unavailable state.
    pub exempt: u64,
    /// Rows with nothing reported.
    pub withheld: u64,
    /// Rows left out because the fault-free run is beyond ± there.
    pub excluded: u64,
    /// Flags raised at or after the fault's start (routine ones left out).
    pub flags_seen: Flags,
    /// Seconds from the fault's start to the first row naming a fault.
    pub latency_s: Option<f64>,
    /// Rows at or after the fault's start.
    pub after_start: u64,
    /// Of those, rows naming a fault (a detection or untrusted flag, or Unavailable).
    pub flagged: u64,
}

/// Tally a faulted run against the fault-free run's verdicts.
pub fn tally(rows: &Rows, baseline: &[Verdict], fault_start_s: f64) -> RunTally {
    let detection = flags_named(DETECTION_FLAG_NAMES) | flags_named(UNTRUSTED_FLAG_NAMES);
    let routine = flags_named(ROUTINE_FLAG_NAMES);
    let mut t = RunTally::default();
    for (((&ts, &v), (&f, &st)), &base) in rows
        .t_s
        .iter()
        .zip(&rows.verdicts)
        .zip(rows.flags.iter().zip(&rows.states))
        .zip(baseline)
    {
        if ts >= fault_start_s {
            t.flags_seen |= f.difference(routine);
            t.after_start += 1;
            if f.intersects(detection) || st == ContactState::Unavailable {
                t.flagged += 1;
                t.latency_s.get_or_insert(ts - fault_start_s);
            }
        }
        if base.is_beyond() {
            t.excluded += 1;
            continue;
        }
        match v {
            Verdict::Exempt => t.exempt += 1,
            Verdict::Withheld => t.withheld += 1,
            Verdict::Within => t.checked += 1,
            Verdict::TorqueBeyond(_) | Verdict::CapacityBeyond(_) | Verdict::FalseHolding => {
                t.checked += 1;
                t.beyond += 1;
                t.first_beyond_s.get_or_insert(ts);
                match v {
                    Verdict::TorqueBeyond(e) => {
                        t.torque_beyond += 1;
                        t.worst_excess_nm = t.worst_excess_nm.max(e);
                    }
                    Verdict::CapacityBeyond(e) => {
                        t.capacity_beyond += 1;
                        t.worst_excess_nm = t.worst_excess_nm.max(e);
                    }
                    _ => t.false_holding += 1,
                }
            }
        }
    }
    t
}
