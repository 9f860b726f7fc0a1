//! CSV files, streamed row by row from each row type's own serde form: the header is the
//! row type's field names (units in the names), the values its numbers, an absent optional
//! an empty field. Every number is checked finite as it is formatted (a non-finite value stops
//! the file and names its row and column), so no column list is kept beside the types.

use super::finite::{visit, Leaf};
use crate::results::SteadyReport;
use crate::scenario::TransientReport;
use serde::Serialize;
use std::fmt::Write as _;
use std::io::{self, Write};

/// The column names of a row type: its serialised field names, in order.
pub fn columns<T: Serialize>(row: &T) -> Vec<String> {
    let mut names = Vec::new();
    visit(row, "", &mut |path, _| {
        names.push(path.last().map(|s| s.trim_start_matches('.').to_string()).unwrap_or_default());
        true
    });
    names
}

/// Write `rows` (numbered from 1 as `number` says) with `digits` significant decimals in
/// scientific form; Ok(Err(what)) for a non-finite number.
fn write_rows<'a, T: Serialize + 'a>(rows: impl Iterator<Item = (usize, &'a T)>, digits: usize, w: &mut dyn Write) -> io::Result<Result<(), String>> {
    let mut line = String::with_capacity(512);
    let mut header_done = false;
    for (number, row) in rows {
        if !header_done {
            writeln!(w, "{}", columns(row).join(","))?;
            header_done = true;
        }
        line.clear();
        let mut bad: Option<String> = None;
        let mut first = true;
        visit(row, "", &mut |path, v| {
            if !first {
                line.push(',');
            }
            first = false;
            match v {
                Leaf::Whole(i) => {
                    let _ = write!(line, "{i}");
                    true
                }
                Leaf::Real(Some(x)) if x.is_finite() => {
                    let _ = write!(line, "{x:.digits$e}");
                    true
                }
                Leaf::Real(Some(_)) => {
                    bad = Some(format!("row {number}, column {}", path.last().map(|s| s.trim_start_matches('.')).unwrap_or("?")));
                    false
                }
                Leaf::Real(None) => true,
            }
        });
        if let Some(what) = bad {
            return Ok(Err(what));
        }
        line.push('\n');
        w.write_all(line.as_bytes())?;
    }
    Ok(Ok(()))
}

/// profiles.csv: one row per cell centre (every `stride`-th cell, and the last).
pub fn profiles(report: &SteadyReport, stride: usize, w: &mut dyn Write) -> io::Result<Result<(), String>> {
    let n = report.profile.len();
    write_rows(report.profile.iter().enumerate().filter(|(i, _)| i % stride == 0 || i + 1 == n).map(|(i, r)| (i + 1, r)), 10, w)
}

/// timeseries.csv: one row per output time (the columns of `Sample`).
pub fn timeseries(report: &TransientReport, w: &mut dyn Write) -> io::Result<Result<(), String>> {
    write_rows(report.samples.iter().enumerate().map(|(i, s)| (i + 1, s)), 10, w)
}

/// One row of a network's snapshots.csv.
#[derive(Serialize)]
#[allow(non_snake_case)]
struct NetworkSnapshotRow {
    time_s: f64,
    i: usize,
    j: usize,
    k: usize,
    x_fraction: f64,
    y_fraction: f64,
    hot_C: f64,
    cold_C: f64,
    wall_C: f64,
}

/// One row of snapshots.csv.
#[derive(Serialize)]
#[allow(non_snake_case)]
struct SnapshotRow {
    time_s: f64,
    x_m: f64,
    hot_C: f64,
    cold_C: f64,
    wall_C: f64,
}

/// snapshots.csv: one row per (time, face). Wall temperatures live at cell centres; at a
/// face the mean of the two neighbouring cells is written (the end cell at the ends).
pub fn snapshots(report: &TransientReport, w: &mut dyn Write) -> io::Result<Result<(), String>> {
    if let Some(net) = &report.network {
        // One row per cell and snapshot: the cell's indices and position, its bulk
        // temperatures and wall.
        let rows: Vec<NetworkSnapshotRow> = report
            .snapshots
            .iter()
            .flat_map(|snap| {
                net.cells.iter().enumerate().map(move |(k, c)| NetworkSnapshotRow {
                    time_s: snap.time_s,
                    i: c.index[0],
                    j: c.index[1],
                    k: c.index[2],
                    x_fraction: c.position[0],
                    y_fraction: c.position[1],
                    hot_C: snap.hot_faces_c[k],
                    cold_C: snap.cold_faces_c[k],
                    wall_C: snap.wall_c[k],
                })
            })
            .collect();
        return write_rows(rows.iter().enumerate().map(|(i, r)| (i + 1, r)), 10, w);
    }
    let rows: Vec<SnapshotRow> = report
        .snapshots
        .iter()
        .flat_map(|snap| {
            let n = snap.wall_c.len();
            report.faces_m.iter().enumerate().map(move |(j, x)| SnapshotRow {
                time_s: snap.time_s,
                x_m: *x,
                hot_C: snap.hot_faces_c[j],
                cold_C: snap.cold_faces_c[j],
                wall_C: match j {
                    0 => snap.wall_c[0],
                    j if j == n => snap.wall_c[n - 1],
                    j => 0.5 * (snap.wall_c[j - 1] + snap.wall_c[j]),
                },
            })
        })
        .collect();
    if rows.is_empty() {
        let empty = SnapshotRow { time_s: 0.0, x_m: 0.0, hot_C: 0.0, cold_C: 0.0, wall_C: 0.0 };
        writeln!(w, "{}", columns(&empty).join(","))?;
        return Ok(Ok(()));
    }
    write_rows(rows.iter().enumerate().map(|(i, r)| (i + 1, r)), 10, w)
}
