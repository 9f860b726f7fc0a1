//! A fluid with constant properties: the textbook assumption, used for checks against
//! closed-form results and when a user has only mean-temperature data.

use super::{Fluid, Props, RangeLimit};

/// Constant density, cp, viscosity and conductivity; enthalpy h = cp·T (T in °C).
#[derive(Debug, Clone)]
pub struct ConstantFluid {
    props: Props,
}

impl ConstantFluid {
    /// A fluid with these properties everywhere. The caller (case validation) has checked
    /// they are positive and finite.
    pub fn new(props: Props) -> Self {
        Self { props }
    }
}

impl Fluid for ConstantFluid {
    fn name(&self) -> String {
        "constant-property fluid".into()
    }
    fn range(&self) -> RangeLimit {
        RangeLimit { min_c: -273.15, max_c: 1.0e4, reason: "constant properties have no range of their own".into() }
    }
    fn bounds(&self) -> (f64, f64) {
        (-273.15, 1.0e4)
    }
    fn props(&self, _t_c: f64) -> Props {
        self.props
    }
    fn enthalpy(&self, t_c: f64) -> f64 {
        self.props.cp * t_c
    }
    fn temperature_from_enthalpy(&self, h: f64) -> f64 {
        h / self.props.cp
    }
}
