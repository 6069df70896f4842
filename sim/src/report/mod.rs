//! `report`: one self-contained HTML page about a set of estimate files — device and config
//! checksums, tool version, where each input came from (name, size, rows, time span,
//! SHA-256), the comparison with the reference torque by region and by state (the numbers of
//! [`crate::compare::Comparer`], not a second computation), the holding gate, when each flag
//! was raised, the plots as inline SVG, the fit coverage when given, and the safety caution.
//!
//! Data flow: config → device name, tables checksum, SHA-256; each estimate file, read once
//! → [`Comparer`] + [`Timeline`] + [`Envelope`] (rows inside the time window) and the row
//! count and time span of the whole file; SHA-256 of each input file; optional coverage CSV
//! → [`render::document`] → written atomically.
//!
//! The page has no script, no external style sheet, image or font, and names no URL: it
//! reads the same offline, in any browser, years later. Every text from an input file (file
//! names, device name, labels) is HTML-escaped.

pub mod args;
pub mod coverage;
pub mod html;
pub mod provenance;
pub mod render;
pub mod timeline;

use serde_json::json;

pub use args::{ReportArgs, WindowArgs};

use crate::build_core::CoreDevice;
use crate::commands::{Outcome, bar};
use crate::compare::{CompareReport, Comparer, GateSpec};
use crate::config::LoadedConfig;
use crate::error::SimError;
use crate::estimate::EstimateReader;
use crate::fit::CellReport;
use crate::output::write_file;
use crate::plot::{BUCKETS, Envelope, TimeWindow};
use crate::replay::{CAUTION, ESTIMATOR_NAME};
use timeline::{FlagHistory, Timeline};

/// One input file's provenance.
#[derive(Debug, Clone, serde::Serialize)]
pub struct Provenance {
    /// The name as given.
    pub file: String,
    /// Size, bytes.
    pub bytes: u64,
    /// SHA-256 of the file, hex.
    pub sha256: String,
}

/// What the report says about one estimate file.
pub struct EstimateSection {
    /// Where it came from.
    pub provenance: Provenance,
    /// Rows in the file.
    pub rows: u64,
    /// Rows inside the time window.
    pub rows_in_window: u64,
    /// Time of the first and last row of the file, s.
    pub time_span_s: Option<(f64, f64)>,
    /// The comparison (rows inside the window).
    pub compare: CompareReport,
    /// Flags raised (rows inside the window).
    pub flags: Vec<FlagHistory>,
    /// The plotted envelope.
    pub envelope: Envelope,
}

/// The fit coverage shown.
pub struct CoverageSection {
    /// Where it came from.
    pub provenance: Provenance,
    /// The entries.
    pub cells: Vec<CellReport>,
    /// Table rows (temperatures).
    pub nt: usize,
    /// Table columns (slip speeds).
    pub nv: usize,
}

/// Everything a report shows.
pub struct ReportData {
    /// Device name from the config.
    pub device: String,
    /// Device kind from the config.
    pub device_kind: String,
    /// The config file.
    pub config: Provenance,
    /// The core's `DeviceConfig::checksum` of the config (as `tables` prints and emits it).
    pub device_checksum: u32,
    /// Program name and version.
    pub tool: String,
    /// The estimator behind the estimates.
    pub estimator: String,
    /// The time window.
    pub window: TimeWindow,
    /// One per estimate file.
    pub estimates: Vec<EstimateSection>,
    /// Fit coverage, when given.
    pub coverage: Option<CoverageSection>,
}

fn provenance(path: &str) -> Result<Provenance, SimError> {
    let (sha256, bytes) = provenance::sha256_file(path)?;
    Ok(Provenance {
        file: path.to_string(),
        bytes,
        sha256,
    })
}

/// Read one estimate file for the report.
///
/// # Errors
/// I/O and located data errors.
pub fn read_estimate(
    path: &str,
    cfg: &LoadedConfig,
    window: TimeWindow,
    progress: Option<&indicatif::ProgressBar>,
) -> Result<EstimateSection, SimError> {
    if path == "-" {
        return Err(SimError::Usage(
            "report reads files (it hashes each input): standard input is not accepted".into(),
        ));
    }
    let mut r = EstimateReader::open(path)?;
    if let (Some(pb), (Some(len), _)) = (progress, r.progress()) {
        pb.set_length(len);
    }
    let mut cmp = Comparer::new(Some(&cfg.config), GateSpec::default());
    let mut tl = Timeline::default();
    let mut env = Envelope::new(BUCKETS, window);
    let (mut rows, mut first, mut last) = (0u64, None, None);
    while let Some(row) = r.next_row()? {
        rows += 1;
        first.get_or_insert(row.t_s);
        last = Some(row.t_s);
        env.push(&row, None);
        if window.contains(row.t_s) {
            cmp.add(&row);
            tl.add(&row);
        }
        if rows.is_multiple_of(8192)
            && let Some(pb) = progress
        {
            pb.set_position(r.progress().1);
        }
    }
    Ok(EstimateSection {
        provenance: provenance(path)?,
        rows,
        rows_in_window: env.kept(),
        time_span_s: first.zip(last),
        compare: cmp.report(r.file()),
        flags: tl.finish(),
        envelope: env,
    })
}

/// `report`.
///
/// # Errors
/// Usage, config, data, I/O and plotting errors; nothing is written under the report's name
/// unless it is complete.
pub fn run(a: &ReportArgs, quiet: bool) -> Result<Outcome, SimError> {
    let window = a.window.window()?;
    if a.out == "-" {
        return Err(SimError::Usage(
            "report needs a file name for --out (an .html file)".into(),
        ));
    }
    let cfg = LoadedConfig::load(&a.config)?;
    let core = CoreDevice::build(&cfg.config).map_err(|e| SimError::Internal(e.to_string()))?;
    let config = provenance(&a.config.display().to_string())?;
    let mut estimates = Vec::new();
    for e in &a.estimates {
        let pb = bar(quiet, None, e);
        let s = read_estimate(e, &cfg, window, pb.as_ref())?;
        if let Some(pb) = pb {
            pb.finish_and_clear();
        }
        estimates.push(s);
    }
    let coverage = match &a.coverage_csv {
        Some(p) => {
            let (cells, nt, nv) = coverage::read(p)?;
            Some(CoverageSection {
                provenance: provenance(p)?,
                cells,
                nt,
                nv,
            })
        }
        None => None,
    };
    let data = ReportData {
        device: cfg.config.device.name.clone(),
        device_kind: format!("{:?}", cfg.config.device.kind),
        config,
        device_checksum: core.device.checksum(),
        tool: format!("clampwise {}", env!("CARGO_PKG_VERSION")),
        estimator: ESTIMATOR_NAME.to_string(),
        window,
        estimates,
        coverage,
    };
    let page = render::document(&data)?;
    write_file(&a.out, page.as_bytes())?;
    let human = format!(
        "report of {} estimate file(s) written to {} ({} bytes)\n{CAUTION}\n",
        data.estimates.len(),
        a.out,
        page.len()
    );
    let js = json!({
        "command": "report",
        "file": a.out,
        "config": {"file": data.config.file, "sha256": data.config.sha256,
                   "device_checksum": format!("0x{:08X}", data.device_checksum)},
        "inputs": data.estimates.iter().map(|s| json!({
            "file": s.provenance.file, "sha256": s.provenance.sha256, "bytes": s.provenance.bytes,
            "rows": s.rows, "rows_in_window": s.rows_in_window, "time_span_s": s.time_span_s,
        })).collect::<Vec<_>>(),
        "coverage": data.coverage.as_ref().map(|c| &c.provenance),
    });
    Ok(Outcome {
        human,
        json: js,
        human_to_stderr: false,
        failure: None,
    })
}
