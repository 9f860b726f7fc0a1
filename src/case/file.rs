//! The case file as written: a one-to-one serde mirror of the TOML with units in the key
//! names. Unknown keys are errors. No checking beyond types happens here.
#![allow(non_snake_case)] // keys carry SI unit symbols (wall_conductivity_W_mK)
#![allow(missing_docs)] // each field is documented in README's input reference

use crate::model::{ArrangementKind, Mixing};
use schemars::JsonSchema;
use serde::Deserialize;

#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CaseFile {
    pub name: Option<String>,
    pub description: Option<String>,
    pub arrangement: ArrangementKind,
    /// With arrangement = "crossflow".
    pub crossflow: Option<CrossflowFile>,
    /// With arrangement = "cross_counterflow".
    pub cross_counterflow: Option<CrossCounterflowFile>,
    /// With arrangement = "shell_and_tube".
    pub shell_and_tube: Option<ShellAndTubeFile>,
    /// Heated length; for a tube bank, derived from rows × longitudinal pitch (omit it).
    pub length_m: Option<f64>,
    pub geometry: GeometryFile,
    pub hot: StreamFile,
    pub cold: StreamFile,
    #[serde(default)]
    pub solver: SolverFile,
    pub transient: Option<TransientFile>,
    /// `hxgrid size`: the target and the input varied to meet it.
    pub size: Option<SizeFile>,
    /// `hxgrid sweep`: inputs to vary over a list or a range.
    pub sweep: Option<SweepFile>,
    /// `hxgrid uncertainty`: Monte Carlo propagation of input uncertainties.
    pub uncertainty: Option<UncertaintyFile>,
}

/// `[size]`: exactly one target, and the input varied to meet it.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SizeFile {
    /// Target duty, W.
    pub duty_W: Option<f64>,
    /// Target hot outlet temperature, °C.
    pub hot_outlet_C: Option<f64>,
    /// Target cold outlet temperature, °C.
    pub cold_outlet_C: Option<f64>,
    /// The free input: the dotted key of a positive number the case file sets
    /// ("length_m", "hot.mass_flow_kg_s", "geometry.rows"; a whole-number key is sized in
    /// whole steps).
    pub vary: String,
    /// Smallest value to try (default: the case's value / 100; a whole number: 1).
    pub lowest: Option<f64>,
    /// Largest value to try (default: the case's value × 100).
    pub highest: Option<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum SweepCombine {
    Factorial,
    Paired,
}

/// `[sweep]`: the inputs and how their values combine.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SweepFile {
    /// "factorial" (default: every combination) or "paired" (the i-th values together).
    pub combine: Option<SweepCombine>,
    /// One `[[sweep.inputs]]` table per swept input.
    pub inputs: Vec<SweepInputFile>,
}

/// `[[sweep.inputs]]`: one swept input, by a list of values or an evenly spaced range.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SweepInputFile {
    /// Dotted key of a number the case file sets ("hot.mass_flow_kg_s").
    pub key: String,
    /// The values, in the key's own unit.
    pub values: Option<Vec<f64>>,
    /// Or a range: first value,
    pub start: Option<f64>,
    /// last value,
    pub stop: Option<f64>,
    /// and how many evenly spaced values (≥ 2).
    pub count: Option<i64>,
}

/// `[uncertainty]`: ± half-widths of each input's uncertainty (rectangular distributions),
/// propagated by Latin-hypercube sampling. Unset ones take the defaults the README lists.
#[derive(Debug, Clone, Default, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct UncertaintyFile {
    /// Samples (default 200).
    pub samples: Option<i64>,
    /// Random seed (default 1): the same seed gives the same samples.
    pub seed: Option<i64>,
    /// ± % on the hot film coefficient (default: the correlation's stated accuracy).
    pub hot_film_percent: Option<f64>,
    pub cold_film_percent: Option<f64>,
    /// ± % on the hot fouling resistance (default 50).
    pub hot_fouling_percent: Option<f64>,
    pub cold_fouling_percent: Option<f64>,
    /// ± % on the hot mass flow (default 2).
    pub hot_mass_flow_percent: Option<f64>,
    pub cold_mass_flow_percent: Option<f64>,
    /// ± K on the hot inlet temperature (default: IEC 60751 class B, 0.3 K + 0.005 |t|).
    pub hot_inlet_temperature_K: Option<f64>,
    pub cold_inlet_temperature_K: Option<f64>,
}

/// `[crossflow]`: the hot stream flows along `[solver] cells`, the cold across.
#[derive(Debug, Clone, Default, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CrossflowFile {
    /// "unmixed" (default) or "mixed".
    pub hot: Option<Mixing>,
    pub cold: Option<Mixing>,
    /// Cells along the cold stream's flow (default: `[solver] cells`).
    pub cells_across: Option<i64>,
}

/// `[cross_counterflow]`: one stream makes passes across the other, counterflow overall.
#[derive(Debug, Clone, Default, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CrossCounterflowFile {
    pub passes: Option<i64>,
    /// The stream that makes the passes (default: the tube side of a tube bank, else cold).
    pub passing_stream: Option<SideName>,
    /// The passing stream is mixed in a header between passes (default false).
    pub mixed_between_passes: Option<bool>,
    /// The other stream's mixing across the passes (default "unmixed").
    pub through_stream: Option<Mixing>,
    /// Cells along the through stream's flow in each pass (default: `[solver] cells`; a
    /// tube bank: 1, each pass one row).
    pub cells_across: Option<i64>,
}

/// `[shell_and_tube]`.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct ShellAndTubeFile {
    pub tube_passes: Option<i64>,
    pub shells_in_series: Option<i64>,
    pub shell_side: SideName,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum IntegratorName {
    Auto,
    Explicit,
    Implicit,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum InitialName {
    Steady,
    Uniform,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum SignalKind {
    Step,
    Ramp,
    Table,
}

/// A time schedule for an inlet temperature or a mass flow. Before it starts, the value is
/// the stream's own value from the case.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SignalFile {
    pub kind: SignalKind,
    /// step: when
    pub time_s: Option<f64>,
    /// ramp: start and end
    pub start_s: Option<f64>,
    pub end_s: Option<f64>,
    /// step / ramp: the new value
    pub to: Option<f64>,
    /// table: times and values (piecewise linear)
    pub times_s: Option<Vec<f64>>,
    pub values: Option<Vec<f64>>,
}

#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct TransientFile {
    pub duration_s: f64,
    pub output_interval_s: Option<f64>,
    pub integrator: Option<IntegratorName>,
    /// Absolute tolerance on temperatures, K.
    pub tolerance_K: Option<f64>,
    /// Relative tolerance of the time integration (on temperatures in °C).
    pub relative_tolerance: Option<f64>,
    pub initial: Option<InitialName>,
    pub initial_temperature_C: Option<f64>,
    pub wall_density_kg_m3: f64,
    pub wall_specific_heat_J_kgK: f64,
    /// Double pipe: wall thickness of the outer pipe (shell), m; its heat capacity is stored
    /// with the annulus fluid (default: none).
    pub shell_thickness_m: Option<f64>,
    /// Shell material (default: the wall's).
    pub shell_density_kg_m3: Option<f64>,
    pub shell_specific_heat_J_kgK: Option<f64>,
    /// Fin material for compact surfaces with fins (default: the wall's).
    pub fin_density_kg_m3: Option<f64>,
    pub fin_specific_heat_J_kgK: Option<f64>,
    pub snapshot_times_s: Option<Vec<f64>>,
    /// Settling times and overshoot describe the response from this time on (default: 0
    /// for a uniform start, else the first change of an input).
    pub response_from_s: Option<f64>,
    pub hot_inlet_temperature_C: Option<SignalFile>,
    pub hot_mass_flow_kg_s: Option<SignalFile>,
    pub cold_inlet_temperature_C: Option<SignalFile>,
    pub cold_mass_flow_kg_s: Option<SignalFile>,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum AnnulusDiameter {
    Hydraulic,
    Equivalent,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum LayoutName {
    Aligned,
    Staggered,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum SideName {
    Hot,
    Cold,
}

/// The `[geometry]` table: `kind` selects the variant, and each variant lists exactly the
/// keys that kind takes (so a key of another kind is an unknown key).
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum GeometryFile {
    /// An inner tube in an outer pipe: one stream in the tube, the other in the annulus.
    DoublePipe {
        wall_conductivity_W_mK: f64,
        tube_inner_diameter_m: f64,
        tube_outer_diameter_m: f64,
        shell_inner_diameter_m: f64,
        tube_side: SideName,
        /// Annulus: "hydraulic" (D₂ − D₁, default) or "equivalent" (Kern's (D₂² − D₁²)/D₁).
        annulus_heat_diameter: Option<AnnulusDiameter>,
    },
    /// A generic wall with given area per length; each stream's passage given by its flow
    /// area and hydraulic diameter (needed when its film is computed from the flow).
    PlaneWall {
        wall_conductivity_W_mK: f64,
        area_per_length_m2_m: f64,
        wall_thickness_m: f64,
        hot_flow_area_m2: Option<f64>,
        hot_hydraulic_diameter_m: Option<f64>,
        cold_flow_area_m2: Option<f64>,
        cold_hydraulic_diameter_m: Option<f64>,
    },
    /// A bank of tubes crossed by the outside stream, the tube-side stream in circuits.
    TubeBank {
        wall_conductivity_W_mK: f64,
        tube_inner_diameter_m: f64,
        tube_outer_diameter_m: f64,
        tube_side: SideName,
        layout: LayoutName,
        transverse_pitch_m: f64,
        longitudinal_pitch_m: f64,
        rows: i64,
        tubes_per_row: i64,
        tube_length_m: f64,
        /// Parallel tube-side circuits (default: tubes per row).
        tube_circuits: Option<i64>,
    },
    /// A baffled shell with a bundle of straight tubes (segmental baffles), rated from its
    /// drawing: with arrangement = "shell_and_tube"; passes, shells and which stream is on
    /// the shell side come from `[shell_and_tube]`, and `length_m` is the tube length of one
    /// pass (the shell's baffled length).
    ShellAndTube {
        wall_conductivity_W_mK: f64,
        tube_inner_diameter_m: f64,
        tube_outer_diameter_m: f64,
        /// Tubes in one shell, all passes together.
        tube_count: i64,
        tube_pitch_m: f64,
        /// 30, 45, 60 or 90.
        tube_layout_deg: f64,
        shell_inner_diameter_m: f64,
        /// Outer tube limit (default: shell less 12 mm + 0.5 % of it).
        bundle_diameter_m: Option<f64>,
        /// Fraction of the shell diameter, 0.15–0.45.
        baffle_cut_fraction: f64,
        /// Central baffle spacing.
        baffle_spacing_m: f64,
        inlet_baffle_spacing_m: Option<f64>,
        outlet_baffle_spacing_m: Option<f64>,
        /// Diametral (default 3.1 mm + 0.4 % of the shell diameter).
        shell_baffle_clearance_m: Option<f64>,
        /// Diametral (default 0.8 mm).
        tube_baffle_clearance_m: Option<f64>,
        sealing_strip_pairs: Option<i64>,
        pass_lane_width_m: Option<f64>,
        /// Nozzle bores (default: nozzle losses not computed).
        tube_nozzle_diameter_m: Option<f64>,
        shell_nozzle_diameter_m: Option<f64>,
    },
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum FilmName {
    Gnielinski,
    DittusBoelter,
    SiederTate,
    Pitla,
    Zukauskas,
    BellDelaware,
    Kern,
    Compact,
    Fixed,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum LaminarName {
    FullyDeveloped,
    FullyDevelopedFlux,
    Hausen,
    SiederTate,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum PhaseName {
    Liquid,
    Vapour,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum TransitionName {
    Blend,
    None,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum WallCorrectionName {
    None,
    Viscosity,
    GasTemperature,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum FinName {
    None,
    Straight,
    Annular,
}

/// A compact (possibly finned) surface described by j and f test data.
#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct CompactFile {
    /// CSV with header reynolds,colburn_j,fanning_f (relative to the case file).
    pub data_file: String,
    pub hydraulic_diameter_m: f64,
    pub free_flow_area_m2: f64,
    /// Total (fins + base) surface per metre of length on this side.
    pub area_per_length_m2_m: f64,
    pub fin: FinName,
    pub fin_area_fraction: Option<f64>,
    pub fin_length_m: Option<f64>,
    pub fin_thickness_m: Option<f64>,
    pub fin_conductivity_W_mK: Option<f64>,
    pub fin_root_radius_m: Option<f64>,
    pub fin_tip_radius_m: Option<f64>,
    /// Frontal area of the core face, for the entrance and exit losses (default: not computed).
    pub frontal_area_m2: Option<f64>,
}

#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct StreamFile {
    /// "water", "constant", "table" or a built-in fluid name (`hxgrid fluids`).
    pub fluid: String,
    /// With fluid = "table": path of the table file, relative to the case file.
    pub table_file: Option<String>,
    /// With fluid = "water": "liquid" (default) or "vapour".
    pub phase: Option<PhaseName>,
    pub inlet_temperature_C: f64,
    pub mass_flow_kg_s: f64,
    pub pressure_bar_abs: Option<f64>,
    pub fouling_m2K_W: Option<f64>,
    pub film: FilmName,
    pub film_coefficient_W_m2K: Option<f64>,
    /// Laminar model for internal flow (default fully_developed).
    pub laminar: Option<LaminarName>,
    /// Wall-to-bulk property correction (default none).
    pub wall_correction: Option<WallCorrectionName>,
    /// Laminar–turbulent transition: "blend" (default) or "none".
    pub transition: Option<TransitionName>,
    /// Absolute wall roughness for friction, m (default 0, smooth).
    pub roughness_m: Option<f64>,
    pub compact: Option<CompactFile>,
    pub properties: Option<PropertiesFile>,
}

#[derive(Debug, Clone, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct PropertiesFile {
    pub density_kg_m3: f64,
    pub specific_heat_J_kgK: f64,
    pub viscosity_Pa_s: f64,
    pub conductivity_W_mK: f64,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq, Deserialize, JsonSchema)]
#[serde(rename_all = "snake_case")]
pub enum SchemeName {
    Trapezoidal,
    Upwind,
    Tvd,
}

#[derive(Debug, Clone, Default, Deserialize, JsonSchema)]
#[serde(deny_unknown_fields)]
pub struct SolverFile {
    /// Spatial scheme: "trapezoidal" (default), "upwind" or "tvd".
    pub scheme: Option<SchemeName>,
    pub cells: Option<i64>,
    pub residual_tolerance: Option<f64>,
    pub max_iterations: Option<i64>,
}
