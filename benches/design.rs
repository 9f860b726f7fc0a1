//! Design-study benchmark: a 1 000-point sweep (40 hot flows × 25 cold flows) of the water
//! demo at 200 cells, each point a complete rating (grid solve, half-grid error solve, lumped
//! result, pressure march), and a 1 000-sample uncertainty run, each on 1 thread and on all
//! cores, so the speed-up is a ratio measured in one run; then a sizing (evaluations and
//! Newton iterations per evaluation, warm-started). Run: `cargo bench --bench design`.
//! Figures are recorded in benches/README.md.

use hxgrid::design::sweep;
use std::time::Instant;

fn case_text() -> String {
    let base = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/cases/water-cooler.toml")).unwrap();
    format!(
        "{base}\n[size]\nhot_outlet_C = 30.0\nvary = \"length_m\"\n\n[sweep]\n[[sweep.inputs]]\nkey = \"hot.mass_flow_kg_s\"\nstart = 0.02\nstop = 0.12\ncount = 40\n[[sweep.inputs]]\nkey = \"cold.mass_flow_kg_s\"\nstart = 0.2\nstop = 1.1\ncount = 25\n\n[uncertainty]\nsamples = 1000\n"
    )
}

fn pool(threads: usize) -> rayon::ThreadPool {
    rayon::ThreadPoolBuilder::new().num_threads(threads).build().unwrap()
}

fn main() {
    let case = hxgrid::case::parse_str(&case_text(), "bench", "bench").unwrap();
    let spec = case.design.sweep.clone().unwrap();
    let all: Vec<usize> = (0..sweep::point_count(&spec)).collect();
    let cores = std::thread::available_parallelism().map(|n| n.get()).unwrap_or(1);
    println!("water demo, 200 cells; {cores} cores\n");
    println!("| study | threads | wall (s) | per point (ms·thread) | speed-up | failed |");
    println!("|---|---|---|---|---|---|");
    let mut one = 0.0;
    for threads in [1, cores] {
        let t = Instant::now();
        let points = pool(threads).install(|| sweep::run(&case.source, &spec, &all, &|| {}));
        let s = t.elapsed().as_secs_f64();
        if threads == 1 {
            one = s;
        }
        let failed = points.iter().filter(|p| p.outcome.is_err()).count();
        println!("| sweep, {} points | {threads} | {s:.2} | {:.2} | {:.2} | {failed} |", points.len(), 1e3 * s * threads as f64 / points.len() as f64, one / s);
    }
    let ex = case.build();
    let nominal = hxgrid::rate(&case.name, &ex, &case.solver).unwrap();
    let uspec = case.design.uncertainty.clone().unwrap();
    for threads in [1, cores] {
        let t = Instant::now();
        let r = pool(threads).install(|| hxgrid::design::uncertainty::study(&case, &nominal, &uspec, &|| {}));
        let s = t.elapsed().as_secs_f64();
        if threads == 1 {
            one = s;
        }
        println!(
            "| uncertainty, {} samples | {threads} | {s:.2} | {:.2} | {:.2} | {} |",
            r.samples,
            1e3 * s * threads as f64 / r.samples as f64,
            one / s,
            r.samples_failed
        );
    }
    // Where a sweep point's time goes, single-threaded: the variant's parse and validation
    // (which builds the exchanger once for its derived checks), the build, the rating.
    let n = 200;
    let kv = [("hot.mass_flow_kg_s", hxgrid::design::keys::KeyValue { value: 0.1, whole: false })];
    let t = Instant::now();
    for _ in 0..n {
        std::hint::black_box(case.source.variant(&kv).unwrap());
    }
    let parse = t.elapsed().as_secs_f64() / n as f64;
    let t = Instant::now();
    for _ in 0..n {
        std::hint::black_box(case.build());
    }
    let build = t.elapsed().as_secs_f64() / n as f64;
    let t = Instant::now();
    for _ in 0..n {
        std::hint::black_box(hxgrid::rate(&case.name, &ex, &case.solver).unwrap());
    }
    let rate = t.elapsed().as_secs_f64() / n as f64;
    println!("\none sweep point: variant parse + validation {:.2} ms, build {:.2} ms, rating {:.2} ms", 1e3 * parse, 1e3 * build, 1e3 * rate);
    let sspec = case.design.size.clone().unwrap();
    let t = Instant::now();
    let (s, _) = hxgrid::design::size::size(&case.source, &sspec).unwrap();
    println!(
        "\nsizing to a 30 °C hot outlet: {} evaluations, {} Newton iterations ({:.1} per evaluation, warm-started), {:.1} ms; length {:.6} m",
        s.evaluations,
        s.newton_iterations,
        s.newton_iterations as f64 / s.evaluations as f64,
        1e3 * t.elapsed().as_secs_f64(),
        s.value
    );
}
