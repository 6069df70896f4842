//! Command-line options of `report`, and the time window shared with `plot`.

use std::path::PathBuf;

use clap::Args;

use crate::plot::TimeWindow;

/// `--from-s` / `--to-s`: the time window of a plot or report.
#[derive(Debug, Clone, Copy, Default, Args)]
pub struct WindowArgs {
    /// Keep only rows at or after this time, s.
    #[arg(long, allow_negative_numbers = true)]
    pub from_s: Option<f64>,
    /// Keep only rows at or before this time, s.
    #[arg(long, allow_negative_numbers = true)]
    pub to_s: Option<f64>,
}

impl WindowArgs {
    /// The window, checked.
    ///
    /// # Errors
    /// [`crate::error::SimError::Usage`] when an end is not finite or from is not before to.
    pub fn window(&self) -> Result<TimeWindow, crate::error::SimError> {
        let w = TimeWindow {
            from_s: self.from_s,
            to_s: self.to_s,
        };
        w.validate().map_err(crate::error::SimError::Usage)?;
        Ok(w)
    }
}

/// `report`.
#[derive(Debug, Args)]
pub struct ReportArgs {
    /// Device config (TOML) the estimates were made with.
    #[arg(long, short)]
    pub config: PathBuf,
    /// Estimate files written by `replay`.
    #[arg(required = true)]
    pub estimates: Vec<String>,
    /// Report file (one self-contained HTML page).
    #[arg(long, short)]
    pub out: String,
    /// Coverage map written by `fit --coverage-csv`, shown as the fit-coverage section.
    #[arg(long)]
    pub coverage_csv: Option<String>,
    /// Time window of the comparison, the flag timelines and the plots.
    #[command(flatten)]
    pub window: WindowArgs,
}
