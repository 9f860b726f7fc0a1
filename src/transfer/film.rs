//! Film-coefficient correlations behind one trait, each with its published validity range.

use super::fin::{surface_efficiency, Fin};
use super::{Channel, LaminarConstants, NU_TUBE_LAMINAR_T};
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
    /// False when the local state is outside the correlation's published validity range.
    pub in_range: bool,
}

impl FilmResult {
    fn bare(h: f64, reynolds: Option<f64>, nusselt: Option<f64>, in_range: bool) -> Self {
        Self { h, reynolds, nusselt, surface_efficiency: 1.0, in_range }
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
    /// Darcy friction factor for the pressure drop, or None where no friction model is
    /// available for this surface. Default: Churchill (1977) with the channel's roughness.
    fn darcy_friction(&self, channel: &Channel, reynolds: f64) -> Option<f64> {
        let d = channel.hydraulic_diameter_m?;
        Some(super::friction::darcy_churchill_shaped(reynolds.max(1e-9), channel.roughness_m / d, channel.laminar.f_re))
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

/// Laminar model for internal flow.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Laminar {
    /// Fully developed, uniform wall temperature (3.66 in a tube; the channel's own value).
    FullyDevelopedT,
    /// Fully developed, uniform heat flux (48/11 = 4.36 in a tube; the channel's own published value elsewhere).
    FullyDevelopedH,
    /// Hausen thermal entry (mean over the flow length).
    Hausen,
    /// Sieder–Tate combined entry (mean over the flow length).
    SiederTate,
}

/// Turbulent model for internal flow.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Turbulent {
    /// Gnielinski with Petukhov friction.
    Gnielinski,
    /// Dittus–Boelter.
    DittusBoelter,
    /// Sieder–Tate (includes its own viscosity ratio).
    SiederTate,
    /// Pitla, Groll & Ramadhyani (2002) for supercritical CO₂ being cooled: the mean of
    /// Gnielinski's Nu at wall and at bulk properties, times k_w/k_b (Int. J. Refrigeration
    /// 25 (2002) 887–895 \[M\]).
    Pitla,
}

/// Property-ratio correction for wall-to-bulk property differences.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WallCorrection {
    /// None.
    None,
    /// Liquids: Nu × (μ_b/μ_w)^0.14 (Sieder & Tate 1936).
    Viscosity,
    /// Gases: Nu × (T_b/T_w)^0.45 when heated, × 1 when cooled (absolute temperatures;
    /// Gnielinski's recommendation as quoted in the VDI Heat Atlas \[M\]).
    GasTemperature,
}

/// How internal flow passes from laminar to turbulent.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Transition {
    /// Gnielinski's linear blend in Re between the laminar value at 2300 and the turbulent
    /// correlation at 10⁴ (VDI Heat Atlas, 2nd ed. 2010, G1 \[M\]); cells in it are counted as
    /// outside every correlation's range.
    #[default]
    Blend,
    /// No blend: the laminar model below 2300, the turbulent correlation as published from
    /// 2300 up (counted outside only where outside its own stated range). h jumps at 2300.
    None,
}

/// Range of c̄p/cp_b and ρ_w/ρ_b within which a bulk-property turbulent correlation is
/// counted in range (common practice \[M\]; see [`InternalFlow`]'s film).
pub const PROPERTY_RATIO_RANGE: (f64, f64) = (0.9, 1.1);

/// Laminar limit of the transition blend.
pub const RE_LAMINAR: f64 = 2300.0;
/// Fully turbulent start of the blend.
pub const RE_TURBULENT: f64 = 1.0e4;

/// Internal flow in tubes, annuli and plate channels: a laminar model below Re = 2300, a
/// turbulent model above 10⁴, and between them the linear blend in Re that Gnielinski
/// recommends (VDI Heat Atlas, 2nd ed. 2010, section G1 \[M\]): Nu = (1 − γ)Nu_lam(2300) +
/// γ Nu_turb(10⁴), γ = (Re − 2300)/(10⁴ − 2300). The blend is continuous at both ends, so
/// Newton never meets a jump; cells in it are reported as outside the correlations' range.
#[derive(Debug, Clone)]
pub struct InternalFlow {
    /// Laminar model.
    pub laminar: Laminar,
    /// Turbulent model.
    pub turbulent: Turbulent,
    /// Property-ratio correction.
    pub wall_correction: WallCorrection,
    /// Laminar–turbulent transition.
    pub transition: Transition,
}

/// Gnielinski's internal-flow set with fully developed laminar flow and no wall correction.
#[derive(Debug, Clone, Default)]
pub struct Gnielinski;

impl Gnielinski {
    /// Nusselt number over all regimes for a channel whose laminar value is `nu_laminar`.
    pub fn nusselt(re: f64, pr: f64, nu_laminar: f64) -> f64 {
        blend(re, nu_laminar, || gnielinski_nusselt(RE_TURBULENT, pr), || gnielinski_nusselt(re, pr))
    }
}

impl FilmCorrelation for Gnielinski {
    fn name(&self) -> &'static str {
        "gnielinski"
    }
    fn film(&self, i: &FilmInput) -> FilmResult {
        InternalFlow {
            laminar: Laminar::FullyDevelopedT,
            turbulent: Turbulent::Gnielinski,
            wall_correction: WallCorrection::None,
            transition: Transition::Blend,
        }
        .film(i)
    }
    fn validity(&self) -> String {
        "laminar Re < 2300; turbulent 10⁴ ≤ Re ≤ 5·10⁶, 0.5 ≤ Pr ≤ 2000 (Gnielinski 1976)".into()
    }
}

fn blend(re: f64, nu_laminar: f64, turbulent_at_start: impl Fn() -> f64, turbulent: impl Fn() -> f64) -> f64 {
    if re <= RE_LAMINAR {
        nu_laminar
    } else if re >= RE_TURBULENT {
        turbulent()
    } else {
        let gamma = (re - RE_LAMINAR) / (RE_TURBULENT - RE_LAMINAR);
        (1.0 - gamma) * nu_laminar + gamma * turbulent_at_start()
    }
}

/// The local state an internal-flow correlation needs, all on the hydraulic diameter.
#[derive(Debug, Clone, Copy)]
pub struct FlowState {
    /// Reynolds number.
    pub re: f64,
    /// Prandtl number (bulk).
    pub pr: f64,
    /// μ_bulk/μ_wall.
    pub mu_ratio: f64,
    /// Graetz number Re Pr D_h/L.
    pub gz: f64,
    /// Prandtl number at the wall temperature.
    pub pr_wall: f64,
    /// k_wall/k_bulk.
    pub k_ratio: f64,
    /// True for the stream being heated.
    pub heated: bool,
}

impl InternalFlow {
    /// Laminar Nusselt number (on the hydraulic diameter) and whether it is in range.
    fn laminar_nusselt(&self, pr: f64, mu_ratio: f64, gz: f64, shape: &LaminarConstants) -> (f64, bool) {
        match self.laminar {
            Laminar::FullyDevelopedT => (shape.nu_t, true),
            Laminar::FullyDevelopedH => (shape.nu_h, true),
            // Hausen's entry increment on top of the channel's own fully developed value
            // (identical to Hausen for a tube, where that value is 3.66).
            Laminar::Hausen => (hausen_nusselt(gz) - NU_TUBE_LAMINAR_T + shape.nu_t, true),
            Laminar::SiederTate => {
                let ok = (0.48..16_700.0).contains(&pr) && (0.0044..9.75).contains(&mu_ratio);
                (sieder_tate_laminar_nusselt_floor(gz, mu_ratio, shape.nu_t), ok)
            }
        }
    }

    /// Turbulent Nusselt number at `re` (on the correlation's own diameter) and whether the
    /// state is inside the correlation's published range.
    fn turbulent_nusselt(&self, re: f64, state: &FlowState) -> (f64, bool) {
        let FlowState { pr, mu_ratio, heated, pr_wall, k_ratio, .. } = *state;
        match self.turbulent {
            // Re at wall properties: G·D/μ_w = Re_b·μ_b/μ_w.
            Turbulent::Pitla => {
                let re_w = re * mu_ratio;
                let nu = 0.5 * (gnielinski_nusselt(re_w, pr_wall) + gnielinski_nusselt(re, pr)) * k_ratio;
                (nu, (3000.0..=5e6).contains(&re) && (3000.0..=5e6).contains(&re_w) && !heated)
            }
            Turbulent::Gnielinski => (gnielinski_nusselt(re, pr), (3000.0..=5e6).contains(&re) && (0.5..=2000.0).contains(&pr)),
            Turbulent::DittusBoelter => (dittus_boelter_nusselt(re, pr, heated), re >= 1e4 && (0.6..=160.0).contains(&pr)),
            Turbulent::SiederTate => (sieder_tate_turbulent_nusselt(re, pr, mu_ratio), re >= 1e4 && (0.7..=16_700.0).contains(&pr)),
        }
    }

    /// Film coefficient ×(D_h/k), i.e. Nu on the hydraulic diameter, over all regimes, and
    /// whether the state is in range. `heat_ratio` is D_e/D_h, the turbulent correlations'
    /// diameter over the hydraulic one (1 except for Kern's annulus practice).
    pub fn nusselt(&self, state: &FlowState, shape: &LaminarConstants, heat_ratio: f64) -> (f64, bool) {
        let FlowState { re, pr, mu_ratio, gz, .. } = *state;
        let laminar_at = |re_l: f64| self.laminar_nusselt(pr, mu_ratio, gz * re_l / re.max(1e-300), shape);
        // Nu_e k/D_e expressed on D_h: Nu_e / (D_e/D_h).
        let turbulent_at = |re_t: f64| {
            let (nu, ok) = self.turbulent_nusselt(re_t * heat_ratio, state);
            (nu / heat_ratio, ok)
        };
        match self.transition {
            _ if re <= RE_LAMINAR => laminar_at(re),
            Transition::None => turbulent_at(re),
            Transition::Blend if re >= RE_TURBULENT => turbulent_at(re),
            Transition::Blend => {
                let gamma = (re - RE_LAMINAR) / (RE_TURBULENT - RE_LAMINAR);
                ((1.0 - gamma) * laminar_at(RE_LAMINAR).0 + gamma * turbulent_at(RE_TURBULENT).0, false)
            }
        }
    }

    /// True where the turbulent correlation (not the laminar model) gives the value at `re`.
    fn turbulent_regime(&self, re: f64) -> bool {
        re > RE_LAMINAR && (self.transition == Transition::None || re >= RE_TURBULENT)
    }
}

impl FilmCorrelation for InternalFlow {
    fn name(&self) -> &'static str {
        match self.turbulent {
            Turbulent::Gnielinski => "gnielinski",
            Turbulent::DittusBoelter => "dittus_boelter",
            Turbulent::SiederTate => "sieder_tate",
            Turbulent::Pitla => "pitla",
        }
    }
    fn film(&self, i: &FilmInput) -> FilmResult {
        let ch = i.channel;
        let d_h = ch.hydraulic_diameter_m.unwrap_or(1.0);
        let heat_ratio = ch.heat_diameter_m.map(|d| d / d_h).unwrap_or(1.0);
        let re = ch.reynolds(i.mass_flow_kg_s, i.props.viscosity).unwrap_or(0.0);
        let pr = i.props.prandtl();
        // Wall properties: for corrections and Pitla, and for the property-ratio check below.
        let wall_props = i.fluid.props(i.wall_c);
        let mu_ratio = i.props.viscosity / wall_props.viscosity;
        let gz = re * pr * d_h / ch.flow_length_m;
        let state =
            FlowState { re, pr, mu_ratio, gz, heated: i.heated, pr_wall: wall_props.prandtl(), k_ratio: wall_props.conductivity / i.props.conductivity };
        let (mut nu, mut ok) = self.nusselt(&state, &ch.laminar, heat_ratio);
        let turbulent = self.turbulent_regime(re);
        // Bulk-property turbulent correlations assume the properties change little between
        // bulk and wall; near a pseudo-critical point (supercritical CO₂) the mean cp over
        // the film c̄p = (h_w − h_b)/(T_w − T_b) and the density can differ by tens of %.
        // Outside 0.9 … 1.1 for c̄p/cp_b or ρ_w/ρ_b (a common-practice bound [M]) a cell is
        // counted outside the correlation's range unless a property correction is chosen.
        if re > RE_LAMINAR && self.wall_correction == WallCorrection::None && self.turbulent != Turbulent::Pitla {
            let dt = i.wall_c - i.bulk_c;
            let cp_bar = if dt.abs() > 1e-6 { (i.fluid.enthalpy(i.wall_c) - i.fluid.enthalpy(i.bulk_c)) / dt } else { wall_props.cp };
            let within = |r: f64| (PROPERTY_RATIO_RANGE.0..=PROPERTY_RATIO_RANGE.1).contains(&r);
            ok &= within(cp_bar / i.props.cp) && within(wall_props.density / i.props.density);
        }
        match self.wall_correction {
            WallCorrection::None => {}
            WallCorrection::Viscosity => {
                // Sieder–Tate correlations already carry the ratio: never apply it twice.
                let included = (turbulent && self.turbulent == Turbulent::SiederTate) || (re <= RE_LAMINAR && self.laminar == Laminar::SiederTate);
                if !included {
                    nu *= mu_ratio.powf(0.14);
                }
                ok &= (0.0044..9.75).contains(&mu_ratio);
            }
            WallCorrection::GasTemperature => {
                if i.wall_c > i.bulk_c {
                    nu *= ((i.bulk_c + 273.15) / (i.wall_c + 273.15)).powf(0.45);
                }
            }
        }
        if ch.flow_length_m / d_h < 10.0 && re > RE_LAMINAR {
            ok = false; // turbulent correlations assume L/D ≥ 10
        }
        FilmResult::bare(nu * i.props.conductivity / d_h, Some(re), Some(nu), ok)
    }
    fn uses_wall_temperature(&self) -> bool {
        self.wall_correction != WallCorrection::None
            || matches!(self.laminar, Laminar::SiederTate)
            || matches!(self.turbulent, Turbulent::SiederTate | Turbulent::Pitla)
    }
    fn validity(&self) -> String {
        let lam = match self.laminar {
            Laminar::FullyDevelopedT | Laminar::FullyDevelopedH => "laminar fully developed, Re ≤ 2300",
            Laminar::Hausen => "Hausen thermal entry, Re ≤ 2300",
            Laminar::SiederTate => "Sieder–Tate entry, Re ≤ 2300, 0.48 < Pr < 16 700, 0.0044 < μ/μ_w < 9.75",
        };
        let (name, low, rest) = match self.turbulent {
            Turbulent::Gnielinski => ("Gnielinski", 3000.0, "Re ≤ 5·10⁶, 0.5 ≤ Pr ≤ 2000"),
            Turbulent::DittusBoelter => ("Dittus–Boelter", 1e4, "0.6 ≤ Pr ≤ 160, L/D ≥ 10"),
            Turbulent::SiederTate => ("Sieder–Tate", 1e4, "0.7 ≤ Pr ≤ 16 700, L/D ≥ 10"),
            Turbulent::Pitla => ("Pitla et al. 2002 (supercritical CO₂, cooled)", 3000.0, "Re_b and Re_w ≤ 5·10⁶, the fluid being cooled"),
        };
        let own = if low == 3000.0 { "3000" } else { "10⁴" };
        let ratios = if self.wall_correction == WallCorrection::None && self.turbulent != Turbulent::Pitla {
            format!(
                "; turbulent and blended cells with c̄p/cp_b or ρ_w/ρ_b outside {} … {} counted outside (bulk properties assumed)",
                PROPERTY_RATIO_RANGE.0, PROPERTY_RATIO_RANGE.1
            )
        } else {
            String::new()
        };
        match self.transition {
            Transition::Blend => {
                format!("{lam}; {name} {own} ≤ Re, {rest}, used from Re = 10⁴; 2300 < Re < 10⁴ blended linearly (counted outside every range){ratios}")
            }
            Transition::None => {
                let gap = if low > RE_LAMINAR {
                    format!(" (cells with 2300 < Re < {own} are outside {name}'s own range and counted so)")
                } else {
                    " (cells with 2300 < Re < 3000 are outside its own range and counted so)".into()
                };
                format!("{lam}; {name} from Re = 2300 as published, its range {own} ≤ Re, {rest}{gap}; no transition blend{ratios}")
            }
        }
    }
}

/// Tube-bank layout.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Layout {
    /// Tubes in line.
    Aligned,
    /// Tubes staggered.
    Staggered,
}

/// A bank of tubes in crossflow, as the Zukauskas correlation needs it.
#[derive(Debug, Clone, PartialEq)]
pub struct TubeBank {
    /// Tube outer diameter, m.
    pub outer_diameter_m: f64,
    /// Transverse pitch S_T, m.
    pub transverse_pitch_m: f64,
    /// Longitudinal pitch S_L, m.
    pub longitudinal_pitch_m: f64,
    /// Layout.
    pub layout: Layout,
    /// Number of rows N_L in the flow direction.
    pub rows: usize,
    /// Frontal (upstream face) area, m².
    pub frontal_area_m2: f64,
}

impl TubeBank {
    /// Ratio V_max/V: S_T/(S_T − D) for aligned banks and staggered banks whose minimum area
    /// is the transverse gap, else S_T/(2(S_D − D)), S_D = √(S_L² + (S_T/2)²)
    /// (Incropera et al., Eqs. 7.57–7.59).
    pub fn velocity_ratio(&self) -> f64 {
        let (d, st, sl) = (self.outer_diameter_m, self.transverse_pitch_m, self.longitudinal_pitch_m);
        let transverse = st / (st - d);
        match self.layout {
            Layout::Aligned => transverse,
            Layout::Staggered => {
                let sd = (sl * sl + 0.25 * st * st).sqrt();
                if 2.0 * (sd - d) >= st - d {
                    transverse
                } else {
                    st / (2.0 * (sd - d))
                }
            }
        }
    }

    /// Zukauskas constants (C₁, m) for Re_max. Below 10² and above 10³: the 1972 table as
    /// reproduced in Incropera Table 7.5. Between 10² and 10³, where that table only says to
    /// use the single-cylinder result, the bank constants of Zukauskas' 1987 table (as in
    /// Çengel, *Heat Transfer*, Table 7-2 \[M\]; METHODS.md §3): aligned C = 0.52, m = 0.5;
    /// staggered 1.04/0.4 up to 500 and 0.71/0.5 above. Pr exponent 0.36 throughout.
    fn constants(&self, re: f64) -> (f64, f64) {
        let ratio = self.transverse_pitch_m / self.longitudinal_pitch_m;
        match (self.layout, re) {
            (Layout::Aligned, r) if r < 100.0 => (0.80, 0.40),
            (Layout::Staggered, r) if r < 100.0 => (0.90, 0.40),
            (Layout::Aligned, r) if r < 1000.0 => (0.52, 0.50),
            (Layout::Staggered, r) if r < 500.0 => (1.04, 0.40),
            (Layout::Staggered, r) if r < 1000.0 => (0.71, 0.50),
            (Layout::Aligned, r) if r < 2e5 => (0.27, 0.63),
            (Layout::Staggered, r) if r < 2e5 => {
                if ratio < 2.0 {
                    (0.35 * ratio.powf(0.2), 0.60)
                } else {
                    (0.40, 0.60)
                }
            }
            (Layout::Aligned, _) => (0.021, 0.84),
            (Layout::Staggered, _) => (0.022, 0.84),
        }
    }

    /// Re_max at which the constants switch.
    fn switches(&self) -> &'static [f64] {
        match self.layout {
            Layout::Aligned => &[100.0, 1000.0, 2e5],
            Layout::Staggered => &[100.0, 500.0, 1000.0, 2e5],
        }
    }

    /// Row correction C₂ for N_L < 20 (Incropera Table 7.6), linear between tabulated rows.
    /// The table holds for Re_max ≳ 10³ only.
    pub fn row_correction(&self) -> f64 {
        const ROWS: [f64; 9] = [1.0, 2.0, 3.0, 4.0, 5.0, 7.0, 10.0, 13.0, 16.0];
        const ALIGNED: [f64; 9] = [0.70, 0.80, 0.86, 0.90, 0.92, 0.95, 0.97, 0.98, 0.99];
        const STAGGERED: [f64; 9] = [0.64, 0.76, 0.84, 0.89, 0.92, 0.95, 0.97, 0.98, 0.99];
        let n = self.rows as f64;
        if n >= 20.0 {
            return 1.0;
        }
        let table = if self.layout == Layout::Aligned { &ALIGNED } else { &STAGGERED };
        if n >= 16.0 {
            return table[8] + (1.0 - table[8]) * (n - 16.0) / 4.0;
        }
        for k in 0..8 {
            if n <= ROWS[k + 1] {
                return table[k] + (table[k + 1] - table[k]) * (n - ROWS[k]) / (ROWS[k + 1] - ROWS[k]);
            }
        }
        1.0
    }

    /// The row correction applied at `re`: tabulated only from Re_max = 10³ up, so 1 below
    /// (and such cells are counted outside the range, see [`TubeBank::in_range`]).
    fn row_correction_at(&self, re: f64) -> f64 {
        if re >= 1000.0 {
            self.row_correction()
        } else {
            1.0
        }
    }

    /// Inside the tabulated ranges: 10 ≤ Re_max ≤ 2·10⁶, 0.7 ≤ Pr ≤ 500; fewer than 20 rows
    /// only where the row correction is tabulated (Re_max ≥ 10³); an aligned bank not with
    /// S_T/S_L < 0.7, for which Zukauskas gives no constants (Incropera, note to Table 7.5).
    pub fn in_range(&self, re_max: f64, pr: f64) -> bool {
        let ratio = self.transverse_pitch_m / self.longitudinal_pitch_m;
        (10.0..=2e6).contains(&re_max)
            && (0.7..=500.0).contains(&pr)
            && (self.rows >= 20 || re_max >= 1000.0)
            && !(self.layout == Layout::Aligned && ratio < 0.7)
    }

    fn coefficient(&self, constants_at: f64, re: f64) -> f64 {
        let (c1, m) = self.constants(constants_at);
        self.row_correction_at(constants_at) * c1 * re.powf(m)
    }

    /// Nu = C₂ C₁ Re_max^m Pr^0.36 (Pr/Pr_s)^¼ without the switch smoothing (for checks).
    pub fn nusselt_raw(&self, re_max: f64, pr: f64, pr_wall: f64) -> f64 {
        self.coefficient(re_max, re_max) * pr.powf(0.36) * (pr / pr_wall).powf(0.25)
    }

    /// The same with each switch between constant sets smoothed by a linear blend in ln Re
    /// over ±5 %, so the film coefficient is continuous for Newton.
    pub fn nusselt(&self, re_max: f64, pr: f64, pr_wall: f64) -> f64 {
        for &switch in self.switches() {
            let (lo, hi) = (switch * 0.95, switch * 1.05);
            if re_max > lo && re_max < hi {
                let w = (re_max / lo).ln() / (hi / lo).ln();
                let c = (1.0 - w) * self.coefficient(lo, re_max) + w * self.coefficient(hi, re_max);
                return c * pr.powf(0.36) * (pr / pr_wall).powf(0.25);
            }
        }
        self.nusselt_raw(re_max, pr, pr_wall)
    }
}

/// Conduction floor of a cylinder's Nusselt number with the surrounding fluid at rest (see
/// [`Zukauskas`]).
pub const STAGNANT_CYLINDER_NU: f64 = 0.36;

/// Zukauskas (1972) for the outside of a tube bank in crossflow, with the Pr_s at the local
/// wall temperature. Valid 10 ≤ Re_max ≤ 2·10⁶, 0.7 ≤ Pr ≤ 500.
#[derive(Debug, Clone)]
pub struct Zukauskas {
    /// The bank.
    pub bank: TubeBank,
}

impl FilmCorrelation for Zukauskas {
    fn name(&self) -> &'static str {
        "zukauskas"
    }
    fn film(&self, i: &FilmInput) -> FilmResult {
        let d = self.bank.outer_diameter_m;
        let re_max = i.mass_flow_kg_s.abs() / self.bank.frontal_area_m2 * self.bank.velocity_ratio() * d / i.props.viscosity;
        let pr = i.props.prandtl();
        let pr_wall = i.fluid.props(i.wall_c).prandtl();
        // Stagnant floor: Nu³ = Nu_Z³ + Nu₀³ with Nu₀ = 0.36, the Ra → 0 limit of Churchill &
        // Chu's horizontal-cylinder correlation (Int. J. Heat Mass Transfer 18 (1975) 1049;
        // Incropera Eq. 9.34), combined as in Churchill–Usagi mixed convection (Incropera
        // Eq. 9.64 [M]). At zero flow h = 0.36 k/D instead of 0; at working Re_max it changes
        // Nu by less than 10⁻⁶.
        let nu = (self.bank.nusselt(re_max, pr, pr_wall).powi(3) + STAGNANT_CYLINDER_NU.powi(3)).cbrt();
        let ok = self.bank.in_range(re_max, pr);
        FilmResult::bare(nu * i.props.conductivity / d, Some(re_max), Some(nu), ok)
    }
    fn uses_wall_temperature(&self) -> bool {
        true
    }
    fn validity(&self) -> String {
        format!(
            "Zukauskas 10 ≤ Re_max ≤ 2·10⁶, 0.7 ≤ Pr ≤ 500 (1972 constants; 1987 constants for 10² ≤ Re_max < 10³){}",
            if self.bank.rows < 20 {
                format!("; {} rows: row correction tabulated only for Re_max ≥ 10³, cells below counted outside", self.bank.rows)
            } else {
                String::new()
            }
        )
    }
    fn darcy_friction(&self, _: &Channel, _: f64) -> Option<f64> {
        None // no tube-bank friction correlation is implemented: reported as not computed
    }
}

/// Compact surface from test data: Colburn j and Fanning f against Re = G D_h/μ, the way
/// such data are published (Kays & London, *Compact Heat Exchangers*). h = j G cp Pr^(−2/3)
/// (Colburn 1933), with the fins' efficiency folded into the overall surface efficiency.
/// j and f are interpolated linearly in log–log; outside the data's Re range the end
/// value is used and the cell is reported as outside the range.
#[derive(Debug, Clone)]
pub struct CompactSurface {
    /// (Re, j, f) rows, Re increasing.
    pub data: Vec<(f64, f64, f64)>,
    /// Fins, if any.
    pub fin: Option<Fin>,
    /// Fin area / total area on this side.
    pub fin_area_fraction: f64,
}

impl CompactSurface {
    /// (j, Fanning f, in range) at `re`. Below the lowest tested Re both continue along the
    /// fully developed laminar asymptote, j ∝ f ∝ 1/Re (constant Nu and f·Re), so h and the
    /// friction per unit of G stay at their lowest-tested values as the flow stops, rather
    /// than h falling to zero; above the highest the end values are kept. Either way the cell
    /// is counted outside the data's range.
    pub fn j_f(&self, re: f64) -> (f64, f64, bool) {
        let d = &self.data;
        let n = d.len();
        if re <= d[0].0 {
            let k = d[0].0 / re.max(1e-300);
            return (d[0].1 * k, d[0].2 * k, re >= d[0].0 * (1.0 - 1e-12));
        }
        if re >= d[n - 1].0 {
            return (d[n - 1].1, d[n - 1].2, re <= d[n - 1].0 * (1.0 + 1e-12));
        }
        let k = d.partition_point(|r| r.0 <= re).min(n - 1).max(1) - 1;
        let w = (re / d[k].0).ln() / (d[k + 1].0 / d[k].0).ln();
        let lerp = |a: f64, b: f64| (a.ln() + w * (b.ln() - a.ln())).exp();
        (lerp(d[k].1, d[k + 1].1), lerp(d[k].2, d[k + 1].2), true)
    }
}

impl FilmCorrelation for CompactSurface {
    fn name(&self) -> &'static str {
        "compact"
    }
    fn film(&self, i: &FilmInput) -> FilmResult {
        let ch = i.channel;
        let g = i.mass_flow_kg_s.abs() / ch.flow_area_m2.unwrap_or(1.0);
        let re = ch.reynolds(i.mass_flow_kg_s, i.props.viscosity).unwrap_or(0.0);
        let (j, _, ok) = self.j_f(re);
        let colburn = i.props.cp * i.props.prandtl().powf(-2.0 / 3.0);
        // h = j G cp Pr^(−2/3); below the data j·G is constant (= j₀ Re₀ μ/D_h), which also
        // holds at zero flow where j → ∞ and G = 0.
        let (re0, j0) = (self.data[0].0, self.data[0].1);
        let h = if re < re0 { j0 * re0 * i.props.viscosity / ch.hydraulic_diameter_m.unwrap_or(1.0) * colburn } else { j * g * colburn };
        let eta_f = self.fin.map(|f| f.efficiency(h)).unwrap_or(1.0);
        let nu = h * ch.hydraulic_diameter_m.unwrap_or(1.0) / i.props.conductivity;
        FilmResult { h, reynolds: Some(re), nusselt: Some(nu), surface_efficiency: surface_efficiency(self.fin_area_fraction, eta_f), in_range: ok }
    }
    fn validity(&self) -> String {
        format!("the surface's test data, {} ≤ Re ≤ {}", self.data[0].0, self.data[self.data.len() - 1].0)
    }
    fn darcy_friction(&self, _: &Channel, reynolds: f64) -> Option<f64> {
        Some(4.0 * self.j_f(reynolds.max(1e-9)).1) // Fanning → Darcy
    }
}
