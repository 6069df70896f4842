//! The recorded trace for the HAL stub, from a CSV file in the simulator's trace format.
//!
//! Columns are found as the simulator finds them: the config's `[trace.columns]` mapping, else
//! the canonical names (`t_s`, `force_N_valid`, `omega_in_rad_s`, `omega_out_rad_s`). The force
//! channels must be ADC counts (the stub plays them back as the bridge ADC's frames); a cell
//! whose valid flag is 0 becomes a not-ready frame. Speeds go through the column's unit
//! conversion and are rounded to the core's `RadPerSec` by `checked_from_num` (nearest), as the
//! simulator rounds them. Other columns (command, temperatures, reference torque, the plant's
//! truth) are not wired into this example and are ignored. A bad row is an error naming file,
//! line and column; rows must be one sample period apart.

use std::fmt::Write as _;
use std::path::Path;

use clampwise_core::units::RadPerSec;
use clampwise_device::column_units::{self, Conversion};
use clampwise_device::config::{CANONICAL, DeviceConfig};

/// Largest trace kept in flash (rows); a longer one would not fit a small part's flash.
const MAX_TRACE_ROWS: usize = 20_000;
/// Signed 24-bit range of the ADC's conversion result.
const ADC_MIN: i64 = -(1 << 23);
const ADC_MAX: i64 = (1 << 23) - 1;

/// One sample for the stub: per channel the counts (`None`: not ready), and the speeds' bits.
pub struct Row {
    pub counts: Vec<Option<i32>>,
    pub omega_in_bits: i32,
    pub omega_out_bits: i32,
}

struct Column {
    index: usize,
    name: String,
    conv: Conversion,
}

fn find(
    headers: &csv::StringRecord,
    config: &DeviceConfig,
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
    config: &DeviceConfig,
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
pub fn read(path: &Path, config: &DeviceConfig, channels: usize) -> Result<Vec<Row>, String> {
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
            let ok = match v {
                None => true,
                Some(v) => number(v)? != 0.0,
            };
            let cell = text(f);
            let value = if !ok {
                None
            } else if cell.is_empty() {
                return Err(format!("{}: empty, but the channel is marked valid", at(f)));
            } else {
                let n: i64 = cell
                    .parse()
                    .map_err(|_| format!("{}: `{cell}` is not an integer count", at(f)))?;
                if !(ADC_MIN..=ADC_MAX).contains(&n) {
                    return Err(format!(
                        "{}: {n} is outside the signed 24-bit ADC range",
                        at(f)
                    ));
                }
                // In range by the check above.
                #[allow(clippy::cast_possible_truncation)]
                Some(n as i32)
            };
            counts.push(value);
        }
        let speed = |c: &Column| -> Result<i32, String> {
            let v = number(c)?;
            RadPerSec::checked_from_num(v)
                .map(RadPerSec::to_bits)
                .ok_or_else(|| format!("{}: {v} rad/s does not fit RadPerSec", at(c)))
        };
        let omega_in_bits = speed(&omega_in)?;
        let omega_out_bits = match &omega_out {
            Some(c) => speed(c)?,
            None => 0,
        };
        rows.push(Row {
            counts,
            omega_in_bits,
            omega_out_bits,
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
        let _ = writeln!(
            s,
            "    TraceSample {{ counts: [{cells}], omega_in: RadPerSec::from_bits({}), \
             omega_out: RadPerSec::from_bits({}) }},",
            row.omega_in_bits, row.omega_out_bits
        );
    }
    let _ = writeln!(s, "];");
    s
}
