//! Command-line definitions (clap) only.

use clap::{Parser, Subcommand};
use std::path::PathBuf;

/// Exit codes, documented in `--help` and README.
pub const EXIT_HELP: &str = "Exit codes: 0 success · 2 command-line usage error · 3 invalid case file or input · \
4 solver failure (no results written) · 5 results could not be written";

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
        "  hxgrid check my.toml                          validate only\n",
        "  hxgrid new my.toml                            write a commented starter case\n\n",
        "Exit codes: 0 success · 2 command-line usage error · 3 invalid case file or input · ",
        "4 solver failure (no results written) · 5 results could not be written"
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
        /// Results folder (default: output/<case name>). Replaced only when the new results are complete.
        #[arg(long)]
        out: Option<PathBuf>,
        /// Also run a grid study with this many levels (N, 2N, 4N, …; at least 3 for an observed order).
        #[arg(long, value_name = "LEVELS", value_parser = clap::value_parser!(u32).range(2..=12))]
        grid_study: Option<u32>,
        /// Print nothing but errors.
        #[arg(long, short)]
        quiet: bool,
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
}
