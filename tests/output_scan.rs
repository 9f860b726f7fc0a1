//! Every number in every file the demos write is finite: each CSV field is empty or a finite
//! number, no JSON or SVG holds NaN or infinity (nor a JSON `null` where a number belongs:
//! the only nulls allowed are the documented "not computed" values).

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

fn scan_csv(path: &Path) {
    let text = std::fs::read_to_string(path).unwrap();
    let mut lines = text.lines();
    let header: Vec<&str> = lines.next().expect("a header").split(',').collect();
    for (i, line) in lines.enumerate() {
        let fields: Vec<&str> = line.split(',').collect();
        assert_eq!(fields.len(), header.len(), "{}: row {} has {} fields", path.display(), i + 1, fields.len());
        for (f, col) in fields.iter().zip(&header) {
            if f.is_empty() {
                continue;
            }
            let v: f64 = f.parse().unwrap_or_else(|_| panic!("{}: row {}, {col}: {f:?} is not a number", path.display(), i + 1));
            assert!(v.is_finite(), "{}: row {}, {col} = {f}", path.display(), i + 1);
        }
    }
}

/// Keys whose value may be null ("not computed" or "does not apply"), by name.
const MAY_BE_NULL: [&str; 20] = [
    "stop",
    "shell_with",
    "shell_outer_face",
    "steady_final_C",
    "difference_from_steady_K",
    "hot_pressure_drop_Pa",
    "cold_pressure_drop_Pa",
    "hot_pressure_drop_total_Pa",
    "cold_pressure_drop_total_Pa",
    "lmtd_K",
    "lmtd_k",
    "lmtd_duty_W",
    "grid_study",
    "settling_63_s",
    "settling_95_s",
    "settling_99_s",
    // Set only where the change is worth a percentage (see README, transient.json).
    "overshoot_percent",
    // No flow geometry (a fixed film coefficient): no velocity or Reynolds number.
    "velocity_m_s",
    "reynolds",
    // An exchanger built in code has no case file.
    "input_sha256",
];

fn scan_json(v: &serde_json::Value, path: &str, file: &Path) {
    match v {
        serde_json::Value::Object(m) => {
            for (k, v) in m {
                if v.is_null() {
                    assert!(MAY_BE_NULL.contains(&k.as_str()), "{}: {path}.{k} is null", file.display());
                }
                scan_json(v, &format!("{path}.{k}"), file);
            }
        }
        serde_json::Value::Array(a) => a.iter().enumerate().for_each(|(i, v)| scan_json(v, &format!("{path}[{i}]"), file)),
        serde_json::Value::Number(n) => assert!(n.as_f64().is_some_and(f64::is_finite), "{}: {path}", file.display()),
        _ => {}
    }
}

fn scan_folder(dir: &Path) -> usize {
    let mut n = 0;
    for entry in std::fs::read_dir(dir).unwrap() {
        let path = entry.unwrap().path();
        let text = std::fs::read_to_string(&path).unwrap();
        match path.extension().and_then(|e| e.to_str()) {
            Some("csv") => scan_csv(&path),
            Some("json") => scan_json(&serde_json::from_str(&text).unwrap(), "", &path),
            Some("svg") => assert!(!text.contains("NaN") && !text.contains("inf\""), "{}", path.display()),
            _ => {}
        }
        n += 1;
    }
    n
}

#[test]
fn every_demo_output_holds_only_finite_numbers() {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    let scratch = common::Scratch::new("scan");
    let mut cases: Vec<PathBuf> =
        std::fs::read_dir(root.join("cases")).unwrap().map(|e| e.unwrap().path()).filter(|p| p.extension().is_some_and(|e| e == "toml")).collect();
    cases.sort();
    let mut scanned = 0;
    for case in &cases {
        let stem = case.file_stem().unwrap().to_string_lossy().into_owned();
        let transient = std::fs::read_to_string(case).unwrap().contains("[transient]");
        for cmd in if transient { vec!["run", "simulate"] } else { vec!["run"] } {
            let out = scratch.join(format!("{stem}-{cmd}"));
            let o = Command::new(env!("CARGO_BIN_EXE_hxgrid")).args([cmd, case.to_str().unwrap(), "--out", out.to_str().unwrap(), "-q"]).output().unwrap();
            assert!(o.status.success(), "{stem} {cmd}: {}", String::from_utf8_lossy(&o.stderr));
            scanned += scan_folder(&out);
        }
    }
    assert!(scanned >= 5 * cases.len(), "{scanned} files");
}
