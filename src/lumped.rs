//! The lumped hand methods: effectiveness–NTU and LMTD with one overall UA and properties
//! at the mean stream temperatures, exactly as an engineer would do it by hand.
//!
//! Formulas: Incropera et al., *Fundamentals of Heat and Mass Transfer*, Table 11.3 and
//! Eqs. 11.14–11.15 (LMTD). Pure functions; no I/O.

use crate::model::{Arrangement, Exchanger, Layout, Mixing, Side};
use serde::Serialize;

/// Effectiveness for `ntu` and capacity ratio `cr` (0 ≤ cr ≤ 1); `min_side` is the stream
/// with the smaller capacity rate (it matters where one stream is mixed and the other not).
///
/// Network arrangements: crossflow by the exact series (both unmixed) or the one-mixed and
/// both-mixed forms; shell-and-tube by Incropera Eq. 11.30a per shell (exact for two tube
/// passes, close for 4, 6, …) and Eq. 11.31 for shells in series; cross-counterflow as its
/// passes in series in overall counterflow (Eq. 11.31 with the pass effectiveness), exact
/// when both streams are mixed between passes — see [`closed_form_is_exact`].
pub fn effectiveness(arrangement: Arrangement, ntu: f64, cr: f64, min_side: Side) -> f64 {
    match arrangement {
        Arrangement::Counterflow => counterflow(ntu, cr),
        Arrangement::Parallel => (1.0 - (-ntu * (1.0 + cr)).exp()) / (1.0 + cr),
        Arrangement::Network(Layout::Crossflow(c)) => crossflow(ntu, cr, c.mixing(min_side), c.mixing(min_side.other())),
        Arrangement::Network(Layout::ShellAndTube(s)) => {
            let shells = s.shells.max(1) as f64;
            let per_shell = if s.tube_passes <= 1 { counterflow(ntu / shells, cr) } else { one_shell_pass(ntu / shells, cr) };
            in_series(per_shell, cr, s.shells.max(1))
        }
        Arrangement::Network(Layout::CrossCounterflow(c)) => {
            let passes = c.passes.max(1);
            // Within a pass the passing stream is one lane across the depth when the pass is
            // one cell deep (a tube row), else unmixed.
            let passing = if c.cells_across <= 1 { Mixing::Mixed } else { Mixing::Unmixed };
            let (min_mix, max_mix) = if c.passing == min_side { (passing, c.through) } else { (c.through, passing) };
            in_series(crossflow(ntu / passes as f64, cr, min_mix, max_mix), cr, passes)
        }
    }
}

/// Whether [`effectiveness`] is the exact solution of the arrangement's idealised model
/// (constant properties and U), or an approximation of it.
pub fn closed_form_is_exact(arrangement: Arrangement) -> bool {
    match arrangement {
        Arrangement::Counterflow | Arrangement::Parallel | Arrangement::Network(Layout::Crossflow(_)) => true,
        Arrangement::Network(Layout::ShellAndTube(s)) => s.tube_passes <= 2,
        Arrangement::Network(Layout::CrossCounterflow(c)) => c.passes == 1 || (c.mixed_between_passes && c.through == Mixing::Mixed),
    }
}

/// Counterflow (Incropera Table 11.3).
pub fn counterflow(ntu: f64, cr: f64) -> f64 {
    if (1.0 - cr).abs() < 1e-9 {
        ntu / (1.0 + ntu)
    } else {
        let e = (-ntu * (1.0 - cr)).exp();
        (1.0 - e) / (1.0 - cr * e)
    }
}

/// Single-pass crossflow with the C_min stream `min_mix` and the C_max stream `max_mix`
/// (Incropera Table 11.3; Kays & London). Both unmixed: the exact series of Mason (1954),
/// ε = (1/(Cr·NTU)) Σₙ Pₙ(NTU)·Pₙ(Cr·NTU), Pₙ(y) = 1 − e^(−y) Σ_{m≤n} y^m/m!.
pub fn crossflow(ntu: f64, cr: f64, min_mix: Mixing, max_mix: Mixing) -> f64 {
    if cr <= 1e-12 {
        return -(-ntu).exp_m1();
    }
    match (min_mix, max_mix) {
        (Mixing::Unmixed, Mixing::Unmixed) => crossflow_unmixed(ntu, cr),
        // C_max mixed, C_min unmixed.
        (Mixing::Unmixed, Mixing::Mixed) => -(-cr * -(-ntu).exp_m1()).exp_m1() / cr,
        // C_min mixed, C_max unmixed.
        (Mixing::Mixed, Mixing::Unmixed) => -(-(-(-cr * ntu).exp_m1()) / cr).exp_m1(),
        // Both mixed: ε = [1/(1 − e^(−NTU)) + Cr/(1 − e^(−Cr·NTU)) − 1/NTU]^(−1).
        (Mixing::Mixed, Mixing::Mixed) => 1.0 / (1.0 / -(-ntu).exp_m1() + cr / -(-cr * ntu).exp_m1() - 1.0 / ntu),
    }
}

/// Mason's exact series for crossflow with both streams unmixed. The Poisson tails Pₙ are
/// summed from the top down, so no term loses digits to cancellation.
fn crossflow_unmixed(ntu: f64, cr: f64) -> f64 {
    let tails = |y: f64| -> Vec<f64> {
        let top = (y + 12.0 * y.sqrt() + 40.0).ceil() as usize;
        // Poisson probabilities e^(−y) y^m / m! by logarithms (no overflow for large y).
        let mut ln_fact = 0.0;
        let pmf: Vec<f64> = (0..=top)
            .map(|m| {
                if m > 0 {
                    ln_fact += (m as f64).ln();
                }
                (-y + m as f64 * y.ln() - ln_fact).exp()
            })
            .collect();
        // Pₙ = Σ_{m > n} pmf[m].
        let mut out = vec![0.0; top + 1];
        let mut acc = 0.0;
        for n in (0..=top).rev() {
            out[n] = acc;
            acc += pmf[n];
        }
        out
    };
    let (a, b) = (tails(ntu), tails(cr * ntu));
    let sum: f64 = a.iter().zip(b.iter().chain(std::iter::repeat(&0.0))).map(|(x, y)| x * y).sum();
    sum / (cr * ntu)
}

/// One shell pass with an even number of tube passes (Incropera Eq. 11.30a):
/// ε₁ = 2{1 + Cr + √(1+Cr²)·(1 + e^(−NTU√(1+Cr²)))/(1 − e^(−NTU√(1+Cr²)))}^(−1).
pub fn one_shell_pass(ntu: f64, cr: f64) -> f64 {
    let root = (1.0 + cr * cr).sqrt();
    let e = (-ntu * root).exp();
    2.0 / (1.0 + cr + root * (1.0 + e) / -(-ntu * root).exp_m1())
}

/// `n` identical exchangers of effectiveness `eps1` in series, overall counterflow, both
/// streams mixed between them (Incropera Eq. 11.31a; Cr = 1: nε₁/(1 + (n − 1)ε₁)).
pub fn in_series(eps1: f64, cr: f64, n: usize) -> f64 {
    if n <= 1 {
        return eps1;
    }
    if (1.0 - cr).abs() < 1e-9 {
        let n = n as f64;
        return n * eps1 / (1.0 + (n - 1.0) * eps1);
    }
    let k = ((1.0 - eps1 * cr) / (1.0 - eps1)).powi(n as i32);
    (k - 1.0) / (k - cr)
}

/// Log-mean of two end temperature differences (K); their arithmetic mean when they are
/// equal to within 1e-9 relative. None if either is not positive.
pub fn lmtd(dt1: f64, dt2: f64) -> Option<f64> {
    if !(dt1 > 0.0 && dt2 > 0.0) {
        return None;
    }
    if ((dt1 - dt2) / dt1).abs() < 1e-9 {
        return Some(0.5 * (dt1 + dt2));
    }
    Some((dt1 - dt2) / (dt1 / dt2).ln())
}

/// End temperature differences for the arrangement, given the four terminal temperatures.
/// Networks use the counterflow differences, as the LMTD method with a correction factor F
/// does: their effective UA (duty / LMTD) is then F·UA.
pub fn end_differences(arrangement: Arrangement, th_in: f64, th_out: f64, tc_in: f64, tc_out: f64) -> (f64, f64) {
    match arrangement {
        Arrangement::Parallel => (th_in - tc_in, th_out - tc_out),
        Arrangement::Counterflow | Arrangement::Network(_) => (th_in - tc_out, th_out - tc_in),
    }
}

/// The lumped rating of an exchanger.
#[derive(Debug, Clone, Serialize)]
pub struct LumpedResult {
    /// Duty, W.
    #[serde(rename = "duty_W")]
    pub duty_w: f64,
    /// Hot outlet, °C.
    #[serde(rename = "hot_outlet_C")]
    pub hot_outlet_c: f64,
    /// Cold outlet, °C.
    #[serde(rename = "cold_outlet_C")]
    pub cold_outlet_c: f64,
    /// Effectiveness.
    pub effectiveness: f64,
    /// Number of transfer units UA/C_min.
    pub ntu: f64,
    /// C_min/C_max.
    pub capacity_ratio: f64,
    /// Overall conductance from properties at the mean temperatures, W/K.
    #[serde(rename = "UA_W_K")]
    pub ua_w_k: f64,
    /// LMTD of the lumped terminal temperatures, K (None if undefined).
    #[serde(rename = "lmtd_K")]
    pub lmtd_k: Option<f64>,
    /// UA × LMTD, W: equals the duty (the LMTD method's answer).
    #[serde(rename = "lmtd_duty_W")]
    pub lmtd_duty_w: Option<f64>,
    /// Mean hot temperature the properties were taken at, °C.
    #[serde(rename = "hot_mean_C")]
    pub hot_mean_c: f64,
    /// Mean cold temperature the properties were taken at, °C.
    #[serde(rename = "cold_mean_C")]
    pub cold_mean_c: f64,
}

/// Rate the exchanger by ε–NTU with one UA and properties at the mean stream temperatures.
/// The means depend on the outlets, so this repeats the hand calculation until the mean
/// temperatures settle (to 1e-9 K, at most 100 rounds), starting from the inlet values.
pub fn rate(ex: &Exchanger) -> LumpedResult {
    let (th_in, tc_in) = (ex.hot.inlet_c, ex.cold.inlet_c);
    let (mut th_mean, mut tc_mean) = (th_in, tc_in);
    let mut result = None;
    for _ in 0..100 {
        let c_hot = ex.hot.mass_flow_kg_s * ex.hot.fluid.props(th_mean).cp;
        let c_cold = ex.cold.mass_flow_kg_s * ex.cold.fluid.props(tc_mean).cp;
        let (c_min, c_max) = (c_hot.min(c_cold), c_hot.max(c_cold));
        let ua = ex.ua_per_length_at(th_mean, tc_mean) * ex.length_m;
        let (ntu, cr) = (ua / c_min, c_min / c_max);
        let min_side = if c_hot <= c_cold { Side::Hot } else { Side::Cold };
        let eps = effectiveness(ex.arrangement, ntu, cr, min_side);
        let duty = eps * c_min * (th_in - tc_in);
        let (th_out, tc_out) = (th_in - duty / c_hot, tc_in + duty / c_cold);
        let (dt1, dt2) = end_differences(ex.arrangement, th_in, th_out, tc_in, tc_out);
        let lm = lmtd(dt1, dt2);
        let (new_th, new_tc) = (0.5 * (th_in + th_out), 0.5 * (tc_in + tc_out));
        let settled = (new_th - th_mean).abs() < 1e-9 && (new_tc - tc_mean).abs() < 1e-9;
        result = Some(LumpedResult {
            duty_w: duty,
            hot_outlet_c: th_out,
            cold_outlet_c: tc_out,
            effectiveness: eps,
            ntu,
            capacity_ratio: cr,
            ua_w_k: ua,
            lmtd_k: lm,
            lmtd_duty_w: lm.map(|l| ua * l),
            hot_mean_c: th_mean,
            cold_mean_c: tc_mean,
        });
        if settled {
            break;
        }
        th_mean = new_th;
        tc_mean = new_tc;
    }
    result.expect("at least one round ran")
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The network closed forms against check values computed independently of this code
    /// (METHODS.md, "Arrangements beyond counter/parallel flow", values marked [C]).
    #[test]
    fn closed_forms_match_independent_check_values() {
        let u = Mixing::Unmixed;
        for (ntu, cr, reference) in [(1.0, 0.5, 0.54748983), (2.0, 1.0, 0.61424724), (4.0, 0.25, 0.93401982)] {
            assert!((crossflow(ntu, cr, u, u) - reference).abs() < 1e-8, "crossflow unmixed {ntu} {cr}");
        }
        for (ntu, cr, reference) in [(1.0, 0.5, 0.53993956), (2.0, 1.0, 0.55680967), (4.0, 0.25, 0.86403874)] {
            assert!((one_shell_pass(ntu, cr) - reference).abs() < 1e-8, "1-2 shell {ntu} {cr}");
        }
    }

    /// Limits every arrangement must reach (Incropera Eq. 11.35a: Cr → 0 gives 1 − e^(−NTU);
    /// one shell or pass in series is itself; Cr = 1 series form is the limit of the general one;
    /// the one-line crossflow approximation is within 1 % of the exact series, as its use as an
    /// engineering formula presumes — a fact of common practice).
    #[test]
    fn closed_forms_reach_their_limits() {
        let (u, m) = (Mixing::Unmixed, Mixing::Mixed);
        for ntu in [0.5, 2.0, 5.0] {
            let limit = 1.0 - f64::exp(-ntu);
            for (a, b) in [(u, u), (u, m), (m, u), (m, m)] {
                assert!((crossflow(ntu, 1e-9, a, b) - limit).abs() < 1e-7);
            }
            assert!((one_shell_pass(ntu, 1e-9) - limit).abs() < 1e-7);
        }
        assert_eq!(in_series(0.6, 0.5, 1), 0.6);
        assert!((in_series(0.6, 1.0 - 1e-7, 3) - in_series(0.6, 1.0, 3)).abs() < 1e-6);
        for (ntu, cr) in [(1.0, 0.5), (2.0, 1.0), (4.0, 0.25)] {
            let approx = 1.0 - ((f64::powf(ntu, 0.22) / cr) * ((-cr * f64::powf(ntu, 0.78)).exp() - 1.0)).exp();
            assert!((approx - crossflow(ntu, cr, u, u)).abs() < 0.01);
        }
        // Mixing can only lower ε: unmixed ≥ one mixed ≥ both mixed (Kays & London charts).
        for (ntu, cr) in [(1.0, 0.5), (3.0, 0.8)] {
            let (uu, um, mu, mm) = (crossflow(ntu, cr, u, u), crossflow(ntu, cr, u, m), crossflow(ntu, cr, m, u), crossflow(ntu, cr, m, m));
            assert!(uu > um && uu > mu && um > mm && mu > mm);
        }
    }
}
