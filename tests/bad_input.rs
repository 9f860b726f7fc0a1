//! The bad-input corpus: every file in tests/bad_cases/ names what is wrong with it, the
//! exit code it must give and a piece of text its message must contain (the offending key
//! or value) — `# expect-message:` lines, all of which must appear — and text it must not
//! show (`# expect-absent:`). The command line is run on each, as a user would. Every message
//! must also be clean: no panic, no NaN, no raw control characters, not huge.

mod common;

use std::path::PathBuf;
use std::process::Command;

fn expectation(text: &str, key: &str) -> String {
    expectations(text, key).into_iter().next().unwrap_or_else(|| panic!("missing expect-{key}"))
}

/// Every `# expect-KEY: value` line.
fn expectations(text: &str, key: &str) -> Vec<String> {
    text.lines().filter_map(|l| l.strip_prefix(&format!("# expect-{key}: "))).map(|v| v.trim().to_string()).collect()
}

/// The corpus in a scratch folder, with the data files some cases name made there: a
/// property table larger than hxgrid reads (sparse, so it costs no disk).
fn corpus_copy(dir: &std::path::Path, scratch: &std::path::Path) -> Vec<PathBuf> {
    let mut files: Vec<PathBuf> = std::fs::read_dir(dir).unwrap().map(|e| e.unwrap().path()).filter(|p| p.extension().is_some_and(|e| e == "toml")).collect();
    files.sort();
    std::fs::create_dir_all(scratch.join("data")).unwrap();
    std::fs::File::create(scratch.join("data/huge-table.csv")).unwrap().set_len(64 << 20).unwrap();
    files
        .iter()
        .map(|f| {
            let to = scratch.join(f.file_name().unwrap());
            std::fs::copy(f, &to).unwrap();
            to
        })
        .collect()
}

#[test]
fn every_bad_case_gets_a_clear_message_and_exit_code() {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/bad_cases");
    let scratch = common::Scratch::new("bad");
    let files = corpus_copy(&dir, &scratch);
    assert!(files.len() >= 40, "the corpus has {} files", files.len());
    let mut failures = Vec::new();
    for file in &files {
        let text = std::fs::read_to_string(file).unwrap();
        let (code, command, needles) = (expectation(&text, "exit"), expectation(&text, "command"), expectations(&text, "message"));
        assert!(!needles.is_empty(), "{}: no expect-message", file.display());
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
        } else if let Some(needle) = needles.iter().find(|n| !message.contains(n.as_str())) {
            failures.push(format!("{name}: message lacks «{needle}»\n{message}"));
        } else if let Some(bad) = expectations(&text, "absent").into_iter().find(|a| message.contains(a.as_str())) {
            failures.push(format!("{name}: message shows «{bad}», which it must not\n{message}"));
        } else if message.contains("panicked") || message.contains("RUST_BACKTRACE") || message.contains("NaN") {
            failures.push(format!("{name}: not a clean message\n{message}"));
        } else if message.chars().any(|c| c.is_control() && c != '\n' && c != '\t') {
            failures.push(format!("{name}: raw control characters reach the terminal\n{}", message.escape_debug()));
        } else if message.len() > 20_000 {
            failures.push(format!("{name}: a {}-byte message", message.len()));
        }
        // Nothing is ever written for bad input.
        assert!(!scratch.join("out").exists(), "{name} wrote results");
    }
    assert!(failures.is_empty(), "{} of {} cases failed:\n\n{}", failures.len(), files.len(), failures.join("\n\n"));
}
