//! `synth`: synthesise a trace from the independent f64 plant ([`crate::plant`]).
//!
//! Columns: `t_s`, `force_N_counts` and `force_N_valid` per channel, `omega_in_rad_s`,
//! `omega_out_rad_s`, `command_pct`, `temp_C`, `ambient_C`, `torque_ref_Nm`, and the truth
//! for diagnosis (`true_clamp_force_N`, `true_mu`, `true_radius_m`, `true_temp_C`,
//! `true_bedding`, `true_torque_Nm` (before the reference sensor's noise), `true_capacity_Nm`
//! (N·μ_s·F·r_e under the plant's own model), `fault_code`), which the estimator never reads.

use std::io::Write;
use std::time::Instant;

use indicatif::ProgressBar;
use serde::Serialize;

use crate::error::SimError;
use crate::output::AtomicFile;
use crate::plant::scenario::Scenario;
use crate::plant::{Plant, PlantOptions, PlantSample};
use crate::schema::DeviceSpec;

/// What a synthesis produced.
#[derive(Debug, Clone, Serialize)]
pub struct SynthSummary {
    /// File written.
    pub output: String,
    /// Scenario name.
    pub scenario: String,
    /// Rows written.
    pub rows: u64,
    /// Seed.
    pub seed: u64,
    /// Plant's effective radii (uniform pressure, uniform wear), m.
    pub plant_radii_m: (f64, f64),
    /// Highest true lining temperature, °C.
    pub max_true_temp_c: f64,
    /// Lining wear at the end, m.
    pub wear_m: f64,
    /// Wall time, s.
    pub elapsed_s: f64,
}

/// The header line of a synthetic trace for `channels` force channels.
pub fn header(channels: usize) -> String {
    let mut h = vec!["t_s".to_string()];
    for i in 1..=channels {
        h.push(format!("force_{i}_counts"));
        h.push(format!("force_{i}_valid"));
    }
    h.extend(
        [
            "omega_in_rad_s",
            "omega_out_rad_s",
            "command_pct",
            "temp_C",
            "ambient_C",
            "torque_ref_Nm",
            "true_clamp_force_N",
            "true_mu",
            "true_radius_m",
            "true_temp_C",
            "true_bedding",
            "true_torque_Nm",
            "true_capacity_Nm",
            "fault_code",
        ]
        .map(String::from),
    );
    h.join(",")
}

/// Append one sample as a CSV line.
pub fn write_row(buf: &mut Vec<u8>, s: &PlantSample, channels: usize) {
    // Writing into a Vec cannot fail.
    let _ = write!(buf, "{}", s.t_s);
    for (c, v) in s.counts.iter().zip(&s.valid).take(channels) {
        match c {
            Some(n) => {
                let _ = write!(buf, ",{n},{}", u8::from(*v));
            }
            None => {
                let _ = write!(buf, ",,{}", u8::from(*v));
            }
        }
    }
    let _ = writeln!(
        buf,
        ",{},{},{},{},{},{:.3},{:.3},{:.6},{:.7},{:.3},{:.6},{:.3},{:.3},{}",
        s.omega_in,
        s.omega_out,
        s.command * 100.0,
        s.temp_meas_c,
        s.ambient_c,
        s.torque_ref_nm,
        s.true_force_n,
        s.true_mu,
        s.true_radius_m,
        s.true_temp_c,
        s.true_bedding,
        s.true_torque_nm,
        s.true_capacity_nm,
        s.fault_code
    );
}

/// Synthesise `rows` samples of `scenario` into `output` (`-` for standard output).
///
/// # Errors
/// I/O errors, or a plant that cannot be built from the config.
pub fn synthesise(
    c: &DeviceSpec,
    scenario_name: &str,
    scenario: &Scenario,
    opts: PlantOptions,
    rows: u64,
    output: &str,
    progress: Option<&ProgressBar>,
) -> Result<SynthSummary, SimError> {
    let start = Instant::now();
    let seed = opts.seed;
    let mut plant = Plant::new(c, opts).map_err(SimError::Internal)?;
    let channels = c.sensors.len();
    let mut out = AtomicFile::create(output)?;
    let mut buf = Vec::with_capacity(1 << 17);
    let _ = writeln!(
        buf,
        "# clampwise synthetic trace: scenario '{scenario_name}', seed {seed}, device '{}'",
        c.device.name
    );
    let _ = writeln!(
        buf,
        "# INVENTED demo data from the simulator's f64 plant; true_* columns are the plant's truth"
    );
    let _ = writeln!(buf, "{}", header(channels));
    if let Some(pb) = progress {
        pb.set_length(rows);
    }
    let mut max_t = f64::MIN;
    let dt = c.device.sample_period_s;
    for i in 0..rows {
        // Sample counts stay far below 2⁵³.
        #[allow(clippy::cast_precision_loss)]
        let t = i as f64 * dt;
        let s = plant.step(&scenario.at(t));
        max_t = max_t.max(s.true_temp_c);
        write_row(&mut buf, &s, channels);
        if buf.len() >= 1 << 16 {
            if let Err(e) = out.write_all(&buf) {
                out.abandon("write failed");
                return Err(e);
            }
            buf.clear();
            if let Some(pb) = progress {
                pb.set_position(i);
            }
        }
    }
    out.write_all(&buf)?;
    out.commit()?;
    if let Some(pb) = progress {
        pb.set_position(rows);
    }
    Ok(SynthSummary {
        output: output.to_string(),
        scenario: scenario_name.to_string(),
        rows,
        seed,
        plant_radii_m: plant.radii(),
        max_true_temp_c: max_t,
        wear_m: plant.wear_m(),
        elapsed_s: start.elapsed().as_secs_f64(),
    })
}
