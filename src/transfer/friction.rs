//! Darcy friction factors for pressure drop.

/// Laminar fully developed circular tube: f = 64/Re (Hagen–Poiseuille).
pub fn darcy_laminar(re: f64) -> f64 {
    64.0 / re
}

/// Churchill (1977), all regimes in one continuous formula, Darcy:
/// f = 8[(8/Re)^12 + (A + B)^−1.5]^(1/12), A = [2.457 ln(1/((7/Re)^0.9 + 0.27 ε/D))]^16,
/// B = (37530/Re)^16. Chem. Eng. 84(24) (1977) 91–92. Used for every internal channel:
/// it is continuous through transition, so Newton and the pressure march never meet a jump.
pub fn darcy_churchill(re: f64, relative_roughness: f64) -> f64 {
    darcy_churchill_shaped(re, relative_roughness, 64.0)
}

/// Churchill (1977) with the laminar term of a non-circular channel: the laminar asymptote
/// 64/Re of the original is replaced by the channel's own f·Re/Re (96 for parallel plates;
/// the annulus values of Shah & London), the turbulent terms unchanged on the hydraulic
/// diameter (common practice). `f_re = 64` is Churchill's formula exactly.
pub fn darcy_churchill_shaped(re: f64, relative_roughness: f64, f_re: f64) -> f64 {
    let a = (2.457 * (1.0 / ((7.0 / re).powf(0.9) + 0.27 * relative_roughness)).ln()).powi(16);
    let b = (37530.0 / re).powi(16);
    8.0 * ((f_re / 8.0 / re).powi(12) + (a + b).powf(-1.5)).powf(1.0 / 12.0)
}

/// Colebrook (1939), turbulent, Darcy: 1/√f = −2 log10(ε/(3.7D) + 2.51/(Re √f)), solved by
/// fixed-point iteration on 1/√f (converges in a few steps from the Swamee–Jain start).
pub fn darcy_colebrook(re: f64, relative_roughness: f64) -> f64 {
    let mut x = -2.0 * (relative_roughness / 3.7 + 5.74 / re.powf(0.9)).log10(); // 1/√f
    for _ in 0..50 {
        let next = -2.0 * (relative_roughness / 3.7 + 2.51 * x / re).log10();
        if (next - x).abs() < 1e-14 * x {
            x = next;
            break;
        }
        x = next;
    }
    1.0 / (x * x)
}
