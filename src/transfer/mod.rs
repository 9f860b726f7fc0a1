//! Heat-transfer pieces between a stream and the wall: flow channels, film-coefficient
//! correlations behind one small trait, and the wall's conduction resistance.
//!
//! Owns: the local film coefficient from local properties and flow, and the series
//! resistances per unit length. Must not: know about cells, solvers or files.

mod bank;
mod compact;
pub mod film;
pub mod fin;
pub mod friction;
mod internal;
pub mod losses;
pub mod shell;
mod wall;

pub use film::{
    darcy_petukhov, gnielinski_nusselt, CompactSurface, FilmCorrelation, FilmInput, FilmResult, FixedFilm, Gnielinski, InternalFlow, Laminar, Layout,
    ScaledFilm, StatedAccuracy, Transition, TubeBank, Turbulent, WallCorrection, Zukauskas,
};
pub use fin::Fin;
pub use internal::{RE_LAMINAR, RE_TURBULENT};
pub use shell::{BellDelaware, Kern, PitchLayout, ShellBundle};
pub use wall::Wall;

/// The passage one stream flows through, as the correlations need it.
#[derive(Debug, Clone, PartialEq)]
pub struct Channel {
    /// Free-flow cross-section, m² (None when a fixed film coefficient makes it unnecessary).
    pub flow_area_m2: Option<f64>,
    /// Hydraulic diameter 4A/P_wetted, m (Reynolds number and friction).
    pub hydraulic_diameter_m: Option<f64>,
    /// Diameter of the turbulent correlations' Re and Nu if it differs from the hydraulic one:
    /// Kern's equivalent diameter (D₂² − D₁²)/D₁ of an annulus heated on its inner wall, used
    /// in both Re and Nu (Kern, *Process Heat Transfer*, 1950, ch. 6), m. Friction, the flow
    /// regime and the laminar table values stay on the hydraulic diameter.
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
    /// Fully developed laminar constants of this channel's shape (Nu at uniform wall
    /// temperature and at uniform flux, f·Re), all on the hydraulic diameter.
    pub laminar: LaminarConstants,
    /// Losses besides core friction (entrance/exit, returns, nozzles), reported separately.
    pub fittings: losses::Fittings,
}

/// Fully developed laminar flow in one channel shape, heated on the wall side: Nusselt
/// numbers at uniform wall temperature (T) and uniform heat flux (H), and the Darcy
/// friction constant f·Re, all on the hydraulic diameter.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LaminarConstants {
    /// Nu at uniform wall temperature.
    pub nu_t: f64,
    /// Nu at uniform heat flux.
    pub nu_h: f64,
    /// Darcy f·Re.
    pub f_re: f64,
}

impl LaminarConstants {
    /// Circular tube: Nu_T = 3.66, Nu_H = 48/11 = 4.364, f·Re = 64 (Incropera et al., Table 8.1;
    /// Hagen–Poiseuille).
    pub const TUBE: Self = Self { nu_t: NU_TUBE_LAMINAR_T, nu_h: 48.0 / 11.0, f_re: 64.0 };

    /// Parallel plates, one plate heated and the other insulated: Nu_T = 4.86, Nu_H = 5.385,
    /// f·Re = 96 (Incropera et al., Tables 8.1–8.2; Shah & London 1978 \[M\]).
    pub const PLATES_ONE_SIDE: Self = Self { nu_t: 4.86, nu_h: 5.385, f_re: 96.0 };

    /// Concentric annulus heated on its inner wall, outer wall insulated, Di/Do = `ratio`:
    /// Nu_T from [`Channel::annulus_laminar_nusselt`] (Incropera Table 8.2); Nu_H from Kays &
    /// Crawford, *Convective Heat and Mass Transfer*, Table 8-2 (after Lundberg, Reynolds &
    /// Kays; also Shah & London) \[M\], interpolated linearly in Di/Do; f·Re from the exact
    /// laminar annulus profile, 64(1 − κ)² / (1 + κ² − (1 − κ²)/ln(1/κ)) (White, *Viscous
    /// Fluid Flow*, §3-3; Shah & London), 64 at κ → 0 and 96 at κ → 1.
    pub fn annulus(ratio: f64) -> Self {
        const NU_H: [(f64, f64); 7] = [(0.05, 17.81), (0.10, 11.91), (0.20, 8.499), (0.40, 6.583), (0.60, 5.912), (0.80, 5.58), (1.00, 5.385)];
        let k = ratio.clamp(NU_H[0].0, 1.0);
        let mut nu_h = NU_H[6].1;
        for w in NU_H.windows(2) {
            let ((x0, y0), (x1, y1)) = (w[0], w[1]);
            if k <= x1 {
                nu_h = y0 + (y1 - y0) * (k - x0) / (x1 - x0);
                break;
            }
        }
        // The closed form cancels badly as κ → 1: blend to the plate value 96 over the last 1 %.
        let exact = |k: f64| 64.0 * (1.0 - k).powi(2) / (1.0 + k * k - (1.0 - k * k) / (1.0 / k).ln());
        let f_re = if k <= 0.99 { exact(k) } else { exact(0.99) + (96.0 - exact(0.99)) * (k - 0.99) / 0.01 };
        Self { nu_t: Channel::annulus_laminar_nusselt(k), nu_h, f_re }
    }
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
            laminar: LaminarConstants::TUBE,
            fittings: losses::Fittings::default(),
        }
    }

    /// A duct with flow area, hydraulic diameter, heated area per metre, laminar constants of
    /// its shape and flow-path length; smooth, heat diameter = hydraulic diameter.
    pub fn duct(flow_area_m2: f64, hydraulic_diameter_m: f64, area_per_length_m: f64, laminar: LaminarConstants, flow_length_m: f64) -> Self {
        Self {
            flow_area_m2: Some(flow_area_m2),
            hydraulic_diameter_m: Some(hydraulic_diameter_m),
            heat_diameter_m: None,
            flow_length_m,
            roughness_m: 0.0,
            volume_per_length_m2: Some(flow_area_m2),
            area_per_length_m,
            laminar,
            fittings: losses::Fittings::default(),
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
