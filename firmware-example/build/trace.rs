//! The recorded trace for the HAL stub, from a CSV file in the simulator's trace format.
//!
//! Columns are found as the simulator finds them: the config's `[trace.columns]` mapping, else
//! the canonical names (`t_s`, `force_N_valid`, `omega_in_rad_s`, `omega_out_rad_s`, `command`,
//! `temp_C`, `ambient_C`, `torque_ref_Nm`). The force channels must be ADC counts (the stub
//! plays them back as the bridge ADC's frames); a cell whose valid flag is 0 becomes a
//! not-ready frame. Every other value goes through the column's unit conversion and is rounded
//! to the core's fixed-point type with `saturating_from_num` (nearest), as the simulator's
//! conversions (`clampwise-convert`) do, so the firmware's estimator gets the very inputs the simulator's gets; a brake's output
//! speed is 0, as in the simulator. Empty optional cells are `None`. The plant's truth columns
//! are ignored. A bad row is an error naming file, line and column; rows must be one sample
//! period apart.

use std::fmt::Write as _;
use std::path::Path;

use clampwise_core::sensor::ActuatorCommand;
use clampwise_core::units::{Celsius, NewtonMetres, RadPerSec};
use clampwise_device::column_units::{self, Conversion};
use clampwise_device::schema::{CANONICAL, DeviceKind, DeviceSpec};
use fixed::traits::Fixed;

/// Largest trace kept in flash (rows); a longer one would not fit a small part's flash.
const MAX_TRACE_ROWS: usize = 20_000;
/// Signed 24-bit range of the ADC's conversion result.
const ADC_MIN: i64 = -(1 << 23);
const ADC_MAX: i64 = (1 << 23) - 1;

/// One sample for the stub: per channel the counts (`None`: not ready), and the raw bits of
/// the speeds and the optional inputs.
pub struct Row {
    pub counts: Vec<Option<i32>>,
    pub omega_in_bits: i32,
    pub omega_out_bits: i32,
    pub command_bits: Option<i32>,
    pub lining_temperature_bits: Option<i32>,
    pub ambient_bits: Option<i32>,
    pub reference_torque_bits: Option<i32>,
}

/// The simulator's rounding (`clampwise_convert::saturating_fixed`): `saturating_from_num`, NaN as 0.
fn sat<T: Fixed<Bits = i32>>(v: f64) -> i32 {
    T::saturating_from_num(if v.is_nan() { 0.0 } else { v }).to_bits()
}

struct Column {
    index: usize,
    name: String,
    conv: Conversion,
}

fn find(
    headers: &csv::StringRecord,
    config: &DeviceSpec,
    quantity: &str,
    file: &str,
) -> Result<Option<Column>, String> {
    let &(_, canon_col, canon_unit, q) = CANONICAL
        .iter()
        .find(|e| e.0 == quantity)
        .ok_or_else(|| format!("internal: unknown quantity {quantity}"))?;
    let (name, unit, area) = match config.trace.columns.get(quantity) {
        Some(m) => (m.column.as_str(), m.unit.as_str(), m.piston_area_m2),
        None => (canon_col, canon_unit, None),
    };
    let conv = column_units::conversion(q, unit, area)
        .map_err(|m| format!("{file}: trace.columns.{quantity}: {m}"))?;
    Ok(headers.iter().position(|h| h == name).map(|index| Column {
        index,
        name: name.to_string(),
        conv,
    }))
}

fn need(
    headers: &csv::StringRecord,
    config: &DeviceSpec,
    quantity: &str,
    file: &str,
) -> Result<Column, String> {
    find(headers, config, quantity, file)?.ok_or_else(|| {
        format!(
            "{file}: no column for {quantity}; the header has: {}",
            headers.iter().collect::<Vec<_>>().join(", ")
        )
    })
}

/// Read the trace for a device with `channels` force channels.
pub fn read(path: &Path, config: &DeviceSpec, channels: usize) -> Result<Vec<Row>, String> {
    let file = path.display().to_string();
    let mut reader = csv::ReaderBuilder::new()
        .comment(Some(b'#'))
        .trim(csv::Trim::All)
        .from_path(path)
        .map_err(|e| format!("cannot read trace {file}: {e}"))?;
    let headers = reader
        .headers()
        .map_err(|e| format!("{file}: cannot read the header: {e}"))?
        .clone();
    let time = need(&headers, config, "time", &file)?;
    let mut force = Vec::new();
    let mut valid = Vec::new();
    for ch in 1..=channels {
        let quantity = format!("force_{ch}");
        let col = need(&headers, config, &quantity, &file)?;
        if !col.conv.counts {
            return Err(format!(
                "{file}: column `{}` is not in counts; the firmware's ADC delivers counts: map \
                 trace.columns.{quantity} to a column with unit = \"counts\"",
                col.name
            ));
        }
        force.push(col);
        valid.push(find(&headers, config, &format!("force_{ch}_valid"), &file)?);
    }
    let omega_in = need(&headers, config, "omega_in", &file)?;
    let omega_out = find(&headers, config, "omega_out", &file)?;
    let command = find(&headers, config, "command", &file)?;
    let temperature = find(&headers, config, "temperature", &file)?;
    let ambient = find(&headers, config, "ambient", &file)?;
    let torque_ref = find(&headers, config, "torque_ref", &file)?;
    let brake = config.device.kind == DeviceKind::Brake;
    let period = config.device.sample_period_s;

    let mut rows = Vec::new();
    for (index, record) in reader.records().enumerate() {
        let record = record.map_err(|e| format!("{file}: {e}"))?;
        let line = record.position().map_or(0, csv::Position::line);
        let at = |c: &Column| format!("{file}:{line}: column {} ({})", c.index + 1, c.name);
        let text = |c: &Column| record.get(c.index).unwrap_or("");
        let number = |c: &Column| -> Result<f64, String> {
            let t = text(c);
            t.parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .map(|v| c.conv.apply(v))
                .ok_or_else(|| format!("{}: `{t}` is not a finite number", at(c)))
        };
        let optional = |c: &Option<Column>| -> Result<Option<f64>, String> {
            match c {
                Some(c) if !text(c).is_empty() => number(c).map(Some),
                _ => Ok(None),
            }
        };
        let t = number(&time)?;
        #[allow(clippy::cast_precision_loss)] // row counts stay far below 2⁵³
        let expected = index as f64 * period;
        if (t - expected).abs() > 0.5 * period {
            return Err(format!(
                "{}: t = {t} s but sample {index} at the configured period is at {expected} s \
                 (the stub replays one row per period; gaps are not allowed)",
                at(&time)
            ));
        }
        let mut counts = Vec::with_capacity(channels);
        for (f, v) in force.iter().zip(&valid) {
            let valid_bit = v.as_ref().map(|v| (text(v), at(v)));
            counts.push(channel_counts(text(f), valid_bit, &at(f))?);
        }
        let omega_in_bits = sat::<RadPerSec>(number(&omega_in)?);
        let omega_out_bits = match &omega_out {
            Some(c) if !brake && !text(c).is_empty() => sat::<RadPerSec>(number(c)?),
            _ => 0,
        };
        rows.push(Row {
            counts,
            omega_in_bits,
            omega_out_bits,
            command_bits: optional(&command)?.map(sat::<ActuatorCommand>),
            lining_temperature_bits: optional(&temperature)?.map(sat::<Celsius>),
            ambient_bits: optional(&ambient)?.map(sat::<Celsius>),
            reference_torque_bits: optional(&torque_ref)?.map(sat::<NewtonMetres>),
        });
    }
    if rows.is_empty() || rows.len() > MAX_TRACE_ROWS {
        return Err(format!(
            "{file}: {} rows; a trace kept in flash needs 1 to {MAX_TRACE_ROWS}",
            rows.len()
        ));
    }
    Ok(rows)
}

/// One channel's counts: `None` when its valid bit (text and location, when the trace has the
/// column) says invalid; an error naming `at` for a cell that is not a whole count within the
/// signed 24-bit ADC range.
fn channel_counts(
    cell: &str,
    valid_bit: Option<(&str, String)>,
    at: &str,
) -> Result<Option<i32>, String> {
    let ok = match valid_bit {
        None => true,
        Some((text, where_)) => match text {
            "1" | "1.0" | "true" => true,
            "0" | "0.0" | "false" => false,
            other => return Err(format!("{where_}: valid bit must be 0 or 1, got `{other}`")),
        },
    };
    if !ok {
        return Ok(None);
    }
    if cell.is_empty() {
        return Err(format!("{at}: empty, but the channel is marked valid"));
    }
    let n: f64 = cell
        .parse()
        .map_err(|_| format!("{at}: `{cell}` is not a number of counts"))?;
    #[allow(clippy::cast_precision_loss)] // the ADC limits are exact in f64
    let in_range = (ADC_MIN as f64..=ADC_MAX as f64).contains(&n);
    if n.fract() != 0.0 || !in_range {
        return Err(format!(
            "{at}: {n} is not a whole count within the signed 24-bit ADC range"
        ));
    }
    // Whole and within ±2²³ by the check above.
    #[allow(clippy::cast_possible_truncation)]
    Ok(Some(n as i32))
}

/// `trace.rs`: the names of the inputs and the trace as a `static` array.
pub fn source(rows: &[Row], config_path: &Path, trace_path: &Path) -> String {
    let stem = |p: &Path| {
        p.file_stem()
            .map_or_else(|| "?".to_string(), |s| s.to_string_lossy().into_owned())
    };
    let mut s = String::new();
    let _ = writeln!(
        s,
        "// Generated by build.rs from {} and {}. Do not edit.\n",
        config_path.display(),
        trace_path.display()
    );
    let _ = writeln!(s, "/// Name of the device configuration (its file stem).");
    let _ = writeln!(s, "pub const CONFIG_NAME: &str = {:?};", stem(config_path));
    let _ = writeln!(
        s,
        "/// Where the build read the device configuration (a host path, for host tests)."
    );
    let _ = writeln!(
        s,
        "pub const CONFIG_PATH: &str = {:?};",
        config_path.display().to_string()
    );
    let _ = writeln!(
        s,
        "/// Where the build read the trace (a host path, for host tests)."
    );
    let _ = writeln!(
        s,
        "pub const TRACE_PATH: &str = {:?};",
        trace_path.display().to_string()
    );
    let _ = writeln!(s, "/// Name of the recorded trace (its file stem).");
    let _ = writeln!(s, "pub const TRACE_NAME: &str = {:?};", stem(trace_path));
    let _ = writeln!(
        s,
        "/// The recorded trace, one entry per sample, kept in flash."
    );
    let _ = writeln!(
        s,
        "pub static TRACE: [TraceSample<DEVICE_CHANNELS>; {}] = [",
        rows.len()
    );
    for row in rows {
        let cells = row
            .counts
            .iter()
            .map(|c| match c {
                Some(v) => format!("TraceCell::Counts({v})"),
                None => "TraceCell::NotReady".to_string(),
            })
            .collect::<Vec<_>>()
            .join(", ");
        let opt = |ty: &str, v: Option<i32>| {
            v.map_or_else(
                || "None".to_string(),
                |b| format!("Some({ty}::from_bits({b}))"),
            )
        };
        let _ = writeln!(
            s,
            "    TraceSample {{ counts: [{cells}], omega_in: RadPerSec::from_bits({}), \
             omega_out: RadPerSec::from_bits({}), auxiliary: Auxiliary {{ \
             actuator_command: {}, lining_temperature: {}, ambient_temperature: {}, \
             reference_torque: {} }} }},",
            row.omega_in_bits,
            row.omega_out_bits,
            opt("ActuatorCommand", row.command_bits),
            opt("Celsius", row.lining_temperature_bits),
            opt("Celsius", row.ambient_bits),
            opt("NewtonMetres", row.reference_torque_bits),
        );
    }
    let _ = writeln!(s, "];");
    s
}
