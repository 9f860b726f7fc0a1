//! Compact surfaces from j/f test data (Kays & London), with fins.

use super::film::*;
use crate::transfer::fin::{surface_efficiency, Fin};
use crate::transfer::Channel;
use std::fmt::Debug;

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
        let eta_f = self.fin.map(|f| f.efficiency(h));
        let nu = h * ch.hydraulic_diameter_m.unwrap_or(1.0) / i.props.conductivity;
        FilmResult {
            h,
            reynolds: Some(re),
            nusselt: Some(nu),
            surface_efficiency: surface_efficiency(self.fin_area_fraction, eta_f.unwrap_or(1.0)),
            fin_efficiency: eta_f,
            in_range: ok,
        }
    }
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        vec![(self.data[0].0, self.data[self.data.len() - 1].0)]
    }
    fn validity(&self) -> String {
        format!("the surface's test data, {} ≤ Re ≤ {}", self.data[0].0, self.data[self.data.len() - 1].0)
    }
    fn darcy_friction(&self, _: &Channel, reynolds: f64) -> Option<f64> {
        Some(4.0 * self.j_f(reynolds.max(1e-9)).1) // Fanning → Darcy
    }
    fn stated_accuracy(&self) -> Option<super::film::StatedAccuracy> {
        Some(super::film::StatedAccuracy {
            percent: 10.0, source: "common practice: j-factor test data (as in Kays & London) are good to about ±5–10 % [M]"
        })
    }
}
