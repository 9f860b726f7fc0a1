//! The exchanger model: two streams, the wall between them, and the per-cell balance.
//!
//! Owns: the one place the cell physics is written ([`Exchanger::cell`]). The steady
//! solver drives its balances to zero; a transient integrator adds storage to the same
//! balances. Must not: solve, print or write files.
//!
//! Grid: the length L is split into N equal cells. Each stream's temperature lives on the
//! cell faces (N + 1 per stream, one of them the fixed inlet); the wall temperature lives
//! at each cell centre, at mid-thickness of the wall. Position x runs from 0 to L in the
//! hot stream's direction of flow; in counterflow the cold stream enters at x = L.
//!
//! Heat path in a cell of length Δx, per metre of length (K·m/W):
//!   hot side  r'_h = 1/(h_h a_h) + R''_f,h/a_h + R'_w/2
//!   cold side r'_c = R'_w/2 + R''_f,c/a_c + 1/(h_c a_c)
//! so hot-bulk → wall → cold-bulk is the chain of five series resistances (convection,
//! fouling, wall conduction, fouling, convection) with the wall node in its middle.
//! Bulk temperatures in the heat-rate terms are face averages, and film coefficients use
//! properties at the face-averaged temperature: the scheme is second order in Δx.
//! Fluid energy balances use enthalpy differences between faces, so the heat given up by
//! the hot stream equals the sum of the cells' heat rates exactly, whatever the properties.

pub mod network;
pub mod scheme;

use crate::fluid::{Fluid, Props};
use crate::transfer::{Channel, FilmCorrelation, FilmInput, FilmResult, Wall};
pub use network::{CrossCounterflow, Crossflow, Feed, Layout, Mixing, Network, ShellAndTube};
pub use scheme::{Grid, Scheme};
use std::sync::Arc;

/// One of the two streams.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Side {
    /// The stream that gives up heat.
    Hot,
    /// The stream that takes it.
    Cold,
}

impl Side {
    /// Both sides, hot first.
    pub const BOTH: [Side; 2] = [Side::Hot, Side::Cold];
    /// "hot" or "cold", as in case keys and reports.
    pub fn as_str(self) -> &'static str {
        match self {
            Side::Hot => "hot",
            Side::Cold => "cold",
        }
    }
    /// 0 for hot, 1 for cold: the component of a cell's unknowns (see [`scheme`]).
    pub fn index(self) -> usize {
        match self {
            Side::Hot => 0,
            Side::Cold => 1,
        }
    }
    /// The other stream.
    pub fn other(self) -> Side {
        match self {
            Side::Hot => Side::Cold,
            Side::Cold => Side::Hot,
        }
    }
}

impl std::fmt::Display for Side {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

/// One value for each stream.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PerSide<T> {
    /// The hot stream's.
    pub hot: T,
    /// The cold stream's.
    pub cold: T,
}

impl<T> std::ops::Index<Side> for PerSide<T> {
    type Output = T;
    fn index(&self, side: Side) -> &T {
        match side {
            Side::Hot => &self.hot,
            Side::Cold => &self.cold,
        }
    }
}

impl<T> std::ops::IndexMut<Side> for PerSide<T> {
    fn index_mut(&mut self, side: Side) -> &mut T {
        match side {
            Side::Hot => &mut self.hot,
            Side::Cold => &mut self.cold,
        }
    }
}

impl<T> PerSide<T> {
    /// Build from a function of the side.
    pub fn from_fn(mut f: impl FnMut(Side) -> T) -> Self {
        Self { hot: f(Side::Hot), cold: f(Side::Cold) }
    }
}

/// Flow arrangement as a case file names it (`arrangement = "…"`); the settings of the
/// network arrangements come from their own tables.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize, schemars::JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum ArrangementKind {
    /// Streams flow in opposite directions.
    Counterflow,
    /// Streams flow in the same direction.
    Parallel,
    /// Single-pass crossflow (`[crossflow]`).
    Crossflow,
    /// Multi-pass cross-counterflow (`[cross_counterflow]`).
    CrossCounterflow,
    /// Shell-and-tube passes and shells (`[shell_and_tube]`).
    ShellAndTube,
}

impl ArrangementKind {
    /// Name used in case files and reports.
    pub fn as_str(self) -> &'static str {
        match self {
            ArrangementKind::Counterflow => "counterflow",
            ArrangementKind::Parallel => "parallel",
            ArrangementKind::Crossflow => "crossflow",
            ArrangementKind::CrossCounterflow => "cross_counterflow",
            ArrangementKind::ShellAndTube => "shell_and_tube",
        }
    }
}

/// Flow arrangement of the two streams.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Arrangement {
    /// Streams flow in opposite directions along one axis (an axial line of cells).
    Counterflow,
    /// Streams flow in the same direction (an axial line of cells).
    Parallel,
    /// A cell network (crossflow, passes, shells).
    Network(Layout),
}

impl Arrangement {
    /// Name used in case files and reports.
    pub fn as_str(self) -> &'static str {
        self.kind().as_str()
    }

    /// The case-file word for this arrangement.
    pub fn kind(self) -> ArrangementKind {
        match self {
            Arrangement::Counterflow => ArrangementKind::Counterflow,
            Arrangement::Parallel => ArrangementKind::Parallel,
            Arrangement::Network(Layout::Crossflow(_)) => ArrangementKind::Crossflow,
            Arrangement::Network(Layout::CrossCounterflow(_)) => ArrangementKind::CrossCounterflow,
            Arrangement::Network(Layout::ShellAndTube(_)) => ArrangementKind::ShellAndTube,
        }
    }

    /// The network layout, for the arrangements that are networks.
    pub fn layout(self) -> Option<Layout> {
        match self {
            Arrangement::Network(l) => Some(l),
            _ => None,
        }
    }
}

/// One stream: its fluid, flow, inlet state and the channel it flows through.
#[derive(Debug, Clone)]
pub struct Stream {
    /// Fluid at the stream's pressure.
    pub fluid: Arc<dyn Fluid>,
    /// Mass flow, kg/s (positive).
    pub mass_flow_kg_s: f64,
    /// Inlet temperature, °C.
    pub inlet_c: f64,
    /// Inlet pressure (absolute), Pa.
    pub inlet_pressure_pa: f64,
    /// Fouling resistance on this stream's face of the wall, m²·K/W.
    pub fouling_m2k_w: f64,
    /// Film-coefficient correlation.
    pub film: Arc<dyn FilmCorrelation>,
    /// Flow passage.
    pub channel: Channel,
}

impl Stream {
    /// Properties at bulk temperature `bulk_c` and the film with the wall at `wall_c`;
    /// `heated` is true for the stream taking heat (the cold one).
    pub fn film_at(&self, bulk_c: f64, wall_c: f64, heated: bool) -> (Props, FilmResult) {
        let props = self.fluid.props(bulk_c);
        let input = FilmInput { channel: &self.channel, mass_flow_kg_s: self.mass_flow_kg_s, props: &props, bulk_c, wall_c, fluid: &*self.fluid, heated };
        let mut film = self.film.film(&input);
        // A film coefficient of zero (no heat transfer, or a correlation at zero flow) would
        // make the resistance infinite; a floor far below any real value keeps it finite.
        film.h = film.h.max(1e-12);
        (props, film)
    }

    /// Pressure drop across a cell of length `dx_m` (Pa, positive in the flow direction)
    /// from the stream's upstream face at `t_in` (°C) and pressure `p_in` to its downstream
    /// face at `t_out`: friction f·(Δx/D_h)·G²/(2ρ̄) with the correlation's Darcy factor at
    /// the bulk Reynolds number, plus acceleration G²(1/ρ_out − 1/ρ_in); densities at the
    /// local pressure (which matters for gases). `wall_c`, where known, gives the μ_b/μ_w of
    /// correlations whose friction has a wall correction. None where the surface has no
    /// friction model.
    pub fn pressure_drop(&self, dx_m: f64, t_in: f64, t_out: f64, p_in: f64, reynolds: Option<f64>, wall_c: Option<f64>) -> Option<f64> {
        let area = self.channel.flow_area_m2?;
        let d = self.channel.hydraulic_diameter_m?;
        let mu_ratio = wall_c.map_or(1.0, |w| {
            let mu_w = self.fluid.props(w).viscosity;
            if mu_w > 0.0 {
                self.fluid.props(0.5 * (t_in + t_out)).viscosity / mu_w
            } else {
                1.0
            }
        });
        let f = self.film.darcy_friction_at(&self.channel, reynolds?, mu_ratio)?;
        let g = self.mass_flow_kg_s / area;
        let rho_in = self.fluid.density_at(t_in, p_in);
        // Friction first at the inlet density, then the outlet density at the reduced pressure.
        let friction = |rho_mean: f64| f * dx_m / d * g * g / (2.0 * rho_mean);
        let rho_out_guess = self.fluid.density_at(t_out, p_in - friction(rho_in));
        let rho_mean = 2.0 / (1.0 / rho_in + 1.0 / rho_out_guess);
        let rho_out = self.fluid.density_at(t_out, p_in - friction(rho_mean));
        Some(friction(2.0 / (1.0 / rho_in + 1.0 / rho_out)) + g * g * (1.0 / rho_out - 1.0 / rho_in))
    }

    /// Resistance per metre between this stream's bulk and the wall's conducting metal
    /// surface, K·m/W: convection plus fouling on this side's area, both divided by the
    /// overall surface efficiency η_o of a finned surface (Incropera Eq. 11.5).
    pub fn surface_resistance_per_length(&self, film: &FilmResult) -> f64 {
        self.film_resistance_per_length(film) + self.fouling_m2k_w / (self.channel.area_per_length_m * film.surface_efficiency)
    }

    /// The convection part of [`Stream::surface_resistance_per_length`], 1/(h η_o A), K·m/W:
    /// the drop from the bulk to the wetted surface per unit heat rate per metre.
    pub fn film_resistance_per_length(&self, film: &FilmResult) -> f64 {
        1.0 / (film.h * (self.channel.area_per_length_m * film.surface_efficiency))
    }
}

/// A two-stream exchanger, ready to be solved. A constructed value is consistent; cloning
/// is cheap (fluids and correlations are shared).
#[derive(Debug, Clone)]
pub struct Exchanger {
    /// Flow arrangement.
    pub arrangement: Arrangement,
    /// Length, m.
    pub length_m: f64,
    /// Hot stream.
    pub hot: Stream,
    /// Cold stream.
    pub cold: Stream,
    /// Separating wall.
    pub wall: Wall,
    /// Area per metre of length that the local U is referred to, m²/m (tube outer surface
    /// for a double pipe; the wall area for a plane wall).
    pub reference_area_per_length_m: f64,
    /// Spatial scheme (shared by the steady solver and the transient integrator).
    pub scheme: Scheme,
}

/// Temperatures a cell sees (°C): each stream's advected temperature on its upstream
/// ("in") and downstream ("out") face, its bulk temperature for heat transfer (built by the
/// [`Scheme`]), and the wall.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellTemps {
    /// Hot stream at its upstream face.
    pub hot_in: f64,
    /// Hot stream at its downstream face.
    pub hot_out: f64,
    /// Hot bulk temperature.
    pub hot_bulk: f64,
    /// Cold stream at its upstream face.
    pub cold_in: f64,
    /// Cold stream at its downstream face.
    pub cold_out: f64,
    /// Cold bulk temperature.
    pub cold_bulk: f64,
    /// Wall (mid-thickness) at the cell centre.
    pub wall: f64,
}

/// Heat rates of one cell, W.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellBalance {
    /// Enthalpy the hot stream loses across the cell, ṁ_h (h(T_in) − h(T_out)).
    pub hot_release_w: f64,
    /// Enthalpy the cold stream gains across the cell, ṁ_c (h(T_out) − h(T_in)).
    pub cold_gain_w: f64,
    /// Heat from the hot bulk into the wall.
    pub hot_to_wall_w: f64,
    /// Heat from the wall into the cold bulk.
    pub wall_to_cold_w: f64,
}

impl CellBalance {
    /// Steady residuals (W): hot stream, cold stream, wall. All zero at steady state.
    pub fn steady_residual(&self) -> [f64; 3] {
        [self.hot_release_w - self.hot_to_wall_w, self.cold_gain_w - self.wall_to_cold_w, self.hot_to_wall_w - self.wall_to_cold_w]
    }
}

/// Everything the cell model knows about one cell (for reports).
#[derive(Debug, Clone, Copy)]
pub struct CellDetail {
    /// Heat rates.
    pub balance: CellBalance,
    /// Hot bulk temperature (face average), °C.
    pub hot_bulk_c: f64,
    /// Cold bulk temperature (face average), °C.
    pub cold_bulk_c: f64,
    /// Hot properties at the bulk temperature.
    pub hot_props: Props,
    /// Cold properties at the bulk temperature.
    pub cold_props: Props,
    /// Hot film.
    pub hot_film: FilmResult,
    /// Cold film.
    pub cold_film: FilmResult,
    /// Bulk-to-bulk conductance per metre of length, W/(m·K).
    pub ua_per_length_w_mk: f64,
    /// Hot bulk to wall node resistance of one metre, K·m/W.
    pub r_hot_per_length: f64,
    /// Wall node to cold bulk resistance of one metre, K·m/W.
    pub r_cold_per_length: f64,
    /// Weight β of the inflow face in each stream's bulk temperature, T_out + β(T_in − T_out)
    /// (½ except in the trapezoidal scheme's short-circuit at high cell NTU; see `side`).
    pub bulk_weight: [f64; 2],
}

/// Derivatives of the three steady residuals (hot, cold, wall) with respect to the cell's
/// seven temperatures (hot in, hot out, hot bulk, cold in, cold out, cold bulk, wall), W/K.
pub type CellJacobian = [[f64; 7]; 3];

/// Step for the finite difference of a side resistance in bulk temperature, K.
const RESISTANCE_STEP_K: f64 = 1e-4;

impl Exchanger {
    /// One of the two streams.
    pub fn stream(&self, side: Side) -> &Stream {
        match side {
            Side::Hot => &self.hot,
            Side::Cold => &self.cold,
        }
    }

    /// Resistance per metre from one stream's bulk to the wall node (convection, fouling,
    /// half the wall), K·m/W, with that stream's properties at `bulk_c` and the wall at `wall_c`.
    fn side_resistance(&self, stream: &Stream, bulk_c: f64, wall_c: f64) -> (Props, FilmResult, f64) {
        let heated = std::ptr::eq(stream, &self.cold);
        let (props, film) = stream.film_at(bulk_c, wall_c, heated);
        let r = stream.surface_resistance_per_length(&film) + 0.5 * self.wall.resistance_per_length();
        (props, film, r)
    }

    /// One stream's bulk temperature, properties, film and resistance in a cell. With the
    /// trapezoidal scheme the bulk is T_out + β(T_in − T_out), and the cell balance gives
    /// T_out − T_w = (T_in − T_w)(1 − Nβ)/(1 + N(1 − β)), N = Δx/(r ṁ cp) the stream's cell NTU
    /// to the wall. The face mean β = ½ overshoots the wall once N > 2 (at zero flow it drove
    /// a stagnant cell to 2T_w − T_in); so β = ½ up to N = 2 and β = 1/N beyond, continuous at
    /// N = 2, Nβ ≤ 1 always, and 0 — the cell's own unknown, as in the upwind scheme — when the
    /// flow stops. Below N = 2 nothing changes: second order, exact for balanced counterflow.
    #[allow(clippy::too_many_arguments)]
    fn side(&self, stream: &Stream, share: f64, t_in: f64, t_out: f64, nominal_bulk: f64, wall: f64, dx_m: f64) -> (f64, f64, Props, FilmResult, f64) {
        let (props, film, r) = self.side_resistance(stream, nominal_bulk, wall);
        if self.scheme != Scheme::Trapezoidal {
            return (nominal_bulk, 0.5, props, film, r);
        }
        // u = 1/N, finite at zero flow.
        let u = r * share * stream.mass_flow_kg_s * props.cp / dx_m;
        if u >= 0.5 || !u.is_finite() {
            return (nominal_bulk, 0.5, props, film, r);
        }
        let beta = u;
        let bulk = t_out + beta * (t_in - t_out);
        let (props, film, r) = self.side_resistance(stream, bulk, wall);
        (bulk, beta, props, film, r)
    }

    /// The cell model: heat rates of a cell of length `dx_m` at temperatures `t`, each
    /// stream's whole flow passing through it (the axial line of cells).
    pub fn cell(&self, dx_m: f64, t: &CellTemps) -> CellDetail {
        self.cell_shared(dx_m, [1.0, 1.0], t)
    }

    /// The cell model for a cell of a network, which takes a share `flow_share` (hot, cold)
    /// of each stream's flow and the area of a length `dx_m` of the exchanger. Film
    /// coefficients are those of the whole stream in its channel (the local velocity does
    /// not depend on how the network is cut into cells); the enthalpy terms carry the
    /// cell's share of the flow.
    pub fn cell_shared(&self, dx_m: f64, flow_share: [f64; 2], t: &CellTemps) -> CellDetail {
        let (hf, cf) = (&*self.hot.fluid, &*self.cold.fluid);
        let enthalpies = [hf.enthalpy(t.hot_in), hf.enthalpy(t.hot_out), cf.enthalpy(t.cold_in), cf.enthalpy(t.cold_out)];
        self.cell_given(dx_m, flow_share, t, enthalpies)
    }

    /// [`Exchanger::cell_shared`] with the specific enthalpies of the four faces already known
    /// (hot in, hot out, cold in, cold out, J/kg, at the temperatures in `t`): a caller that
    /// sweeps a line of cells evaluates each face once instead of once from each side.
    pub fn cell_given(&self, dx_m: f64, flow_share: [f64; 2], t: &CellTemps, enthalpies: [f64; 4]) -> CellDetail {
        let (hot_bulk_c, beta_hot, hot_props, hot_film, r_hot) = self.side(&self.hot, flow_share[0], t.hot_in, t.hot_out, t.hot_bulk, t.wall, dx_m);
        let (cold_bulk_c, beta_cold, cold_props, cold_film, r_cold) = self.side(&self.cold, flow_share[1], t.cold_in, t.cold_out, t.cold_bulk, t.wall, dx_m);
        let [h_hot_in, h_hot_out, h_cold_in, h_cold_out] = enthalpies;
        let balance = CellBalance {
            hot_release_w: flow_share[0] * self.hot.mass_flow_kg_s * (h_hot_in - h_hot_out),
            cold_gain_w: flow_share[1] * self.cold.mass_flow_kg_s * (h_cold_out - h_cold_in),
            hot_to_wall_w: (hot_bulk_c - t.wall) * dx_m / r_hot,
            wall_to_cold_w: (t.wall - cold_bulk_c) * dx_m / r_cold,
        };
        CellDetail {
            balance,
            hot_bulk_c,
            cold_bulk_c,
            hot_props,
            cold_props,
            hot_film,
            cold_film,
            ua_per_length_w_mk: 1.0 / (r_hot + r_cold),
            r_hot_per_length: r_hot,
            r_cold_per_length: r_cold,
            bulk_weight: [beta_hot, beta_cold],
        }
    }

    /// The cell model with the derivatives of its steady residuals, for Newton.
    ///
    /// Enthalpy terms differentiate exactly to ṁ·cp at each face. (Taking cp at the bulk
    /// temperature instead was tried: it stalled Newton on supercritical CO₂, where cp
    /// changes several percent across a cell and the in/out difference is what matters.)
    /// The heat rates depend on the bulk temperatures through the film coefficients too;
    /// that part is one forward difference of each side's resistance, so any plugged-in
    /// fluid or correlation is differentiated without code of its own.
    pub fn cell_with_jacobian(&self, dx_m: f64, t: &CellTemps) -> (CellDetail, CellJacobian) {
        self.cell_shared_with_jacobian(dx_m, [1.0, 1.0], t)
    }

    /// [`Exchanger::cell_shared`] with the derivatives of its steady residuals.
    pub fn cell_shared_with_jacobian(&self, dx_m: f64, flow_share: [f64; 2], t: &CellTemps) -> (CellDetail, CellJacobian) {
        let d = self.cell_shared(dx_m, flow_share, t);
        // q = ΔT·dx/r(T_bulk, T_wall), ΔT = T_bulk − T_wall:
        //   ∂q/∂T_bulk = dx/r·(1 − ΔT·∂r/∂T_bulk / r),  ∂q/∂T_wall = −dx/r·(1 + ΔT·∂r/∂T_wall / r).
        let slopes = |stream: &Stream, bulk: f64, r: f64| {
            let (_, _, r_bulk) = self.side_resistance(stream, bulk + RESISTANCE_STEP_K, t.wall);
            let dr_bulk = (r_bulk - r) / RESISTANCE_STEP_K;
            let dr_wall = if stream.film.uses_wall_temperature() {
                let (_, _, r_wall) = self.side_resistance(stream, bulk, t.wall + RESISTANCE_STEP_K);
                (r_wall - r) / RESISTANCE_STEP_K
            } else {
                0.0
            };
            let dt = bulk - t.wall;
            (dx_m / r * (1.0 - dt * dr_bulk / r), -dx_m / r * (1.0 + dt * dr_wall / r))
        };
        let (g_hot, w_hot) = slopes(&self.hot, d.hot_bulk_c, d.r_hot_per_length); // ∂q_hw/∂T_h,bulk, ∂q_hw/∂T_w
        let (g_cold_q, w_cold_q) = slopes(&self.cold, d.cold_bulk_c, d.r_cold_per_length); // of (T_c − T_w)dx/r = −q_wc
        let (g_cold, w_cold) = (-g_cold_q, -w_cold_q); // ∂q_wc/∂T_c,bulk, ∂q_wc/∂T_w
        let mc = |s: &Stream, share: f64, t: f64| share * s.mass_flow_kg_s * s.fluid.props(t).cp;
        let (mc_hot_in, mc_hot_out) = (mc(&self.hot, flow_share[0], t.hot_in), mc(&self.hot, flow_share[0], t.hot_out));
        let (mc_cold_in, mc_cold_out) = (mc(&self.cold, flow_share[1], t.cold_in), mc(&self.cold, flow_share[1], t.cold_out));
        let mut jac = [
            [mc_hot_in, -mc_hot_out, -g_hot, 0.0, 0.0, 0.0, -w_hot],
            [0.0, 0.0, 0.0, -mc_cold_in, mc_cold_out, -g_cold, -w_cold],
            [0.0, 0.0, g_hot, 0.0, 0.0, -g_cold, w_hot - w_cold],
        ];
        // The bulk column is taken by the scheme as the face mean ½(T_in + T_out); where the
        // bulk is T_out + β(T_in − T_out) instead, move the difference onto the face columns
        // (the derivative of β itself is left out: Newton stays convergent, the residual exact).
        for (s, base) in [(0, 0), (1, 3)] {
            let shift = d.bulk_weight[s] - 0.5;
            if shift != 0.0 {
                for row in jac.iter_mut() {
                    let g = row[base + 2];
                    row[base] += g * shift;
                    row[base + 1] -= g * shift;
                }
            }
        }
        (d, jac)
    }

    /// Bulk-to-bulk conductance per metre with both streams' properties taken at the given
    /// temperatures (the lumped hand method's U·a), W/(m·K).
    /// The wall temperature is placed by the resistance split (two passes, starting from
    /// the mean), which matters only for correlations with a wall-property correction.
    pub fn ua_per_length_at(&self, hot_c: f64, cold_c: f64) -> f64 {
        let mut wall = 0.5 * (hot_c + cold_c);
        let mut ua = 0.0;
        for _ in 0..2 {
            let (_, _, r_hot) = self.side_resistance(&self.hot, hot_c, wall);
            let (_, _, r_cold) = self.side_resistance(&self.cold, cold_c, wall);
            ua = 1.0 / (r_hot + r_cold);
            wall = hot_c - (hot_c - cold_c) * r_hot / (r_hot + r_cold);
        }
        ua
    }

    /// Largest duty thermodynamics allows, C_min (T_h,in − T_c,in), with each stream's
    /// capacity rate from its enthalpy change between the two inlet temperatures, W.
    pub fn max_duty_w(&self) -> f64 {
        let (th, tc) = (self.hot.inlet_c, self.cold.inlet_c);
        let dh_hot = self.hot.mass_flow_kg_s * (self.hot.fluid.enthalpy(th) - self.hot.fluid.enthalpy(tc));
        let dh_cold = self.cold.mass_flow_kg_s * (self.cold.fluid.enthalpy(th) - self.cold.fluid.enthalpy(tc));
        dh_hot.min(dh_cold)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fluid::{Water, WaterPhase};
    use crate::transfer::Gnielinski;

    /// The analytic-plus-side-difference Jacobian agrees with central differences of the
    /// full cell model (regression guard for sign or factor slips).
    #[test]
    fn jacobian_matches_central_differences() {
        jacobian_check(Arc::new(Gnielinski));
        // Wall-temperature-dependent films: the wall column picks up their dependence too.
        jacobian_check(Arc::new(crate::transfer::InternalFlow {
            laminar: crate::transfer::Laminar::SiederTate,
            turbulent: crate::transfer::Turbulent::SiederTate,
            wall_correction: crate::transfer::WallCorrection::Viscosity,
            transition: crate::transfer::Transition::Blend,
        }));
    }

    fn jacobian_check(film: Arc<dyn FilmCorrelation>) {
        let channel = |d: f64| Channel::duct(std::f64::consts::PI * d * d / 4.0, d, std::f64::consts::PI * d, crate::transfer::LaminarConstants::TUBE, 5.0);
        let stream = |m: f64, t: f64| Stream {
            fluid: Arc::new(Water::new(3e5, WaterPhase::Liquid).unwrap()),
            mass_flow_kg_s: m,
            inlet_c: t,
            inlet_pressure_pa: 3e5,
            fouling_m2k_w: 1e-4,
            film: Arc::new(Gnielinski),
            channel: channel(0.02),
        };
        let mut hot = stream(0.08, 90.0);
        hot.film = film;
        let ex = Exchanger {
            arrangement: Arrangement::Counterflow,
            length_m: 5.0,
            hot,
            cold: stream(0.3, 10.0),
            wall: Wall::Tube { inner_diameter_m: 0.02, outer_diameter_m: 0.024, conductivity_w_mk: 16.0, tube_length_per_length: 1.0 },
            reference_area_per_length_m: 0.024 * std::f64::consts::PI,
            scheme: Scheme::Trapezoidal,
        };
        let t = CellTemps { hot_in: 70.0, hot_out: 68.0, hot_bulk: 69.0, cold_in: 20.0, cold_out: 21.0, cold_bulk: 20.5, wall: 40.0 };
        let (_, jac) = ex.cell_with_jacobian(0.05, &t);
        let h = 1e-4;
        for k in 0..7 {
            let shift = |d: f64| {
                let mut p = t;
                match k {
                    0 => p.hot_in += d,
                    1 => p.hot_out += d,
                    2 => p.hot_bulk += d,
                    3 => p.cold_in += d,
                    4 => p.cold_out += d,
                    5 => p.cold_bulk += d,
                    _ => p.wall += d,
                }
                ex.cell(0.05, &p).balance.steady_residual()
            };
            let (up, down) = (shift(h), shift(-h));
            for row in 0..3 {
                let fd = (up[row] - down[row]) / (2.0 * h);
                let scale = jac[row].iter().map(|v| v.abs()).fold(0.0, f64::max);
                assert!((jac[row][k] - fd).abs() < 2e-3 * scale, "row {row} col {k}: {} vs {fd}", jac[row][k]);
            }
        }
    }
}
