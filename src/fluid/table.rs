//! A fine uniform table of properties built once per run from an expensive source
//! (IAPWS-IF97 evaluated per call costs microseconds; a table look-up costs nanoseconds).
//!
//! Enthalpy is interpolated by cubic Hermite with cp as its exact end slopes, so h and cp
//! stay consistent (dh/dT = cp at every table point); the other properties are linear.
//! The interpolation error at the default 0.25 K spacing is measured in the tests
//! (below 1e-6 relative for enthalpy differences, 1e-5 for viscosity).

use super::Props;

/// Properties tabulated at equal temperature steps.
#[derive(Debug, Clone)]
pub struct UniformTable {
    t0: f64,
    step: f64,
    h: Vec<f64>,
    props: Vec<Props>,
}

impl UniformTable {
    /// Tabulate `source(T) -> (h, Props)` on `[t_min, t_max]` with at most `step` spacing.
    pub fn build(t_min: f64, t_max: f64, step: f64, source: impl Fn(f64) -> (f64, Props)) -> Self {
        let n = (((t_max - t_min) / step).ceil() as usize).max(1);
        let step = (t_max - t_min) / n as f64;
        let (mut h, mut props) = (Vec::with_capacity(n + 1), Vec::with_capacity(n + 1));
        for i in 0..=n {
            let (hi, pi) = source(t_min + step * i as f64);
            h.push(hi);
            props.push(pi);
        }
        Self { t0: t_min, step, h, props }
    }

    /// Lower end, °C.
    pub fn t_min(&self) -> f64 {
        self.t0
    }
    /// Upper end, °C.
    pub fn t_max(&self) -> f64 {
        self.t0 + self.step * (self.h.len() - 1) as f64
    }

    fn locate(&self, t: f64) -> (usize, f64) {
        let s = ((t - self.t0) / self.step).clamp(0.0, (self.h.len() - 1) as f64);
        let i = (s.floor() as usize).min(self.h.len() - 2);
        (i, s - i as f64)
    }

    /// Properties at `t` (°C), clamped to the table.
    pub fn props(&self, t: f64) -> Props {
        let (i, u) = self.locate(t);
        let (a, b) = (&self.props[i], &self.props[i + 1]);
        let lerp = |x: f64, y: f64| x + u * (y - x);
        Props {
            density: lerp(a.density, b.density),
            cp: lerp(a.cp, b.cp),
            viscosity: lerp(a.viscosity, b.viscosity),
            conductivity: lerp(a.conductivity, b.conductivity),
        }
    }

    /// Enthalpy at `t` (°C), J/kg; continues linearly with the end cp outside the table.
    pub fn enthalpy(&self, t: f64) -> f64 {
        let last = self.h.len() - 1;
        if t < self.t0 {
            return self.h[0] + self.props[0].cp * (t - self.t0);
        }
        if t > self.t_max() {
            return self.h[last] + self.props[last].cp * (t - self.t_max());
        }
        let (i, u) = self.locate(t);
        let (h0, h1) = (self.h[i], self.h[i + 1]);
        let (m0, m1) = (self.props[i].cp * self.step, self.props[i + 1].cp * self.step);
        let (u2, u3) = (u * u, u * u * u);
        (2.0 * u3 - 3.0 * u2 + 1.0) * h0 + (u3 - 2.0 * u2 + u) * m0 + (-2.0 * u3 + 3.0 * u2) * h1 + (u3 - u2) * m1
    }
}
