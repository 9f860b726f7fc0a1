//! The case file as written: a one-to-one serde mirror of the TOML with units in the key
//! names. Unknown keys are errors. No checking beyond types happens here.
#![allow(non_snake_case)] // keys carry SI unit symbols (wall_conductivity_W_mK)
#![allow(missing_docs)] // each field is documented in README's input reference

use crate::model::Arrangement;
use serde::Deserialize;

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CaseFile {
    pub name: Option<String>,
    pub description: Option<String>,
    pub arrangement: Arrangement,
    pub length_m: f64,
    pub geometry: GeometryFile,
    pub hot: StreamFile,
    pub cold: StreamFile,
    #[serde(default)]
    pub solver: SolverFile,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum GeometryKind {
    DoublePipe,
    PlaneWall,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SideName {
    Hot,
    Cold,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct GeometryFile {
    pub kind: GeometryKind,
    pub wall_conductivity_W_mK: f64,
    // double_pipe
    pub tube_inner_diameter_m: Option<f64>,
    pub tube_outer_diameter_m: Option<f64>,
    pub shell_inner_diameter_m: Option<f64>,
    pub tube_side: Option<SideName>,
    // plane_wall
    pub area_per_length_m2_m: Option<f64>,
    pub wall_thickness_m: Option<f64>,
    pub hot_flow_area_m2: Option<f64>,
    pub hot_hydraulic_diameter_m: Option<f64>,
    pub cold_flow_area_m2: Option<f64>,
    pub cold_hydraulic_diameter_m: Option<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FilmName {
    Gnielinski,
    Fixed,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct StreamFile {
    /// "water", "constant", "table" or a built-in fluid name (`hxgrid fluids`).
    pub fluid: String,
    /// With fluid = "table": path of the table file, relative to the case file.
    pub table_file: Option<String>,
    pub inlet_temperature_C: f64,
    pub mass_flow_kg_s: f64,
    pub pressure_bar_abs: Option<f64>,
    pub fouling_m2K_W: Option<f64>,
    pub film: FilmName,
    pub film_coefficient_W_m2K: Option<f64>,
    pub properties: Option<PropertiesFile>,
}

#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct PropertiesFile {
    pub density_kg_m3: f64,
    pub specific_heat_J_kgK: f64,
    pub viscosity_Pa_s: f64,
    pub conductivity_W_mK: f64,
}

#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SolverFile {
    pub cells: Option<i64>,
    pub residual_tolerance: Option<f64>,
    pub max_iterations: Option<i64>,
}
