//! Spatial schemes: how a cell's advected face temperatures and its bulk temperature are
//! built from the unknowns. This is part of the one cell model: the steady solver and the
//! transient integrator both use it, so a transient settles exactly on the steady answer
//! of the same scheme.
//!
//! Unknowns per cell: one value per stream and the wall temperature. Storage (transient)
//! sits on that value.
//! - `Trapezoidal` (default): the value is the stream's temperature at the cell's
//!   downstream face; the heat-rate bulk temperature is the mean of the cell's two faces.
//!   Second order at steady state (exact for balanced counterflow with constant
//!   properties). In time its storage on the downstream face makes fronts move as with
//!   first-order upwinding.
//! - `Upwind`: the value is the cell's mean temperature, advected out unchanged (first-order
//!   upwind) and used as the bulk temperature. First order in space, monotone.
//! - `Tvd`: the value is the cell's mean temperature; the face value leaving a cell is the
//!   MUSCL reconstruction T_i + ½φ(r)(T_i − T_up), r = (T_down − T_i)/(T_i − T_up), with van
//!   Albada's limiter φ(r) = (r² + r)/(r² + 1) (van Albada, van Leer & Roberts, Astron.
//!   Astrophys. 108 (1982) 76–84 \[M\]), written as T_i + ½ab(a + b)/(a² + b² + ε²) with
//!   a = T_i − T_up, b = T_down − T_i. Second order where the profile is smooth, sharp
//!   fronts, and — unlike van Leer's limiter, tried first — smooth in a and b, so Newton
//!   keeps converging quadratically where a stream flattens out (van Leer's switch on the
//!   signs of round-off differences stalled it; found by the property tests). At a local
//!   extremum (r < 0) it allows a small overshoot (|φ| ≤ 0.21). At the outlet cell the slope
//!   ratio of the cell upstream is carried over. A cell's inflow face depends on the two
//!   cells upstream, so its Jacobian is banded (solved by banded LU) rather than block
//!   tridiagonal; its derivatives are exact.

use super::{Arrangement, CellTemps};
use nalgebra::Vector3;

/// Spatial discretisation of advection and of the bulk temperature.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Scheme {
    /// Face unknowns, trapezoidal heat rates (second order at steady state).
    #[default]
    Trapezoidal,
    /// Cell unknowns, first-order upwind.
    Upwind,
    /// Cell unknowns, MUSCL with van Albada's limiter.
    Tvd,
}

impl Scheme {
    /// Name used in case files and reports.
    pub fn as_str(self) -> &'static str {
        match self {
            Scheme::Trapezoidal => "trapezoidal",
            Scheme::Upwind => "upwind",
            Scheme::Tvd => "tvd",
        }
    }
    /// Formal order at steady state for smooth solutions.
    pub fn formal_order(self) -> f64 {
        match self {
            Scheme::Upwind => 1.0,
            Scheme::Trapezoidal | Scheme::Tvd => 2.0,
        }
    }
}

/// The ε of van Albada's limiter, K: slopes much smaller than this are treated as flat.
/// Where a stream has reached the other's temperature its differences are round-off, and
/// without ε the correction would switch on their signs and stall Newton; with ε² in the
/// denominator the correction is smooth everywhere. Its effect on accuracy is nil for
/// profiles with differences well above 1e-5 K per cell.
const FLAT_K: f64 = 1e-5;

/// van Albada's limited correction ½·φ(r)·a with φ(r) = (r² + r)/(r² + 1), r = b/a:
/// F = ½ab(a + b)/(a² + b² + ε²). Smooth in a and b (so Newton converges quadratically even where
/// a stream flattens out), second order where the profile is smooth, and within the TVD
/// bounds for r ≥ 0; at a local extremum (r < 0) it allows a small overshoot, bounded by
/// |φ| ≤ 0.21.
#[inline]
fn correction(a: f64, b: f64) -> f64 {
    0.5 * a * b * (a + b) / (a * a + b * b + FLAT_K * FLAT_K)
}

/// ∂F/∂a and ∂F/∂b of [`correction`].
#[inline]
fn correction_slopes(a: f64, b: f64) -> (f64, f64) {
    let den = a * a + b * b + FLAT_K * FLAT_K;
    let num = 0.5 * a * b * (a + b);
    let dnum_da = 0.5 * b * (2.0 * a + b);
    let dnum_db = 0.5 * a * (a + 2.0 * b);
    ((dnum_da * den - num * 2.0 * a) / (den * den), (dnum_db * den - num * 2.0 * b) / (den * den))
}

/// One dependency of a reconstructed temperature on an unknown: block offset from the cell
/// (within [`Grid::reach`]), component (0 hot, 1 cold) and weight.
pub type Dep = (isize, usize, f64);

/// Up to three dependencies; unused entries have weight 0.
pub type Deps = [Dep; 3];

/// The grid: arrangement, cell count, scheme and current inlet temperatures.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Grid {
    /// Flow arrangement.
    pub arrangement: Arrangement,
    /// Number of cells.
    pub n: usize,
    /// Scheme.
    pub scheme: Scheme,
    /// Hot inlet temperature, °C.
    pub hot_in_c: f64,
    /// Cold inlet temperature, °C.
    pub cold_in_c: f64,
}

impl Grid {
    /// The cell upstream of cell `i` in stream `s` (0 hot, 1 cold).
    #[inline]
    pub fn up(&self, s: usize, i: usize) -> Option<usize> {
        if s == 1 && self.arrangement == Arrangement::Counterflow {
            (i + 1 < self.n).then_some(i + 1)
        } else {
            i.checked_sub(1)
        }
    }

    /// The cell downstream of cell `i` in stream `s`.
    #[inline]
    pub fn down(&self, s: usize, i: usize) -> Option<usize> {
        if s == 1 && self.arrangement == Arrangement::Counterflow {
            i.checked_sub(1)
        } else {
            (i + 1 < self.n).then_some(i + 1)
        }
    }

    #[inline]
    fn inlet(&self, s: usize) -> f64 {
        if s == 0 {
            self.hot_in_c
        } else {
            self.cold_in_c
        }
    }

    #[inline]
    fn value(&self, x: &[Vector3<f64>], s: usize, i: Option<usize>) -> f64 {
        i.map(|j| x[j][s]).unwrap_or_else(|| self.inlet(s))
    }

    /// The two slopes of the MUSCL reconstruction of the face leaving cell `i`:
    /// a = T_i − T_up and b = T_down − T_i (for the outlet cell, b = a·r_up, the upstream
    /// cell's slope ratio carried over).
    fn slopes(&self, x: &[Vector3<f64>], s: usize, i: usize) -> (f64, f64) {
        let up = self.up(s, i);
        let a = x[i][s] - self.value(x, s, up);
        let b = match self.down(s, i) {
            Some(d) => x[d][s] - x[i][s],
            None => match up {
                Some(u) => {
                    let a_up = self.value(x, s, up) - self.value(x, s, self.up(s, u));
                    if a_up != 0.0 {
                        a * a / a_up
                    } else {
                        0.0
                    }
                }
                None => 0.0,
            },
        };
        (a, b)
    }

    /// Temperature of stream `s` on the face leaving cell `i`.
    pub fn out_face(&self, x: &[Vector3<f64>], s: usize, i: usize) -> f64 {
        match self.scheme {
            Scheme::Trapezoidal | Scheme::Upwind => x[i][s],
            Scheme::Tvd => {
                let (a, b) = self.slopes(x, s, i);
                x[i][s] + correction(a, b)
            }
        }
    }

    /// Temperature of stream `s` on the face entering cell `i`.
    pub fn in_face(&self, x: &[Vector3<f64>], s: usize, i: usize) -> f64 {
        match self.up(s, i) {
            Some(u) => self.out_face(x, s, u),
            None => self.inlet(s),
        }
    }

    /// Temperatures cell `i` sees.
    pub fn cell_temps(&self, x: &[Vector3<f64>], i: usize) -> CellTemps {
        let stream = |s: usize| {
            let (tin, tout) = (self.in_face(x, s, i), self.out_face(x, s, i));
            let bulk = match self.scheme {
                Scheme::Trapezoidal => 0.5 * (tin + x[i][s]),
                Scheme::Upwind | Scheme::Tvd => x[i][s],
            };
            (tin, tout, bulk)
        };
        let (hot_in, hot_out, hot_bulk) = stream(0);
        let (cold_in, cold_out, cold_bulk) = stream(1);
        CellTemps { hot_in, hot_out, hot_bulk, cold_in, cold_out, cold_bulk, wall: x[i][2] }
    }

    /// How many cells away a cell's residual reaches: 1, or 2 for TVD (its inflow face is
    /// reconstructed from the two cells upstream).
    pub fn reach(&self) -> usize {
        if self.scheme == Scheme::Tvd {
            2
        } else {
            1
        }
    }

    /// Block offset of cell `j` from cell `i`, if within the reach.
    #[inline]
    fn offset(&self, i: usize, j: usize) -> Option<isize> {
        let d = j as isize - i as isize;
        (d.unsigned_abs() <= self.reach()).then_some(d)
    }

    /// Dependencies of the face leaving cell `j` of stream `s`, seen from cell `i` (exact,
    /// within the reach).
    fn out_face_deps(&self, x: &[Vector3<f64>], s: usize, j: usize, i: usize, scale: f64) -> Deps {
        let mut deps = [(0, 0, 0.0); 3];
        let mut put = |k: usize, cell: Option<usize>, w: f64| {
            if let Some(o) = cell.and_then(|c| self.offset(i, c)) {
                deps[k] = (o, s, scale * w);
            }
        };
        match self.scheme {
            Scheme::Trapezoidal | Scheme::Upwind => put(0, Some(j), 1.0),
            Scheme::Tvd => {
                let (a, b) = self.slopes(x, s, j);
                if a != 0.0 || b != 0.0 {
                    let (fa, fb) = correction_slopes(a, b);
                    match self.down(s, j) {
                        Some(d) => {
                            put(0, Some(j), 1.0 + fa - fb);
                            put(1, self.up(s, j), -fa);
                            put(2, Some(d), fb);
                        }
                        None => {
                            // Outlet cell: b = a²/a_up with a_up = T_up − T_upup.
                            if b == 0.0 {
                                put(0, Some(j), 1.0 + fa);
                                put(1, self.up(s, j), -fa);
                                return deps;
                            }
                            let a_up = a * a / b;
                            let d_a = fa + fb * 2.0 * a / a_up;
                            let d_aup = -fb * a * a / (a_up * a_up);
                            put(0, Some(j), 1.0 + d_a);
                            put(1, self.up(s, j), -d_a + d_aup);
                            put(2, self.up(s, j).and_then(|u| self.up(s, u)), -d_aup);
                        }
                    }
                } else {
                    put(0, Some(j), 1.0);
                }
            }
        }
        deps
    }

    /// Dependencies of the seven cell inputs (hot in, hot out, hot bulk, cold in, cold out,
    /// cold bulk, wall) of cell `i` on the unknowns.
    pub fn dependencies(&self, x: &[Vector3<f64>], i: usize) -> [Deps; 7] {
        let none = [(0, 0, 0.0); 3];
        let mut out = [none; 7];
        for s in 0..2 {
            let base = 3 * s;
            let in_deps = match self.up(s, i) {
                Some(u) => self.out_face_deps(x, s, u, i, 1.0),
                None => none,
            };
            out[base] = in_deps;
            out[base + 1] = self.out_face_deps(x, s, i, i, 1.0);
            out[base + 2] = match self.scheme {
                Scheme::Trapezoidal => {
                    let mut d = in_deps;
                    for e in d.iter_mut() {
                        e.2 *= 0.5;
                    }
                    d[2] = (0, s, 0.5);
                    d
                }
                Scheme::Upwind | Scheme::Tvd => [(0, s, 1.0), (0, 0, 0.0), (0, 0, 0.0)],
            };
        }
        out[6] = [(0, 2, 1.0), (0, 0, 0.0), (0, 0, 0.0)];
        out
    }

    /// Outlet temperatures (hot, cold) from the face arrays of [`Grid::faces`].
    pub fn outlets(arrangement: Arrangement, hot_faces: &[f64], cold_faces: &[f64]) -> (f64, f64) {
        let hot = hot_faces[hot_faces.len() - 1];
        // (A network is never an axial line; `parallel` stands for "not counterflow".)
        let cold = match arrangement {
            Arrangement::Counterflow => cold_faces[0],
            Arrangement::Parallel | Arrangement::Network(_) => cold_faces[cold_faces.len() - 1],
        };
        (hot, cold)
    }

    /// Face temperatures of both streams at x = 0, Δx, …, L (the inlet faces included).
    pub fn faces(&self, x: &[Vector3<f64>]) -> (Vec<f64>, Vec<f64>) {
        let n = self.n;
        let mut hot = Vec::with_capacity(n + 1);
        hot.push(self.hot_in_c);
        hot.extend((0..n).map(|i| self.out_face(x, 0, i)));
        let cold = match self.arrangement {
            Arrangement::Counterflow => (0..n).map(|i| self.out_face(x, 1, i)).chain(std::iter::once(self.cold_in_c)).collect(),
            Arrangement::Parallel | Arrangement::Network(_) => std::iter::once(self.cold_in_c).chain((0..n).map(|i| self.out_face(x, 1, i))).collect(),
        };
        (hot, cold)
    }
}
