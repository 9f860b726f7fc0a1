//! Validation of `[hot]` and `[cold]`: fluid, inlet state, film model, roughness.

use super::file::*;
use super::geometry_input::*;
use super::problem::*;
use super::spec::*;
use crate::fluid::library::{self, FluidChoice};
use crate::fluid::{Props, WaterPhase};
use crate::text::num;
use crate::transfer::{CompactSurface, Fin, InternalFlow, Laminar, Transition, Turbulent, WallCorrection};
use std::path::Path;

/// Standard atmosphere, Pa: the default stream pressure.
pub(super) const ATMOSPHERE_PA: f64 = 101_325.0;

pub(super) fn film_spec(c: &mut Checker, side: &str, s: &StreamFile, base_dir: &Path, geometry: &Geometry) -> FilmSpec {
    let key = |k: &str| format!("{side}.{k}");
    let is_tube_side = geometry.tube_side().map(|t| t.as_str() == side);
    let internal = matches!(s.film, FilmName::Gnielinski | FilmName::DittusBoelter | FilmName::SiederTate | FilmName::Pitla);
    if s.film_coefficient_W_m2K.is_some() && s.film != FilmName::Fixed {
        c.fail(&key("film_coefficient_W_m2K"), "is only used with film = \"fixed\": remove it, or set film = \"fixed\"".into());
    }
    if s.compact.is_some() && s.film != FilmName::Compact {
        c.fail(&key("compact"), "is only used with film = \"compact\": remove the table, or set film = \"compact\"".into());
    }
    if !internal && (s.laminar.is_some() || s.wall_correction.is_some() || s.transition.is_some()) {
        c.fail(
            &key(if s.laminar.is_some() {
                "laminar"
            } else if s.wall_correction.is_some() {
                "wall_correction"
            } else {
                "transition"
            }),
            "applies to internal-flow films (gnielinski, dittus_boelter, sieder_tate, pitla) only: remove it".into(),
        );
    }
    if let (Geometry::ShellAndTube { .. }, Some(false)) = (geometry, is_tube_side) {
        if internal || matches!(s.film, FilmName::Zukauskas | FilmName::Compact) {
            c.fail(&key("film"), "the shell side of a shell-and-tube geometry needs film = \"bell_delaware\", \"kern\" or \"fixed\"".into());
        }
    }
    if let (Geometry::TubeBank { .. }, Some(false)) = (geometry, is_tube_side) {
        if internal {
            c.fail(
                &key("film"),
                format!("\"{:?}\" is for flow inside channels; the outside of a tube bank needs film = \"zukauskas\", \"compact\" or \"fixed\"", s.film)
                    .to_lowercase(),
            );
        }
    }
    match s.film {
        FilmName::Fixed => FilmSpec::Fixed(match s.film_coefficient_W_m2K {
            Some(h) => c.positive(&key("film_coefficient_W_m2K"), h, "W/(m²·K)"),
            None => {
                c.fail(&key("film_coefficient_W_m2K"), "is missing: film = \"fixed\" needs a coefficient in W/(m²·K)".into());
                f64::NAN
            }
        }),
        FilmName::Zukauskas => {
            if !matches!((geometry, is_tube_side), (Geometry::TubeBank { .. }, Some(false))) {
                c.fail(
                    &key("film"),
                    "\"zukauskas\" is for the outside of a tube bank: use geometry kind = \"tube_bank\" with this stream outside the tubes".into(),
                );
            }
            FilmSpec::Zukauskas
        }
        FilmName::BellDelaware | FilmName::Kern => {
            if !matches!((geometry, is_tube_side), (Geometry::ShellAndTube { .. }, Some(false))) {
                c.fail(
                    &key("film"),
                    format!("\"{}\" is for the shell side of a shell-and-tube geometry: use geometry kind = \"shell_and_tube\" with this stream as shell_and_tube.shell_side", if s.film == FilmName::Kern { "kern" } else { "bell_delaware" }),
                );
            }
            FilmSpec::Shell { bell_delaware: s.film == FilmName::BellDelaware }
        }
        FilmName::Compact => match &s.compact {
            None => {
                c.fail(&key("compact"), format!("is missing: film = \"compact\" needs a [{side}.compact] table (data_file, hydraulic_diameter_m, free_flow_area_m2, area_per_length_m2_m, fin, …)"));
                FilmSpec::Fixed(f64::NAN)
            }
            Some(cf) => {
                let ck = |k: &str| format!("{side}.compact.{k}");
                let data = match compact_data(&base_dir.join(&cf.data_file)) {
                    Ok(d) => d,
                    Err(e) => {
                        c.fail(&ck("data_file"), e);
                        vec![(1.0, 1.0, 1.0), (2.0, 1.0, 1.0)]
                    }
                };
                let dh = c.positive(&ck("hydraulic_diameter_m"), cf.hydraulic_diameter_m, "m");
                let a_ff = c.positive(&ck("free_flow_area_m2"), cf.free_flow_area_m2, "m²");
                let area = c.positive(&ck("area_per_length_m2_m"), cf.area_per_length_m2_m, "m²/m");
                let fin_needed = |c: &mut Checker, k: &str, v: Option<f64>| c.required(&ck(k), v, "m or W/(m·K)", "needed for the fin efficiency");
                let (fin, fraction) = match cf.fin {
                    FinName::None => (None, 0.0),
                    kind => {
                        let fraction = cf.fin_area_fraction.unwrap_or(f64::NAN);
                        if !(fraction > 0.0 && fraction < 1.0) {
                            c.fail(
                                &ck("fin_area_fraction"),
                                format!(
                                    "{} is not valid: give the fin share of this side's area, between 0 and 1",
                                    cf.fin_area_fraction.map(|v| v.to_string()).unwrap_or_else(|| "missing".into())
                                ),
                            );
                        }
                        let t = fin_needed(c, "fin_thickness_m", cf.fin_thickness_m);
                        let kf = fin_needed(c, "fin_conductivity_W_mK", cf.fin_conductivity_W_mK);
                        let fin = if kind == FinName::Straight {
                            Fin::Straight { length_m: fin_needed(c, "fin_length_m", cf.fin_length_m), thickness_m: t, conductivity_w_mk: kf }
                        } else {
                            let r1 = fin_needed(c, "fin_root_radius_m", cf.fin_root_radius_m);
                            let r2 = fin_needed(c, "fin_tip_radius_m", cf.fin_tip_radius_m);
                            if r2 <= r1 {
                                c.fail(&ck("fin_tip_radius_m"), format!("{r2} m must exceed fin_root_radius_m = {r1} m"));
                            }
                            Fin::Annular { root_radius_m: r1, tip_radius_m: r2, thickness_m: t, conductivity_w_mk: kf }
                        };
                        (Some(fin), fraction)
                    }
                };
                let sigma = cf.frontal_area_m2.map(|a_fr| {
                    let a_fr = c.positive(&ck("frontal_area_m2"), a_fr, "m²");
                    if a_fr < a_ff {
                        c.fail(
                            &ck("frontal_area_m2"),
                            format!("{} m² is smaller than free_flow_area_m2 = {} m²: the free-flow area is part of the frontal area", num(a_fr), num(a_ff)),
                        );
                    }
                    a_ff / a_fr
                });
                FilmSpec::Compact {
                    sigma,
                    surface: CompactSurface { data, fin, fin_area_fraction: fraction },
                    hydraulic_diameter_m: dh,
                    free_flow_area_m2: a_ff,
                    area_per_length_m: area,
                }
            }
        },
        FilmName::Gnielinski | FilmName::DittusBoelter | FilmName::SiederTate | FilmName::Pitla => FilmSpec::Internal(InternalFlow {
            turbulent: match s.film {
                FilmName::DittusBoelter => Turbulent::DittusBoelter,
                FilmName::SiederTate => Turbulent::SiederTate,
                FilmName::Pitla => Turbulent::Pitla,
                _ => Turbulent::Gnielinski,
            },
            laminar: match s.laminar {
                None | Some(LaminarName::FullyDeveloped) => Laminar::FullyDevelopedT,
                Some(LaminarName::FullyDevelopedFlux) => Laminar::FullyDevelopedH,
                Some(LaminarName::Hausen) => Laminar::Hausen,
                Some(LaminarName::SiederTate) => Laminar::SiederTate,
            },
            wall_correction: match s.wall_correction {
                None | Some(WallCorrectionName::None) => WallCorrection::None,
                Some(WallCorrectionName::Viscosity) => WallCorrection::Viscosity,
                Some(WallCorrectionName::GasTemperature) => WallCorrection::GasTemperature,
            },
            transition: match s.transition {
                None | Some(TransitionName::Blend) => Transition::Blend,
                Some(TransitionName::None) => Transition::None,
            },
        }),
    }
}

pub(super) fn stream(c: &mut Checker, side: &str, s: &StreamFile, base_dir: &Path, geometry: &Geometry) -> StreamSpec {
    let key = |k: &str| format!("{side}.{k}");
    let inlet_c = s.inlet_temperature_C;
    if !inlet_c.is_finite() || inlet_c <= -273.15 || inlet_c > 5000.0 {
        c.fail(
            &key("inlet_temperature_C"),
            format!("{inlet_c} °C is not valid: give a temperature above −273.15 °C and below 5000 °C (°C, not K?)", inlet_c = num(inlet_c)),
        );
    }
    let mass_flow_kg_s = c.positive(&key("mass_flow_kg_s"), s.mass_flow_kg_s, "kg/s");
    let fouling_m2k_w = s.fouling_m2K_W.unwrap_or(0.0);
    if !(fouling_m2k_w.is_finite() && (0.0..=1.0).contains(&fouling_m2k_w)) {
        c.fail(
            &key("fouling_m2K_W"),
            format!(
                "{fouling_m2k_w} m²K/W is not valid: use 0 (clean) or a positive resistance, typically 0.0001–0.001 (at most 1)",
                fouling_m2k_w = num(fouling_m2k_w)
            ),
        );
    } else if fouling_m2k_w > 0.01 {
        c.warnings.push(format!(
            "{side}.fouling_m2K_W = {fouling_m2k_w} m²K/W is far above tabulated values (≤ 0.002): check the units",
            fouling_m2k_w = num(fouling_m2k_w)
        ));
    }
    let film = film_spec(c, side, s, base_dir, geometry);
    let roughness_m = s.roughness_m.unwrap_or(0.0);
    if !(roughness_m.is_finite() && roughness_m >= 0.0) {
        c.fail(
            &key("roughness_m"),
            format!(
                "{roughness_m} m is not valid: use 0 (smooth) or a positive absolute roughness, e.g. 4.5e-5 for commercial steel",
                roughness_m = num(roughness_m)
            ),
        );
    }
    // Relative roughness above about 0.05 is beyond every friction chart (Moody's ends there;
    // Churchill's formula even turns back, giving less friction for a rougher wall).
    if let Some(d) = hydraulic_diameter(geometry, side, &film).filter(|d| d.is_finite() && *d > 0.0) {
        if roughness_m.is_finite() && roughness_m / d > MAX_RELATIVE_ROUGHNESS {
            c.fail(
                &key("roughness_m"),
                format!(
                    "{} m is {} of the hydraulic diameter {} m, beyond the friction charts (ε/D ≤ {MAX_RELATIVE_ROUGHNESS}): check the units (commercial steel is about 4.5e-5 m)",
                    num(roughness_m),
                    num(roughness_m / d),
                    num(d)
                ),
            );
        }
    }
    let fluid = fluid_choice(c, side, s, base_dir);
    // Pressure: given, else the table's own pressure, else one atmosphere.
    let table_pressure = match &fluid {
        Some(FluidChoice::Table(t)) if !t.is_ideal_gas() => t.table_pressure_pa(),
        _ => None,
    };
    let pressure_pa = match (s.pressure_bar_abs, table_pressure) {
        (Some(p), tp) => {
            let p = c.positive(&key("pressure_bar_abs"), p, "bar") * 1e5;
            if let Some(tp) = tp {
                if p.is_finite() && ((p - tp) / tp).abs() > 0.005 {
                    c.fail(
                        &key("pressure_bar_abs"),
                        format!("{:.4} bar does not match fluid \"{}\", tabulated at {:.4} bar: set pressure_bar_abs = {} or omit it, or choose the table for your pressure", p * 1e-5, s.fluid, tp * 1e-5, num(tp * 1e-5)),
                    );
                }
            }
            p
        }
        (None, Some(tp)) => tp,
        (None, None) => ATMOSPHERE_PA,
    };
    let fluid = fluid.unwrap_or(FluidChoice::Constant(Props { density: 1.0, cp: 1.0, viscosity: 1.0, conductivity: 1.0 }));
    if pressure_pa.is_finite() && pressure_pa > 0.0 && inlet_c.is_finite() && inlet_c > -273.15 {
        check_inlet(c, side, &fluid, pressure_pa, inlet_c);
    }
    StreamSpec { fluid, inlet_c, mass_flow_kg_s, pressure_pa, fouling_m2k_w, film, roughness_m }
}

pub(super) fn fluid_choice(c: &mut Checker, side: &str, s: &StreamFile, base_dir: &Path) -> Option<FluidChoice> {
    let key = |k: &str| format!("{side}.{k}");
    if s.properties.is_some() && s.fluid != "constant" {
        c.fail(&key("properties"), format!("is only used with fluid = \"constant\" (fluid is {}): remove the table", crate::text::quote(&s.fluid, 40)));
    }
    if s.table_file.is_some() && s.fluid != "table" {
        c.fail(&key("table_file"), format!("is only used with fluid = \"table\" (fluid is {}): remove it", crate::text::quote(&s.fluid, 40)));
    }
    if s.phase.is_some() && s.fluid != "water" {
        c.fail(&key("phase"), format!("is only used with fluid = \"water\" (fluid is {}): remove it", crate::text::quote(&s.fluid, 40)));
    }
    match s.fluid.as_str() {
        "water" => Some(FluidChoice::Water(match s.phase {
            Some(PhaseName::Vapour) => WaterPhase::Vapour,
            None | Some(PhaseName::Liquid) => WaterPhase::Liquid,
        })),
        "constant" => match &s.properties {
            Some(p) => Some(FluidChoice::Constant(Props {
                density: c.positive(&key("properties.density_kg_m3"), p.density_kg_m3, "kg/m³"),
                cp: c.positive(&key("properties.specific_heat_J_kgK"), p.specific_heat_J_kgK, "J/(kg·K)"),
                viscosity: c.positive(&key("properties.viscosity_Pa_s"), p.viscosity_Pa_s, "Pa·s"),
                conductivity: c.positive(&key("properties.conductivity_W_mK"), p.conductivity_W_mK, "W/(m·K)"),
            })),
            None => {
                c.fail(&key("properties"), format!("is missing: fluid = \"constant\" needs a [{side}.properties] table with density_kg_m3, specific_heat_J_kgK, viscosity_Pa_s, conductivity_W_mK"));
                None
            }
        },
        "table" => match &s.table_file {
            Some(file) => match super::read::table(&base_dir.join(file)) {
                Ok(t) => Some(FluidChoice::Table(t)),
                Err(e) => {
                    c.fail(&key("table_file"), format!("{} is not a valid fluid table: {e}", crate::text::quote(file, 80)));
                    None
                }
            },
            None => {
                c.fail(&key("table_file"), "is missing: fluid = \"table\" needs table_file = \"path/to/table.csv\" (relative to the case file)".into());
                None
            }
        },
        name => match library::builtin_table(name) {
            Some(t) => Some(FluidChoice::Table(t)),
            None => {
                let names = library::names();
                let hint = closest(name, &names).map(|n| format!(" Did you mean \"{n}\"?")).unwrap_or_default();
                c.fail(
                    &key("fluid"),
                    format!("{} is not a known fluid.{hint} Valid: {} (list them with `hxgrid fluids`)", crate::text::quote(name, 40), names.join(", ")),
                );
                None
            }
        },
    }
}

pub(super) fn check_inlet(c: &mut Checker, side: &str, fluid: &FluidChoice, pressure_pa: f64, inlet_c: f64) {
    if let FluidChoice::Water(phase) = fluid {
        if (0.000_611_657e6..=22.064e6).contains(&pressure_pa) && inlet_c.is_finite() {
            let t_sat = crate::fluid::water::saturation_temperature_c(pressure_pa);
            let p_sat_bar = crate::fluid::water::saturation_pressure_pa(inlet_c.min(373.9)) * 1e-5;
            match phase {
                WaterPhase::Liquid if inlet_c >= t_sat - 0.1 => {
                    c.fail(
                        &format!("{side}.pressure_bar_abs"),
                        format!(
                            "{:.4} bar is below the saturation pressure of water at the inlet temperature {inlet_c} °C ({p_sat_bar:.4} bar; at {:.4} bar water boils at {t_sat:.2} °C): raise pressure_bar_abs above {p_sat_bar:.3} bar for liquid water, or set phase = \"vapour\" for superheated steam",
                            pressure_pa * 1e-5,
                            pressure_pa * 1e-5, inlet_c = num(inlet_c)),
                    );
                    return;
                }
                WaterPhase::Vapour if inlet_c <= t_sat + 0.1 => {
                    c.fail(
                        &format!("{side}.inlet_temperature_C"),
                        format!("{inlet_c} °C is not superheated steam at {:.4} bar (saturation {t_sat:.2} °C): raise the temperature, lower the pressure, or use phase = \"liquid\"", pressure_pa * 1e-5, inlet_c = num(inlet_c)),
                    );
                    return;
                }
                _ => {}
            }
        }
    }
    let built = match fluid.build(pressure_pa) {
        Ok(f) => f,
        Err(e) => {
            c.fail(&format!("{side}.pressure_bar_abs"), format!("{e}"));
            return;
        }
    };
    let r = built.range();
    if inlet_c < r.min_c {
        c.fail(
            &format!("{side}.inlet_temperature_C"),
            format!(
                "{inlet_c} °C is below the lowest valid temperature {:.2} °C of {} (valid {:.2} … {:.2} °C)",
                r.min_c,
                built.name(),
                r.min_c,
                r.max_c,
                inlet_c = num(inlet_c)
            ),
        );
    } else if inlet_c > r.max_c {
        c.fail(
            &format!("{side}.inlet_temperature_C"),
            format!("{inlet_c} °C is above the valid range {:.2} … {:.2} °C of {}: {}", r.min_c, r.max_c, built.name(), r.reason, inlet_c = num(inlet_c)),
        );
    }
}
