//! report.html and the summary keys an engineer checks, as a user meets them: the page parses
//! as HTML5 without errors (html5ever, through the scraper crate), holds every plot of its
//! folder inline and needs nothing outside itself; where a headless Chromium is installed,
//! it also loads there without console errors. The new summary values are checked against
//! geometry (analytic), the profiles the run wrote, and the case's own schedules.

mod common;

use scraper::{Html, Selector};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn run(args: &[&str], dir: &Path) -> Output {
    Command::new(env!("CARGO_BIN_EXE_hxgrid")).args(args).current_dir(dir).output().unwrap()
}

fn text(o: &Output) -> String {
    format!("{}{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr))
}

fn json(path: &Path) -> serde_json::Value {
    serde_json::from_str(&std::fs::read_to_string(path).unwrap()).unwrap()
}

fn sel(s: &str) -> Selector {
    Selector::parse(s).unwrap()
}

/// The checks every report.html must pass; returns the parsed page.
fn check_report(folder: &Path) -> Html {
    let page = std::fs::read_to_string(folder.join("report.html")).unwrap();
    let doc = Html::parse_document(&page);
    assert!(doc.errors.is_empty(), "{}: HTML5 parse errors: {:?}", folder.display(), doc.errors);
    // Every plot of the folder is inline, once, in a figure named after its file.
    let svgs: Vec<String> =
        std::fs::read_dir(folder).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().into_owned()).filter(|n| n.ends_with(".svg")).collect();
    assert!(!svgs.is_empty());
    for name in &svgs {
        let figure = doc.select(&sel(&format!("figure[id=\"{name}\"]"))).next().unwrap_or_else(|| panic!("{name} is not in the report"));
        assert_eq!(figure.select(&sel("svg")).count(), 1, "{name}");
    }
    assert_eq!(doc.select(&sel("figure > svg")).count(), svgs.len());
    // Self-contained and readable without a script: nothing fetched, nothing run.
    for tag in ["script", "link", "img", "iframe", "object", "embed", "image", "use", "base"] {
        assert_eq!(doc.select(&sel(tag)).count(), 0, "{}: a <{tag}> element", folder.display());
    }
    for el in doc.select(&sel("*")) {
        for (attr, value) in el.value().attrs() {
            assert!(!["src", "href", "srcset", "data", "action"].contains(&attr), "{}: {attr}=\"{value}\"", folder.display());
            assert!(!attr.starts_with("on"), "{}: an event handler {attr}", folder.display());
        }
    }
    assert!(!page.contains("url("), "a style fetches a resource");
    // The cautions and the program's version.
    let body = doc.root_element().text().collect::<String>();
    assert!(body.contains("pressure equipment") && body.contains("Boiling and condensation are not computed"));
    assert!(body.contains(&format!("hxgrid {}", env!("CARGO_PKG_VERSION"))));
    doc
}

/// SHA-256 of a file as the sha2 crate (an implementation of FIPS 180-4) computes it.
fn sha256_hex(path: &Path) -> String {
    use sha2::Digest;
    let digest = sha2::Sha256::digest(std::fs::read(path).unwrap());
    digest.iter().map(|b| format!("{b:02x}")).collect()
}

/// Where a headless Chromium renders the page: no console errors, and every figure in the
/// rendered DOM. Skipped (with a note) on a machine without Chromium.
fn render_in_chromium(report: &Path, figures: usize) {
    let Some(browser) =
        ["chromium", "chromium-browser", "google-chrome"].into_iter().find(|b| Command::new(b).arg("--version").output().is_ok_and(|o| o.status.success()))
    else {
        eprintln!("note: no headless Chromium on this machine; report.html was checked with the HTML5 parser only");
        return;
    };
    let url = format!("file://{}", report.canonicalize().unwrap().display());
    let o = Command::new(browser)
        .args(["--headless", "--no-sandbox", "--disable-gpu", "--enable-logging=stderr", "--v=0", "--virtual-time-budget=3000", "--dump-dom", &url])
        .output()
        .unwrap();
    let (dom, log) = (String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr));
    assert!(o.status.success(), "{browser} failed: {log}");
    for line in log.lines() {
        assert!(!(line.contains("CONSOLE") || line.contains("Uncaught") || line.contains("Failed to load")), "{browser}: {line}");
    }
    assert_eq!(dom.matches("<figure").count(), figures, "the rendered page lacks figures");
}

#[test]
fn steady_report_is_complete_and_the_new_summary_keys_hold() {
    let dir = common::Scratch::new("report-steady");
    let case = root().join("cases/water-cooler.toml");
    let o = run(&["run", case.to_str().unwrap(), "--out", "wc"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let out = dir.join("wc");
    let doc = check_report(&out);
    for plot in ["temperatures.svg", "tq_diagram.svg", "heat_flux.svg", "film_coefficients.svg", "pressure.svg"] {
        assert!(out.join(plot).is_file(), "{plot}");
    }
    // The case as given (its SHA-256 matches the file) and as interpreted.
    let s = json(&out.join("summary.json"));
    let sha = sha256_hex(&case);
    assert_eq!(s["input_sha256"], sha.as_str());
    assert_eq!(s["version"], env!("CARGO_PKG_VERSION"));
    assert_eq!(s["scheme"], "trapezoidal");
    let page = doc.root_element().text().collect::<String>();
    assert!(page.contains(&sha) && page.contains("[geometry]") && page.contains("hot mass flow"), "inputs not echoed");
    // Areas from the geometry (analytic: π d L): hot in the tube (inner diameter), cold on the
    // tube's outer face, the case's 21.2 mm / 25.4 mm tube over 12 m.
    let area = |side: &str| s[format!("{side}_conditions")]["area_m2"].as_f64().unwrap();
    let pi_d_l = |d: f64| std::f64::consts::PI * d * 12.0;
    assert!((area("hot") - pi_d_l(0.0212)).abs() < 1e-9 * pi_d_l(0.0212), "{}", area("hot"));
    assert!((area("cold") - pi_d_l(0.0254)).abs() < 1e-9 * pi_d_l(0.0254), "{}", area("cold"));
    // Velocity in the tube: ṁ/(ρ π d²/4) with liquid water's density between 958 and 1000 kg/m³
    // over 0–100 °C (handbook range, common practice).
    let v = &s["hot_conditions"]["velocity_m_s"];
    let flow_area = std::f64::consts::PI * 0.0212f64.powi(2) / 4.0;
    let m_dot = 0.10; // the case's hot mass flow, kg/s
    let case_text = std::fs::read_to_string(&case).unwrap();
    assert!(case_text.contains("mass_flow_kg_s = 0.10\n"), "the demo's hot flow changed: update this check");
    for key in ["min", "max"] {
        let u = v[key].as_f64().unwrap();
        assert!(u > m_dot / (1000.0 * flow_area) && u < m_dot / (958.0 * flow_area), "{key} velocity {u}");
    }
    // Wetted surfaces lie between their bulk and the wall, cell by cell (profiles.csv).
    let csv = std::fs::read_to_string(out.join("profiles.csv")).unwrap();
    let mut lines = csv.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| head.iter().position(|h| *h == name).unwrap_or_else(|| panic!("no column {name}"));
    let (hot, cold, wall, hs, cs, x) = (col("hot_C"), col("cold_C"), col("wall_C"), col("hot_surface_C"), col("cold_surface_C"), col("x_m"));
    let rows: Vec<Vec<f64>> = lines.map(|l| l.split(',').map(|f| f.parse().unwrap_or(f64::NAN)).collect()).collect();
    for r in &rows {
        assert!(r[wall] < r[hs] && r[hs] < r[hot], "hot surface {} not between wall {} and bulk {}", r[hs], r[wall], r[hot]);
        assert!(r[cold] < r[cs] && r[cs] < r[wall], "cold surface {} not between bulk {} and wall {}", r[cs], r[cold], r[wall]);
    }
    // The reported extremes are the profile's, at the reported positions.
    let hot_surface = &s["hot_conditions"]["surface_C"];
    let (lo, hi) = rows.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), r| (a.min(r[hs]), b.max(r[hs])));
    assert!((hot_surface["min"].as_f64().unwrap() - lo).abs() < 1e-6 && (hot_surface["max"].as_f64().unwrap() - hi).abs() < 1e-6);
    let at = hot_surface["max_at_m"].as_f64().unwrap();
    assert!(rows.iter().any(|r| (r[x] - at).abs() < 1e-9 && (r[hs] - hi).abs() < 1e-6));
    // The minimum approach of a counterflow cooler: no larger than either terminal
    // difference, and no smaller than the smallest cell-centre difference less a cell's change.
    let a = s["minimum_approach"]["minimum_K"].as_f64().unwrap();
    let (th_in, tc_out) = (95.0, s["cold_outlet_C"].as_f64().unwrap());
    assert!(case_text.contains("inlet_temperature_C = 95.0"), "the demo's hot inlet changed: update this check");
    assert!(a <= th_in - tc_out + 1e-9, "{a}");
    assert!(a <= s["hot_outlet_C"].as_f64().unwrap() - 8.0 + 1e-9, "{a}");
    let centre_min = rows.iter().map(|r| r[hot] - r[cold]).fold(f64::INFINITY, f64::min);
    assert!(a <= centre_min + 1e-9 && a > 0.0, "{a} vs {centre_min}");
    // Validity warnings say where along the exchanger and in which regime.
    let warnings = s["warnings"].as_array().unwrap();
    assert!(warnings.iter().any(|w| w.as_str().is_some_and(|w| w.contains(" at x = ") && w.contains("transitional"))), "{warnings:?}");
    // The printed summary shows the new values too.
    let printed = text(&o);
    for needle in ["local conditions", "wetted surface", "minimum approach", "input SHA-256"] {
        assert!(printed.contains(needle), "printed summary lacks {needle}");
    }
    render_in_chromium(&out.join("report.html"), doc.select(&sel("figure")).count());
}

#[test]
fn transient_report_and_the_new_response_keys() {
    let dir = common::Scratch::new("report-transient");
    let text_case = std::fs::read_to_string(root().join("cases/water-cooler-startup.toml")).unwrap().replace("cells = 200", "cells = 60");
    std::fs::write(dir.join("s.toml"), &text_case).unwrap();
    let o = run(&["simulate", "s.toml", "--out", "res"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let out = dir.join("res");
    let doc = check_report(&out);
    let t = json(&out.join("transient.json"));
    assert_eq!(t["input_sha256"], sha256_hex(&dir.join("s.toml")).as_str());
    // The cold flow's table 0.9 → 0 (900–905 s) → 0 (to 1200 s) → 0.9 (1220 s): two ramps,
    // each with both outlets' response over its own window.
    let changes = t["input_changes"].as_array().unwrap();
    assert_eq!(changes.len(), 2, "{changes:?}");
    for (c, (start, end, window_end)) in changes.iter().zip([(900.0, 905.0, 1200.0), (1200.0, 1220.0, 1800.0)]) {
        assert_eq!(c["input"], "cold mass flow");
        assert_eq!(c["kind"], "ramp");
        assert_eq!((c["start_s"].as_f64().unwrap(), c["end_s"].as_f64().unwrap(), c["window_end_s"].as_f64().unwrap()), (start, end, window_end));
    }
    // Losing the cooling water heats both outlets; restoring it cools them again.
    assert!(changes[0]["hot_outlet"]["change_K"].as_f64().unwrap() > 10.0);
    assert!(changes[1]["hot_outlet"]["change_K"].as_f64().unwrap() < -10.0);
    // Peaks: the outlet's highest value is at least its value at any sample (timeseries.csv).
    let series = std::fs::read_to_string(out.join("timeseries.csv")).unwrap();
    let mut lines = series.lines();
    let head: Vec<&str> = lines.next().unwrap().split(',').collect();
    let col = |name: &str| head.iter().position(|h| *h == name).unwrap();
    let (time, hot_out, wall) = (col("time_s"), col("hot_outlet_C"), col("max_wall_C"));
    let rows: Vec<Vec<f64>> = lines.map(|l| l.split(',').map(|f| f.parse().unwrap_or(f64::NAN)).collect()).collect();
    let (max, at) = rows.iter().fold((f64::NEG_INFINITY, 0.0), |(m, a), r| if r[hot_out] > m { (r[hot_out], r[time]) } else { (m, a) });
    // (The CSV holds 11 significant digits.)
    assert!((t["hot_outlet"]["max_C"].as_f64().unwrap() - max).abs() < 1e-8 * max.abs());
    assert_eq!(t["hot_outlet"]["max_at_s"].as_f64().unwrap(), at);
    let hottest = rows.iter().map(|r| r[wall]).fold(f64::NEG_INFINITY, f64::max);
    assert!((t["wall"]["hottest_C"]["value"].as_f64().unwrap() - hottest).abs() < 1e-8 * hottest.abs());
    // The wall is never hotter than the hottest inlet (second law), and heat flows from the
    // hot side, so its largest through-thickness difference is positive.
    assert!(hottest <= 95.0 + 1e-6);
    assert!(t["wall"]["largest_difference_K"]["value"].as_f64().unwrap() > 0.0);
    for key in ["fastest_change_K_s", "largest_difference_K"] {
        let p = &t["wall"][key];
        assert!(p["at_s"].as_f64().unwrap() >= 0.0 && (0.0..=12.0).contains(&p["at_m"].as_f64().unwrap()), "{key}: {p}");
    }
    render_in_chromium(&out.join("report.html"), doc.select(&sel("figure")).count());
}

#[test]
fn overshoot_is_left_out_when_the_change_is_negligible() {
    // A hot-inlet step down and back up within the run: over the whole response window the
    // net change is nil, so no percentage of it is reported (it would be huge and meaningless).
    let dir = common::Scratch::new("report-overshoot");
    let body = std::fs::read_to_string(root().join("cases/water-cooler-startup.toml")).unwrap();
    let cut = body.find("[transient.cold_mass_flow_kg_s]").unwrap();
    let body = format!(
        "{}[transient.hot_inlet_temperature_C]\nkind = \"table\"\ntimes_s = [100.0, 101.0, 200.0, 201.0]\nvalues = [95.0, 60.0, 60.0, 95.0]\n",
        &body[..cut]
    )
    .replace("duration_s = 1800.0", "duration_s = 600.0")
    .replace("initial = \"uniform\"", "initial = \"steady\"")
    .replace("initial_temperature_C = 15.0\n", "")
    .replace("response_from_s = 1200.0", "response_from_s = 50.0")
    .replace("snapshot_times_s = [0.0, 30.0, 120.0, 600.0, 1100.0, 1800.0]", "snapshot_times_s = [0.0, 300.0, 600.0]")
    .replace("cells = 200", "cells = 40");
    std::fs::write(dir.join("s.toml"), &body).unwrap();
    let o = run(&["simulate", "s.toml", "--out", "res"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let t = json(&dir.join("res/transient.json"));
    let whole = &t["hot_outlet"];
    assert!(whole["change_K"].as_f64().unwrap().abs() < 0.1, "{whole}");
    assert!(whole["overshoot_percent"].is_null() && whole["settling_95_s"].is_null(), "{whole}");
    assert!(whole["swing_K"].as_f64().unwrap() > 5.0, "{whole}");
    // Each ramp of the table has its own, meaningful response.
    let changes = t["input_changes"].as_array().unwrap();
    assert_eq!(changes.len(), 2);
    assert!(changes[0]["hot_outlet"]["change_K"].as_f64().unwrap() < -5.0);
    assert!(changes[0]["hot_outlet"]["overshoot_percent"].as_f64().is_some());
}

#[test]
fn the_starter_lists_every_kind_fluid_and_film_and_its_transient_runs() {
    let starter = hxgrid::case::STARTER;
    let dir = common::Scratch::new("report-starter");
    let schema: serde_json::Value = serde_json::from_slice(&run(&["schema"], &dir).stdout).unwrap();
    let kinds: Vec<String> =
        schema["$defs"]["GeometryFile"]["oneOf"].as_array().unwrap().iter().map(|v| v["properties"]["kind"]["const"].as_str().unwrap().to_string()).collect();
    let films: Vec<String> = schema["$defs"]["FilmName"]["enum"].as_array().unwrap().iter().map(|v| v.as_str().unwrap().to_string()).collect();
    let fluids: Vec<String> =
        String::from_utf8_lossy(&run(&["fluids"], &dir).stdout).lines().filter_map(|l| l.split_whitespace().next().map(String::from)).collect();
    assert!(kinds.len() >= 4 && films.len() >= 9 && fluids.len() >= 10);
    for name in kinds.iter().chain(&films).chain(&fluids) {
        assert!(starter.contains(&format!("\"{name}\"")), "the starter does not mention \"{name}\"");
    }
    // The commented [transient] example, uncommented, simulates.
    let mut on = false;
    let body: String = starter
        .lines()
        .map(|l| {
            if l.starts_with("# Design") {
                on = false;
            }
            let uncomment = on && l.starts_with("# ");
            if l.starts_with("# Transient") {
                on = true;
            }
            if uncomment && !l.starts_with("# cold with") {
                format!("{}\n", &l[2..])
            } else {
                format!("{l}\n")
            }
        })
        .collect();
    assert!(body.contains("\n[transient]\n"), "no transient example found");
    std::fs::write(dir.join("t.toml"), &body).unwrap();
    let o = run(&["simulate", "t.toml", "--out", "res", "--quiet"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert!(dir.join("res/report.html").is_file());
}

#[test]
fn props_rows_default_to_round_temperatures() {
    let dir = common::Scratch::new("report-props");
    for fluid in ["water", "air", "thermal-oil"] {
        let o = run(&["props", fluid], &dir);
        assert!(o.status.success(), "{}", text(&o));
        let temps: Vec<f64> = String::from_utf8_lossy(&o.stdout).lines().filter_map(|l| l.split_whitespace().next()?.parse().ok()).collect();
        assert!(temps.len() >= 8, "{fluid}: {temps:?}");
        let step = temps[1] - temps[0];
        // A 1, 2 or 5 × 10ⁿ K step, and every row a whole multiple of it.
        let lead = step / 10f64.powf(step.log10().floor());
        assert!([1.0, 2.0, 5.0].iter().any(|k| (lead - k).abs() < 1e-6), "{fluid}: step {step}");
        for t in &temps {
            assert!(((t / step) - (t / step).round()).abs() < 1e-6, "{fluid}: {t} is not a multiple of {step}");
        }
    }
}

/// Every key of every object in a summary, recursively.
fn keys(v: &serde_json::Value, out: &mut std::collections::BTreeSet<String>) {
    match v {
        serde_json::Value::Object(m) => {
            for (k, x) in m {
                out.insert(k.clone());
                keys(x, out);
            }
        }
        serde_json::Value::Array(a) => a.iter().for_each(|x| keys(x, out)),
        _ => {}
    }
}

#[test]
fn every_summary_key_the_demos_write_is_documented_in_the_readme() {
    let dir = common::Scratch::new("report-keys");
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let case = |name: &str| root().join("cases").join(name).to_string_lossy().into_owned();
    let transient = std::fs::read_to_string(root().join("cases/water-cooler-startup.toml")).unwrap().replace("cells = 200", "cells = 40");
    std::fs::write(dir.join("t.toml"), transient).unwrap();
    let runs: [(&[&str], &str); 6] = [
        (&["run", &case("water-cooler.toml"), "--out", "a", "--grid-study", "3"], "a/summary.json"),
        (&["run", &case("shell-and-tube-water-cooler.toml"), "--out", "b"], "b/summary.json"),
        (&["run", &case("finned-air-cooler.toml"), "--out", "c"], "c/summary.json"),
        (&["run", &case("tube-bank-air-heater.toml"), "--out", "d"], "d/summary.json"),
        (&["size", &case("water-cooler-design.toml"), "--out", "e"], "e/summary.json"),
        (&["simulate", "t.toml", "--out", "f"], "f/transient.json"),
    ];
    let mut all = std::collections::BTreeSet::new();
    for (args, file) in runs {
        let o = run(&[args, &["--quiet"]].concat(), &dir);
        assert!(o.status.success(), "{args:?}: {}", text(&o));
        keys(&json(&dir.join(file)), &mut all);
    }
    let missing: Vec<&String> = all.iter().filter(|k| !readme.contains(&format!("`{k}`"))).collect();
    assert!(missing.is_empty(), "summary keys not documented in README (as `key`): {missing:?}");
}

#[test]
fn a_sweep_writes_its_report_too() {
    let dir = common::Scratch::new("report-sweep");
    let case = root().join("cases/water-cooler-design.toml");
    let o = run(&["sweep", case.to_str().unwrap(), "--out", "sw", "--quiet"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let doc = check_report(&dir.join("sw"));
    // Every point of sweep.csv is a row of the report's table.
    let points = std::fs::read_to_string(dir.join("sw/sweep.csv")).unwrap().lines().count() - 1;
    let last = doc.select(&sel("table")).next_back().unwrap();
    assert_eq!(last.select(&sel("tr")).count(), points + 1);
}

#[test]
fn an_uncertainty_run_writes_its_report_too() {
    let dir = common::Scratch::new("report-uncertainty");
    let body = std::fs::read_to_string(root().join("cases/water-cooler-design.toml")).unwrap().replace("samples = 400", "samples = 24");
    std::fs::write(dir.join("u.toml"), body).unwrap();
    let o = run(&["uncertainty", "u.toml", "--out", "un", "--quiet"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let page = std::fs::read_to_string(dir.join("un/report.html")).unwrap();
    let doc = Html::parse_document(&page);
    assert!(doc.errors.is_empty(), "{:?}", doc.errors);
    for tag in ["script", "link", "img", "iframe", "object", "embed"] {
        assert_eq!(doc.select(&sel(tag)).count(), 0, "a <{tag}> element");
    }
    // The percentiles of every result, as in uncertainty.json.
    let u = json(&dir.join("un/uncertainty.json"));
    let body = doc.root_element().text().collect::<String>();
    for r in u["results"].as_array().unwrap() {
        assert!(body.contains(r["quantity"].as_str().unwrap()));
    }
    assert!(body.contains("pressure equipment") && body.contains(&sha256_hex(&dir.join("u.toml"))));
}
