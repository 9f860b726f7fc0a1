//! Case variants by key: a design study names the inputs it varies by their dotted case-file
//! keys ("length_m", "hot.mass_flow_kg_s", "geometry.rows"), and each point is the case
//! file's own text with those values replaced, validated like any case file. So every key a
//! case can set can be swept, and a point with an impossible value fails with the same
//! message the user would get writing that value by hand.

use toml_edit::{DocumentMut, Item, Value};

/// The tables whose keys describe a design study, not the exchanger: their numbers cannot
/// be varied.
const STUDY_TABLES: [&str; 3] = ["size", "sweep", "uncertainty"];

/// A number the case file sets, found by its dotted key.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct KeyValue {
    /// The value in the case file.
    pub value: f64,
    /// Written as a whole number (the key takes whole numbers: rows, passes, tubes).
    pub whole: bool,
}

/// The number at dotted `key` in `text`, or why it cannot be varied.
pub fn lookup(text: &str, key: &str) -> Result<KeyValue, String> {
    let doc: DocumentMut = text.parse().map_err(|e: toml_edit::TomlError| e.to_string())?;
    let parts: Vec<&str> = key.split('.').collect();
    if parts.iter().any(|p| p.is_empty()) || key.contains('[') {
        return Err("is not a dotted key of the case file (for example \"length_m\", \"hot.mass_flow_kg_s\", \"geometry.rows\")".into());
    }
    if STUDY_TABLES.contains(&parts[0]) {
        return Err(format!("is a key of the [{}] study itself: vary a key of the exchanger or its streams", parts[0]));
    }
    let mut item: &Item = doc.as_item();
    for part in &parts {
        item = match item.as_table_like().and_then(|t| t.get(part)) {
            Some(i) => i,
            None => return Err("is not set in the case file: a study varies a number the case sets (add the key with its nominal value)".into()),
        };
    }
    match item.as_value() {
        Some(Value::Float(f)) => Ok(KeyValue { value: *f.value(), whole: false }),
        Some(Value::Integer(i)) => {
            // A whole number where the schema takes any number (length_m = 12) is a real key.
            Ok(KeyValue { value: *i.value() as f64, whole: takes_whole_numbers(key) })
        }
        _ => Err("does not hold a single number in the case file".into()),
    }
}

/// Whether the schema types `key` as a whole number (rows, counts, passes).
fn takes_whole_numbers(key: &str) -> bool {
    let leaf = key.rsplit('.').next().unwrap_or(key);
    // A key is whole-numbered if a property of that name is typed integer (no name is a
    // float in one table and an integer in another).
    find_integer(crate::case::schema_root(), leaf)
}

fn find_integer(v: &serde_json::Value, leaf: &str) -> bool {
    match v {
        serde_json::Value::Object(map) => {
            if let Some(p) = map.get("properties").and_then(|p| p.get(leaf)) {
                let ty = p.get("type");
                let is_int = match ty {
                    Some(serde_json::Value::String(s)) => s == "integer",
                    Some(serde_json::Value::Array(a)) => a.iter().any(|x| x == "integer"),
                    _ => false,
                };
                if is_int {
                    return true;
                }
            }
            map.values().any(|x| find_integer(x, leaf))
        }
        serde_json::Value::Array(a) => a.iter().any(|x| find_integer(x, leaf)),
        _ => false,
    }
}

/// `text` with each `(key, value)` set and the study tables removed (a whole-number key written as an integer; the
/// caller has checked the value is whole). The keys were found by [`lookup`].
pub fn with_values(text: &str, values: &[(&str, KeyValue)]) -> Result<String, String> {
    let mut doc: DocumentMut = text.parse().map_err(|e: toml_edit::TomlError| e.to_string())?;
    // A variant is an exchanger to rate: the study tables stay with the study (a sizing
    // target is no reason to refuse a sweep point).
    for t in STUDY_TABLES {
        doc.remove(t);
    }
    for (key, kv) in values {
        let parts: Vec<&str> = key.split('.').collect();
        let (last, tables) = parts.split_last().ok_or_else(|| format!("\"{key}\" is empty"))?;
        let mut table: &mut dyn toml_edit::TableLike = doc.as_table_mut();
        for part in tables {
            table = table.get_mut(part).and_then(|i| i.as_table_like_mut()).ok_or_else(|| format!("\"{key}\" is not set in the case file"))?;
        }
        let item = table.get_mut(last).ok_or_else(|| format!("\"{key}\" is not set in the case file"))?;
        let decor = item.as_value().map(|v| v.decor().clone());
        let mut new = if kv.whole { Value::from(kv.value.round() as i64) } else { Value::from(kv.value) };
        if let Some(d) = decor {
            *new.decor_mut() = d;
        }
        *item = Item::Value(new);
    }
    Ok(doc.to_string())
}
