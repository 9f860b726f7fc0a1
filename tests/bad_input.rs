//! The bad-input corpus: every file in tests/bad_cases/ names what is wrong with it, the
//! exit code it must give and a piece of text its message must contain (the offending key
//! or value). The command line is run on each, as a user would.

use std::path::PathBuf;
use std::process::Command;

fn expectation(text: &str, key: &str) -> String {
    text.lines().find_map(|l| l.strip_prefix(&format!("# expect-{key}: "))).unwrap_or_else(|| panic!("missing expect-{key}")).trim().to_string()
}

#[test]
fn every_bad_case_gets_a_clear_message_and_exit_code() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/bad_cases");
    let scratch = std::env::temp_dir().join(format!("hxgrid-bad-{}", std::process::id()));
    std::fs::create_dir_all(&scratch).unwrap();
    let mut files: Vec<PathBuf> = std::fs::read_dir(&dir).unwrap().map(|e| e.unwrap().path()).filter(|p| p.extension().is_some_and(|e| e == "toml")).collect();
    files.sort();
    assert!(files.len() >= 40, "the corpus has {} files", files.len());
    let mut failures = Vec::new();
    for file in &files {
        let text = std::fs::read_to_string(file).unwrap();
        let (code, command, needle) = (expectation(&text, "exit"), expectation(&text, "command"), expectation(&text, "message"));
        let out = Command::new(env!("CARGO_BIN_EXE_hxgrid"))
            .args([command.as_str(), file.to_str().unwrap(), "--out"].iter().take(if command == "run" { 3 } else { 2 }))
            .args(if command == "run" { vec![scratch.join("out").to_string_lossy().into_owned(), "-q".into()] } else { vec![] })
            .current_dir(&scratch)
            .output()
            .unwrap();
        let message = format!("{}{}", String::from_utf8_lossy(&out.stdout), String::from_utf8_lossy(&out.stderr));
        let name = file.file_name().unwrap().to_string_lossy();
        if out.status.code().map(|c| c.to_string()) != Some(code.clone()) {
            failures.push(format!("{name}: exit {:?}, expected {code}\n{message}", out.status.code()));
        } else if !message.contains(&needle) {
            failures.push(format!("{name}: message lacks «{needle}»\n{message}"));
        } else if message.contains("panicked") || message.contains("RUST_BACKTRACE") || message.contains("NaN") {
            failures.push(format!("{name}: not a clean message\n{message}"));
        }
        // Nothing is ever written for bad input.
        assert!(!scratch.join("out").exists(), "{name} wrote results");
    }
    assert!(failures.is_empty(), "{} of {} cases failed:\n\n{}", failures.len(), files.len(), failures.join("\n\n"));
}
