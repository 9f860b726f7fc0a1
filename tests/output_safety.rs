//! Output safety as a careless or unlucky user meets it: hxgrid never deletes, hides or
//! overwrites a file it did not write, never writes outside the folder it was given (or
//! `output/`), leaves either the complete old or the complete new results folder visible
//! when killed at any moment, and lets concurrent runs to one folder all succeed.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};
use std::time::{Duration, Instant};

fn bin() -> Command {
    Command::new(env!("CARGO_BIN_EXE_hxgrid"))
}

fn scratch(name: &str) -> common::Scratch {
    common::Scratch::new(&format!("safety-{name}"))
}

fn run(args: &[&str], dir: &Path) -> Output {
    bin().args(args).current_dir(dir).output().unwrap()
}

fn text(o: &Output) -> String {
    format!("{}{}", String::from_utf8_lossy(&o.stdout), String::from_utf8_lossy(&o.stderr))
}

/// The starter case (an invented double pipe) with `cells` cells, as `c.toml` (or
/// `c<cells>.toml` beside another).
fn case(dir: &Path, cells: usize) -> PathBuf {
    let body = hxgrid::case::STARTER.replace("cells = 200", &format!("cells = {cells}"));
    let path = if dir.join("c.toml").exists() { dir.join(format!("c{cells}.toml")) } else { dir.join("c.toml") };
    std::fs::write(&path, body).unwrap();
    path
}

/// Every entry in `dir`, sorted.
fn entries(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir).unwrap().map(|e| e.unwrap().file_name().to_string_lossy().into_owned()).collect();
    v.sort();
    v
}

/// A complete steady results folder: every file present, the summary whole JSON, the CSV
/// with its header and as many rows as cells. Returns the cell count.
fn complete(res: &Path) -> usize {
    for f in hxgrid::output::steady_file_names().iter().chain(&[hxgrid::output::folder::MARKER]) {
        assert!(res.join(f).is_file(), "{} lacks {f}: {:?}", res.display(), entries(res));
    }
    let summary: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(res.join("summary.json")).unwrap()).expect("whole JSON");
    let cells = summary["cells"].as_u64().unwrap() as usize;
    let rows = std::fs::read_to_string(res.join("profiles.csv")).unwrap().lines().count();
    assert_eq!(rows, cells + 1, "profiles.csv is truncated");
    cells
}

#[test]
fn a_folder_or_file_hxgrid_did_not_write_is_never_replaced() {
    let dir = scratch("foreign");
    let c = case(&dir, 40);
    let c = c.to_str().unwrap();
    // A folder of someone's letters and photos.
    std::fs::create_dir(dir.join("letters")).unwrap();
    std::fs::write(dir.join("letters/letter.txt"), "dear").unwrap();
    let o = run(&["run", c, "--out", "letters", "-q"], &dir);
    assert_eq!(o.status.code(), Some(5), "{}", text(&o));
    assert!(text(&o).contains("--out") && text(&o).contains("not an hxgrid results folder"), "{}", text(&o));
    assert_eq!(entries(&dir.join("letters")), ["letter.txt"]);
    // An existing file given as --out: refused, not renamed or hidden.
    std::fs::write(dir.join("notes.txt"), "keep").unwrap();
    let before = entries(&dir);
    let o = run(&["run", c, "--out", "notes.txt", "-q"], &dir);
    assert_eq!(o.status.code(), Some(5), "{}", text(&o));
    assert_eq!(std::fs::read_to_string(dir.join("notes.txt")).unwrap(), "keep");
    assert_eq!(entries(&dir), before, "nothing appeared or vanished beside it");
    // `.` and `..` are not folder names.
    for out in [".", "..", "letters/.."] {
        let o = run(&["run", c, "--out", out, "-q"], &dir);
        assert_eq!(o.status.code(), Some(5), "{out}: {}", text(&o));
    }
    assert_eq!(entries(&dir), before);
    // A results folder the user has added a file to is not replaced either.
    let o = run(&["run", c, "--out", "res", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    std::fs::write(dir.join("res/my-notes.txt"), "mine").unwrap();
    let o = run(&["run", c, "--out", "res", "-q"], &dir);
    assert_eq!(o.status.code(), Some(5), "{}", text(&o));
    assert!(text(&o).contains("my-notes.txt"), "{}", text(&o));
    assert_eq!(std::fs::read_to_string(dir.join("res/my-notes.txt")).unwrap(), "mine");
    // Its own folder is replaced.
    std::fs::remove_file(dir.join("res/my-notes.txt")).unwrap();
    let o = run(&["run", c, "--out", "res", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    complete(&dir.join("res"));
}

#[test]
fn a_case_name_cannot_point_outside_output() {
    let dir = scratch("names");
    std::fs::create_dir(dir.join("src")).unwrap();
    std::fs::write(dir.join("src/lib.rs"), "// precious").unwrap();
    std::fs::create_dir(dir.join("output")).unwrap();
    std::fs::write(dir.join("output/earlier.txt"), "earlier").unwrap();
    for name in ["../src", "", "/tmp/elsewhere", ".", "..", ".hidden", "a/b", "x\u{1b}[31m"] {
        let body = hxgrid::case::STARTER.replace("name = \"starter-double-pipe\"", &format!("name = {}", toml_string(name)));
        std::fs::write(dir.join("n.toml"), body).unwrap();
        for cmd in ["check", "run"] {
            let o = run(&[cmd, "n.toml", "-q"].iter().take(if cmd == "run" { 3 } else { 2 }).copied().collect::<Vec<_>>(), &dir);
            assert_eq!(o.status.code(), Some(3), "name {name:?} with {cmd}: {}", text(&o));
            assert!(text(&o).contains("name:"), "{}", text(&o));
            assert!(!text(&o).contains('\u{1b}'), "escape codes echoed");
        }
    }
    assert_eq!(std::fs::read_to_string(dir.join("src/lib.rs")).unwrap(), "// precious");
    assert_eq!(entries(&dir.join("output")), ["earlier.txt"]);
    // Without a name, a file name with odd characters still gives a safe folder name.
    std::fs::write(dir.join("my case (v2).toml"), hxgrid::case::STARTER.replace("name = \"starter-double-pipe\"", "")).unwrap();
    let o = run(&["run", "my case (v2).toml", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    complete(&dir.join("output/my_case__v2_"));
}

fn toml_string(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            c if c.is_control() => out.push_str(&format!("\\u{:04X}", c as u32)),
            c => out.push(c),
        }
    }
    out + "\""
}

#[test]
fn closed_standard_output_is_a_normal_end() {
    let dir = scratch("pipe");
    let c = case(&dir, 40);
    // The reading end closes before hxgrid prints anything: a broken pipe, as with `| head -1`.
    let mut child = bin().args(["run", c.to_str().unwrap(), "--out", "res"]).current_dir(&dir).stdout(Stdio::piped()).stderr(Stdio::piped()).spawn().unwrap();
    drop(child.stdout.take());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", text(&o));
    assert!(!text(&o).contains("panicked"));
    complete(&dir.join("res"));
}

/// Wait until `cond` holds (or fail after `limit`).
fn wait_for(limit: Duration, mut cond: impl FnMut() -> bool) {
    let start = Instant::now();
    while !cond() {
        assert!(start.elapsed() < limit, "timed out");
        std::thread::sleep(Duration::from_millis(5));
    }
}

#[test]
fn a_kill_at_any_moment_leaves_a_complete_folder_visible() {
    let dir = scratch("kill");
    let small = case(&dir, 50);
    let o = run(&["run", small.to_str().unwrap(), "--out", "res", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert_eq!(complete(&dir.join("res")), 50);
    let big = case(&dir, 60_000);
    let big = big.to_str().unwrap();

    // Killed at the swap itself (the pause holds it just before the exchange).
    let mut child =
        bin().args(["run", big, "--out", "res", "-q", "--all-cells"]).current_dir(&dir).env("HXGRID_TEST_PAUSE", "before-swap:20000").spawn().unwrap();
    wait_for(Duration::from_secs(60), || {
        entries(&dir).iter().any(|n| n.starts_with(".res.hxgrid-staging-")) && {
            let s = entries(&dir).into_iter().find(|n| n.starts_with(".res.hxgrid-staging-")).unwrap();
            dir.join(&s).join("pressure.svg").exists()
        }
    });
    std::thread::sleep(Duration::from_millis(300));
    child.kill().unwrap();
    child.wait().unwrap();
    assert_eq!(complete(&dir.join("res")), 50, "the old folder is still there, whole");

    // Killed at moments spread over a whole run (solving, writing the files, swapping),
    // timed from one uninterrupted run into another folder.
    let start = Instant::now();
    let timed = scratch("timed");
    let o = run(&["run", big, "--out", timed.join("res").to_str().unwrap(), "-q", "--all-cells"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let whole = start.elapsed();
    drop(timed);
    for k in 1..=12 {
        let mut child = bin().args(["run", big, "--out", "res", "-q", "--all-cells"]).current_dir(&dir).spawn().unwrap();
        std::thread::sleep(whole.mul_f64(k as f64 / 12.0));
        let _ = child.kill();
        child.wait().unwrap();
        let cells = complete(&dir.join("res"));
        assert!(cells == 50 || cells == 60_000, "{cells}");
    }

    // The next run cleans up what the killed ones left and writes its own results.
    let o = run(&["run", small.to_str().unwrap(), "--out", "res", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert_eq!(complete(&dir.join("res")), 50);
    let left: Vec<String> = entries(&dir).into_iter().filter(|n| n.starts_with('.')).collect();
    assert!(left.is_empty(), "stale staging folders remain: {left:?}");
}

#[test]
fn without_an_atomic_exchange_an_interrupted_swap_is_restored_by_the_next_run() {
    let dir = scratch("twostep");
    let c = case(&dir, 50);
    let c = c.to_str().unwrap();
    let o = run(&["run", c, "--out", "res", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    let mut child = bin()
        .args(["run", c, "--out", "res", "-q"])
        .current_dir(&dir)
        .env("HXGRID_TEST_NO_EXCHANGE", "1")
        .env("HXGRID_TEST_PAUSE", "between-renames:20000")
        .spawn()
        .unwrap();
    wait_for(Duration::from_secs(60), || entries(&dir).iter().any(|n| n.starts_with(".res.hxgrid-old-")));
    child.kill().unwrap();
    child.wait().unwrap();
    assert!(!dir.join("res").exists(), "killed between the two renames");
    // The next run restores the old folder, then replaces it.
    let o = run(&["run", c, "--out", "res", "-q"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    complete(&dir.join("res"));
    let left: Vec<String> = entries(&dir).into_iter().filter(|n| n.starts_with('.')).collect();
    assert!(left.is_empty(), "{left:?}");
}

#[test]
fn concurrent_runs_to_one_folder_all_succeed() {
    let dir = scratch("concurrent");
    let c = case(&dir, 400);
    let c = c.to_str().unwrap();
    for round in 0..3 {
        let children: Vec<_> = (0..6).map(|_| bin().args(["run", c, "--out", "res", "-q"]).current_dir(&dir).stderr(Stdio::piped()).spawn().unwrap()).collect();
        for child in children {
            let o = child.wait_with_output().unwrap();
            assert!(o.status.success(), "round {round}: {}", text(&o));
        }
        assert_eq!(complete(&dir.join("res")), 400);
        assert_eq!(entries(&dir), ["c.toml", "res"], "round {round}: nothing left beside the folder");
    }
}

#[test]
fn large_grids_thin_the_profile_file_unless_asked() {
    let dir = scratch("thin");
    let body = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join("cases/constant-property-check.toml"))
        .unwrap()
        .replace("cells = 400", "cells = 50000");
    std::fs::write(dir.join("big.toml"), body).unwrap();
    let o = run(&["run", "big.toml", "--out", "thin"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert!(text(&o).contains("--all-cells"), "the thinning is said: {}", text(&o));
    let rows = std::fs::read_to_string(dir.join("thin/profiles.csv")).unwrap().lines().count() - 1;
    assert!(rows <= hxgrid::output::PROFILE_ROWS + 1 && rows > 10_000, "{rows}");
    let summary: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(dir.join("thin/summary.json")).unwrap()).unwrap();
    assert_eq!(summary["profile_csv_stride"], 3);
    // Plots are bounded too: a few thousand points a curve, not fifty thousand.
    let svg = std::fs::metadata(dir.join("thin/temperatures.svg")).unwrap().len();
    assert!(svg < 600_000, "{svg} bytes");
    let o = run(&["run", "big.toml", "--out", "all", "-q", "--all-cells"], &dir);
    assert!(o.status.success(), "{}", text(&o));
    assert_eq!(complete(&dir.join("all")), 50_000);
}

/// `hxgrid new` never writes through a link, even a dangling one (it would create a file
/// wherever the link points), and never overwrites.
#[cfg(unix)]
#[test]
fn new_never_follows_a_link() {
    let dir = scratch("newlink");
    std::os::unix::fs::symlink(dir.join("elsewhere.toml"), dir.join("link.toml")).unwrap();
    let o = run(&["new", "link.toml"], &dir);
    assert_eq!(o.status.code(), Some(3), "{}", text(&o));
    assert!(!dir.join("elsewhere.toml").exists());
}

/// Test scratch folders clean up only what is theirs: a symbolic link inside to a folder
/// elsewhere is removed as a link, the folder it points to and its file stay; and a scratch
/// path that no longer names the folder the test made (moved away, another folder put in its
/// place) is left alone on drop.
#[test]
fn scratch_cleanup_removes_only_its_own_folder() {
    let outside = common::Scratch::new("scratch-outside");
    std::fs::write(outside.join("keep.txt"), "not the scratch folder's").unwrap();
    let inner = common::Scratch::new("scratch-with-link");
    let inner_path = inner.to_path_buf();
    std::os::unix::fs::symlink(&*outside, inner.join("link")).unwrap();
    std::fs::create_dir(inner.join("sub")).unwrap();
    std::os::unix::fs::symlink(outside.join("keep.txt"), inner.join("sub/file-link")).unwrap();
    drop(inner);
    assert!(!inner_path.exists(), "the scratch folder itself is removed");
    assert_eq!(std::fs::read_to_string(outside.join("keep.txt")).unwrap(), "not the scratch folder's");

    let moved = common::Scratch::new("scratch-moved");
    let path = moved.to_path_buf();
    let away = outside.join("moved-away");
    std::fs::rename(&path, &away).unwrap();
    std::fs::create_dir(&path).unwrap();
    std::fs::write(path.join("someone-elses.txt"), "x").unwrap();
    drop(moved);
    assert!(path.join("someone-elses.txt").is_file(), "a folder put in its place is not the scratch folder");
    assert!(away.is_dir(), "the moved folder is not chased");
    std::fs::remove_file(path.join("someone-elses.txt")).unwrap();
    std::fs::remove_dir(&path).unwrap();
}

/// No source file removes a whole tree: hxgrid deletes only the files its marker lists and
/// then the empty folder (`output::folder`), and test scratch folders use their own guarded
/// walk (`src/scratch.rs`). Regression: test clean-up once used `remove_dir_all`.
#[test]
fn no_source_file_removes_a_whole_tree() {
    let mut stack = vec![std::path::PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("src")];
    let mut seen = 0;
    while let Some(dir) = stack.pop() {
        for entry in std::fs::read_dir(&dir).unwrap() {
            let path = entry.unwrap().path();
            if path.is_dir() {
                stack.push(path);
            } else if path.extension().is_some_and(|e| e == "rs") {
                let text = std::fs::read_to_string(&path).unwrap();
                assert!(!text.contains(concat!("remove_dir", "_all")), "{} removes a whole tree", path.display());
                seen += 1;
            }
        }
    }
    assert!(seen > 30);
}
