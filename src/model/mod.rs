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

use crate::fluid::{Fluid, Props};
use crate::transfer::{Channel, FilmCorrelation, FilmResult, Wall};

/// Flow arrangement of the two streams.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Arrangement {
    /// Streams flow in opposite directions.
    Counterflow,
    /// Streams flow in the same direction.
    Parallel,
}

impl Arrangement {
    /// Name used in case files and reports.
    pub fn as_str(self) -> &'static str {
        match self {
            Arrangement::Counterflow => "counterflow",
            Arrangement::Parallel => "parallel",
        }
    }
}

/// One stream: its fluid, flow, inlet state and the channel it flows through.
#[derive(Debug)]
pub struct Stream {
    /// Fluid at the stream's pressure.
    pub fluid: Box<dyn Fluid>,
    /// Mass flow, kg/s (positive).
    pub mass_flow_kg_s: f64,
    /// Inlet temperature, °C.
    pub inlet_c: f64,
    /// Fouling resistance on this stream's face of the wall, m²·K/W.
    pub fouling_m2k_w: f64,
    /// Film-coefficient correlation.
    pub film: Box<dyn FilmCorrelation>,
    /// Flow passage.
    pub channel: Channel,
}

impl Stream {
    /// Film coefficient and properties at bulk temperature `t_c`.
    pub fn film_at(&self, t_c: f64) -> (Props, FilmResult) {
        let props = self.fluid.props(t_c);
        let film = self.film.film(&self.channel, self.mass_flow_kg_s, &props);
        (props, film)
    }

    /// Resistance per metre between this stream's bulk and the wall's conducting metal
    /// surface, K·m/W: convection plus fouling, both on this side's area.
    pub fn surface_resistance_per_length(&self, h: f64) -> f64 {
        let a = self.channel.area_per_length_m;
        1.0 / (h * a) + self.fouling_m2k_w / a
    }
}

/// A two-stream exchanger, ready to be solved. A constructed value is consistent.
#[derive(Debug)]
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
}

/// Temperatures a cell sees, each stream's "in" being its upstream face (°C).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CellTemps {
    /// Hot stream at its upstream face.
    pub hot_in: f64,
    /// Hot stream at its downstream face.
    pub hot_out: f64,
    /// Cold stream at its upstream face.
    pub cold_in: f64,
    /// Cold stream at its downstream face.
    pub cold_out: f64,
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
        [
            self.hot_release_w - self.hot_to_wall_w,
            self.cold_gain_w - self.wall_to_cold_w,
            self.hot_to_wall_w - self.wall_to_cold_w,
        ]
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
}

impl Exchanger {
    /// The cell model: heat rates of a cell of length `dx_m` at temperatures `t`.
    pub fn cell(&self, dx_m: f64, t: &CellTemps) -> CellDetail {
        let hot_bulk_c = 0.5 * (t.hot_in + t.hot_out);
        let cold_bulk_c = 0.5 * (t.cold_in + t.cold_out);
        let (hot_props, hot_film) = self.hot.film_at(hot_bulk_c);
        let (cold_props, cold_film) = self.cold.film_at(cold_bulk_c);
        let half_wall = 0.5 * self.wall.resistance_per_length();
        let r_hot = self.hot.surface_resistance_per_length(hot_film.h) + half_wall;
        let r_cold = self.cold.surface_resistance_per_length(cold_film.h) + half_wall;
        let (hf, cf) = (&*self.hot.fluid, &*self.cold.fluid);
        let balance = CellBalance {
            hot_release_w: self.hot.mass_flow_kg_s * (hf.enthalpy(t.hot_in) - hf.enthalpy(t.hot_out)),
            cold_gain_w: self.cold.mass_flow_kg_s * (cf.enthalpy(t.cold_out) - cf.enthalpy(t.cold_in)),
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
        }
    }

    /// Bulk-to-bulk conductance per metre with both streams' properties taken at the given
    /// temperatures (the lumped hand method's U·a), W/(m·K).
    pub fn ua_per_length_at(&self, hot_c: f64, cold_c: f64) -> f64 {
        let (_, hf) = self.hot.film_at(hot_c);
        let (_, cf) = self.cold.film_at(cold_c);
        1.0 / (self.hot.surface_resistance_per_length(hf.h)
            + self.wall.resistance_per_length()
            + self.cold.surface_resistance_per_length(cf.h))
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
