//! Build an exchanger in code — no case file — and rate it: an invented oil cooler, oil in a
//! plane-wall channel against water, constant properties and fixed film coefficients (the
//! textbook assumptions), so the grid must reproduce the ε–NTU closed form.
//!
//! Run with `cargo run --example rate_in_code`.

use hxgrid::fluid::{ConstantFluid, Props};
use hxgrid::model::{Arrangement, Exchanger, Scheme, Stream};
use hxgrid::solve::SteadySettings;
use hxgrid::transfer::{Channel, FixedFilm, Wall};
use std::sync::Arc;

fn stream(props: Props, mass_flow_kg_s: f64, inlet_c: f64, h_w_m2k: f64, area_per_length_m: f64) -> Stream {
    Stream {
        fluid: Arc::new(ConstantFluid::new(props)),
        mass_flow_kg_s,
        inlet_c,
        inlet_pressure_pa: 101_325.0,
        fouling_m2k_w: 0.0,
        film: Arc::new(FixedFilm { h: h_w_m2k }),
        channel: Channel::bare(area_per_length_m),
    }
}

fn main() {
    let oil = Props { density: 850.0, cp: 2100.0, viscosity: 0.01, conductivity: 0.13 };
    let water = Props { density: 997.0, cp: 4180.0, viscosity: 9e-4, conductivity: 0.6 };
    let area = 1.0; // m² of wall per metre of length
    let ex = Exchanger {
        arrangement: Arrangement::Counterflow,
        length_m: 5.0,
        hot: stream(oil, 0.5, 120.0, 500.0, area),
        cold: stream(water, 0.4, 25.0, 800.0, area),
        wall: Wall::Plane { thickness_m: 0.001, conductivity_w_mk: 15.0, area_per_length_m: area },
        reference_area_per_length_m: area,
        scheme: Scheme::Trapezoidal,
    };
    let report = hxgrid::rate("oil-cooler (invented)", &ex, &SteadySettings { cells: 400, ..Default::default() }).expect("solves");
    // The closed form (Incropera Table 11.3, counterflow): UA = L·a / (1/h_h + t/k + 1/h_c).
    let ua = 5.0 * area / (1.0 / 500.0 + 0.001 / 15.0 + 1.0 / 800.0);
    let (c_min, c_max) = (0.5 * 2100.0, 0.4 * 4180.0);
    let (ntu, cr) = (ua / c_min, c_min / c_max);
    let eps = (1.0 - (-ntu * (1.0 - cr)).exp()) / (1.0 - cr * (-ntu * (1.0 - cr)).exp());
    let exact = eps * c_min * (120.0 - 25.0);
    println!("duty: grid {:.2} W, lumped {:.2} W, closed form {exact:.2} W", report.duty_W, report.lumped.duty_w);
    println!("hot outlet {:.3} °C, cold outlet {:.3} °C", report.hot_outlet_C, report.cold_outlet_C);
    assert!((report.duty_W - exact).abs() < 1e-4 * exact, "grid {} vs closed form {exact}", report.duty_W);
}
