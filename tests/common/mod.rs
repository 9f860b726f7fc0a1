//! Shared builders for integration tests.
#![allow(dead_code)]

use hxgrid::model::{Arrangement, Exchanger};

/// A constant-property plane-wall exchanger with fixed film coefficients, sized so that
/// NTU = UA/C_min and C_r = C_min/C_max are exactly the given values (hot stream is C_min
/// unless `cold_is_min`): the verification suite's own builder.
pub fn constant_exchanger(arrangement: Arrangement, ntu: f64, cr: f64, cold_is_min: bool) -> Exchanger {
    hxgrid::verify::constant_exchanger(arrangement, ntu, cr, if cold_is_min { hxgrid::model::Side::Cold } else { hxgrid::model::Side::Hot })
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
