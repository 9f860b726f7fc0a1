//! Writers: results in, files out. Solvers never call these; these never solve.
//!
//! Safety (see [`folder`]): results go to a staging folder and are swapped into place only
//! when every file is complete; only folders hxgrid wrote (marked by [`folder::MARKER`]) are
//! ever replaced. Every number is checked finite as it is written (the summaries by walking
//! their serde form, the CSV files cell by cell), so no file holds `NaN`, `inf` or a `null`
//! standing in for one.
//!
//! Size: above [`PROFILE_ROWS`] cells the profile CSV holds every k-th cell (first and last
//! always) unless `all_cells` is set; plots draw at most `svg::PLOT_POINTS` (4 000) points a curve.

pub mod console;
mod csv;
mod finite;
pub mod folder;
mod svg;

use crate::results::SteadyReport;
use crate::scenario::TransientReport;
pub use folder::check_destination;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Why results could not be written.
#[derive(Debug, thiserror::Error)]
pub enum OutputError {
    /// File-system failure.
    #[error("cannot write results to {path}: {source}")]
    Io {
        /// Where.
        path: String,
        /// OS error.
        source: std::io::Error,
    },
    /// A plot could not be drawn.
    #[error("cannot draw plot {path}: {message}")]
    Plot {
        /// Which file.
        path: String,
        /// Drawing library message.
        message: String,
    },
    /// A result was not a finite number (a defect: reported rather than written).
    #[error("refusing to write a non-finite value ({what}); nothing was written")]
    NonFinite {
        /// Which value.
        what: String,
    },
    /// The destination exists and is not a results folder hxgrid may replace.
    #[error(
        "will not write results to {path}: {reason}. hxgrid replaces only folders it wrote itself, so nothing was written and nothing there was touched; choose another folder with --out (a new or empty one), or move that one away"
    )]
    NotOurs {
        /// The destination.
        path: String,
        /// What is there.
        reason: String,
    },
    /// The destination has no final folder name (`.`, `..`, a root).
    #[error("cannot write results to {path}: give --out a folder name, e.g. --out results/my-run")]
    NotAFolderName {
        /// The destination given.
        path: String,
    },
}

fn io(path: &Path) -> impl FnOnce(std::io::Error) -> OutputError + '_ {
    move |source| OutputError::Io { path: path.display().to_string(), source }
}

/// Above this many cells the profile CSV is thinned to about this many rows by default.
pub const PROFILE_ROWS: usize = 20_000;

/// How much to write.
#[derive(Debug, Clone, Copy, Default)]
pub struct WriteOptions {
    /// Write every cell to profiles.csv, however many there are.
    pub all_cells: bool,
}

/// Every `stride`-th cell is written to profiles.csv (1 = every cell).
pub fn profile_stride(cells: usize, options: WriteOptions) -> usize {
    if options.all_cells || cells <= PROFILE_ROWS {
        1
    } else {
        cells.div_ceil(PROFILE_ROWS)
    }
}

/// Files a steady run writes, relative to its folder.
pub const STEADY_FILES: [&str; 5] = ["summary.json", "profiles.csv", "temperatures.svg", "heat_flux.svg", "pressure.svg"];

/// Check every number in the report (summary and profiles) is finite.
pub fn check_finite(report: &SteadyReport) -> Result<(), OutputError> {
    if let Some(what) = finite::first_non_finite(report, "summary") {
        return Err(OutputError::NonFinite { what });
    }
    if let Some(what) = finite::first_non_finite(&report.profile, "profile") {
        return Err(OutputError::NonFinite { what });
    }
    Ok(())
}

/// Write a steady report into `dir` (see the module header). Returns the paths written.
pub fn write_steady(report: &SteadyReport, dir: &Path, options: WriteOptions) -> Result<Vec<PathBuf>, OutputError> {
    if let Some(what) = finite::first_non_finite(report, "summary") {
        return Err(OutputError::NonFinite { what });
    }
    let stride = profile_stride(report.profile.len(), options);
    folder::write_folder(dir, &STEADY_FILES, |staging| {
        let mut summary = serde_json::to_value(report).expect("report serialises");
        summary["profile_csv_stride"] = stride.into();
        write_text(&staging.join("summary.json"), &(serde_json::to_string_pretty(&summary).expect("value serialises") + "\n"))?;
        write_with(&staging.join("profiles.csv"), |w| csv::profiles(report, stride, w))?;
        svg::temperatures(report, &staging.join("temperatures.svg"))?;
        svg::heat_flux(report, &staging.join("heat_flux.svg"))?;
        svg::pressure(report, &staging.join("pressure.svg"))?;
        Ok(())
    })?;
    Ok(STEADY_FILES.iter().map(|f| dir.join(f)).collect())
}

/// Files a transient run writes.
pub const TRANSIENT_FILES: [&str; 5] = ["transient.json", "timeseries.csv", "snapshots.csv", "response.svg", "snapshots.svg"];

/// Write a transient report into `dir`, with the same all-or-nothing replacement.
pub fn write_transient(report: &TransientReport, dir: &Path) -> Result<Vec<PathBuf>, OutputError> {
    if let Some(what) = finite::first_non_finite(report, "transient") {
        return Err(OutputError::NonFinite { what });
    }
    folder::write_folder(dir, &TRANSIENT_FILES, |staging| {
        write_text(&staging.join("transient.json"), &(serde_json::to_string_pretty(report).expect("report serialises") + "\n"))?;
        write_with(&staging.join("timeseries.csv"), |w| csv::timeseries(report, w))?;
        write_with(&staging.join("snapshots.csv"), |w| csv::snapshots(report, w))?;
        svg::response(report, &staging.join("response.svg"))?;
        svg::snapshots(report, &staging.join("snapshots.svg"))?;
        Ok(())
    })?;
    Ok(TRANSIENT_FILES.iter().map(|f| dir.join(f)).collect())
}

fn write_text(path: &Path, text: &str) -> Result<(), OutputError> {
    std::fs::write(path, text).map_err(io(path))
}

/// Stream a file through a buffer; `fill` returns Ok(Err(what)) for a non-finite value.
fn write_with(path: &Path, fill: impl FnOnce(&mut dyn Write) -> std::io::Result<Result<(), String>>) -> Result<(), OutputError> {
    let file = std::fs::File::create(path).map_err(io(path))?;
    let mut w = std::io::BufWriter::with_capacity(1 << 16, file);
    let name = path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default();
    match fill(&mut w).map_err(io(path))? {
        Ok(()) => {}
        Err(what) => return Err(OutputError::NonFinite { what: format!("{name}: {what}") }),
    }
    w.into_inner().map_err(|e| io(path)(e.into_error()))?.sync_all().map_err(io(path))
}
