//! Writers: results in, files out. Solvers never call these; these never solve.
//!
//! A run's files are written into a fresh temporary folder beside the destination and
//! moved into place only when every file is complete, so a failed run leaves the previous
//! results untouched. Every number is checked finite before anything is written.

mod csv;
mod svg;

use crate::results::SteadyReport;
use crate::scenario::TransientReport;
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
}

fn io(path: &Path) -> impl FnOnce(std::io::Error) -> OutputError + '_ {
    move |source| OutputError::Io { path: path.display().to_string(), source }
}

/// Files a steady run writes, relative to its folder.
pub const STEADY_FILES: [&str; 5] = ["summary.json", "profiles.csv", "temperatures.svg", "heat_flux.svg", "pressure.svg"];

/// Check every number in the report is finite.
pub fn check_finite(report: &SteadyReport) -> Result<(), OutputError> {
    check_json(&serde_json::to_value(report).expect("report serialises"), "summary")?;
    let scalars = [
        ("duty_W", report.duty_W),
        ("hot_outlet_C", report.hot_outlet_C),
        ("cold_outlet_C", report.cold_outlet_C),
        ("effectiveness", report.effectiveness),
        ("ntu", report.ntu),
        ("capacity_ratio", report.capacity_ratio),
        ("UA_W_K", report.UA_W_K),
        ("energy_imbalance_W", report.energy_imbalance_W),
        ("lumped.duty_W", report.lumped.duty_w),
        ("lumped.hot_outlet_C", report.lumped.hot_outlet_c),
        ("lumped.cold_outlet_C", report.lumped.cold_outlet_c),
        ("lumped.effectiveness", report.lumped.effectiveness),
    ];
    for (what, v) in scalars {
        if !v.is_finite() {
            return Err(OutputError::NonFinite { what: what.into() });
        }
    }
    for (i, row) in report.profile.iter().enumerate() {
        check_json(&serde_json::to_value(row).expect("row serialises"), &format!("profile[{i}]"))?;
        for v in [row.hot_c, row.cold_c, row.wall_c, row.heat_flux_w_m2, row.u_w_m2k] {
            if !v.is_finite() {
                return Err(OutputError::NonFinite { what: format!("profile row {i}") });
            }
        }
    }
    Ok(())
}

/// Write a steady report into `dir` (created if needed; an existing folder is replaced
/// only after the new files are complete). Returns the paths written.
pub fn write_steady(report: &SteadyReport, dir: &Path) -> Result<Vec<PathBuf>, OutputError> {
    check_finite(report)?;
    write_folder(dir, |staging| write_all(report, staging))?;
    Ok(STEADY_FILES.iter().map(|f| dir.join(f)).collect())
}

/// Files a transient run writes.
pub const TRANSIENT_FILES: [&str; 5] = ["transient.json", "timeseries.csv", "snapshots.csv", "response.svg", "snapshots.svg"];

/// Write a transient report into `dir`, with the same all-or-nothing replacement.
pub fn write_transient(report: &TransientReport, dir: &Path) -> Result<Vec<PathBuf>, OutputError> {
    let json = serde_json::to_value(report).expect("report serialises");
    check_json(&json, "transient")?;
    for (i, s) in report.samples.iter().enumerate() {
        check_json(&serde_json::to_value(s).expect("sample serialises"), &format!("timeseries[{i}]"))?;
    }
    write_folder(dir, |staging| {
        let path = staging.join("transient.json");
        std::fs::write(&path, serde_json::to_string_pretty(report).expect("report serialises") + "\n").map_err(io(&path))?;
        let path = staging.join("timeseries.csv");
        std::fs::write(&path, csv::timeseries(report)).map_err(io(&path))?;
        let path = staging.join("snapshots.csv");
        std::fs::write(&path, csv::snapshots(report)).map_err(io(&path))?;
        svg::response(report, &staging.join("response.svg"))?;
        svg::snapshots(report, &staging.join("snapshots.svg"))?;
        Ok(())
    })?;
    Ok(TRANSIENT_FILES.iter().map(|f| dir.join(f)).collect())
}

/// Reject any non-finite number in a serialised value (serde_json writes them as null).
fn check_json(v: &serde_json::Value, path: &str) -> Result<(), OutputError> {
    match v {
        serde_json::Value::Object(m) => m.iter().try_for_each(|(k, v)| check_json(v, &format!("{path}.{k}"))),
        serde_json::Value::Array(a) => a.iter().enumerate().try_for_each(|(i, v)| check_json(v, &format!("{path}[{i}]"))),
        serde_json::Value::Number(n) if !n.as_f64().is_some_and(f64::is_finite) => Err(OutputError::NonFinite { what: path.to_string() }),
        _ => Ok(()),
    }
}

/// Write into a staging folder beside `dir`, then swap it into place; on any failure the
/// staging folder is removed and `dir` is left as it was.
fn write_folder(dir: &Path, fill: impl FnOnce(&Path) -> Result<(), OutputError>) -> Result<(), OutputError> {
    let parent = dir.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    std::fs::create_dir_all(parent).map_err(io(parent))?;
    let leaf = dir.file_name().map(|s| s.to_string_lossy().into_owned()).unwrap_or_else(|| "results".into());
    let staging = parent.join(format!(".{leaf}.partial-{}", std::process::id()));
    if staging.exists() {
        std::fs::remove_dir_all(&staging).map_err(io(&staging))?;
    }
    std::fs::create_dir_all(&staging).map_err(io(&staging))?;
    if let Err(e) = fill(&staging) {
        let _ = std::fs::remove_dir_all(&staging);
        return Err(e);
    }
    // Swap: old folder aside, new into place, old removed.
    let old = parent.join(format!(".{leaf}.previous-{}", std::process::id()));
    if dir.exists() {
        std::fs::rename(dir, &old).map_err(io(dir))?;
    }
    if let Err(e) = std::fs::rename(&staging, dir) {
        if old.exists() {
            let _ = std::fs::rename(&old, dir);
        }
        return Err(io(dir)(e));
    }
    if old.exists() {
        std::fs::remove_dir_all(&old).map_err(io(&old))?;
    }
    Ok(())
}

fn write_all(report: &SteadyReport, dir: &Path) -> Result<(), OutputError> {
    let summary = dir.join("summary.json");
    let text = serde_json::to_string_pretty(report).expect("report serialises");
    std::fs::write(&summary, text + "\n").map_err(io(&summary))?;
    let profiles = dir.join("profiles.csv");
    std::fs::write(&profiles, csv::profiles(report)).map_err(io(&profiles))?;
    svg::temperatures(report, &dir.join("temperatures.svg"))?;
    svg::heat_flux(report, &dir.join("heat_flux.svg"))?;
    svg::pressure(report, &dir.join("pressure.svg"))?;
    Ok(())
}
