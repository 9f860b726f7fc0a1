//! `arrangement` and its table (`[crossflow]`, `[cross_counterflow]`, `[shell_and_tube]`)
//! → [`Arrangement`], with the combinations that make no sense refused by key.

use super::file::*;
use super::problem::*;
use super::spec::Geometry;
use crate::model::{Arrangement, ArrangementKind, CrossCounterflow, Crossflow, Layout, Mixing, Scheme, ShellAndTube, Side};
use crate::solve::MAX_NETWORK_CELLS;

fn side(s: SideName) -> Side {
    match s {
        SideName::Hot => Side::Hot,
        SideName::Cold => Side::Cold,
    }
}

/// A whole number in `lo..=hi` at `key`, or `default` when absent.
fn count(c: &mut Checker, key: &str, v: Option<i64>, default: usize, lo: usize, hi: usize, what: &str) -> usize {
    match v {
        None => default,
        Some(n) if n >= lo as i64 && n <= hi as i64 => n as usize,
        Some(n) => {
            c.fail(key, format!("{n} is not valid: use a whole number from {lo} to {hi} ({what})"));
            default
        }
    }
}

/// The validated arrangement; `cells` is `[solver] cells`.
pub(super) fn arrangement(c: &mut Checker, f: &CaseFile, geometry: &Geometry, cells: usize, scheme: Scheme) -> Arrangement {
    let kind = f.arrangement;
    // A table for another arrangement is a mistake worth stopping for: its settings would be ignored.
    let tables = [
        ("crossflow", f.crossflow.is_some(), ArrangementKind::Crossflow),
        ("cross_counterflow", f.cross_counterflow.is_some(), ArrangementKind::CrossCounterflow),
        ("shell_and_tube", f.shell_and_tube.is_some(), ArrangementKind::ShellAndTube),
    ];
    for (name, given, owner) in tables {
        if given && owner != kind {
            c.fail(
                name,
                format!(
                    "is given but arrangement = \"{}\": the [{name}] table belongs to arrangement = \"{name}\"; remove it or change arrangement",
                    kind.as_str()
                ),
            );
        }
    }
    let tube_bank = matches!(geometry, Geometry::TubeBank { .. });
    let arrangement = match kind {
        ArrangementKind::Counterflow => Arrangement::Counterflow,
        ArrangementKind::Parallel => Arrangement::Parallel,
        ArrangementKind::Crossflow => {
            let t = f.crossflow.clone().unwrap_or_default();
            let across = count(c, "crossflow.cells_across", t.cells_across, cells, 1, 100_000, "cells along the cold stream's flow");
            Arrangement::Network(Layout::Crossflow(Crossflow {
                hot: t.hot.unwrap_or(Mixing::Unmixed),
                cold: t.cold.unwrap_or(Mixing::Unmixed),
                cells_across: across,
            }))
        }
        ArrangementKind::CrossCounterflow => {
            let t = f.cross_counterflow.clone().unwrap_or_default();
            let default_passes = match geometry {
                Geometry::TubeBank { bank, .. } => bank.rows,
                _ => 2,
            };
            let passes = count(c, "cross_counterflow.passes", t.passes, default_passes, 1, 1000, "passes of the passing stream");
            let passing = t.passing_stream.map(side).or_else(|| geometry.tube_side().filter(|_| tube_bank)).unwrap_or(Side::Cold);
            let default_across = if tube_bank { 1 } else { cells };
            let across =
                count(c, "cross_counterflow.cells_across", t.cells_across, default_across, 1, 100_000, "cells along the through stream's flow in each pass");
            Arrangement::Network(Layout::CrossCounterflow(CrossCounterflow {
                passes,
                passing,
                mixed_between_passes: t.mixed_between_passes.unwrap_or(false),
                through: t.through_stream.unwrap_or(Mixing::Unmixed),
                cells_across: across,
            }))
        }
        ArrangementKind::ShellAndTube => match &f.shell_and_tube {
            None => {
                c.fail(
                    "shell_and_tube",
                    "is missing: add a [shell_and_tube] table with shell_side = \"hot\" or \"cold\" (and tube_passes, shells_in_series)".into(),
                );
                Arrangement::Counterflow
            }
            Some(t) => {
                let tube_passes = count(c, "shell_and_tube.tube_passes", t.tube_passes, 2, 1, 16, "tube passes per shell");
                if tube_passes > 1 && tube_passes % 2 == 1 {
                    c.fail(
                        "shell_and_tube.tube_passes",
                        format!("{tube_passes} is not valid: use 1 or an even number (2, 4, 6, …) of tube passes, so the tubes leave at the end they entered"),
                    );
                }
                let shells = count(c, "shell_and_tube.shells_in_series", t.shells_in_series, 1, 1, 16, "shells in series");
                Arrangement::Network(Layout::ShellAndTube(ShellAndTube { tube_passes, shells, shell_side: side(t.shell_side) }))
            }
        },
    };
    if let Some(layout) = arrangement.layout() {
        let name = kind.as_str();
        match geometry {
            Geometry::DoublePipe { .. } => c.fail(
                "arrangement",
                format!("\"{name}\" does not fit a double pipe (one tube in one pipe has two streams along one axis): use counterflow or parallel, or kind = \"plane_wall\" for a generic surface"),
            ),
            Geometry::TubeBank { .. } if matches!(layout, Layout::ShellAndTube(_)) => c.fail(
                "arrangement",
                "\"shell_and_tube\" does not fit a tube bank: use \"cross_counterflow\" (rows as passes) or \"crossflow\", or kind = \"plane_wall\" for a generic surface".into(),
            ),
            _ => {}
        }
        if scheme == Scheme::Tvd {
            c.fail(
                "solver.scheme",
                format!("\"tvd\" is available for counterflow and parallel only; with arrangement = \"{name}\" use \"trapezoidal\" (default) or \"upwind\""),
            );
        }
        if f.transient.as_ref().and_then(|t| t.integrator) == Some(IntegratorName::Explicit) {
            c.fail(
                "transient.integrator",
                format!("\"explicit\" is available for counterflow and parallel only; with arrangement = \"{name}\" use \"implicit\" or \"auto\" (BDF2)"),
            );
        }
        let total = layout.cell_count(cells);
        if total > MAX_NETWORK_CELLS {
            c.fail(
                "solver.cells",
                format!("{cells} gives {total} cells in the {name} network, above the limit of {MAX_NETWORK_CELLS}: use fewer cells or fewer cells across"),
            );
        }
    }
    arrangement
}
