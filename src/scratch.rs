//! Scratch folders for tests (compiled only into tests: the library's unit tests and, through
//! `tests/common`, the integration tests).
//!
//! A scratch folder is always created new — a name already taken is skipped, never cleared —
//! and when dropped it is removed only if the path still names the very folder this process
//! created (same device and inode, not a link): no test ever deletes a folder it did not make.

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
        let ours = std::fs::symlink_metadata(&self.path).is_ok_and(|m| m.is_dir() && (m.dev(), m.ino()) == self.identity);
        if ours {
            let _ = std::fs::remove_dir_all(&self.path);
        }
    }
}
