//! Film coefficients and series resistances against published values.

mod common;
use approx::assert_relative_eq;
use hxgrid::fluid::{ConstantFluid, Props};
use hxgrid::model::{Arrangement, Exchanger, Stream};
use hxgrid::transfer::{darcy_petukhov, gnielinski_nusselt, Channel, FilmCorrelation, FilmInput, FixedFilm, Gnielinski, Wall};

/// Gnielinski (1976) with the Petukhov friction factor: check values computed from the
/// formulas, shared/METHODS.md §2 [C].
#[test]
fn gnielinski_check_values() {
    assert_relative_eq!(darcy_petukhov(1e4), 0.031480, max_relative = 2e-5);
    assert_relative_eq!(darcy_petukhov(1e5), 0.017992, max_relative = 3e-5);
    for (re, pr, nu) in [(1e4, 0.7, 29.817), (1e4, 7.0, 79.493), (1e5, 0.7, 178.623), (1e5, 7.0, 599.066)] {
        assert_relative_eq!(gnielinski_nusselt(re, pr), nu, max_relative = 2e-5);
    }
}

/// The laminar–turbulent blend is continuous at both switch points (no jump to stall
/// Newton) and equals the laminar value below and Gnielinski above.
#[test]
fn blend_is_continuous() {
    let nu_lam = 3.66;
    for pr in [0.7, 7.0, 50.0] {
        let below = Gnielinski::nusselt(2300.0 - 1e-9, pr, nu_lam);
        let above = Gnielinski::nusselt(2300.0 + 1e-9, pr, nu_lam);
        assert_relative_eq!(below, above, max_relative = 1e-9);
        assert_relative_eq!(below, nu_lam);
        let below = Gnielinski::nusselt(1e4 - 1e-7, pr, nu_lam);
        let above = Gnielinski::nusselt(1e4 + 1e-7, pr, nu_lam);
        assert_relative_eq!(below, above, max_relative = 1e-9);
        assert_relative_eq!(above, gnielinski_nusselt(1e4, pr), max_relative = 1e-9);
    }
}

/// Fully developed laminar annulus, inner wall heated (Incropera Table 8.2, METHODS.md §2 [V]).
#[test]
fn annulus_laminar_table() {
    for (r, nu) in [(0.05, 17.46), (0.10, 11.56), (0.25, 7.37), (0.50, 5.74), (1.0, 4.86)] {
        assert_relative_eq!(Channel::annulus_laminar_nusselt(r), nu);
    }
    let mid = Channel::annulus_laminar_nusselt(0.375);
    assert!(mid < 7.37 && mid > 5.74);
}

/// Film coefficient from a tube: Re = ṁD/(Aμ) and h = Nu k/D. Water-like properties,
/// D = 20 mm: Re = 4ṁ/(πDμ) (definition).
#[test]
fn film_from_tube_flow() {
    let d = 0.02;
    let ch = Channel::duct(std::f64::consts::PI * d * d / 4.0, d, std::f64::consts::PI * d, hxgrid::transfer::LaminarConstants::TUBE, 2.0);
    let props = Props { density: 998.0, cp: 4182.0, viscosity: 1.0e-3, conductivity: 0.6 };
    let m = 0.5;
    let fluid = ConstantFluid::new(props);
    let input = FilmInput { channel: &ch, mass_flow_kg_s: m, props: &props, bulk_c: 20.0, wall_c: 30.0, fluid: &fluid, heated: true };
    let f = Gnielinski.film(&input);
    let re = 4.0 * m / (std::f64::consts::PI * d * props.viscosity);
    assert_relative_eq!(f.reynolds.unwrap(), re, max_relative = 1e-12);
    assert_relative_eq!(f.h, gnielinski_nusselt(re, props.prandtl()) * 0.6 / d, max_relative = 1e-12);
}

/// The series chain 1/UA = 1/(h_i A_i) + R_f,i/A_i + ln(r_o/r_i)/(2πkL) + R_f,o/A_o + 1/(h_o A_o)
/// (Incropera Eq. 11.5 [M]). Check values [C] from METHODS.md §4: r_i = 10 mm,
/// r_o = 12.5 mm, k = 16, h_i = 1000, h_o = 500, R_f,i = 2e-4, R_f,o = 1e-4, L = 1 m:
/// wall 0.002220 K/W, UA = 20.809 W/K, U_o = 264.95 W/(m²K).
#[test]
fn series_resistance_chain() {
    let (ri, ro) = (0.010, 0.0125);
    let wall = Wall::Tube { inner_diameter_m: 2.0 * ri, outer_diameter_m: 2.0 * ro, conductivity_w_mk: 16.0, tube_length_per_length: 1.0 };
    assert_relative_eq!(wall.resistance_per_length(), 0.002220, max_relative = 2e-4);
    let props = Props { density: 1000.0, cp: 4000.0, viscosity: 1e-3, conductivity: 0.6 };
    let stream = |h: f64, a: f64, rf: f64, t: f64| Stream {
        fluid: std::sync::Arc::new(ConstantFluid::new(props)),
        mass_flow_kg_s: 1.0,
        inlet_c: t,
        inlet_pressure_pa: 101_325.0,
        fouling_m2k_w: rf,
        film: std::sync::Arc::new(FixedFilm { h }),
        channel: Channel::bare(a),
    };
    let pi = std::f64::consts::PI;
    let ex = Exchanger {
        arrangement: Arrangement::Counterflow,
        length_m: 1.0,
        hot: stream(1000.0, 2.0 * pi * ri, 2e-4, 80.0),
        cold: stream(500.0, 2.0 * pi * ro, 1e-4, 20.0),
        wall,
        reference_area_per_length_m: 2.0 * pi * ro,
        scheme: hxgrid::model::Scheme::Trapezoidal,
    };
    let ua = ex.ua_per_length_at(50.0, 30.0);
    assert_relative_eq!(ua, 20.809, max_relative = 1e-4);
    assert_relative_eq!(ua / (2.0 * pi * ro), 264.95, max_relative = 1e-4);
}
