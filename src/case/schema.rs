//! The shape of a case file, checked before any value is read: every unknown key (with the
//! closest valid key suggested), every missing required key and every value of the wrong
//! type, each with its line number, all reported in one pass. Values inside the right
//! shape are checked afterwards by validation.

use super::validate::{closest, Problem};
use toml_edit::{ImDocument, Item, TableLike, Value};

/// What a key holds.
#[derive(Debug, Clone, Copy)]
enum Ty {
    /// A number (integer or float).
    Num,
    /// A whole number.
    Int,
    /// A string, one of the listed words (any string if empty).
    Str(&'static [&'static str]),
    /// A list of numbers.
    NumList,
    /// A table with these fields.
    Table(&'static [Field]),
}

/// One key of a table.
#[derive(Debug, Clone, Copy)]
struct Field {
    key: &'static str,
    ty: Ty,
    required: bool,
    /// Unit or hint for messages.
    hint: &'static str,
}

const fn f(key: &'static str, ty: Ty, required: bool, hint: &'static str) -> Field {
    Field { key, ty, required, hint }
}

const PROPERTIES: &[Field] = &[
    f("density_kg_m3", Ty::Num, true, "kg/m³"),
    f("specific_heat_J_kgK", Ty::Num, true, "J/(kg·K)"),
    f("viscosity_Pa_s", Ty::Num, true, "Pa·s"),
    f("conductivity_W_mK", Ty::Num, true, "W/(m·K)"),
];

const COMPACT: &[Field] = &[
    f("data_file", Ty::Str(&[]), true, "path of a reynolds,colburn_j,fanning_f file"),
    f("hydraulic_diameter_m", Ty::Num, true, "m"),
    f("free_flow_area_m2", Ty::Num, true, "m²"),
    f("area_per_length_m2_m", Ty::Num, true, "m²/m"),
    f("fin", Ty::Str(&["none", "straight", "annular"]), true, "fin shape"),
    f("fin_area_fraction", Ty::Num, false, "0…1"),
    f("fin_length_m", Ty::Num, false, "m"),
    f("fin_thickness_m", Ty::Num, false, "m"),
    f("fin_conductivity_W_mK", Ty::Num, false, "W/(m·K)"),
    f("fin_root_radius_m", Ty::Num, false, "m"),
    f("fin_tip_radius_m", Ty::Num, false, "m"),
];

const STREAM: &[Field] = &[
    f("fluid", Ty::Str(&[]), true, "a fluid name (hxgrid fluids)"),
    f("table_file", Ty::Str(&[]), false, "path of a property table"),
    f("phase", Ty::Str(&["liquid", "vapour"]), false, "water phase"),
    f("inlet_temperature_C", Ty::Num, true, "°C"),
    f("mass_flow_kg_s", Ty::Num, true, "kg/s"),
    f("pressure_bar_abs", Ty::Num, false, "bar (absolute)"),
    f("fouling_m2K_W", Ty::Num, false, "m²·K/W"),
    f("film", Ty::Str(&["gnielinski", "dittus_boelter", "sieder_tate", "pitla", "zukauskas", "compact", "fixed"]), true, "film model"),
    f("film_coefficient_W_m2K", Ty::Num, false, "W/(m²·K)"),
    f("laminar", Ty::Str(&["fully_developed", "fully_developed_flux", "hausen", "sieder_tate"]), false, "laminar model"),
    f("wall_correction", Ty::Str(&["none", "viscosity", "gas_temperature"]), false, "property-ratio correction"),
    f("transition", Ty::Str(&["blend", "none"]), false, "laminar–turbulent transition"),
    f("roughness_m", Ty::Num, false, "m"),
    f("properties", Ty::Table(PROPERTIES), false, "constant properties"),
    f("compact", Ty::Table(COMPACT), false, "compact surface"),
];

const GEOMETRY: &[Field] = &[
    f("kind", Ty::Str(&["double_pipe", "plane_wall", "tube_bank"]), true, "geometry kind"),
    f("wall_conductivity_W_mK", Ty::Num, true, "W/(m·K)"),
    f("tube_inner_diameter_m", Ty::Num, false, "m"),
    f("tube_outer_diameter_m", Ty::Num, false, "m"),
    f("shell_inner_diameter_m", Ty::Num, false, "m"),
    f("tube_side", Ty::Str(&["hot", "cold"]), false, "which stream is in the tubes"),
    f("annulus_heat_diameter", Ty::Str(&["hydraulic", "equivalent"]), false, "annulus diameter for h"),
    f("layout", Ty::Str(&["aligned", "staggered"]), false, "tube-bank layout"),
    f("transverse_pitch_m", Ty::Num, false, "m"),
    f("longitudinal_pitch_m", Ty::Num, false, "m"),
    f("rows", Ty::Int, false, "a whole number"),
    f("tubes_per_row", Ty::Int, false, "a whole number"),
    f("tube_length_m", Ty::Num, false, "m"),
    f("tube_circuits", Ty::Int, false, "a whole number"),
    f("area_per_length_m2_m", Ty::Num, false, "m²/m"),
    f("wall_thickness_m", Ty::Num, false, "m"),
    f("hot_flow_area_m2", Ty::Num, false, "m²"),
    f("hot_hydraulic_diameter_m", Ty::Num, false, "m"),
    f("cold_flow_area_m2", Ty::Num, false, "m²"),
    f("cold_hydraulic_diameter_m", Ty::Num, false, "m"),
];

const SOLVER: &[Field] = &[
    f("cells", Ty::Int, false, "a whole number"),
    f("residual_tolerance", Ty::Num, false, "a relative tolerance"),
    f("max_iterations", Ty::Int, false, "a whole number"),
    f("scheme", Ty::Str(&["trapezoidal", "upwind", "tvd"]), false, "spatial scheme"),
];

const SIGNAL: &[Field] = &[
    f("kind", Ty::Str(&["step", "ramp", "table"]), true, "schedule kind"),
    f("time_s", Ty::Num, false, "s"),
    f("start_s", Ty::Num, false, "s"),
    f("end_s", Ty::Num, false, "s"),
    f("to", Ty::Num, false, "the new value"),
    f("times_s", Ty::NumList, false, "a list of times in s"),
    f("values", Ty::NumList, false, "a list of values"),
];

const TRANSIENT: &[Field] = &[
    f("duration_s", Ty::Num, true, "s"),
    f("output_interval_s", Ty::Num, false, "s"),
    f("integrator", Ty::Str(&["auto", "explicit", "implicit"]), false, "integrator"),
    f("tolerance_K", Ty::Num, false, "K"),
    f("initial", Ty::Str(&["steady", "uniform"]), false, "initial state"),
    f("initial_temperature_C", Ty::Num, false, "°C"),
    f("wall_density_kg_m3", Ty::Num, true, "kg/m³"),
    f("wall_specific_heat_J_kgK", Ty::Num, true, "J/(kg·K)"),
    f("shell_thickness_m", Ty::Num, false, "m"),
    f("shell_density_kg_m3", Ty::Num, false, "kg/m³"),
    f("shell_specific_heat_J_kgK", Ty::Num, false, "J/(kg·K)"),
    f("fin_density_kg_m3", Ty::Num, false, "kg/m³"),
    f("fin_specific_heat_J_kgK", Ty::Num, false, "J/(kg·K)"),
    f("snapshot_times_s", Ty::NumList, false, "a list of times in s"),
    f("response_from_s", Ty::Num, false, "s"),
    f("hot_inlet_temperature_C", Ty::Table(SIGNAL), false, "a schedule"),
    f("hot_mass_flow_kg_s", Ty::Table(SIGNAL), false, "a schedule"),
    f("cold_inlet_temperature_C", Ty::Table(SIGNAL), false, "a schedule"),
    f("cold_mass_flow_kg_s", Ty::Table(SIGNAL), false, "a schedule"),
];

const ROOT: &[Field] = &[
    f("name", Ty::Str(&[]), false, "a name"),
    f("description", Ty::Str(&[]), false, "text"),
    f("arrangement", Ty::Str(&["counterflow", "parallel"]), true, "flow arrangement"),
    f("length_m", Ty::Num, false, "m"),
    f("geometry", Ty::Table(GEOMETRY), true, "the [geometry] table"),
    f("hot", Ty::Table(STREAM), true, "the [hot] table"),
    f("cold", Ty::Table(STREAM), true, "the [cold] table"),
    f("solver", Ty::Table(SOLVER), false, "the [solver] table"),
    f("transient", Ty::Table(TRANSIENT), false, "the [transient] table"),
];

/// Result of the shape check.
pub struct Shape {
    /// Problems found.
    pub problems: Vec<Problem>,
    /// Dotted paths of the unknown keys.
    pub unknown: Vec<Vec<String>>,
    /// Dotted keys suggested for misspellings (not to be reported again as missing).
    pub suggested: Vec<String>,
    /// Keys holding a word outside their choices, with a valid word to stand in for it so
    /// that the rest of the file can still be checked.
    pub bad_words: Vec<(Vec<String>, &'static str)>,
    /// Keys holding a value of the wrong type (set aside like unknown keys).
    pub wrong_type: Vec<Vec<String>>,
}

/// 1-based line of a byte offset.
fn line_of(text: &str, offset: usize) -> usize {
    text[..offset.min(text.len())].bytes().filter(|&b| b == b'\n').count() + 1
}

fn describe(v: &Value) -> String {
    match v {
        Value::String(s) => format!("the text {}", crate::text::quote(s.value(), 40)),
        Value::Integer(i) => format!("the whole number {}", i.value()),
        Value::Float(x) => format!("the number {}", crate::text::num(*x.value())),
        Value::Boolean(b) => format!("{}", b.value()),
        Value::Datetime(_) => "a date".into(),
        Value::Array(_) => "a list".into(),
        Value::InlineTable(_) => "a table".into(),
    }
}

/// Check the shape of `text`; Err(message) for TOML syntax errors.
pub fn check(text: &str) -> Result<Shape, String> {
    let doc = ImDocument::parse(text).map_err(|e| e.to_string())?;
    let mut shape = Shape { problems: Vec::new(), unknown: Vec::new(), suggested: Vec::new(), bad_words: Vec::new(), wrong_type: Vec::new() };
    walk(text, doc.as_table(), &mut Vec::new(), ROOT, None, &mut shape);
    Ok(shape)
}

fn walk(text: &str, table: &dyn TableLike, path: &mut Vec<String>, fields: &[Field], header_line: Option<usize>, shape: &mut Shape) {
    let dotted = |path: &[String], key: &str| if path.is_empty() { key.to_string() } else { format!("{}.{key}", path.join(".")) };
    let valid: Vec<String> = fields.iter().map(|f| f.key.to_string()).collect();
    // Keys suggested for a misspelling are not reported again as missing.
    let mut suggested: Vec<String> = Vec::new();
    for (key, item) in table.iter() {
        let line = table.key(key).and_then(|k| k.span()).or_else(|| item.span()).map(|s| line_of(text, s.start));
        let Some(field) = fields.iter().find(|f| f.key == key) else {
            let near = closest(key, &valid);
            if let Some(c) = near {
                suggested.push(c.to_string());
                shape.suggested.push(dotted(path, c));
            }
            let hint = near.map(|c| format!("did you mean {c}? ")).unwrap_or_default();
            let here = if path.is_empty() { "at the top level".to_string() } else { format!("in [{}]", path.join(".")) };
            shape.problems.push(Problem { key: dotted(path, key), line, message: format!("unknown key; {hint}valid keys {here}: {}", valid.join(", ")) });
            let mut p = path.clone();
            p.push(key.to_string());
            shape.unknown.push(p);
            continue;
        };
        let mut wrong = |expected: &str| {
            let found = match item {
                Item::Value(v) => describe(v),
                Item::Table(_) => "a table".into(),
                Item::ArrayOfTables(_) => "a list of tables".into(),
                Item::None => "nothing".into(),
            };
            shape.problems.push(Problem { key: dotted(path, key), line, message: format!("expected {expected}, found {found}") });
            let mut p = path.clone();
            p.push(key.to_string());
            shape.wrong_type.push(p);
        };
        match (field.ty, item) {
            (Ty::Num, Item::Value(Value::Float(_) | Value::Integer(_))) => {}
            (Ty::Num, _) => wrong(&format!("a number ({})", field.hint)),
            (Ty::Int, Item::Value(Value::Integer(_))) => {}
            (Ty::Int, _) => wrong("a whole number"),
            (Ty::Str(words), Item::Value(Value::String(s))) => {
                if !words.is_empty() && !words.contains(&s.value().as_str()) {
                    let options: Vec<String> = words.iter().map(|w| w.to_string()).collect();
                    let hint = closest(s.value(), &options).map(|c| format!(" Did you mean \"{c}\"?")).unwrap_or_default();
                    shape.problems.push(Problem {
                        key: dotted(path, key),
                        line,
                        message: format!(
                            "{} is not valid for the {}.{hint} Valid: {}",
                            crate::text::quote(s.value(), 40),
                            field.hint,
                            words.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", ")
                        ),
                    });
                    let mut p = path.clone();
                    p.push(key.to_string());
                    shape.bad_words.push((p, words[0]));
                }
            }
            (Ty::Str(words), _) => {
                if words.is_empty() {
                    wrong(&format!("text in quotes ({})", field.hint))
                } else {
                    wrong(&format!("one of {}", words.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", ")))
                }
            }
            (Ty::NumList, Item::Value(Value::Array(a))) => {
                if !a.iter().all(|v| matches!(v, Value::Float(_) | Value::Integer(_))) {
                    wrong(&format!("a list of numbers ({})", field.hint));
                }
            }
            (Ty::NumList, _) => wrong(&format!("a list of numbers ({})", field.hint)),
            (Ty::Table(sub), item) => match item.as_table_like() {
                Some(t) => {
                    path.push(key.to_string());
                    let header = item.span().map(|s| line_of(text, s.start)).or(line);
                    walk(text, t, path, sub, header, shape);
                    path.pop();
                }
                None => wrong(&format!("a table [{}]", dotted(path, key))),
            },
        }
    }
    for field in fields.iter().filter(|f| f.required && !table.contains_key(f.key) && !suggested.iter().any(|k| k == f.key)) {
        let what = match field.ty {
            Ty::Table(_) => format!("is missing: add {}", field.hint),
            Ty::Str(words) if !words.is_empty() => {
                format!("is missing: give the {}, one of {}", field.hint, words.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", "))
            }
            _ => format!("is missing: give {}", field.hint),
        };
        shape.problems.push(Problem { key: dotted(path, field.key), line: header_line, message: what });
    }
}

/// `text` with the unknown and wrong-typed keys removed and invalid words replaced by a
/// valid stand-in, so the rest of the file can be read and its values checked.
pub fn readable(text: &str, shape: &Shape) -> String {
    let Ok(mut doc) = text.parse::<toml_edit::DocumentMut>() else { return text.to_string() };
    fn set(table: &mut dyn TableLike, path: &[String], word: &str) {
        match path {
            [] => {}
            [last] => {
                if let Some(item) = table.get_mut(last) {
                    *item = toml_edit::value(word);
                }
            }
            [first, rest @ ..] => {
                if let Some(t) = table.get_mut(first).and_then(|i| i.as_table_like_mut()) {
                    set(t, rest, word);
                }
            }
        }
    }
    for (path, word) in &shape.bad_words {
        set(doc.as_table_mut(), path, word);
    }
    without(&doc.to_string(), &[shape.unknown.clone(), shape.wrong_type.clone()].concat())
}

/// Line of a dotted key in `text`: the key itself, or else the deepest table on its path
/// that exists (where a missing key belongs).
pub fn line_of_key(text: &str, dotted: &str) -> Option<usize> {
    let doc = ImDocument::parse(text).ok()?;
    let mut table: &dyn TableLike = doc.as_table();
    let mut line = None;
    for part in dotted.split('.') {
        let Some(item) = table.get(part) else { return line };
        line = table.key(part).and_then(|k| k.span()).or_else(|| item.span()).map(|s| line_of(text, s.start)).or(line);
        match item.as_table_like() {
            Some(t) => table = t,
            None => return line,
        }
    }
    line
}

/// `text` with the unknown keys removed (so the rest can be read).
pub fn without(text: &str, unknown: &[Vec<String>]) -> String {
    fn remove(table: &mut dyn TableLike, path: &[String]) {
        match path {
            [] => {}
            [last] => {
                table.remove(last);
            }
            [first, rest @ ..] => {
                if let Some(t) = table.get_mut(first).and_then(|i| i.as_table_like_mut()) {
                    remove(t, rest);
                }
            }
        }
    }
    let Ok(mut doc) = text.parse::<toml_edit::DocumentMut>() else { return text.to_string() };
    for path in unknown {
        remove(doc.as_table_mut(), path);
    }
    doc.to_string()
}
