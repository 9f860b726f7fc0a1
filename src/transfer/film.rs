//! Film-coefficient correlations behind one trait, each with its published validity range.

pub use super::bank::*;
pub use super::compact::*;
pub use super::internal::*;
use super::{Channel, NU_TUBE_LAMINAR_T};
use crate::fluid::{Fluid, Props};
use std::fmt::Debug;

/// What a correlation may use: the channel, the flow, the bulk state and the wall.
#[derive(Debug, Clone, Copy)]
pub struct FilmInput<'a> {
    /// Flow passage.
    pub channel: &'a Channel,
    /// Mass flow, kg/s.
    pub mass_flow_kg_s: f64,
    /// Bulk properties.
    pub props: &'a Props,
    /// Bulk temperature, °C.
    pub bulk_c: f64,
    /// Wall temperature seen by this film (the wall node), °C.
    pub wall_c: f64,
    /// The fluid, for properties at the wall temperature.
    pub fluid: &'a dyn Fluid,
    /// True for the stream being heated (the cold stream).
    pub heated: bool,
}

/// Film coefficient and the dimensionless groups behind it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FilmResult {
    /// Film coefficient, W/(m²·K).
    pub h: f64,
    /// Reynolds number, if the channel geometry is known.
    pub reynolds: Option<f64>,
    /// Nusselt number, if computed from a correlation.
    pub nusselt: Option<f64>,
    /// Overall surface efficiency η_o of a finned surface (1 for a bare one).
    pub surface_efficiency: f64,
    /// Fin efficiency η_f of a finned surface (None for a bare one).
    pub fin_efficiency: Option<f64>,
    /// False when the local state is outside the correlation's published validity range.
    pub in_range: bool,
}

impl FilmResult {
    pub(crate) fn bare(h: f64, reynolds: Option<f64>, nusselt: Option<f64>, in_range: bool) -> Self {
        Self { h, reynolds, nusselt, surface_efficiency: 1.0, fin_efficiency: None, in_range }
    }
}

/// A way to get a local film coefficient from the local state.
pub trait FilmCorrelation: Send + Sync + Debug {
    /// Short name for reports.
    fn name(&self) -> &'static str;
    /// Film coefficient for the local state.
    fn film(&self, input: &FilmInput) -> FilmResult;
    /// True if the result depends on the wall temperature (Newton then differentiates it).
    fn uses_wall_temperature(&self) -> bool {
        false
    }
    /// The published validity range, in words (for reports).
    fn validity(&self) -> String;
    /// The Reynolds-number bands in which the correlation is used within its published
    /// range (for plots; empty where the range is not one of Re alone, e.g. a fixed value).
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        Vec::new()
    }
    /// For a correlation written with bulk properties, the range of c̄p/cp_b and ρ_w/ρ_b
    /// (wall over bulk) within which that is valid at Reynolds number `reynolds`; None where
    /// no such limit applies. Checked when results are reported, not in the solver's loop
    /// (see [`property_ratios_within`]).
    fn bulk_property_range(&self, _reynolds: f64) -> Option<(f64, f64)> {
        None
    }
    /// Darcy friction factor for the pressure drop, or None where no friction model is
    /// available for this surface. Default: Churchill (1977) with the channel's roughness.
    fn darcy_friction(&self, channel: &Channel, reynolds: f64) -> Option<f64> {
        let d = channel.hydraulic_diameter_m?;
        Some(super::friction::darcy_churchill_shaped(reynolds.max(1e-9), channel.roughness_m / d, channel.laminar.f_re))
    }
    /// The Darcy factor with the bulk-to-wall viscosity ratio `mu_ratio` = μ_b/μ_w, for
    /// correlations whose published friction carries a wall correction (shell side, tube
    /// banks). Default: [`FilmCorrelation::darcy_friction`], no correction.
    fn darcy_friction_at(&self, channel: &Channel, reynolds: f64, _mu_ratio: f64) -> Option<f64> {
        self.darcy_friction(channel, reynolds)
    }
    /// Whether the friction correlation is inside its published range at Re (counted per
    /// cell like the film's range). Default: always (Churchill covers all Re).
    fn friction_in_range(&self, _reynolds: f64) -> bool {
        true
    }
    /// The friction correlation's name and range, where it is not the film's own.
    fn friction_validity(&self) -> Option<String> {
        None
    }
    /// A shell-side method's breakdown (factors, zones) at one operating point; None for
    /// every other surface.
    fn shell_rating(&self, _input: &FilmInput) -> Option<super::shell::ShellRating> {
        None
    }
    /// The correlation's published accuracy on h (the default uncertainty of a Monte Carlo
    /// study); None where none is stated (a user's fixed value).
    fn stated_accuracy(&self) -> Option<StatedAccuracy> {
        None
    }
}

/// A correlation's stated accuracy: ± per cent on the film coefficient, and where that is
/// stated.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StatedAccuracy {
    /// ± %, taken as the half-width of a rectangular distribution.
    pub percent: f64,
    /// Where it is stated.
    pub source: &'static str,
}

/// Another correlation with its film coefficient multiplied by `factor` (an uncertainty
/// sample). Friction, ranges and names are the inner correlation's. For a finned surface the
/// factor scales the effective coefficient (fin efficiency as at the unscaled h).
#[derive(Debug, Clone)]
pub struct ScaledFilm {
    /// The correlation.
    pub inner: std::sync::Arc<dyn FilmCorrelation>,
    /// Multiplier on h.
    pub factor: f64,
}

impl FilmCorrelation for ScaledFilm {
    fn name(&self) -> &'static str {
        self.inner.name()
    }
    fn film(&self, input: &FilmInput) -> FilmResult {
        let mut r = self.inner.film(input);
        r.h *= self.factor;
        r
    }
    fn uses_wall_temperature(&self) -> bool {
        self.inner.uses_wall_temperature()
    }
    fn validity(&self) -> String {
        self.inner.validity()
    }
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        self.inner.reynolds_bands()
    }
    fn bulk_property_range(&self, reynolds: f64) -> Option<(f64, f64)> {
        self.inner.bulk_property_range(reynolds)
    }
    fn darcy_friction(&self, channel: &Channel, reynolds: f64) -> Option<f64> {
        self.inner.darcy_friction(channel, reynolds)
    }
    fn darcy_friction_at(&self, channel: &Channel, reynolds: f64, mu_ratio: f64) -> Option<f64> {
        self.inner.darcy_friction_at(channel, reynolds, mu_ratio)
    }
    fn friction_in_range(&self, reynolds: f64) -> bool {
        self.inner.friction_in_range(reynolds)
    }
    fn friction_validity(&self) -> Option<String> {
        self.inner.friction_validity()
    }
    fn shell_rating(&self, input: &FilmInput) -> Option<super::shell::ShellRating> {
        self.inner.shell_rating(input)
    }
    fn stated_accuracy(&self) -> Option<StatedAccuracy> {
        self.inner.stated_accuracy()
    }
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
    fn film(&self, i: &FilmInput) -> FilmResult {
        FilmResult::bare(self.h, i.channel.reynolds(i.mass_flow_kg_s, i.props.viscosity), None, true)
    }
    fn validity(&self) -> String {
        "as given by the user".into()
    }
}

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

/// Dittus–Boelter: Nu = 0.023 Re^0.8 Pr^n, n = 0.4 heated, 0.3 cooled; Re ≥ 10⁴,
/// 0.6 ≤ Pr ≤ 160, L/D ≥ 10 (Dittus & Boelter 1930; Incropera Eq. 8.60).
pub fn dittus_boelter_nusselt(re: f64, pr: f64, heated: bool) -> f64 {
    0.023 * re.powf(0.8) * pr.powf(if heated { 0.4 } else { 0.3 })
}

/// Sieder–Tate turbulent: Nu = 0.027 Re^0.8 Pr^⅓ (μ/μ_s)^0.14; Re ≥ 10⁴, 0.7 ≤ Pr ≤ 16 700
/// (Sieder & Tate 1936; Incropera Eq. 8.61 \[M\]).
pub fn sieder_tate_turbulent_nusselt(re: f64, pr: f64, mu_ratio: f64) -> f64 {
    0.027 * re.powf(0.8) * pr.powf(1.0 / 3.0) * mu_ratio.powf(0.14)
}

/// Hausen, thermal entry length (fully developed velocity, uniform wall temperature), mean
/// over length L: Nu = 3.66 + 0.0668 Gz/(1 + 0.04 Gz^⅔), Gz = Re Pr D/L
/// (Hausen 1943; Incropera Eq. 8.57). Laminar.
pub fn hausen_nusselt(gz: f64) -> f64 {
    3.66 + 0.0668 * gz / (1.0 + 0.04 * gz.powf(2.0 / 3.0))
}

/// Sieder–Tate combined entry, laminar, mean over L: Nu = 1.86 (Gz)^⅓ (μ/μ_s)^0.14, valid for
/// 0.48 < Pr < 16 700, 0.0044 < μ/μ_s < 9.75 and Gz^⅓ (μ/μ_s)^0.14 ≥ 2 (Incropera Eq. 8.58 \[M\]);
/// below that limit the fully developed tube value 3.66 governs, so the larger of the two is used.
pub fn sieder_tate_laminar_nusselt(gz: f64, mu_ratio: f64) -> f64 {
    sieder_tate_laminar_nusselt_floor(gz, mu_ratio, NU_TUBE_LAMINAR_T)
}

/// The same with the fully developed floor of another channel shape (an entry correlation
/// never falls below the channel's own developed value: 5.74 in an annulus of Di/Do = ½,
/// not the tube's 3.66).
pub fn sieder_tate_laminar_nusselt_floor(gz: f64, mu_ratio: f64, nu_developed: f64) -> f64 {
    (1.86 * gz.powf(1.0 / 3.0) * mu_ratio.powf(0.14)).max(nu_developed)
}

/// Whether a cell's wall–bulk property ratios lie within `film`'s bulk-property range:
/// c̄p/cp_b with c̄p = (h_w − h_b)/(T_w − T_b), and ρ_w/ρ_b.
pub fn property_ratios_within(film: &dyn FilmCorrelation, fluid: &dyn Fluid, bulk: &Props, bulk_c: f64, wall_c: f64, reynolds: Option<f64>) -> bool {
    let Some((lo, hi)) = film.bulk_property_range(reynolds.unwrap_or(0.0)) else { return true };
    let wall = fluid.props(wall_c);
    let dt = wall_c - bulk_c;
    let cp_bar = if dt.abs() > 1e-6 { (fluid.enthalpy(wall_c) - fluid.enthalpy(bulk_c)) / dt } else { wall.cp };
    let within = |r: f64| (lo..=hi).contains(&r);
    within(cp_bar / bulk.cp) && within(wall.density / bulk.density)
}
