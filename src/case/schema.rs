//! The shape of a case file, checked before any value is read: every unknown key (with the
//! closest valid key suggested), every missing required key and every value of the wrong
//! type, each with its line number, all reported in one pass. Values inside the right
//! shape are checked afterwards by validation.

use super::problem::{closest, Problem, ProblemKind};
use toml_edit::{ImDocument, Item, TableLike, Value};

/// What a key holds, read from the case file's JSON Schema ([`super::json_schema`]).
#[derive(Debug, Clone)]
enum Ty {
    /// A number (integer or float).
    Num,
    /// A whole number.
    Int,
    /// true or false.
    Bool,
    /// A string, one of the listed words (any string if empty).
    Str(Vec<String>),
    /// A list of numbers.
    NumList,
    /// A table (an object schema).
    Table(Value2),
    /// A list of tables (`[[name]]`), each of the object schema.
    TableList(Value2),
    /// A table whose `tag` key selects one of several object schemas (the geometry `kind`).
    Tagged(String, Vec<(String, Value2)>),
}

type Value2 = serde_json::Value;

/// One key of a table.
#[derive(Debug, Clone)]
struct Field {
    key: String,
    ty: Ty,
    required: bool,
    /// Unit or hint for messages.
    hint: String,
}

/// The unit a key's name carries (the naming rule of the case file), for messages.
fn unit_hint(key: &str) -> Option<&'static str> {
    const UNITS: [(&str, &str); 17] = [
        ("_m2_m", "m²/m"),
        ("_m2K_W", "m²·K/W"),
        ("_W_m2K", "W/(m²·K)"),
        ("_W_mK", "W/(m·K)"),
        ("_J_kgK", "J/(kg·K)"),
        ("_kg_m3", "kg/m³"),
        ("_kg_s", "kg/s"),
        ("_Pa_s", "Pa·s"),
        ("_bar_abs", "bar (absolute)"),
        ("_m2", "m²"),
        ("_m", "m"),
        ("_C", "°C"),
        ("_K", "K"),
        ("_s", "s"),
        ("_Pa", "Pa"),
        ("_W", "W"),
        ("_fraction", "0…1"),
    ];
    UNITS.iter().find(|(suffix, _)| key.ends_with(suffix)).map(|(_, u)| *u)
}

/// The schema `s` with a `$ref` resolved against the root's `$defs`.
fn resolve<'a>(root: &'a Value2, s: &'a Value2) -> &'a Value2 {
    match s.get("$ref").and_then(|r| r.as_str()).and_then(|r| r.strip_prefix("#/$defs/")) {
        Some(name) => &root["$defs"][name],
        None => s,
    }
}

/// Whether a schema type (a string or a list of them) includes `t`.
fn has_type(s: &Value2, t: &str) -> bool {
    match s.get("type") {
        Some(Value2::String(x)) => x == t,
        Some(Value2::Array(a)) => a.iter().any(|x| x == t),
        _ => false,
    }
}

/// The words a string schema allows (empty: any string).
fn words(root: &Value2, s: &Value2) -> Option<Vec<String>> {
    let s = resolve(root, s);
    if let Some(e) = s.get("enum").and_then(|e| e.as_array()) {
        return Some(e.iter().filter_map(|w| w.as_str().map(str::to_string)).collect());
    }
    if let Some(c) = s.get("const").and_then(|c| c.as_str()) {
        return Some(vec![c.to_string()]);
    }
    for alt in ["oneOf", "anyOf"] {
        if let Some(list) = s.get(alt).and_then(|l| l.as_array()) {
            let mut out = Vec::new();
            for a in list.iter().filter(|a| !(has_type(a, "null") && a.get("type").is_some_and(|t| t.is_string()))) {
                out.extend(words(root, a)?);
            }
            return Some(out);
        }
    }
    None
}

/// A `oneOf` of object schemas each fixing one key to a different word: an internally
/// tagged enum. Returns the tag key and (word, schema) per variant.
fn tagged(root: &Value2, s: &Value2) -> Option<(String, Vec<(String, Value2)>)> {
    let list = s.get("oneOf")?.as_array()?;
    let mut tag: Option<String> = None;
    let mut out = Vec::new();
    for alt in list {
        let alt = resolve(root, alt);
        let props = alt.get("properties")?.as_object()?;
        let (key, word) = props.iter().find_map(|(k, v)| v.get("const").and_then(|c| c.as_str()).map(|c| (k.clone(), c.to_string())))?;
        if tag.get_or_insert_with(|| key.clone()) != &key {
            return None;
        }
        out.push((word, alt.clone()));
    }
    Some((tag?, out))
}

/// The type of a property schema.
fn type_of(root: &Value2, s: &Value2) -> Ty {
    let s = resolve(root, s);
    if let Some((tag, variants)) = tagged(root, s) {
        return Ty::Tagged(tag, variants);
    }
    if let Some(list) = s.get("anyOf").and_then(|l| l.as_array()) {
        let real: Vec<&Value2> = list.iter().filter(|a| a.get("type") != Some(&Value2::String("null".into()))).collect();
        if real.len() == 1 {
            return type_of(root, real[0]);
        }
    }
    if let Some(w) = words(root, s).filter(|w| !w.is_empty()) {
        return Ty::Str(w);
    }
    if has_type(s, "object") {
        Ty::Table(s.clone())
    } else if has_type(s, "array") {
        match s.get("items").map(|i| resolve(root, i)) {
            Some(item) if has_type(item, "object") => Ty::TableList(item.clone()),
            _ => Ty::NumList,
        }
    } else if has_type(s, "integer") {
        Ty::Int
    } else if has_type(s, "boolean") {
        Ty::Bool
    } else if has_type(s, "number") {
        Ty::Num
    } else {
        Ty::Str(Vec::new())
    }
}

/// The fields of an object schema, in declaration order.
fn fields_of(root: &Value2, object: &Value2) -> Vec<Field> {
    let required: Vec<&str> = object.get("required").and_then(|r| r.as_array()).map(|r| r.iter().filter_map(|k| k.as_str()).collect()).unwrap_or_default();
    let Some(props) = object.get("properties").and_then(|p| p.as_object()) else { return Vec::new() };
    props
        .iter()
        .map(|(key, s)| {
            let ty = type_of(root, s);
            let hint = match (&ty, unit_hint(key)) {
                (Ty::Table(_) | Ty::Tagged(..), _) => format!("the [{key}] table"),
                (Ty::TableList(_), _) => format!("one or more [[{key}]] tables"),
                (Ty::Int, _) => "a whole number".to_string(),
                (_, Some(u)) => u.to_string(),
                _ => key.replace('_', " "),
            };
            Field { key: key.clone(), ty, required: required.contains(&key.as_str()), hint }
        })
        .collect()
}

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
    pub bad_words: Vec<(Vec<String>, String)>,
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
    let root = super::schema_root();
    walk(text, root, doc.as_table(), &mut Vec::new(), &fields_of(root, root), None, &mut shape);
    Ok(shape)
}

fn walk(text: &str, root: &Value2, table: &dyn TableLike, path: &mut Vec<String>, fields: &[Field], header_line: Option<usize>, shape: &mut Shape) {
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
            // In a tagged table, say which variant's keys these are.
            let variant = fields.iter().find_map(|f| match &f.ty {
                Ty::Str(w) if w.len() == 1 => Some(format!(" for {} = \"{}\"", f.key, w[0])),
                _ => None,
            });
            let here = if path.is_empty() { "at the top level".to_string() } else { format!("in [{}]{}", path.join("."), variant.unwrap_or_default()) };
            shape.problems.push(Problem::new(
                dotted(path, key),
                line,
                ProblemKind::UnknownKey { suggestion: near.map(str::to_string), place: here, valid: valid.clone() },
            ));
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
            shape.problems.push(Problem::new(dotted(path, key), line, ProblemKind::WrongType { expected: expected.to_string(), found }));
            let mut p = path.clone();
            p.push(key.to_string());
            shape.wrong_type.push(p);
        };
        match (&field.ty, item) {
            (Ty::Num, Item::Value(Value::Float(_) | Value::Integer(_))) => {}
            (Ty::Num, _) => wrong(&format!("a number ({})", field.hint)),
            (Ty::Int, Item::Value(Value::Integer(_))) => {}
            (Ty::Int, _) => wrong("a whole number"),
            (Ty::Bool, Item::Value(Value::Boolean(_))) => {}
            (Ty::Bool, _) => wrong("true or false, without quotes"),
            (Ty::Str(words), Item::Value(Value::String(s))) => {
                if !words.is_empty() && !words.iter().any(|w| w == s.value()) {
                    shape.problems.push(Problem::new(
                        dotted(path, key),
                        line,
                        ProblemKind::InvalidWord {
                            given: crate::text::quote(s.value(), 40),
                            what: field.hint.clone(),
                            suggestion: closest(s.value(), words).map(str::to_string),
                            valid: words.clone(),
                        },
                    ));
                    let mut p = path.clone();
                    p.push(key.to_string());
                    shape.bad_words.push((p, words[0].clone()));
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
            (Ty::Tagged(tag, variants), item) => match item.as_table_like() {
                Some(t) => {
                    let names: Vec<String> = variants.iter().map(|(w, _)| w.clone()).collect();
                    let quoted = names.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", ");
                    let header = item.span().map(|s| line_of(text, s.start)).or(line);
                    let mut here = path.clone();
                    here.push(key.to_string());
                    match t.get(tag) {
                        None => shape.problems.push(Problem::new(
                            format!("{}.{tag}", dotted(path, key)),
                            header,
                            ProblemKind::Missing { give: format!("give the {key} {tag}, one of {quoted}") },
                        )),
                        Some(v) => match v.as_str().and_then(|w| variants.iter().find(|(name, _)| name == w)) {
                            Some((_, schema)) => {
                                path.push(key.to_string());
                                walk(text, root, t, path, &fields_of(root, schema), header, shape);
                                path.pop();
                            }
                            None => {
                                let given = v.as_str().map(|w| crate::text::quote(w, 40)).unwrap_or_else(|| "a value that is not text".into());
                                let tag_line = t.key(tag).and_then(|k| k.span()).map(|s| line_of(text, s.start)).or(header);
                                shape.problems.push(Problem::new(
                                    format!("{}.{tag}", dotted(path, key)),
                                    tag_line,
                                    ProblemKind::InvalidWord {
                                        given,
                                        what: format!("{key} {tag}"),
                                        suggestion: v.as_str().and_then(|w| closest(w, &names)).map(str::to_string),
                                        valid: names.clone(),
                                    },
                                ));
                                here.push(tag.clone());
                                shape.bad_words.push((here, names[0].clone()));
                            }
                        },
                    }
                }
                None => wrong(&format!("a table [{}]", dotted(path, key))),
            },
            (Ty::TableList(sub), Item::ArrayOfTables(list)) => {
                for (i, t) in list.iter().enumerate() {
                    path.push(format!("{key}[{i}]"));
                    let header = t.span().map(|s| line_of(text, s.start)).or(line);
                    walk(text, root, t, path, &fields_of(root, sub), header, shape);
                    path.pop();
                }
            }
            (Ty::TableList(_), _) => wrong(&format!("one or more [[{}]] tables", dotted(path, key))),
            (Ty::Table(sub), item) => match item.as_table_like() {
                Some(t) => {
                    path.push(key.to_string());
                    let header = item.span().map(|s| line_of(text, s.start)).or(line);
                    walk(text, root, t, path, &fields_of(root, sub), header, shape);
                    path.pop();
                }
                None => wrong(&format!("a table [{}]", dotted(path, key))),
            },
        }
    }
    for field in fields.iter().filter(|f| f.required && !table.contains_key(&f.key) && !suggested.contains(&f.key)) {
        let give = match &field.ty {
            Ty::Table(_) | Ty::Tagged(..) => format!("add {}", field.hint),
            Ty::Str(words) if !words.is_empty() => {
                format!("give the {}, one of {}", field.hint, words.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", "))
            }
            _ => format!("give {}", field.hint),
        };
        shape.problems.push(Problem::new(dotted(path, &field.key), header_line, ProblemKind::Missing { give }));
    }
}

/// A path segment `name[i]` (a table of a `[[name]]` list) as (name, Some(i)).
fn segment(part: &str) -> (&str, Option<usize>) {
    match part.strip_suffix(']').and_then(|p| p.split_once('[')) {
        Some((name, i)) => match i.parse() {
            Ok(i) => (name, Some(i)),
            Err(_) => (part, None),
        },
        None => (part, None),
    }
}

/// The table a path segment names inside `table` (mutable).
fn child_mut<'a>(table: &'a mut dyn TableLike, part: &str) -> Option<&'a mut dyn TableLike> {
    let (name, index) = segment(part);
    let item = table.get_mut(name)?;
    match index {
        None => item.as_table_like_mut(),
        Some(i) => item.as_array_of_tables_mut()?.get_mut(i).map(|t| t as &mut dyn TableLike),
    }
}

/// The table a path segment names inside `table`.
fn child<'a>(table: &'a dyn TableLike, part: &str) -> Option<&'a dyn TableLike> {
    let (name, index) = segment(part);
    let item = table.get(name)?;
    match index {
        None => item.as_table_like(),
        Some(i) => item.as_array_of_tables()?.get(i).map(|t| t as &dyn TableLike),
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
                if let Some(t) = child_mut(table, first) {
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
        let name = segment(part).0;
        let Some(item) = table.get(name) else { return line };
        line = table.key(name).and_then(|k| k.span()).or_else(|| item.span()).map(|s| line_of(text, s.start)).or(line);
        match child(table, part) {
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
                if let Some(t) = child_mut(table, first) {
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
