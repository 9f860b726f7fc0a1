//! Fluid properties: one trait the solver uses, and the sources behind it.
//!
//! Owns: density, specific heat, enthalpy, viscosity and conductivity as functions of
//! temperature at the stream's (fixed) pressure, and each fluid's valid range.
//! Must not: touch files or the terminal. A constructed fluid is valid; its property
//! functions accept any temperature (they clamp to the valid range so that Newton
//! iterates stay finite) and the solver checks the converged state against
//! [`Fluid::range`].

mod constant;
pub mod library;
mod table;
mod tabulated;
pub mod water;

pub use constant::ConstantFluid;
pub use table::UniformTable;
pub use tabulated::{monotone_slopes, TableError, TableFluid, HEADER as TABLE_HEADER};
pub use water::{Water, WaterPhase};

use std::fmt::Debug;

/// Local transport and thermodynamic properties (SI units).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Props {
    /// Density, kg/m³.
    pub density: f64,
    /// Isobaric specific heat, J/(kg·K).
    pub cp: f64,
    /// Dynamic viscosity, Pa·s.
    pub viscosity: f64,
    /// Thermal conductivity, W/(m·K).
    pub conductivity: f64,
}

impl Props {
    /// Prandtl number μ·cp/k.
    pub fn prandtl(&self) -> f64 {
        self.viscosity * self.cp / self.conductivity
    }
}

/// Why a fluid's valid range ends where it does.
#[derive(Debug, Clone, PartialEq)]
pub struct RangeLimit {
    /// Lower end of the valid range, °C.
    pub min_c: f64,
    /// Upper end of the valid range, °C.
    pub max_c: f64,
    /// Plain-words reason for the limits (e.g. the saturation temperature).
    pub reason: String,
}

/// A single-phase fluid at a fixed pressure.
pub trait Fluid: Send + Sync + Debug {
    /// Short name for reports.
    fn name(&self) -> String;
    /// Valid temperature range at this pressure, °C, with the reason for it.
    fn range(&self) -> RangeLimit;
    /// The range's ends only, °C (cheap: hot loops call this, not [`Fluid::range`]).
    fn bounds(&self) -> (f64, f64) {
        let r = self.range();
        (r.min_c, r.max_c)
    }
    /// Properties at temperature `t_c` (°C); clamped to the valid range.
    fn props(&self, t_c: f64) -> Props;
    /// Specific enthalpy, J/kg (fixed but arbitrary reference). Outside the valid range it
    /// continues linearly with the end-point cp, so that it stays monotone.
    fn enthalpy(&self, t_c: f64) -> f64;

    /// For a liquid that can flash: its saturation (vapour) pressure at `t_c`, Pa, so that a
    /// local pressure below it can be refused. None for fluids without that check.
    fn saturation_pressure_pa(&self, _t_c: f64) -> Option<f64> {
        None
    }

    /// Density at temperature `t_c` and pressure `p_pa`, kg/m³. The default ignores the
    /// pressure (liquids, tables at one pressure); ideal gases override it.
    fn density_at(&self, t_c: f64, _p_pa: f64) -> f64 {
        self.props(t_c).density
    }

    /// Temperature (°C) whose enthalpy is `h` (J/kg): Newton on h(T) with cp as slope,
    /// safeguarded by bisection inside a bracket. Enthalpy is monotone in T for a
    /// single-phase fluid, so the root is unique.
    fn temperature_from_enthalpy(&self, h: f64) -> f64 {
        let (min_c, max_c) = self.bounds();
        let (mut lo, mut hi) = (min_c - 1000.0, max_c + 1000.0);
        // Start from the straight line between the range's end enthalpies.
        let (h0, h1) = (self.enthalpy(min_c), self.enthalpy(max_c));
        let mut t = if h1 > h0 { min_c + (max_c - min_c) * (h - h0) / (h1 - h0) } else { 0.5 * (min_c + max_c) };
        for _ in 0..100 {
            let f = self.enthalpy(t) - h;
            if f > 0.0 {
                hi = t;
            } else {
                lo = t;
            }
            let cp = self.props(t).cp;
            let mut next = t - f / cp;
            if !(next > lo && next < hi) {
                next = 0.5 * (lo + hi);
            }
            if (next - t).abs() < 1e-12 * (1.0 + t.abs()) {
                return next;
            }
            t = next;
        }
        t
    }
}

/// Errors building a fluid from its description.
#[derive(Debug, thiserror::Error, PartialEq)]
pub enum FluidError {
    /// Pressure outside what the property source covers.
    #[error("pressure {pressure_bar} bar is outside {min_bar}..{max_bar} bar covered by {fluid}")]
    PressureOutOfRange {
        /// Fluid name.
        fluid: String,
        /// Given pressure, bar (absolute).
        pressure_bar: f64,
        /// Lowest valid, bar.
        min_bar: f64,
        /// Highest valid, bar.
        max_bar: f64,
    },
}
