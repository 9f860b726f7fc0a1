//! Reference cases as data: each row pairs a case with a published or analytical value, a
//! tolerance and its source; one generic test runs every row with every spatial scheme (and,
//! for transients, both integrators). The effectiveness values are computed here from the
//! closed forms of Incropera et al., *Fundamentals of Heat and Mass Transfer*, Table 11.3
//! (Eqs. 11.29a, 11.28a, 11.33); spot values match METHODS.md §1 [C]. The closed forms are
//! written out below rather than taken from `hxgrid::lumped`, so the check is independent.

mod common;

use hxgrid::model::{Arrangement, Scheme};
use hxgrid::solve::transient::{simulate, Initial, Inputs, Integrator, TransientSettings};
use hxgrid::solve::{solve_steady, SilentObserver, SteadySettings};

/// ε of the closed forms (Incropera Table 11.3).
fn closed_form(arrangement: Arrangement, ntu: f64, cr: f64) -> f64 {
    match arrangement {
        Arrangement::Counterflow if (1.0 - cr).abs() < 1e-12 => ntu / (1.0 + ntu),
        Arrangement::Counterflow => {
            let e = (-ntu * (1.0 - cr)).exp();
            (1.0 - e) / (1.0 - cr * e)
        }
        Arrangement::Parallel => (1.0 - (-ntu * (1.0 + cr)).exp()) / (1.0 + cr),
        Arrangement::Network(_) => unreachable!("networks are checked by the verification suite"),
    }
}

/// One reference: an exchanger by its (arrangement, NTU, C_r, which stream is C_min), the
/// quantity (ε), and the tolerance on ε for second-order and first-order schemes.
struct Reference {
    name: &'static str,
    arrangement: Arrangement,
    ntu: f64,
    cr: f64,
    cold_is_min: bool,
    /// |ε − ε_ref| allowed at `cells` for trapezoidal, upwind (first order) and TVD.
    tolerance: [f64; 3],
    cells: usize,
    source: &'static str,
}

const REFERENCES: [Reference; 6] = [
    Reference {
        name: "counterflow, NTU 1, Cr 0.5",
        arrangement: Arrangement::Counterflow,
        ntu: 1.0,
        cr: 0.5,
        cold_is_min: false,
        tolerance: [1e-5, 1e-3, 1e-5],
        cells: 400,
        source: "Incropera Eq. 11.29a; 0.564733 (METHODS.md §1)",
    },
    Reference {
        name: "counterflow, NTU 3, Cr 1",
        arrangement: Arrangement::Counterflow,
        ntu: 3.0,
        cr: 1.0,
        cold_is_min: false,
        tolerance: [1e-9, 2e-3, 1e-5],
        cells: 400,
        source: "Incropera Eq. 11.29b: NTU/(1 + NTU) = 0.75; the trapezoidal scheme is exact here",
    },
    Reference {
        name: "counterflow, NTU 4, Cr 0.25, cold C_min",
        arrangement: Arrangement::Counterflow,
        ntu: 4.0,
        cr: 0.25,
        cold_is_min: true,
        tolerance: [1e-5, 2e-3, 1e-5],
        cells: 400,
        source: "Incropera Eq. 11.29a",
    },
    Reference {
        name: "parallel, NTU 1, Cr 0.5",
        arrangement: Arrangement::Parallel,
        ntu: 1.0,
        cr: 0.5,
        cold_is_min: false,
        tolerance: [1e-5, 1e-3, 1e-5],
        cells: 400,
        source: "Incropera Eq. 11.28a; 0.517913 (METHODS.md §1)",
    },
    Reference {
        name: "parallel, NTU 3, Cr 1",
        arrangement: Arrangement::Parallel,
        ntu: 3.0,
        cr: 1.0,
        cold_is_min: false,
        tolerance: [1e-5, 1e-3, 1e-5],
        cells: 400,
        source: "Incropera Eq. 11.28a",
    },
    Reference {
        name: "Cr → 0, NTU 2",
        arrangement: Arrangement::Counterflow,
        ntu: 2.0,
        cr: 1e-6,
        cold_is_min: false,
        tolerance: [1e-5, 2e-3, 1e-5],
        cells: 400,
        source: "Incropera Eq. 11.33: 1 − e^(−NTU)",
    },
];

const SCHEMES: [Scheme; 3] = [Scheme::Trapezoidal, Scheme::Upwind, Scheme::Tvd];

fn tolerance(r: &Reference, scheme: Scheme) -> f64 {
    r.tolerance[SCHEMES.iter().position(|s| *s == scheme).unwrap()]
}

/// ε from hot-side duty over the maximum, for a solution's hot outlet.
fn effectiveness(ex: &hxgrid::model::Exchanger, hot_outlet_c: f64) -> f64 {
    let cp = 4000.0; // the constant-property builder's cp
    let q = ex.hot.mass_flow_kg_s * cp * (ex.hot.inlet_c - hot_outlet_c);
    let c_min = (ex.hot.mass_flow_kg_s * cp).min(ex.cold.mass_flow_kg_s * cp);
    q / (c_min * (ex.hot.inlet_c - ex.cold.inlet_c))
}

#[test]
fn every_reference_with_every_scheme_at_steady_state() {
    let mut failures = Vec::new();
    for r in &REFERENCES {
        let exact = closed_form(r.arrangement, r.ntu, r.cr);
        for scheme in SCHEMES {
            let mut ex = common::constant_exchanger(r.arrangement, r.ntu, r.cr, r.cold_is_min);
            ex.scheme = scheme;
            let s = solve_steady(&ex, &SteadySettings { cells: r.cells, ..Default::default() }, &mut SilentObserver).unwrap();
            let eps = effectiveness(&ex, s.hot_outlet_c());
            let (err, tol) = ((eps - exact).abs(), tolerance(r, scheme));
            println!("{:<42} {:<12} ε {eps:.8} ref {exact:.8} err {err:.1e} tol {tol:.0e}  [{}]", r.name, scheme.as_str(), r.source);
            if err > tol {
                failures.push(format!("{} with {}: ε {eps} vs {exact} ({})", r.name, scheme.as_str(), r.source));
            }
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}

/// A transient from a uniform start settles on the same reference with every scheme and both
/// integrators (storage does not change the steady answer).
#[test]
fn every_reference_with_every_scheme_and_integrator_after_settling() {
    let mut failures = Vec::new();
    for r in REFERENCES.iter().filter(|r| r.cr > 1e-3) {
        let exact = closed_form(r.arrangement, r.ntu, r.cr);
        for scheme in SCHEMES {
            for integrator in [Integrator::Implicit, Integrator::Explicit] {
                let mut ex = common::constant_exchanger(r.arrangement, r.ntu, r.cr, r.cold_is_min);
                ex.scheme = scheme;
                // A little fluid per metre: a fast transient (transit time about 1 s).
                for s in [&mut ex.hot, &mut ex.cold] {
                    s.channel.volume_per_length_m2 = Some(5e-4 * s.mass_flow_kg_s);
                }
                let settings = TransientSettings {
                    cells: 100,
                    duration_s: 400.0,
                    output_interval_s: 10.0,
                    integrator,
                    atol_k: 1e-6,
                    // Tight in relative terms too (temperatures near 50 °C; the default
                    // relative tolerance, 1e-5, alone would allow 5e-4 K).
                    rtol: 1e-8,
                    initial: Initial::Uniform(50.0),
                    wall_heat_capacity_j_mk: 2000.0,
                    ..Default::default()
                };
                let run = simulate(&ex, &Inputs::constant(&ex), &settings, &mut SilentObserver).unwrap();
                let eps = effectiveness(&ex, run.samples.last().unwrap().hot_outlet_C);
                // At 100 cells: the scheme's grid error plus the settling left.
                let tol = 40.0 * tolerance(r, scheme).max(1e-6);
                if (eps - exact).abs() > tol {
                    failures.push(format!("{} with {} / {integrator:?}: ε {eps} vs {exact} ({})", r.name, scheme.as_str(), r.source));
                }
            }
        }
    }
    assert!(failures.is_empty(), "{failures:#?}");
}
