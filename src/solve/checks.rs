//! Checks every steady solution passes before it is returned: the second law (with a grid
//! that fixes a violation where the cells are the cause) and each fluid's valid range.

use super::error::*;
use super::steady::*;
use crate::model::{Arrangement, Exchanger, Side};

/// The hot stream must not be colder than the cold stream at any face. The trapezoidal
/// scheme (like Crank–Nicolson in time) stops being monotone when a cell's NTU exceeds about
/// 2; the error names the grid that fixes it instead of returning an impossible profile.
pub(crate) fn check_second_law(ex: &Exchanger, s: &SteadySolution) -> Result<(), SolveError> {
    let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
    if th <= tc {
        return Err(SolveError::InletsReversed { hot_c: th, cold_c: tc, at: None });
    }
    let tol = 1e-9 * (th - tc).abs().max(1.0);
    // Violation at each face: hot below cold, or either stream outside [T_c,in, T_h,in].
    let worst = s
        .hot_faces_c
        .iter()
        .zip(&s.cold_faces_c)
        .enumerate()
        .map(|(j, (&h, &c))| (j, (c - h).max(tc - h).max(h - th).max(tc - c).max(c - th)))
        .fold((0, f64::NEG_INFINITY), |a, b| if b.1 > a.1 { b } else { a });
    if worst.1 <= tol {
        return Ok(());
    }
    let max_cell_ntu = (0..s.cells)
        .map(|i| {
            let d = ex.cell(s.dx_m, &s.cell_temps(i));
            let c_min = (ex.hot.mass_flow_kg_s * d.hot_props.cp).min(ex.cold.mass_flow_kg_s * d.cold_props.cp);
            d.ua_per_length_w_mk * s.dx_m / c_min.max(f64::MIN_POSITIVE)
        })
        .fold(0.0, f64::max);
    Err(SolveError::GridTooCoarse {
        cells: s.cells,
        max_cell_ntu,
        position_m: worst.0 as f64 * s.dx_m,
        deficit_k: worst.1,
        suggested_cells: suggested_cells(s.cells, max_cell_ntu),
    })
}

/// Cells for a largest cell NTU of 0.5 (four times inside the trapezoidal scheme's limit of
/// about 2), rounded up to a round number; None where the cells are not the cause (already
/// below 0.5) or no grid within the limit would do.
pub(crate) fn suggested_cells(cells: usize, max_cell_ntu: f64) -> Option<usize> {
    if !(max_cell_ntu.is_finite() && max_cell_ntu > 0.5) {
        return None;
    }
    let raw = cells as f64 * max_cell_ntu / 0.5;
    let step = 10f64.powf(raw.log10().floor() - 1.0).max(1.0);
    let n = (raw / step).ceil() * step;
    (n <= crate::solve::MAX_CELLS as f64).then_some(n as usize).filter(|&n| n > cells)
}

pub(crate) fn check_ranges(ex: &Exchanger, s: &SteadySolution) -> Result<(), SolveError> {
    check_faces_in_range(ex, &s.hot_faces_c, &s.cold_faces_c, s.dx_m, None)
}

/// Every face of both streams inside its fluid's valid range, walking each stream in its
/// own flow direction so the first face reported is where it first leaves the range; `time`
/// (s) is named in the message for transients.
pub(crate) fn check_faces_in_range(ex: &Exchanger, hot: &[f64], cold: &[f64], dx: f64, time: Option<f64>) -> Result<(), SolveError> {
    for (side, faces) in [(Side::Hot, hot), (Side::Cold, cold)] {
        let stream = ex.stream(side);
        let (min_c, max_c) = stream.fluid.bounds();
        let reversed = side == Side::Cold && ex.arrangement == Arrangement::Counterflow;
        let order: Box<dyn Iterator<Item = (usize, &f64)>> =
            if reversed { Box::new(faces.iter().enumerate().rev()) } else { Box::new(faces.iter().enumerate()) };
        for (j, &t) in order {
            if !(t >= min_c - 1e-9 && t <= max_c + 1e-9) {
                let range = stream.fluid.range();
                return Err(SolveError::LeftRange {
                    time_s: time,
                    stream: side,
                    fluid: stream.fluid.name(),
                    position_m: j as f64 * dx,
                    temperature_c: t,
                    min_c: range.min_c,
                    max_c: range.max_c,
                    reason: range.reason,
                });
            }
        }
    }
    Ok(())
}
