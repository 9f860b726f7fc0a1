//! Steady rating end to end (solve, derived quantities, lumped comparison, grid error) and
//! grid-convergence studies: observed order and Richardson extrapolation.

use crate::lumped::{self, LumpedResult};
use crate::model::Exchanger;
use crate::results::*;
use crate::solve::{solve_steady, Observer, SilentObserver, SolveError, SteadySettings, SteadySolution};

/// Formal order of the spatial scheme (face-averaged trapezoidal heat-rate terms).
pub const FORMAL_ORDER: f64 = 2.0;

/// Duty and outlets of a solution.
pub fn key_quantities(ex: &Exchanger, s: &SteadySolution) -> KeyQuantities {
    let f = &ex.hot.fluid;
    KeyQuantities {
        duty_w: ex.hot.mass_flow_kg_s * (f.enthalpy(ex.hot.inlet_c) - f.enthalpy(s.hot_outlet_c())),
        hot_outlet_c: s.hot_outlet_c(),
        cold_outlet_c: s.cold_outlet_c(ex.arrangement),
    }
}

/// Richardson extrapolation from a fine and a coarse value with refinement ratio `ratio`.
pub fn richardson(fine: f64, coarse: f64, ratio: f64, order: f64) -> f64 {
    fine + (fine - coarse) / (ratio.powf(order) - 1.0)
}

/// Observed order from three solutions with constant refinement ratio; None if the
/// differences are at round-off or do not shrink monotonically.
pub fn observed_order(coarse: f64, medium: f64, fine: f64, ratio: f64) -> Option<f64> {
    let (d1, d2) = (medium - coarse, fine - medium);
    let noise = 1e-11 * fine.abs().max(1.0);
    if d1.abs() <= noise || d2.abs() <= noise || d1.signum() != d2.signum() {
        return None;
    }
    Some((d1 / d2).ln() / ratio.ln())
}

/// Solve at `base` cells and at `levels − 1` successive doublings (levels ≥ 3 for an
/// observed order).
pub fn grid_study(ex: &Exchanger, settings: &SteadySettings, base: usize, levels: usize) -> Result<GridStudy, SolveError> {
    let mut out = Vec::new();
    for k in 0..levels.max(2) {
        let cells = base << k;
        let s = solve_steady(ex, &SteadySettings { cells, ..settings.clone() }, &mut SilentObserver)?;
        out.push(StudyLevel { cells, iterations: s.iterations, values: key_quantities(ex, &s) });
    }
    let n = out.len();
    let (fine, medium) = (out[n - 1].values, out[n - 2].values);
    let extrapolated = fine.zip(&medium, |f, c| richardson(f, c, 2.0, FORMAL_ORDER));
    let observed = |get: fn(&KeyQuantities) -> f64| {
        (n >= 3).then(|| observed_order(get(&out[n - 3].values), get(&medium), get(&fine), 2.0)).flatten()
    };
    Ok(GridStudy {
        formal_order: FORMAL_ORDER,
        observed_order: ObservedOrder {
            duty: observed(|q| q.duty_w),
            hot_outlet: observed(|q| q.hot_outlet_c),
            cold_outlet: observed(|q| q.cold_outlet_c),
        },
        finest_estimated_error: fine.zip(&extrapolated, |f, e| f - e),
        extrapolated,
        levels: out,
    })
}

/// What a steady rating asks for besides the case itself.
#[derive(Debug, Clone, Default)]
pub struct RatingOptions {
    /// Run a grid study with this many levels (starting at the case's cell count).
    pub study_levels: Option<usize>,
}

/// Rate the exchanger: steady solve, derived quantities, lumped result beside it, an
/// error estimate from a solve at half the cells, and optionally a grid study.
pub fn rate(
    case_name: &str,
    ex: &Exchanger,
    settings: &SteadySettings,
    options: &RatingOptions,
    observer: &mut dyn Observer,
) -> Result<SteadyReport, SolveError> {
    let sol = solve_steady(ex, settings, observer)?;
    let lumped = lumped::rate(ex);
    let grid_error_estimate = if sol.cells >= 2 {
        let coarse_cells = sol.cells / 2;
        let coarse = solve_steady(ex, &SteadySettings { cells: coarse_cells, ..settings.clone() }, &mut SilentObserver)?;
        let (fq, cq) = (key_quantities(ex, &sol), key_quantities(ex, &coarse));
        let ratio = sol.cells as f64 / coarse_cells as f64;
        let extrapolated = fq.zip(&cq, |f, c| richardson(f, c, ratio, FORMAL_ORDER));
        Some(GridError {
            coarse_cells,
            order: FORMAL_ORDER,
            estimated_error: fq.zip(&extrapolated, |f, e| f - e),
            extrapolated,
        })
    } else {
        None
    };
    let grid_study = match options.study_levels {
        Some(levels) => Some(grid_study(ex, settings, settings.cells, levels)?),
        None => None,
    };
    Ok(assemble(case_name, ex, &sol, lumped, grid_error_estimate, grid_study))
}

fn assemble(
    case_name: &str,
    ex: &Exchanger,
    sol: &SteadySolution,
    lumped: LumpedResult,
    grid_error_estimate: Option<GridError>,
    grid_study: Option<GridStudy>,
) -> SteadyReport {
    let arr = ex.arrangement;
    let (th_in, tc_in) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let mut profile = Vec::with_capacity(sol.cells);
    let (mut ua, mut hot_release, mut cold_gain) = (0.0, 0.0, 0.0);
    let (mut laminar, mut transition) = ([0usize; 2], [0usize; 2]);
    for i in 0..sol.cells {
        let d = ex.cell(sol.dx_m, &sol.cell_temps(arr, i));
        ua += d.ua_per_length_w_mk * sol.dx_m;
        hot_release += d.balance.hot_release_w;
        cold_gain += d.balance.cold_gain_w;
        let q_per_length = d.balance.hot_to_wall_w / sol.dx_m;
        for (k, re) in [d.hot_film.reynolds, d.cold_film.reynolds].into_iter().enumerate() {
            match re {
                Some(re) if re < 2300.0 => laminar[k] += 1,
                Some(re) if re < 1.0e4 => transition[k] += 1,
                _ => {}
            }
        }
        profile.push(ProfileRow {
            x_m: (i as f64 + 0.5) * sol.dx_m,
            hot_c: d.hot_bulk_c,
            cold_c: d.cold_bulk_c,
            wall_c: sol.wall_c[i],
            heat_rate_per_length_w_m: q_per_length,
            heat_flux_w_m2: q_per_length / ex.reference_area_per_length_m,
            u_w_m2k: d.ua_per_length_w_mk / ex.reference_area_per_length_m,
            h_hot_w_m2k: d.hot_film.h,
            h_cold_w_m2k: d.cold_film.h,
            re_hot: d.hot_film.reynolds,
            re_cold: d.cold_film.reynolds,
            pr_hot: d.hot_props.prandtl(),
            pr_cold: d.cold_props.prandtl(),
            mu_hot_pa_s: d.hot_props.viscosity,
            mu_cold_pa_s: d.cold_props.viscosity,
            cp_hot_j_kgk: d.hot_props.cp,
            cp_cold_j_kgk: d.cold_props.cp,
            rho_hot_kg_m3: d.hot_props.density,
            rho_cold_kg_m3: d.cold_props.density,
            k_hot_w_mk: d.hot_props.conductivity,
            k_cold_w_mk: d.cold_props.conductivity,
        });
    }
    let q = key_quantities(ex, sol);
    let (dth, dtc) = (th_in - q.hot_outlet_c, q.cold_outlet_c - tc_in);
    let dt_max = th_in - tc_in;
    // Mean capacity rates C = Q/ΔT: C_min belongs to the stream with the larger ΔT.
    let (dt_big, dt_small) = (dth.abs().max(dtc.abs()), dth.abs().min(dtc.abs()));
    let c_min = q.duty_w / dt_big;
    let (dt1, dt2) = lumped::end_differences(arr, th_in, q.hot_outlet_c, tc_in, q.cold_outlet_c);
    let lmtd = lumped::lmtd(dt1, dt2);
    let pct = |a: f64, b: f64| 100.0 * (a - b) / b;
    let pct_of_change = |diff: f64, change: f64| if change.abs() > 0.0 { 100.0 * diff / change.abs() } else { 0.0 };
    let grid_vs_lumped = Comparison {
        duty_difference_percent: pct(q.duty_w, lumped.duty_w),
        hot_outlet_difference_K: q.hot_outlet_c - lumped.hot_outlet_c,
        hot_outlet_difference_percent_of_change: pct_of_change(q.hot_outlet_c - lumped.hot_outlet_c, dth),
        cold_outlet_difference_K: q.cold_outlet_c - lumped.cold_outlet_c,
        cold_outlet_difference_percent_of_change: pct_of_change(q.cold_outlet_c - lumped.cold_outlet_c, dtc),
        ua_difference_percent: pct(ua, lumped.ua_w_k),
    };
    let mut warnings = Vec::new();
    for (k, name) in ["hot", "cold"].iter().enumerate() {
        if laminar[k] > 0 {
            warnings.push(format!(
                "{name} stream: {} of {} cells are laminar (Re < 2300); fully developed laminar Nusselt number used",
                laminar[k], sol.cells
            ));
        }
        if transition[k] > 0 {
            warnings.push(format!(
                "{name} stream: {} of {} cells are in the transition range 2300 ≤ Re < 10 000, where film coefficients are uncertain (blended)",
                transition[k], sol.cells
            ));
        }
    }
    if let Some(e) = &grid_error_estimate {
        let rel = (e.estimated_error.duty_w / q.duty_w).abs();
        if rel > 1e-3 {
            warnings.push(format!(
                "estimated grid error in duty is {:.2} %: use more cells (the error falls about fourfold per doubling)",
                100.0 * rel
            ));
        }
    }
    SteadyReport {
        case: case_name.to_string(),
        arrangement: arr.as_str(),
        length_m: ex.length_m,
        hot_fluid: ex.hot.fluid.name(),
        cold_fluid: ex.cold.fluid.name(),
        cells: sol.cells,
        iterations: sol.iterations,
        final_relative_residual: sol.relative_residual,
        duty_W: q.duty_w,
        hot_outlet_C: q.hot_outlet_c,
        cold_outlet_C: q.cold_outlet_c,
        effectiveness: dt_big / dt_max,
        ntu: ua / c_min,
        capacity_ratio: if dt_big > 0.0 { dt_small / dt_big } else { 0.0 },
        UA_W_K: ua,
        lmtd_K: lmtd,
        effective_UA_W_K: lmtd.map(|l| q.duty_w / l),
        hot_heat_released_W: hot_release,
        cold_heat_gained_W: cold_gain,
        energy_imbalance_W: hot_release - cold_gain,
        max_duty_W: ex.max_duty_w(),
        lumped,
        grid_vs_lumped,
        grid_error_estimate,
        grid_study,
        warnings,
        caution: CAUTION,
        profile,
        faces_m: (0..=sol.cells).map(|j| j as f64 * sol.dx_m).collect(),
        hot_faces_c: sol.hot_faces_c.clone(),
        cold_faces_c: sol.cold_faces_c.clone(),
    }
}
