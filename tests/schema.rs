//! The case file's JSON Schema (an open standard: JSON Schema draft 2020-12), derived from
//! the serde types, checked with an independent validator (the `jsonschema` crate): it is a
//! valid schema, accepts every demo case, and agrees with hxgrid's own shape check on every
//! file of the bad-input corpus; every key it declares is documented in the README.

use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn toml_files(dir: &Path) -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir).unwrap().map(|e| e.unwrap().path()).filter(|p| p.extension().is_some_and(|e| e == "toml")).collect();
    v.sort();
    v
}

fn as_json(text: &str) -> Option<serde_json::Value> {
    let value: toml::Value = toml::from_str(text).ok()?;
    Some(serde_json::to_value(value).unwrap())
}

fn schema() -> serde_json::Value {
    let o = std::process::Command::new(env!("CARGO_BIN_EXE_hxgrid")).arg("schema").output().unwrap();
    assert!(o.status.success());
    serde_json::from_slice(&o.stdout).expect("hxgrid schema prints JSON")
}

#[test]
fn the_schema_accepts_every_demo_case() {
    let schema = schema();
    assert_eq!(schema["$schema"], "https://json-schema.org/draft/2020-12/schema");
    let validator = jsonschema::validator_for(&schema).expect("a valid JSON Schema");
    let cases = toml_files(&root().join("cases"));
    assert!(cases.len() >= 6);
    for case in cases {
        let json = as_json(&std::fs::read_to_string(&case).unwrap()).unwrap();
        let errors: Vec<String> = validator.iter_errors(&json).map(|e| e.to_string()).collect();
        assert!(errors.is_empty(), "{}: {errors:?}", case.display());
    }
}

/// Where a corpus file's mistake is one of shape (an unknown key, a missing key, a wrong
/// type, a word outside its choices), both the independent validator and hxgrid's shape
/// check reject it; where its mistake is a value or a combination, both accept its shape.
#[test]
fn the_schema_and_the_shape_check_agree_on_the_corpus() {
    let validator = jsonschema::validator_for(&schema()).unwrap();
    let mut shape_mistakes = 0;
    for file in toml_files(&root().join("tests/bad_cases")) {
        let text = std::fs::read_to_string(&file).unwrap();
        let (Some(json), Ok(problems)) = (as_json(&text), hxgrid::case::shape_problems(&text)) else { continue };
        let valid = validator.is_valid(&json);
        assert_eq!(valid, problems.is_empty(), "{}: validator says {valid}, shape check found {problems:?}", file.display());
        shape_mistakes += usize::from(!valid);
    }
    assert!(shape_mistakes >= 10, "{shape_mistakes}");
}

/// Every key the schema declares is in the README's case file reference.
#[test]
fn every_key_is_documented() {
    let schema = schema();
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    let section = &readme[readme.find("## Case file reference").unwrap()..readme.find("## Fluids").unwrap()];
    let mut keys = Vec::new();
    let mut stack = vec![schema["properties"].clone()];
    for def in schema["$defs"].as_object().unwrap().values() {
        stack.push(def["properties"].clone());
    }
    for props in stack {
        if let Some(p) = props.as_object() {
            keys.extend(p.keys().cloned());
        }
    }
    // A key as `key`, a table as [key] or [parent.key].
    let documented = |k: &str| section.contains(&format!("`{k}`")) || section.contains(&format!("[{k}]")) || section.contains(&format!(".{k}]"));
    let missing: Vec<&String> = keys.iter().filter(|k| !documented(k)).collect();
    assert!(missing.is_empty(), "undocumented keys: {missing:?}");
}
