//! Film-coefficient correlations behind one trait.

use super::Channel;
use crate::fluid::Props;
use std::fmt::Debug;

/// Film coefficient and the dimensionless groups behind it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FilmResult {
    /// Film coefficient, W/(m²·K).
    pub h: f64,
    /// Reynolds number, if the channel geometry is known.
    pub reynolds: Option<f64>,
    /// Nusselt number, if computed from a correlation.
    pub nusselt: Option<f64>,
}

/// A way to get a local film coefficient from the local bulk state.
pub trait FilmCorrelation: Send + Sync + Debug {
    /// Short name for reports.
    fn name(&self) -> &'static str;
    /// Film coefficient for `mass_flow_kg_s` through `channel` with bulk properties `props`.
    fn film(&self, channel: &Channel, mass_flow_kg_s: f64, props: &Props) -> FilmResult;
}

/// A film coefficient the user measured or chose, used as given everywhere.
#[derive(Debug, Clone)]
pub struct FixedFilm {
    /// W/(m²·K).
    pub h: f64,
}

impl FilmCorrelation for FixedFilm {
    fn name(&self) -> &'static str {
        "fixed"
    }
    fn film(&self, channel: &Channel, mass_flow_kg_s: f64, props: &Props) -> FilmResult {
        FilmResult { h: self.h, reynolds: channel.reynolds(mass_flow_kg_s, props.viscosity), nusselt: None }
    }
}

/// Gnielinski (1976) for turbulent flow with the Petukhov friction factor, the channel's
/// fully developed laminar Nusselt number below Re = 2300, and between 2300 and 10⁴ the
/// linear blend in Re that Gnielinski (VDI Heat Atlas, 2nd ed. 2010, section G1 [from
/// memory]) recommends, which is continuous at both ends so Newton never meets a jump.
#[derive(Debug, Clone, Default)]
pub struct Gnielinski;

/// Laminar limit of the blend.
const RE_LAMINAR: f64 = 2300.0;
/// Fully turbulent start of the blend.
const RE_TURBULENT: f64 = 1.0e4;

/// Petukhov smooth-tube Darcy friction factor (0.790 ln Re − 1.64)⁻², 3000 ≤ Re ≤ 5·10⁶
/// (Petukhov 1970; Incropera et al. Eq. 8.21).
pub fn darcy_petukhov(re: f64) -> f64 {
    (0.790 * re.ln() - 1.64).powi(-2)
}

/// Gnielinski's turbulent Nusselt number
/// Nu = (f/8)(Re − 1000)Pr / [1 + 12.7 (f/8)^½ (Pr^⅔ − 1)], f from Petukhov.
/// Valid 3000 ≤ Re ≤ 5·10⁶, 0.5 ≤ Pr ≤ 2000 (Gnielinski 1976; Incropera Eq. 8.62).
pub fn gnielinski_nusselt(re: f64, pr: f64) -> f64 {
    let f8 = darcy_petukhov(re) / 8.0;
    f8 * (re - 1000.0) * pr / (1.0 + 12.7 * f8.sqrt() * (pr.powf(2.0 / 3.0) - 1.0))
}

impl Gnielinski {
    /// Nusselt number over all regimes for a channel whose laminar value is `nu_laminar`.
    pub fn nusselt(re: f64, pr: f64, nu_laminar: f64) -> f64 {
        if re <= RE_LAMINAR {
            nu_laminar
        } else if re >= RE_TURBULENT {
            gnielinski_nusselt(re, pr)
        } else {
            let gamma = (re - RE_LAMINAR) / (RE_TURBULENT - RE_LAMINAR);
            (1.0 - gamma) * nu_laminar + gamma * gnielinski_nusselt(RE_TURBULENT, pr)
        }
    }
}

impl FilmCorrelation for Gnielinski {
    fn name(&self) -> &'static str {
        "gnielinski"
    }
    fn film(&self, channel: &Channel, mass_flow_kg_s: f64, props: &Props) -> FilmResult {
        // Validation guarantees the geometry exists for this correlation.
        let d = channel.hydraulic_diameter_m.unwrap_or(1.0);
        let re = channel.reynolds(mass_flow_kg_s, props.viscosity).unwrap_or(0.0);
        let nu = Self::nusselt(re, props.prandtl(), channel.laminar_nusselt);
        FilmResult { h: nu * props.conductivity / d, reynolds: Some(re), nusselt: Some(nu) }
    }
}
