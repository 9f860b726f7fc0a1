//! Internal flow in tubes, annuli and plate channels: laminar, transition and turbulent
//! models with their published ranges, wall-property corrections, Kern's annulus practice.

use super::film::*;
use crate::transfer::{LaminarConstants, NU_TUBE_LAMINAR_T};
use std::fmt::Debug;

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

/// Where Gnielinski's accuracy is stated.
const GNIELINSKI_ACCURACY: &str =
    "Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, 6th ed., §8.5: errors below 10 % with Gnielinski's correlation [M]";

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
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        vec![(0.0, RE_LAMINAR), (RE_TURBULENT, 5e6)]
    }
    fn stated_accuracy(&self) -> Option<super::film::StatedAccuracy> {
        Some(super::film::StatedAccuracy { percent: 10.0, source: GNIELINSKI_ACCURACY })
    }
}

pub(crate) fn blend(re: f64, nu_laminar: f64, turbulent_at_start: impl Fn() -> f64, turbulent: impl Fn() -> f64) -> f64 {
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
        // Wall properties only where the correlation uses them (this runs in Newton's loop).
        let wall_props = if self.uses_wall_temperature() { i.fluid.props(i.wall_c) } else { *i.props };
        let mu_ratio = i.props.viscosity / wall_props.viscosity;
        let gz = re * pr * d_h / ch.flow_length_m;
        let state =
            FlowState { re, pr, mu_ratio, gz, heated: i.heated, pr_wall: wall_props.prandtl(), k_ratio: wall_props.conductivity / i.props.conductivity };
        let (mut nu, mut ok) = self.nusselt(&state, &ch.laminar, heat_ratio);
        let turbulent = self.turbulent_regime(re);
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
    // Bulk-property turbulent correlations assume the properties change little between bulk
    // and wall; near a pseudo-critical point (supercritical CO₂) c̄p and ρ can differ by tens
    // of %. Unless a property correction is chosen (or Pitla's wall-property form), cells
    // outside 0.9 … 1.1 (a common-practice bound [M]) are counted outside the range.
    fn bulk_property_range(&self, reynolds: f64) -> Option<(f64, f64)> {
        (reynolds > RE_LAMINAR && self.wall_correction == WallCorrection::None && self.turbulent != Turbulent::Pitla).then_some(PROPERTY_RATIO_RANGE)
    }
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        // Blended cells (2300 < Re < 10⁴) are counted outside every range.
        let low = match (self.transition, self.turbulent) {
            (Transition::Blend, _) | (_, Turbulent::DittusBoelter | Turbulent::SiederTate) => RE_TURBULENT,
            _ => 3000.0,
        };
        let high = if matches!(self.turbulent, Turbulent::Gnielinski | Turbulent::Pitla) { 5e6 } else { f64::INFINITY };
        vec![(0.0, RE_LAMINAR), (low, high)]
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
    fn stated_accuracy(&self) -> Option<super::film::StatedAccuracy> {
        // The turbulent correlation's figure; a fully developed laminar Nu is exact for its
        // idealisation but a real inlet and property variation add about as much.
        let (percent, source) = match self.turbulent {
            Turbulent::Gnielinski => (10.0, GNIELINSKI_ACCURACY),
            Turbulent::DittusBoelter | Turbulent::SiederTate => (25.0, "Incropera & DeWitt, Fundamentals of Heat and Mass Transfer, 6th ed., §8.5: errors as large as 25 % with the Dittus–Boelter and Sieder–Tate equations [M]"),
            Turbulent::Pitla => (20.0, "Pitla, Groll & Ramadhyani (2002), Int. J. Refrigeration 25, 887–895: most data within ±20 % [M]"),
        };
        Some(super::film::StatedAccuracy { percent, source })
    }
}
