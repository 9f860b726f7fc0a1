//! Profiles as CSV: one row per cell centre, units in the column names.

use crate::results::SteadyReport;
use crate::scenario::TransientReport;
use std::fmt::Write;

/// Column names, in order.
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

/// The CSV text (empty fields where a value does not exist, e.g. Re without flow geometry).
pub fn profiles(report: &SteadyReport) -> String {
    let mut s = COLUMNS.join(",");
    s.push('\n');
    let opt = |v: Option<f64>| v.map(|x| format!("{x:.10e}")).unwrap_or_default();
    for r in &report.profile {
        let _ = writeln!(
            s,
            "{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{},{},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{:.10e},{},{}",
            r.x_m,
            r.hot_c,
            r.cold_c,
            r.wall_c,
            r.heat_rate_per_length_w_m,
            r.heat_flux_w_m2,
            r.u_w_m2k,
            r.h_hot_w_m2k,
            r.h_cold_w_m2k,
            opt(r.re_hot),
            opt(r.re_cold),
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
            opt(r.p_hot_pa),
            opt(r.p_cold_pa)
        );
    }
    s
}

/// Time series: one row per output time.
pub fn timeseries(report: &TransientReport) -> String {
    let mut s = String::from(
        "time_s,hot_inlet_C,cold_inlet_C,hot_flow_kg_s,cold_flow_kg_s,hot_outlet_C,cold_outlet_C,hot_duty_W,cold_duty_W,fluid_energy_J,wall_energy_J,max_wall_C,max_wall_rate_K_s,net_inflow_J,hot_heat_J\n",
    );
    for r in &report.samples {
        let v = [
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
        ];
        let _ = writeln!(s, "{}", v.iter().map(|x| format!("{x:.10e}")).collect::<Vec<_>>().join(","));
    }
    s
}

/// Profile snapshots: one row per (time, face). Wall temperatures live at cell centres;
/// at a face the mean of the two neighbouring cells is written (the end cell at the ends).
pub fn snapshots(report: &TransientReport) -> String {
    let mut s = String::from("time_s,x_m,hot_C,cold_C,wall_C\n");
    for snap in &report.snapshots {
        let n = snap.wall_c.len();
        for (j, x) in report.faces_m.iter().enumerate() {
            let wall = match j {
                0 => snap.wall_c[0],
                j if j == n => snap.wall_c[n - 1],
                j => 0.5 * (snap.wall_c[j - 1] + snap.wall_c[j]),
            };
            let _ = writeln!(s, "{:.6e},{:.6e},{:.10e},{:.10e},{:.10e}", snap.time_s, x, snap.hot_faces_c[j], snap.cold_faces_c[j], wall);
        }
    }
    s
}
