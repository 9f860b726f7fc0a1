//! report.html: one self-contained page a practitioner can hand on. Everything is inline
//! (the plots as SVG, the style sheet in the head); it needs no script, no network and no
//! other file. Plots are read back from the results folder being written (they are written
//! first), so the page shows exactly the files beside it.

use super::{io, OutputError};
use crate::results::{InputEcho, SteadyReport, CAUTION};
use crate::scenario::TransientReport;
use crate::text::{num, sig};
use std::fmt::Write as _;
use std::path::Path;

/// Escape text for HTML.
pub(crate) fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

const STYLE: &str = "body{font-family:sans-serif;max-width:1000px;margin:1.5em auto;padding:0 1em;color:#222;line-height:1.4}\
h1{font-size:1.6em;margin-bottom:0.2em}h2{font-size:1.25em;border-bottom:1px solid #ccc;margin-top:1.6em}\
table{border-collapse:collapse;margin:0.6em 0}td,th{border:1px solid #ccc;padding:3px 8px;text-align:left;vertical-align:top}\
th{background:#f2f2f2;overflow-wrap:anywhere}td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}\
.caution{border:2px solid #b35900;background:#fff4e5;padding:0.6em 1em;margin:1em 0}\
.warn{background:#fffbe6;border-left:4px solid #d4a000;padding:0.3em 0.8em;margin:0.3em 0}\
figure{margin:1em 0}figcaption{font-size:0.9em;color:#555}svg{max-width:100%;height:auto}\
pre{background:#f7f7f7;border:1px solid #ddd;padding:0.6em;overflow-x:auto;font-size:0.85em}.meta{color:#555;font-size:0.9em}";

/// The page: head, title, metadata line and the caution.
fn open(title: &str, version: &str, input: Option<&InputEcho>) -> String {
    let source =
        input.map_or("an exchanger built in code (no case file)".to_string(), |i| format!("case file {} (SHA-256 {})", esc(&i.origin), esc(&i.sha256)));
    open_with(title, version, &source)
}

/// [`open`] with the source line given (already escaped HTML).
fn open_with(title: &str, version: &str, source: &str) -> String {
    let mut h = String::new();
    let _ = write!(h, "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>{}</title>\n<style>{STYLE}</style>\n</head>\n<body>\n<h1>{}</h1>\n", esc(title), esc(title));
    let _ = writeln!(h, "<p class=\"meta\">Written by hxgrid {}; {source}.</p>", esc(version));
    let _ = writeln!(h, "<div class=\"caution\"><strong>Caution.</strong> {}</div>", esc(CAUTION));
    h
}

fn close(mut h: String) -> String {
    h.push_str("</body>\n</html>\n");
    h
}

/// A table with a header row; cells already escaped HTML. Numbers (cells starting with a digit,
/// a sign or a dash for "none") are right-aligned.
fn table(h: &mut String, head: &[&str], rows: &[Vec<String>]) {
    h.push_str("<table>\n<tr>");
    for c in head {
        let _ = write!(h, "<th>{}</th>", esc(c));
    }
    h.push_str("</tr>\n");
    for r in rows {
        h.push_str("<tr>");
        for (k, c) in r.iter().enumerate() {
            let numeric = k > 0 && c.chars().next().is_some_and(|ch| ch.is_ascii_digit() || ch == '-' || ch == '+' || ch == '—');
            let _ = write!(h, "<td{}>{c}</td>", if numeric { " class=\"n\"" } else { "" });
        }
        h.push_str("</tr>\n");
    }
    h.push_str("</table>\n");
}

fn opt(v: Option<f64>, f: impl Fn(f64) -> String) -> String {
    v.map(f).unwrap_or_else(|| "—".into())
}

/// A number with 4 significant digits and its unit.
fn q(v: f64, unit: &str) -> String {
    format!("{} {unit}", sig(v, 4)).trim_end().to_string()
}

fn warnings(h: &mut String, w: &[String]) {
    h.push_str("<h2>Validity warnings</h2>\n");
    if w.is_empty() {
        h.push_str("<p>None: every cell is inside its correlations' published ranges and the checks found nothing to flag.</p>\n");
    }
    for w in w {
        let _ = writeln!(h, "<p class=\"warn\">{}</p>", esc(w));
    }
}

/// The plots of the folder, inline, in the order given; (file, caption).
fn plots(h: &mut String, dir: &Path, files: &[(&str, &str)]) -> Result<(), OutputError> {
    h.push_str("<h2>Plots</h2>\n");
    for (file, caption) in files {
        let path = dir.join(file);
        if !path.exists() {
            continue;
        }
        let svg = std::fs::read_to_string(&path).map_err(io(&path))?;
        let start = svg.find("<svg").unwrap_or(0);
        let _ = writeln!(h, "<figure id=\"{}\">\n{}\n<figcaption>{} ({})</figcaption>\n</figure>", esc(file), &svg[start..], esc(caption), esc(file));
    }
    Ok(())
}

fn inputs(h: &mut String, input: Option<&InputEcho>) {
    h.push_str("<h2>Inputs</h2>\n");
    let Some(i) = input else {
        h.push_str("<p>The exchanger was built in code; there is no case file to echo.</p>\n");
        return;
    };
    h.push_str("<h3>As interpreted</h3>\n");
    let rows: Vec<Vec<String>> = i.interpreted.iter().map(|(k, v)| vec![esc(k), esc(v)]).collect();
    table(h, &["quantity", "value"], &rows);
    let _ = writeln!(h, "<h3>As given ({}, SHA-256 {})</h3>\n<pre>{}</pre>", esc(&i.origin), esc(&i.sha256), esc(&i.text));
}

/// A serde value as nested tables (the whole summary, for completeness).
fn value_table(h: &mut String, v: &serde_json::Value) {
    match v {
        serde_json::Value::Object(m) => {
            h.push_str("<table>\n");
            for (k, v) in m {
                let _ = write!(h, "<tr><th>{}</th><td>", esc(k));
                value_table(h, v);
                h.push_str("</td></tr>\n");
            }
            h.push_str("</table>\n");
        }
        serde_json::Value::Array(a) if a.iter().all(|x| !x.is_object()) => {
            let parts: Vec<String> = a.iter().map(|x| esc(&scalar(x))).collect();
            h.push_str(&parts.join(", "));
        }
        // An array of flat records: one table, a column per key.
        serde_json::Value::Array(a) if a.iter().all(|x| x.as_object().is_some_and(|m| m.values().all(|v| !v.is_object() && !v.is_array()))) => {
            let head: Vec<&String> = a[0].as_object().map(|m| m.keys().collect()).unwrap_or_default();
            h.push_str("<table>\n<tr>");
            for k in &head {
                let _ = write!(h, "<th>{}</th>", esc(k));
            }
            h.push_str("</tr>\n");
            for x in a {
                h.push_str("<tr>");
                for k in &head {
                    let _ = write!(h, "<td>{}</td>", esc(&scalar(&x[k.as_str()])));
                }
                h.push_str("</tr>\n");
            }
            h.push_str("</table>\n");
        }
        serde_json::Value::Array(a) => {
            for x in a {
                value_table(h, x);
            }
        }
        other => h.push_str(&esc(&scalar(other))),
    }
}

fn scalar(v: &serde_json::Value) -> String {
    match v {
        serde_json::Value::Null => "—".into(),
        serde_json::Value::Number(n) => n.as_f64().map_or_else(|| n.to_string(), |x| sig(x, 6)),
        serde_json::Value::String(s) => s.clone(),
        other => other.to_string(),
    }
}

fn full_summary(h: &mut String, name: &str, v: &serde_json::Value) {
    let _ = writeln!(h, "<h2>Every value of {}</h2>\n<details><summary>Show the whole summary ({} as a table)</summary>", esc(name), esc(name));
    value_table(h, v);
    h.push_str("</details>\n");
}

/// report.html of a steady rating (run and size).
pub fn steady(r: &SteadyReport, path: &Path) -> Result<(), OutputError> {
    let dir = path.parent().unwrap_or(Path::new("."));
    let mut h = open(&format!("{}: steady rating", r.case), r.version, r.input.as_deref());
    let _ = writeln!(
        h,
        "<p>{} arrangement, {} cells, {} scheme; hot: {}; cold: {}. Newton converged in {} iterations (relative residual {}).</p>",
        esc(r.arrangement),
        r.cells,
        esc(r.scheme),
        esc(&r.hot_fluid),
        esc(&r.cold_fluid),
        r.iterations,
        esc(&format!("{:.1e}", r.final_relative_residual))
    );
    h.push_str("<h2>Key results beside the lumped hand method</h2>\n");
    let err = r.grid_error_estimate.as_ref().map(|g| &g.estimated_error);
    let rows = vec![
        vec![
            "duty".into(),
            q(r.duty_W * 1e-3, "kW"),
            q(r.lumped.duty_w * 1e-3, "kW"),
            format!("{:+.3} %", r.grid_vs_lumped.duty_difference_percent),
            opt(err.map(|e| e.duty_w * 1e-3), |v| q(v, "kW")),
        ],
        vec![
            "hot outlet".into(),
            q(r.hot_outlet_C, "°C"),
            q(r.lumped.hot_outlet_c, "°C"),
            format!("{:+.3} K", r.grid_vs_lumped.hot_outlet_difference_K),
            opt(err.map(|e| e.hot_outlet_c), |v| q(v, "K")),
        ],
        vec![
            "cold outlet".into(),
            q(r.cold_outlet_C, "°C"),
            q(r.lumped.cold_outlet_c, "°C"),
            format!("{:+.3} K", r.grid_vs_lumped.cold_outlet_difference_K),
            opt(err.map(|e| e.cold_outlet_c), |v| q(v, "K")),
        ],
        vec!["UA".into(), q(r.UA_W_K, "W/K"), q(r.lumped.ua_w_k, "W/K"), format!("{:+.3} %", r.grid_vs_lumped.ua_difference_percent), "—".into()],
        vec!["effectiveness".into(), sig(r.effectiveness, 4), sig(r.lumped.effectiveness, 4), "—".into(), "—".into()],
        vec!["NTU".into(), sig(r.ntu, 4), sig(r.lumped.ntu, 4), "—".into(), "—".into()],
        vec!["capacity ratio".into(), sig(r.capacity_ratio, 4), sig(r.lumped.capacity_ratio, 4), "—".into(), "—".into()],
        vec!["LMTD".into(), opt(r.lmtd_K, |v| q(v, "K")), "—".into(), "—".into(), "—".into()],
        vec!["energy imbalance (hot released − cold gained)".into(), q(r.energy_imbalance_W, "W"), "—".into(), "—".into(), "—".into()],
    ];
    table(&mut h, &["quantity", "grid", "lumped", "grid − lumped", "estimated grid error"], &rows);
    match &r.grid_error_estimate {
        Some(g) => {
            let _ = writeln!(
                h,
                "<p>Grid error estimated by Richardson extrapolation from a solve on {} cells at order {}: extrapolated duty {}, hot outlet {}, cold outlet {}.</p>",
                g.coarse_cells,
                sig(g.order, 3),
                q(g.extrapolated.duty_w * 1e-3, "kW"),
                q(g.extrapolated.hot_outlet_c, "°C"),
                q(g.extrapolated.cold_outlet_c, "°C")
            );
        }
        None => h.push_str("<p>No grid-error estimate (a single cell).</p>\n"),
    }
    if let Some(study) = &r.grid_study {
        h.push_str("<h3>Grid study</h3>\n");
        let rows: Vec<Vec<String>> = study
            .levels
            .iter()
            .map(|l| {
                vec![l.cells.to_string(), l.iterations.to_string(), q(l.values.duty_w, "W"), q(l.values.hot_outlet_c, "°C"), q(l.values.cold_outlet_c, "°C")]
            })
            .collect();
        table(&mut h, &["cells", "iterations", "duty", "hot outlet", "cold outlet"], &rows);
    }
    h.push_str("<h2>Local conditions</h2>\n");
    let mut rows = Vec::new();
    for (name, c) in [("hot", &r.hot_conditions), ("cold", &r.cold_conditions)] {
        let range = super::extremes;
        rows.push(vec![format!("{name}: heat-transfer area"), q(c.area_m2, "m²")]);
        rows.push(vec![format!("{name}: velocity"), c.velocity_m_s.as_ref().map_or("— (no flow geometry)".into(), |e| range(e, "m/s"))]);
        rows.push(vec![format!("{name}: Reynolds number"), c.reynolds.as_ref().map_or("— (no flow geometry)".into(), |e| range(e, ""))]);
        rows.push(vec![format!("{name}: film coefficient"), range(&c.h_W_m2K, "W/(m²·K)")]);
        rows.push(vec![format!("{name}: wetted surface temperature"), range(&c.surface_C, "°C")]);
        if let Some(f) = &c.fin_efficiency {
            rows.push(vec![format!("{name}: fin efficiency"), range(f, "")]);
        }
        if let Some(f) = &c.surface_efficiency {
            rows.push(vec![format!("{name}: overall surface efficiency"), range(f, "")]);
        }
        let (dp, total) =
            if name == "hot" { (r.hot_pressure_drop_Pa, r.hot_pressure_drop_total_Pa) } else { (r.cold_pressure_drop_Pa, r.cold_pressure_drop_total_Pa) };
        rows.push(vec![
            format!("{name}: pressure drop (core; with losses)"),
            format!("{}; {}", opt(dp, |v| q(v * 1e-3, "kPa")), opt(total, |v| q(v * 1e-3, "kPa"))),
        ]);
    }
    let a = &r.minimum_approach;
    rows.push(vec!["minimum approach (hot − cold)".into(), super::value_at(a.minimum_K, "K", a.at_m, a.cell)]);
    let rows: Vec<Vec<String>> = rows.into_iter().map(|r| r.into_iter().map(|c| esc(&c)).collect()).collect();
    let head = if r.fields.is_some() {
        "smallest … largest (where: the cell's i, j, k as in profiles.csv)"
    } else {
        "smallest … largest (where: x along the hot stream's flow)"
    };
    table(&mut h, &["quantity", head], &rows);
    warnings(&mut h, &r.warnings);
    if let Some(s) = &r.sizing {
        h.push_str("<h2>Sizing</h2>\n");
        value_table(&mut h, &serde_json::to_value(s).expect("serialises"));
    }
    let network = r.fields.is_some();
    plots(
        &mut h,
        dir,
        &[
            (
                "temperatures.svg",
                if network {
                    "Hot, cold and wall temperatures over the network's face"
                } else {
                    "Temperatures along the exchanger, with the lumped hand method's outlets marked"
                },
            ),
            ("tq_diagram.svg", "T–Q diagram with the minimum approach marked"),
            (
                "heat_flux.svg",
                if network { "Local heat flux over the network's face" } else { "Local heat flux and overall coefficient beside the lumped single values" },
            ),
            ("film_coefficients.svg", "Reynolds number and film coefficient along the exchanger, with the correlations' validity shaded"),
            ("pressure.svg", "Absolute pressure along each stream, with the saturation pressure where it matters"),
            ("outlets.svg", "Outlet temperatures across each outlet face, with the mixed means and the lumped hand method's outlets"),
        ],
    )?;
    inputs(&mut h, r.input.as_deref());
    full_summary(&mut h, "summary.json", &serde_json::to_value(r).expect("report serialises"));
    let _ = writeln!(h, "<div class=\"caution\"><strong>Caution.</strong> {}</div>", esc(CAUTION));
    std::fs::write(path, close(h)).map_err(io(path))
}

/// A response's settling times to 63, 95 and 99 % and its overshoot ("—" where not set).
fn settling_and_overshoot(v: &crate::results::Response) -> [String; 4] {
    let s = |v: Option<f64>| opt(v, |x| q(x, "s"));
    [s(v.settling_63_s), s(v.settling_95_s), s(v.settling_99_s), opt(v.overshoot_percent, |x| format!("{x:.2} %"))]
}

/// report.html of a transient run.
pub fn transient(r: &TransientReport, path: &Path) -> Result<(), OutputError> {
    let dir = path.parent().unwrap_or(Path::new("."));
    let mut h = open(&format!("{}: transient simulation", r.case), r.version, r.input.as_deref());
    let _ = writeln!(
        h,
        "<p>{} arrangement, {} cells, {} scheme, {} integrator; {} s simulated from {}. Status: <strong>{}</strong>.</p>",
        esc(r.arrangement),
        r.cells,
        esc(r.scheme),
        esc(r.integrator),
        num(r.duration_s),
        esc(&r.initial_state),
        esc(r.status)
    );
    if let Some(stop) = &r.stop {
        let _ = writeln!(h, "<p class=\"warn\">Stopped early at t = {} s: {}. The results end there.</p>", num(stop.time_s), esc(&stop.reason));
    }
    let _ = writeln!(h, "<h2>Outlet response</h2>\n<p>Measured from t = {} s to the end.</p>", num(r.reference_time_s));
    let rows: Vec<Vec<String>> = [("hot outlet", &r.hot_outlet), ("cold outlet", &r.cold_outlet)]
        .iter()
        .map(|(name, o)| {
            let v = &o.response;
            let mut row = vec![name.to_string(), q(v.initial_C, "°C"), q(v.final_C, "°C")];
            row.extend(settling_and_overshoot(v));
            row.extend([
                opt(o.steady_final_C, |x| q(x, "°C")),
                format!("{} at {} s", q(o.min_C, "°C"), sig(o.min_at_s, 5)),
                format!("{} at {} s", q(o.max_C, "°C"), sig(o.max_at_s, 5)),
            ]);
            row
        })
        .map(|r| r.into_iter().map(|c| esc(&c)).collect())
        .collect();
    table(&mut h, &["", "start", "end", "63 %", "95 %", "99 %", "overshoot", "steady for the final inputs", "lowest", "highest"], &rows);
    h.push_str("<h2>Response to each input change</h2>\n");
    if r.input_changes.is_empty() {
        h.push_str("<p>No input changes during the run (constant schedules).</p>\n");
    } else {
        let rows: Vec<Vec<String>> = r
            .input_changes
            .iter()
            .flat_map(|c| {
                let what = format!("{} {} {} → {} {} ({}–{} s)", c.input, c.kind, num(c.from), num(c.to), c.unit, num(c.start_s), num(c.end_s));
                [("hot outlet", &c.hot_outlet), ("cold outlet", &c.cold_outlet)].map(|(name, v)| {
                    let mut row = vec![what.clone(), name.to_string(), format!("{:+.3} K", v.change_K)];
                    row.extend(settling_and_overshoot(v));
                    row.extend([q(v.swing_K, "K"), format!("{} s", num(c.window_end_s))]);
                    row
                })
            })
            .map(|r| r.into_iter().map(|c| esc(&c)).collect())
            .collect();
        table(&mut h, &["change", "outlet", "net change", "63 %", "95 %", "99 %", "overshoot", "swing", "window end"], &rows);
    }
    h.push_str("<h2>Wall</h2>\n");
    let w = &r.wall;
    let peak = |p: &crate::results::Peak, unit: &str| esc(&format!("{} at t = {} s, x = {} m", q(p.value, unit), sig(p.at_s, 5), sig(p.at_m, 4)));
    let rows = vec![
        vec!["hottest wall temperature".into(), peak(&w.hottest_C, "°C")],
        vec!["fastest wall temperature change".into(), peak(&w.fastest_change_K_s, "K/s")],
        vec!["largest difference through the wall's thickness".into(), peak(&w.largest_difference_K, "K")],
    ];
    table(&mut h, &["quantity", "value"], &rows);
    h.push_str("<h2>Checks</h2>\n");
    let st = &r.stats;
    let rows = vec![
        vec!["energy closure".into(), esc(&format!("{:.3e} J of {:.3e} J transferred ({:.1e})", r.energy_closure_J, r.hot_heat_J, r.energy_closure_relative))],
        vec!["steps (rejected)".into(), format!("{} ({})", st.steps, st.rejected_steps)],
        vec![
            "largest local time error estimate; their sum".into(),
            esc(&format!(
                "{:.1e} K; {:.1e} K (a pessimistic bound; the grid error is usually far larger)",
                st.largest_local_error_k, st.accumulated_local_error_k
            )),
        ],
    ];
    table(&mut h, &["check", "value"], &rows);
    plots(
        &mut h,
        dir,
        &[
            ("response.svg", "Outlet, inlet and hottest-wall temperatures and mass flows against time"),
            ("snapshots.svg", "Temperature profiles at the snapshot times, coloured by time"),
        ],
    )?;
    inputs(&mut h, r.input.as_deref());
    full_summary(&mut h, "transient.json", &serde_json::to_value(r).expect("report serialises"));
    let _ = writeln!(h, "<div class=\"caution\"><strong>Caution.</strong> {}</div>", esc(CAUTION));
    std::fs::write(path, close(h)).map_err(io(path))
}

/// report.html of a sweep: what was swept, the plot and every point.
pub fn sweep(m: &super::design::SweepManifest, csv: &str, path: &Path) -> Result<(), OutputError> {
    let dir = path.parent().unwrap_or(Path::new("."));
    let source = format!("case {} (SHA-256 {})", esc(&m.case), esc(&m.input_sha256));
    let mut h = open_with(&format!("{}: sweep", m.case), &m.hxgrid_version, &source);
    let _ = writeln!(
        h,
        "<p>Case input SHA-256 {}; {} combination of the swept inputs; {} points, {} without results.</p>",
        esc(&m.input_sha256),
        esc(&m.combine),
        m.points,
        m.points_failed
    );
    let rows: Vec<Vec<String>> = m.inputs.iter().map(|i| vec![esc(&i.key), esc(&i.values.iter().map(|v| num(*v)).collect::<Vec<_>>().join(", "))]).collect();
    table(&mut h, &["swept key", "values"], &rows);
    plots(&mut h, dir, &[("sweep.svg", "Key results against the first swept input")])?;
    h.push_str("<h2>Every point</h2>\n");
    let mut lines = csv.lines();
    let head = csv_fields(lines.next().unwrap_or_default());
    let head: Vec<&str> = head.iter().map(String::as_str).collect();
    let rows: Vec<Vec<String>> =
        lines.map(|l| csv_fields(l).iter().map(|c| esc(&c.parse::<f64>().map_or_else(|_| c.clone(), |v| sig(v, 6)))).collect()).collect();
    table(&mut h, &head, &rows);
    std::fs::write(path, close(h)).map_err(io(path))
}

/// report.html of an uncertainty run: the percentiles beside the nominal rating, the main
/// contributors and the inputs with their sources.
pub fn uncertainty(r: &crate::design::uncertainty::UncertaintyReport, path: &Path) -> Result<(), OutputError> {
    let source = format!("case {} (SHA-256 {})", esc(&r.case), esc(&r.input_sha256));
    let mut h = open_with(&format!("{}: uncertainty", r.case), r.hxgrid_version, &source);
    let _ = writeln!(h, "<p>{} samples ({}, seed {}), {} without results, {} cells each.</p>", r.samples, esc(r.method), r.seed, r.samples_failed, r.cells);
    h.push_str("<h2>Results</h2>\n");
    let rows: Vec<Vec<String>> = r
        .results
        .iter()
        .map(|x| {
            let g = |v: f64| sig(v, 6);
            vec![esc(x.quantity), g(x.nominal), opt(x.grid_error, |v| sig(v, 3)), g(x.p05), g(x.p50), g(x.p95), g(x.mean), sig(x.standard_deviation, 4)]
        })
        .collect();
    table(&mut h, &["quantity", "nominal", "grid error", "P05", "P50", "P95", "mean", "standard deviation"], &rows);
    h.push_str("<h2>Main contributors</h2>\n");
    value_table(&mut h, &serde_json::to_value(&r.contributors).expect("serialises"));
    h.push_str("<h2>Inputs and their sources</h2>\n");
    value_table(&mut h, &serde_json::to_value(&r.inputs).expect("serialises"));
    if !r.notes.is_empty() {
        h.push_str("<h2>Notes</h2>\n");
        for n in &r.notes {
            let _ = writeln!(h, "<p class=\"warn\">{}</p>", esc(n));
        }
    }
    let _ = writeln!(h, "<div class=\"caution\"><strong>Caution.</strong> {}</div>", esc(CAUTION));
    std::fs::write(path, close(h)).map_err(io(path))
}

/// The fields of one CSV line (double-quoted fields may hold commas and doubled quotes).
fn csv_fields(line: &str) -> Vec<String> {
    let (mut out, mut cur, mut quoted) = (Vec::new(), String::new(), false);
    let mut chars = line.chars().peekable();
    while let Some(c) = chars.next() {
        match (c, quoted) {
            ('"', true) if chars.peek() == Some(&'"') => {
                cur.push('"');
                chars.next();
            }
            ('"', _) => quoted = !quoted,
            (',', false) => out.push(std::mem::take(&mut cur)),
            (c, _) => cur.push(c),
        }
    }
    out.push(cur);
    out
}
