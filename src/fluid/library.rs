//! Built-in fluids, by name. Tables are generated from CoolProp by
//! `tools/make_fluid_tables.py` (source, version and date in each file's header) and
//! compiled into the program, so it needs no data files at run time.

use super::{ConstantFluid, Fluid, Props, TableFluid, Water};
use std::sync::Arc;

/// Built-in tabulated fluids: (name, table text).
pub const TABLES: [(&str, &str); 9] = [
    ("air", include_str!("../../fluids/air.csv")),
    ("ethylene-glycol-30", include_str!("../../fluids/ethylene-glycol-30.csv")),
    ("ethylene-glycol-50", include_str!("../../fluids/ethylene-glycol-50.csv")),
    ("propylene-glycol-30", include_str!("../../fluids/propylene-glycol-30.csv")),
    ("propylene-glycol-50", include_str!("../../fluids/propylene-glycol-50.csv")),
    ("thermal-oil", include_str!("../../fluids/thermal-oil.csv")),
    ("co2-8MPa", include_str!("../../fluids/co2-8MPa.csv")),
    ("co2-10MPa", include_str!("../../fluids/co2-10MPa.csv")),
    ("co2-12MPa", include_str!("../../fluids/co2-12MPa.csv")),
];

/// Every name a case may give as `fluid`, with a one-line description.
pub fn catalogue() -> Vec<(String, String)> {
    let mut out = vec![
        ("water".to_string(), "water or steam, single phase, IAPWS-IF97 (phase = \"liquid\", the default, or \"vapour\")".to_string()),
        ("constant".to_string(), "constant properties given in the case ([hot.properties] / [cold.properties])".to_string()),
        ("table".to_string(), "your own property table file (table_file = \"…\"; format in `hxgrid props --help`)".to_string()),
    ];
    for (name, text) in TABLES {
        let desc = text.lines().find_map(|l| l.strip_prefix("# description:")).map(str::trim).unwrap_or("").to_string();
        out.push((name.to_string(), desc));
    }
    out
}

/// The built-in table named `name`, parsed.
pub fn builtin_table(name: &str) -> Option<TableFluid> {
    TABLES.iter().find(|(n, _)| *n == name).map(|(n, text)| TableFluid::parse(text, &format!("built-in {n}")).expect("built-in tables are valid (tested)"))
}

/// Names a case may use, for "did you mean" suggestions.
pub fn names() -> Vec<String> {
    catalogue().into_iter().map(|(n, _)| n).collect()
}

/// How a fluid is chosen, independent of the case-file syntax.
// Built once per case and never in a hot loop: boxing the table would buy nothing.
#[allow(clippy::large_enum_variant)]
#[derive(Debug, Clone)]
pub enum FluidChoice {
    /// IAPWS-IF97 water in the given single phase.
    Water(super::WaterPhase),
    /// Constant properties.
    Constant(Props),
    /// A parsed table (built-in or user file).
    Table(TableFluid),
}

impl FluidChoice {
    /// Build the fluid for a stream at `pressure_pa`.
    pub fn build(&self, pressure_pa: f64) -> Result<Arc<dyn Fluid>, super::FluidError> {
        Ok(match self {
            FluidChoice::Water(phase) => Arc::new(Water::new(pressure_pa, *phase)?),
            FluidChoice::Constant(p) => Arc::new(ConstantFluid::new(*p)),
            FluidChoice::Table(t) => Arc::new(t.clone().at_pressure(pressure_pa)),
        })
    }
}
