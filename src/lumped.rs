//! The lumped hand methods: effectiveness–NTU and LMTD with one overall UA and properties
//! at the mean stream temperatures, exactly as an engineer would do it by hand.
//!
//! Formulas: Incropera et al., *Fundamentals of Heat and Mass Transfer*, Table 11.3 and
//! Eqs. 11.14–11.15 (LMTD). Pure functions; no I/O.

use crate::model::{Arrangement, Exchanger};
use serde::Serialize;

/// Effectiveness for `ntu` and capacity ratio `cr` (0 ≤ cr ≤ 1).
pub fn effectiveness(arrangement: Arrangement, ntu: f64, cr: f64) -> f64 {
    match arrangement {
        Arrangement::Counterflow => {
            if (1.0 - cr).abs() < 1e-9 {
                ntu / (1.0 + ntu)
            } else {
                let e = (-ntu * (1.0 - cr)).exp();
                (1.0 - e) / (1.0 - cr * e)
            }
        }
        Arrangement::Parallel => (1.0 - (-ntu * (1.0 + cr)).exp()) / (1.0 + cr),
    }
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
pub fn end_differences(arrangement: Arrangement, th_in: f64, th_out: f64, tc_in: f64, tc_out: f64) -> (f64, f64) {
    match arrangement {
        Arrangement::Counterflow => (th_in - tc_out, th_out - tc_in),
        Arrangement::Parallel => (th_in - tc_in, th_out - tc_out),
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
        let eps = effectiveness(ex.arrangement, ntu, cr);
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
