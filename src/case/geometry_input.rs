//! Validation of the `[geometry]` section, per kind, and of compact-surface data files.

use super::file::*;
use super::problem::*;
use super::spec::*;
use crate::text::num;
use crate::transfer::{Layout, TubeBank};
use std::path::Path;

/// Validate `[geometry]`. Which keys a kind takes, and which it needs, is the type
/// ([`GeometryFile`]); the shape check has reported those already, so only values remain.
pub(super) fn geometry(c: &mut Checker, f: &CaseFile) -> Geometry {
    let side = |s: SideName| match s {
        SideName::Hot => TubeSide::Hot,
        SideName::Cold => TubeSide::Cold,
    };
    let tubes = |c: &mut Checker, di: f64, d_o: f64| {
        let di = c.positive("geometry.tube_inner_diameter_m", di, "m");
        let d_o = c.positive("geometry.tube_outer_diameter_m", d_o, "m");
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
    let count = |c: &mut Checker, key: &str, n: i64| -> usize {
        if (1..=1_000_000).contains(&n) {
            n as usize
        } else {
            c.fail(key, format!("{n} is not valid: use a whole number from 1 to 1 000 000"));
            1
        }
    };
    match &f.geometry {
        GeometryFile::DoublePipe {
            wall_conductivity_W_mK,
            tube_inner_diameter_m,
            tube_outer_diameter_m,
            shell_inner_diameter_m,
            tube_side,
            annulus_heat_diameter,
        } => {
            let k = c.positive("geometry.wall_conductivity_W_mK", *wall_conductivity_W_mK, "W/(m·K)");
            let (di, d_o) = tubes(c, *tube_inner_diameter_m, *tube_outer_diameter_m);
            let ds = c.positive("geometry.shell_inner_diameter_m", *shell_inner_diameter_m, "m");
            c.looks_like_mm("geometry.shell_inner_diameter_m", ds);
            if d_o >= ds {
                c.fail(
                    "geometry.shell_inner_diameter_m",
                    format!("{ds} m must be larger than geometry.tube_outer_diameter_m = {d_o} m (the annulus needs a gap)", ds = num(ds), d_o = num(d_o)),
                );
            }
            let annulus_equivalent_diameter = *annulus_heat_diameter == Some(AnnulusDiameter::Equivalent);
            Geometry::DoublePipe { di, d_o, ds, k, tube_side: side(*tube_side), annulus_equivalent_diameter }
        }
        GeometryFile::PlaneWall {
            wall_conductivity_W_mK,
            area_per_length_m2_m,
            wall_thickness_m,
            hot_flow_area_m2,
            hot_hydraulic_diameter_m,
            cold_flow_area_m2,
            cold_hydraulic_diameter_m,
        } => {
            let k = c.positive("geometry.wall_conductivity_W_mK", *wall_conductivity_W_mK, "W/(m·K)");
            let area = c.positive("geometry.area_per_length_m2_m", *area_per_length_m2_m, "m²/m");
            let thickness = c.positive("geometry.wall_thickness_m", *wall_thickness_m, "m");
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
            let hot = channel("hot", f.hot.film, *hot_flow_area_m2, *hot_hydraulic_diameter_m);
            let cold = channel("cold", f.cold.film, *cold_flow_area_m2, *cold_hydraulic_diameter_m);
            Geometry::PlaneWall { area_per_length: area, thickness, k, hot, cold }
        }
        GeometryFile::TubeBank {
            wall_conductivity_W_mK,
            tube_inner_diameter_m,
            tube_outer_diameter_m,
            tube_side,
            layout,
            transverse_pitch_m,
            longitudinal_pitch_m,
            rows,
            tubes_per_row,
            tube_length_m,
            tube_circuits,
        } => {
            let k = c.positive("geometry.wall_conductivity_W_mK", *wall_conductivity_W_mK, "W/(m·K)");
            let (di, d_o) = tubes(c, *tube_inner_diameter_m, *tube_outer_diameter_m);
            let st = c.positive("geometry.transverse_pitch_m", *transverse_pitch_m, "m");
            let sl = c.positive("geometry.longitudinal_pitch_m", *longitudinal_pitch_m, "m");
            if st <= d_o {
                c.fail("geometry.transverse_pitch_m", format!("{} m must exceed the tube outer diameter {} m (tubes cannot overlap)", num(st), num(d_o)));
            }
            let layout = match layout {
                LayoutName::Aligned => Layout::Aligned,
                LayoutName::Staggered => Layout::Staggered,
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
            let rows = count(c, "geometry.rows", *rows);
            let tubes_per_row = count(c, "geometry.tubes_per_row", *tubes_per_row);
            let tube_length = c.positive("geometry.tube_length_m", *tube_length_m, "m");
            let circuits = match tube_circuits {
                None => tubes_per_row,
                Some(n) => count(c, "geometry.tube_circuits", *n),
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
            Geometry::TubeBank { di, k, tube_side: side(*tube_side), bank, tubes_per_row, tube_length, circuits }
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
    let in_tubes = geometry.tube_side().map(|t| t.as_str() == side);
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
