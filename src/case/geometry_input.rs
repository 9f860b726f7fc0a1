//! Validation of the `[geometry]` section, per kind, and of compact-surface data files.

use super::file::*;
use super::problem::*;
use super::spec::*;
use crate::text::num;
use crate::transfer::{Layout, PitchLayout, ShellBundle, TubeBank};
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
        GeometryFile::ShellAndTube {
            wall_conductivity_W_mK,
            tube_inner_diameter_m,
            tube_outer_diameter_m,
            tube_count,
            tube_pitch_m,
            tube_layout_deg,
            shell_inner_diameter_m,
            bundle_diameter_m,
            baffle_cut_fraction,
            baffle_spacing_m,
            inlet_baffle_spacing_m,
            outlet_baffle_spacing_m,
            shell_baffle_clearance_m,
            tube_baffle_clearance_m,
            sealing_strip_pairs,
            pass_lane_width_m,
            tube_nozzle_diameter_m,
            shell_nozzle_diameter_m,
        } => {
            let k = c.positive("geometry.wall_conductivity_W_mK", *wall_conductivity_W_mK, "W/(m·K)");
            let (di, d_o) = tubes(c, *tube_inner_diameter_m, *tube_outer_diameter_m);
            let nt = count(c, "geometry.tube_count", *tube_count);
            let pt = c.positive("geometry.tube_pitch_m", *tube_pitch_m, "m");
            let layout = PitchLayout::from_degrees(*tube_layout_deg).unwrap_or_else(|| {
                c.fail(
                    "geometry.tube_layout_deg",
                    format!("{} is not valid: use 30 (triangular), 45 (rotated square), 60 (rotated triangular) or 90 (square)", num(*tube_layout_deg)),
                );
                PitchLayout::Triangular30
            });
            if pt <= d_o {
                c.fail("geometry.tube_pitch_m", format!("{} m must exceed the tube outer diameter {} m (tubes cannot overlap)", num(pt), num(d_o)));
            } else if pt < 1.2 * d_o {
                c.warn(format!(
                    "geometry.tube_pitch_m: pitch ratio {:.3} is below 1.2, tighter than common practice (1.25–1.5) and than the Bell–Delaware data",
                    pt / d_o
                ));
            }
            let ds = c.positive("geometry.shell_inner_diameter_m", *shell_inner_diameter_m, "m");
            c.looks_like_mm("geometry.shell_inner_diameter_m", ds);
            // Defaults from Taborek's recommendations (HEDH §3.3, [M]; common practice):
            // bundle-to-shell diametral clearance 12 mm + 0.5 % D_s (fixed tubesheet or
            // U-tubes), shell-to-baffle 3.1 mm + 0.4 % D_s, tube-to-baffle hole 0.8 mm.
            let assumed = |c: &mut Checker, key: &str, v: f64, why: &str| {
                c.warn(format!("geometry.{key} not given: assumed {} m ({why}; common practice) — give it from the drawing", num((v * 1e5).round() / 1e5)));
                v
            };
            let dotl = match bundle_diameter_m {
                Some(v) => c.positive("geometry.bundle_diameter_m", *v, "m"),
                None => assumed(c, "bundle_diameter_m", ds - (0.012 + 0.005 * ds), "shell diameter less 12 mm + 0.5 %"),
            };
            if dotl >= ds {
                c.fail("geometry.bundle_diameter_m", format!("{} m must be smaller than geometry.shell_inner_diameter_m = {} m", num(dotl), num(ds)));
            }
            if dotl <= d_o {
                c.fail("geometry.bundle_diameter_m", format!("{} m must exceed the tube outer diameter {} m", num(dotl), num(d_o)));
            }
            let bc = *baffle_cut_fraction;
            if !(0.05..=0.5).contains(&bc) {
                c.fail(
                    "geometry.baffle_cut_fraction",
                    format!("{} is not valid: give the cut as a fraction of the shell diameter, 0.05–0.5 (commonly 0.2–0.35)", num(bc)),
                );
            } else if !(0.15..=0.45).contains(&bc) {
                c.warn(format!("geometry.baffle_cut_fraction = {}: outside 0.15–0.45, where the Bell–Delaware factors were correlated", num(bc)));
            }
            let lbc = c.positive("geometry.baffle_spacing_m", *baffle_spacing_m, "m");
            if ds > 0.0 && lbc > 0.0 && !(0.2..=1.0).contains(&(lbc / ds)) {
                c.warn(format!(
                    "geometry.baffle_spacing_m: spacing {:.2} × the shell diameter is outside 0.2–1.0 of common practice (TEMA limits; Bell–Delaware data)",
                    lbc / ds
                ));
            }
            let length = f.length_m.unwrap_or(f64::NAN);
            let ends = [("inlet_baffle_spacing_m", inlet_baffle_spacing_m), ("outlet_baffle_spacing_m", outlet_baffle_spacing_m)]
                .map(|(k, v)| v.map(|v| c.positive(&format!("geometry.{k}"), v, "m")));
            // Baffles: the central spacing repeats between the end spacings over the length.
            let (baffles, ends) = match ends {
                [None, None] => {
                    let nb = ((length / lbc).round() as i64 - 1).max(1) as usize;
                    let end = 0.5 * (length - (nb as f64 - 1.0) * lbc);
                    (nb, [end, end])
                }
                [a, b] => {
                    let (li, lo) = (a.or(b).unwrap(), b.or(a).unwrap());
                    let sections = (length - li - lo) / lbc;
                    if !(sections > -1e-9 && (sections - sections.round()).abs() < 0.01) {
                        c.fail(
                            "geometry.baffle_spacing_m",
                            format!(
                                "the length {} m less the end spacings {} m and {} m is {} central spacings of {} m: they must make a whole number (length_m = inlet + outlet + (baffles − 1) × spacing)",
                                num(length), num(li), num(lo), num((sections * 1000.0).round() / 1000.0), num(lbc)
                            ),
                        );
                    }
                    ((sections.round().max(0.0) as usize) + 1, [li, lo])
                }
            };
            if ends.iter().any(|e| e.is_nan() || *e <= 0.0) && length.is_finite() && lbc > 0.0 {
                c.fail("geometry.baffle_spacing_m", format!("{} m does not fit the tube length {} m: use a spacing below the length", num(lbc), num(length)));
            }
            let clearance = |c: &mut Checker, key: &str, v: Option<f64>, default: f64, why: &str| match v {
                Some(v) if v >= 0.0 && v.is_finite() => v,
                Some(v) => {
                    c.fail(&format!("geometry.{key}"), format!("{} is not valid: give a diametral clearance of 0 or more, in m", num(v)));
                    0.0
                }
                None => assumed(c, key, default, why),
            };
            let lsb = clearance(c, "shell_baffle_clearance_m", *shell_baffle_clearance_m, 0.0031 + 0.004 * ds, "3.1 mm + 0.4 % of the shell diameter");
            let ltb = clearance(c, "tube_baffle_clearance_m", *tube_baffle_clearance_m, 0.0008, "0.8 mm");
            let lane = match pass_lane_width_m {
                Some(v) if *v >= 0.0 && v.is_finite() => *v,
                Some(v) => {
                    c.fail("geometry.pass_lane_width_m", format!("{} is not valid: give 0 or more, in m", num(*v)));
                    0.0
                }
                None => 0.0,
            };
            let strips = match sealing_strip_pairs {
                None => 0,
                Some(n) if (0..=100).contains(n) => *n as usize,
                Some(n) => {
                    c.fail("geometry.sealing_strip_pairs", format!("{n} is not valid: use a whole number from 0 to 100"));
                    0
                }
            };
            let nozzles = [("tube_nozzle_diameter_m", tube_nozzle_diameter_m), ("shell_nozzle_diameter_m", shell_nozzle_diameter_m)]
                .map(|(k, v)| v.map(|v| c.positive(&format!("geometry.{k}"), v, "m")));
            let (passes, shells, shell_side) = match &f.shell_and_tube {
                Some(t) if f.arrangement == crate::model::ArrangementKind::ShellAndTube => {
                    (t.tube_passes.unwrap_or(2).clamp(1, 16) as usize, t.shells_in_series.unwrap_or(1).clamp(1, 16) as usize, side(t.shell_side))
                }
                _ => {
                    c.fail(
                        "geometry.kind",
                        "\"shell_and_tube\" needs arrangement = \"shell_and_tube\" with a [shell_and_tube] table (shell_side, tube_passes, shells_in_series)"
                            .into(),
                    );
                    (1, 1, TubeSide::Cold)
                }
            };
            if nt % passes != 0 {
                c.fail(
                    "geometry.tube_count",
                    format!("{nt} tubes do not divide into {passes} tube passes evenly: give a multiple of shell_and_tube.tube_passes"),
                );
            }
            let bundle = ShellBundle {
                shell_diameter_m: ds,
                tube_outer_diameter_m: d_o,
                tube_pitch_m: pt,
                layout,
                tubes: nt,
                bundle_diameter_m: dotl,
                baffle_cut: bc,
                central_spacing_m: lbc,
                end_spacings_m: ends,
                baffles,
                shell_baffle_clearance_m: lsb,
                tube_baffle_clearance_m: ltb,
                sealing_strip_pairs: strips,
                pass_lane_width_m: lane,
                shells,
            };
            if c.problems.is_empty() {
                let a = bundle.areas();
                // Tubes must fit inside the outer tube limit: each takes a pitch cell of
                // p_t² (square) or (√3/2) p_t² (triangular).
                let cell = if matches!(layout, PitchLayout::Triangular30 | PitchLayout::RotatedTriangular60) { 3f64.sqrt() / 2.0 } else { 1.0 } * pt * pt;
                let room = std::f64::consts::PI / 4.0 * (dotl - d_o).powi(2) / cell;
                if nt as f64 > 1.05 * room {
                    c.fail("geometry.tube_count", format!("{nt} tubes at pitch {} m need more room than the bundle diameter {} m gives (about {} fit): check the count, pitch or bundle diameter", num(pt), num(dotl), room.floor()));
                } else if !(a.crossflow_area_m2 > 0.0 && a.window_area_m2 > 0.0 && a.rows_crossed > 0.0) {
                    c.fail(
                        "geometry.baffle_cut_fraction",
                        format!("{} leaves no crossflow or no window flow area in this bundle: check the cut, the bundle diameter and the tube count", num(bc)),
                    );
                }
            }
            Geometry::ShellAndTube { di, k, tube_side: shell_side.other(), bundle, passes, nozzles }
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
        (Geometry::DoublePipe { di, .. }, Some(true)) | (Geometry::TubeBank { di, .. }, Some(true)) | (Geometry::ShellAndTube { di, .. }, Some(true)) => {
            Some(*di)
        }
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
