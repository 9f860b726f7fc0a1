//! Shared builders for integration tests.
#![allow(dead_code)]

use hxgrid::fluid::{ConstantFluid, Props};
use hxgrid::model::{Arrangement, Exchanger, Stream};
use hxgrid::transfer::{Channel, FixedFilm, Wall};

/// A constant-property plane-wall exchanger with fixed film coefficients, sized so that
/// NTU = UA/C_min and C_r = C_min/C_max are exactly the given values (hot stream is C_min
/// unless `cold_is_min`).
pub fn constant_exchanger(arrangement: Arrangement, ntu: f64, cr: f64, cold_is_min: bool) -> Exchanger {
    let cp = 4000.0;
    let c_min = 2.0 * cp; // 2 kg/s
    let c_max = if cr > 0.0 { c_min / cr } else { f64::INFINITY };
    let (m_hot, m_cold) = if cold_is_min { (c_max / cp, c_min / cp) } else { (c_min / cp, c_max / cp) };
    let length = 4.0;
    let area_per_length = 0.5;
    // UA = L / (1/(h a) + t/(k a) + 1/(h a)) with h = 1000, t/k = 1e-4 → pick h to hit NTU.
    let ua = ntu * c_min;
    let r_total_per_length = length / ua; // K·m/W
    let r_wall = 1e-4 / (50.0 * area_per_length);
    let h = 2.0 / ((r_total_per_length - r_wall) * area_per_length);
    assert!(h > 0.0);
    let props = Props { density: 1000.0, cp, viscosity: 1e-3, conductivity: 0.6 };
    let channel = Channel::bare(area_per_length);
    let stream = |m: f64, t: f64| Stream {
        fluid: std::sync::Arc::new(ConstantFluid::new(props)),
        mass_flow_kg_s: m,
        inlet_c: t,
        inlet_pressure_pa: 101_325.0,
        fouling_m2k_w: 0.0,
        film: std::sync::Arc::new(FixedFilm { h }),
        channel: channel.clone(),
    };
    Exchanger {
        arrangement,
        length_m: length,
        hot: stream(m_hot, 90.0),
        cold: stream(m_cold, 10.0),
        wall: Wall::Plane { thickness_m: 1e-4, conductivity_w_mk: 50.0, area_per_length_m: area_per_length },
        reference_area_per_length_m: area_per_length,
        scheme: hxgrid::model::Scheme::Trapezoidal,
    }
}

/// Read a case from `cases/`.
pub fn demo_case(name: &str) -> hxgrid::case::Case {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("cases").join(name);
    hxgrid::case::load(&path).expect("demo case is valid")
}

/// Scratch folders: created new, removed only if still the folder this process made.
#[path = "../../src/scratch.rs"]
mod scratch_folder;
#[allow(unused_imports)] // not every test binary makes scratch folders
pub use scratch_folder::Scratch;
