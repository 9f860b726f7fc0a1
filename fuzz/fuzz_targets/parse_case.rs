//! Fuzz target: any bytes as a case file must give a case or a clear error, never a panic;
//! a case that validates is also built and solved on a small grid (bounded effort), and its
//! report must be finite or the solver must return an error.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    let dir = std::env::temp_dir();
    let Ok(mut case) = hxgrid::case::parse_in(text, "fuzz.toml", "fuzz", &dir) else { return };
    // Bound the work per input: few cells, few iterations.
    case.solver.cells = case.solver.cells.min(40);
    case.solver.max_iterations = case.solver.max_iterations.min(30);
    let ex = case.build();
    if let Ok(report) = hxgrid::study::rate("fuzz", &ex, &case.solver, &Default::default(), &mut hxgrid::solve::SilentObserver) {
        assert!(hxgrid::output::check_finite(&report).is_ok(), "non-finite report");
    }
});
