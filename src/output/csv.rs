//! Profiles as CSV: one row per cell centre, units in the column names.

use crate::results::SteadyReport;
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
