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
pub mod design;
pub(crate) mod finite;
pub mod folder;
pub(crate) mod html;
pub(crate) mod svg;

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

/// "v unit at x m" on an axial line, "v unit at cell (i, j, k)" in a network (the cell's
/// indices as in profiles.csv); 4 significant digits. Shared by the printed summary and the
/// report.
pub(crate) fn value_at(v: f64, unit: &str, x_m: f64, cell: Option<[usize; 3]>) -> String {
    let sig = |v: f64| crate::text::sig(v, 4);
    let u = if unit.is_empty() { String::new() } else { format!(" {unit}") };
    match cell {
        Some([i, j, k]) => format!("{}{u} at cell ({i}, {j}, {k})", sig(v)),
        None => format!("{}{u} at {} m", sig(v), sig(x_m)),
    }
}

/// "smallest … largest", each with where (see [`value_at`]).
pub(crate) fn extremes(e: &crate::results::Extremes, unit: &str) -> String {
    format!("{} … {}", value_at(e.min, unit, e.min_at_m, e.min_cell), value_at(e.max, unit, e.max_at_m, e.max_cell))
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

/// One file of a results folder: its name and its writer. Every output format sits behind
/// this trait, and a results folder is a list of them, so adding a file touches this list
/// only (the marker's file list and the files reported follow from it).
pub trait FileWriter<R>: Sync {
    /// The file's name inside the results folder.
    fn name(&self) -> &'static str;
    /// Write `report` into the file at `path`.
    fn write(&self, report: &R, path: &Path, options: WriteOptions) -> Result<(), OutputError>;
    /// Which reports have this file.
    fn applies(&self) -> Applies {
        Applies::Always
    }
}

/// Which steady reports have a file: a network has field plots and its outlets, an axial line
/// its pressure profile.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Applies {
    /// Every report.
    Always,
    /// Reports on an axial line of cells.
    Axial,
    /// Reports on a cell network.
    Network,
}

impl Applies {
    fn to(self, network: bool) -> bool {
        match self {
            Applies::Always => true,
            Applies::Axial => !network,
            Applies::Network => network,
        }
    }
}

/// Whether a report is of a network (for [`Applies`]).
pub trait Arranged {
    /// True for a cell network.
    fn is_network(&self) -> bool;
}

impl Arranged for SteadyReport {
    fn is_network(&self) -> bool {
        self.fields.is_some()
    }
}

impl Arranged for TransientReport {
    fn is_network(&self) -> bool {
        self.network.is_some()
    }
}

/// A file writer from a name and a function.
struct Writer<R: 'static> {
    name: &'static str,
    write: fn(&R, &Path, WriteOptions) -> Result<(), OutputError>,
    applies: Applies,
}

impl<R> FileWriter<R> for Writer<R> {
    fn name(&self) -> &'static str {
        self.name
    }
    fn write(&self, report: &R, path: &Path, options: WriteOptions) -> Result<(), OutputError> {
        (self.write)(report, path, options)
    }
    fn applies(&self) -> Applies {
        self.applies
    }
}

/// The files of a steady run, in the order written (see [`FileWriter::applies`] for which
/// a report has).
pub fn steady_files() -> Vec<&'static dyn FileWriter<SteadyReport>> {
    static FILES: [Writer<SteadyReport>; 9] = [
        Writer {
            name: "summary.json",
            write: |r, path, options| {
                let mut summary = serde_json::to_value(r).expect("report serialises");
                summary["profile_csv_stride"] = profile_stride(r.profile.len(), options).into();
                write_text(path, &(serde_json::to_string_pretty(&summary).expect("value serialises") + "\n"))
            },
            applies: Applies::Always,
        },
        Writer {
            name: "profiles.csv",
            write: |r, path, options| write_with(path, |w| csv::profiles(r, profile_stride(r.profile.len(), options), w)),
            applies: Applies::Always,
        },
        Writer { name: "temperatures.svg", write: |r, path, _| svg::temperatures(r, path), applies: Applies::Always },
        Writer { name: "heat_flux.svg", write: |r, path, _| svg::heat_flux(r, path), applies: Applies::Always },
        Writer { name: "pressure.svg", write: |r, path, _| svg::pressure(r, path), applies: Applies::Axial },
        Writer { name: "outlets.svg", write: |r, path, _| svg::outlets(r, path), applies: Applies::Network },
        Writer { name: "tq_diagram.svg", write: |r, path, _| svg::temperature_duty(r, path), applies: Applies::Axial },
        Writer { name: "film_coefficients.svg", write: |r, path, _| svg::flow(r, path), applies: Applies::Axial },
        // Last: it inlines the plots written before it.
        Writer { name: "report.html", write: |r, path, _| html::steady(r, path), applies: Applies::Always },
    ];
    FILES.iter().map(|w| w as &dyn FileWriter<SteadyReport>).collect()
}

/// The files of a transient run, in the order written.
pub fn transient_files() -> Vec<&'static dyn FileWriter<TransientReport>> {
    static FILES: [Writer<TransientReport>; 6] = [
        Writer {
            name: "transient.json",
            write: |r, path, _| write_text(path, &(serde_json::to_string_pretty(r).expect("report serialises") + "\n")),
            applies: Applies::Always,
        },
        Writer { name: "timeseries.csv", write: |r, path, _| write_with(path, |w| csv::timeseries(r, w)), applies: Applies::Always },
        Writer { name: "snapshots.csv", write: |r, path, _| write_with(path, |w| csv::snapshots(r, w)), applies: Applies::Always },
        Writer { name: "response.svg", write: |r, path, _| svg::response(r, path), applies: Applies::Always },
        Writer { name: "snapshots.svg", write: |r, path, _| svg::snapshots(r, path), applies: Applies::Always },
        // Last: it inlines the plots written before it.
        Writer { name: "report.html", write: |r, path, _| html::transient(r, path), applies: Applies::Always },
    ];
    FILES.iter().map(|w| w as &dyn FileWriter<TransientReport>).collect()
}

/// Names of the files a steady run on an axial line writes, relative to its folder.
pub fn steady_file_names() -> Vec<&'static str> {
    steady_files().iter().filter(|f| f.applies().to(false)).map(|f| f.name()).collect()
}

/// Names of the files a transient run writes.
pub fn transient_file_names() -> Vec<&'static str> {
    transient_files().iter().map(|f| f.name()).collect()
}

/// Write every file of `files` for `report` into `dir` through one staging folder.
fn write_files<R: serde::Serialize + Arranged>(
    report: &R,
    root: &str,
    dir: &Path,
    files: &[&dyn FileWriter<R>],
    options: WriteOptions,
) -> Result<Vec<PathBuf>, OutputError> {
    if let Some(what) = finite::first_non_finite(report, root) {
        return Err(OutputError::NonFinite { what });
    }
    let files: Vec<_> = files.iter().filter(|f| f.applies().to(report.is_network())).collect();
    let names: Vec<&str> = files.iter().map(|f| f.name()).collect();
    folder::write_folder(dir, &names, |staging| files.iter().try_for_each(|f| f.write(report, &staging.join(f.name()), options)))?;
    Ok(names.iter().map(|f| dir.join(f)).collect())
}

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
    write_files(report, "summary", dir, &steady_files(), options)
}

/// Write a transient report into `dir`, with the same all-or-nothing replacement.
pub fn write_transient(report: &TransientReport, dir: &Path) -> Result<Vec<PathBuf>, OutputError> {
    write_files(report, "transient", dir, &transient_files(), WriteOptions::default())
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
