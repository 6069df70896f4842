//! The fault kinds of the matrix, written in the simulator's `--fault` syntax
//! (`KIND:CH@T0..T1[=V]`, parsed by `clampwise_sim::plant::faults::Fault`).
//!
//! Sizes are set against the demo's sensing limits: vote tolerance 1.5 kN (two gauges agree
//! within 3 kN), channel uncertainty ±400 N, noise band 200 N, range −2 … 90 kN.

use clampwise_sim::plant::faults::Fault;
use clampwise_sim::schema::DeviceSpec;

/// Every fault acts from this time to the end of the trace, s.
pub const FAULT_START_S: f64 = 2.0;

/// One fault kind of the matrix.
pub struct FaultCase {
    /// Short name (table rows).
    pub name: &'static str,
    /// What it is, in a few words.
    pub what: &'static str,
    /// Fewest gauges the fault needs.
    pub min_gauges: usize,
    /// The `--fault` specs for a device and a trace of `duration_s`.
    pub specs: fn(&DeviceSpec, f64) -> Vec<String>,
}

/// Counts of channel `ch` (1-based) for `newtons`.
fn counts(c: &DeviceSpec, ch: usize, newtons: f64) -> f64 {
    newtons / c.sensors[ch - 1].gain_n_per_count
}

fn window(ch: usize, kind: &str, duration_s: f64, value: Option<f64>) -> String {
    let end = duration_s + 1.0;
    match value {
        Some(v) => format!("{kind}:{ch}@{FAULT_START_S}..{end}={v}"),
        None => format!("{kind}:{ch}@{FAULT_START_S}..{end}"),
    }
}

fn vote_tolerance(c: &DeviceSpec) -> f64 {
    c.sensing.vote_tolerance_n
}

/// Offset of channel 1 drifting linearly to `ratio` × the vote tolerance at the trace's end.
fn drift_to(c: &DeviceSpec, duration_s: f64, ratio: f64) -> Vec<String> {
    let rate_n_per_s = ratio * vote_tolerance(c) / (duration_s - FAULT_START_S);
    vec![window(
        1,
        "drift",
        duration_s,
        Some(counts(c, 1, rate_n_per_s)),
    )]
}

pub const CASES: &[FaultCase] = &[
    FaultCase {
        name: "drift inside tolerance",
        what: "ch1 offset drifts to 0.8 × vote tolerance (1.2 kN) at the end",
        min_gauges: 1,
        specs: |c, d| drift_to(c, d, 0.8),
    },
    FaultCase {
        name: "drift to the agreement edge",
        what: "ch1 offset drifts to 1.97 × vote tolerance (2.95 kN; two gauges still agree)",
        min_gauges: 1,
        specs: |c, d| drift_to(c, d, 1.97),
    },
    FaultCase {
        name: "drift outside tolerance",
        what: "ch1 offset drifts to 3 × vote tolerance (4.5 kN) at the end",
        min_gauges: 1,
        specs: |c, d| drift_to(c, d, 3.0),
    },
    FaultCase {
        name: "gain ×0.8 on 2 channels",
        what: "ch1 and ch2 read 0.8 × F",
        min_gauges: 2,
        specs: |_, d| (1..=2).map(|ch| window(ch, "gain", d, Some(0.8))).collect(),
    },
    FaultCase {
        name: "gain ×0.7 on all channels",
        what: "every channel reads 0.7 × F (common mode)",
        min_gauges: 1,
        specs: |c, d| {
            (1..=c.sensors.len())
                .map(|ch| window(ch, "gain", d, Some(0.7)))
                .collect()
        },
    },
    FaultCase {
        name: "offsets ±2 kN",
        what: "ch1 +2 kN, ch2 −2 kN",
        min_gauges: 2,
        specs: |c, d| {
            vec![
                window(1, "offset", d, Some(counts(c, 1, 2000.0))),
                window(2, "offset", d, Some(counts(c, 2, -2000.0))),
            ]
        },
    },
    FaultCase {
        name: "1 channel stuck",
        what: "ch1 frozen at its value at the start",
        min_gauges: 1,
        specs: |_, d| vec![window(1, "stuck", d, None)],
    },
    FaultCase {
        name: "2 channels stuck",
        what: "ch1 and ch2 frozen at their values at the start",
        min_gauges: 2,
        specs: |_, d| (1..=2).map(|ch| window(ch, "stuck", d, None)).collect(),
    },
    FaultCase {
        name: "alternating dropouts",
        what: "ch1 out 4 samples in 8; ch2 out in the other 4 (1 gauge: ch1 alone)",
        min_gauges: 1,
        specs: |c, d| {
            let mut v = vec![window(1, "flicker", d, Some(4.0))];
            if c.sensors.len() >= 2 {
                let t0 = FAULT_START_S + 4.0 * c.device.sample_period_s;
                v.push(format!("flicker:2@{t0}..{}=4", d + 1.0));
            }
            v
        },
    },
    FaultCase {
        name: "copies of ch1 + offset",
        what: "ch2 reads ch1 + 1.49 kN, ch3 reads ch1 + 2.98 kN (as many as there are)",
        min_gauges: 2,
        specs: |c, d| {
            (2..=c.sensors.len().min(3))
                .map(|ch| {
                    #[allow(clippy::cast_precision_loss)]
                    let off = 1490.0 * (ch - 1) as f64;
                    window(ch, "copy1", d, Some(counts(c, ch, off)))
                })
                .collect()
        },
    },
    FaultCase {
        name: "sign flip",
        what: "ch1 reads −F",
        min_gauges: 1,
        specs: |_, d| vec![window(1, "sign", d, None)],
    },
    FaultCase {
        name: "rail high",
        what: "ch1 at the ADC's upper rail",
        min_gauges: 1,
        specs: |_, d| vec![window(1, "rail_high", d, None)],
    },
    FaultCase {
        name: "spikes +20 kN",
        what: "ch1 + 20 kN on one sample in 50",
        min_gauges: 1,
        specs: |c, d| vec![window(1, "spike", d, Some(counts(c, 1, 20_000.0)))],
    },
];

/// The parsed faults of a case for a device (the specs go through the simulator's parser).
pub fn faults(case: &FaultCase, c: &DeviceSpec, duration_s: f64) -> Vec<Fault> {
    (case.specs)(c, duration_s)
        .iter()
        .map(|s| s.parse().unwrap_or_else(|e| panic!("{}: {e}", case.name)))
        .collect()
}
