//! Command-line definitions (clap) only.

use clap::{Parser, Subcommand};
use std::path::PathBuf;

#[derive(Debug, Parser)]
#[command(
    name = "hxgrid",
    version,
    about = "Finite-volume rating of two-stream heat exchangers, beside the lumped ε–NTU / LMTD result",
    after_help = concat!(
        "Examples:\n",
        "  hxgrid run cases/water-cooler.toml            solve; results in output/<case name>/\n",
        "  hxgrid run my.toml --out results/my-run       choose the results folder\n",
        "  hxgrid run my.toml --grid-study 4             also solve at N, 2N, 4N, 8N cells\n",
        "  hxgrid simulate cases/water-cooler-startup.toml   transient: cold start and a pump trip\n",
        "  hxgrid size cases/water-cooler-design.toml    find the length (or flow, rows) that meets [size]\n",
        "  hxgrid sweep cases/water-cooler-design.toml   rate every point of [sweep], on all cores\n",
        "  hxgrid sweep my.toml --shard 2/4              run the 2nd of 4 slices (one job of a cluster array)\n",
        "  hxgrid merge shard-1 shard-2 shard-3 shard-4  join the slices into the unsharded result\n",
        "  hxgrid uncertainty my.toml                    P05/P50/P95 of duty and outlets from [uncertainty]\n",
        "  hxgrid check my.toml                          validate only\n",
        "  hxgrid new my.toml                            write a commented starter case\n",
        "  hxgrid fluids                                 list the fluids a case can name\n",
        "  hxgrid schema > hxgrid-case.schema.json      the case file's JSON Schema\n",
        "  hxgrid props co2-10MPa --from 30 --to 60      print a fluid's properties\n",
        "  hxgrid props --table my-oil.csv               check and print your own table\n\n",
        "Exit codes: 0 success · 2 command-line usage error · 3 invalid case file or input · ",
        "4 solver failure (no results written) · 5 results could not be written or the folder is not hxgrid's · ",
        "6 a transient stopped early on a physical limit (results up to then written) · ",
        "7 a row of hxgrid verify failed · 8 a sizing target cannot be reached (the reachable limit is stated). ",
        "Parallel commands use every core (RAYON_NUM_THREADS=n to limit)"
    )
)]
pub struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// Subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Solve a case's steady state and write summary.json, profiles.csv and SVG plots.
    Run {
        /// Case file (TOML).
        case: PathBuf,
        /// Results folder (default: output/<case name>). Only a folder hxgrid wrote is replaced, and only when the new results are complete.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Write every cell to profiles.csv (by default above 20 000 cells every k-th cell is written).
        #[arg(long)]
        all_cells: bool,
        /// Also run a grid study with this many levels (N, 2N, 4N, …; at least 3 for an observed order).
        #[arg(long, value_name = "LEVELS", value_parser = clap::value_parser!(u32).range(2..=12))]
        grid_study: Option<u32>,
        /// Print nothing but errors.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Run the case's [transient] scenario (start-up, flow or temperature upsets) and write
    /// the time series, profile snapshots, plots and a summary.
    Simulate {
        /// Case file (TOML) with a [transient] section.
        case: PathBuf,
        /// Results folder (default: output/<case name>-transient).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print nothing but errors (no progress bar).
        #[arg(long, short)]
        quiet: bool,
    },
    /// Find the value of one input that meets the case's [size] target (a duty or an outlet
    /// temperature) and write the sized exchanger's results with the sizing outcome.
    Size {
        /// Case file (TOML) with a [size] table.
        case: PathBuf,
        /// Results folder (default: output/<case name>-sized).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print nothing but errors.
        #[arg(long, short)]
        quiet: bool,
    },
    /// Rate every point of the case's [sweep] in parallel: sweep.csv (a row per point, with
    /// its status), sweep.json and sweep.svg.
    Sweep {
        /// Case file (TOML) with a [sweep] table.
        case: PathBuf,
        /// Results folder (default: output/<case name>-sweep, or -sweep-shard-K-of-N).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Run only the K-th of N interleaved slices of the points (K from 1), for one job
        /// of a cluster array; join the slices with `hxgrid merge`.
        #[arg(long, value_name = "K/N", value_parser = parse_shard)]
        shard: Option<(usize, usize)>,
        /// Print nothing but errors (no progress bar).
        #[arg(long, short)]
        quiet: bool,
    },
    /// Join the shard folders of one sweep into the folder the unsharded run writes
    /// (identical files).
    Merge {
        /// The shard folders (all N of them, any order).
        #[arg(required = true)]
        shards: Vec<PathBuf>,
        /// Results folder (default: output/<case name>-sweep).
        #[arg(long)]
        out: Option<PathBuf>,
    },
    /// Propagate the case's [uncertainty] (film coefficients, fouling, flows, inlet
    /// temperatures) by Latin-hypercube Monte Carlo: P05/P50/P95 and the main contributors.
    Uncertainty {
        /// Case file (TOML); without an [uncertainty] table the defaults are used.
        case: PathBuf,
        /// Results folder (default: output/<case name>-uncertainty).
        #[arg(long)]
        out: Option<PathBuf>,
        /// Print nothing but errors (no progress bar).
        #[arg(long, short)]
        quiet: bool,
    },
    /// Run the built-in verification suite: every arrangement against its published closed-form
    /// effectiveness, and the observed order of accuracy (exit 7 if a row fails).
    Verify {
        /// Print the table as JSON instead of text.
        #[arg(long)]
        json: bool,
    },
    /// Validate a case file without solving.
    Check {
        /// Case file (TOML).
        case: PathBuf,
    },
    /// Write a commented starter case file (never overwrites an existing file).
    New {
        /// Path of the new case file.
        path: PathBuf,
    },
    /// List the fluids a case can name.
    Fluids,
    /// Print the case file's JSON Schema (for editors' completion and checking; TOML
    /// editors that read JSON Schema apply it directly).
    Schema,
    /// Print a fluid's properties over a temperature range, or check a table file.
    #[command(after_help = TABLE_HELP)]
    Props {
        /// Fluid name (see `hxgrid fluids`); omit with --table.
        fluid: Option<String>,
        /// A property table file to check and print instead of a named fluid.
        #[arg(long, value_name = "FILE")]
        table: Option<PathBuf>,
        /// Absolute pressure, bar (default: the table's own, else 1.01325).
        #[arg(long, value_name = "BAR")]
        pressure_bar: Option<f64>,
        /// First temperature, °C (default: the fluid's lowest valid).
        #[arg(long, value_name = "C", allow_negative_numbers = true)]
        from: Option<f64>,
        /// Last temperature, °C (default: the fluid's highest valid).
        #[arg(long, value_name = "C", allow_negative_numbers = true)]
        to: Option<f64>,
        /// Temperature step, K (default: 20 rows over the range).
        #[arg(long, value_name = "K")]
        step: Option<f64>,
    },
}

/// `K/N` with 1 ≤ K ≤ N.
fn parse_shard(s: &str) -> Result<(usize, usize), String> {
    let bad = || format!("\"{s}\" is not K/N: give the slice and the number of slices, e.g. 2/4, with 1 ≤ K ≤ N ≤ 100000");
    let (k, n) = s.split_once('/').ok_or_else(bad)?;
    let (k, n): (usize, usize) = (k.trim().parse().map_err(|_| bad())?, n.trim().parse().map_err(|_| bad())?);
    if k == 0 || k > n || n > 100_000 {
        return Err(bad());
    }
    Ok((k, n))
}

/// The table-file format, shown by `hxgrid props --help`.
pub const TABLE_HELP: &str = "Table file format (plain text, one row per temperature):
  # hxgrid fluid table
  # name: my-oil                        (optional metadata: '# key: value')
  # source: supplier data sheet, 2024   (recorded in reports)
  # pressure_Pa: 101325                 (optional: pressure the data hold at)
  temperature_C,density_kg_m3,specific_heat_J_kgK,viscosity_Pa_s,conductivity_W_mK
  20,870,1850,0.030,0.130
  40,857,1930,0.012,0.128
The header line is required exactly; temperatures strictly increase; all properties
positive. Values between rows are interpolated shape-preservingly (monotone cubic);
enthalpy is the integral of cp; outside the table hxgrid stops rather than extrapolate.
Use in a case: fluid = \"table\" and table_file = \"my-oil.csv\" (relative to the case file).";
