//! Property-based tests over random valid cases (proptest): whatever the inputs, the
//! first and second laws hold and nothing non-finite comes out.
//! - energy closure: heat given up by the hot stream = heat taken by the cold stream;
//! - outlets lie between the two inlet temperatures;
//! - the hot stream is never colder than the cold stream at the same face;
//! - duty never exceeds the thermodynamic maximum C_min (T_h,in − T_c,in) (enthalpy form).

use proptest::prelude::*;

#[derive(Debug, Clone)]
struct Random {
    counterflow: bool,
    scheme: &'static str,
    water_hot: bool,
    water_cold: bool,
    fixed_hot: Option<f64>,
    fixed_cold: Option<f64>,
    t_cold: f64,
    dt: f64,
    m_hot: f64,
    m_cold: f64,
    length: f64,
    d_inner: f64,
    gap: f64,
    cells: i64,
    cp_hot: f64,
    mu_hot: f64,
}

fn stream(name: &str, water: bool, fixed: Option<f64>, t: f64, m: f64, cp: f64, mu: f64) -> String {
    let mut s = format!("[{name}]\ninlet_temperature_C = {t}\nmass_flow_kg_s = {m}\nfouling_m2K_W = 0.0001\n");
    s += if water { "fluid = \"water\"\npressure_bar_abs = 3.0\n" } else { "fluid = \"constant\"\n" };
    match fixed {
        Some(h) => s += &format!("film = \"fixed\"\nfilm_coefficient_W_m2K = {h}\n"),
        None => s += "film = \"gnielinski\"\n",
    }
    if !water {
        s += &format!("[{name}.properties]\ndensity_kg_m3 = 900.0\nspecific_heat_J_kgK = {cp}\nviscosity_Pa_s = {mu}\nconductivity_W_mK = 0.3\n");
    }
    s
}

fn case_text(r: &Random) -> String {
    let d_o = r.d_inner * 1.2;
    let mut s = format!(
        "arrangement = \"{}\"\nlength_m = {}\n[geometry]\nkind = \"double_pipe\"\ntube_inner_diameter_m = {}\ntube_outer_diameter_m = {}\nshell_inner_diameter_m = {}\nwall_conductivity_W_mK = 16.0\ntube_side = \"hot\"\n",
        if r.counterflow { "counterflow" } else { "parallel" },
        r.length,
        r.d_inner,
        d_o,
        d_o + r.gap
    );
    s += &stream("hot", r.water_hot, r.fixed_hot, r.t_cold + r.dt, r.m_hot, r.cp_hot, r.mu_hot);
    s += &stream("cold", r.water_cold, r.fixed_cold, r.t_cold, r.m_cold, 4000.0, 0.001);
    s += &format!("[solver]\ncells = {}\nscheme = \"{}\"\nmax_iterations = 100\n", r.cells, r.scheme);
    s
}

fn random() -> impl Strategy<Value = Random> {
    (
        (any::<bool>(), prop_oneof![Just("trapezoidal"), Just("upwind"), Just("tvd")], any::<bool>(), any::<bool>()),
        (proptest::option::of(50.0..20_000.0f64), proptest::option::of(50.0..20_000.0f64)),
        (1.0..40.0f64, 1.0..50.0f64, -3.0..1.0f64, -3.0..1.0f64),
        (0.2..30.0f64, 0.005..0.05f64, 0.003..0.03f64, 2i64..150, 1500.0..4500.0f64, -4.0..-1.0f64),
    )
        .prop_map(
            |(
                (counterflow, scheme, water_hot, water_cold),
                (fixed_hot, fixed_cold),
                (t_cold, dt, lm_hot, lm_cold),
                (length, d_inner, gap, cells, cp_hot, lmu),
            )| Random {
                counterflow,
                scheme,
                water_hot,
                water_cold,
                fixed_hot,
                fixed_cold,
                t_cold,
                dt,
                m_hot: 10f64.powf(lm_hot),
                m_cold: 10f64.powf(lm_cold),
                length,
                d_inner,
                gap,
                cells,
                cp_hot,
                mu_hot: 10f64.powf(lmu),
            },
        )
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    #[test]
    fn laws_hold_for_random_cases(r in random()) {
        let text = case_text(&r);
        let case = hxgrid::case::parse_str(&text, "random", "random").expect("valid by construction");
        let ex = case.build();
        let report = match hxgrid::study::rate("random", &ex, &case.solver, &Default::default(), &mut hxgrid::solve::SilentObserver) {
            Ok(r) => r,
            // A grid too coarse for the scheme is refused with a clear error, not returned.
            // The advice must work: the suggested grid solves.
            Err(hxgrid::solve::SolveError::GridTooCoarse { suggested_cells, .. }) => {
                let n = suggested_cells.expect("a coarse-grid refusal names a cell count");
                prop_assert!(n > r.cells as usize);
                let solver = hxgrid::solve::SteadySettings { cells: n, ..case.solver.clone() };
                let again = hxgrid::solve::solve_steady(&ex, &solver, &mut hxgrid::solve::SilentObserver);
                prop_assert!(!matches!(again, Err(hxgrid::solve::SolveError::GridTooCoarse { .. })), "{n} cells still too coarse");
                return Ok(());
            }
            // Random flows through random passages can take more pressure than the inlet has:
            // refused with the stream and place named, never returned.
            Err(e @ (hxgrid::solve::SolveError::NegativePressure { .. } | hxgrid::solve::SolveError::Flashing { .. })) => {
                prop_assert!(hxgrid::case::advice::steady(&e).is_some_and(|a| a.contains("pressure_bar_abs")));
                return Ok(());
            }
            Err(e) => return Err(TestCaseError::fail(format!("{e}\n{text}"))),
        };
        let (th, tc) = (ex.hot.inlet_c, ex.cold.inlet_c);
        let max = report.max_duty_W;
        prop_assert!((report.energy_imbalance_W).abs() <= 1e-9 * max, "imbalance {} of {max}", report.energy_imbalance_W);
        let eps = 1e-9 * (th - tc);
        for t in [report.hot_outlet_C, report.cold_outlet_C] {
            prop_assert!(t >= tc - eps && t <= th + eps, "outlet {t} outside [{tc}, {th}]");
        }
        for (h, c) in report.hot_faces_c.iter().zip(&report.cold_faces_c) {
            prop_assert!(h + eps >= *c, "hot {h} below cold {c}");
        }
        prop_assert!(report.duty_W <= max * (1.0 + 1e-9), "duty {} above maximum {max}", report.duty_W);
        prop_assert!(report.duty_W >= -1e-9 * max);
        prop_assert!(hxgrid::output::check_finite(&report).is_ok());
    }
}

/// Random transient runs (short, coarse): any start, schedule and integrator gives finite
/// results that close the energy balance, or a clear error — never a panic.
fn transient_case() -> impl Strategy<Value = (Random, f64, f64, f64, bool, bool)> {
    (random(), 0.0..1.0f64, 0.0..2.0f64, 5.0..120.0f64, any::<bool>(), any::<bool>())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    #[test]
    fn transients_are_finite_and_conserve_energy((r, flow_factor, step_frac, duration, uniform, explicit) in transient_case()) {
        use hxgrid::solve::transient::*;
        let mut r = r;
        r.cells = r.cells.min(30);
        let text = case_text(&r);
        let case = hxgrid::case::parse_str(&text, "random", "random").expect("valid by construction");
        let ex = case.build();
        let inputs = Inputs {
            cold_flow_kg_s: Signal::Ramp { start_s: duration * 0.2, end_s: duration * 0.3, from: ex.cold.mass_flow_kg_s, to: ex.cold.mass_flow_kg_s * flow_factor },
            hot_inlet_c: Signal::Step { time_s: duration * 0.5, before: ex.hot.inlet_c, after: ex.cold.inlet_c + (ex.hot.inlet_c - ex.cold.inlet_c) * (0.5 + 0.25 * step_frac) },
            ..Inputs::constant(&ex)
        };
        let settings = TransientSettings {
            cells: r.cells as usize,
            duration_s: duration,
            output_interval_s: duration / 20.0,
            integrator: if explicit { Integrator::Explicit } else { Integrator::Implicit },
            initial: if uniform { Initial::Uniform(ex.cold.inlet_c) } else { Initial::Steady },
            wall_heat_capacity_j_mk: 7900.0 * 500.0 * ex.wall.cross_section_m2(),
            max_steps: 200_000,
            ..Default::default()
        };
        match hxgrid::scenario::run("random", &ex, &inputs, &settings, None, &mut hxgrid::solve::SilentObserver) {
            Ok(report) => {
                // Closure is exact up to the Newton tolerance of the implicit steps: 10⁻⁶ of the
                // heat, or, where the heat is tiny against what the exchanger stores (a stream
                // with 10⁴ times the other's flow, stopping), 10⁻³ tolerance_K of its whole heat
                // capacity, the energy resolution of the time integration itself.
                let capacity = |s: &hxgrid::model::Stream| {
                    s.fluid.props(s.inlet_c).density * s.fluid.props(s.inlet_c).cp * s.channel.volume_per_length_m2.unwrap_or(0.0)
                };
                let resolution = 1e-3 * settings.atol_k * ex.length_m * (capacity(&ex.hot) + capacity(&ex.cold) + settings.wall_heat_capacity_j_mk);
                prop_assert!(
                    report.energy_closure_relative < 1e-6 || report.energy_closure_J.abs() < resolution || report.hot_heat_J.abs() < 1e-6,
                    "closure {} ({} J, resolution {resolution} J)",
                    report.energy_closure_relative,
                    report.energy_closure_J
                );
                for s in &report.samples {
                    let row = serde_json::to_value(s).unwrap();
                    prop_assert!(row.as_object().unwrap().values().all(|v| v.as_f64().is_some_and(f64::is_finite)), "non-finite sample {row}");
                }
            }
            // Refusals with a reason are fine (a coarse grid, stiffness for the explicit
            // integrator); panics and non-finite numbers are not.
            Err(e) => prop_assert!(!e.to_string().is_empty()),
        }
    }
}
