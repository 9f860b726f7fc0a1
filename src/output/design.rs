//! Files of the design studies: a sweep's `sweep.csv` (one row per point: index, inputs,
//! status, key results, error) with its manifest `sweep.json` and plot `sweep.svg`;
//! merging shards; an uncertainty run's `uncertainty.json` and `samples.csv`.
//!
//! Numbers are written in the shortest form that reads back to the same value, so the
//! plot drawn from merged shard files is the one drawn by the unsharded run (both draw from
//! the CSV text), and merged files are byte for byte the unsharded ones.

use super::{folder, io, OutputError};
use crate::design::sweep::{Point, PointResult};
use crate::design::{Combine, SweepInput};
use serde::{Deserialize, Serialize};
use std::fmt::Write as _;
use std::path::{Path, PathBuf};

/// A number that reads back exactly: plain decimals in the usual range, else exponent form.
pub fn exact(x: f64) -> String {
    if x == 0.0 || (1e-4..1e15).contains(&x.abs()) {
        format!("{x}")
    } else {
        format!("{x:e}")
    }
}

/// A CSV field: quoted, with quotes doubled, when it holds a comma, quote or line break.
fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\"").replace(['\n', '\r'], " "))
    } else {
        s.to_string()
    }
}

/// The result columns of sweep.csv (the serialised names of [`PointResult`]).
fn result_columns() -> Vec<String> {
    super::csv::columns(&PointResult::default())
}

/// A result row's values in column order, each in round-trip form (an absent optional empty).
fn result_fields(r: &PointResult) -> Vec<String> {
    let mut out = Vec::new();
    super::finite::visit(r, "", &mut |_, leaf| {
        out.push(match leaf {
            super::finite::Leaf::Real(Some(x)) => exact(x),
            super::finite::Leaf::Real(None) => String::new(),
            super::finite::Leaf::Whole(i) => i.to_string(),
        });
        true
    });
    out
}

/// The header line of sweep.csv.
pub fn sweep_header(inputs: &[SweepInput]) -> String {
    let mut cols = vec!["point".to_string()];
    cols.extend(inputs.iter().map(|i| field(&i.key)));
    cols.push("status".into());
    cols.extend(result_columns());
    cols.push("error".into());
    cols.join(",")
}

/// One line of sweep.csv (point numbered from 1).
pub fn sweep_line(p: &Point) -> String {
    let mut line = format!("{}", p.index + 1);
    for v in &p.values {
        let _ = write!(line, ",{}", exact(*v));
    }
    match &p.outcome {
        Ok(r) => {
            line.push_str(",ok");
            for v in result_fields(r) {
                let _ = write!(line, ",{v}");
            }
            line.push(',');
        }
        Err(e) => {
            let _ = write!(line, ",{}", e.status());
            line.push_str(&",".repeat(result_columns().len()));
            let _ = write!(line, ",{}", field(&e.to_string()));
        }
    }
    line
}

/// Which slice of a sweep a file holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
pub struct Shard {
    /// K, from 1.
    pub index: usize,
    /// N.
    pub count: usize,
}

/// sweep.json: what the sweep was and which of its points the folder holds.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SweepManifest {
    /// Case name.
    pub case: String,
    /// SHA-256 of the case file.
    pub input_sha256: String,
    /// hxgrid version that ran it.
    pub hxgrid_version: String,
    /// "factorial" or "paired".
    pub combine: String,
    /// Swept keys and their values.
    pub inputs: Vec<ManifestInput>,
    /// Points in the whole sweep.
    pub points: usize,
    /// The slice this folder holds (absent: every point).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shard: Option<Shard>,
    /// Points in this folder's sweep.csv.
    pub points_in_file: usize,
    /// Of those, points without results (status other than "ok").
    pub points_failed: usize,
    /// The standing caution.
    pub caution: String,
}

/// One swept input in the manifest.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ManifestInput {
    /// Dotted key.
    pub key: String,
    /// Values.
    pub values: Vec<f64>,
}

impl SweepManifest {
    /// The manifest of a sweep run.
    pub fn new(case: &str, sha: &str, combine: Combine, inputs: &[SweepInput], points: usize, shard: Option<Shard>, lines: &[String]) -> Self {
        SweepManifest {
            case: case.to_string(),
            input_sha256: sha.to_string(),
            hxgrid_version: env!("CARGO_PKG_VERSION").to_string(),
            combine: match combine {
                Combine::Factorial => "factorial".into(),
                Combine::Paired => "paired".into(),
            },
            inputs: inputs.iter().map(|i| ManifestInput { key: i.key.clone(), values: i.values.clone() }).collect(),
            points,
            shard,
            points_in_file: lines.len(),
            points_failed: failed(lines, inputs.len()),
            caution: crate::results::CAUTION.to_string(),
        }
    }
}

/// Points whose status is not "ok".
fn failed(lines: &[String], inputs: usize) -> usize {
    lines.iter().filter(|l| l.split(',').nth(inputs + 1) != Some("ok")).count()
}

/// Files of a sweep folder.
pub const SWEEP_FILES: [&str; 4] = ["sweep.csv", "sweep.json", "sweep.svg", "report.html"];
/// Files of a shard folder (no plot of a slice).
pub const SHARD_FILES: [&str; 2] = ["sweep.csv", "sweep.json"];

/// Write a sweep (or shard) folder: the CSV from `header` and `lines`, the manifest, and for
/// a whole sweep the plot.
pub fn write_sweep(dir: &Path, manifest: &SweepManifest, header: &str, lines: &[String]) -> Result<Vec<PathBuf>, OutputError> {
    let files: &[&str] = if manifest.shard.is_some() { &SHARD_FILES } else { &SWEEP_FILES };
    let mut csv = String::with_capacity(header.len() + 1 + lines.iter().map(|l| l.len() + 1).sum::<usize>());
    csv.push_str(header);
    csv.push('\n');
    for l in lines {
        csv.push_str(l);
        csv.push('\n');
    }
    folder::write_folder(dir, files, |staging| {
        let p = staging.join("sweep.csv");
        std::fs::write(&p, &csv).map_err(io(&p))?;
        let p = staging.join("sweep.json");
        std::fs::write(&p, serde_json::to_string_pretty(manifest).expect("a manifest serialises") + "\n").map_err(io(&p))?;
        if manifest.shard.is_none() {
            sweep_plot(&staging.join("sweep.svg"), manifest, &csv)?;
            super::html::sweep(manifest, &csv, &staging.join("report.html"))?;
        }
        Ok(())
    })?;
    Ok(files.iter().map(|f| dir.join(f)).collect())
}

/// Key results against the first swept input, one curve per combination of the others
/// (at most eight; the first eight are drawn), read from the CSV text.
fn sweep_plot(path: &Path, m: &SweepManifest, csv: &str) -> Result<(), OutputError> {
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap_or_default().split(',').collect();
    let col = |name: &str| header.iter().position(|h| *h == name);
    let ni = m.inputs.len();
    let (duty, hot, cold) = (col("duty_W"), col("hot_outlet_C"), col("cold_outlet_C"));
    let (dp_hot, dp_cold) = (col("hot_pressure_drop_Pa"), col("cold_pressure_drop_Pa"));
    // Group rows by the values of the other inputs (in order of first appearance).
    let mut groups: Vec<(String, Vec<[f64; 6]>)> = Vec::new();
    for l in lines {
        let f: Vec<&str> = l.split(',').collect();
        if f.get(ni + 1) != Some(&"ok") {
            continue;
        }
        let num = |i: Option<usize>| i.and_then(|i| f.get(i)).and_then(|v| v.parse::<f64>().ok()).unwrap_or(f64::NAN);
        let label = if m.combine == "paired" || ni == 1 {
            String::new()
        } else {
            (1..ni).map(|k| format!("{} = {}", m.inputs[k].key, f[k + 1])).collect::<Vec<_>>().join(", ")
        };
        let row = [num(Some(1)), num(duty), num(hot), num(cold), num(dp_hot), num(dp_cold)];
        match groups.iter_mut().find(|g| g.0 == label) {
            Some(g) => g.1.push(row),
            None => groups.push((label, vec![row])),
        }
    }
    groups.truncate(8);
    let single = groups.len() == 1 && groups[0].0.is_empty();
    let curves = |k: usize, scale: f64, width: u32, labelled: bool| -> Vec<crate::output::svg::StudyCurve> {
        groups
            .iter()
            .enumerate()
            .map(|(g, (label, rows))| {
                let label = if !labelled {
                    String::new()
                } else if single {
                    "grid".to_string()
                } else {
                    label.clone()
                };
                (label, g, width, rows.iter().map(|r| (r[0], r[k] * scale)).collect())
            })
            .collect()
    };
    let mut duty = curves(1, 1e-3, 2, !single);
    if single {
        duty[0].0.clear();
    }
    // Outlets: the hot outlet thick and labelled, the cold outlet thin in the same colour.
    let mut outlets = curves(2, 1.0, 3, !single);
    outlets.extend(curves(3, 1.0, 1, false));
    let title = format!("{}: sweep of {} ({} points)", m.case, m.inputs[0].key, m.points);
    let mut panels = vec![("duty (kW)".to_string(), duty), ("outlets (°C): hot thick, cold thin".to_string(), outlets)];
    // Each stream's pressure drop where its surface has a friction model (an empty column
    // reads as NaN), in a panel of its own: the two often differ tenfold.
    for (k, which) in [(4, "hot"), (5, "cold")] {
        let mut drops = curves(k, 1e-3, 2, false);
        drops.iter_mut().for_each(|c| c.3.retain(|p| p.1.is_finite()));
        drops.retain(|c| !c.3.is_empty());
        if !drops.is_empty() {
            panels.push((format!("{which} pressure drop (kPa)"), drops));
        }
    }
    crate::output::svg::study_panels(path, &title, &m.inputs[0].key, &panels)
}

/// Why shard folders could not be merged.
#[derive(Debug, thiserror::Error)]
pub enum MergeError {
    /// The folders do not make one complete sweep.
    #[error("{0}")]
    Input(String),
    /// Writing failed.
    #[error(transparent)]
    Output(#[from] OutputError),
}

/// Read a shard folder: its manifest, header and lines.
fn read_shard(dir: &Path) -> Result<(SweepManifest, String, Vec<String>), MergeError> {
    let bad = |what: String| MergeError::Input(format!("{}: {what}", dir.display()));
    let read = |name: &str| crate::case::read::text_file(&dir.join(name), 4 << 30, None).map_err(|e| bad(format!("cannot read {name}: {e}")));
    let manifest: SweepManifest =
        serde_json::from_str(&read("sweep.json")?).map_err(|e| bad(format!("sweep.json is not a sweep manifest hxgrid wrote: {e}")))?;
    let csv = read("sweep.csv")?;
    let mut lines = csv.lines();
    let header = lines.next().ok_or_else(|| bad("sweep.csv is empty".into()))?.to_string();
    let lines: Vec<String> = lines.map(str::to_string).collect();
    if lines.len() != manifest.points_in_file {
        return Err(bad(format!("sweep.csv has {} rows but sweep.json says {}: the folder is incomplete or was edited", lines.len(), manifest.points_in_file)));
    }
    Ok((manifest, header, lines))
}

/// Merge the shard folders `dirs` of one sweep into `out`: the files the unsharded run writes.
pub fn merge(dirs: &[PathBuf], out: &Path) -> Result<Vec<PathBuf>, MergeError> {
    let mut shards = Vec::new();
    for d in dirs {
        shards.push((d, read_shard(d)?));
    }
    let Some((first_dir, (first, header, _))) = shards.first() else { return Err(MergeError::Input("give the shard folders to merge".into())) };
    let (first, header) = (first.clone(), header.clone());
    let Some(Shard { count, .. }) = first.shard else {
        return Err(MergeError::Input(format!("{} holds a whole sweep, not a shard: nothing to merge", first_dir.display())));
    };
    let mut seen = vec![false; count];
    for (d, (m, h, _)) in &shards {
        let same =
            m.case == first.case && m.input_sha256 == first.input_sha256 && m.inputs == first.inputs && m.combine == first.combine && m.points == first.points;
        if !same || *h != header {
            return Err(MergeError::Input(format!(
                "{} is a shard of another sweep (its case file, inputs or hxgrid version differ from {}'s)",
                d.display(),
                first_dir.display()
            )));
        }
        match m.shard {
            Some(Shard { index, count: n }) if n == count && (1..=n).contains(&index) => {
                if std::mem::replace(&mut seen[index - 1], true) {
                    return Err(MergeError::Input(format!("shard {index}/{count} is given twice ({})", d.display())));
                }
            }
            _ => return Err(MergeError::Input(format!("{} is not a shard of {count} (sweep.json's shard differs)", d.display()))),
        }
        if m.hxgrid_version != first.hxgrid_version {
            return Err(MergeError::Input(format!(
                "{} was written by hxgrid {} and {} by {}: rerun the shards with one version",
                d.display(),
                m.hxgrid_version,
                first_dir.display(),
                first.hxgrid_version
            )));
        }
    }
    let missing: Vec<String> = seen.iter().enumerate().filter(|(_, s)| !**s).map(|(i, _)| format!("{}/{count}", i + 1)).collect();
    if !missing.is_empty() {
        return Err(MergeError::Input(format!("shard(s) {} missing: give all {count} shard folders", missing.join(", "))));
    }
    let mut rows: Vec<(usize, String)> = Vec::with_capacity(first.points);
    for (d, (_, _, lines)) in &shards {
        for l in lines {
            let n: usize = l
                .split(',')
                .next()
                .and_then(|v| v.parse().ok())
                .ok_or_else(|| MergeError::Input(format!("{}: a row of sweep.csv has no point number", d.display())))?;
            rows.push((n, l.clone()));
        }
    }
    rows.sort_by_key(|r| r.0);
    let complete = rows.len() == first.points && rows.iter().enumerate().all(|(i, r)| r.0 == i + 1);
    if !complete {
        return Err(MergeError::Input(format!(
            "the shards hold {} rows for a sweep of {} points (a point missing or repeated): rerun the incomplete shard",
            rows.len(),
            first.points
        )));
    }
    let lines: Vec<String> = rows.into_iter().map(|r| r.1).collect();
    let manifest = SweepManifest { shard: None, points_in_file: lines.len(), points_failed: failed(&lines, first.inputs.len()), ..first };
    Ok(write_sweep(out, &manifest, &header, &lines)?)
}

/// Files of an uncertainty folder.
pub const UNCERTAINTY_FILES: [&str; 3] = ["uncertainty.json", "samples.csv", "report.html"];

/// Write an uncertainty run: the summary and one row per sample (each input's actual
/// multiplier or shift, the status, the results).
pub fn write_uncertainty(dir: &Path, r: &crate::design::uncertainty::UncertaintyReport) -> Result<Vec<PathBuf>, OutputError> {
    use crate::design::uncertainty::Acts;
    if let Some(what) = super::finite::first_non_finite(r, "uncertainty") {
        return Err(OutputError::NonFinite { what });
    }
    let mut csv = String::from("sample");
    for f in &r.inputs {
        let col = match f.acts {
            Acts::InletTemperature => format!("{}_shift_K", f.key.trim_end_matches("_temperature_K")),
            _ => format!("{}_factor", f.key.trim_end_matches("_percent")),
        };
        let _ = write!(csv, ",{col}");
    }
    csv.push_str(",status,duty_W,hot_outlet_C,cold_outlet_C,error\n");
    for (i, s) in r.sample_rows.iter().enumerate() {
        let _ = write!(csv, "{}", i + 1);
        for (f, u) in r.inputs.iter().zip(&s.u) {
            let d = f.half_width * (2.0 * u - 1.0);
            let v = match f.acts {
                Acts::InletTemperature => d,
                _ => 1.0 + d / 100.0,
            };
            let _ = write!(csv, ",{}", exact(v));
        }
        match &s.outcome {
            Ok(q) => {
                let _ = writeln!(csv, ",ok,{},{},{},", exact(q.duty_w), exact(q.hot_outlet_c), exact(q.cold_outlet_c));
            }
            Err(e) => {
                let _ = writeln!(csv, ",{},,,,{}", e.status(), field(&e.to_string()));
            }
        }
    }
    folder::write_folder(dir, &UNCERTAINTY_FILES, |staging| {
        let p = staging.join("uncertainty.json");
        std::fs::write(&p, serde_json::to_string_pretty(r).expect("a report serialises") + "\n").map_err(io(&p))?;
        let p = staging.join("samples.csv");
        std::fs::write(&p, &csv).map_err(io(&p))?;
        super::html::uncertainty(r, &staging.join("report.html"))
    })?;
    Ok(UNCERTAINTY_FILES.iter().map(|f| dir.join(f)).collect())
}
