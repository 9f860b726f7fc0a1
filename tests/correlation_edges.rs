//! Correlations exactly as published at the edges of their ranges: laminar constants of each
//! channel shape, the transition treatment, Kern's annulus practice (in correlations.rs),
//! roughness, tube-bank circuits, Zukauskas between Re_max 10² and 10³, and the grid-error
//! order of each scheme. [M] marks a value or attribution from memory; [C] one computed here
//! from the published formula; [A] an analytical solution.

use approx::assert_relative_eq;
use hxgrid::fluid::{ConstantFluid, Fluid, Props};
use hxgrid::transfer::film::*;
use hxgrid::transfer::friction::*;
use hxgrid::transfer::{Channel, CompactSurface, LaminarConstants, Layout, Transition, TubeBank, Zukauskas};
use std::path::Path;

const WATER_LIKE: Props = Props { density: 1000.0, cp: 4180.0, viscosity: 1e-3, conductivity: 0.6 };

fn film(model: &InternalFlow, channel: &Channel, mass_flow: f64) -> FilmResult {
    let fluid = ConstantFluid::new(WATER_LIKE);
    model.film(&FilmInput { channel, mass_flow_kg_s: mass_flow, props: &WATER_LIKE, bulk_c: 20.0, wall_c: 40.0, fluid: &fluid as &dyn Fluid, heated: true })
}

fn model(laminar: Laminar, turbulent: Turbulent, transition: Transition) -> InternalFlow {
    InternalFlow { laminar, turbulent, wall_correction: WallCorrection::None, transition }
}

/// A long duct (L/D = 1000) of hydraulic diameter 0.01 m and flow area 1e-4 m².
fn duct(shape: LaminarConstants) -> Channel {
    Channel::duct(1e-4, 0.01, 0.04, shape, 10.0)
}

/// Mass flow giving Reynolds number `re` in [`duct`].
fn flow_for(re: f64) -> f64 {
    re * 1e-4 * WATER_LIKE.viscosity / 0.01
}

/// Fully developed laminar Nu at uniform heat flux is each channel's own value, not the tube
/// ratio 4.36/3.66 applied to all: tube 48/11 = 4.364 (Incropera Table 8.1); parallel plates,
/// one side insulated, 5.385 (Incropera Table 8.1 / Shah & London 1978 [M]); annulus, inner
/// wall heated, Di/Do = 0.2: 8.499 (Kays & Crawford Table 8-2 [M]). Regression: the plates got
/// 4.86 × 4.36/3.66 = 5.79 and the annulus 1.19× its uniform-temperature value.
#[test]
fn laminar_uniform_flux_nusselt_per_channel() {
    let m = model(Laminar::FullyDevelopedH, Turbulent::Gnielinski, Transition::Blend);
    for (shape, nu) in [(LaminarConstants::TUBE, 4.3636), (LaminarConstants::PLATES_ONE_SIDE, 5.385), (LaminarConstants::annulus(0.2), 8.499)] {
        let f = film(&m, &duct(shape), flow_for(800.0));
        assert_relative_eq!(f.nusselt.unwrap(), nu, max_relative = 1e-4);
        assert!(f.in_range);
    }
    // The uniform-temperature values stay Incropera's Table 8.2 (annulus) and 4.86 (plates).
    let t = model(Laminar::FullyDevelopedT, Turbulent::Gnielinski, Transition::Blend);
    assert_relative_eq!(film(&t, &duct(LaminarConstants::annulus(0.25)), flow_for(800.0)).nusselt.unwrap(), 7.37, max_relative = 1e-9);
    assert_relative_eq!(film(&t, &duct(LaminarConstants::PLATES_ONE_SIDE), flow_for(800.0)).nusselt.unwrap(), 4.86, max_relative = 1e-9);
}

/// An entry-length correlation never falls below the channel's own fully developed value
/// (Sieder–Tate, Incropera Eq. 8.58: below Gz^⅓(μ/μ_s)^0.14 = 2 the developed value governs):
/// 5.74 in an annulus of Di/Do = ½ (Incropera Table 8.2), not the tube's 3.66.
#[test]
fn entry_correlation_floor_is_the_channel_value() {
    let m = model(Laminar::SiederTate, Turbulent::Gnielinski, Transition::Blend);
    // Very long channel: Gz tiny.
    let long = Channel::duct(1e-4, 0.01, 0.04, LaminarConstants::annulus(0.5), 1e4);
    assert_relative_eq!(film(&m, &long, flow_for(100.0)).nusselt.unwrap(), 5.74, max_relative = 1e-9);
    let tube = Channel::duct(1e-4, 0.01, 0.04, LaminarConstants::TUBE, 1e4);
    assert_relative_eq!(film(&m, &tube, flow_for(100.0)).nusselt.unwrap(), 3.66, max_relative = 1e-9);
}

/// Laminar friction on the hydraulic diameter: f·Re = 64 in a tube (Hagen–Poiseuille), 96
/// between parallel plates (Incropera Table 8.1), and for a concentric annulus the exact
/// solution 64(1 − κ)²/(1 + κ² − (1 − κ²)/ln(1/κ)) [A] (White, *Viscous Fluid Flow*; Shah &
/// London tabulate 4 × 23.81 = 95.25 at κ = 0.5 [M]). Regression: every channel used 64/Re.
#[test]
fn laminar_friction_per_channel() {
    let m = model(Laminar::FullyDevelopedT, Turbulent::Gnielinski, Transition::Blend);
    let re = 300.0;
    for (shape, f_re) in [(LaminarConstants::TUBE, 64.0), (LaminarConstants::PLATES_ONE_SIDE, 96.0), (LaminarConstants::annulus(0.5), 95.2496)] {
        let f = m.darcy_friction(&duct(shape), re).unwrap();
        assert_relative_eq!(f * re, f_re, max_relative = 2e-4);
    }
    // The annulus formula's limits: the tube at κ → 0 (slowly, through 1/ln κ) and plates at κ → 1.
    assert_relative_eq!(LaminarConstants::annulus(0.999).f_re, 96.0, max_relative = 1e-4);
    assert_relative_eq!(LaminarConstants::annulus(1.0).f_re, 96.0, max_relative = 1e-12);
    assert_relative_eq!(LaminarConstants::annulus(0.1).f_re, 89.37, max_relative = 1e-3);
    // Turbulent friction is Churchill's, unchanged by the laminar constant.
    assert_relative_eq!(darcy_churchill_shaped(1e5, 0.0, 96.0), darcy_churchill(1e5, 0.0), max_relative = 1e-9);
}

/// `transition = "none"`: the laminar model below 2300, the turbulent correlation as
/// published from 2300 up, counted outside only where outside its own range (Gnielinski from
/// Re = 3000, Gnielinski 1976; Dittus–Boelter from 10⁴). With the default blend every cell
/// between 2300 and 10⁴ is counted outside, and the film model says so.
#[test]
fn transition_none_uses_the_correlation_as_published() {
    let ch = duct(LaminarConstants::TUBE);
    let none = model(Laminar::FullyDevelopedT, Turbulent::Gnielinski, Transition::None);
    let f = film(&none, &ch, flow_for(5000.0));
    assert_relative_eq!(f.nusselt.unwrap(), gnielinski_nusselt(5000.0, WATER_LIKE.prandtl()), max_relative = 1e-12);
    assert!(f.in_range, "Gnielinski is published from Re = 3000");
    assert!(!film(&none, &ch, flow_for(2600.0)).in_range, "below Gnielinski's 3000");
    let db = model(Laminar::FullyDevelopedT, Turbulent::DittusBoelter, Transition::None);
    assert!(!film(&db, &ch, flow_for(5000.0)).in_range, "Dittus–Boelter needs Re ≥ 10⁴");
    let blend = model(Laminar::FullyDevelopedT, Turbulent::Gnielinski, Transition::Blend);
    assert!(!film(&blend, &ch, flow_for(5000.0)).in_range);
    assert!(film(&blend, &ch, flow_for(2000.0)).in_range && film(&blend, &ch, flow_for(2e4)).in_range);
    // The text states the ranges the way the cells are counted.
    assert!(blend.validity().contains("used from Re = 10⁴") && blend.validity().contains("counted outside"), "{}", blend.validity());
    assert!(none.validity().contains("from Re = 2300") && none.validity().contains("3000 ≤ Re"), "{}", none.validity());
    // And the key reaches the model from a case file.
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler.toml")).unwrap();
    let case = hxgrid::case::parse_str(&text.replacen("film = \"gnielinski\"", "film = \"gnielinski\"\ntransition = \"none\"", 1), "t", "t").unwrap();
    assert!(case.build().hot.film.validity().contains("no transition blend"));
}

/// Relative roughness is bounded by the friction charts (Moody's ends at ε/D = 0.05 [M, common
/// practice]); within that range the friction factor never falls as roughness rises, at any
/// Reynolds number (Churchill 1977). Beyond it Churchill's logarithm changes sign and the
/// friction falls — the reason for the bound.
#[test]
fn friction_grows_with_roughness_within_the_charts() {
    for re in [500.0, 3000.0, 1e4, 1e5, 1e6, 1e8] {
        let mut prev = 0.0;
        for k in 0..=50 {
            let f = darcy_churchill(re, 0.05 * k as f64 / 50.0);
            assert!(f >= prev * (1.0 - 1e-12), "Re {re}: f falls at ε/D = {}", 0.05 * k as f64 / 50.0);
            prev = f;
        }
    }
    assert!(darcy_churchill(1e5, 20.0) < darcy_churchill(1e5, 4.0), "the formula turns back beyond the charts");
    let text = hxgrid::case::STARTER.replacen("[hot]\n", "[hot]\nroughness_m = 0.002\n", 1);
    let e = hxgrid::case::parse_str(&text, "r", "r").unwrap_err().to_string();
    assert!(e.contains("hot.roughness_m") && e.contains("friction charts"), "{e}");
}

/// Tube-bank circuits: each of C circuits threads N_L·N_T/C tubes in series, so its path is
/// that many tube lengths (common practice). Regression: the path was N_L tube lengths
/// whatever tube_circuits said.
#[test]
fn tube_side_path_follows_the_circuits() {
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/tube-bank-air-heater.toml")).unwrap();
    for (circuits, tubes_in_series) in [(20usize, 12.0), (10, 24.0), (240, 1.0)] {
        let case = hxgrid::case::parse_str(&text.replace("tube_circuits = 20", &format!("tube_circuits = {circuits}")), "b", "b").unwrap();
        let ex = case.build();
        assert_relative_eq!(ex.hot.channel.flow_length_m, tubes_in_series * 1.5, max_relative = 1e-12);
        assert_relative_eq!(ex.hot.channel.flow_area_m2.unwrap(), circuits as f64 * std::f64::consts::PI * 0.0216f64.powi(2) / 4.0, max_relative = 1e-12);
    }
}

fn bank(layout: Layout, rows: usize, st: f64, sl: f64) -> TubeBank {
    TubeBank { outer_diameter_m: 0.025, transverse_pitch_m: st, longitudinal_pitch_m: sl, layout, rows, frontal_area_m2: 1.0 }
}

/// Zukauskas between Re_max 10² and 10³, where the 1972 table (Incropera Table 7.5) gives no
/// bank constants: the 1987 constants (Çengel, *Heat Transfer*, Table 7-2 [M]; METHODS.md §3):
/// aligned C = 0.52, m = 0.5; staggered 1.04/0.4 below 500 and 0.71/0.5 above. The row
/// correction (Incropera Table 7.6) is tabulated for Re_max ≳ 10³ only: not applied below,
/// and such cells with fewer than 20 rows are counted outside; so are aligned banks with
/// S_T/S_L < 0.7 (Incropera, note to Table 7.5).
#[test]
fn zukauskas_between_one_and_ten_hundred() {
    let pr: f64 = 0.71;
    let tail = pr.powf(0.36);
    for (layout, re, c, m) in [(Layout::Aligned, 500.0, 0.52, 0.5), (Layout::Staggered, 300.0, 1.04, 0.4), (Layout::Staggered, 700.0, 0.71, 0.5)] {
        let b = bank(layout, 20, 0.05, 0.05);
        assert_relative_eq!(b.nusselt_raw(re, pr, pr), c * f64::powf(re, m) * tail, max_relative = 1e-12);
        assert_relative_eq!(b.nusselt(re, pr, pr), c * f64::powf(re, m) * tail, max_relative = 1e-12);
        // Five rows: no row correction here, and the cell is counted outside the tables.
        assert_relative_eq!(bank(layout, 5, 0.05, 0.05).nusselt_raw(re, pr, pr), c * f64::powf(re, m) * tail, max_relative = 1e-12);
        assert!(b.in_range(re, pr) && !bank(layout, 5, 0.05, 0.05).in_range(re, pr));
    }
    // Above 10³ the row correction applies as before (0.92 for 5 staggered rows).
    assert_relative_eq!(bank(Layout::Staggered, 5, 0.05, 0.05).nusselt_raw(5e3, pr, pr), 0.92 * 0.35 * 5e3f64.powf(0.6) * tail, max_relative = 1e-12);
    assert!(bank(Layout::Staggered, 5, 0.05, 0.05).in_range(5e3, pr));
    // Aligned with S_T/S_L = 0.5: outside.
    assert!(!bank(Layout::Aligned, 20, 0.05, 0.10).in_range(5e3, pr));
    // Continuous through every switch, including the staggered one at 500 and the row
    // correction's start at 10³.
    for layout in [Layout::Aligned, Layout::Staggered] {
        let b = bank(layout, 7, 0.05, 0.05);
        for switch in [100.0, 500.0, 1000.0, 2e5] {
            for edge in [0.95, 1.05] {
                let x = switch * edge;
                assert_relative_eq!(b.nusselt(x * (1.0 - 1e-9), pr, pr), b.nusselt(x * (1.0 + 1e-9), pr, pr), max_relative = 1e-6);
            }
        }
    }
}

/// The grid-error estimate uses each scheme's own formal order: with the first-order upwind
/// scheme, Richardson with order 1 estimates the true error (against the exact ε–NTU result,
/// Incropera Eq. 11.29a [A]) within 10 %, where order 2 understated it threefold. cells = 1
/// is refused (no half grid to estimate from).
#[test]
fn grid_error_uses_the_schemes_order() {
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/constant-property-check.toml")).unwrap();
    let upwind = text.replace("cells = 400", "cells = 100\nscheme = \"upwind\"");
    let case = hxgrid::case::parse_str(&upwind, "u", "u").unwrap();
    let ex = case.build();
    let r = hxgrid::study::rate("u", &ex, &case.solver, &Default::default(), &mut hxgrid::solve::SilentObserver).unwrap();
    assert_eq!(r.scheme, "upwind");
    let g = r.grid_error_estimate.as_ref().unwrap();
    assert_eq!(g.order, 1.0);
    // Exact counterflow ε (constant properties; the case's header gives UA = 1507.54 W/K,
    // C_hot = 1050 W/K = C_min, C_cold = 1672 W/K).
    let (ua, c_min, c_max): (f64, f64, f64) = (5.0 / (1.0 / 500.0 + 0.001 / 15.0 + 1.0 / 800.0), 1050.0, 1672.0);
    let (ntu, cr) = (ua / c_min, c_min / c_max);
    let eps = (1.0 - (-ntu * (1.0 - cr)).exp()) / (1.0 - cr * (-ntu * (1.0 - cr)).exp());
    let exact = eps * c_min * (120.0 - 25.0);
    let true_error = r.duty_W - exact;
    assert_relative_eq!(g.estimated_error.duty_w, true_error, max_relative = 0.1);
    let e = hxgrid::case::parse_str(&text.replace("cells = 400", "cells = 1"), "one", "one").unwrap_err().to_string();
    assert!(e.contains("solver.cells") && e.contains("from 2"), "{e}");
}

fn film_of(f: &dyn FilmCorrelation, channel: &Channel, mass_flow: f64) -> FilmResult {
    let fluid = ConstantFluid::new(WATER_LIKE);
    f.film(&FilmInput { channel, mass_flow_kg_s: mass_flow, props: &WATER_LIKE, bulk_c: 20.0, wall_c: 40.0, fluid: &fluid as &dyn Fluid, heated: true })
}

/// What each film model does when the flow stops (README, "At zero flow"):
/// - tube banks: Nu³ = Nu_Z³ + 0.36³, the stagnant floor 0.36 being the Ra → 0 limit of
///   Churchill & Chu's cylinder correlation (Incropera Eq. 9.34), negligible at working flows
///   (Zukauskas check value 101.85 at Re_max = 15 733 kept, METHODS.md §3);
/// - compact surfaces: below the data j ∝ 1/Re (the laminar asymptote, constant Nu), so h
///   stays at its lowest-tested value, counted outside the data;
/// - internal flow: the channel's fully developed laminar Nu;
/// - fixed: the given h (warned about in lost-flow schedules).
///
/// Regression: tube banks and compact surfaces fell to h ≈ 0.
#[test]
fn film_coefficients_at_zero_flow() {
    let bank =
        TubeBank { outer_diameter_m: 0.025, transverse_pitch_m: 0.05, longitudinal_pitch_m: 0.05, layout: Layout::Staggered, rows: 20, frontal_area_m2: 1.0 };
    let z = Zukauskas { bank: bank.clone() };
    let ch = Channel::duct(1.0, 0.025, 1.0, LaminarConstants::TUBE, 1.0);
    assert_relative_eq!(film_of(&z, &ch, 0.0).h, 0.36 * WATER_LIKE.conductivity / 0.025, max_relative = 1e-12);
    let nu_z = bank.nusselt(15733.0, WATER_LIKE.prandtl(), WATER_LIKE.prandtl());
    let m = 15733.0 * WATER_LIKE.viscosity / 0.025 / bank.velocity_ratio();
    assert_relative_eq!(film_of(&z, &ch, m).nusselt.unwrap(), nu_z, max_relative = 1e-6);

    let surface = CompactSurface { data: vec![(500.0, 0.010, 0.030), (5000.0, 0.004, 0.012)], fin: None, fin_area_fraction: 0.0 };
    let passage = Channel::duct(0.01, 0.003, 1.0, LaminarConstants::TUBE, 0.5);
    let flow_at = |re: f64| re * 0.01 * WATER_LIKE.viscosity / 0.003;
    let at_data = film_of(&surface, &passage, flow_at(500.0));
    let stopped = film_of(&surface, &passage, 0.0);
    assert!(stopped.h.is_finite() && stopped.h > 0.0);
    assert_relative_eq!(stopped.h, at_data.h, max_relative = 1e-9);
    assert_relative_eq!(film_of(&surface, &passage, flow_at(50.0)).h, at_data.h, max_relative = 1e-9);
    assert!(!stopped.in_range && at_data.in_range);

    let internal = model(Laminar::FullyDevelopedT, Turbulent::Gnielinski, Transition::Blend);
    assert_relative_eq!(film(&internal, &duct(LaminarConstants::TUBE), 0.0).h, 3.66 * WATER_LIKE.conductivity / 0.01, max_relative = 1e-12);

    // A fixed film in a lost-flow schedule is kept, and the user is told.
    let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/water-cooler-startup.toml")).unwrap();
    let fixed = text.replacen("film = \"gnielinski\"", "film = \"fixed\"\nfilm_coefficient_W_m2K = 3000.0", 2);
    let case = hxgrid::case::parse_str(&fixed, "f", "f").unwrap();
    assert!(case.warnings.iter().any(|w| w.contains("cold stream") && w.contains("keeps the full film coefficient at zero flow")), "{:?}", case.warnings);
}

/// Supercritical CO₂ near its pseudo-critical point (the built-in 10 MPa table, CoolProp):
/// bulk-property Gnielinski is counted outside its range wherever c̄p/cp_b or ρ_w/ρ_b leaves
/// 0.9 … 1.1 (common practice [M]); Pitla, Groll & Ramadhyani (2002) [M] — Nu = ½(Nu_G(Re_w,
/// Pr_w) + Nu_G(Re_b, Pr_b))·k_w/k_b for CO₂ being cooled — takes the wall properties in and
/// is counted in range there. Regression: the gas-cooler demo was reported fully in range.
#[test]
fn supercritical_co2_property_ratios() {
    // The formula [C].
    let m = model(Laminar::FullyDevelopedT, Turbulent::Pitla, Transition::Blend);
    let state = FlowState { re: 2e4, pr: 2.0, mu_ratio: 1.3, gz: 1.0, heated: false, pr_wall: 1.5, k_ratio: 0.9 };
    let expected = 0.5 * (gnielinski_nusselt(2.6e4, 1.5) + gnielinski_nusselt(2e4, 2.0)) * 0.9;
    assert_relative_eq!(m.nusselt(&state, &LaminarConstants::TUBE, 1.0).0, expected, max_relative = 1e-12);
    assert!(m.nusselt(&state, &LaminarConstants::TUBE, 1.0).1);
    assert!(!m.nusselt(&FlowState { heated: true, ..state }, &LaminarConstants::TUBE, 1.0).1, "Pitla is for cooling");
    // The demo.
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("cases");
    let text = std::fs::read_to_string(dir.join("co2-gas-cooler.toml")).unwrap();
    let rate = |t: &str| {
        let case = hxgrid::case::parse_in(t, "co2", "co2", &dir).unwrap();
        hxgrid::study::rate("co2", &case.build(), &case.solver, &Default::default(), &mut hxgrid::solve::SilentObserver).unwrap()
    };
    let bulk = rate(&text);
    assert!(bulk.hot_cells_outside_correlation_range > bulk.cells / 10, "{}", bulk.hot_cells_outside_correlation_range);
    assert!(bulk.hot_film_model.contains("c̄p/cp_b"), "{}", bulk.hot_film_model);
    let pitla = rate(&text.replacen("film = \"gnielinski\"", "film = \"pitla\"", 1));
    assert_eq!(pitla.hot_cells_outside_correlation_range, 0);
    assert!((pitla.duty_W - bulk.duty_W).abs() / bulk.duty_W < 0.1, "{} vs {}", pitla.duty_W, bulk.duty_W);
}
