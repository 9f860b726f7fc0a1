//! Conduction through the separating wall.

/// The wall between the two streams.
#[derive(Debug, Clone, PartialEq)]
pub enum Wall {
    /// Tube wall: R' = ln(r_o/r_i)/(2πk) per metre of length.
    Tube {
        /// Inner diameter, m.
        inner_diameter_m: f64,
        /// Outer diameter, m.
        outer_diameter_m: f64,
        /// Conductivity, W/(m·K).
        conductivity_w_mk: f64,
        /// Metres of tube per metre of exchanger length (1 for a double pipe; the tube
        /// count times tube length per depth for a tube bank).
        tube_length_per_length: f64,
    },
    /// Plane wall: R' = t/(k·a) per metre, a = area per metre of length.
    Plane {
        /// Thickness, m.
        thickness_m: f64,
        /// Conductivity, W/(m·K).
        conductivity_w_mk: f64,
        /// Area per metre of exchanger length, m²/m.
        area_per_length_m: f64,
    },
}

impl Wall {
    /// Metal cross-section per metre of exchanger length, m² (its heat capacity per metre is
    /// this × density × specific heat).
    pub fn cross_section_m2(&self) -> f64 {
        match *self {
            Wall::Tube { inner_diameter_m, outer_diameter_m, tube_length_per_length, .. } => {
                std::f64::consts::PI / 4.0 * (outer_diameter_m.powi(2) - inner_diameter_m.powi(2)) * tube_length_per_length
            }
            Wall::Plane { thickness_m, area_per_length_m, .. } => thickness_m * area_per_length_m,
        }
    }

    /// Conduction resistance of one metre of wall, K·m/W (divide by a cell's length for
    /// the cell's resistance in K/W).
    pub fn resistance_per_length(&self) -> f64 {
        match *self {
            Wall::Tube { inner_diameter_m, outer_diameter_m, conductivity_w_mk, tube_length_per_length } => {
                (outer_diameter_m / inner_diameter_m).ln() / (2.0 * std::f64::consts::PI * conductivity_w_mk * tube_length_per_length)
            }
            Wall::Plane { thickness_m, conductivity_w_mk, area_per_length_m } => thickness_m / (conductivity_w_mk * area_per_length_m),
        }
    }
}
