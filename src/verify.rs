//! The built-in verification suite (`hxgrid verify`): every arrangement solved on its
//! default grid with constant properties and fixed film coefficients, against the
//! published closed-form effectiveness, with the observed order of accuracy.
//!
//! Sources: Incropera, DeWitt, Bergman & Lavine, *Fundamentals of Heat and Mass Transfer*,
//! 6th ed., Table 11.3 and Eqs. 11.30a, 11.31a; Kays & London, *Compact Heat Exchangers*,
//! 3rd ed. (crossflow with mixed streams); Mason, *Temperature distribution and performance
//! of crossflow heat exchangers*, 1954 / Baclić 1990 (exact series for both unmixed).
//! The closed forms are evaluated by [`crate::lumped`]; that they reproduce published
//! values is checked there (unit tests) against independently computed check values.
//!
//! Pure: returns rows; printing belongs to the command line.

use crate::fluid::{ConstantFluid, Props};
use crate::lumped;
use crate::model::{Arrangement, CrossCounterflow, Crossflow, Exchanger, Layout, Mixing, Scheme, ShellAndTube, Side, Stream};
use crate::solve::{SilentObserver, SolveError, SteadySettings};
use crate::study::{grid_study, rate, RatingOptions};
use crate::transfer::{Channel, FixedFilm, Wall};
use serde::Serialize;
use std::sync::Arc;

/// One line of the verification table.
#[derive(Debug, Clone, Serialize)]
pub struct Row {
    /// Arrangement and operating point.
    pub case: String,
    /// "effectiveness" or "observed order".
    pub quantity: &'static str,
    /// The published value.
    pub reference: f64,
    /// hxgrid's value.
    pub computed: f64,
    /// computed − reference.
    pub error: f64,
    /// Largest |error| accepted.
    pub tolerance: f64,
    /// Where the reference comes from.
    pub source: &'static str,
    /// |error| ≤ tolerance.
    pub passed: bool,
    /// Why no value was computed (a solver error), if so.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub note: Option<String>,
}

/// A constant-property exchanger with fixed film coefficients and a thin plane wall, sized
/// so that NTU = UA/C_min and Cr = C_min/C_max are exactly the given values, `min_side`
/// being the C_min stream.
pub fn constant_exchanger(arrangement: Arrangement, ntu: f64, cr: f64, min_side: Side) -> Exchanger {
    let cp = 4000.0;
    let c_min = 2.0 * cp; // 2 kg/s
    let c_max = c_min / cr;
    let (m_hot, m_cold) = if min_side == Side::Cold { (c_max / cp, c_min / cp) } else { (c_min / cp, c_max / cp) };
    let (length, area_per_length) = (4.0, 0.5);
    // UA = L / (2/(h a) + t/(k a)) with t/k = 1e-4/50: choose h to hit NTU.
    let r_wall = 1e-4 / (50.0 * area_per_length);
    let h = 2.0 / ((length / (ntu * c_min) - r_wall) * area_per_length);
    let props = Props { density: 1000.0, cp, viscosity: 1e-3, conductivity: 0.6 };
    let stream = |m: f64, t: f64| Stream {
        fluid: Arc::new(ConstantFluid::new(props)),
        mass_flow_kg_s: m,
        inlet_c: t,
        inlet_pressure_pa: 101_325.0,
        fouling_m2k_w: 0.0,
        film: Arc::new(FixedFilm { h }),
        channel: Channel::bare(area_per_length),
    };
    Exchanger {
        arrangement,
        length_m: length,
        hot: stream(m_hot, 90.0),
        cold: stream(m_cold, 10.0),
        wall: Wall::Plane { thickness_m: 1e-4, conductivity_w_mk: 50.0, area_per_length_m: area_per_length },
        reference_area_per_length_m: area_per_length,
        scheme: Scheme::Trapezoidal,
    }
}

const TABLE_11_3: &str = "Incropera et al. 6th ed., Table 11.3";
const MASON: &str = "Mason 1954 / Baclic 1990, exact series (Incropera Table 11.3 form is approximate)";
const KAYS_LONDON: &str = "Kays & London 3rd ed.; Incropera Table 11.3";
const EQ_11_30A: &str = "Incropera et al. 6th ed., Eq. 11.30a";
const EQ_11_31A: &str = "Incropera et al. 6th ed., Eq. 11.30a with Eq. 11.31a";
const SERIES: &str = "passes in series, both mixed between passes: Incropera Eq. 11.31a with the Kays & London one-mixed pass";
const CR_ZERO: &str = "Cr -> 0 limit 1 - exp(-NTU), Incropera Eq. 11.35a";
const APPROX: &str = "approximate closed form (Incropera Table 11.3 one-line crossflow; Eq. 11.30a for 4 tube passes)";
const ORDER: &str = "formal order 2 of the trapezoidal scheme (three grids, ratio 2)";

/// The default grid: `[solver] cells`' default along the first direction; the crossflow
/// and cross-counterflow defaults across (the same cells, the depth shared by the passes).
const CELLS: usize = 100;

/// Tolerance in ε of the closed-form rows.
pub const TOLERANCE: f64 = 1e-4;

fn crossflow(hot: Mixing, cold: Mixing) -> Arrangement {
    Arrangement::Network(Layout::Crossflow(Crossflow { hot, cold, cells_across: CELLS }))
}

fn shells(tube_passes: usize, shells: usize) -> Arrangement {
    Arrangement::Network(Layout::ShellAndTube(ShellAndTube { tube_passes, shells, shell_side: Side::Cold }))
}

fn cross_counter(passes: usize, through: Mixing, mixed_between_passes: bool) -> Arrangement {
    Arrangement::Network(Layout::CrossCounterflow(CrossCounterflow {
        passes,
        passing: Side::Hot,
        mixed_between_passes,
        through,
        cells_across: (CELLS / passes).max(1),
    }))
}

/// One closed-form check: (label, arrangement, NTU, Cr, C_min side, reference ε, tolerance, source).
type Check = (String, Arrangement, f64, f64, Side, f64, f64, &'static str);

fn checks() -> Vec<Check> {
    let mut out: Vec<Check> = Vec::new();
    let mut exact = |label: &str, arr: Arrangement, ntu: f64, cr: f64, min: Side, source: &'static str| {
        let reference = lumped::effectiveness(arr, ntu, cr, min);
        out.push((format!("{label}, NTU {ntu}, Cr {cr}"), arr, ntu, cr, min, reference, TOLERANCE, source));
    };
    for (ntu, cr) in [(1.0, 0.5), (4.0, 0.25), (4.0, 1.0)] {
        exact("counterflow", Arrangement::Counterflow, ntu, cr, Side::Hot, TABLE_11_3);
        exact("parallel", Arrangement::Parallel, ntu, cr, Side::Hot, TABLE_11_3);
    }
    for (ntu, cr) in [(1.0, 0.5), (2.0, 1.0), (4.0, 0.25), (4.0, 1.0)] {
        exact("crossflow, both unmixed", crossflow(Mixing::Unmixed, Mixing::Unmixed), ntu, cr, Side::Hot, MASON);
    }
    for (ntu, cr) in [(1.0, 0.5), (4.0, 1.0)] {
        // Hot is C_min: cold mixed = C_max mixed; hot mixed = C_min mixed.
        exact("crossflow, C_max mixed", crossflow(Mixing::Unmixed, Mixing::Mixed), ntu, cr, Side::Hot, KAYS_LONDON);
        exact("crossflow, C_min mixed", crossflow(Mixing::Mixed, Mixing::Unmixed), ntu, cr, Side::Hot, KAYS_LONDON);
        exact("crossflow, both mixed", crossflow(Mixing::Mixed, Mixing::Mixed), ntu, cr, Side::Hot, KAYS_LONDON);
    }
    for (ntu, cr) in [(1.0, 0.5), (2.0, 1.0), (4.0, 0.25)] {
        exact("shell-and-tube 1-2", shells(2, 1), ntu, cr, Side::Hot, EQ_11_30A);
    }
    for (n, ntu, cr) in [(2, 2.0, 0.5), (2, 4.0, 1.0), (3, 4.0, 0.75)] {
        exact(&format!("{n} shells in series, 2 tube passes each"), shells(2, n), ntu, cr, Side::Hot, EQ_11_31A);
    }
    for passes in [2, 3, 4] {
        for (ntu, cr) in [(2.0, 0.5), (4.0, 1.0)] {
            exact(
                &format!("cross-counterflow, {passes} passes, mixed between passes, through stream mixed"),
                cross_counter(passes, Mixing::Mixed, true),
                ntu,
                cr,
                Side::Hot,
                SERIES,
            );
        }
    }
    // Cr → 0: one stream's capacity 10⁶ times the other's, every arrangement.
    let cr0 = 1e-6;
    let limit = -(-2.0f64).exp_m1();
    for (label, arr) in arrangements() {
        out.push((format!("{label}, NTU 2, Cr -> 0"), arr, 2.0, cr0, Side::Hot, limit, TOLERANCE, CR_ZERO));
    }
    // Approximations, marked as such, with the tolerance their authors' accuracy allows.
    let (ntu, cr): (f64, f64) = (2.0, 1.0);
    let one_line = 1.0 - ((ntu.powf(0.22) / cr) * ((-cr * ntu.powf(0.78)).exp() - 1.0)).exp();
    out.push((
        format!("crossflow, both unmixed, NTU {ntu}, Cr {cr} (approximate formula)"),
        crossflow(Mixing::Unmixed, Mixing::Unmixed),
        ntu,
        cr,
        Side::Hot,
        one_line,
        0.01,
        APPROX,
    ));
    let (ntu, cr): (f64, f64) = (2.0, 0.5);
    out.push((
        format!("shell-and-tube 1-4, NTU {ntu}, Cr {cr} (Eq. 11.30a, approximate for 4 passes)"),
        shells(4, 1),
        ntu,
        cr,
        Side::Hot,
        lumped::one_shell_pass(ntu, cr),
        0.01,
        APPROX,
    ));
    out
}

/// One representative of each arrangement, for the Cr → 0 limit and the observed order.
fn arrangements() -> Vec<(&'static str, Arrangement)> {
    vec![
        ("counterflow", Arrangement::Counterflow),
        ("parallel", Arrangement::Parallel),
        ("crossflow, both unmixed", crossflow(Mixing::Unmixed, Mixing::Unmixed)),
        ("crossflow, both mixed", crossflow(Mixing::Mixed, Mixing::Mixed)),
        ("shell-and-tube 1-2", shells(2, 1)),
        ("2 shells, 4 tube passes", shells(4, 2)),
        ("cross-counterflow, 3 passes", cross_counter(3, Mixing::Unmixed, false)),
    ]
}

fn effectiveness_on_grid(ex: &Exchanger, cells: usize) -> Result<f64, SolveError> {
    let settings = SteadySettings { cells, ..SteadySettings::default() };
    let r = rate("verify", ex, &settings, &RatingOptions::default(), &mut SilentObserver)?;
    Ok(r.duty_W / r.max_duty_W)
}

fn row(case: String, quantity: &'static str, reference: f64, computed: Result<f64, String>, tolerance: f64, source: &'static str) -> Row {
    let (computed, note) = match computed {
        Ok(v) => (v, None),
        Err(e) => (f64::NAN, Some(e)),
    };
    let error = computed - reference;
    Row { case, quantity, reference, computed, error, tolerance, source, passed: error.abs() <= tolerance, note }
}

/// Run the whole suite. A solve that fails makes its row fail (computed = NaN), never the
/// suite.
pub fn run() -> Vec<Row> {
    let mut rows = Vec::new();
    for (case, arr, ntu, cr, min, reference, tolerance, source) in checks() {
        let ex = constant_exchanger(arr, ntu, cr, min);
        let computed = effectiveness_on_grid(&ex, CELLS).map_err(|e| e.to_string());
        rows.push(row(case, "effectiveness", reference, computed, tolerance, source));
    }
    for (label, arr) in arrangements() {
        let ex = constant_exchanger(arr, 2.0, 0.5, Side::Hot);
        let order = grid_study(&ex, &SteadySettings::default(), CELLS / 4, 3)
            .map_err(|e| e.to_string())
            .and_then(|s| s.observed_order.duty.ok_or_else(|| "differences at round-off: no observed order".to_string()));
        rows.push(row(format!("{label}, NTU 2, Cr 0.5, {}-{} cells", CELLS / 4, CELLS), "observed order", 2.0, order, 0.15, ORDER));
    }
    rows
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each exchanger built has exactly the NTU and Cr asked for (the lumped hand method
    /// recovers them).
    #[test]
    fn built_exchangers_have_the_asked_ntu_and_cr() {
        for (_, arr) in arrangements() {
            let l = lumped::rate(&constant_exchanger(arr, 2.5, 0.4, Side::Cold));
            assert!((l.ntu - 2.5).abs() < 1e-9 && (l.capacity_ratio - 0.4).abs() < 1e-12);
        }
    }
}
