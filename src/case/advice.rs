//! What to change in a case file after a solver failure: the solvers describe what went wrong
//! in physical terms; this layer knows the case keys and says which to change.

use crate::solve::transient::TransientError;
use crate::solve::SolveError;

/// Advice naming the case keys that address a steady-solver failure, where there is any.
pub fn steady(e: &SolveError) -> Option<String> {
    Some(match e {
        SolveError::NotConverged { .. } => {
            "try more cells, a looser [solver] residual_tolerance or more [solver] max_iterations; check that flows and film coefficients are realistic".into()
        }
        SolveError::GridTooCoarse { suggested_cells: Some(n), .. } => {
            format!("use at least {n} cells ([solver] cells), or scheme = \"upwind\" in [solver], which stays monotone on coarse grids")
        }
        SolveError::NegativePressure { stream, .. } => format!("raise {stream}.pressure_bar_abs, or reduce the flow or the length, or enlarge the passage"),
        SolveError::Flashing { stream, .. } => format!("raise {stream}.pressure_bar_abs, or reduce the pressure drop"),
        SolveError::NoFlow => "start the transient with initial = \"uniform\" in [transient], or keep one flow running".into(),
        SolveError::InletsReversed { .. } => "change the inlet temperatures or their schedules, or swap the [hot] and [cold] sections".into(),
        _ => return None,
    })
}

/// Advice naming the case keys that address a transient failure, where there is any.
pub fn transient(e: &TransientError) -> Option<String> {
    match e {
        TransientError::Solve(s) => steady(s),
        TransientError::Stalled { integrator, .. } if *integrator == "explicit" => {
            Some("set integrator = \"implicit\" in [transient] (stiffly stable), or a looser tolerance_K, or fewer cells".into())
        }
        TransientError::Stalled { .. } => Some(
            "try a looser tolerance_K, fewer cells, or smoother schedules (a ramp instead of a step); check the inputs for a flow or temperature far outside the steady case".into(),
        ),
        TransientError::SecondLaw { .. } => Some("use more cells or scheme = \"upwind\" in [solver] (monotone), or a tighter tolerance_K in [transient]".into()),
        TransientError::Missing(_) => None,
    }
}
