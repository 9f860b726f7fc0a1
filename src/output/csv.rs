//! CSV files, streamed row by row: units in the column names, every number checked finite
//! as it is formatted (a non-finite value stops the file and names its row and column).

use crate::results::SteadyReport;
use crate::scenario::TransientReport;
use std::fmt::Write as _;
use std::io::{self, Write};

/// Column names of profiles.csv, in order.
pub const COLUMNS: [&str; 23] = [
    "x_m",
    "hot_C",
    "cold_C",
    "wall_C",
    "heat_rate_per_length_W_m",
    "heat_flux_W_m2",
    "U_W_m2K",
    "h_hot_W_m2K",
    "h_cold_W_m2K",
    "Re_hot",
    "Re_cold",
    "Pr_hot",
    "Pr_cold",
    "mu_hot_Pa_s",
    "mu_cold_Pa_s",
    "cp_hot_J_kgK",
    "cp_cold_J_kgK",
    "rho_hot_kg_m3",
    "rho_cold_kg_m3",
    "k_hot_W_mK",
    "k_cold_W_mK",
    "p_hot_Pa",
    "p_cold_Pa",
];

/// Column names of timeseries.csv, in order.
pub const TIMESERIES_COLUMNS: [&str; 15] = [
    "time_s",
    "hot_inlet_C",
    "cold_inlet_C",
    "hot_flow_kg_s",
    "cold_flow_kg_s",
    "hot_outlet_C",
    "cold_outlet_C",
    "hot_duty_W",
    "cold_duty_W",
    "fluid_energy_J",
    "wall_energy_J",
    "max_wall_C",
    "max_wall_rate_K_s",
    "net_inflow_J",
    "hot_heat_J",
];

/// Column names of snapshots.csv.
pub const SNAPSHOT_COLUMNS: [&str; 5] = ["time_s", "x_m", "hot_C", "cold_C", "wall_C"];

/// One row being built; the first non-finite number is remembered by column.
struct Row<'c> {
    line: String,
    columns: &'c [&'c str],
    index: usize,
    bad: Option<&'c str>,
}

impl<'c> Row<'c> {
    fn new(columns: &'c [&'c str]) -> Self {
        Row { line: String::with_capacity(512), columns, index: 0, bad: None }
    }
    fn start(&mut self) {
        self.line.clear();
        self.index = 0;
    }
    fn sep(&mut self) {
        if self.index > 0 {
            self.line.push(',');
        }
        self.index += 1;
    }
    fn num(&mut self, v: f64, digits: usize) {
        let col = self.columns[self.index.min(self.columns.len() - 1)];
        self.sep();
        if !v.is_finite() && self.bad.is_none() {
            self.bad = Some(col);
        }
        let _ = write!(self.line, "{v:.digits$e}");
    }
    /// An optional value: an empty field where it does not exist.
    fn opt(&mut self, v: Option<f64>) {
        match v {
            Some(x) => self.num(x, 10),
            None => self.sep(),
        }
    }
    fn finish(&mut self, w: &mut dyn Write, row: usize) -> io::Result<Result<(), String>> {
        if let Some(col) = self.bad {
            return Ok(Err(format!("row {row}, column {col}")));
        }
        self.line.push('\n');
        w.write_all(self.line.as_bytes())?;
        Ok(Ok(()))
    }
}

fn header(w: &mut dyn Write, columns: &[&str]) -> io::Result<()> {
    writeln!(w, "{}", columns.join(","))
}

/// profiles.csv: one row per cell centre (every `stride`-th cell, and the last), empty fields
/// where a value does not exist (Re without flow geometry, pressure without a friction model).
pub fn profiles(report: &SteadyReport, stride: usize, w: &mut dyn Write) -> io::Result<Result<(), String>> {
    header(w, &COLUMNS)?;
    let n = report.profile.len();
    let mut row = Row::new(&COLUMNS);
    for (i, r) in report.profile.iter().enumerate() {
        if i % stride != 0 && i + 1 != n {
            continue;
        }
        row.start();
        for v in [r.x_m, r.hot_c, r.cold_c, r.wall_c, r.heat_rate_per_length_w_m, r.heat_flux_w_m2, r.u_w_m2k, r.h_hot_w_m2k, r.h_cold_w_m2k] {
            row.num(v, 10);
        }
        row.opt(r.re_hot);
        row.opt(r.re_cold);
        for v in [
            r.pr_hot,
            r.pr_cold,
            r.mu_hot_pa_s,
            r.mu_cold_pa_s,
            r.cp_hot_j_kgk,
            r.cp_cold_j_kgk,
            r.rho_hot_kg_m3,
            r.rho_cold_kg_m3,
            r.k_hot_w_mk,
            r.k_cold_w_mk,
        ] {
            row.num(v, 10);
        }
        row.opt(r.p_hot_pa);
        row.opt(r.p_cold_pa);
        if let Err(bad) = row.finish(w, i + 1)? {
            return Ok(Err(bad));
        }
    }
    Ok(Ok(()))
}

/// timeseries.csv: one row per output time.
pub fn timeseries(report: &TransientReport, w: &mut dyn Write) -> io::Result<Result<(), String>> {
    header(w, &TIMESERIES_COLUMNS)?;
    let mut row = Row::new(&TIMESERIES_COLUMNS);
    for (i, r) in report.samples.iter().enumerate() {
        row.start();
        for v in [
            r.time_s,
            r.hot_inlet_C,
            r.cold_inlet_C,
            r.hot_flow_kg_s,
            r.cold_flow_kg_s,
            r.hot_outlet_C,
            r.cold_outlet_C,
            r.hot_duty_W,
            r.cold_duty_W,
            r.fluid_energy_J,
            r.wall_energy_J,
            r.max_wall_C,
            r.max_wall_rate_K_s,
            r.net_inflow_J,
            r.hot_heat_J,
        ] {
            row.num(v, 10);
        }
        if let Err(bad) = row.finish(w, i + 1)? {
            return Ok(Err(bad));
        }
    }
    Ok(Ok(()))
}

/// snapshots.csv: one row per (time, face). Wall temperatures live at cell centres; at a
/// face the mean of the two neighbouring cells is written (the end cell at the ends).
pub fn snapshots(report: &TransientReport, w: &mut dyn Write) -> io::Result<Result<(), String>> {
    header(w, &SNAPSHOT_COLUMNS)?;
    let mut row = Row::new(&SNAPSHOT_COLUMNS);
    let mut k = 0;
    for snap in &report.snapshots {
        let n = snap.wall_c.len();
        for (j, x) in report.faces_m.iter().enumerate() {
            let wall = match j {
                0 => snap.wall_c[0],
                j if j == n => snap.wall_c[n - 1],
                j => 0.5 * (snap.wall_c[j - 1] + snap.wall_c[j]),
            };
            row.start();
            row.num(snap.time_s, 6);
            row.num(*x, 6);
            for v in [snap.hot_faces_c[j], snap.cold_faces_c[j], wall] {
                row.num(v, 10);
            }
            k += 1;
            if let Err(bad) = row.finish(w, k)? {
                return Ok(Err(bad));
            }
        }
    }
    Ok(Ok(()))
}
