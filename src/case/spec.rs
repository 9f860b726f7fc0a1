//! The validated case: typed values with defaults filled in, ready to build an exchanger.

use crate::fluid::library::FluidChoice;
use crate::model::Arrangement;
pub use crate::model::Side;
use crate::solve::transient::{Inputs, Signal, TransientSettings};
use crate::solve::SteadySettings;
use crate::transfer::{CompactSurface, Fin, InternalFlow, ShellBundle, TubeBank};
use std::f64::consts::PI;

/// Which stream flows in the tubes (of a double pipe or a tube bank).
pub type TubeSide = Side;

/// Validated geometry.
#[derive(Debug, Clone, PartialEq)]
pub enum Geometry {
    /// Inner tube inside an outer pipe; one stream in the tube, the other in the annulus.
    DoublePipe {
        /// Tube inner diameter, m.
        di: f64,
        /// Tube outer diameter, m.
        d_o: f64,
        /// Outer pipe inner diameter, m.
        ds: f64,
        /// Wall conductivity, W/(m·K).
        k: f64,
        /// Stream in the tube.
        tube_side: TubeSide,
        /// Use the equivalent diameter (D₂² − D₁²)/D₁ for the annulus film coefficient.
        annulus_equivalent_diameter: bool,
    },
    /// Generic plane wall with given area per length and per-stream channels.
    PlaneWall {
        /// Area per metre, m²/m.
        area_per_length: f64,
        /// Thickness, m.
        thickness: f64,
        /// Conductivity, W/(m·K).
        k: f64,
        /// Hot (flow area, hydraulic diameter).
        hot: (Option<f64>, Option<f64>),
        /// Cold (flow area, hydraulic diameter).
        cold: (Option<f64>, Option<f64>),
    },
    /// A bank of tubes crossed by the outside stream row after row, the tube-side stream
    /// in serpentine circuits against it: many-pass cross-counterflow, modelled as
    /// counterflow along the bank depth (x = row direction, length = rows × S_L).
    TubeBank {
        /// Tube inner diameter, m.
        di: f64,
        /// Wall conductivity, W/(m·K).
        k: f64,
        /// Stream in the tubes.
        tube_side: TubeSide,
        /// Bank geometry (outer diameter, pitches, layout, rows, frontal area).
        bank: TubeBank,
        /// Tubes in each row.
        tubes_per_row: usize,
        /// Length of each tube (face width), m.
        tube_length: f64,
        /// Parallel tube-side circuits.
        circuits: usize,
    },
    /// A baffled shell-and-tube bundle rated from its geometry.
    ShellAndTube {
        /// Tube inner diameter, m.
        di: f64,
        /// Wall conductivity, W/(m·K).
        k: f64,
        /// Stream in the tubes.
        tube_side: TubeSide,
        /// Shell, bundle and baffles (shells in series included).
        bundle: ShellBundle,
        /// Tube passes per shell.
        passes: usize,
        /// Tube-side and shell-side nozzle bores, m.
        nozzles: [Option<f64>; 2],
    },
}

impl Geometry {
    /// Which stream the tubes carry, for geometries with tubes.
    pub fn tube_side(&self) -> Option<TubeSide> {
        match self {
            Geometry::DoublePipe { tube_side, .. } | Geometry::TubeBank { tube_side, .. } | Geometry::ShellAndTube { tube_side, .. } => Some(*tube_side),
            Geometry::PlaneWall { .. } => None,
        }
    }
}

/// Validated film model.
#[derive(Debug, Clone)]
pub enum FilmSpec {
    /// Internal flow (tube, annulus, plate channel).
    Internal(InternalFlow),
    /// Zukauskas, outside of a tube bank.
    Zukauskas,
    /// Shell side of a shell-and-tube geometry: Bell–Delaware (true) or Kern (false).
    Shell {
        /// Bell–Delaware rather than Kern.
        bell_delaware: bool,
    },
    /// Compact surface from j/f data, with its own passage geometry.
    Compact {
        /// The surface data and fins.
        surface: CompactSurface,
        /// Hydraulic diameter, m.
        hydraulic_diameter_m: f64,
        /// Free-flow area, m².
        free_flow_area_m2: f64,
        /// Total surface per metre of length, m²/m.
        area_per_length_m: f64,
        /// σ = A_ff/A_fr, if the frontal area was given (entrance and exit losses).
        sigma: Option<f64>,
    },
    /// Fixed value, W/(m²·K).
    Fixed(f64),
}

/// Validated stream.
#[derive(Debug, Clone)]
pub struct StreamSpec {
    /// Fluid.
    pub fluid: FluidChoice,
    /// Inlet, °C.
    pub inlet_c: f64,
    /// Mass flow, kg/s.
    pub mass_flow_kg_s: f64,
    /// Pressure, Pa (absolute).
    pub pressure_pa: f64,
    /// Fouling, m²·K/W.
    pub fouling_m2k_w: f64,
    /// Film model.
    pub film: FilmSpec,
    /// Absolute roughness, m.
    pub roughness_m: f64,
}

impl Case {
    /// The validated stream on `side`.
    pub fn stream(&self, side: Side) -> &StreamSpec {
        match side {
            Side::Hot => &self.hot,
            Side::Cold => &self.cold,
        }
    }
}

/// A valid case: everything needed to build and solve an exchanger.
#[derive(Debug, Clone)]
pub struct Case {
    /// Name (output folder).
    pub name: String,
    /// Arrangement.
    pub arrangement: Arrangement,
    /// Length, m.
    pub length_m: f64,
    /// Geometry.
    pub geometry: Geometry,
    /// Hot stream.
    pub hot: StreamSpec,
    /// Cold stream.
    pub cold: StreamSpec,
    /// Steady solver settings.
    pub solver: SteadySettings,
    /// Spatial scheme.
    pub scheme: crate::model::Scheme,
    /// Transient scenario, if the case has one.
    pub transient: Option<TransientSpec>,
    /// Legal but suspicious inputs.
    pub warnings: Vec<String>,
    /// The study tables (`[size]`, `[sweep]`, `[uncertainty]`).
    pub design: crate::design::DesignSpec,
    /// The text the case was read from, for studies that vary it.
    pub source: std::sync::Arc<crate::design::Source>,
}

/// Metal heat capacities of a transient, per metre of exchanger length (reported in
/// transient.json).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
#[allow(non_snake_case)]
pub struct Storage {
    /// Separating wall, J/(m·K).
    pub wall_J_mK: f64,
    /// Fin metal of finned surfaces, at the wall's temperature, J/(m·K).
    pub fins_J_mK: f64,
    /// Outer pipe (shell) of a double pipe, J/(m·K).
    pub shell_J_mK: f64,
    /// The stream whose temperature the shell follows ("hot"/"cold"), if there is a shell.
    pub shell_with: Option<Side>,
    /// The shell's outer face: adiabatic (no heat loss to ambient is modelled).
    pub shell_outer_face: Option<&'static str>,
}

impl Storage {
    fn shell(&self) -> Option<(Side, f64)> {
        self.shell_with.map(|s| (s, self.shell_J_mK))
    }
}

/// A validated transient scenario.
#[derive(Debug, Clone)]
pub struct TransientSpec {
    /// Settings (cells from `[solver]`); the wall heat capacity is filled in by
    /// [`TransientSpec::settings_for`].
    pub settings: TransientSettings,
    /// Wall density × specific heat, J/(m³·K).
    pub wall_volumetric_heat_capacity: f64,
    /// Fin metal density × specific heat, J/(m³·K) (used where a surface has fins).
    pub fin_volumetric_heat_capacity: f64,
    /// Shell (outer pipe) wall thickness, m, and density × specific heat, J/(m³·K).
    pub shell: Option<(f64, f64)>,
    /// Response metrics start here, s (None: automatic).
    pub response_from_s: Option<f64>,
    /// Schedules; None = the stream's constant case value.
    pub hot_inlet_c: Option<Signal>,
    /// Hot flow schedule.
    pub hot_flow_kg_s: Option<Signal>,
    /// Cold inlet schedule.
    pub cold_inlet_c: Option<Signal>,
    /// Cold flow schedule.
    pub cold_flow_kg_s: Option<Signal>,
}

impl TransientSpec {
    /// Settings with the heat capacities per metre of this exchanger: its wall, the fins of
    /// either surface (each fin's volume is half its area × thickness), and the shell.
    pub fn settings_for(&self, ex: &crate::model::Exchanger, case: &Case) -> TransientSettings {
        let storage = self.storage(ex, case);
        TransientSettings { wall_heat_capacity_j_mk: storage.wall_J_mK + storage.fins_J_mK, shell: storage.shell(), ..self.settings.clone() }
    }

    /// The metal heat capacities per metre of exchanger length.
    pub fn storage(&self, ex: &crate::model::Exchanger, case: &Case) -> Storage {
        let fins: f64 = [&case.hot, &case.cold]
            .iter()
            .filter_map(|s| match &s.film {
                FilmSpec::Compact { surface, area_per_length_m, .. } => surface.fin.map(|fin| {
                    let t = match fin {
                        Fin::Straight { thickness_m, .. } | Fin::Annular { thickness_m, .. } => thickness_m,
                    };
                    area_per_length_m * surface.fin_area_fraction * t / 2.0
                }),
                _ => None,
            })
            .sum::<f64>()
            * self.fin_volumetric_heat_capacity
            + 0.0; // an empty sum is −0.0; reports should read 0
        let shell = match (&case.geometry, self.shell) {
            (Geometry::DoublePipe { ds, tube_side, .. }, Some((t, rho_c))) => {
                let area = PI / 4.0 * ((ds + 2.0 * t).powi(2) - ds * ds);
                Some((tube_side.other(), area * rho_c))
            }
            _ => None,
        };
        Storage {
            wall_J_mK: self.wall_volumetric_heat_capacity * ex.wall.cross_section_m2(),
            fins_J_mK: fins,
            shell_J_mK: shell.map(|s| s.1).unwrap_or(0.0),
            shell_with: shell.map(|s| s.0),
            shell_outer_face: shell.map(|_| "adiabatic"),
        }
    }

    /// The inputs for an exchanger built from this case.
    pub fn inputs(&self, ex: &crate::model::Exchanger) -> Inputs {
        let base = Inputs::constant(ex);
        Inputs {
            hot_inlet_c: self.hot_inlet_c.clone().unwrap_or(base.hot_inlet_c),
            hot_flow_kg_s: self.hot_flow_kg_s.clone().unwrap_or(base.hot_flow_kg_s),
            cold_inlet_c: self.cold_inlet_c.clone().unwrap_or(base.cold_inlet_c),
            cold_flow_kg_s: self.cold_flow_kg_s.clone().unwrap_or(base.cold_flow_kg_s),
        }
    }
}
