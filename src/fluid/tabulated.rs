//! Fluids from property tables: the built-in library and users' own files.
//!
//! File format (hxgrid's own, plain text):
//! ```text
//! # hxgrid fluid table
//! # name: my-oil                       (optional metadata lines "# key: value")
//! # source: supplier data sheet 2024   (recorded in reports)
//! # pressure_Pa: 101325                (optional: the pressure the data hold at)
//! # ideal_gas_molar_mass_kg_mol: 0.029 (optional: density from p·M/(R·T) instead of the column)
//! temperature_C,density_kg_m3,specific_heat_J_kgK,viscosity_Pa_s,conductivity_W_mK
//! 20, 870, 1850, 0.030, 0.130
//! ...
//! ```
//! The header line is required exactly (it carries the units). Temperatures strictly
//! increase; every property is positive. Other lines starting with `#` and blank lines are
//! ignored.
//!
//! Interpolation: monotone piecewise-cubic Hermite (Fritsch & Carlson, SIAM J. Numer. Anal.
//! 17 (1980) 238–246) in each property, so nothing overshoots between points; viscosity is
//! interpolated in ln μ (it varies exponentially with temperature for liquids). Enthalpy is
//! the exact integral of the cp interpolant, so dh/dT = cp everywhere and energy is
//! conserved. Outside the table the fluid is out of range: the solver stops with an error
//! naming the stream, the position and the table's range; nothing is extrapolated into a
//! result.

use super::{Fluid, Props, RangeLimit};

/// Columns a table must have, in this order.
pub const HEADER: &str = "temperature_C,density_kg_m3,specific_heat_J_kgK,viscosity_Pa_s,conductivity_W_mK";

/// Universal gas constant, J/(mol·K) (CODATA 2018, exact).
const R_UNIVERSAL: f64 = 8.314_462_618;

/// A problem in a table file.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("{file}{}: {problem}", if *line > 0 { format!(", line {line}") } else { String::new() })]
pub struct TableError {
    /// File name (or built-in fluid name).
    pub file: String,
    /// 1-based line number (0 for the file as a whole).
    pub line: usize,
    /// What is wrong and what would be valid.
    pub problem: String,
}

/// One interpolated column: values and Fritsch–Carlson slopes at the nodes.
#[derive(Debug, Clone)]
struct Column {
    y: Vec<f64>,
    m: Vec<f64>,
}

impl Column {
    fn new(t: &[f64], y: Vec<f64>) -> Self {
        let m = monotone_slopes(t, &y);
        Self { y, m }
    }
    #[cfg(test)]
    fn eval(&self, i: usize, u: f64, dt: f64) -> f64 {
        let (u2, u3) = (u * u, u * u * u);
        (2.0 * u3 - 3.0 * u2 + 1.0) * self.y[i] + (u3 - 2.0 * u2 + u) * dt * self.m[i] + (-2.0 * u3 + 3.0 * u2) * self.y[i + 1] + (u3 - u2) * dt * self.m[i + 1]
    }
    /// ∫ from node i to u·dt of the interpolant.
    #[inline]
    fn integral(&self, i: usize, u: f64, dt: f64) -> f64 {
        let (u2, u3, u4) = (u * u, u * u * u, u * u * u * u);
        dt * ((u - u3 + 0.5 * u4) * self.y[i]
            + (0.5 * u2 - 2.0 / 3.0 * u3 + 0.25 * u4) * dt * self.m[i]
            + (u3 - 0.5 * u4) * self.y[i + 1]
            + (-u3 / 3.0 + 0.25 * u4) * dt * self.m[i + 1])
    }
}

/// Fritsch–Carlson slopes: three-point (weighted harmonic) estimates at interior nodes,
/// zero at local extrema, limited so each segment stays monotone.
pub fn monotone_slopes(t: &[f64], y: &[f64]) -> Vec<f64> {
    let n = t.len();
    if n < 2 {
        return vec![0.0; n];
    }
    let d: Vec<f64> = (0..n - 1).map(|i| (y[i + 1] - y[i]) / (t[i + 1] - t[i])).collect();
    let mut m = vec![0.0; n];
    m[0] = d[0];
    m[n - 1] = d[n - 2];
    for i in 1..n - 1 {
        if d[i - 1] * d[i] <= 0.0 {
            m[i] = 0.0;
        } else {
            // Fritsch–Butland weighted harmonic mean (satisfies the monotonicity region).
            let (h0, h1) = (t[i] - t[i - 1], t[i + 1] - t[i]);
            let (w1, w2) = (2.0 * h1 + h0, h1 + 2.0 * h0);
            m[i] = (w1 + w2) / (w1 / d[i - 1] + w2 / d[i]);
        }
    }
    // End slopes: limit to 3× the secant (Fritsch–Carlson condition).
    for (k, dk) in [(0, d[0]), (n - 1, d[n - 2])] {
        if m[k] * dk <= 0.0 {
            m[k] = 0.0;
        } else if (m[k] / dk).abs() > 3.0 {
            m[k] = 3.0 * dk;
        }
    }
    m
}

/// One interval of the table with each column's cubic in u = (T − t0)/Δt, coefficients
/// lowest power first (precomputed so a look-up is a few multiply-adds).
#[derive(Debug, Clone, Copy)]
struct Segment {
    t0: f64,
    dt: f64,
    inv_dt: f64,
    h0: f64,
    rho: [f64; 4],
    cp: [f64; 4],
    ln_mu: [f64; 4],
    k: [f64; 4],
}

#[inline]
fn horner(c: &[f64; 4], u: f64) -> f64 {
    c[0] + u * (c[1] + u * (c[2] + u * c[3]))
}

impl Column {
    /// Power-basis coefficients of segment i in u.
    fn coefficients(&self, i: usize, dt: f64) -> [f64; 4] {
        let (y0, y1, m0, m1) = (self.y[i], self.y[i + 1], self.m[i] * dt, self.m[i + 1] * dt);
        [y0, m0, 3.0 * (y1 - y0) - 2.0 * m0 - m1, 2.0 * (y0 - y1) + m0 + m1]
    }
}

/// A fluid defined by a property table at a fixed pressure.
#[derive(Debug, Clone)]
pub struct TableFluid {
    segments: Vec<Segment>,
    /// Segment index at the start of each of `guide.len()` equal temperature buckets.
    guide: Vec<u32>,
    guide_scale: f64,
    name: String,
    source: String,
    origin: String,
    pressure_pa: Option<f64>,
    molar_mass: Option<f64>,
    t: Vec<f64>,
    cp: Column,
    /// Enthalpy at each node from the first, J/kg.
    h_nodes: Vec<f64>,
    /// Stream pressure for ideal-gas density, Pa.
    stream_pressure_pa: f64,
}

impl TableFluid {
    /// Parse table text; `origin` names it in errors (a path or "built-in NAME").
    pub fn parse(text: &str, origin: &str) -> Result<Self, TableError> {
        let err = |line: usize, problem: String| TableError { file: origin.to_string(), line, problem };
        let mut meta = std::collections::HashMap::new();
        let mut header_seen = false;
        let mut rows: Vec<[f64; 5]> = Vec::new();
        let text = text.strip_prefix('\u{feff}').unwrap_or(text);
        for (idx, raw) in text.lines().enumerate() {
            let line_no = idx + 1;
            let line = raw.trim();
            if line.is_empty() {
                continue;
            }
            if let Some(comment) = line.strip_prefix('#') {
                if let Some((k, v)) = comment.split_once(':') {
                    meta.insert(k.trim().to_string(), v.trim().to_string());
                }
                continue;
            }
            if !header_seen {
                let cols: Vec<&str> = line.split(',').map(str::trim).collect();
                let want: Vec<&str> = HEADER.split(',').collect();
                if cols != want {
                    let detail = cols
                        .iter()
                        .zip(&want)
                        .position(|(a, b)| a != b)
                        .map(|i| format!("column {} is {} but must be '{}'", i + 1, crate::text::quote(cols[i], 20), want[i]))
                        .unwrap_or_else(|| format!("{} columns given, {} required", cols.len(), want.len()));
                    return Err(err(line_no, format!("the header line (names with units) must be exactly '{HEADER}': {detail}")));
                }
                header_seen = true;
                continue;
            }
            let cells: Vec<&str> = line.split(',').map(str::trim).collect();
            if cells.len() != 5 {
                return Err(err(line_no, format!("{} values given; each row needs 5 ({HEADER})", cells.len())));
            }
            let mut row = [0.0; 5];
            for (j, c) in cells.iter().enumerate() {
                row[j] = c.parse::<f64>().ok().filter(|v| v.is_finite()).ok_or_else(|| {
                    err(line_no, format!("{} in column {} ({}) is not a finite number", crate::text::quote(c, 24), j + 1, HEADER.split(',').nth(j).unwrap()))
                })?;
            }
            for (j, name) in HEADER.split(',').enumerate().skip(1) {
                if row[j] <= 0.0 {
                    return Err(err(line_no, format!("{name} = {} must be positive", crate::text::num(row[j]))));
                }
            }
            if let Some(prev) = rows.last() {
                if row[0] <= prev[0] {
                    return Err(err(
                        line_no,
                        format!(
                            "temperature {} °C does not increase (previous row {} °C): rows must be in strictly increasing temperature",
                            crate::text::num(row[0]),
                            crate::text::num(prev[0])
                        ),
                    ));
                }
            }
            rows.push(row);
        }
        if !header_seen {
            return Err(err(0, format!("no header line found: the first non-comment line must be '{HEADER}'")));
        }
        if rows.len() < 2 {
            return Err(err(0, format!("{} data row(s): a table needs at least 2", rows.len())));
        }
        let num = |key: &str| -> Result<Option<f64>, TableError> {
            match meta.get(key) {
                None => Ok(None),
                Some(v) => v
                    .parse::<f64>()
                    .ok()
                    .filter(|x| x.is_finite() && *x > 0.0)
                    .map(Some)
                    .ok_or_else(|| err(0, format!("metadata '{key}' is {} but must be a positive number", crate::text::quote(v, 24)))),
            }
        };
        let t: Vec<f64> = rows.iter().map(|r| r[0]).collect();
        let col = |j: usize| rows.iter().map(|r| r[j]).collect::<Vec<f64>>();
        let cp = Column::new(&t, col(2));
        let mut h_nodes = vec![0.0; t.len()];
        for i in 0..t.len() - 1 {
            h_nodes[i + 1] = h_nodes[i] + cp.integral(i, 1.0, t[i + 1] - t[i]);
        }
        let pressure_pa = num("pressure_Pa")?;
        let rho = Column::new(&t, col(1));
        let ln_mu = Column::new(&t, col(3).iter().map(|v| v.ln()).collect());
        let k = Column::new(&t, col(4));
        let segments: Vec<Segment> = (0..t.len() - 1)
            .map(|i| {
                let dt = t[i + 1] - t[i];
                Segment {
                    t0: t[i],
                    dt,
                    inv_dt: 1.0 / dt,
                    h0: h_nodes[i],
                    rho: rho.coefficients(i, dt),
                    cp: cp.coefficients(i, dt),
                    ln_mu: ln_mu.coefficients(i, dt),
                    k: k.coefficients(i, dt),
                }
            })
            .collect();
        let buckets = 4 * t.len();
        let guide_scale = buckets as f64 / (t[t.len() - 1] - t[0]);
        let guide = (0..buckets)
            .map(|b| {
                let tb = t[0] + b as f64 / guide_scale;
                (t.partition_point(|&x| x <= tb).saturating_sub(1)).min(t.len() - 2) as u32
            })
            .collect();
        Ok(Self {
            segments,
            guide,
            guide_scale,
            name: meta.get("name").cloned().unwrap_or_else(|| origin.to_string()),
            source: meta.get("source").cloned().unwrap_or_else(|| "not stated in the table".into()),
            origin: origin.to_string(),
            pressure_pa,
            molar_mass: num("ideal_gas_molar_mass_kg_mol")?,
            cp,
            h_nodes,
            t,
            stream_pressure_pa: pressure_pa.unwrap_or(101_325.0),
        })
    }

    /// The same fluid for a stream at `pressure_pa` (used for ideal-gas density only).
    pub fn at_pressure(mut self, pressure_pa: f64) -> Self {
        self.stream_pressure_pa = pressure_pa;
        self
    }

    /// Pressure the table's data hold at, if stated, Pa.
    pub fn table_pressure_pa(&self) -> Option<f64> {
        self.pressure_pa
    }

    /// True if density comes from the ideal-gas law.
    pub fn is_ideal_gas(&self) -> bool {
        self.molar_mass.is_some()
    }

    /// Source line from the table's metadata.
    pub fn source(&self) -> &str {
        &self.source
    }

    /// Table temperatures, °C.
    pub fn temperatures(&self) -> &[f64] {
        &self.t
    }

    /// Segment containing `t` (clamped to the table) and the fraction u within it.
    #[inline]
    fn locate(&self, t: f64) -> (&Segment, f64) {
        let n = self.t.len();
        let t = t.clamp(self.t[0], self.t[n - 1]);
        let bucket = (((t - self.t[0]) * self.guide_scale) as usize).min(self.guide.len() - 1);
        let mut i = self.guide[bucket] as usize;
        while i + 2 < n && self.t[i + 1] <= t {
            i += 1;
        }
        let seg = &self.segments[i];
        (seg, (t - seg.t0) * seg.inv_dt)
    }
}

impl Fluid for TableFluid {
    fn name(&self) -> String {
        format!("{} (table: {})", self.name, self.origin)
    }
    fn range(&self) -> RangeLimit {
        RangeLimit {
            min_c: self.t[0],
            max_c: *self.t.last().unwrap(),
            reason: format!("the property table {} covers only this range; hxgrid does not extrapolate", self.origin),
        }
    }
    fn bounds(&self) -> (f64, f64) {
        (self.t[0], self.t[self.t.len() - 1])
    }
    fn props(&self, t_c: f64) -> Props {
        let (seg, u) = self.locate(t_c);
        let density = match self.molar_mass {
            Some(m) => self.stream_pressure_pa * m / (R_UNIVERSAL * (seg.t0 + u * seg.dt + 273.15)),
            None => horner(&seg.rho, u),
        };
        Props { density, cp: horner(&seg.cp, u), viscosity: horner(&seg.ln_mu, u).exp(), conductivity: horner(&seg.k, u) }
    }
    fn density_at(&self, t_c: f64, p_pa: f64) -> f64 {
        match self.molar_mass {
            Some(m) => p_pa * m / (R_UNIVERSAL * (t_c.clamp(self.t[0], *self.t.last().unwrap()) + 273.15)),
            None => self.props(t_c).density,
        }
    }
    fn enthalpy(&self, t_c: f64) -> f64 {
        let n = self.t.len();
        if t_c < self.t[0] {
            return self.cp.y[0] * (t_c - self.t[0]);
        }
        if t_c > self.t[n - 1] {
            return self.h_nodes[n - 1] + self.cp.y[n - 1] * (t_c - self.t[n - 1]);
        }
        let (seg, u) = self.locate(t_c);
        let c = &seg.cp;
        seg.h0 + seg.dt * u * (c[0] + u * (c[1] / 2.0 + u * (c[2] / 3.0 + u * c[3] / 4.0)))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Monotone data stay monotone between points; a cubic through the same points would
    /// overshoot at the step (Fritsch & Carlson 1980, the property the method guarantees).
    #[test]
    fn no_overshoot_at_a_step() {
        let t = [0.0, 1.0, 2.0, 3.0, 4.0];
        let y = [1.0, 1.0, 1.0, 5.0, 5.0];
        let c = Column::new(&t, y.to_vec());
        for s in 0..=400 {
            let x = s as f64 / 100.0;
            let i = (x.floor() as usize).min(3);
            let v = c.eval(i, x - i as f64, 1.0);
            assert!((1.0 - 1e-12..=5.0 + 1e-12).contains(&v), "{x}: {v}");
        }
    }

    /// The enthalpy integral of a linear cp is exact: h = a·T + b·T²/2.
    #[test]
    fn enthalpy_integrates_cp() {
        let text = format!("{HEADER}\n0,1000,4000,0.001,0.6\n10,1000,4100,0.001,0.6\n30,1000,4300,0.001,0.6\n");
        let f = TableFluid::parse(&text, "lin").unwrap();
        let exact = |t: f64| 4000.0 * t + 10.0 * t * t / 2.0;
        for t in [0.0, 3.3, 10.0, 17.5, 30.0] {
            assert!((f.enthalpy(t) - exact(t)).abs() < 1e-9, "{t}");
        }
    }
}
