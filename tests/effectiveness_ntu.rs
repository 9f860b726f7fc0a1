//! Constant-property grid results against the closed-form effectiveness–NTU relations.
//!
//! Reference: Incropera, DeWitt, Bergman, Lavine, *Fundamentals of Heat and Mass
//! Transfer*, 6th ed., Table 11.3 (counterflow Eq. 11.29a, parallel flow Eq. 11.28a)
//! [equation numbers from memory, M]; the forms are analytical solutions of the two
//! coupled energy balances. Check values marked [C] are from shared/METHODS.md, computed
//! from those formulas.

mod common;
use approx::assert_relative_eq;
use common::constant_exchanger;
use hxgrid::lumped;
use hxgrid::model::Arrangement::{self, Counterflow, Parallel};
use hxgrid::model::Side;
use hxgrid::solve::{solve_steady, SilentObserver, SteadySettings};
use hxgrid::study::{self, key_quantities, RatingOptions};

fn grid_effectiveness(arr: Arrangement, ntu: f64, cr: f64, cold_is_min: bool, cells: usize) -> f64 {
    let ex = constant_exchanger(arr, ntu, cr, cold_is_min);
    let s = solve_steady(&ex, &SteadySettings { cells, ..Default::default() }, &mut SilentObserver).unwrap();
    let q = key_quantities(&ex, &s).duty_w;
    let c_min = 2.0 * 4000.0;
    q / (c_min * (ex.hot.inlet_c - ex.cold.inlet_c))
}

/// Published check values (METHODS.md §1 [C], and the worked value 0.775 at N = 2,
/// C = 0.5 counterflow, 0.6335 parallel [V]).
#[test]
fn closed_form_matches_published_check_values() {
    let cases = [
        (0.5, 1.0, 0.564733, 0.517913),
        (0.5, 2.0, 0.774600, 0.633475),
        (0.5, 3.0, 0.874425, 0.659261),
        (1.0, 1.0, 0.500000, 0.432332),
        (1.0, 2.0, 0.666667, 0.490842),
        (1.0, 3.0, 0.750000, 0.498761),
        (0.0, 1.0, 0.632121, 0.632121),
        (0.0, 2.0, 0.864665, 0.864665),
        (0.0, 3.0, 0.950213, 0.950213),
    ];
    for (cr, ntu, cf, pf) in cases {
        assert_relative_eq!(lumped::effectiveness(Counterflow, ntu, cr, Side::Hot), cf, epsilon = 6e-7);
        assert_relative_eq!(lumped::effectiveness(Parallel, ntu, cr, Side::Hot), pf, epsilon = 6e-7);
    }
}

/// The fine-grid solution reproduces ε(NTU, Cr) to 1e-6 relative, for either stream as
/// C_min, including the Cr = 1 counterflow limit and Cr → 0 (one stream's capacity 10⁶
/// times the other's).
#[test]
fn fine_grid_reproduces_effectiveness_ntu() {
    for arr in [Counterflow, Parallel] {
        for (cr, ntu) in [(0.5, 1.0), (0.5, 3.0), (1.0, 2.0), (1.0, 3.0), (0.25, 0.5), (1e-6, 2.0)] {
            for cold_is_min in [false, true] {
                let exact = lumped::effectiveness(arr, ntu, cr, Side::Hot);
                let grid = grid_effectiveness(arr, ntu, cr, cold_is_min, 2000);
                assert_relative_eq!(grid, exact, max_relative = 1e-6);
            }
        }
    }
    // Cr → 0: every arrangement tends to 1 − exp(−NTU) (Incropera Eq. 11.35a [M]).
    let grid = grid_effectiveness(Counterflow, 2.0, 1e-6, false, 2000);
    assert_relative_eq!(grid, 1.0 - (-2.0f64).exp(), max_relative = 1e-5);
}

/// Cr = 1 counterflow: the temperature difference is uniform, the profiles are straight
/// lines, and the trapezoidal scheme is exact on any grid (ε = NTU/(1 + NTU)).
#[test]
fn balanced_counterflow_is_exact_on_a_coarse_grid() {
    let grid = grid_effectiveness(Counterflow, 2.0, 1.0, false, 3);
    assert_relative_eq!(grid, 2.0 / 3.0, max_relative = 1e-10);
}

/// Observed order of accuracy matches the scheme's formal order 2.
#[test]
fn observed_order_is_two() {
    for arr in [Counterflow, Parallel] {
        let ex = constant_exchanger(arr, 3.0, 0.5, false);
        let s = study::grid_study(&ex, &SteadySettings::default(), 10, 4).unwrap();
        let p = s.observed_order.duty.expect("differences above round-off");
        assert!((p - 2.0).abs() < 0.02, "{arr:?}: observed order {p}");
        // Richardson extrapolation from 80 cells is closer to exact than the 80-cell result.
        let exact = lumped::effectiveness(arr, 3.0, 0.5, Side::Hot) * 8000.0 * 80.0;
        let finest = s.levels.last().unwrap().values.duty_w;
        assert!((s.extrapolated.duty_w - exact).abs() < 0.01 * (finest - exact).abs());
    }
}

/// LMTD × UA equals the duty for constant properties (Incropera Eqs. 11.14, 11.15 [M]),
/// both in the lumped calculation and from the grid's terminal temperatures.
#[test]
fn lmtd_times_ua_equals_duty() {
    for arr in [Counterflow, Parallel] {
        let ex = constant_exchanger(arr, 1.5, 0.6, false);
        let r = study::rate("t", &ex, &SteadySettings { cells: 2000, ..Default::default() }, &RatingOptions::default(), &mut SilentObserver).unwrap();
        assert_relative_eq!(r.lumped.lmtd_duty_w.unwrap(), r.lumped.duty_w, max_relative = 1e-9);
        assert_relative_eq!(r.UA_W_K * r.lmtd_K.unwrap(), r.duty_W, max_relative = 1e-6);
        // Grid and lumped agree for constant properties.
        assert_relative_eq!(r.duty_W, r.lumped.duty_w, max_relative = 1e-6);
    }
}

/// LMTD of 60 K and 20 K end differences: 36.409569 K [C, METHODS.md §1].
#[test]
fn lmtd_check_value() {
    assert_relative_eq!(lumped::lmtd(60.0, 20.0).unwrap(), 36.409569, max_relative = 1e-7);
    assert_relative_eq!(lumped::lmtd(20.0, 20.0).unwrap(), 20.0);
    assert!(lumped::lmtd(-1.0, 20.0).is_none());
}

/// The other spatial schemes converge to the same closed-form effectiveness at their own
/// orders: first-order upwind (order 1) and MUSCL/van Albada TVD (order 2 on these smooth,
/// monotone profiles).
#[test]
fn upwind_and_tvd_schemes_converge_at_their_orders() {
    use hxgrid::model::Scheme;
    for arr in [Counterflow, Parallel] {
        for (scheme, lo, hi) in [(Scheme::Upwind, 0.9, 1.1), (Scheme::Tvd, 1.7, 2.3)] {
            let mut ex = constant_exchanger(arr, 2.0, 0.5, false);
            ex.scheme = scheme;
            let s = study::grid_study(&ex, &SteadySettings { max_iterations: 200, ..Default::default() }, 40, 4).unwrap();
            let p = s.observed_order.duty.expect("above round-off");
            assert!(p > lo && p < hi, "{arr:?} {scheme:?}: observed order {p}");
            let exact = lumped::effectiveness(arr, 2.0, 0.5, Side::Hot) * 8000.0 * 80.0;
            let finest = s.levels.last().unwrap().values.duty_w;
            assert!((finest - exact).abs() / exact < 2e-2, "{scheme:?}: {finest} vs {exact}");
        }
    }
}
