//! Sweeps: a complete rating (grid solve, lumped result, grid-error estimate, local
//! pressure check) at every point of a grid of inputs, in parallel on all cores. A point
//! that fails is recorded with its error and does not stop the sweep. Points are numbered in
//! a fixed order and each is solved from a cold start, so a point's result does not depend
//! on which machine, shard or thread ran it: shards merge into exactly the unsharded result.

use super::keys::KeyValue;
use super::{one_line, Combine, PointError, Source, SweepSpec};
use crate::solve::SilentObserver;
use crate::study::{self, RatingOptions};
use rayon::prelude::*;
use serde::Serialize;

/// Most points one sweep may have (a factorial grid grows fast).
pub const MAX_POINTS: usize = 1_000_000;

/// The number of points of a sweep.
pub fn point_count(spec: &SweepSpec) -> usize {
    match spec.combine {
        Combine::Factorial => spec.inputs.iter().map(|i| i.values.len()).product(),
        Combine::Paired => spec.inputs.first().map_or(0, |i| i.values.len()),
    }
}

/// The input values of point `index` (0-based): factorial with the first input varying
/// slowest, or the index-th value of each input.
pub fn point_values(spec: &SweepSpec, index: usize) -> Vec<f64> {
    match spec.combine {
        Combine::Paired => spec.inputs.iter().map(|i| i.values[index]).collect(),
        Combine::Factorial => {
            let mut rest = index;
            let mut out = vec![0.0; spec.inputs.len()];
            for (slot, input) in spec.inputs.iter().enumerate().rev() {
                out[slot] = input.values[rest % input.values.len()];
                rest /= input.values.len();
            }
            out
        }
    }
}

/// Which points a shard runs: K-th of N interleaved slices (K from 1), every N-th point
/// from the (K−1)-th. Interleaving spreads costly corners of the grid over the shards.
pub fn shard_indices(total: usize, shard: Option<(usize, usize)>) -> Vec<usize> {
    match shard {
        None => (0..total).collect(),
        Some((k, n)) => (k - 1..total).step_by(n.max(1)).collect(),
    }
}

/// Key results of one rated point (the result columns of sweep.csv, in this order).
#[derive(Debug, Clone, Default, Serialize)]
#[allow(non_snake_case)]
pub struct PointResult {
    /// Duty, W.
    pub duty_W: f64,
    /// Hot outlet, °C.
    pub hot_outlet_C: f64,
    /// Cold outlet, °C.
    pub cold_outlet_C: f64,
    /// Σ local UA, W/K.
    pub UA_W_K: f64,
    /// Effectiveness.
    pub effectiveness: f64,
    /// NTU.
    pub ntu: f64,
    /// Heat-transfer area on the reference surface, m².
    pub area_m2: f64,
    /// The lumped ε–NTU duty, W.
    pub lumped_duty_W: f64,
    /// Estimated grid error of the duty, W.
    pub grid_error_duty_W: Option<f64>,
    /// Estimated grid error of the hot outlet, K.
    pub grid_error_hot_outlet_K: Option<f64>,
    /// Hot pressure drop (friction and acceleration), Pa.
    pub hot_pressure_drop_Pa: Option<f64>,
    /// Cold pressure drop, Pa.
    pub cold_pressure_drop_Pa: Option<f64>,
    /// Warnings the rating gave (validity ranges, velocities).
    pub warnings: usize,
}

/// One point of a sweep: its number, its input values and its outcome.
#[derive(Debug, Clone)]
pub struct Point {
    /// 0-based index in the whole sweep.
    pub index: usize,
    /// The inputs' values.
    pub values: Vec<f64>,
    /// Results, or why there are none.
    pub outcome: Result<PointResult, PointError>,
}

/// Rate one point.
pub fn rate_point(source: &Source, spec: &SweepSpec, values: &[f64]) -> Result<PointResult, PointError> {
    let set: Vec<(&str, KeyValue)> = spec.inputs.iter().zip(values).map(|(i, &v)| (i.key.as_str(), KeyValue { value: v, whole: i.whole })).collect();
    let (case, ex) = source.variant_built(&set).map_err(|e| PointError::Input(one_line(&e)))?;
    let r = study::rate(&case.name, &ex, &case.solver, &RatingOptions::default(), &mut SilentObserver).map_err(|e| PointError::Solve(one_line(&e)))?;
    let out = PointResult {
        duty_W: r.duty_W,
        hot_outlet_C: r.hot_outlet_C,
        cold_outlet_C: r.cold_outlet_C,
        UA_W_K: r.UA_W_K,
        effectiveness: r.effectiveness,
        ntu: r.ntu,
        area_m2: ex.reference_area_per_length_m * ex.length_m,
        lumped_duty_W: r.lumped.duty_w,
        grid_error_duty_W: r.grid_error_estimate.as_ref().map(|g| g.estimated_error.duty_w),
        grid_error_hot_outlet_K: r.grid_error_estimate.as_ref().map(|g| g.estimated_error.hot_outlet_c),
        hot_pressure_drop_Pa: r.hot_pressure_drop_Pa,
        cold_pressure_drop_Pa: r.cold_pressure_drop_Pa,
        warnings: r.warnings.len() + case.warnings.len(),
    };
    if crate::output::finite::first_non_finite(&out, "point").is_some() {
        return Err(PointError::Solve("a result is not a finite number".into()));
    }
    Ok(out)
}

/// Run the points `indices` of the sweep in parallel (results in index order); `tick` is
/// called once per finished point, from any thread.
pub fn run(source: &Source, spec: &SweepSpec, indices: &[usize], tick: &(dyn Fn() + Sync)) -> Vec<Point> {
    indices
        .par_iter()
        .map(|&index| {
            let values = point_values(spec, index);
            let outcome = rate_point(source, spec, &values);
            tick();
            Point { index, values, outcome }
        })
        .collect()
}
