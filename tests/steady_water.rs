//! Variable-property steady solves: energy closure, grid convergence at the expected
//! order, physical bounds, and the single-phase guard.

mod common;
use common::demo_case;
use hxgrid::case::parse_str;
use hxgrid::solve::{solve_steady, SilentObserver, SolveError, SteadySettings};
use hxgrid::study::{self, RatingOptions};

/// Energy balance closure: heat given up by the hot stream equals heat taken by the cold
/// stream to 1e-9 relative (first law; the scheme conserves enthalpy cell by cell).
#[test]
fn energy_closes_with_variable_properties() {
    for name in ["water-cooler.toml", "parallel-plate-heater.toml"] {
        let case = demo_case(name);
        let ex = case.build();
        let r = study::rate(&case.name, &ex, &case.solver, &RatingOptions::default(), &mut SilentObserver).unwrap();
        let rel = (r.energy_imbalance_W / r.duty_W).abs();
        assert!(rel < 1e-9, "{name}: imbalance {rel:e}");
        assert!((r.hot_heat_released_W / r.duty_W - 1.0).abs() < 1e-9);
    }
}

/// Grid study of the variable-property water case: the observed order is the scheme's
/// formal order 2 (analytical property of the trapezoidal scheme for smooth solutions).
#[test]
fn variable_property_grid_study_has_order_two() {
    let case = demo_case("water-cooler.toml");
    let ex = case.build();
    let s = study::grid_study(&ex, &case.solver, 50, 4).unwrap();
    for p in [s.observed_order.duty, s.observed_order.hot_outlet, s.observed_order.cold_outlet] {
        let p = p.expect("above round-off");
        assert!((p - 2.0).abs() < 0.1, "observed order {p}");
    }
    // The always-on estimate at 200 cells is close to the study's extrapolation.
    let r = study::rate(&case.name, &ex, &SteadySettings { cells: 200, ..case.solver.clone() }, &RatingOptions::default(), &mut SilentObserver).unwrap();
    let est = r.grid_error_estimate.unwrap();
    assert!((est.extrapolated.duty_w - s.extrapolated.duty_w).abs() < 0.05 * est.estimated_error.duty_w.abs() + 1e-6 * r.duty_W);
}

/// Second law bounds (common practice checks): outlets between the inlets, hot above cold
/// at every face in counterflow and parallel flow, duty below C_min ΔT_max.
#[test]
fn physical_bounds_hold() {
    for name in ["water-cooler.toml", "parallel-plate-heater.toml", "constant-property-check.toml"] {
        let case = demo_case(name);
        let ex = case.build();
        let s = solve_steady(&ex, &case.solver, &mut SilentObserver).unwrap();
        let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
        for t in s.hot_faces_c.iter().chain(&s.cold_faces_c).chain(&s.wall_c) {
            assert!(*t <= th + 1e-9 && *t >= tc - 1e-9);
        }
        match ex.arrangement {
            hxgrid::model::Arrangement::Parallel => {
                for (h, c) in s.hot_faces_c.iter().zip(&s.cold_faces_c) {
                    assert!(h >= c);
                }
            }
            hxgrid::model::Arrangement::Counterflow => {
                for (h, c) in s.hot_faces_c.iter().zip(&s.cold_faces_c) {
                    assert!(h > c);
                }
            }
            hxgrid::model::Arrangement::Network(_) => unreachable!("axial demo cases only"),
        }
        let q = study::key_quantities(&ex, &s).duty_w;
        assert!(q > 0.0 && q < ex.max_duty_w());
    }
}

/// A cold water stream at 1 atm heated past 99.97 °C would boil: the single-phase model
/// stops with an error naming where, the temperature and the saturation temperature.
#[test]
fn boiling_is_flagged_not_computed() {
    let text = r#"
arrangement = "counterflow"
length_m = 20.0
[geometry]
kind = "plane_wall"
area_per_length_m2_m = 1.0
wall_thickness_m = 0.001
wall_conductivity_W_mK = 15.0
[hot]
fluid = "constant"
inlet_temperature_C = 250.0
mass_flow_kg_s = 2.0
film = "fixed"
film_coefficient_W_m2K = 2000.0
[hot.properties]
density_kg_m3 = 800.0
specific_heat_J_kgK = 2500.0
viscosity_Pa_s = 0.001
conductivity_W_mK = 0.12
[cold]
fluid = "water"
inlet_temperature_C = 20.0
mass_flow_kg_s = 0.05
film = "fixed"
film_coefficient_W_m2K = 2000.0
"#;
    let case = parse_str(text, "boil", "boil").unwrap();
    let err = solve_steady(&case.build(), &case.solver, &mut SilentObserver).unwrap_err();
    match &err {
        SolveError::LeftRange { stream, reason, .. } => {
            assert_eq!(*stream, hxgrid::model::Side::Cold);
            assert!(reason.contains("99.97"), "{reason}");
            assert!(reason.contains("boiling"));
        }
        other => panic!("unexpected {other:?}"),
    }
    assert!(err.to_string().contains("x = "));
}

/// The demo shows a visible gap between the variable-property grid and the lumped
/// mean-temperature result (the reason the program exists); the constant-property check
/// case shows none.
#[test]
fn lumped_gap_visible_only_with_variable_properties() {
    let rate = |name: &str| {
        let case = demo_case(name);
        study::rate(&case.name, &case.build(), &case.solver, &RatingOptions::default(), &mut SilentObserver).unwrap()
    };
    assert!(rate("water-cooler.toml").grid_vs_lumped.duty_difference_percent.abs() > 1.0);
    let c = rate("constant-property-check.toml");
    assert!(c.grid_vs_lumped.duty_difference_percent.abs() < 1e-4);
    // Hand calculation in the case file's header: UA = 1507.54 W/K.
    assert!((c.UA_W_K - 1507.5377).abs() < 1e-3);
}

/// Regression (found by the fuzzer): an exchanger that transfers (almost) no heat gave a
/// non-finite NTU (Q/ΔT = 0/0) and percentage differences against a zero lumped duty. The
/// report must stay finite.
#[test]
fn no_heat_transfer_gives_a_finite_report() {
    let mut ex = common::constant_exchanger(hxgrid::model::Arrangement::Counterflow, 1.0, 0.5, false);
    ex.hot.film = std::sync::Arc::new(hxgrid::transfer::FixedFilm { h: 0.0 });
    let r = study::rate("none", &ex, &SteadySettings { cells: 20, ..Default::default() }, &RatingOptions::default(), &mut SilentObserver).unwrap();
    assert!(r.duty_W.abs() < 1e-6);
    assert!(hxgrid::output::check_finite(&r).is_ok(), "{r:?}");
}
