//! The summaries printed on the terminal after a run, as text (the binary prints them).

use crate::results::SteadyReport;
use crate::scenario::TransientReport;
use std::fmt::Write as _;

/// The transient summary table as printed after `hxgrid simulate`.
pub fn transient(r: &TransientReport) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "\n{} — transient, {} s simulated, {} cells, {} scheme, {}", r.case, r.duration_s, r.cells, r.scheme, r.integrator);
    let _ = writeln!(out, "  start: {}; response measured from t = {} s", r.initial_state, r.reference_time_s);
    let _ = writeln!(out, "  hxgrid {}{}", r.version, r.input_sha256.as_ref().map(|h| format!("; input SHA-256 {h}")).unwrap_or_default());
    if let Some(stop) = &r.stop {
        let _ = writeln!(
            out,
            "  STOPPED EARLY at t = {} s ({} stream at x = {} m): results end there",
            crate::text::num(stop.time_s),
            stop.stream,
            crate::text::num(stop.position_m)
        );
    }
    let f = |v: Option<f64>| v.map(|x| format!("{x:.1} s")).unwrap_or_else(|| "—".into());
    let pct = |v: Option<f64>| v.map(|x| format!("{x:.2}%")).unwrap_or_else(|| "—".into());
    let _ = writeln!(
        out,
        "\n{:<14}{:>11}{:>11}{:>10}{:>10}{:>10}{:>11}{:>16}{:>22}{:>22}",
        "", "start °C", "end °C", "63 %", "95 %", "99 %", "overshoot", "end − steady K", "lowest °C (at s)", "highest °C (at s)"
    );
    for (name, o) in [("hot outlet", &r.hot_outlet), ("cold outlet", &r.cold_outlet)] {
        let v = &o.response;
        let _ = writeln!(
            out,
            "{:<14}{:>11.3}{:>11.3}{:>10}{:>10}{:>10}{:>11}{:>16}{:>22}{:>22}",
            name,
            v.initial_C,
            v.final_C,
            f(v.settling_63_s),
            f(v.settling_95_s),
            f(v.settling_99_s),
            pct(v.overshoot_percent),
            o.difference_from_steady_K.map(|d| format!("{d:.2e}")).unwrap_or_else(|| "— (none)".into()),
            format!("{:.3} ({})", o.min_C, crate::text::num(o.min_at_s)),
            format!("{:.3} ({})", o.max_C, crate::text::num(o.max_at_s)),
        );
    }
    if !r.input_changes.is_empty() {
        let _ = writeln!(out, "\nresponse to each input change (from its start to the next change):");
        for c in &r.input_changes {
            let when = if c.kind == "step" {
                format!("at {} s", crate::text::num(c.start_s))
            } else {
                format!("{}–{} s", crate::text::num(c.start_s), crate::text::num(c.end_s))
            };
            let _ = writeln!(out, "  {} {} {} → {} {} ({}):", c.input, c.kind, crate::text::num(c.from), crate::text::num(c.to), c.unit, when);
            for (name, v) in [("hot outlet", &c.hot_outlet), ("cold outlet", &c.cold_outlet)] {
                let _ = writeln!(
                    out,
                    "    {name:<12} {:+.3} K, 63 % {}, 95 % {}, 99 % {}, overshoot {}, swing {:.3} K",
                    v.change_K,
                    f(v.settling_63_s),
                    f(v.settling_95_s),
                    f(v.settling_99_s),
                    pct(v.overshoot_percent),
                    v.swing_K
                );
            }
        }
    }
    let w = &r.wall;
    let at = |p: &crate::results::Peak| format!("at t = {} s, x = {} m", crate::text::num(p.at_s), crate::text::num(p.at_m));
    let _ = writeln!(out, "\nwall: hottest {:.2} °C {}", w.hottest_C.value, at(&w.hottest_C));
    let _ = writeln!(out, "      fastest change {:.3} K/s {}", w.fastest_change_K_s.value, at(&w.fastest_change_K_s));
    let _ = writeln!(out, "      largest difference through its thickness {:.3} K {}", w.largest_difference_K.value, at(&w.largest_difference_K));
    let _ = writeln!(out, "energy closure {:.3e} J of {:.3e} J transferred ({:.1e})", r.energy_closure_J, r.hot_heat_J, r.energy_closure_relative);
    let st = &r.stats;
    let _ = writeln!(
        out,
        "steps {} (rejected {}), Newton iterations {}, Jacobians {}, factorisations {}, right-hand sides {}",
        st.steps, st.rejected_steps, st.newton_iterations, st.jacobian_evaluations, st.factorisations, st.rhs_evaluations
    );
    if st.newton_iterations > 0 {
        let _ = writeln!(
            out,
            "time integration: largest local error estimate {:.1e} K; their sum {:.1e} K (a pessimistic bound on the accumulated error; the grid error is usually far larger)",
            st.largest_local_error_k, st.accumulated_local_error_k
        );
    }
    let _ = writeln!(out, "\nCaution: {}", r.caution);
    out.trim_end().to_string()
}

/// The steady summary table as printed after `hxgrid run`: grid beside lumped, grid error,
/// grid study, warnings and the caution.
pub fn steady(r: &SteadyReport) -> String {
    let mut out = String::new();
    let l = &r.lumped;
    match &r.network {
        None => {
            let _ = writeln!(
                out,
                "\n{} — {} exchanger, {} m, {} cells ({} Newton iterations)",
                r.case,
                r.arrangement,
                crate::text::num(r.length_m),
                r.cells,
                r.iterations
            );
        }
        Some(n) => {
            let _ = writeln!(
                out,
                "\n{} — {} network, {} cells along its first direction, {} cells in all ({} Newton iterations)",
                r.case, r.arrangement, r.cells, n.cells_total, r.iterations
            );
        }
    }
    let _ = writeln!(out, "  hot:  {}\n  cold: {}", r.hot_fluid, r.cold_fluid);
    let _ = writeln!(out, "  {} scheme; hxgrid {}{}", r.scheme, r.version, r.input_sha256.as_ref().map(|h| format!("; input SHA-256 {h}")).unwrap_or_default());
    let _ = writeln!(out, "\n{:<22}{:>16}{:>16}{:>12}", "", "grid", "lumped ε–NTU", "difference");
    use crate::text::fixed as f;
    let _ = writeln!(out, "{:<22}{:>16}{:>16}{:>11}%", "duty (W)", f(r.duty_W, 1), f(l.duty_w, 1), f(r.grid_vs_lumped.duty_difference_percent, 2));
    let _ = writeln!(
        out,
        "{:<22}{:>16}{:>16}{:>10} K",
        "hot outlet (°C)",
        f(r.hot_outlet_C, 3),
        f(l.hot_outlet_c, 3),
        f(r.grid_vs_lumped.hot_outlet_difference_K, 3)
    );
    let _ = writeln!(
        out,
        "{:<22}{:>16}{:>16}{:>10} K",
        "cold outlet (°C)",
        f(r.cold_outlet_C, 3),
        f(l.cold_outlet_c, 3),
        f(r.grid_vs_lumped.cold_outlet_difference_K, 3)
    );
    let _ = writeln!(out, "{:<22}{:>16}{:>16}{:>11}%", "UA (W/K)", f(r.UA_W_K, 2), f(l.ua_w_k, 2), f(r.grid_vs_lumped.ua_difference_percent, 2));
    let _ = writeln!(out, "{:<22}{:>16}{:>16}", "effectiveness", f(r.effectiveness, 5), f(l.effectiveness, 5));
    let _ = writeln!(out, "{:<22}{:>16}{:>16}", "NTU", f(r.ntu, 5), f(l.ntu, 5));
    let _ = writeln!(out, "{:<22}{:>16}{:>16}", "capacity ratio", f(r.capacity_ratio, 5), f(l.capacity_ratio, 5));
    if let (Some(a), Some(b)) = (r.lmtd_K, l.lmtd_k) {
        let _ = writeln!(out, "{:<22}{:>16}{:>16}", "LMTD (K)", f(a, 4), f(b, 4));
    }
    let dp = |v: Option<f64>| v.map(|p| format!("{:.4} kPa", p * 1e-3)).unwrap_or_else(|| "not computed".into());
    let _ = writeln!(out, "{:<22}{:>16}{:>16}", "pressure drop hot", dp(r.hot_pressure_drop_Pa), "");
    let _ = writeln!(out, "{:<22}{:>16}{:>16}", "pressure drop cold", dp(r.cold_pressure_drop_Pa), "");
    for (name, losses, total) in
        [("hot", &r.hot_pressure_losses, r.hot_pressure_drop_total_Pa), ("cold", &r.cold_pressure_losses, r.cold_pressure_drop_total_Pa)]
    {
        let Some(l) = losses else { continue };
        let parts: Vec<String> = [("entrance", l.entrance_Pa), ("exit", l.exit_Pa), ("returns", l.returns_Pa), ("nozzles", l.nozzles_Pa)]
            .iter()
            .filter_map(|(label, v)| v.map(|p| format!("{label} {:.4} kPa", p * 1e-3)))
            .collect();
        let _ = writeln!(out, "  {name} besides friction: {}; total {}", parts.join(", "), dp(total));
    }
    if let Some(sh) = &r.shell_side {
        let g = &sh.rating;
        let _ = writeln!(
            out,
            "\nshell side ({}, {}): Re {}, h {} W/(m²·K), Δp {:.4} kPa",
            sh.stream,
            g.method,
            f(g.reynolds, 0),
            f(g.h_W_m2K, 1),
            g.pressure_drop_Pa * 1e-3
        );
        if let (Some(j), Some(z)) = (&g.factors, &g.zones) {
            let _ = writeln!(
                out,
                "  J_c {} · J_l {} · J_b {} · J_s {} · J_r {} = {} (h ideal {} W/(m²·K))",
                f(j.J_c, 3),
                f(j.J_l, 3),
                f(j.J_b, 3),
                f(j.J_s, 3),
                f(j.J_r, 3),
                f(j.J_total, 3),
                f(g.ideal_h_W_m2K.unwrap_or(0.0), 1)
            );
            let _ = writeln!(
                out,
                "  R_l {} · R_b {}; per shell: crossflow {:.4} kPa, windows {:.4} kPa, end zones {:.4} kPa",
                f(j.R_l, 3),
                f(j.R_b, 3),
                z.crossflow_Pa * 1e-3,
                z.windows_Pa * 1e-3,
                z.end_zones_Pa * 1e-3
            );
        }
    }
    if let Some(n) = &r.network {
        let exact = if n.closed_form_exact { "exact" } else { "approximate" };
        let _ = writeln!(out, "{:<22}{:>16}   (closed form at the grid's NTU and Cr, {exact})", "closed-form ε", f(n.closed_form_effectiveness, 5));
        for (name, o) in [("hot", &n.hot_outlet), ("cold", &n.cold_outlet)] {
            let _ = writeln!(
                out,
                "{name} outlet across its face: {} … {} °C over {} lanes (mixed mean {} °C)",
                f(o.min_C, 3),
                f(o.max_C, 3),
                o.lanes,
                f(o.mixed_mean_C, 3)
            );
        }
    }
    let _ = writeln!(out, "\nlocal conditions (smallest … largest, with where):");
    let sig = |v: f64| crate::text::sig(v, 4);
    let range = super::extremes;
    for (name, c) in [("hot", &r.hot_conditions), ("cold", &r.cold_conditions)] {
        let _ = writeln!(out, "  {name:<5} area {} m²", sig(c.area_m2));
        if let Some(v) = &c.velocity_m_s {
            let _ = writeln!(out, "        velocity {}", range(v, "m/s"));
        }
        if let Some(v) = &c.reynolds {
            let _ = writeln!(out, "        Re {}", range(v, ""));
        }
        let _ = writeln!(out, "        h {}", range(&c.h_W_m2K, "W/(m²·K)"));
        let _ = writeln!(out, "        wetted surface {}", range(&c.surface_C, "°C"));
        if let Some(v) = &c.fin_efficiency {
            let _ = writeln!(out, "        fin efficiency {}", range(v, ""));
        }
        if let Some(v) = &c.surface_efficiency {
            let _ = writeln!(out, "        overall surface efficiency {}", range(v, ""));
        }
    }
    let a = &r.minimum_approach;
    let _ = writeln!(out, "  minimum approach {}", super::value_at(a.minimum_K, "K", a.at_m, a.cell));
    let _ = writeln!(out, "\nenergy imbalance (hot released − cold gained): {:.3e} W", r.energy_imbalance_W);
    if let Some(g) = &r.grid_error_estimate {
        let _ = writeln!(
            out,
            "estimated grid error (vs {} cells, Richardson order {}): duty {:.3e} W, hot outlet {:.2e} K, cold outlet {:.2e} K",
            g.coarse_cells, g.order, g.estimated_error.duty_w, g.estimated_error.hot_outlet_c, g.estimated_error.cold_outlet_c
        );
    }
    if let Some(s) = &r.grid_study {
        let _ = writeln!(out, "\ngrid study:");
        let _ = writeln!(out, "{:>10}{:>18}{:>16}{:>16}", "cells", "duty (W)", "hot out (°C)", "cold out (°C)");
        for lv in &s.levels {
            let _ = writeln!(out, "{:>10}{:>18.6}{:>16.8}{:>16.8}", lv.cells, lv.values.duty_w, lv.values.hot_outlet_c, lv.values.cold_outlet_c);
        }
        let fmt = |o: Option<f64>| o.map(|p| format!("{p:.3}")).unwrap_or_else(|| "n/a (round-off)".into());
        let _ = writeln!(
            out,
            "observed order: duty {}, hot outlet {}, cold outlet {} (scheme: {})",
            fmt(s.observed_order.duty),
            fmt(s.observed_order.hot_outlet),
            fmt(s.observed_order.cold_outlet),
            s.formal_order
        );
        let _ = writeln!(
            out,
            "Richardson extrapolation: duty {:.6} W, hot outlet {:.8} °C, cold outlet {:.8} °C",
            s.extrapolated.duty_w, s.extrapolated.hot_outlet_c, s.extrapolated.cold_outlet_c
        );
    }
    for w in &r.warnings {
        let _ = writeln!(out, "warning: {w}");
    }
    let _ = writeln!(out, "\nCaution: {}", r.caution);
    out.trim_end().to_string()
}

/// The sizing outcome as printed after `hxgrid size` (and, as a design margin, `hxgrid run`).
pub fn sizing(s: &crate::design::size::Sizing) -> String {
    use crate::text::num;
    let mut out = String::new();
    let unit = if s.target == "duty_W" { "W" } else { "°C" };
    let _ = writeln!(out, "\nsizing: {} = {} {unit} by varying {}", s.target, num(s.goal), s.vary);
    let found = if s.whole_number { format!("{} (the smallest whole size that meets the target)", num(s.value)) } else { format!("{:.6}", s.value) };
    let _ = writeln!(out, "  {} = {found}   (case file: {})", s.vary, num(s.case_value));
    let _ = writeln!(
        out,
        "  achieved {} = {:.6} {unit} (achieved − goal {:+.3e}; continuous tolerance {:.1e})",
        s.target, s.achieved, s.achieved_minus_goal, s.tolerance
    );
    if let Some(n) = &s.next_size_misses {
        let _ = writeln!(
            out,
            "  next size down, {} = {}: {} = {:.6} {unit} (misses by {:+.3e})",
            s.vary,
            num(n.value),
            s.target,
            n.achieved,
            n.achieved_minus_goal
        );
    }
    let _ = writeln!(out, "  {} complete grid solves, {} Newton iterations in all (warm-started)", s.evaluations, s.newton_iterations);
    match s.overdesign_percent {
        Some(o) => {
            let _ = writeln!(
                out,
                "  area: case {:.4} m², required {:.4} m² → overdesign {:+.2} % (available / required − 1)",
                s.area_available_m2, s.area_required_m2, o
            );
        }
        None => {
            let _ = writeln!(out, "  area {:.4} m² (the free input does not change the area: no overdesign figure)", s.area_available_m2);
        }
    }
    out.trim_end().to_string()
}

/// The uncertainty table as printed after `hxgrid uncertainty`.
pub fn uncertainty(r: &crate::design::uncertainty::UncertaintyReport) -> String {
    let mut out = String::new();
    let _ = writeln!(out, "\n{} — uncertainty, {} Latin-hypercube samples (seed {}), {} cells each", r.case, r.samples, r.seed, r.cells);
    if r.samples_failed > 0 {
        let _ = writeln!(out, "  {} samples failed and are left out (see samples.csv)", r.samples_failed);
    }
    let _ = writeln!(out, "\n{:<16}{:>14}{:>12}{:>14}{:>14}{:>14}", "", "nominal", "grid error", "P05", "P50", "P95");
    for s in &r.results {
        let g = s.grid_error.map(|g| format!("{g:.2e}")).unwrap_or_else(|| "—".into());
        let _ = writeln!(out, "{:<16}{:>14.3}{:>12}{:>14.3}{:>14.3}{:>14.3}", s.quantity, s.nominal, g, s.p05, s.p50, s.p95);
    }
    let _ = writeln!(out, "\n{:<28}{:>10}{:>12}{:>13}{:>13}  source", "input (±)", "half-width", "duty share", "hot out sh.", "cold out sh.");
    for c in &r.contributors {
        let source = r.inputs.iter().find(|f| f.key == c.key).map(|f| f.source.as_str()).unwrap_or("");
        let _ = writeln!(
            out,
            "{:<28}{:>8.3} {:<2}{:>11.1}%{:>12.1}%{:>12.1}%  {}",
            c.key,
            c.half_width,
            c.unit,
            c.duty_share_percent,
            c.hot_outlet_share_percent,
            c.cold_outlet_share_percent,
            crate::text::safe_message(source, 90, 1).trim_end()
        );
    }
    for n in &r.notes {
        let _ = writeln!(out, "note: {n}");
    }
    let _ = writeln!(out, "\nCaution: {}", r.caution);
    out.trim_end().to_string()
}
