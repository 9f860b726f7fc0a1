//! Results folders: hxgrid replaces only folders it wrote, and a reader always sees either
//! the complete old folder or the complete new one.
//!
//! - Every results folder holds a marker file, [`MARKER`], naming the tool, the format and
//!   the files hxgrid wrote there. A destination is replaced only if it is absent, an empty
//!   folder, or a folder whose marker lists every entry in it. Anything else (a file, a link,
//!   a folder of someone else's files, a results folder the user has added files to) is
//!   refused before solving, so nothing that hxgrid did not write is deleted or hidden.
//! - A run writes into a staging folder `.<name>.hxgrid-staging-<pid>-<seq>` beside the
//!   destination (the marker first), then swaps it into place under a lock on the parent
//!   folder: one `renameat2(RENAME_EXCHANGE)` on Linux, so the destination never disappears;
//!   elsewhere (or on a file system without exchange) two renames through
//!   `.<name>.hxgrid-old-<pid>-<seq>`, which the next run restores if a kill fell between them.
//! - Staging and old folders left by processes that no longer exist are cleaned up by the
//!   next run writing beside them (only if they carry hxgrid's marker).
//! - Removing a folder deletes only the files its marker lists, the marker and the then
//!   empty folder (`remove_own_folder`): hxgrid never removes a whole tree.
//! - Concurrent writers to one folder each stage their own files; the swap is serialised by
//!   an advisory lock (`flock`) on the parent folder, so the last to finish wins and none fail.

use super::OutputError;
use std::fs;
use std::path::{Path, PathBuf};
use std::sync::atomic::{AtomicU64, Ordering};

/// Name of the marker file inside every results folder.
pub const MARKER: &str = ".hxgrid-results";
/// First line of the marker file.
const MARKER_HEADER: &str = "hxgrid results folder";
/// Version of the results-folder layout, recorded in the marker.
pub const FORMAT: u32 = 1;

const STAGING: &str = "hxgrid-staging";
const OLD: &str = "hxgrid-old";

fn io(path: &Path) -> impl FnOnce(std::io::Error) -> OutputError + '_ {
    move |source| OutputError::Io { path: path.display().to_string(), source }
}

/// The marker's text for a folder holding `files`.
fn marker_text(files: &[&str]) -> String {
    let mut s = format!(
        "{MARKER_HEADER}\ntool: hxgrid {}\nformat: {FORMAT}\n# hxgrid replaces this folder as a whole on its next run here, and only while it holds\n# nothing but the files listed below.\n",
        env!("CARGO_PKG_VERSION")
    );
    for f in files {
        s.push_str("file: ");
        s.push_str(f);
        s.push('\n');
    }
    s
}

/// The files a marker lists, or None if `dir` has no valid hxgrid marker.
fn marker_files(dir: &Path) -> Option<Vec<String>> {
    let path = dir.join(MARKER);
    let meta = fs::symlink_metadata(&path).ok()?;
    if !meta.is_file() || meta.len() > 64 * 1024 {
        return None;
    }
    let text = fs::read_to_string(&path).ok()?;
    let mut lines = text.lines();
    if lines.next()? != MARKER_HEADER {
        return None;
    }
    Some(lines.filter_map(|l| l.strip_prefix("file: ")).map(str::to_string).collect())
}

/// Why a folder may not be replaced: None if it is hxgrid's own (or empty).
fn foreign_entries(dir: &Path) -> Result<Option<Vec<String>>, OutputError> {
    let listed = marker_files(dir);
    let mut foreign = Vec::new();
    for entry in fs::read_dir(dir).map_err(io(dir))? {
        let entry = entry.map_err(io(dir))?;
        let name = entry.file_name().to_string_lossy().into_owned();
        let ours = match &listed {
            Some(files) => {
                let is_file = entry.file_type().map(|t| t.is_file()).unwrap_or(false);
                name == MARKER || (is_file && files.contains(&name))
            }
            None => false,
        };
        if !ours {
            foreign.push(name);
        }
    }
    foreign.sort();
    Ok((!foreign.is_empty()).then_some(foreign))
}

/// Check that results may be written to `dir`: it is absent, an empty folder, or a folder
/// hxgrid wrote and nobody has added to. Call before solving, so a refusal costs nothing.
pub fn check_destination(dir: &Path) -> Result<(), OutputError> {
    let shown = dir.display().to_string();
    if dir.file_name().is_none() {
        return Err(OutputError::NotAFolderName { path: shown });
    }
    let meta = match fs::symlink_metadata(dir) {
        Ok(m) => m,
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => return Ok(()),
        Err(e) => return Err(io(dir)(e)),
    };
    if meta.file_type().is_symlink() {
        return Err(OutputError::NotOurs { path: shown, reason: "it is a symbolic link".into() });
    }
    if !meta.is_dir() {
        return Err(OutputError::NotOurs { path: shown, reason: "it is a file, not a folder".into() });
    }
    match foreign_entries(dir)? {
        None => Ok(()),
        Some(names) => {
            let has_marker = marker_files(dir).is_some();
            let list = names.iter().take(5).map(|n| crate::text::quote(n, 40)).collect::<Vec<_>>().join(", ");
            let more = if names.len() > 5 { format!(" and {} more", names.len() - 5) } else { String::new() };
            let reason = if has_marker {
                format!("it holds files hxgrid did not write there: {list}{more}")
            } else {
                format!("it is not an hxgrid results folder (no {MARKER} marker) and holds {list}{more}")
            };
            Err(OutputError::NotOurs { path: shown, reason })
        }
    }
}

/// Remove a folder hxgrid wrote: the files its marker lists, the marker, then the folder
/// itself — never anything else. If anything else is inside (a file someone put there after
/// the last check), the folder is kept, renamed to a visible `<name>.kept-<tag>` beside it
/// if it sits under a hidden staging name, so nothing that hxgrid did not write is deleted
/// or hidden.
fn remove_own_folder(path: &Path) -> Result<(), OutputError> {
    let listed = marker_files(path).unwrap_or_default();
    for name in listed.iter().map(String::as_str).chain([MARKER]) {
        // Only plain names (no separators): the marker is hxgrid's, but never trust a path.
        if name.contains('/') || name.contains('\\') || name == ".." || name == "." {
            continue;
        }
        let file = path.join(name);
        if fs::symlink_metadata(&file).is_ok_and(|m| m.is_file()) {
            fs::remove_file(&file).map_err(io(&file))?;
        }
    }
    match fs::remove_dir(path) {
        Ok(()) => Ok(()),
        Err(_) if path.exists() => {
            // Not empty: something that is not ours. Keep it where a person sees it.
            let visible = path.file_name().map(|n| n.to_string_lossy().trim_start_matches('.').to_string()).unwrap_or_default();
            let kept = path.with_file_name(format!("{visible}.kept"));
            if !kept.exists() {
                let _ = fs::rename(path, &kept);
            }
            Ok(())
        }
        Err(e) => Err(io(path)(e)),
    }
}

/// A unique suffix for this process's staging folders.
fn suffix() -> String {
    static SEQ: AtomicU64 = AtomicU64::new(0);
    format!("{}-{}", std::process::id(), SEQ.fetch_add(1, Ordering::Relaxed))
}

/// Milliseconds to pause at a named point, for the fault-injection tests only
/// (`HXGRID_TEST_PAUSE=before-swap:2000` or `between-renames:2000`).
fn test_pause(point: &str) {
    if let Ok(v) = std::env::var("HXGRID_TEST_PAUSE") {
        if let Some(ms) = v.strip_prefix(point).and_then(|r| r.strip_prefix(':')).and_then(|m| m.parse::<u64>().ok()) {
            std::thread::sleep(std::time::Duration::from_millis(ms.min(60_000)));
        }
    }
}

/// Write results into `dir` through a staging folder (see the module header). `files` are
/// the names `fill` writes; they are recorded in the marker.
pub fn write_folder(dir: &Path, files: &[&str], fill: impl FnOnce(&Path) -> Result<(), OutputError>) -> Result<(), OutputError> {
    check_destination(dir)?;
    let leaf = dir.file_name().expect("checked above").to_string_lossy().into_owned();
    let parent = match dir.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    fs::create_dir_all(&parent).map_err(io(&parent))?;
    let tag = suffix();
    let staging = parent.join(format!(".{leaf}.{STAGING}-{tag}"));
    fs::create_dir(&staging).map_err(io(&staging))?;
    let filled = fs::write(staging.join(MARKER), marker_text(files)).map_err(io(&staging)).and_then(|()| fill(&staging));
    if let Err(e) = filled {
        let _ = remove_own_folder(&staging);
        return Err(e);
    }
    let lock = lock_folder(&parent)?;
    let swapped = swap(dir, &staging, &parent, &leaf, &tag);
    if swapped.is_err() && staging.exists() && marker_files(&staging).is_some() {
        let _ = remove_own_folder(&staging);
    }
    drop(lock);
    swapped
}

/// Under the lock: clean up after dead writers, re-check the destination, swap.
fn swap(dir: &Path, staging: &Path, parent: &Path, leaf: &str, tag: &str) -> Result<(), OutputError> {
    recover_stale(dir, parent, leaf);
    // Another writer may have changed it while this one was writing.
    check_destination(dir)?;
    test_pause("before-swap");
    if fs::symlink_metadata(dir).is_err() {
        return fs::rename(staging, dir).map_err(io(dir));
    }
    match exchange(staging, dir) {
        Ok(()) => {
            // The staging path now holds the old folder, checked above to be hxgrid's own.
            remove_own_folder(staging)
        }
        Err(_) => {
            // No atomic exchange here: two renames, restored by the next run if interrupted.
            let old = parent.join(format!(".{leaf}.{OLD}-{tag}"));
            fs::rename(dir, &old).map_err(io(dir))?;
            test_pause("between-renames");
            if let Err(e) = fs::rename(staging, dir) {
                let _ = fs::rename(&old, dir);
                return Err(io(dir)(e));
            }
            remove_own_folder(&old)
        }
    }
}

/// Atomically exchange two paths (Linux `renameat2(RENAME_EXCHANGE)`).
#[cfg(target_os = "linux")]
fn exchange(a: &Path, b: &Path) -> std::io::Result<()> {
    use std::ffi::CString;
    use std::os::unix::ffi::OsStrExt;
    if std::env::var_os("HXGRID_TEST_NO_EXCHANGE").is_some() {
        return Err(std::io::Error::from(std::io::ErrorKind::Unsupported));
    }
    let ca = CString::new(a.as_os_str().as_bytes())?;
    let cb = CString::new(b.as_os_str().as_bytes())?;
    // SAFETY: both pointers are valid NUL-terminated paths for the duration of the call.
    let rc = unsafe { libc::renameat2(libc::AT_FDCWD, ca.as_ptr(), libc::AT_FDCWD, cb.as_ptr(), libc::RENAME_EXCHANGE) };
    if rc == 0 {
        Ok(())
    } else {
        Err(std::io::Error::last_os_error())
    }
}

#[cfg(not(target_os = "linux"))]
fn exchange(_: &Path, _: &Path) -> std::io::Result<()> {
    Err(std::io::Error::from(std::io::ErrorKind::Unsupported))
}

/// An exclusive advisory lock on a folder, held until dropped.
fn lock_folder(parent: &Path) -> Result<fs::File, OutputError> {
    let f = fs::File::open(parent).map_err(io(parent))?;
    f.lock().map_err(io(parent))?;
    Ok(f)
}

/// Is process `pid` still running?
fn alive(pid: u32) -> bool {
    if pid == std::process::id() {
        return true;
    }
    #[cfg(unix)]
    {
        // SAFETY: signal 0 only checks that the process exists.
        let rc = unsafe { libc::kill(pid as libc::pid_t, 0) };
        rc == 0 || std::io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
    }
    #[cfg(not(unix))]
    {
        true
    }
}

/// Clean up staging and old folders for `leaf` left by writers that died; restore an old
/// folder whose replacement never arrived.
fn recover_stale(dir: &Path, parent: &Path, leaf: &str) {
    let Ok(entries) = fs::read_dir(parent) else { return };
    for entry in entries.flatten() {
        let name = entry.file_name().to_string_lossy().into_owned();
        let Some(rest) = name.strip_prefix(&format!(".{leaf}.")) else { continue };
        let (kind, tag) = match rest.split_once('-').and_then(|(a, b)| b.split_once('-').map(|(c, d)| (format!("{a}-{c}"), d.to_string()))) {
            Some(x) => x,
            None => continue,
        };
        if kind != STAGING && kind != OLD {
            continue;
        }
        let Some(pid) = tag.split('-').next().and_then(|p| p.parse::<u32>().ok()) else { continue };
        if alive(pid) {
            continue;
        }
        let path = entry.path();
        // Only a folder carrying hxgrid's marker is hxgrid's: a staging folder gets it
        // straight after it is made, so even an empty folder with this name is left alone
        // (it may be someone's; at worst it is an empty leftover of a kill in that instant).
        if marker_files(&path).is_none() {
            continue;
        }
        if kind == OLD && fs::symlink_metadata(dir).is_err() {
            let _ = fs::rename(&path, dir);
        } else {
            let _ = remove_own_folder(&path);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    use crate::scratch::Scratch;

    fn scratch(name: &str) -> Scratch {
        Scratch::new(&format!("folder-{name}"))
    }

    fn write(dir: &Path, body: &str) -> Result<(), OutputError> {
        write_folder(dir, &["a.txt"], |s| fs::write(s.join("a.txt"), body).map_err(io(s)))
    }

    #[test]
    fn replaces_its_own_folder_and_refuses_anyone_elses() {
        let root = scratch("own");
        let dir = root.join("res");
        write(&dir, "one").unwrap();
        write(&dir, "two").unwrap();
        assert_eq!(fs::read_to_string(dir.join("a.txt")).unwrap(), "two");
        // Nothing left beside it.
        assert_eq!(fs::read_dir(&root).unwrap().count(), 1);
        // A user's file added inside: refused, the file kept.
        fs::write(dir.join("notes.txt"), "mine").unwrap();
        assert!(matches!(write(&dir, "three"), Err(OutputError::NotOurs { .. })));
        assert_eq!(fs::read_to_string(dir.join("notes.txt")).unwrap(), "mine");
        // A folder of someone else's files, and a file: refused and untouched.
        let theirs = root.join("letters");
        fs::create_dir(&theirs).unwrap();
        fs::write(theirs.join("letter.txt"), "dear").unwrap();
        assert!(matches!(write(&theirs, "x"), Err(OutputError::NotOurs { .. })));
        assert_eq!(fs::read_to_string(theirs.join("letter.txt")).unwrap(), "dear");
        let file = root.join("file.txt");
        fs::write(&file, "keep").unwrap();
        assert!(matches!(write(&file, "x"), Err(OutputError::NotOurs { .. })));
        assert_eq!(fs::read_to_string(&file).unwrap(), "keep");
        // An empty folder may be used.
        let empty = root.join("empty");
        fs::create_dir(&empty).unwrap();
        write(&empty, "ok").unwrap();
    }

    #[test]
    fn a_failed_fill_leaves_the_old_folder_and_no_staging() {
        let root = scratch("fail");
        let dir = root.join("res");
        write(&dir, "good").unwrap();
        let r = write_folder(&dir, &["a.txt"], |_| Err(OutputError::NonFinite { what: "x".into() }));
        assert!(r.is_err());
        assert_eq!(fs::read_to_string(dir.join("a.txt")).unwrap(), "good");
        assert_eq!(fs::read_dir(&root).unwrap().count(), 1);
    }

    #[test]
    fn stale_folders_of_dead_writers_are_cleaned_and_an_interrupted_swap_restored() {
        let root = scratch("stale");
        let dir = root.join("res");
        write(&dir, "old").unwrap();
        // A dead writer's staging folder (pid 0x7ffffff0 does not exist) and an old folder
        // whose swap was interrupted after the first rename.
        let dead = 0x7fff_fff0u32;
        let staging = root.join(format!(".res.{STAGING}-{dead}-0"));
        fs::create_dir(&staging).unwrap();
        fs::write(staging.join(MARKER), marker_text(&["a.txt"])).unwrap();
        fs::rename(&dir, root.join(format!(".res.{OLD}-{dead}-1"))).unwrap();
        // A user's own dotted folder with a similar name is left alone.
        let lookalike = root.join(format!(".res.{STAGING}-{dead}-2"));
        fs::create_dir(&lookalike).unwrap();
        fs::write(lookalike.join("mine.txt"), "x").unwrap();
        recover_stale(&dir, &root, "res");
        assert_eq!(fs::read_to_string(dir.join("a.txt")).unwrap(), "old");
        assert!(!staging.exists());
        assert!(lookalike.join("mine.txt").exists());
    }

    #[test]
    fn removing_a_folder_deletes_only_the_files_it_lists() {
        let root = scratch("own-removal");
        let dir = root.join(".res.hxgrid-old-1-0");
        fs::create_dir(&dir).unwrap();
        fs::write(dir.join(MARKER), marker_text(&["a.txt", "../escape.txt"])).unwrap();
        fs::write(dir.join("a.txt"), "ours").unwrap();
        fs::write(root.join("escape.txt"), "not ours").unwrap();
        fs::write(dir.join("stray.txt"), "someone else's").unwrap();
        remove_own_folder(&dir).unwrap();
        // Ours went; the stray file stays, in a visible folder; a listed path outside is ignored.
        assert!(!dir.exists());
        assert_eq!(fs::read_to_string(root.join("res.hxgrid-old-1-0.kept/stray.txt")).unwrap(), "someone else's");
        assert!(!root.join("res.hxgrid-old-1-0.kept/a.txt").exists());
        assert_eq!(fs::read_to_string(root.join("escape.txt")).unwrap(), "not ours");
    }
}
