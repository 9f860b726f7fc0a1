//! Heat-transfer pieces between a stream and the wall: flow channels, film-coefficient
//! correlations behind one small trait, and the wall's conduction resistance.
//!
//! Owns: the local film coefficient from local properties and flow, and the series
//! resistances per unit length. Must not: know about cells, solvers or files.

pub mod film;
pub mod fin;
pub mod friction;
mod wall;

pub use film::{
    darcy_petukhov, gnielinski_nusselt, CompactSurface, FilmCorrelation, FilmInput, FilmResult, FixedFilm, Gnielinski, InternalFlow, Laminar, Layout, TubeBank,
    Turbulent, WallCorrection, Zukauskas,
};
pub use fin::Fin;
pub use wall::Wall;

/// The passage one stream flows through, as the correlations need it.
#[derive(Debug, Clone, PartialEq)]
pub struct Channel {
    /// Free-flow cross-section, m² (None when a fixed film coefficient makes it unnecessary).
    pub flow_area_m2: Option<f64>,
    /// Hydraulic diameter 4A/P_wetted, m (Reynolds number and friction).
    pub hydraulic_diameter_m: Option<f64>,
    /// Diameter in Nu = hD/k if it differs from the hydraulic one (the equivalent diameter
    /// (D₂² − D₁²)/D₁ of an annulus heated on its inner wall, in Kern's practice), m.
    pub heat_diameter_m: Option<f64>,
    /// Length of the stream's flow path (entry-length correlations, L/D checks), m.
    pub flow_length_m: f64,
    /// Absolute wall roughness, m.
    pub roughness_m: f64,
    /// Fluid volume per metre of exchanger length, m³/m (the storage of the transient);
    /// None when unknown (a fixed-film plane wall without flow geometry).
    pub volume_per_length_m2: Option<f64>,
    /// Heat-transfer area per metre of exchanger length on this stream's face of the wall, m²/m.
    pub area_per_length_m: f64,
    /// Fully developed laminar Nusselt number for this channel shape, heated on the wall
    /// side (see [`Channel::annulus_laminar_nusselt`]).
    pub laminar_nusselt: f64,
}

impl Channel {
    /// A channel known only by its heat-transfer area per metre (fixed film coefficients).
    pub fn bare(area_per_length_m: f64) -> Self {
        Self {
            flow_area_m2: None,
            hydraulic_diameter_m: None,
            heat_diameter_m: None,
            flow_length_m: 1.0,
            roughness_m: 0.0,
            volume_per_length_m2: None,
            area_per_length_m,
            laminar_nusselt: NU_TUBE_LAMINAR_T,
        }
    }

    /// A duct with flow area, hydraulic diameter, heated area per metre, laminar Nusselt
    /// number and flow-path length; smooth, heat diameter = hydraulic diameter.
    pub fn duct(flow_area_m2: f64, hydraulic_diameter_m: f64, area_per_length_m: f64, laminar_nusselt: f64, flow_length_m: f64) -> Self {
        Self {
            flow_area_m2: Some(flow_area_m2),
            hydraulic_diameter_m: Some(hydraulic_diameter_m),
            heat_diameter_m: None,
            flow_length_m,
            roughness_m: 0.0,
            volume_per_length_m2: Some(flow_area_m2),
            area_per_length_m,
            laminar_nusselt,
        }
    }

    /// Reynolds number ṁ·D_h/(A·μ); None when the channel has no flow geometry.
    pub fn reynolds(&self, mass_flow_kg_s: f64, viscosity: f64) -> Option<f64> {
        match (self.flow_area_m2, self.hydraulic_diameter_m) {
            (Some(a), Some(d)) => Some(mass_flow_kg_s.abs() * d / (a * viscosity)),
            _ => None,
        }
    }

    /// Fully developed laminar Nusselt number on the inner wall of an annulus, inner wall
    /// at uniform temperature and outer wall insulated, interpolated linearly in Di/Do.
    /// Source: Incropera et al., *Fundamentals of Heat and Mass Transfer*, Table 8.2
    /// (after Kays & Perkins). Di/Do → 1 is the parallel-plate value 4.86 (one side
    /// heated, the other insulated).
    pub fn annulus_laminar_nusselt(di_over_do: f64) -> f64 {
        const TABLE: [(f64, f64); 5] = [(0.05, 17.46), (0.10, 11.56), (0.25, 7.37), (0.50, 5.74), (1.00, 4.86)];
        let r = di_over_do.clamp(TABLE[0].0, 1.0);
        for w in TABLE.windows(2) {
            let ((x0, y0), (x1, y1)) = (w[0], w[1]);
            if r <= x1 {
                return y0 + (y1 - y0) * (r - x0) / (x1 - x0);
            }
        }
        TABLE[4].1
    }
}

/// Fully developed laminar Nusselt number in a circular tube at uniform wall temperature,
/// 3.66 (Incropera et al., Table 8.1 / Eq. 8.55).
pub const NU_TUBE_LAMINAR_T: f64 = 3.66;
