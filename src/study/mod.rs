//! Steady rating end to end (solve, derived quantities, lumped comparison, grid error) and
//! grid-convergence studies: observed order and Richardson extrapolation.

use crate::lumped::{self, LumpedResult};
use crate::model::Scheme;
use crate::model::{Exchanger, Side};
use crate::results::*;
use crate::solve::{solve_steady, solve_steady_from, Observer, SilentObserver, SolveError, SteadySettings, SteadySolution};
use nalgebra::Vector3;

pub mod echo;
pub mod network;

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

/// Newton iterations, duty and outlets of a solve at `cells` along the first direction (a
/// network's cells across scaled with them): what grid studies and error estimates compare.
/// `start`: unknowns to start Newton from (an axial line only; None: the usual guess).
fn quantities_at(ex: &Exchanger, settings: &SteadySettings, cells: usize, start: Option<&[Vector3<f64>]>) -> Result<(usize, KeyQuantities), SolveError> {
    match ex.arrangement.layout() {
        None => {
            let s = solve_steady_from(ex, &SteadySettings { cells, ..settings.clone() }, start, &mut SilentObserver)?;
            Ok((s.iterations, key_quantities(ex, &s)))
        }
        Some(layout) => {
            let s = network::solve_at(ex, &layout, settings, cells, &mut SilentObserver)?;
            Ok((s.iterations, network::key_quantities(ex, &s)))
        }
    }
}

/// Solve at `base` cells and at `levels − 1` successive doublings (levels ≥ 3 for an
/// observed order); a network doubles every direction.
pub fn grid_study(ex: &Exchanger, settings: &SteadySettings, base: usize, levels: usize) -> Result<GridStudy, SolveError> {
    let mut out = Vec::new();
    for k in 0..levels.max(2) {
        let cells = base << k;
        let (iterations, values) = quantities_at(ex, settings, cells, None)?;
        out.push(StudyLevel { cells, iterations, values });
    }
    let n = out.len();
    let (fine, medium) = (out[n - 1].values, out[n - 2].values);
    // Each scheme's own formal order (upwind is first order: extrapolating it with 2 would
    // understate its error threefold).
    let order = ex.scheme.formal_order();
    let extrapolated = fine.zip(&medium, |f, c| richardson(f, c, 2.0, order));
    let observed = |get: fn(&KeyQuantities) -> f64| (n >= 3).then(|| observed_order(get(&out[n - 3].values), get(&medium), get(&fine), 2.0)).flatten();
    Ok(GridStudy {
        formal_order: order,
        observed_order: ObservedOrder { duty: observed(|q| q.duty_w), hot_outlet: observed(|q| q.hot_outlet_c), cold_outlet: observed(|q| q.cold_outlet_c) },
        finest_estimated_error: fine.zip(&extrapolated, |f, e| f - e),
        extrapolated,
        levels: out,
    })
}

/// The fine solution's unknowns merged pairwise onto the half grid (an even number of cells):
/// a face unknown (trapezoidal) is the fine face that bounds the coarse cell downstream, a
/// cell-mean unknown and the wall the mean of the two fine cells. Newton on the half grid
/// starts there instead of from the lumped guess.
fn coarsened(ex: &Exchanger, fine: &SteadySolution) -> Option<Vec<Vector3<f64>>> {
    let n = fine.unknowns.len();
    if n < 2 || !n.is_multiple_of(2) {
        return None;
    }
    let x = &fine.unknowns;
    let face = ex.scheme == Scheme::Trapezoidal;
    let cold_forward = ex.arrangement != crate::model::Arrangement::Counterflow;
    Some(
        (0..n / 2)
            .map(|k| {
                let (a, b) = (x[2 * k], x[2 * k + 1]);
                let mean = (a + b) * 0.5;
                Vector3::new(
                    if face { b[0] } else { mean[0] },
                    if !face {
                        mean[1]
                    } else if cold_forward {
                        b[1]
                    } else {
                        a[1]
                    },
                    mean[2],
                )
            })
            .collect(),
    )
}

/// The grid error of `fine` (at `cells`) from a solve at half the cells and Richardson at the
/// scheme's formal order; None for a single cell. `start`: the half grid's starting unknowns.
fn grid_error(
    ex: &Exchanger,
    settings: &SteadySettings,
    cells: usize,
    fine: KeyQuantities,
    start: Option<&[Vector3<f64>]>,
) -> Result<Option<GridError>, SolveError> {
    if cells < 2 {
        return Ok(None);
    }
    let coarse_cells = cells / 2;
    let (_, coarse) = quantities_at(ex, settings, coarse_cells, start)?;
    let ratio = cells as f64 / coarse_cells as f64;
    let order = ex.scheme.formal_order();
    let extrapolated = fine.zip(&coarse, |f, c| richardson(f, c, ratio, order));
    Ok(Some(GridError { coarse_cells, order, estimated_error: fine.zip(&extrapolated, |f, e| f - e), extrapolated }))
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
    let lumped = lumped::rate(ex);
    let (solved, start) = match ex.arrangement.layout() {
        None => {
            let sol = solve_steady(ex, settings, observer)?;
            (solved_line(ex, &sol), coarsened(ex, &sol))
        }
        Some(layout) => {
            let sol = crate::solve::solve_network(ex, &layout, settings, observer)?;
            let solved = network::solved(ex, &layout, &sol);
            network::check_local_pressure(ex, &sol, solved.pressure_drop)?;
            (solved, None)
        }
    };
    let grid_error_estimate = grid_error(ex, settings, solved.cells, solved.q, start.as_deref())?;
    let grid_study = match options.study_levels {
        Some(levels) => Some(grid_study(ex, settings, settings.cells, levels)?),
        None => None,
    };
    let report = assemble(case_name, ex, solved, lumped, grid_error_estimate, grid_study);
    check_local_pressure(ex, &report)?;
    Ok(report)
}

/// Every face's local absolute pressure is positive, and a liquid's is above its saturation
/// pressure at the local temperature (the inlet-pressure range check alone missed flashing
/// where the pressure has fallen along the way).
fn check_local_pressure(ex: &Exchanger, r: &SteadyReport) -> Result<(), SolveError> {
    for (stream, faces_pa, faces_c) in [(Side::Hot, &r.hot_faces_pa, &r.hot_faces_c), (Side::Cold, &r.cold_faces_pa, &r.cold_faces_c)] {
        let s = ex.stream(stream);
        for (j, (&p, &t)) in faces_pa.iter().zip(faces_c.iter()).enumerate() {
            let position_m = j as f64 * r.length_m / r.cells as f64;
            if p.is_nan() || p <= 0.0 {
                return Err(SolveError::NegativePressure { stream, position_m, pressure_pa: p, inlet_pa: s.inlet_pressure_pa });
            }
            if let Some(p_sat) = s.fluid.saturation_pressure_pa(t) {
                if p < p_sat {
                    return Err(SolveError::Flashing { stream, position_m, pressure_pa: p, saturation_pa: p_sat, temperature_c: t });
                }
            }
        }
    }
    Ok(())
}

/// Where a report cell sits: x (m) and, in a network, (i, j, k) and the face fractions.
pub(crate) type CellPlace = (f64, Option<([usize; 3], [f64; 2])>);

/// A solution made ready for the report: every cell's detail with its equivalent length and
/// wall temperature, and what differs between an axial line and a network.
pub(crate) struct Solved {
    /// `[solver] cells`.
    pub cells: usize,
    /// Newton iterations.
    pub iterations: usize,
    /// Final relative residual.
    pub relative_residual: f64,
    /// Per cell: detail, equivalent length (m), wall temperature (°C).
    pub details: Vec<(crate::model::CellDetail, f64, f64)>,
    /// Per cell: x (m) and, in a network, (i, j, k, x fraction, y fraction).
    pub positions: Vec<CellPlace>,
    /// Duty and outlets.
    pub q: KeyQuantities,
    /// Pressure at each face of each stream (axial line) — empty where not computed.
    pub faces_pa: [Vec<f64>; 2],
    /// Pressure drop of each stream, Pa (None: no friction model).
    pub pressure_drop: [Option<f64>; 2],
    /// Face positions and temperatures (axial line; empty for a network).
    pub faces_m: Vec<f64>,
    /// Hot and cold face temperatures.
    pub faces_c: [Vec<f64>; 2],
    /// A network's layout, outlet spreads (hot, cold) and fields.
    pub network: Option<(crate::model::Layout, [OutletSpread; 2], NetworkFields)>,
}

/// The solution on an axial line, ready for [`assemble`].
fn solved_line(ex: &Exchanger, sol: &SteadySolution) -> Solved {
    let details: Vec<_> = (0..sol.cells).map(|i| (ex.cell(sol.dx_m, &sol.cell_temps(i)), sol.dx_m, sol.wall_c[i])).collect();
    let plain: Vec<_> = details.iter().map(|d| d.0).collect();
    let (hot_faces_pa, cold_faces_pa) = pressures(ex, sol, &plain);
    let drop = |faces: &[f64], inlet_at_end: bool| {
        (!faces.is_empty()).then(|| if inlet_at_end { faces[faces.len() - 1] - faces[0] } else { faces[0] - faces[faces.len() - 1] })
    };
    let pressure_drop = [drop(&hot_faces_pa, false), drop(&cold_faces_pa, ex.arrangement == crate::model::Arrangement::Counterflow)];
    Solved {
        cells: sol.cells,
        iterations: sol.iterations,
        relative_residual: sol.relative_residual,
        positions: (0..sol.cells).map(|i| ((i as f64 + 0.5) * sol.dx_m, None)).collect(),
        details,
        q: key_quantities(ex, sol),
        faces_pa: [hot_faces_pa, cold_faces_pa],
        pressure_drop,
        faces_m: (0..=sol.cells).map(|j| j as f64 * sol.dx_m).collect(),
        faces_c: [sol.hot_faces_c.clone(), sol.cold_faces_c.clone()],
        network: None,
    }
}

pub(crate) fn assemble(
    case_name: &str,
    ex: &Exchanger,
    sol: Solved,
    lumped: LumpedResult,
    grid_error_estimate: Option<GridError>,
    grid_study: Option<GridStudy>,
) -> SteadyReport {
    let arr = ex.arrangement;
    let (th_in, tc_in) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let [hot_faces_pa, cold_faces_pa] = sol.faces_pa;
    let centre = |faces: &[f64], i: usize| (!faces.is_empty()).then(|| 0.5 * (faces[i] + faces[i + 1]));
    let mut profile = Vec::with_capacity(sol.details.len());
    let (mut ua, mut hot_release, mut cold_gain) = (0.0, 0.0, 0.0);
    let mut outside = [0usize; 2];
    for (i, ((d, dx, wall), (x_m, cell))) in sol.details.iter().zip(&sol.positions).enumerate() {
        ua += d.ua_per_length_w_mk * dx;
        hot_release += d.balance.hot_release_w;
        cold_gain += d.balance.cold_gain_w;
        let q_per_length = d.balance.hot_to_wall_w / dx;
        let within = |s: &crate::model::Stream, props, bulk, film: &crate::transfer::FilmResult| {
            film.in_range && crate::transfer::film::property_ratios_within(&*s.film, &*s.fluid, props, bulk, *wall, film.reynolds)
        };
        let in_range = [within(&ex.hot, &d.hot_props, d.hot_bulk_c, &d.hot_film), within(&ex.cold, &d.cold_props, d.cold_bulk_c, &d.cold_film)];
        outside[0] += usize::from(!in_range[0]);
        outside[1] += usize::from(!in_range[1]);
        let (p_hot, p_cold) = (centre(&hot_faces_pa, i), centre(&cold_faces_pa, i));
        let velocity = |s: &crate::model::Stream, bulk: f64, p: Option<f64>| {
            s.channel.flow_area_m2.map(|a| s.mass_flow_kg_s / (a * s.fluid.density_at(bulk, p.unwrap_or(s.inlet_pressure_pa))))
        };
        profile.push(ProfileRow {
            i: cell.map(|c| c.0[0]),
            j: cell.map(|c| c.0[1]),
            k: cell.map(|c| c.0[2]),
            x_fraction: cell.map(|c| c.1[0]),
            y_fraction: cell.map(|c| c.1[1]),
            x_m: *x_m,
            hot_c: d.hot_bulk_c,
            cold_c: d.cold_bulk_c,
            wall_c: *wall,
            // The wetted surface: the bulk less the drop across the film.
            hot_surface_c: d.hot_bulk_c - d.balance.hot_to_wall_w / dx * ex.hot.film_resistance_per_length(&d.hot_film),
            cold_surface_c: d.cold_bulk_c + d.balance.wall_to_cold_w / dx * ex.cold.film_resistance_per_length(&d.cold_film),
            heat_rate_per_length_w_m: q_per_length,
            heat_flux_w_m2: q_per_length / ex.reference_area_per_length_m,
            u_w_m2k: d.ua_per_length_w_mk / ex.reference_area_per_length_m,
            h_hot_w_m2k: d.hot_film.h,
            h_cold_w_m2k: d.cold_film.h,
            re_hot: d.hot_film.reynolds,
            re_cold: d.cold_film.reynolds,
            velocity_hot_m_s: velocity(&ex.hot, d.hot_bulk_c, p_hot),
            velocity_cold_m_s: velocity(&ex.cold, d.cold_bulk_c, p_cold),
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
            p_hot_pa: p_hot,
            p_cold_pa: p_cold,
            hot_in_range: in_range[0],
            cold_in_range: in_range[1],
            fin_efficiency: [d.hot_film.fin_efficiency, d.cold_film.fin_efficiency],
            surface_efficiency: [d.hot_film.surface_efficiency, d.cold_film.surface_efficiency],
        });
    }
    let q = sol.q;
    let (dth, dtc) = (th_in - q.hot_outlet_c, q.cold_outlet_c - tc_in);
    let dt_max = th_in - tc_in;
    // Mean capacity rates C = Q/ΔT: C_min belongs to the stream with the larger ΔT.
    let (dt_big, dt_small) = (dth.abs().max(dtc.abs()), dth.abs().min(dtc.abs()));
    // With (almost) no heat transferred the streams' temperature changes vanish and Q/ΔT is
    // 0/0: take C_min from the enthalpy change over the inlet-to-inlet span instead.
    let c_min = if dt_big > 1e-9 * dt_max.abs() { q.duty_w / dt_big } else { ex.max_duty_w() / dt_max };
    let (dt1, dt2) = lumped::end_differences(arr, th_in, q.hot_outlet_c, tc_in, q.cold_outlet_c);
    let lmtd = lumped::lmtd(dt1, dt2);
    let pct = |a: f64, b: f64| if b.abs() > 1e-300 { 100.0 * (a - b) / b } else { 0.0 };
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
    for (k, (name, stream)) in [("hot", &ex.hot), ("cold", &ex.cold)].into_iter().enumerate() {
        if outside[k] > 0 {
            warnings.push(format!(
                "{name} stream: {} of {} cells are outside the validity range of the {} correlation ({}){}; its film coefficient there is extrapolated or blended and less certain",
                outside[k],
                sol.details.len(),
                stream.film.name(),
                stream.film.validity(),
                where_outside(&profile, k == 0, &*stream.film)
            ));
        }
    }
    let [hot_dp, cold_dp] = sol.pressure_drop;
    let outlet_of = |side: crate::model::Side| if side == crate::model::Side::Hot { q.hot_outlet_c } else { q.cold_outlet_c };
    let film_of = |d: &crate::model::CellDetail, side: crate::model::Side| if side == crate::model::Side::Hot { d.hot_film } else { d.cold_film };
    let cells = sol.details.len().max(1) as f64;
    let mean_wall = sol.details.iter().map(|d| d.2).sum::<f64>() / cells;
    let mean_re = |side| {
        let v: Vec<f64> = sol.details.iter().filter_map(|d| film_of(&d.0, side).reynolds).collect();
        (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64)
    };
    let outside_friction = crate::model::Side::BOTH.map(|side| {
        let stream = ex.stream(side);
        sol.details.iter().filter(|d| film_of(&d.0, side).reynolds.is_some_and(|re| !stream.film.friction_in_range(re))).count()
    });
    let [hot_losses, cold_losses] = crate::model::Side::BOTH.map(|side| {
        let s = ex.stream(side);
        let (Some(area), true) = (s.channel.flow_area_m2, s.channel.fittings.any()) else { return None };
        let dp = if side == crate::model::Side::Hot { hot_dp } else { cold_dp }.unwrap_or(0.0);
        let rho_in = s.fluid.density_at(s.inlet_c, s.inlet_pressure_pa);
        let rho_out = s.fluid.density_at(outlet_of(side), s.inlet_pressure_pa - dp);
        Some(s.channel.fittings.losses(s.mass_flow_kg_s / area, s.mass_flow_kg_s, rho_in, rho_out, mean_re(side).unwrap_or(0.0)))
    });
    let total = |dp: Option<f64>, l: &Option<crate::transfer::losses::LossBreakdown>| dp.map(|d| d + l.as_ref().map_or(0.0, |l| l.total()));
    let (hot_total, cold_total) = (total(hot_dp, &hot_losses), total(cold_dp, &cold_losses));
    let shell_side = crate::model::Side::BOTH.into_iter().find_map(|side| {
        let s = ex.stream(side);
        let bulk = 0.5 * (s.inlet_c + outlet_of(side));
        let props = s.fluid.props(bulk);
        let input = crate::transfer::FilmInput {
            channel: &s.channel,
            mass_flow_kg_s: s.mass_flow_kg_s,
            props: &props,
            bulk_c: bulk,
            wall_c: mean_wall,
            fluid: &*s.fluid,
            heated: side == crate::model::Side::Cold,
        };
        s.film.shell_rating(&input).map(|rating| ShellSide { stream: side.as_str(), rating })
    });
    if let Some(sh) = &shell_side {
        warnings.push(format!("{} (shell side): {}", sh.stream, sh.rating.stated_uncertainty));
    }
    for (k, side) in crate::model::Side::BOTH.into_iter().enumerate() {
        if outside_friction[k] > 0 {
            warnings.push(format!(
                "{side} stream: {} of {} cells are outside the friction correlation's range ({}); the pressure drop there is extrapolated",
                outside_friction[k],
                sol.details.len(),
                ex.stream(side).film.friction_validity().unwrap_or_default()
            ));
        }
    }
    for (name, stream, dp) in [("hot", &ex.hot, hot_dp), ("cold", &ex.cold, cold_dp)] {
        match dp {
            None => warnings.push(format!("{name} stream: pressure drop not computed (no friction model for the {} surface)", stream.film.name())),
            // Compressibility is a gas matter (density below 200 kg/m³ at the inlet, the
            // boundary the velocity warnings use); a liquid's large drop is checked against
            // zero and saturation pressure instead.
            Some(dp) if dp > 0.3 * stream.inlet_pressure_pa && stream.fluid.density_at(stream.inlet_c, stream.inlet_pressure_pa) < 200.0 => {
                warnings.push(format!(
                    "{name} stream: pressure drop {} Pa is over 30 % of the inlet pressure; compressibility effects beyond this model may matter",
                    crate::text::num(dp)
                ))
            }
            _ => {}
        }
    }
    if let Some(e) = &grid_error_estimate {
        let rel = (e.estimated_error.duty_w / q.duty_w).abs();
        if rel > 1e-3 {
            warnings.push(format!(
                "estimated grid error in duty is {} %: use more cells (with the {} scheme, of order {}, the error falls about {}-fold per doubling)",
                crate::text::num(100.0 * rel),
                ex.scheme.as_str(),
                e.order,
                2f64.powf(e.order)
            ));
        }
    }
    let (network, fields) = match sol.network {
        Some((layout, [hot_outlet, cold_outlet], fields)) => {
            // The closed form at the grid's own NTU and capacity ratio: what separates the
            // grid from the lumped result apart from property variation.
            let min_side = if dth.abs() >= dtc.abs() { crate::model::Side::Hot } else { crate::model::Side::Cold };
            let cr = if dt_big > 0.0 { dt_small / dt_big } else { 0.0 };
            let summary = NetworkSummary {
                layout,
                cells_total: sol.details.len(),
                closed_form_effectiveness: lumped::effectiveness(arr, ua / c_min, cr, min_side),
                closed_form_exact: lumped::closed_form_is_exact(arr),
                hot_outlet,
                cold_outlet,
            };
            if !summary.closed_form_exact {
                warnings.push(format!(
                    "the lumped result for {} uses an approximate closed form (see README, 'Arrangements'); the grid result does not",
                    arr.as_str()
                ));
            }
            (Some(summary), Some(fields))
        }
        None => (None, None),
    };
    let [hot_faces_c, cold_faces_c] = sol.faces_c;
    let duty_faces_w: Vec<f64> = if fields.is_some() {
        Vec::new()
    } else {
        std::iter::once(0.0)
            .chain(sol.details.iter().scan(0.0, |q, d| {
                *q += d.0.balance.hot_release_w;
                Some(*q)
            }))
            .collect()
    };
    let saturation = |s: &crate::model::Stream, faces_c: &[f64], faces_pa: &[f64]| -> Vec<f64> {
        if faces_pa.is_empty() {
            return Vec::new();
        }
        faces_c.iter().map_while(|&t| s.fluid.saturation_pressure_pa(t)).collect()
    };
    let saturation_faces_pa = [saturation(&ex.hot, &hot_faces_c, &hot_faces_pa), saturation(&ex.cold, &cold_faces_c, &cold_faces_pa)];
    let minimum_approach = match &fields {
        // A network: hot and cold in the same cell.
        Some(_) => profile
            .iter()
            .map(|r| (r.hot_c - r.cold_c, r.x_m, r.i.map(|i| [i, r.j.unwrap_or(0), r.k.unwrap_or(0)])))
            .min_by(|a, b| a.0.total_cmp(&b.0))
            .map(|(d, x, cell)| Approach { minimum_K: d, at_m: x, cell }),
        // An axial line: the streams face to face, the terminal differences included.
        None => {
            hot_faces_c.iter().zip(&cold_faces_c).zip(&sol.faces_m).map(|((h, c), x)| (h - c, *x)).min_by(|a, b| a.0.total_cmp(&b.0)).map(|(d, x)| Approach {
                minimum_K: d,
                at_m: x,
                cell: None,
            })
        }
    }
    .unwrap_or(Approach { minimum_K: th_in - tc_in, at_m: 0.0, cell: None });
    let conditions = |hot: bool| {
        let s = if hot { &ex.hot } else { &ex.cold };
        let k = usize::from(!hot);
        let pick = |a: f64, b: f64| if hot { a } else { b };
        let finned = profile.iter().any(|r| r.fin_efficiency[k].is_some());
        StreamConditions {
            area_m2: s.channel.area_per_length_m * ex.length_m,
            velocity_m_s: Extremes::over(&profile, |r| if hot { r.velocity_hot_m_s } else { r.velocity_cold_m_s }),
            reynolds: Extremes::over(&profile, |r| if hot { r.re_hot } else { r.re_cold }),
            h_W_m2K: Extremes::over(&profile, |r| Some(pick(r.h_hot_w_m2k, r.h_cold_w_m2k))).expect("at least one cell"),
            surface_C: Extremes::over(&profile, |r| Some(pick(r.hot_surface_c, r.cold_surface_c))).expect("at least one cell"),
            fin_efficiency: Extremes::over(&profile, |r| r.fin_efficiency[k]),
            surface_efficiency: finned.then(|| Extremes::over(&profile, |r| Some(r.surface_efficiency[k]))).flatten(),
        }
    };
    let (hot_conditions, cold_conditions) = (conditions(true), conditions(false));
    SteadyReport {
        case: case_name.to_string(),
        arrangement: arr.as_str(),
        scheme: ex.scheme.as_str(),
        version: crate::results::VERSION,
        input_sha256: None,
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
        reference_area_m2: ex.reference_area_per_length_m * ex.length_m,
        hot_conditions,
        cold_conditions,
        minimum_approach,
        hot_film_model: format!("{}: {}", ex.hot.film.name(), ex.hot.film.validity()),
        cold_film_model: format!("{}: {}", ex.cold.film.name(), ex.cold.film.validity()),
        hot_cells_outside_correlation_range: outside[0],
        cold_cells_outside_correlation_range: outside[1],
        hot_inlet_pressure_Pa: ex.hot.inlet_pressure_pa,
        cold_inlet_pressure_Pa: ex.cold.inlet_pressure_pa,
        hot_pressure_drop_Pa: hot_dp,
        cold_pressure_drop_Pa: cold_dp,
        hot_cells_outside_friction_range: outside_friction[0],
        cold_cells_outside_friction_range: outside_friction[1],
        hot_pressure_losses: hot_losses,
        cold_pressure_losses: cold_losses,
        hot_pressure_drop_total_Pa: hot_total,
        cold_pressure_drop_total_Pa: cold_total,
        shell_side,
        sizing: None,
        lumped,
        grid_vs_lumped,
        grid_error_estimate,
        grid_study,
        network,
        warnings,
        caution: CAUTION,
        profile,
        faces_m: sol.faces_m,
        hot_faces_c,
        cold_faces_c,
        hot_faces_pa,
        cold_faces_pa,
        fields,
        reynolds_bands: [ex.hot.film.reynolds_bands(), ex.cold.film.reynolds_bands()],
        duty_faces_w,
        saturation_faces_pa,
        position_label: position_label(ex),
        input: None,
    }
}

/// What the position along an exchanger is, for plot axes: the depth of a tube bank, else
/// the distance along the hot stream's flow.
pub fn position_label(ex: &Exchanger) -> &'static str {
    if [&ex.hot, &ex.cold].iter().any(|s| s.film.name() == "zukauskas") {
        "depth of the bank, x (m)"
    } else {
        "position along the hot stream's flow, x (m)"
    }
}

/// Where along the exchanger a stream's cells are outside its correlation's range and in
/// which regime: " at x = a–b m (Re c–d, laminar)"; empty where all are inside.
fn where_outside(profile: &[ProfileRow], hot: bool, film: &dyn crate::transfer::FilmCorrelation) -> String {
    let out: Vec<&ProfileRow> = profile.iter().filter(|r| !if hot { r.hot_in_range } else { r.cold_in_range }).collect();
    let Some(x) = Extremes::over(out.iter().copied(), |r| Some(r.x_m)) else { return String::new() };
    let num = crate::text::num;
    let at = if x.max - x.min > 0.0 { format!(" at x = {}–{} m", num(x.min), num(x.max)) } else { format!(" at x = {} m", num(x.min)) };
    let re: Vec<f64> = out.iter().filter_map(|r| if hot { r.re_hot } else { r.re_cold }).collect();
    let pr: Vec<f64> = out.iter().map(|r| if hot { r.pr_hot } else { r.pr_cold }).collect();
    let bounds = |v: &[f64]| v.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| (a.min(x), b.max(x)));
    let range = |v: &[f64]| {
        let (lo, hi) = bounds(v);
        let sig = |v: f64| crate::text::sig(v, 4);
        if hi - lo > 1e-9 * hi.abs() {
            format!("{}–{}", sig(lo), sig(hi))
        } else {
            sig(lo)
        }
    };
    let mut what = Vec::new();
    if !re.is_empty() {
        what.push(format!("Re {}", range(&re)));
        // The regimes of flow in a duct where the correlation is one for ducts (laminar to
        // 2300, turbulent from 10⁴: the internal-flow models' own bounds).
        if matches!(film.name(), "gnielinski" | "dittus_boelter" | "sieder_tate" | "pitla") {
            use crate::transfer::{RE_LAMINAR, RE_TURBULENT};
            let regime = |re: f64| {
                if re <= RE_LAMINAR {
                    "laminar"
                } else if re < RE_TURBULENT {
                    "transitional"
                } else {
                    "turbulent"
                }
            };
            let (lo, hi) = bounds(&re);
            let (a, b) = (regime(lo), regime(hi));
            what.push(if a == b { a.to_string() } else { format!("{a} to {b}") });
        }
    }
    what.push(format!("Pr {}", range(&pr)));
    format!("{at} ({})", what.join(", "))
}

/// Face pressures of both streams, marched from each inlet in its own flow direction
/// (empty where the surface has no friction model). The thermal solution does not depend
/// on pressure for the property models here (liquids and tables at one pressure; ideal-gas
/// air, whose cp, μ and k are pressure-independent and whose Re = G·D/μ does not involve ρ),
/// so the march follows the converged temperatures. Bends and headers are not included.
fn pressures(ex: &Exchanger, sol: &SteadySolution, details: &[crate::model::CellDetail]) -> (Vec<f64>, Vec<f64>) {
    let n = sol.cells;
    let march = |stream: &crate::model::Stream, faces_c: &[f64], reversed: bool, re: &dyn Fn(usize) -> Option<f64>| -> Vec<f64> {
        let mut p = vec![0.0; n + 1];
        let order: Vec<usize> = if reversed { (0..n).rev().collect() } else { (0..n).collect() };
        let start = if reversed { n } else { 0 };
        p[start] = stream.inlet_pressure_pa;
        for i in order {
            let (up, down) = if reversed { (i + 1, i) } else { (i, i + 1) };
            // A tube-bank circuit winds through the bank: its path per cell is longer than Δx.
            let path = sol.dx_m * stream.channel.flow_length_m / ex.length_m;
            match stream.pressure_drop(path, faces_c[up], faces_c[down], p[up], re(i), Some(sol.wall_c[i])) {
                Some(dp) => p[down] = p[up] - dp,
                None => return Vec::new(),
            }
        }
        p
    };
    let hot = march(&ex.hot, &sol.hot_faces_c, false, &|i| details[i].hot_film.reynolds);
    let cold_reversed = ex.arrangement == crate::model::Arrangement::Counterflow;
    let cold = march(&ex.cold, &sol.cold_faces_c, cold_reversed, &|i| details[i].cold_film.reynolds);
    (hot, cold)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The half grid started from the merged fine solution converges to the same answer as
    /// from the usual guess (to the solver tolerance), in no more Newton iterations, for each
    /// scheme and both arrangements (the merge must pick the right face of each pair).
    /// Self-consistency: Newton's answer does not depend on its start (common practice).
    #[test]
    fn warm_started_half_grid_matches_a_cold_start() {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler.toml");
        let base = crate::case::load(&path).expect("demo case").build();
        for scheme in [Scheme::Trapezoidal, Scheme::Upwind, Scheme::Tvd] {
            for arrangement in [crate::model::Arrangement::Counterflow, crate::model::Arrangement::Parallel] {
                let ex = Exchanger { scheme, arrangement, ..base.clone() };
                let settings = SteadySettings { cells: 200, ..SteadySettings::default() };
                let fine = solve_steady(&ex, &settings, &mut SilentObserver).unwrap();
                let start = coarsened(&ex, &fine).unwrap();
                let (warm_its, warm) = quantities_at(&ex, &settings, 100, Some(&start)).unwrap();
                let (cold_its, cold) = quantities_at(&ex, &settings, 100, None).unwrap();
                assert!((warm.duty_w - cold.duty_w).abs() < 1e-6 * cold.duty_w, "{scheme:?} {arrangement:?}");
                assert!((warm.hot_outlet_c - cold.hot_outlet_c).abs() < 1e-7 && (warm.cold_outlet_c - cold.cold_outlet_c).abs() < 1e-7);
                assert!(warm_its <= cold_its, "{scheme:?} {arrangement:?}: {warm_its} warm vs {cold_its} cold iterations");
                println!("{scheme:?} {arrangement:?}: {warm_its} warm vs {cold_its} cold iterations");
            }
        }
    }
}
