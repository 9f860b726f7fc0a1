//! The shell side of a baffled shell-and-tube exchanger rated from its geometry: the
//! Bell–Delaware method (ideal tube-bank j and f with the leakage, bypass and baffle
//! correction factors; crossflow, window and end-zone pressure drops) and Kern's simpler
//! equivalent-diameter method.
//!
//! Sources (the same for every formula below unless a line says otherwise): K. J. Bell,
//! *Final Report of the Cooperative Research Program on Shell and Tube Heat Exchangers*,
//! Univ. of Delaware Eng. Exp. Sta. Bull. 5 (1963); J. Taborek, "Shell-and-tube heat
//! exchangers: single-phase flow", *Heat Exchanger Design Handbook* (Hemisphere, 1983)
//! §3.3 — as presented in Shah & Sekulić, *Fundamentals of Heat Exchanger Design* (Wiley,
//! 2003) §9.5 and Kakaç & Liu, *Heat Exchangers* (CRC, 2nd ed. 2002) ch. 8. The coefficient
//! tables and factor equations are transcribed from memory of those presentations \[M\]; the
//! tests check the factor equations against an independent transcription and the published
//! charts as digitised in the `ht` library (PyPI), see tests/shell_side.rs.
//!
//! Must not: know about cells, solvers or files. Angles in radians inside, the layout in
//! degrees as the trade names it (30° triangular, 60° rotated triangular, 90° square, 45°
//! rotated square, measured from the flow direction).

use super::film::*;
use super::Channel;
use serde::Serialize;
use std::f64::consts::PI;

/// Tube layout angle, as the trade names it.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum PitchLayout {
    /// 30°: triangular, a row of tubes normal to the flow.
    Triangular30,
    /// 45°: rotated square.
    RotatedSquare45,
    /// 60°: rotated triangular.
    RotatedTriangular60,
    /// 90°: square, in line with the flow.
    Square90,
}

impl PitchLayout {
    /// From the angle in degrees; None unless 30, 45, 60 or 90.
    pub fn from_degrees(deg: f64) -> Option<Self> {
        [(30.0, Self::Triangular30), (45.0, Self::RotatedSquare45), (60.0, Self::RotatedTriangular60), (90.0, Self::Square90)]
            .into_iter()
            .find(|(d, _)| (deg - d).abs() < 1e-9)
            .map(|(_, l)| l)
    }

    /// Angle in degrees.
    pub fn degrees(self) -> f64 {
        match self {
            Self::Triangular30 => 30.0,
            Self::RotatedSquare45 => 45.0,
            Self::RotatedTriangular60 => 60.0,
            Self::Square90 => 90.0,
        }
    }

    /// (transverse pitch X_t, row pitch in the flow direction X_l) over the tube pitch.
    fn pitches(self) -> (f64, f64) {
        let s3 = 3f64.sqrt();
        match self {
            Self::Triangular30 => (1.0, s3 / 2.0),
            Self::RotatedSquare45 => (2f64.sqrt(), 0.5 * 2f64.sqrt()),
            Self::RotatedTriangular60 => (s3, 0.5),
            Self::Square90 => (1.0, 1.0),
        }
    }

    /// Triangular layouts (30°, 60°) against square ones (Kern's equivalent diameter).
    fn triangular(self) -> bool {
        matches!(self, Self::Triangular30 | Self::RotatedTriangular60)
    }
}

/// The geometry of one baffled shell and its tube bundle (segmental baffles). Clearances
/// are diametral, as drawn.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ShellBundle {
    /// Shell inner diameter D_s, m.
    pub shell_diameter_m: f64,
    /// Tube outer diameter d_o, m.
    pub tube_outer_diameter_m: f64,
    /// Tube pitch p_t (centre to centre), m.
    pub tube_pitch_m: f64,
    /// Layout angle.
    pub layout: PitchLayout,
    /// Tubes in one shell, all passes together, N_t.
    pub tubes: usize,
    /// Outer tube limit diameter D_otl (the circle enclosing the bundle), m.
    pub bundle_diameter_m: f64,
    /// Baffle cut as a fraction of D_s, B_c.
    pub baffle_cut: f64,
    /// Central baffle spacing L_bc, m.
    pub central_spacing_m: f64,
    /// Inlet and outlet baffle spacings L_bi, L_bo, m.
    pub end_spacings_m: [f64; 2],
    /// Baffles in one shell, N_b.
    pub baffles: usize,
    /// Shell-to-baffle diametral clearance L_sb, m.
    pub shell_baffle_clearance_m: f64,
    /// Tube-to-baffle-hole diametral clearance L_tb, m.
    pub tube_baffle_clearance_m: f64,
    /// Pairs of sealing strips N_ss.
    pub sealing_strip_pairs: usize,
    /// Width of the pass-partition lanes parallel to the flow, m (0 for none).
    pub pass_lane_width_m: f64,
    /// Shells in series (the shell stream crosses each).
    pub shells: usize,
}

/// Areas and counts derived from a [`ShellBundle`] (Taborek's notation).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[allow(non_snake_case)]
pub struct BundleAreas {
    /// Crossflow area at the shell centreline S_m, m².
    pub crossflow_area_m2: f64,
    /// Bundle-to-shell bypass area S_b, m².
    pub bypass_area_m2: f64,
    /// Shell-to-baffle leakage area S_sb, m².
    pub shell_baffle_leakage_area_m2: f64,
    /// Tube-to-baffle leakage area S_tb, m².
    pub tube_baffle_leakage_area_m2: f64,
    /// Net window flow area S_w, m².
    pub window_area_m2: f64,
    /// Window hydraulic diameter D_w, m.
    pub window_hydraulic_diameter_m: f64,
    /// Fraction of tubes in one window F_w.
    pub window_tube_fraction: f64,
    /// Fraction of tubes in pure crossflow F_c = 1 − 2F_w.
    pub crossflow_tube_fraction: f64,
    /// Tube rows crossed between baffle tips N_tcc.
    pub rows_crossed: f64,
    /// Effective tube rows crossed in one window N_tcw.
    pub window_rows: f64,
    /// Bypass area fraction F_sbp = S_b/S_m.
    pub bypass_fraction: f64,
    /// r_s = S_sb/(S_sb + S_tb).
    pub r_s: f64,
    /// r_lm = (S_sb + S_tb)/S_m.
    pub r_lm: f64,
    /// Sealing strips per row crossed, r_ss = N_ss/N_tcc.
    pub r_ss: f64,
}

impl ShellBundle {
    /// The areas and counts of Taborek's method.
    pub fn areas(&self) -> BundleAreas {
        let (ds, d, pt) = (self.shell_diameter_m, self.tube_outer_diameter_m, self.tube_pitch_m);
        let nt = self.tubes as f64;
        let bc = self.baffle_cut;
        let dctl = self.bundle_diameter_m - d; // centreline tube limit
        let theta_ds = 2.0 * (1.0 - 2.0 * bc).clamp(-1.0, 1.0).acos();
        let theta_ctl = 2.0 * (ds / dctl * (1.0 - 2.0 * bc)).clamp(-1.0, 1.0).acos();
        let fw = theta_ctl / (2.0 * PI) - theta_ctl.sin() / (2.0 * PI);
        let fc = 1.0 - 2.0 * fw;
        let (xt, xl) = self.layout.pitches();
        let (xt, xl) = (xt * pt, xl * pt);
        // The narrowest gap per transverse pitch: the gap across the row, or two diagonal
        // gaps where the diagonal neighbours are closer (45° and 60°: Taborek's 0.707 p_t
        // factor for 45° is this).
        let diagonal = (0.25 * xt * xt + xl * xl).sqrt();
        let gap = (xt - d).min(if self.layout == PitchLayout::Square90 { f64::INFINITY } else { 2.0 * (diagonal - d) });
        let lbb = ds - self.bundle_diameter_m;
        let sm = self.central_spacing_m * (lbb + dctl / xt * gap);
        let sb = self.central_spacing_m * (lbb + self.pass_lane_width_m);
        let ssb = PI * ds * self.shell_baffle_clearance_m / 2.0 * (1.0 - theta_ds / (2.0 * PI));
        let stb = PI / 4.0 * ((d + self.tube_baffle_clearance_m).powi(2) - d * d) * nt * (1.0 - fw);
        let swg = ds * ds / 8.0 * (theta_ds - theta_ds.sin());
        let sw = swg - nt * fw * PI * d * d / 4.0;
        let dw = 4.0 * sw / (PI * d * nt * fw + ds * theta_ds / 2.0);
        let ntcc = ds * (1.0 - 2.0 * bc) / xl;
        let ntcw = 0.8 / xl * (ds * bc - (ds - dctl) / 2.0);
        BundleAreas {
            crossflow_area_m2: sm,
            bypass_area_m2: sb,
            shell_baffle_leakage_area_m2: ssb,
            tube_baffle_leakage_area_m2: stb,
            window_area_m2: sw,
            window_hydraulic_diameter_m: dw,
            window_tube_fraction: fw,
            crossflow_tube_fraction: fc,
            rows_crossed: ntcc,
            window_rows: ntcw.max(0.0),
            bypass_fraction: sb / sm,
            r_s: if ssb + stb > 0.0 { ssb / (ssb + stb) } else { 0.0 },
            r_lm: (ssb + stb) / sm,
            r_ss: self.sealing_strip_pairs as f64 / ntcc,
        }
    }

    /// Shell fluid volume per metre of shell length (all shells), m²: the shell bore less
    /// the tubes.
    pub fn volume_per_length_m2(&self) -> f64 {
        self.shells as f64 * PI / 4.0 * (self.shell_diameter_m.powi(2) - self.tubes as f64 * self.tube_outer_diameter_m.powi(2))
    }

    /// Kern's equivalent diameter: 4(free area of a pitch cell)/(wetted perimeter in it),
    /// square 4(p_t² − πd²/4)/(πd), triangular 4(√3 p_t²/4 − πd²/8)/(πd/2) (Kern, *Process
    /// Heat Transfer*, 1950, ch. 7 \[M\]).
    pub fn kern_equivalent_diameter_m(&self) -> f64 {
        let (d, pt) = (self.tube_outer_diameter_m, self.tube_pitch_m);
        if self.layout.triangular() {
            4.0 * (3f64.sqrt() / 4.0 * pt * pt - PI * d * d / 8.0) / (PI * d / 2.0)
        } else {
            4.0 * (pt * pt - PI * d * d / 4.0) / (PI * d)
        }
    }

    /// Kern's bundle crossflow area D_s (p_t − d) L_bc / p_t, m².
    pub fn kern_flow_area_m2(&self) -> f64 {
        self.shell_diameter_m * (self.tube_pitch_m - self.tube_outer_diameter_m) * self.central_spacing_m / self.tube_pitch_m
    }
}

/// Coefficients of Taborek's ideal-bank curves j = a₁ (1.33/(p_t/d))^a Re^a₂,
/// a = a₃/(1 + 0.14 Re^a₄), and f likewise with b (HEDH §3.3.7 Table \[M\]; Shah & Sekulić
/// Table 9.3). Rows for Re ranges 10⁴–10⁵, 10³–10⁴, 10²–10³, 10–10², < 10; 60° uses 30°.
struct IdealBank {
    a: [(f64, f64); 5],
    a34: (f64, f64),
    b: [(f64, f64); 5],
    b34: (f64, f64),
}

const BANK_30: IdealBank = IdealBank {
    a: [(0.321, -0.388), (0.321, -0.388), (0.593, -0.477), (1.360, -0.657), (1.400, -0.667)],
    a34: (1.450, 0.519),
    b: [(0.372, -0.123), (0.486, -0.152), (4.570, -0.476), (45.100, -0.973), (48.000, -1.000)],
    b34: (7.00, 0.500),
};
const BANK_45: IdealBank = IdealBank {
    // a₁ = 1.498 for 10 < Re < 100: remembered as 0.498, which breaks the curve by a factor
    // of 3 at both ends of its range; 1.498 meets its neighbours within 1 % (the published
    // curves are continuous), so the leading digit was lost in memory.
    a: [(0.370, -0.396), (0.370, -0.396), (0.730, -0.500), (1.498, -0.656), (1.550, -0.667)],
    a34: (1.930, 0.500),
    b: [(0.303, -0.126), (0.333, -0.136), (3.500, -0.476), (26.200, -0.913), (32.000, -1.000)],
    b34: (6.59, 0.520),
};
const BANK_90: IdealBank = IdealBank {
    a: [(0.370, -0.395), (0.107, -0.266), (0.408, -0.460), (0.900, -0.631), (0.970, -0.667)],
    a34: (1.187, 0.370),
    b: [(0.391, -0.148), (0.0815, 0.022), (6.0900, -0.602), (32.1000, -0.963), (35.000, -1.000)],
    b34: (6.30, 0.378),
};

/// Re at which Taborek's table rows switch.
const BANK_SWITCHES: [f64; 4] = [1e4, 1e3, 1e2, 10.0];

/// Half-width in ln Re of the blend at each switch between table rows (±5 %, as for the
/// Zukauskas constants: the published rows do not meet exactly, and Newton needs a
/// continuous film coefficient).
const SWITCH_BLEND: f64 = 0.05;

/// Re at which Taborek's factors switch between laminar and turbulent forms.
const LAMINAR_BELOW: f64 = 100.0;

impl IdealBank {
    fn for_layout(layout: PitchLayout) -> &'static IdealBank {
        match layout {
            PitchLayout::Triangular30 | PitchLayout::RotatedTriangular60 => &BANK_30,
            PitchLayout::RotatedSquare45 => &BANK_45,
            PitchLayout::Square90 => &BANK_90,
        }
    }

    fn row(re: f64) -> usize {
        BANK_SWITCHES.iter().position(|&s| re >= s).unwrap_or(4)
    }

    /// (j, f) with the table row `row` at Re `re` and pitch ratio p_t/d.
    fn at_row(&self, row: usize, re: f64, pitch_ratio: f64) -> (f64, f64) {
        let re = re.max(1e-12);
        let c = 1.33 / pitch_ratio;
        let (a1, a2) = self.a[row];
        let (b1, b2) = self.b[row];
        let a = self.a34.0 / (1.0 + 0.14 * re.powf(self.a34.1));
        let b = self.b34.0 / (1.0 + 0.14 * re.powf(self.b34.1));
        (a1 * c.powf(a) * re.powf(a2), b1 * c.powf(b) * re.powf(b2))
    }

    /// (j, f) with each switch blended linearly in ln Re over ±5 %.
    fn smooth(&self, re: f64, pitch_ratio: f64) -> (f64, f64) {
        for &s in &BANK_SWITCHES {
            let (lo, hi) = (s * (1.0 - SWITCH_BLEND), s * (1.0 + SWITCH_BLEND));
            if re > lo && re < hi {
                let w = (re / lo).ln() / (hi / lo).ln();
                let (jl, fl) = self.at_row(Self::row(lo), re, pitch_ratio);
                let (jh, fh) = self.at_row(Self::row(hi), re, pitch_ratio);
                return ((1.0 - w) * jl + w * jh, (1.0 - w) * fl + w * fh);
            }
        }
        self.at_row(Self::row(re), re, pitch_ratio)
    }
}

/// Taborek's ideal tube-bank Colburn j and friction factor f at Re = d ṁ/(μ S_m), without
/// the switch blend (for checks against the table).
pub fn ideal_bank_raw(layout: PitchLayout, re: f64, pitch_ratio: f64) -> (f64, f64) {
    let bank = IdealBank::for_layout(layout);
    bank.at_row(IdealBank::row(re), re, pitch_ratio)
}

/// The same with the row switches blended (what the film coefficient uses).
pub fn ideal_bank(layout: PitchLayout, re: f64, pitch_ratio: f64) -> (f64, f64) {
    IdealBank::for_layout(layout).smooth(re, pitch_ratio)
}

/// Baffle cut and spacing J_c = 0.55 + 0.72 F_c.
pub fn baffle_cut_factor(crossflow_tube_fraction: f64) -> f64 {
    0.55 + 0.72 * crossflow_tube_fraction
}

/// Baffle leakage J_l = 0.44(1 − r_s) + [1 − 0.44(1 − r_s)] exp(−2.2 r_lm).
pub fn leakage_factor(r_s: f64, r_lm: f64) -> f64 {
    0.44 * (1.0 - r_s) + (1.0 - 0.44 * (1.0 - r_s)) * (-2.2 * r_lm).exp()
}

/// Leakage on pressure drop R_l = exp[−1.33(1 + r_s) r_lm^p], p = −0.15(1 + r_s) + 0.8.
pub fn leakage_pressure_factor(r_s: f64, r_lm: f64) -> f64 {
    (-1.33 * (1.0 + r_s) * r_lm.powf(-0.15 * (1.0 + r_s) + 0.8)).exp()
}

/// Bundle bypass exp[−C F_sbp (1 − (2 r_ss)^⅓)], 1 for r_ss ≥ ½: J_b with C = 1.35 laminar,
/// 1.25 turbulent; R_b with C = 4.5 laminar, 3.7 turbulent.
pub fn bypass_factor(bypass_fraction: f64, r_ss: f64, c: f64) -> f64 {
    if r_ss >= 0.5 {
        1.0
    } else {
        (-c * bypass_fraction * (1.0 - (2.0 * r_ss).cbrt())).exp()
    }
}

/// Unequal end spacing J_s = [(N_b − 1) + L_i*^(1−n) + L_o*^(1−n)]/[(N_b − 1) + L_i* + L_o*],
/// L* = end spacing / central spacing; n = 0.6 turbulent, ⅓ laminar.
pub fn end_spacing_factor(baffles: f64, ends: [f64; 2], n: f64) -> f64 {
    ((baffles - 1.0) + ends[0].powf(1.0 - n) + ends[1].powf(1.0 - n)) / ((baffles - 1.0) + ends[0] + ends[1])
}

/// Adverse laminar gradient J_r: (10/N_c)^0.18 for Re ≤ 20, linear in Re to 1 at Re = 100,
/// 1 above; not below 0.4. N_c = (N_tcc + N_tcw)(N_b + 1), the rows crossed in the shell.
pub fn laminar_gradient_factor(re: f64, rows_crossed_in_shell: f64) -> f64 {
    let j_rl = (10.0 / rows_crossed_in_shell).powf(0.18);
    if re <= 20.0 {
        j_rl
    } else if re < 100.0 {
        j_rl + (20.0 - re) / 80.0 * (j_rl - 1.0)
    } else {
        1.0
    }
    .max(0.4)
}

/// Taborek's correction factors and pressure-drop factors at one Reynolds number.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[allow(non_snake_case)]
pub struct BellFactors {
    /// Baffle cut and spacing (window) J_c = 0.55 + 0.72 F_c.
    pub J_c: f64,
    /// Baffle leakage J_l = 0.44(1 − r_s) + [1 − 0.44(1 − r_s)] exp(−2.2 r_lm).
    pub J_l: f64,
    /// Bundle bypass J_b = exp[−C_bh F_sbp (1 − (2r_ss)^⅓)], 1 for r_ss ≥ ½; C_bh = 1.35
    /// laminar (Re < 100), 1.25 turbulent.
    pub J_b: f64,
    /// Unequal end spacing J_s = [(N_b − 1) + L_i*^(1−n) + L_o*^(1−n)]/[(N_b − 1) + L_i* + L_o*],
    /// L* = L_b,end/L_bc, n = 0.6 turbulent, ⅓ laminar.
    pub J_s: f64,
    /// Adverse laminar gradient J_r: (10/N_c)^0.18 for Re ≤ 20, linear to 1 at Re = 100,
    /// 1 above; N_c = (N_tcc + N_tcw)(N_b + 1); not below 0.4.
    pub J_r: f64,
    /// J_c J_l J_b J_s J_r.
    pub J_total: f64,
    /// Leakage on pressure drop R_l = exp[−1.33(1 + r_s) r_lm^p], p = −0.15(1 + r_s) + 0.8.
    pub R_l: f64,
    /// Bypass on pressure drop R_b = exp[−C_bp F_sbp (1 − (2r_ss)^⅓)], C_bp = 4.5 laminar,
    /// 3.7 turbulent.
    pub R_b: f64,
    /// End spacing on the end zones' pressure drop, each end (L_bc/L_b,end)^(2−n'), n' = 0.2
    /// turbulent, 1 laminar (inlet, outlet).
    pub R_s: [f64; 2],
}

/// Shell-side pressure drop of one shell by zone (Pa) and of all shells.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[allow(non_snake_case)]
pub struct ShellZones {
    /// Ideal crossflow drop of one central section Δp_bi = 2 f N_tcc G²/ρ (μ_w/μ)^0.14.
    pub ideal_crossflow_section_Pa: f64,
    /// Ideal drop of one window Δp_wi.
    pub ideal_window_Pa: f64,
    /// Central crossflow sections (N_b − 1) Δp_bi R_b R_l.
    pub crossflow_Pa: f64,
    /// Windows N_b Δp_wi R_l.
    pub windows_Pa: f64,
    /// Inlet and outlet end zones Δp_bi (1 + N_tcw/N_tcc) R_b R_s (each).
    pub end_zones_Pa: f64,
    /// One shell: the three together.
    pub shell_Pa: f64,
    /// All shells in series.
    pub total_Pa: f64,
}

/// Weight of the turbulent form at Re (0 laminar below 95, 1 turbulent above 105, linear
/// in ln Re between): Taborek switches at Re = 100, which is blended here like the table rows.
fn turbulent_weight(re: f64) -> f64 {
    let (lo, hi) = (LAMINAR_BELOW * (1.0 - SWITCH_BLEND), LAMINAR_BELOW * (1.0 + SWITCH_BLEND));
    ((re.max(1e-300) / lo).ln() / (hi / lo).ln()).clamp(0.0, 1.0)
}

/// The Bell–Delaware shell-side method on one bundle geometry.
#[derive(Debug, Clone, PartialEq)]
pub struct BellDelaware {
    /// The shell and bundle.
    pub bundle: ShellBundle,
    /// Its derived areas (computed once).
    pub areas: BundleAreas,
}

/// Stated uncertainty of the Bell–Delaware method, as published (Taborek, HEDH §3.3: h
/// within about ±15 % and Δp within about ±25 % … +50 % for most well-built units \[M\]).
pub const BELL_DELAWARE_UNCERTAINTY: &str = "Bell–Delaware: shell-side h typically within ±15–25 % and Δp within ±25–50 % of measured values for well-built exchangers (Taborek, HEDH §3.3); poorer for large clearances or unusual baffling";

/// Stated uncertainty of Kern's method (Kern 1950; Taborek's comparisons: Kern is not
/// conservative for laminar flow and ignores leakage and bypass \[M\]).
pub const KERN_UNCERTAINTY: &str =
    "Kern: no leakage or bypass streams; shell-side h often off by −50 … +100 % and Δp worse (Taborek, HEDH §3.3): a screening estimate only";

impl BellDelaware {
    /// The method on `bundle`.
    pub fn new(bundle: ShellBundle) -> Self {
        let areas = bundle.areas();
        Self { bundle, areas }
    }

    /// Shell-side Reynolds number d ṁ/(μ S_m).
    pub fn reynolds(&self, mass_flow_kg_s: f64, viscosity: f64) -> f64 {
        self.bundle.tube_outer_diameter_m * mass_flow_kg_s.abs() / (viscosity * self.areas.crossflow_area_m2)
    }

    fn pitch_ratio(&self) -> f64 {
        self.bundle.tube_pitch_m / self.bundle.tube_outer_diameter_m
    }

    /// The correction factors at Re.
    pub fn factors(&self, re: f64) -> BellFactors {
        let a = &self.areas;
        let b = &self.bundle;
        let w = turbulent_weight(re);
        let mix = |lam: f64, turb: f64| lam + w * (turb - lam);
        let j_c = baffle_cut_factor(a.crossflow_tube_fraction);
        let j_l = leakage_factor(a.r_s, a.r_lm);
        let j_b = mix(bypass_factor(a.bypass_fraction, a.r_ss, 1.35), bypass_factor(a.bypass_fraction, a.r_ss, 1.25));
        let nb = b.baffles as f64;
        let ends = b.end_spacings_m.map(|l| l / b.central_spacing_m);
        let j_s = mix(end_spacing_factor(nb, ends, 1.0 / 3.0), end_spacing_factor(nb, ends, 0.6));
        let j_r = laminar_gradient_factor(re, (a.rows_crossed + a.window_rows) * (nb + 1.0));
        let (r_l, r_b) =
            (leakage_pressure_factor(a.r_s, a.r_lm), mix(bypass_factor(a.bypass_fraction, a.r_ss, 4.5), bypass_factor(a.bypass_fraction, a.r_ss, 3.7)));
        let r_s = ends.map(|e| mix((1.0 / e).powf(2.0 - 1.0), (1.0 / e).powf(2.0 - 0.2)));
        BellFactors { J_c: j_c, J_l: j_l, J_b: j_b, J_s: j_s, J_r: j_r, J_total: j_c * j_l * j_b * j_s * j_r, R_l: r_l, R_b: r_b, R_s: r_s }
    }

    /// Ideal-bank h = j cp G Pr^(−⅔) (μ/μ_w)^0.14 written as j Re Pr^⅓ k/d (μ/μ_w)^0.14, so
    /// it is finite as the flow stops; `mu_ratio` = μ_b/μ_w. W/(m²·K).
    pub fn ideal_h(&self, re: f64, pr: f64, conductivity: f64, mu_ratio: f64) -> f64 {
        let (j, _) = ideal_bank(self.bundle.layout, re, self.pitch_ratio());
        j * re * pr.cbrt() * conductivity / self.bundle.tube_outer_diameter_m * mu_ratio.powf(0.14)
    }

    /// Pressure drop by zone at mass flow `m` (kg/s), density `rho`, viscosity `mu` and
    /// μ_b/μ_w = `mu_ratio`.
    pub fn zones(&self, m: f64, rho: f64, mu: f64, mu_ratio: f64) -> ShellZones {
        let a = &self.areas;
        let b = &self.bundle;
        let re = self.reynolds(m, mu);
        let fac = self.factors(re);
        let (_, f) = ideal_bank(b.layout, re, self.pitch_ratio());
        let g = m.abs() / a.crossflow_area_m2;
        let dp_bi = 2.0 * f * a.rows_crossed * g * g / rho * mu_ratio.powf(-0.14);
        // Window: turbulent (2 + 0.6 N_tcw) ṁ²/(2ρ S_m S_w); laminar
        // 26 μ ṁ/(ρ √(S_m S_w)) [N_tcw/(p_t − d) + L_bc/D_w²] + ṁ²/(ρ S_m S_w).
        let smsw = a.crossflow_area_m2 * a.window_area_m2;
        let turb = (2.0 + 0.6 * a.window_rows) * m * m / (2.0 * rho * smsw);
        let lam = 26.0 * mu * m.abs() / (rho * smsw.sqrt())
            * (a.window_rows / (b.tube_pitch_m - b.tube_outer_diameter_m) + b.central_spacing_m / a.window_hydraulic_diameter_m.powi(2))
            + m * m / (rho * smsw);
        let w = turbulent_weight(re);
        let dp_wi = lam + w * (turb - lam);
        let nb = b.baffles as f64;
        let crossflow = (nb - 1.0) * dp_bi * fac.R_b * fac.R_l;
        let windows = nb * dp_wi * fac.R_l;
        let end_zones = dp_bi * (1.0 + a.window_rows / a.rows_crossed) * fac.R_b * (fac.R_s[0] + fac.R_s[1]);
        let shell = crossflow + windows + end_zones;
        ShellZones {
            ideal_crossflow_section_Pa: dp_bi,
            ideal_window_Pa: dp_wi,
            crossflow_Pa: crossflow,
            windows_Pa: windows,
            end_zones_Pa: end_zones,
            shell_Pa: shell,
            total_Pa: shell * b.shells as f64,
        }
    }

    /// Inside the published ranges: 1 ≤ Re ≤ 10⁵ (the span of the ideal-bank curves).
    pub fn in_range(re: f64) -> bool {
        (1.0..=1e5).contains(&re)
    }
}

/// Floor of the shell-side Nusselt number (on d) as the flow stops: conduction from a
/// cylinder into fluid at rest, as for a tube bank (see [`STAGNANT_CYLINDER_NU`]).
fn with_stagnant_floor(h: f64, conductivity: f64, d: f64) -> f64 {
    let h0 = STAGNANT_CYLINDER_NU * conductivity / d;
    (h.powi(3) + h0.powi(3)).cbrt()
}

fn wall_viscosity_ratio(i: &FilmInput) -> f64 {
    let mu_w = i.fluid.props(i.wall_c).viscosity;
    if mu_w > 0.0 {
        i.props.viscosity / mu_w
    } else {
        1.0
    }
}

/// What a shell-side method reports about one operating point (summary.json).
#[derive(Debug, Clone, Serialize)]
#[allow(non_snake_case)]
pub struct ShellRating {
    /// "bell_delaware" or "kern".
    pub method: &'static str,
    /// Bulk temperature the rating is evaluated at (mean of inlet and outlet), °C.
    pub at_bulk_C: f64,
    /// Mean wall temperature on the shell face used for μ_w, °C.
    pub at_wall_C: f64,
    /// Shell-side Reynolds number of the method.
    pub reynolds: f64,
    /// Ideal (uncorrected) h, W/(m²·K) (Bell–Delaware).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ideal_h_W_m2K: Option<f64>,
    /// Shell-side h, W/(m²·K).
    pub h_W_m2K: f64,
    /// Correction factors (Bell–Delaware).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub factors: Option<BellFactors>,
    /// Pressure drop by zone (Bell–Delaware).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub zones: Option<ShellZones>,
    /// Shell-side pressure drop of all shells at this point, Pa (before nozzles).
    pub pressure_drop_Pa: f64,
    /// Derived areas and counts (Bell–Delaware).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub areas: Option<BundleAreas>,
    /// Baffles per shell and shells.
    pub baffles_per_shell: usize,
    /// Shells in series.
    pub shells: usize,
    /// The method's stated uncertainty.
    pub stated_uncertainty: &'static str,
}

impl FilmCorrelation for BellDelaware {
    fn name(&self) -> &'static str {
        "bell_delaware"
    }
    fn film(&self, i: &FilmInput) -> FilmResult {
        let re = self.reynolds(i.mass_flow_kg_s, i.props.viscosity);
        let h = self.ideal_h(re, i.props.prandtl(), i.props.conductivity, wall_viscosity_ratio(i)) * self.factors(re).J_total;
        let d = self.bundle.tube_outer_diameter_m;
        let h = with_stagnant_floor(h, i.props.conductivity, d);
        FilmResult::bare(h, Some(re), Some(h * d / i.props.conductivity), Self::in_range(re))
    }
    fn uses_wall_temperature(&self) -> bool {
        true
    }
    fn validity(&self) -> String {
        "Bell–Delaware (Taborek) 1 ≤ Re_s ≤ 10⁵, segmental baffles cut 15–45 % of D_s".into()
    }
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        vec![(1.0, 1e5)]
    }
    /// The equivalent Darcy factor on the channel (S_m, d, one shell length per shell) that
    /// reproduces the zone sum: every zone scales as G²/ρ at fixed Re.
    fn darcy_friction(&self, channel: &Channel, reynolds: f64) -> Option<f64> {
        self.darcy_friction_at(channel, reynolds, 1.0)
    }
    fn darcy_friction_at(&self, channel: &Channel, reynolds: f64, mu_ratio: f64) -> Option<f64> {
        let d = self.bundle.tube_outer_diameter_m;
        let sm = self.areas.crossflow_area_m2;
        // Zones at G = 1 kg/(m²s), ρ = 1 kg/m³ and the μ giving this Re.
        let re = reynolds.max(1e-9);
        let mu = d / re; // μ = G d/Re with G = 1
        let z = self.zones(sm, 1.0, mu, mu_ratio);
        Some(z.total_Pa * 2.0 * d / channel.flow_length_m)
    }
    fn shell_rating(&self, i: &FilmInput) -> Option<ShellRating> {
        let re = self.reynolds(i.mass_flow_kg_s, i.props.viscosity);
        let ratio = wall_viscosity_ratio(i);
        let ideal = self.ideal_h(re, i.props.prandtl(), i.props.conductivity, ratio);
        let factors = self.factors(re);
        let zones = self.zones(i.mass_flow_kg_s, i.props.density, i.props.viscosity, ratio);
        Some(ShellRating {
            method: "bell_delaware",
            at_bulk_C: i.bulk_c,
            at_wall_C: i.wall_c,
            reynolds: re,
            ideal_h_W_m2K: Some(ideal),
            h_W_m2K: self.film(i).h,
            factors: Some(factors),
            zones: Some(zones),
            pressure_drop_Pa: zones.total_Pa,
            areas: Some(self.areas),
            baffles_per_shell: self.bundle.baffles,
            shells: self.bundle.shells,
            stated_uncertainty: BELL_DELAWARE_UNCERTAINTY,
        })
    }
    fn stated_accuracy(&self) -> Option<super::film::StatedAccuracy> {
        Some(super::film::StatedAccuracy { percent: 25.0, source: "Taborek, HEDH §3.3: Bell–Delaware h within ±15–25 % (the upper figure used)" })
    }
}

/// Kern's method: Nu = 0.36 Re^0.55 Pr^⅓ (μ/μ_w)^0.14 on the equivalent diameter D_e, with
/// G = ṁ/A_s, A_s = D_s (p_t − d) L_bc/p_t, valid 2·10³ ≤ Re ≤ 10⁶; Δp = f G² D_s (N_b + 1)/
/// (2ρ D_e (μ/μ_w)^0.14) per shell with f = exp(0.576 − 0.19 ln Re), 400 ≤ Re ≤ 10⁶ (Kern,
/// *Process Heat Transfer*, 1950, ch. 7; the f fit as in Kakaç & Liu, *Heat Exchangers*,
/// 2nd ed., Eq. 8.22 \[M\]).
#[derive(Debug, Clone, PartialEq)]
pub struct Kern {
    /// The shell and bundle.
    pub bundle: ShellBundle,
}

impl Kern {
    /// Re = D_e ṁ/(μ A_s).
    pub fn reynolds(&self, mass_flow_kg_s: f64, viscosity: f64) -> f64 {
        self.bundle.kern_equivalent_diameter_m() * mass_flow_kg_s.abs() / (viscosity * self.bundle.kern_flow_area_m2())
    }

    /// Kern's friction factor exp(0.576 − 0.19 ln Re).
    pub fn friction(re: f64) -> f64 {
        (0.576 - 0.19 * re.max(1e-9).ln()).exp()
    }

    /// Pressure drop of all shells at mass flow `m`, density `rho`, viscosity `mu`, μ_b/μ_w.
    pub fn pressure_drop(&self, m: f64, rho: f64, mu: f64, mu_ratio: f64) -> f64 {
        let b = &self.bundle;
        let g = m.abs() / b.kern_flow_area_m2();
        let f = Self::friction(self.reynolds(m, mu));
        b.shells as f64 * f * g * g * b.shell_diameter_m * (b.baffles as f64 + 1.0) / (2.0 * rho * b.kern_equivalent_diameter_m() * mu_ratio.powf(0.14))
    }
}

impl FilmCorrelation for Kern {
    fn name(&self) -> &'static str {
        "kern"
    }
    fn film(&self, i: &FilmInput) -> FilmResult {
        let re = self.reynolds(i.mass_flow_kg_s, i.props.viscosity);
        let de = self.bundle.kern_equivalent_diameter_m();
        let nu = 0.36 * re.powf(0.55) * i.props.prandtl().cbrt() * wall_viscosity_ratio(i).powf(0.14);
        let h = with_stagnant_floor(nu * i.props.conductivity / de, i.props.conductivity, self.bundle.tube_outer_diameter_m);
        FilmResult::bare(h, Some(re), Some(h * de / i.props.conductivity), (2e3..=1e6).contains(&re))
    }
    fn uses_wall_temperature(&self) -> bool {
        true
    }
    fn validity(&self) -> String {
        "Kern 2·10³ ≤ Re ≤ 10⁶ on the equivalent diameter (no leakage or bypass)".into()
    }
    fn reynolds_bands(&self) -> Vec<(f64, f64)> {
        vec![(2e3, 1e6)]
    }
    fn friction_in_range(&self, reynolds: f64) -> bool {
        (400.0..=1e6).contains(&reynolds)
    }
    fn friction_validity(&self) -> Option<String> {
        Some("Kern friction fit 400 ≤ Re ≤ 10⁶".into())
    }
    fn darcy_friction(&self, channel: &Channel, reynolds: f64) -> Option<f64> {
        self.darcy_friction_at(channel, reynolds, 1.0)
    }
    fn darcy_friction_at(&self, channel: &Channel, reynolds: f64, mu_ratio: f64) -> Option<f64> {
        // f_D (L/D_e) G²/(2ρ) = N_s f G² D_s (N_b + 1)/(2ρ D_e φ) with L = N_s × shell length.
        let b = &self.bundle;
        let per_shell_length = channel.flow_length_m / b.shells as f64;
        Some(Self::friction(reynolds) * b.shell_diameter_m * (b.baffles as f64 + 1.0) / per_shell_length / mu_ratio.powf(0.14))
    }
    fn shell_rating(&self, i: &FilmInput) -> Option<ShellRating> {
        let re = self.reynolds(i.mass_flow_kg_s, i.props.viscosity);
        let dp = self.pressure_drop(i.mass_flow_kg_s, i.props.density, i.props.viscosity, wall_viscosity_ratio(i));
        Some(ShellRating {
            method: "kern",
            at_bulk_C: i.bulk_c,
            at_wall_C: i.wall_c,
            reynolds: re,
            ideal_h_W_m2K: None,
            h_W_m2K: self.film(i).h,
            factors: None,
            zones: None,
            pressure_drop_Pa: dp,
            areas: None,
            baffles_per_shell: self.bundle.baffles,
            shells: self.bundle.shells,
            stated_uncertainty: KERN_UNCERTAINTY,
        })
    }
    fn stated_accuracy(&self) -> Option<super::film::StatedAccuracy> {
        Some(super::film::StatedAccuracy {
            percent: 50.0,
            source: "Taborek, HEDH §3.3: Kern's h off by −50 … +100 % (±50 % used; the high side is understated)",
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn bundle() -> ShellBundle {
        ShellBundle {
            shell_diameter_m: 0.591,
            tube_outer_diameter_m: 0.019,
            tube_pitch_m: 0.02375,
            layout: PitchLayout::Triangular30,
            tubes: 600,
            bundle_diameter_m: 0.565,
            baffle_cut: 0.25,
            central_spacing_m: 0.25,
            end_spacings_m: [0.25, 0.25],
            baffles: 19,
            shell_baffle_clearance_m: 0.0048,
            tube_baffle_clearance_m: 0.0008,
            sealing_strip_pairs: 2,
            pass_lane_width_m: 0.0,
            shells: 1,
        }
    }

    /// Neighbouring rows of the table meet within 5 % at each switch (the published curves are
    /// continuous; a transcription slip shows as a jump), and the blend makes them meet
    /// exactly (Newton needs it).
    #[test]
    fn table_rows_meet_at_switches() {
        for bank in [&BANK_30, &BANK_45, &BANK_90] {
            for (k, &s) in BANK_SWITCHES.iter().enumerate() {
                let (jh, fh) = bank.at_row(k, s, 1.25);
                let (jl, fl) = bank.at_row(k + 1, s, 1.25);
                assert!((jl / jh - 1.0).abs() < 0.055 && (fl / fh - 1.0).abs() < 0.055, "Re {s}: j {jl}/{jh}, f {fl}/{fh}");
            }
        }
    }

    /// The ideal-bank rows blend continuously at every switch (Newton needs it).
    #[test]
    fn ideal_bank_is_continuous_at_switches() {
        for layout in [PitchLayout::Triangular30, PitchLayout::RotatedSquare45, PitchLayout::Square90] {
            for s in BANK_SWITCHES {
                for edge in [1.0 - SWITCH_BLEND, 1.0 + SWITCH_BLEND] {
                    let (a, b) = (ideal_bank(layout, s * edge * (1.0 - 1e-9), 1.25), ideal_bank(layout, s * edge * (1.0 + 1e-9), 1.25));
                    assert!((a.0 / b.0 - 1.0).abs() < 1e-6 && (a.1 / b.1 - 1.0).abs() < 1e-6, "{layout:?} at {s}");
                }
            }
        }
    }

    /// Equal end spacings give J_s = 1 and R_s = 1 each (Taborek's definitions).
    #[test]
    fn equal_spacing_factors_are_one() {
        let f = BellDelaware::new(bundle()).factors(1e4);
        assert!((f.J_s - 1.0).abs() < 1e-12 && (f.R_s[0] - 1.0).abs() < 1e-12 && (f.R_s[1] - 1.0).abs() < 1e-12);
        assert_eq!(f.J_r, 1.0);
    }

    /// The equivalent Darcy factor reproduces the zone sum through the channel formula.
    #[test]
    fn darcy_equivalent_reproduces_zones() {
        let bd = BellDelaware::new(bundle());
        let sm = bd.areas.crossflow_area_m2;
        let ch = Channel::duct(sm, 0.019, 1.0, super::super::LaminarConstants::TUBE, 4.0);
        let (m, rho, mu) = (20.0, 990.0, 6e-4);
        let re = bd.reynolds(m, mu);
        let f = bd.darcy_friction_at(&ch, re, 1.1).unwrap();
        let g = m / sm;
        let dp = f * 4.0 / 0.019 * g * g / (2.0 * rho);
        assert!((dp / bd.zones(m, rho, mu, 1.1).total_Pa - 1.0).abs() < 1e-12);
    }
}
