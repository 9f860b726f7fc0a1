//! Time-varying inputs: schedules (steps, ramps, tables) and the four boundary conditions.

use crate::model::Exchanger;

/// A value that varies in time (an inlet temperature or a mass flow).
#[derive(Debug, Clone, PartialEq)]
pub enum Signal {
    /// Always this value.
    Constant(f64),
    /// `before` until `time_s`, then `after`.
    Step {
        /// s
        time_s: f64,
        /// value before
        before: f64,
        /// value after
        after: f64,
    },
    /// Linear from `from` at `start_s` to `to` at `end_s`, constant outside.
    Ramp {
        /// s
        start_s: f64,
        /// s
        end_s: f64,
        /// value up to start
        from: f64,
        /// value from end
        to: f64,
    },
    /// Piecewise linear through (time, value) points, constant outside.
    Table(Vec<(f64, f64)>),
}

/// One change of a schedule: (start, end, from, to), times in s.
pub type Change = (f64, f64, f64, f64);

impl Signal {
    /// Value at time `t`.
    pub fn at(&self, t: f64) -> f64 {
        match self {
            Signal::Constant(v) => *v,
            Signal::Step { time_s, before, after } => {
                if t < *time_s {
                    *before
                } else {
                    *after
                }
            }
            Signal::Ramp { start_s, end_s, from, to } => {
                if t <= *start_s {
                    *from
                } else if t >= *end_s {
                    *to
                } else {
                    from + (to - from) * (t - start_s) / (end_s - start_s)
                }
            }
            Signal::Table(points) => {
                let k = points.partition_point(|p| p.0 <= t);
                if k == 0 {
                    points[0].1
                } else if k == points.len() {
                    points[k - 1].1
                } else {
                    let ((t0, v0), (t1, v1)) = (points[k - 1], points[k]);
                    v0 + (v1 - v0) * (t - t0) / (t1 - t0)
                }
            }
        }
    }

    /// Value just before time `t` (the left limit): differs from [`Signal::at`] only at the
    /// instant of a step. The initial state of a run uses the inputs just before t = 0, so a
    /// step at t = 0 acts at 0⁺ instead of being absorbed into the initial steady state.
    pub fn before(&self, t: f64) -> f64 {
        match self {
            Signal::Step { time_s, before, .. } if t <= *time_s => *before,
            other => other.at(t),
        }
    }

    /// Its changes in time order, a step having start = end.
    pub fn changes(&self) -> Vec<Change> {
        match self {
            Signal::Constant(_) => vec![],
            Signal::Step { time_s, before, after } => vec![(*time_s, *time_s, *before, *after)],
            Signal::Ramp { start_s, end_s, from, to } => vec![(*start_s, *end_s, *from, *to)],
            Signal::Table(p) => p.windows(2).filter(|w| w[0].1 != w[1].1).map(|w| (w[0].0, w[1].0, w[0].1, w[1].1)).collect(),
        }
    }

    /// Times where the signal or its slope jumps (integration restarts there).
    pub fn breakpoints(&self) -> Vec<f64> {
        match self {
            Signal::Constant(_) => vec![],
            Signal::Step { time_s, .. } => vec![*time_s],
            Signal::Ramp { start_s, end_s, .. } => vec![*start_s, *end_s],
            Signal::Table(p) => p.iter().map(|x| x.0).collect(),
        }
    }
}

/// The four boundary conditions over time.
#[derive(Debug, Clone, PartialEq)]
pub struct Inputs {
    /// Hot inlet temperature, °C.
    pub hot_inlet_c: Signal,
    /// Hot mass flow, kg/s (may fall to zero).
    pub hot_flow_kg_s: Signal,
    /// Cold inlet temperature, °C.
    pub cold_inlet_c: Signal,
    /// Cold mass flow, kg/s.
    pub cold_flow_kg_s: Signal,
}

impl Inputs {
    /// The exchanger's own design values, constant in time.
    pub fn constant(ex: &Exchanger) -> Self {
        Self {
            hot_inlet_c: Signal::Constant(ex.hot.inlet_c),
            hot_flow_kg_s: Signal::Constant(ex.hot.mass_flow_kg_s),
            cold_inlet_c: Signal::Constant(ex.cold.inlet_c),
            cold_flow_kg_s: Signal::Constant(ex.cold.mass_flow_kg_s),
        }
    }

    /// The exchanger with the inlet temperatures and flows of time `t`.
    pub fn apply(&self, ex: &Exchanger, t: f64) -> Exchanger {
        self.applied(ex, |s| s.at(t))
    }

    /// The exchanger with the inputs just before time `t` (see [`Signal::before`]).
    pub fn apply_before(&self, ex: &Exchanger, t: f64) -> Exchanger {
        self.applied(ex, |s| s.before(t))
    }

    /// The exchanger with each input's value from `value` (flows floored at zero).
    fn applied(&self, ex: &Exchanger, value: impl Fn(&Signal) -> f64) -> Exchanger {
        let mut e = ex.clone();
        e.hot.inlet_c = value(&self.hot_inlet_c);
        e.hot.mass_flow_kg_s = value(&self.hot_flow_kg_s).max(0.0);
        e.cold.inlet_c = value(&self.cold_inlet_c);
        e.cold.mass_flow_kg_s = value(&self.cold_flow_kg_s).max(0.0);
        e
    }

    pub(super) fn breakpoints(&self) -> Vec<f64> {
        [&self.hot_inlet_c, &self.hot_flow_kg_s, &self.cold_inlet_c, &self.cold_flow_kg_s].iter().flat_map(|s| s.breakpoints()).collect()
    }
}

impl Signal {
    /// Lowest and highest value the signal takes.
    pub fn range(&self) -> (f64, f64) {
        let values: Vec<f64> = match self {
            Signal::Constant(v) => vec![*v],
            Signal::Step { before, after, .. } => vec![*before, *after],
            Signal::Ramp { from, to, .. } => vec![*from, *to],
            Signal::Table(p) => p.iter().map(|x| x.1).collect(),
        };
        values.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| (a.min(v), b.max(v)))
    }
}
