//! Why a steady solve failed, as data with a plain description. Errors name quantities, not
//! case-file keys: what to change in a case file is said by `case::advice`, which knows them.

/// Why a steady solve failed.
#[derive(Debug, Clone, thiserror::Error, PartialEq)]
pub enum SolveError {
    /// Newton did not reach the tolerance.
    #[error(
        "the steady solver did not converge in {iterations} iterations: relative residual {residual:.3e} \
         (tolerance {tolerance:.1e}), worst at x = {} m",
        crate::text::num(*worst_position_m)
    )]
    NotConverged {
        /// Iterations taken.
        iterations: usize,
        /// Last relative residual.
        residual: f64,
        /// Requested tolerance.
        tolerance: f64,
        /// Centre of the cell with the largest residual, m.
        worst_position_m: f64,
    },
    /// The linear system could not be solved (singular or non-finite).
    #[error("the Newton linear system became singular or non-finite near x = {} m; check that flows, film coefficients and wall data are positive and physically sized", crate::text::num(*position_m))]
    Singular {
        /// Centre of the offending cell, m.
        position_m: f64,
    },
    /// The converged discrete solution violates the second law (the hot stream colder than
    /// the cold one at some face, or a stream beyond the inlet temperatures).
    #[error(
        "the solution breaks the second law by {} K at x = {} m (hot colder than cold, or a stream beyond the inlet \
         temperatures) with {cells} cells, largest cell NTU {}. {}",
        crate::text::num(*deficit_k), crate::text::num(*position_m), crate::text::num(*max_cell_ntu), cause(*suggested_cells, *max_cell_ntu)
    )]
    GridTooCoarse {
        /// Cells used.
        cells: usize,
        /// Largest UA·Δx/C_min of a cell.
        max_cell_ntu: f64,
        /// Where the violation is largest, m.
        position_m: f64,
        /// Size of the violation there, K.
        deficit_k: f64,
        /// Cells that bring the largest cell NTU to 0.5, where the cells are the cause
        /// (None: the cells are already short, so more of them would not help).
        suggested_cells: Option<usize>,
    },
    /// The local absolute pressure falls to zero or below: the pressure drop exceeds what the
    /// inlet pressure allows.
    #[error(
        "the {stream} stream's absolute pressure falls to {} bar at x = {} m (inlet {} bar, drop {} bar so far): the pressure drop is larger than the inlet pressure allows",
        crate::text::num(*pressure_pa * 1e-5), crate::text::num(*position_m), crate::text::num(*inlet_pa * 1e-5), crate::text::num((*inlet_pa - *pressure_pa) * 1e-5)
    )]
    NegativePressure {
        /// Which stream.
        stream: crate::model::Side,
        /// Where, m.
        position_m: f64,
        /// Local absolute pressure, Pa.
        pressure_pa: f64,
        /// Inlet pressure, Pa.
        inlet_pa: f64,
    },
    /// A liquid's local pressure falls below its saturation pressure at the local
    /// temperature: it would flash to vapour.
    #[error(
        "the {stream} stream flashes: at x = {} m its pressure {} bar is below the saturation pressure {} bar of the liquid at {} °C; hxgrid models one phase and does not compute boiling",
        crate::text::num(*position_m), crate::text::num(*pressure_pa * 1e-5), crate::text::num(*saturation_pa * 1e-5), crate::text::num(*temperature_c)
    )]
    Flashing {
        /// Which stream.
        stream: crate::model::Side,
        /// Where, m.
        position_m: f64,
        /// Local absolute pressure, Pa.
        pressure_pa: f64,
        /// Saturation pressure at the local temperature, Pa.
        saturation_pa: f64,
        /// Local temperature, °C.
        temperature_c: f64,
    },
    /// Both flows are zero: no steady state is defined.
    #[error("both flows are zero, so the steady state is not defined (it depends on the history)")]
    NoFlow,
    /// The hot inlet is not hotter than the cold inlet (possible through schedules).
    #[error(
        "the hot inlet ({} °C) is not hotter than the cold inlet ({} °C){}: the hot stream must be the hotter one at its inlet; \
         change the inlet temperatures or their schedules (or swap [hot] and [cold])",
        crate::text::num(*hot_c), crate::text::num(*cold_c), at.map(|t| format!(" at t = {} s", crate::text::num(t))).unwrap_or_default()
    )]
    InletsReversed {
        /// Hot inlet, °C.
        hot_c: f64,
        /// Cold inlet, °C.
        cold_c: f64,
        /// Time in a transient, s.
        at: Option<f64>,
    },
    /// The converged state leaves a fluid's valid range.
    #[error(
        "the {stream} stream reaches {} °C at x = {} m{}, outside the valid range {} … {} °C of {fluid} ({reason})",
        crate::text::num(*temperature_c), crate::text::num(*position_m),
        time_s.map(|t| format!(" at t = {} s", crate::text::num(t))).unwrap_or_default(),
        crate::text::num(*min_c), crate::text::num(*max_c)
    )]
    LeftRange {
        /// Time in a transient, s (None for a steady solve).
        time_s: Option<f64>,
        /// Which stream.
        stream: crate::model::Side,
        /// Fluid name.
        fluid: String,
        /// Face position, m.
        position_m: f64,
        /// Temperature there, °C.
        temperature_c: f64,
        /// Lower end of range, °C.
        min_c: f64,
        /// Upper end of range, °C.
        max_c: f64,
        /// Why the range ends there.
        reason: String,
    },
}

/// What caused a second-law violation, from the data.
fn cause(suggested: Option<usize>, max_cell_ntu: f64) -> String {
    match suggested {
        Some(n) => format!("The cells are too long for the scheme: about {n} cells would keep the solution monotone"),
        None => format!(
            "The cells are already short (largest cell NTU {}), so more cells will not help: the inputs are the cause \
             (property data that are not smooth, a fluid table with too few rows, extreme film coefficients)",
            crate::text::num(max_cell_ntu)
        ),
    }
}
