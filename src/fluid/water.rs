//! Water and steam, single phase, from IAPWS-IF97 (the `seuif97` crate, which also
//! carries the IAPWS 2008 viscosity and 2011 conductivity formulations).
//!
//! The phase is fixed per stream: liquid up to just below saturation at the stream
//! pressure, or vapour from just above it. A state across saturation is outside the
//! fluid's range, so the solver stops with a message rather than silently computing
//! boiling or condensation.

use super::{Fluid, FluidError, Props, RangeLimit, UniformTable};

/// Single-phase region a water stream stays in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WaterPhase {
    /// Compressed / saturated liquid (IF97 region 1).
    Liquid,
    /// Superheated vapour (IF97 region 2).
    Vapour,
}

/// Water at a fixed pressure, tabulated from IF97 once at construction.
#[derive(Debug, Clone)]
pub struct Water {
    pressure_pa: f64,
    phase: WaterPhase,
    t_sat_c: f64,
    table: UniformTable,
}

/// Margin kept from saturation, K: properties change steeply there and a cell that
/// close to saturation is at risk of local boiling or condensation at the wall.
const SATURATION_MARGIN_K: f64 = 0.1;
/// Table spacing, K.
const STEP_K: f64 = 0.25;
/// Highest vapour temperature tabulated, °C (IF97 region 2 reaches 800 °C).
const VAPOUR_MAX_C: f64 = 800.0;

impl Water {
    /// Water at `pressure_pa` (absolute) in the given phase.
    pub fn new(pressure_pa: f64, phase: WaterPhase) -> Result<Self, FluidError> {
        let p_mpa = pressure_pa * 1e-6;
        // Region 1/2 boundary by saturation exists from the triple point to the critical point.
        if !(0.000_611_657..=22.064).contains(&p_mpa) {
            return Err(FluidError::PressureOutOfRange { fluid: "water".into(), pressure_bar: pressure_pa * 1e-5, min_bar: 0.00612, max_bar: 220.64 });
        }
        let t_sat_c = saturation_temperature_c(pressure_pa);
        let (lo, hi) = match phase {
            WaterPhase::Liquid => (0.01, t_sat_c - SATURATION_MARGIN_K),
            WaterPhase::Vapour => (t_sat_c + SATURATION_MARGIN_K, VAPOUR_MAX_C),
        };
        let table = UniformTable::build(lo, hi, STEP_K, |t| direct(p_mpa, t));
        Ok(Self { pressure_pa, phase, t_sat_c, table })
    }

    /// Liquid if `t_c` is below saturation at this pressure, else vapour.
    pub fn phase_at(pressure_pa: f64, t_c: f64) -> WaterPhase {
        if t_c < saturation_temperature_c(pressure_pa) {
            WaterPhase::Liquid
        } else {
            WaterPhase::Vapour
        }
    }

    /// Saturation temperature at this stream's pressure, °C.
    pub fn saturation_c(&self) -> f64 {
        self.t_sat_c
    }
}

/// Saturation temperature (°C) at `pressure_pa`, IF97 region 4.
pub fn saturation_temperature_c(pressure_pa: f64) -> f64 {
    seuif97::px(pressure_pa * 1e-6, 0.0, seuif97::OT)
}

/// Saturation pressure (Pa) at `t_c` (°C), IF97 region 4 (valid up to the critical point).
pub fn saturation_pressure_pa(t_c: f64) -> f64 {
    seuif97::tx(t_c, 0.0, seuif97::OP) * 1e6
}

/// Properties straight from IF97 at (p in MPa, T in °C), in SI units; h in J/kg.
pub fn direct(p_mpa: f64, t_c: f64) -> (f64, Props) {
    use seuif97::{pt, OCP, OD, ODV, OH, OTC};
    let props = Props { density: pt(p_mpa, t_c, OD), cp: pt(p_mpa, t_c, OCP) * 1e3, viscosity: pt(p_mpa, t_c, ODV), conductivity: pt(p_mpa, t_c, OTC) };
    (pt(p_mpa, t_c, OH) * 1e3, props)
}

impl Fluid for Water {
    fn name(&self) -> String {
        let phase = match self.phase {
            WaterPhase::Liquid => "liquid",
            WaterPhase::Vapour => "vapour",
        };
        format!("water ({phase}, IAPWS-IF97, {:.4} bar)", self.pressure_pa * 1e-5)
    }
    fn range(&self) -> RangeLimit {
        let reason = match self.phase {
            WaterPhase::Liquid => format!(
                "liquid water at {:.4} bar saturates at {:.2} °C; hxgrid models one phase and does not compute boiling",
                self.pressure_pa * 1e-5,
                self.t_sat_c
            ),
            WaterPhase::Vapour => format!(
                "steam at {:.4} bar saturates at {:.2} °C; hxgrid models one phase and does not compute condensation",
                self.pressure_pa * 1e-5,
                self.t_sat_c
            ),
        };
        RangeLimit { min_c: self.table.t_min(), max_c: self.table.t_max(), reason }
    }
    fn bounds(&self) -> (f64, f64) {
        (self.table.t_min(), self.table.t_max())
    }
    fn props(&self, t_c: f64) -> Props {
        self.table.props(t_c)
    }
    fn enthalpy(&self, t_c: f64) -> f64 {
        self.table.enthalpy(t_c)
    }
    fn saturation_pressure_pa(&self, t_c: f64) -> Option<f64> {
        (self.phase == WaterPhase::Liquid).then(|| saturation_pressure_pa(t_c.clamp(0.01, 373.9)))
    }
}
