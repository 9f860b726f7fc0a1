//! Local pressure along each stream: never zero or negative, a liquid never below its
//! saturation pressure at the local temperature (IAPWS-IF97 via the water model), and the
//! compressibility warning for gases only. Cases are the starter double pipe (invented) made
//! long and fast.

fn starter(length_m: f64, hot_flow: f64) -> String {
    hxgrid::case::STARTER.replacen("length_m = 5.0   ", &format!("length_m = {length_m:<6}"), 1).replacen(
        "mass_flow_kg_s = 0.25",
        &format!("mass_flow_kg_s = {hot_flow}"),
        1,
    )
}

fn rate(text: &str) -> Result<hxgrid::results::SteadyReport, hxgrid::solve::SolveError> {
    let case = hxgrid::case::parse_str(text, "p", "p").unwrap();
    hxgrid::study::rate("p", &case.build(), &case.solver, &Default::default(), &mut hxgrid::solve::SilentObserver)
}

/// A constant-property liquid (no saturation data) pushed 300 m through the 21 mm tube at
/// 1 kg/s: Darcy–Weisbach takes more than its 3 bar. Regression: the run ended at a negative
/// absolute pressure with exit 0.
#[test]
fn negative_absolute_pressure_is_refused() {
    let text = starter(300.0, 1.0).replacen("fluid = \"water\"", "fluid = \"constant\"", 1).replacen(
        "[cold]",
        "[hot.properties]\ndensity_kg_m3 = 990.0\nspecific_heat_J_kgK = 4180.0\nviscosity_Pa_s = 0.0006\nconductivity_W_mK = 0.64\n\n[cold]",
        1,
    );
    let e = rate(&text).unwrap_err();
    assert!(matches!(e, hxgrid::solve::SolveError::NegativePressure { stream: hxgrid::model::Side::Hot, .. }), "{e}");
    let m = e.to_string();
    assert!(m.contains("hot stream's absolute pressure") && m.contains("inlet 3 bar"), "{m}");
    // The advice names the key to change.
    assert!(hxgrid::case::advice::steady(&e).unwrap().contains("hot.pressure_bar_abs"));
}

/// The same line with water: before the pressure reaches zero it falls below the
/// saturation pressure of the water at its local temperature, so the water would flash. The
/// inlet-pressure range check alone missed it.
#[test]
fn a_liquid_below_its_saturation_pressure_flashes() {
    let e = rate(&starter(100.0, 1.0)).unwrap_err();
    match &e {
        hxgrid::solve::SolveError::Flashing { stream, pressure_pa, saturation_pa, temperature_c, .. } => {
            assert_eq!(*stream, hxgrid::model::Side::Hot);
            assert!(pressure_pa < saturation_pa);
            // IAPWS-IF97 saturation pressure at the local temperature (the water module's own
            // check values are in water_properties.rs).
            assert!((hxgrid::fluid::water::saturation_pressure_pa(*temperature_c) - saturation_pa).abs() < 1e-6 * saturation_pa);
        }
        other => panic!("{other}"),
    }
    assert!(e.to_string().contains("flashes"), "{e}");
}

/// A liquid with a large but harmless drop (80 % of its inlet pressure, never near
/// saturation) gets no compressibility warning: that warning is for gases.
#[test]
fn compressibility_warning_is_for_gases_only() {
    let r = rate(&starter(40.0, 0.9)).unwrap();
    let dp = r.hot_pressure_drop_Pa.unwrap();
    assert!(dp > 0.3 * 3e5, "{dp}");
    assert!(!r.warnings.iter().any(|w| w.contains("compressibility")), "{:?}", r.warnings);
}

/// A cell network has no face pressures, so its local pressure is the inlet's less the
/// stream's drop in proportion to the cells passed through. The shell-and-tube demo's shell
/// side (Bell–Delaware, about 16 kPa over two shells) fed with 70 °C water at 0.5 bar: the
/// inlet is 11 K below saturation (81.3 °C at 0.5 bar, IAPWS-IF97), but part way along the
/// pressure has fallen below the saturation pressure of the warmed water (0.39 bar at
/// 75.5 °C) and the run must stop there rather than rate a flashing liquid.
#[test]
fn a_network_stream_that_flashes_part_way_is_refused() {
    let demo = std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/cases/shell-and-tube-water-cooler.toml")).unwrap();
    let cold = demo.find("[cold]").unwrap();
    let (head, tail) = demo.split_at(cold);
    let tail = tail.replacen("inlet_temperature_C = 25.0", "inlet_temperature_C = 70.0", 1).replacen("pressure_bar_abs = 3.0", "pressure_bar_abs = 0.5", 1);
    match rate(&format!("{head}{tail}")) {
        Err(hxgrid::solve::SolveError::Flashing { stream, position_m, pressure_pa, saturation_pa, .. }) => {
            assert_eq!(stream, hxgrid::model::Side::Cold);
            assert!(position_m > 0.0 && pressure_pa < saturation_pa && pressure_pa > 0.3e5, "{position_m} m, {pressure_pa} Pa < {saturation_pa} Pa");
        }
        other => panic!("expected flashing, got {:?}", other.map(|r| r.cold_pressure_drop_Pa)),
    }
    // At 3 bar the same stream stays liquid all the way.
    let tail = demo.split_at(cold).1.replacen("inlet_temperature_C = 25.0", "inlet_temperature_C = 70.0", 1);
    assert!(rate(&format!("{head}{tail}")).is_ok());
}
