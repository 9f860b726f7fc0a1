//! Scratch folders for tests (compiled only into tests: the library's unit tests and, through
//! `tests/common`, the integration tests).
//!
//! A scratch folder is always created new — a name already taken is skipped, never cleared.
//! When dropped it is removed only if the path still names the very folder this process
//! created (same device and inode, not a link), and it is emptied by a walk that removes a
//! symbolic link itself (never what it points to) and never crosses onto another file system
//! (a mount inside is left in place, with the folders above it). Nothing outside the folder
//! a test made can be removed, whatever was put inside it; std's whole-tree removal is never called.

use std::ffi::OsStr;
use std::os::unix::fs::MetadataExt;
use std::path::{Path, PathBuf};

/// A folder this process created, removed with everything in it when dropped.
#[derive(Debug)]
pub struct Scratch {
    path: PathBuf,
    identity: (u64, u64),
}

impl Scratch {
    /// A new, empty folder under the system's temporary folder, named after `label`.
    pub fn new(label: &str) -> Self {
        for n in 0u32.. {
            let path = std::env::temp_dir().join(format!("hxgrid-test-{label}-{}-{n}", std::process::id()));
            match std::fs::create_dir(&path) {
                Ok(()) => {
                    let meta = std::fs::symlink_metadata(&path).expect("just created");
                    return Self { path, identity: (meta.dev(), meta.ino()) };
                }
                Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
                Err(e) => panic!("cannot create a scratch folder {}: {e}", path.display()),
            }
        }
        unreachable!("some name is free")
    }
}

impl std::ops::Deref for Scratch {
    type Target = Path;
    fn deref(&self) -> &Path {
        &self.path
    }
}

impl AsRef<Path> for Scratch {
    fn as_ref(&self) -> &Path {
        &self.path
    }
}

impl AsRef<OsStr> for Scratch {
    fn as_ref(&self) -> &OsStr {
        self.path.as_os_str()
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let same = std::fs::symlink_metadata(&self.path).is_ok_and(|m| m.is_dir() && (m.dev(), m.ino()) == self.identity);
        if same {
            remove_tree(&self.path, self.identity.0);
        }
    }
}

/// Empty and remove `dir`, a real folder on device `dev`: files and symbolic links are
/// unlinked (a link's target is untouched), sub-folders on the same device emptied first;
/// a folder on another device (a mount point) is left, so its parents stay too. Errors
/// leave things in place.
fn remove_tree(dir: &Path, dev: u64) {
    let Ok(entries) = std::fs::read_dir(dir) else { return };
    for entry in entries.flatten() {
        let path = entry.path();
        let Ok(meta) = std::fs::symlink_metadata(&path) else { continue };
        if meta.is_dir() {
            if meta.dev() == dev {
                remove_tree(&path, dev);
            }
        } else {
            let _ = std::fs::remove_file(&path);
        }
    }
    let _ = std::fs::remove_dir(dir);
}
