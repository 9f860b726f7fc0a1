//! Tube banks in crossflow: Zukauskas' correlation with its row correction, switch smoothing
//! and stagnant floor; Gaddis–Gnielinski's pressure drop.

use super::film::*;
use crate::transfer::Channel;
use std::f64::consts::PI;
use std::fmt::Debug;

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
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        vec![(if self.bank.rows < 20 { 1e3 } else { 10.0 }, 2e6)]
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
    fn friction_in_range(&self, reynolds: f64) -> bool {
        self.bank.friction_in_range(reynolds)
    }
    fn friction_validity(&self) -> Option<String> {
        Some("Gaddis–Gnielinski 1 ≤ Re_max ≤ 3·10⁵, in line 1.25 ≤ S_T/D ≤ 3 and 1.2 ≤ S_L/D ≤ 3, staggered 1.25 ≤ S_T/D ≤ 3 and 0.6 ≤ S_L/D ≤ 3".into())
    }
    /// Gaddis–Gnielinski's per-row drag ξ as the equivalent Darcy factor on the bank's
    /// channel (frontal area, D, depth N_L S_L): Δp = ξ N_L ρ V_max²/2 = f_D (N_L S_L/D) G²/(2ρ)
    /// with G on the frontal area, so f_D = ξ (V_max/V)² D/S_L.
    fn darcy_friction(&self, channel: &Channel, reynolds: f64) -> Option<f64> {
        self.darcy_friction_at(channel, reynolds, 1.0)
    }
    fn darcy_friction_at(&self, _: &Channel, reynolds: f64, mu_ratio: f64) -> Option<f64> {
        let b = &self.bank;
        Some(b.drag_per_row(reynolds, mu_ratio) * b.velocity_ratio().powi(2) * b.outer_diameter_m / b.longitudinal_pitch_m)
    }
    fn stated_accuracy(&self) -> Option<super::film::StatedAccuracy> {
        Some(super::film::StatedAccuracy {
            percent: 15.0,
            source: "Žukauskas (1972), Adv. Heat Transfer 8: tube-bank correlation within ±15 % of the data [M]",
        })
    }
}

impl TubeBank {
    /// Gaddis–Gnielinski drag coefficient per row ξ, Δp = ξ N_L ρ V_max²/2 with Re = V_max D/ν
    /// and `mu_ratio` = μ_b/μ_w (E. S. Gaddis, V. Gnielinski, Chem. Eng. Process. 19 (1985)
    /// 39–49; VDI Heat Atlas, 2nd ed. 2010, ch. L1 \[M\]). With a = S_T/D, b = S_L/D:
    ///
    /// ```text
    /// ξ = ξ_lam f_z,l + (ξ_turb f_z,t + f_n) (1 − exp(−(Re + 1000)/2000))
    /// in line:   ξ_lam = 280π[(√b − 0.6)² + 0.75] / ((4ab − π) a^1.6 Re)
    ///            ξ_turb = f_t / Re^(0.1 b/a),
    ///            f_t = [0.22 + 1.2 (1 − 0.94/b)^0.6 / (a − 0.85)^1.3] 10^(0.47(b/a − 1.5)) + 0.03(a − 1)(b − 1)
    /// staggered: ξ_lam as in line with c^1.6 for a^1.6, c = a if b ≥ ½√(2a + 1), else √((a/2)² + b²)
    ///            ξ_turb = [2.5 + 1.2/(a − 0.85)^1.08 + 0.4(b/a − 1)³ − 0.01(a/b − 1)³] / Re^0.25
    /// rows N_L < 10: f_n = (1/a²)(1/N_L − 1/10); staggered with c ≠ a: (2(c − 1)/(a(a − 1)))² (1/N_L − 1/10)
    /// f_z,t = (μ_w/μ)^0.14,  f_z,l = (μ_w/μ)^(0.57/((4ab/π − 1) Re)^0.25)
    /// ```
    pub fn drag_per_row(&self, re: f64, mu_ratio: f64) -> f64 {
        let re = re.max(1e-9);
        let d = self.outer_diameter_m;
        let (a, b) = (self.transverse_pitch_m / d, self.longitudinal_pitch_m / d);
        let laminar_numerator = 280.0 * PI * ((b.sqrt() - 0.6).powi(2) + 0.75);
        let diagonal_narrowest = b < 0.5 * (2.0 * a + 1.0).sqrt();
        let c = if diagonal_narrowest { (0.25 * a * a + b * b).sqrt() } else { a };
        let (xi_lam, xi_turb) = match self.layout {
            Layout::Aligned => {
                let ft =
                    (0.22 + 1.2 * (1.0 - 0.94 / b).max(0.0).powf(0.6) / (a - 0.85).powf(1.3)) * 10f64.powf(0.47 * (b / a - 1.5)) + 0.03 * (a - 1.0) * (b - 1.0);
                (laminar_numerator / ((4.0 * a * b - PI) * a.powf(1.6) * re), ft / re.powf(0.1 * b / a))
            }
            Layout::Staggered => {
                let ft = 2.5 + 1.2 / (a - 0.85).powf(1.08) + 0.4 * (b / a - 1.0).powi(3) - 0.01 * (a / b - 1.0).powi(3);
                (laminar_numerator / ((4.0 * a * b - PI) * c.powf(1.6) * re), ft / re.powf(0.25))
            }
        };
        let rows = self.rows as f64;
        let f_n = if rows < 10.0 {
            let k = if self.layout == Layout::Staggered && diagonal_narrowest { (2.0 * (c - 1.0) / (a * (a - 1.0))).powi(2) } else { 1.0 / (a * a) };
            k * (1.0 / rows - 0.1)
        } else {
            0.0
        };
        let wall_over_bulk = 1.0 / mu_ratio;
        let fz_t = wall_over_bulk.powf(0.14);
        let fz_l = wall_over_bulk.powf(0.57 / ((4.0 * a * b / PI - 1.0) * re).powf(0.25));
        xi_lam * fz_l + (xi_turb * fz_t + f_n) * (1.0 - (-(re + 1000.0) / 2000.0).exp())
    }

    /// Inside Gaddis–Gnielinski's stated range: 1 ≤ Re ≤ 3·10⁵ and the pitch ratios of their
    /// data (in line 1.25 ≤ a ≤ 3, 1.2 ≤ b ≤ 3; staggered 1.25 ≤ a ≤ 3, 0.6 ≤ b ≤ 3) \[M\].
    pub fn friction_in_range(&self, re: f64) -> bool {
        let d = self.outer_diameter_m;
        let (a, b) = (self.transverse_pitch_m / d, self.longitudinal_pitch_m / d);
        let b_min = if self.layout == Layout::Aligned { 1.2 } else { 0.6 };
        (1.0..=3e5).contains(&re) && (1.25..=3.0).contains(&a) && (b_min..=3.0).contains(&b)
    }
}
