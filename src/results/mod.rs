#![allow(non_snake_case)] // field names carry their SI units (duty_W, UA_W_K) as in summary.json
//! Plain, serialisable results. Writers turn these into files; nothing here computes.

use crate::lumped::LumpedResult;
use serde::Serialize;

pub mod transient;
pub use transient::{InputChange, OutletResponse, Peak, Response, TransientReport, WallExtremes};

/// The caution every report carries.
pub const CAUTION: &str = "Engineering estimate from a single-phase finite-volume cell model. Boiling and \
condensation are not computed (a stream that would cross saturation is stopped with an error). Heat \
exchangers are pressure equipment: verify results against the applicable codes and standards and have \
them reviewed under licensed engineering practice before use in design or operation.";

/// Duty and outlet temperatures: the quantities grid studies track.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct KeyQuantities {
    /// Duty, W.
    #[serde(rename = "duty_W")]
    pub duty_w: f64,
    /// Hot outlet, °C.
    #[serde(rename = "hot_outlet_C")]
    pub hot_outlet_c: f64,
    /// Cold outlet, °C.
    #[serde(rename = "cold_outlet_C")]
    pub cold_outlet_c: f64,
}

impl KeyQuantities {
    /// Apply `f` to each pair of matching fields.
    pub fn zip(&self, other: &Self, f: impl Fn(f64, f64) -> f64) -> Self {
        Self {
            duty_w: f(self.duty_w, other.duty_w),
            hot_outlet_c: f(self.hot_outlet_c, other.hot_outlet_c),
            cold_outlet_c: f(self.cold_outlet_c, other.cold_outlet_c),
        }
    }
}

/// The meaning of a network cell's indices in profiles.csv: `i` along the first direction
/// (crossflow the hot stream's flow; cross-counterflow along each pass; shell-and-tube the
/// axial station from the shell inlet end), `j` across (crossflow along the cold flow;
/// cross-counterflow the depth cell in its pass; shell-and-tube the tube pass), `k` the pass
/// (cross-counterflow, from the passing stream's inlet) or shell (shell-and-tube, in the tube
/// stream's order), 0 for crossflow.
pub const NETWORK_INDICES: &str = "i: along the first direction; j: across; k: pass or shell";

/// Local values at one cell centre: one row of profiles.csv, whose columns are these
/// fields' serialised names, in this order.
#[derive(Debug, Clone, Serialize)]
pub struct ProfileRow {
    /// A network cell's index along the first direction (see [`NETWORK_INDICES`]; absent on an
    /// axial line of cells).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub i: Option<usize>,
    /// A network cell's index across.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub j: Option<usize>,
    /// A network cell's pass or shell.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub k: Option<usize>,
    /// A network cell's position across the plotted face's width (0–1).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub x_fraction: Option<f64>,
    /// A network cell's position up the plotted face's height (0–1).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub y_fraction: Option<f64>,
    /// Cell centre, m (a network: the first-direction fraction × the exchanger length).
    pub x_m: f64,
    /// Hot bulk temperature, °C.
    #[serde(rename = "hot_C")]
    pub hot_c: f64,
    /// Cold bulk temperature, °C.
    #[serde(rename = "cold_C")]
    pub cold_c: f64,
    /// Wall mid-thickness temperature, °C.
    #[serde(rename = "wall_C")]
    pub wall_c: f64,
    /// Wetted surface temperature on the hot face (where the hot fluid touches the wall or
    /// its fouling layer; at the fin root of a finned face), °C: T_hot − q'/(h η_o A_hot).
    #[serde(rename = "hot_surface_C")]
    pub hot_surface_c: f64,
    /// Wetted surface temperature on the cold face, °C: T_cold + q'/(h η_o A_cold).
    #[serde(rename = "cold_surface_C")]
    pub cold_surface_c: f64,
    /// Heat rate per metre of length (hot → wall), W/m.
    #[serde(rename = "heat_rate_per_length_W_m")]
    pub heat_rate_per_length_w_m: f64,
    /// Heat flux on the reference area, W/m².
    #[serde(rename = "heat_flux_W_m2")]
    pub heat_flux_w_m2: f64,
    /// Local overall coefficient on the reference area, W/(m²·K).
    #[serde(rename = "U_W_m2K")]
    pub u_w_m2k: f64,
    /// Hot film coefficient, W/(m²·K).
    #[serde(rename = "h_hot_W_m2K")]
    pub h_hot_w_m2k: f64,
    /// Cold film coefficient, W/(m²·K).
    #[serde(rename = "h_cold_W_m2K")]
    pub h_cold_w_m2k: f64,
    /// Hot Reynolds number (None without flow geometry).
    #[serde(rename = "Re_hot")]
    pub re_hot: Option<f64>,
    /// Cold Reynolds number.
    #[serde(rename = "Re_cold")]
    pub re_cold: Option<f64>,
    /// Hot mean velocity in the free-flow area, m/s (None without flow geometry).
    #[serde(rename = "velocity_hot_m_s")]
    pub velocity_hot_m_s: Option<f64>,
    /// Cold mean velocity, m/s.
    #[serde(rename = "velocity_cold_m_s")]
    pub velocity_cold_m_s: Option<f64>,
    /// Hot Prandtl number.
    #[serde(rename = "Pr_hot")]
    pub pr_hot: f64,
    /// Cold Prandtl number.
    #[serde(rename = "Pr_cold")]
    pub pr_cold: f64,
    /// Hot viscosity, Pa·s.
    #[serde(rename = "mu_hot_Pa_s")]
    pub mu_hot_pa_s: f64,
    /// Cold viscosity, Pa·s.
    #[serde(rename = "mu_cold_Pa_s")]
    pub mu_cold_pa_s: f64,
    /// Hot specific heat, J/(kg·K).
    #[serde(rename = "cp_hot_J_kgK")]
    pub cp_hot_j_kgk: f64,
    /// Cold specific heat, J/(kg·K).
    #[serde(rename = "cp_cold_J_kgK")]
    pub cp_cold_j_kgk: f64,
    /// Hot density, kg/m³.
    pub rho_hot_kg_m3: f64,
    /// Cold density, kg/m³.
    pub rho_cold_kg_m3: f64,
    /// Hot conductivity, W/(m·K).
    #[serde(rename = "k_hot_W_mK")]
    pub k_hot_w_mk: f64,
    /// Cold conductivity, W/(m·K).
    #[serde(rename = "k_cold_W_mK")]
    pub k_cold_w_mk: f64,
    /// Hot pressure at the cell centre (absolute), Pa; None where no friction model applies.
    #[serde(rename = "p_hot_Pa")]
    pub p_hot_pa: Option<f64>,
    /// Cold pressure at the cell centre (absolute), Pa.
    #[serde(rename = "p_cold_Pa")]
    pub p_cold_pa: Option<f64>,
    /// Whether the hot film correlation is inside its published range here (plots).
    #[serde(skip)]
    pub hot_in_range: bool,
    /// Whether the cold film correlation is inside its published range here.
    #[serde(skip)]
    pub cold_in_range: bool,
    /// Fin efficiency η_f of each face (hot, cold; None on a bare face).
    #[serde(skip)]
    pub fin_efficiency: [Option<f64>; 2],
    /// Overall surface efficiency η_o of each face.
    #[serde(skip)]
    pub surface_efficiency: [f64; 2],
}

/// Where a quantity is smallest and largest over the cells.
#[derive(Debug, Clone, Serialize)]
pub struct Extremes {
    /// Smallest value.
    pub min: f64,
    /// Position of the smallest, m along the exchanger (a network: the first direction).
    pub min_at_m: f64,
    /// A network cell's (i, j, k) of the smallest (absent on an axial line).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub min_cell: Option<[usize; 3]>,
    /// Largest value.
    pub max: f64,
    /// Position of the largest, m.
    pub max_at_m: f64,
    /// A network cell's (i, j, k) of the largest.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub max_cell: Option<[usize; 3]>,
}

impl Extremes {
    /// Extremes of `value` over `rows` (None if it is None on every row).
    pub fn over<'a>(rows: impl IntoIterator<Item = &'a ProfileRow>, value: impl Fn(&ProfileRow) -> Option<f64>) -> Option<Self> {
        let cell = |r: &ProfileRow| r.i.map(|i| [i, r.j.unwrap_or(0), r.k.unwrap_or(0)]);
        let mut out: Option<Self> = None;
        for r in rows {
            let Some(v) = value(r) else { continue };
            let e = out.get_or_insert(Extremes { min: v, min_at_m: r.x_m, min_cell: cell(r), max: v, max_at_m: r.x_m, max_cell: cell(r) });
            if v < e.min {
                (e.min, e.min_at_m, e.min_cell) = (v, r.x_m, cell(r));
            }
            if v > e.max {
                (e.max, e.max_at_m, e.max_cell) = (v, r.x_m, cell(r));
            }
        }
        out
    }
}

/// One stream's local conditions over the exchanger: what an engineer checks against
/// velocity, erosion, fouling and film-temperature limits.
#[derive(Debug, Clone, Serialize)]
pub struct StreamConditions {
    /// Heat-transfer area on this stream's face of the wall (fins included), m².
    pub area_m2: f64,
    /// Mean velocity in the free-flow area, m/s (None without flow geometry).
    pub velocity_m_s: Option<Extremes>,
    /// Reynolds number (None without flow geometry).
    pub reynolds: Option<Extremes>,
    /// Film coefficient, W/(m²·K).
    pub h_W_m2K: Extremes,
    /// Wetted surface temperature on this face, °C (see profiles.csv `hot_surface_C`).
    pub surface_C: Extremes,
    /// Fin efficiency η_f (finned surfaces only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fin_efficiency: Option<Extremes>,
    /// Overall surface efficiency η_o = 1 − (A_f/A)(1 − η_f) (finned surfaces only).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub surface_efficiency: Option<Extremes>,
}

/// The smallest local hot-to-cold temperature difference and where it is.
#[derive(Debug, Clone, Serialize)]
pub struct Approach {
    /// Smallest T_hot − T_cold at one position, K (the pinch of the T–Q diagram).
    pub minimum_K: f64,
    /// Where, m along the exchanger (a network: the first direction of its cell).
    pub at_m: f64,
    /// A network cell's (i, j, k) (absent on an axial line).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cell: Option<[usize; 3]>,
}

/// How the grid result compares with the lumped hand result.
#[derive(Debug, Clone, Serialize)]
pub struct Comparison {
    /// (grid − lumped)/lumped duty, %.
    pub duty_difference_percent: f64,
    /// Grid − lumped hot outlet, K.
    pub hot_outlet_difference_K: f64,
    /// The same as a share of the grid's hot temperature change, %.
    pub hot_outlet_difference_percent_of_change: f64,
    /// Grid − lumped cold outlet, K.
    pub cold_outlet_difference_K: f64,
    /// The same as a share of the grid's cold temperature change, %.
    pub cold_outlet_difference_percent_of_change: f64,
    /// (grid UA − lumped UA)/lumped UA, %.
    pub ua_difference_percent: f64,
}

/// Estimate of the discretisation error of a result.
#[derive(Debug, Clone, Serialize)]
pub struct GridError {
    /// Cells of the coarser solve it was compared with.
    pub coarse_cells: usize,
    /// Order assumed for the extrapolation.
    pub order: f64,
    /// Richardson-extrapolated values.
    pub extrapolated: KeyQuantities,
    /// Estimated error of the reported result (result − extrapolated).
    pub estimated_error: KeyQuantities,
}

/// One solve of a grid study.
#[derive(Debug, Clone, Serialize)]
pub struct StudyLevel {
    /// Cells.
    pub cells: usize,
    /// Newton iterations.
    pub iterations: usize,
    /// Results at this grid.
    #[serde(flatten)]
    pub values: KeyQuantities,
}

/// Observed order of accuracy per quantity (None where the differences are at round-off,
/// e.g. when the scheme is exact for the case).
#[derive(Debug, Clone, Serialize)]
pub struct ObservedOrder {
    /// For the duty.
    pub duty: Option<f64>,
    /// For the hot outlet.
    pub hot_outlet: Option<f64>,
    /// For the cold outlet.
    pub cold_outlet: Option<f64>,
}

/// Solves at N, 2N, 4N, … with observed order and Richardson extrapolation.
#[derive(Debug, Clone, Serialize)]
pub struct GridStudy {
    /// The solves, coarse to fine.
    pub levels: Vec<StudyLevel>,
    /// The scheme's formal order.
    pub formal_order: f64,
    /// Order observed from the three finest levels.
    pub observed_order: ObservedOrder,
    /// Richardson extrapolation of the two finest levels at the formal order.
    pub extrapolated: KeyQuantities,
    /// Finest level − extrapolated.
    pub finest_estimated_error: KeyQuantities,
}

/// Temperatures (or another quantity) over a network's plotted face, row-major.
#[derive(Debug, Clone, Default)]
pub struct Field {
    /// Columns (first direction).
    pub columns: usize,
    /// Rows (second direction).
    pub rows: usize,
    /// Values, `rows × columns`, row `r` column `c` at `r * columns + c`.
    pub values: Vec<f64>,
}

impl Field {
    /// One value per cell of `net` placed on its plot lattice (empty slots NaN).
    pub fn of_network(net: &crate::model::Network, values: &[f64]) -> Self {
        let (columns, rows) = net.plot_shape;
        let mut v = vec![f64::NAN; columns * rows];
        for (c, &value) in net.cells.iter().zip(values) {
            let col = ((c.position[0] * columns as f64) as usize).min(columns - 1);
            let row = ((c.position[1] * rows as f64) as usize).min(rows - 1);
            v[row * columns + col] = value;
        }
        Field { columns, rows, values: v }
    }
}

/// The 2-D picture of a network result, for plots.
#[derive(Debug, Clone, Default)]
pub struct NetworkFields {
    /// What the horizontal axis is.
    pub x_label: String,
    /// What the vertical axis is.
    pub y_label: String,
    /// Hot bulk temperature, °C.
    pub hot_c: Field,
    /// Cold bulk temperature, °C.
    pub cold_c: Field,
    /// Wall temperature, °C.
    pub wall_c: Field,
    /// Heat flux on the reference area, W/m².
    pub heat_flux_w_m2: Field,
    /// Temperatures of the hot stream's outlet lanes, °C, across its outlet face.
    pub hot_outlet_lanes_c: Vec<f64>,
    /// The cold stream's outlet lanes, °C.
    pub cold_outlet_lanes_c: Vec<f64>,
}

/// Spread of one stream's outlet temperature across its outlet face.
#[derive(Debug, Clone, Serialize)]
pub struct OutletSpread {
    /// Mixed-mean outlet, °C.
    pub mixed_mean_C: f64,
    /// Coldest lane, °C.
    pub min_C: f64,
    /// Hottest lane, °C.
    pub max_C: f64,
    /// Lanes (cells across the outlet face).
    pub lanes: usize,
}

/// What a network rating adds to the summary.
#[derive(Debug, Clone, Serialize)]
pub struct NetworkSummary {
    /// The arrangement's settings.
    pub layout: crate::model::Layout,
    /// Cells in the network.
    pub cells_total: usize,
    /// Effectiveness of the arrangement's closed form at the grid's own NTU and capacity
    /// ratio (beside the grid's `effectiveness` and the lumped result's).
    pub closed_form_effectiveness: f64,
    /// Whether that closed form is exact for the idealised model (else an approximation).
    pub closed_form_exact: bool,
    /// Hot outlet spread.
    pub hot_outlet: OutletSpread,
    /// Cold outlet spread.
    pub cold_outlet: OutletSpread,
}

/// The shell side's rating breakdown and which stream it is.
#[derive(Debug, Clone, Serialize)]
pub struct ShellSide {
    /// "hot" or "cold".
    pub stream: &'static str,
    /// The breakdown.
    #[serde(flatten)]
    pub rating: crate::transfer::shell::ShellRating,
}

/// Everything a steady rating produces.
#[derive(Debug, Clone, Serialize)]
pub struct SteadyReport {
    /// Case name.
    pub case: String,
    /// Arrangement.
    pub arrangement: &'static str,
    /// Spatial scheme (its formal order is `grid_error_estimate.order`).
    pub scheme: &'static str,
    /// hxgrid version that wrote the result.
    pub version: &'static str,
    /// SHA-256 of the case file's text, hex (None for an exchanger built in code).
    pub input_sha256: Option<String>,
    /// Length, m.
    pub length_m: f64,
    /// Hot fluid description.
    pub hot_fluid: String,
    /// Cold fluid description.
    pub cold_fluid: String,
    /// Cells.
    pub cells: usize,
    /// Newton iterations.
    pub iterations: usize,
    /// Final Σ|residual| / maximum duty.
    pub final_relative_residual: f64,
    /// Duty (heat given up by the hot stream), W.
    pub duty_W: f64,
    /// Hot outlet, °C.
    pub hot_outlet_C: f64,
    /// Cold outlet, °C.
    pub cold_outlet_C: f64,
    /// Q / (C_min (T_h,in − T_c,in)), with each C the stream's mean capacity rate Q/ΔT.
    pub effectiveness: f64,
    /// Σ(local UA) / C_min.
    pub ntu: f64,
    /// C_min / C_max from the mean capacity rates.
    pub capacity_ratio: f64,
    /// Σ of local UA over the cells, W/K.
    pub UA_W_K: f64,
    /// LMTD of the grid's terminal temperatures, K.
    pub lmtd_K: Option<f64>,
    /// Duty / LMTD: the single UA a hand method would need to match the grid, W/K.
    pub effective_UA_W_K: Option<f64>,
    /// Heat given up by the hot stream (enthalpy change), W.
    pub hot_heat_released_W: f64,
    /// Heat taken by the cold stream (enthalpy change), W.
    pub cold_heat_gained_W: f64,
    /// Hot released − cold gained, W.
    pub energy_imbalance_W: f64,
    /// Thermodynamic maximum duty, W.
    pub max_duty_W: f64,
    /// The area the local U and heat flux are referred to, m².
    pub reference_area_m2: f64,
    /// Hot stream's local conditions: area, velocity, Re, h, surface temperature, fins.
    pub hot_conditions: StreamConditions,
    /// Cold stream's local conditions.
    pub cold_conditions: StreamConditions,
    /// Smallest local temperature approach and where.
    pub minimum_approach: Approach,
    /// Hot film model and its published validity range.
    pub hot_film_model: String,
    /// Cold film model and its published validity range.
    pub cold_film_model: String,
    /// Hot cells whose local state is outside the film correlation's validity range.
    pub hot_cells_outside_correlation_range: usize,
    /// Cold cells outside their correlation's range.
    pub cold_cells_outside_correlation_range: usize,
    /// Hot inlet pressure (absolute), Pa.
    pub hot_inlet_pressure_Pa: f64,
    /// Cold inlet pressure (absolute), Pa.
    pub cold_inlet_pressure_Pa: f64,
    /// Hot pressure drop inlet → outlet, Pa (None: no friction model for this surface).
    pub hot_pressure_drop_Pa: Option<f64>,
    /// Cold pressure drop, Pa.
    pub cold_pressure_drop_Pa: Option<f64>,
    /// Hot cells whose Reynolds number is outside the friction correlation's range (where
    /// it has its own, e.g. Gaddis–Gnielinski on a tube bank).
    pub hot_cells_outside_friction_range: usize,
    /// Cold cells outside their friction correlation's range.
    pub cold_cells_outside_friction_range: usize,
    /// Hot losses besides core friction (entrance/exit, returns, nozzles), Pa; None where the
    /// passage has none.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub hot_pressure_losses: Option<crate::transfer::losses::LossBreakdown>,
    /// Cold losses besides core friction.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cold_pressure_losses: Option<crate::transfer::losses::LossBreakdown>,
    /// Hot drop with those losses: `hot_pressure_drop_Pa` + the losses.
    pub hot_pressure_drop_total_Pa: Option<f64>,
    /// Cold drop with the losses.
    pub cold_pressure_drop_total_Pa: Option<f64>,
    /// Shell side rated from geometry: method, Re, every correction factor, the zone
    /// pressure drops and the method's stated uncertainty (at the mean shell temperature).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub shell_side: Option<ShellSide>,
    /// A sizing's outcome (`hxgrid size`), or for a rated case with a `[size]` table the
    /// design margin against that target.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sizing: Option<crate::design::size::Sizing>,
    /// The lumped hand result.
    pub lumped: LumpedResult,
    /// Grid versus lumped.
    pub grid_vs_lumped: Comparison,
    /// Estimated discretisation error (None for a single cell).
    pub grid_error_estimate: Option<GridError>,
    /// Grid study, if asked for.
    pub grid_study: Option<GridStudy>,
    /// Network arrangements: layout, closed form, outlet spread (None on an axial line).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub network: Option<NetworkSummary>,
    /// Things the user should look at.
    pub warnings: Vec<String>,
    /// The standing caution.
    pub caution: &'static str,
    /// Cell-centre profiles (written as CSV, not into the summary).
    #[serde(skip)]
    pub profile: Vec<ProfileRow>,
    /// Face positions, m (for plots).
    #[serde(skip)]
    pub faces_m: Vec<f64>,
    /// Hot face temperatures, °C.
    #[serde(skip)]
    pub hot_faces_c: Vec<f64>,
    /// Cold face temperatures, °C.
    #[serde(skip)]
    pub cold_faces_c: Vec<f64>,
    /// Hot face pressures, Pa (empty if not computed).
    #[serde(skip)]
    pub hot_faces_pa: Vec<f64>,
    /// Cold face pressures, Pa (empty if not computed).
    #[serde(skip)]
    pub cold_faces_pa: Vec<f64>,
    /// A network's fields over its face, for plots.
    #[serde(skip)]
    pub fields: Option<NetworkFields>,
    /// Each stream's Reynolds bands inside its film correlation's range, for plots.
    #[serde(skip)]
    pub reynolds_bands: [Vec<(f64, f64)>; 2],
    /// Heat given up by the hot stream from its inlet to each face, W (an axial line; the
    /// T–Q diagram's abscissa).
    #[serde(skip)]
    pub duty_faces_w: Vec<f64>,
    /// Each stream's saturation pressure at its face temperatures, Pa (empty for a fluid
    /// without one, or where no pressure profile was computed).
    #[serde(skip)]
    pub saturation_faces_pa: [Vec<f64>; 2],
    /// What the position along the exchanger is, for plot axes.
    #[serde(skip)]
    pub position_label: &'static str,
    /// The case as given and as interpreted (None for an exchanger built in code).
    #[serde(skip)]
    pub input: Option<std::sync::Arc<InputEcho>>,
}

/// The case behind a result, for the report: the file as given and the values as the
/// program took them, with units.
#[derive(Debug, Clone, Default)]
pub struct InputEcho {
    /// Where the case came from (a path).
    pub origin: String,
    /// The case file's text, as read.
    pub text: String,
    /// SHA-256 of that text, hex.
    pub sha256: String,
    /// (quantity, value with unit) as interpreted, in reading order.
    pub interpreted: Vec<(String, String)>,
}

/// The version written into every result.
pub const VERSION: &str = env!("CARGO_PKG_VERSION");

impl SteadyReport {
    /// The tracked quantities of this result.
    pub fn key_quantities(&self) -> KeyQuantities {
        KeyQuantities { duty_w: self.duty_W, hot_outlet_c: self.hot_outlet_C, cold_outlet_c: self.cold_outlet_C }
    }

    /// The report with the case behind it (its SHA-256 goes into the summary).
    pub fn with_input(self, echo: InputEcho) -> Self {
        SteadyReport { input_sha256: Some(echo.sha256.clone()), input: Some(std::sync::Arc::new(echo)), ..self }
    }
}
