//! Pressure losses outside the frictional core: the entrance and exit of a compact core
//! (Kays & London K_c, K_e), return bends and pass returns of the tube side, and nozzles.
//! Reported separately from the frictional drop.
//!
//! Must not: know about cells, solvers or files.

use serde::Serialize;

/// Contraction coefficient C_c of a sharp-edged abrupt contraction against the area ratio
/// σ (Weisbach's data as tabulated by Kays & London, *Compact Heat Exchangers*, 3rd ed.,
/// §5 \[M\]).
const CONTRACTION: [(f64, f64); 11] =
    [(0.0, 0.61), (0.1, 0.612), (0.2, 0.616), (0.3, 0.622), (0.4, 0.633), (0.5, 0.644), (0.6, 0.662), (0.7, 0.687), (0.8, 0.722), (0.9, 0.781), (1.0, 1.0)];

/// C_c at σ, linear between tabulated points.
pub fn contraction_coefficient(sigma: f64) -> f64 {
    let s = sigma.clamp(0.0, 1.0);
    for w in CONTRACTION.windows(2) {
        let ((x0, y0), (x1, y1)) = (w[0], w[1]);
        if s <= x1 {
            return y0 + (y1 - y0) * (s - x0) / (x1 - x0);
        }
    }
    1.0
}

/// The velocity-distribution (momentum) coefficient K_d of the core passages: the laminar
/// developed value `laminar` (4/3 in tubes, 6/5 between plates) up to Re = 2000, 1 (a flat
/// profile, Kays & London's Re → ∞ curves) from Re = 10⁴, linear in ln Re between.
fn distribution_coefficient(re: f64, laminar: f64) -> f64 {
    let w = ((re.max(1.0) / 2000.0).ln() / (1e4f64 / 2000.0).ln()).clamp(0.0, 1.0);
    laminar + w * (1.0 - laminar)
}

/// Kays & London's entrance and exit coefficients of a core of free-flow to frontal area
/// ratio σ from the abrupt-contraction / abrupt-expansion analysis behind their charts
/// (*Compact Heat Exchangers*, 3rd ed. 1984, §5, Figs. 5-2 to 5-5 \[M\]):
/// K_c = (1 − 2C_c + C_c²(2K_d − 1))/C_c², K_e = 1 − 2K_d σ + σ². At K_d = 1 these are the
/// Re → ∞ curves, K_e then the Borda–Carnot (1 − σ)².
pub fn kays_london(sigma: f64, re: f64, laminar_kd: f64) -> (f64, f64) {
    let cc = contraction_coefficient(sigma);
    let kd = distribution_coefficient(re, laminar_kd);
    ((1.0 - 2.0 * cc + cc * cc * (2.0 * kd - 1.0)) / (cc * cc), 1.0 - 2.0 * kd * sigma + sigma * sigma)
}

/// Loss coefficient of a close-pattern 180° return bend, K = 50 f_T, with f_T the fully
/// turbulent Darcy factor of clean commercial steel pipe (ε = 0.046 mm) of the tube's bore
/// (Crane Technical Paper 410 \[M\]; common practice).
pub fn return_bend_coefficient(bore_m: f64) -> f64 {
    let rel = 4.6e-5 / bore_m;
    let inv_sqrt_f = -2.0 * (rel / 3.7).log10();
    50.0 / (inv_sqrt_f * inv_sqrt_f)
}

/// Velocity heads lost in the return of each tube pass of a shell-and-tube exchanger:
/// 4 (Kern, *Process Heat Transfer*, 1950, Eq. 7.47 \[M\]; common practice).
pub const PASS_RETURN_VELOCITY_HEADS: f64 = 4.0;

/// Velocity heads lost at an inlet nozzle (1.0) and an outlet nozzle (0.5), on the nozzle
/// velocity (common practice \[M\]).
pub const NOZZLE_VELOCITY_HEADS: [f64; 2] = [1.0, 0.5];

/// The losses a stream's passage has besides core friction.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Fittings {
    /// A compact core's σ = A_ff/A_fr and its passages' laminar K_d (entrance and exit).
    pub core: Option<(f64, f64)>,
    /// Returns: how many, each of this many velocity heads of the channel velocity, and
    /// what they are (for the report).
    pub returns: Option<(f64, f64, &'static str)>,
    /// Nozzles: bore (m) and how many inlet/outlet pairs the stream passes (one per shell).
    pub nozzles: Option<(f64, usize)>,
}

/// The losses of one stream, Pa (positive: pressure lost).
#[derive(Debug, Clone, Default, PartialEq, Serialize)]
#[allow(non_snake_case)]
pub struct LossBreakdown {
    /// Core entrance (K_c + 1 − σ²) G²/(2ρ_in).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub entrance_Pa: Option<f64>,
    /// Core exit −(1 − σ² − K_e) G²/(2ρ_out) (a recovery when negative).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub exit_Pa: Option<f64>,
    /// K_c and K_e used.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub K_c: Option<f64>,
    /// K_e.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub K_e: Option<f64>,
    /// Returns (pass returns or return bends).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub returns_Pa: Option<f64>,
    /// What the returns are and their coefficient.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub returns_basis: Option<String>,
    /// Inlet and outlet nozzles.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub nozzles_Pa: Option<f64>,
}

impl LossBreakdown {
    /// Sum of the losses present, Pa.
    pub fn total(&self) -> f64 {
        [self.entrance_Pa, self.exit_Pa, self.returns_Pa, self.nozzles_Pa].iter().flatten().sum()
    }
}

impl Fittings {
    /// The losses at mass velocity `g` (kg/(m²s), on the channel's flow area), mass flow
    /// `m` (kg/s), inlet and outlet densities and Reynolds number `re`.
    pub fn losses(&self, g: f64, m: f64, rho_in: f64, rho_out: f64, re: f64) -> LossBreakdown {
        let mut out = LossBreakdown::default();
        let head = |rho: f64| g * g / (2.0 * rho);
        if let Some((sigma, kd)) = self.core {
            let (kc, ke) = kays_london(sigma, re, kd);
            out.K_c = Some(kc);
            out.K_e = Some(ke);
            out.entrance_Pa = Some((kc + 1.0 - sigma * sigma) * head(rho_in));
            out.exit_Pa = Some(-(1.0 - sigma * sigma - ke) * head(rho_out));
        }
        if let Some((count, k, what)) = self.returns {
            let rho_mean = 2.0 / (1.0 / rho_in + 1.0 / rho_out);
            out.returns_Pa = Some(count * k * head(rho_mean));
            out.returns_basis = Some(format!("{} {what} × {} velocity heads", crate::text::num(count), crate::text::num((k * 1000.0).round() / 1000.0)));
        }
        if let Some((bore, pairs)) = self.nozzles {
            let gn = m.abs() / (std::f64::consts::PI * bore * bore / 4.0);
            let nozzle = |k: f64, rho: f64| k * gn * gn / (2.0 * rho);
            out.nozzles_Pa = Some(pairs as f64 * (nozzle(NOZZLE_VELOCITY_HEADS[0], rho_in) + nozzle(NOZZLE_VELOCITY_HEADS[1], rho_out)));
        }
        out
    }

    /// Whether there is anything to report.
    pub fn any(&self) -> bool {
        self.core.is_some() || self.returns.is_some() || self.nozzles.is_some()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// At a flat profile the exit coefficient is the Borda–Carnot loss (1 − σ)² of an abrupt
    /// expansion (analytical; any fluid mechanics text), and the entrance loss vanishes with
    /// the contraction (σ → 1, C_c → 1).
    #[test]
    fn flat_profile_limits() {
        for s in [0.0, 0.2, 0.5, 0.8, 1.0] {
            let (_, ke) = kays_london(s, 1e6, 4.0 / 3.0);
            assert!((ke - (1.0 - s) * (1.0 - s)).abs() < 1e-12);
        }
        assert!(kays_london(1.0, 1e6, 4.0 / 3.0).0.abs() < 1e-12);
        // σ → 0, Re → ∞: K_c = (1/C_c − 1)² = 0.41, the value Kays & London's chart reads
        // about 0.4 at (from memory [M]).
        assert!((kays_london(0.0, 1e6, 4.0 / 3.0).0 - (1.0 / 0.61 - 1.0f64).powi(2)).abs() < 1e-12);
    }

    /// Crane's K = 50 f_T: f_T for 1" schedule 40 (bore 26.6 mm) is listed as 0.023 (Crane
    /// TP-410 table of f_T [M]); the Colebrook fully rough value is within 3 %.
    #[test]
    fn crane_friction_factor() {
        let k = return_bend_coefficient(0.0266);
        assert!((k / 50.0 / 0.023 - 1.0).abs() < 0.03, "{}", k / 50.0);
    }
}
