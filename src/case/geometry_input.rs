//! Validation of the `[geometry]` section, per kind, and of compact-surface data files.

use super::file::*;
use super::problem::*;
use super::spec::*;
use crate::text::num;
use crate::transfer::{Layout, TubeBank};
use std::path::Path;

/// Keys of `[geometry]` that belong to each kind (anything else given is an error).
pub(super) fn geometry_keys(g: &GeometryFile) -> Vec<(&'static str, bool)> {
    vec![
        ("tube_inner_diameter_m", g.tube_inner_diameter_m.is_some()),
        ("tube_outer_diameter_m", g.tube_outer_diameter_m.is_some()),
        ("shell_inner_diameter_m", g.shell_inner_diameter_m.is_some()),
        ("tube_side", g.tube_side.is_some()),
        ("annulus_heat_diameter", g.annulus_heat_diameter.is_some()),
        ("layout", g.layout.is_some()),
        ("transverse_pitch_m", g.transverse_pitch_m.is_some()),
        ("longitudinal_pitch_m", g.longitudinal_pitch_m.is_some()),
        ("rows", g.rows.is_some()),
        ("tubes_per_row", g.tubes_per_row.is_some()),
        ("tube_length_m", g.tube_length_m.is_some()),
        ("tube_circuits", g.tube_circuits.is_some()),
        ("area_per_length_m2_m", g.area_per_length_m2_m.is_some()),
        ("wall_thickness_m", g.wall_thickness_m.is_some()),
        ("hot_flow_area_m2", g.hot_flow_area_m2.is_some()),
        ("hot_hydraulic_diameter_m", g.hot_hydraulic_diameter_m.is_some()),
        ("cold_flow_area_m2", g.cold_flow_area_m2.is_some()),
        ("cold_hydraulic_diameter_m", g.cold_hydraulic_diameter_m.is_some()),
    ]
}

pub(super) fn geometry(c: &mut Checker, f: &CaseFile) -> Geometry {
    let g = &f.geometry;
    let k = c.positive("geometry.wall_conductivity_W_mK", g.wall_conductivity_W_mK, "W/(m·K)");
    let (kind_name, allowed): (&str, &[&str]) = match g.kind {
        GeometryKind::DoublePipe => {
            ("double_pipe", &["tube_inner_diameter_m", "tube_outer_diameter_m", "shell_inner_diameter_m", "tube_side", "annulus_heat_diameter"])
        }
        GeometryKind::PlaneWall => (
            "plane_wall",
            &["area_per_length_m2_m", "wall_thickness_m", "hot_flow_area_m2", "hot_hydraulic_diameter_m", "cold_flow_area_m2", "cold_hydraulic_diameter_m"],
        ),
        GeometryKind::TubeBank => (
            "tube_bank",
            &[
                "tube_inner_diameter_m",
                "tube_outer_diameter_m",
                "tube_side",
                "layout",
                "transverse_pitch_m",
                "longitudinal_pitch_m",
                "rows",
                "tubes_per_row",
                "tube_length_m",
                "tube_circuits",
            ],
        ),
    };
    for (key, given) in geometry_keys(g) {
        if given && !allowed.contains(&key) {
            c.fail(&format!("geometry.{key}"), format!("does not apply to kind = \"{kind_name}\": remove it (keys for this kind: {})", allowed.join(", ")));
        }
    }
    let tube_side = |c: &mut Checker| match g.tube_side {
        Some(SideName::Hot) => TubeSide::Hot,
        Some(SideName::Cold) => TubeSide::Cold,
        None => {
            c.fail("geometry.tube_side", "is missing: say which stream flows in the tubes, \"hot\" or \"cold\"".into());
            TubeSide::Hot
        }
    };
    let tubes = |c: &mut Checker, why: &str| {
        let di = c.required("geometry.tube_inner_diameter_m", g.tube_inner_diameter_m, "m", why);
        let d_o = c.required("geometry.tube_outer_diameter_m", g.tube_outer_diameter_m, "m", why);
        c.looks_like_mm("geometry.tube_inner_diameter_m", di);
        c.looks_like_mm("geometry.tube_outer_diameter_m", d_o);
        if di >= d_o {
            c.fail(
                "geometry.tube_inner_diameter_m",
                format!("{di} m must be smaller than geometry.tube_outer_diameter_m = {d_o} m (the wall needs a thickness)", di = num(di), d_o = num(d_o)),
            );
        }
        (di, d_o)
    };
    let count = |c: &mut Checker, key: &str, v: Option<i64>, why: &str| -> usize {
        match v {
            Some(n) if (1..=1_000_000).contains(&n) => n as usize,
            Some(n) => {
                c.fail(key, format!("{n} is not valid: use a whole number from 1 to 1 000 000"));
                1
            }
            None => {
                c.fail(key, format!("is missing: give a whole number ({why})"));
                1
            }
        }
    };
    match g.kind {
        GeometryKind::DoublePipe => {
            let why = "needed for a double pipe";
            let (di, d_o) = tubes(c, why);
            let ds = c.required("geometry.shell_inner_diameter_m", g.shell_inner_diameter_m, "m", why);
            c.looks_like_mm("geometry.shell_inner_diameter_m", ds);
            if d_o >= ds {
                c.fail(
                    "geometry.shell_inner_diameter_m",
                    format!("{ds} m must be larger than geometry.tube_outer_diameter_m = {d_o} m (the annulus needs a gap)", ds = num(ds), d_o = num(d_o)),
                );
            }
            let annulus_equivalent_diameter = g.annulus_heat_diameter == Some(AnnulusDiameter::Equivalent);
            Geometry::DoublePipe { di, d_o, ds, k, tube_side: tube_side(c), annulus_equivalent_diameter }
        }
        GeometryKind::PlaneWall => {
            let why = "needed for a plane wall";
            let area = c.required("geometry.area_per_length_m2_m", g.area_per_length_m2_m, "m²/m", why);
            let thickness = c.required("geometry.wall_thickness_m", g.wall_thickness_m, "m", why);
            let mut channel = |side: &str, film: FilmName, area: Option<f64>, dh: Option<f64>| {
                let needs = matches!(film, FilmName::Gnielinski | FilmName::DittusBoelter | FilmName::SiederTate | FilmName::Pitla);
                let why = "needed when the film coefficient is computed from the flow";
                let a_key = format!("geometry.{side}_flow_area_m2");
                let d_key = format!("geometry.{side}_hydraulic_diameter_m");
                let a = match (area, needs) {
                    (None, true) => Some(c.required(&a_key, None, "m²", why)),
                    (Some(v), _) => Some(c.positive(&a_key, v, "m²")),
                    (None, false) => None,
                };
                let d = match (dh, needs) {
                    (None, true) => Some(c.required(&d_key, None, "m", why)),
                    (Some(v), _) => Some(c.positive(&d_key, v, "m")),
                    (None, false) => None,
                };
                if let Some(d) = d {
                    c.looks_like_mm(&d_key, d);
                }
                (a, d)
            };
            let hot = channel("hot", f.hot.film, g.hot_flow_area_m2, g.hot_hydraulic_diameter_m);
            let cold = channel("cold", f.cold.film, g.cold_flow_area_m2, g.cold_hydraulic_diameter_m);
            Geometry::PlaneWall { area_per_length: area, thickness, k, hot, cold }
        }
        GeometryKind::TubeBank => {
            let why = "needed for a tube bank";
            let (di, d_o) = tubes(c, why);
            let st = c.required("geometry.transverse_pitch_m", g.transverse_pitch_m, "m", why);
            let sl = c.required("geometry.longitudinal_pitch_m", g.longitudinal_pitch_m, "m", why);
            if st <= d_o {
                c.fail("geometry.transverse_pitch_m", format!("{} m must exceed the tube outer diameter {} m (tubes cannot overlap)", num(st), num(d_o)));
            }
            let layout = match g.layout {
                Some(LayoutName::Aligned) => Layout::Aligned,
                Some(LayoutName::Staggered) => Layout::Staggered,
                None => {
                    c.fail("geometry.layout", "is missing: \"aligned\" or \"staggered\"".into());
                    Layout::Aligned
                }
            };
            if layout == Layout::Aligned && sl <= d_o {
                c.fail("geometry.longitudinal_pitch_m", format!("{} m must exceed the tube outer diameter {} m in an aligned bank", num(sl), num(d_o)));
            }
            // Staggered: neighbours in adjacent rows sit at the diagonal pitch
            // S_D = √(S_L² + (S_T/2)²), which must exceed D for the tubes not to overlap.
            let diagonal = (sl * sl + 0.25 * st * st).sqrt();
            if layout == Layout::Staggered && diagonal <= d_o {
                c.fail(
                    "geometry.longitudinal_pitch_m",
                    format!(
                        "{} m puts tubes of adjacent rows {} m apart (diagonal pitch √(S_L² + (S_T/2)²)), less than the tube outer diameter {} m: the tubes would overlap",
                        num(sl),
                        num(diagonal),
                        num(d_o)
                    ),
                );
            }
            let rows = count(c, "geometry.rows", g.rows, why);
            let tubes_per_row = count(c, "geometry.tubes_per_row", g.tubes_per_row, why);
            let tube_length = c.required("geometry.tube_length_m", g.tube_length_m, "m", why);
            let circuits = match g.tube_circuits {
                None => tubes_per_row,
                v => count(c, "geometry.tube_circuits", v, why),
            };
            let tubes = rows * tubes_per_row;
            if circuits > tubes {
                c.fail(
                    "geometry.tube_circuits",
                    format!("{circuits} circuits but the bank has only {tubes} tubes (rows × tubes_per_row): give at most {tubes}"),
                );
            } else if tubes > 0 && circuits > 0 && tubes % circuits != 0 {
                c.fail(
                    "geometry.tube_circuits",
                    format!("{circuits} circuits do not divide the {tubes} tubes (rows × tubes_per_row) evenly: every circuit must hold the same number of tubes in series"),
                );
            }
            let bank = TubeBank {
                outer_diameter_m: d_o,
                transverse_pitch_m: st,
                longitudinal_pitch_m: sl,
                layout,
                rows,
                frontal_area_m2: tubes_per_row as f64 * st * tube_length,
            };
            Geometry::TubeBank { di, k, tube_side: tube_side(c), bank, tubes_per_row, tube_length, circuits }
        }
    }
}

/// Read a compact-surface data file: `reynolds,colburn_j,fanning_f` rows, Re increasing.
pub(super) fn compact_data(path: &Path) -> Result<Vec<(f64, f64, f64)>, String> {
    let text = super::read::text_file(path, super::read::DATA_MAX_BYTES, Some(super::read::DATA_MAX_LINES)).map_err(|e| format!("{} {e}", path.display()))?;
    let mut rows: Vec<(f64, f64, f64)> = Vec::new();
    let mut header = false;
    for (i, raw) in text.lines().enumerate() {
        let line = raw.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        if !header {
            if line.replace(' ', "") != "reynolds,colburn_j,fanning_f" {
                return Err(format!("{}, line {}: the header must be 'reynolds,colburn_j,fanning_f'", path.display(), i + 1));
            }
            header = true;
            continue;
        }
        let v: Vec<f64> = line.split(',').filter_map(|x| x.trim().parse::<f64>().ok()).collect();
        if v.len() != 3 || v.iter().any(|x| !(x.is_finite() && *x > 0.0)) {
            return Err(format!("{}, line {}: need three positive numbers (Re, j, f), got {}", path.display(), i + 1, crate::text::quote(line, 40)));
        }
        if rows.last().is_some_and(|r| v[0] <= r.0) {
            return Err(format!("{}, line {}: Reynolds numbers must increase", path.display(), i + 1));
        }
        rows.push((v[0], v[1], v[2]));
    }
    if rows.len() < 2 {
        return Err(format!("{}: at least two data rows are needed", path.display()));
    }
    Ok(rows)
}

/// Largest relative roughness ε/D accepted (the end of the Moody chart).
pub const MAX_RELATIVE_ROUGHNESS: f64 = 0.05;

/// The hydraulic diameter of a stream's passage, where the geometry gives one.
pub(super) fn hydraulic_diameter(geometry: &Geometry, side: &str, film: &FilmSpec) -> Option<f64> {
    if let FilmSpec::Compact { hydraulic_diameter_m, .. } = film {
        return Some(*hydraulic_diameter_m);
    }
    let in_tubes = geometry.tube_side().map(|t| (t == TubeSide::Hot) == (side == "hot"));
    match (geometry, in_tubes) {
        (Geometry::DoublePipe { di, .. }, Some(true)) | (Geometry::TubeBank { di, .. }, Some(true)) => Some(*di),
        (Geometry::DoublePipe { d_o, ds, .. }, Some(false)) => Some(ds - d_o),
        (Geometry::PlaneWall { hot, cold, .. }, _) => {
            if side == "hot" {
                hot.1
            } else {
                cold.1
            }
        }
        _ => None,
    }
}
