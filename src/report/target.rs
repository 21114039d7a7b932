//! Where a report will land, decided by file identity rather than path text.
//!
//! A path such as `nosuch/../data.xlsx` names the input workbook once the
//! folder `nosuch` exists, and a second mount of a folder (a bind mount, one
//! network share mounted twice) names the same file by another path. So the
//! question "would this write replace the input or the job file?" is asked
//! of the files themselves: a target that exists is compared with each
//! protected file by device and inode, and a target that does not exist yet
//! is first resolved the way the operating system will resolve it once its
//! missing folders are created.

use std::path::{Component, Path, PathBuf};

/// The identity of an existing file: device and inode on Unix, the
/// canonical path elsewhere.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FileIdentity(Identity);

#[cfg(unix)]
type Identity = (u64, u64);
#[cfg(not(unix))]
type Identity = PathBuf;

impl FileIdentity {
    /// The identity of the file `path` names (following symbolic links),
    /// or `None` when it does not exist or cannot be examined.
    pub fn of(path: &Path) -> Option<FileIdentity> {
        #[cfg(unix)]
        {
            use std::os::unix::fs::MetadataExt;
            std::fs::metadata(path)
                .ok()
                .map(|m| FileIdentity((m.dev(), m.ino())))
        }
        #[cfg(not(unix))]
        {
            path.canonicalize().ok().map(FileIdentity)
        }
    }

    /// The identity of an open file.
    pub fn of_open(file: &std::fs::File) -> Option<FileIdentity> {
        #[cfg(unix)]
        {
            use std::os::unix::fs::MetadataExt;
            file.metadata()
                .ok()
                .map(|m| FileIdentity((m.dev(), m.ino())))
        }
        #[cfg(not(unix))]
        {
            let _ = file;
            None
        }
    }
}

/// The path `path` will name once its missing folders are created: the
/// longest existing part resolved by the operating system (symbolic links
/// and `..` included), the rest applied as plain folder names, where `..`
/// after a folder that does not exist yet simply steps back out of it.
pub fn resolved(path: &Path) -> PathBuf {
    let mut base = match std::env::current_dir() {
        Ok(dir) if path.is_relative() => dir,
        _ => PathBuf::new(),
    };
    // Folders below `base` that do not exist yet.
    let mut missing: Vec<std::ffi::OsString> = Vec::new();
    for part in path.components() {
        match part {
            Component::Prefix(_) | Component::RootDir => {
                base = PathBuf::from(part.as_os_str());
                missing.clear();
            }
            Component::CurDir => {}
            Component::ParentDir => {
                if missing.pop().is_none() {
                    // `base` exists and is resolved, so its parent is the
                    // folder `..` names.
                    base.pop();
                }
            }
            Component::Normal(name) => {
                let next = base.join(name);
                if missing.is_empty() && std::fs::symlink_metadata(&next).is_ok() {
                    base = next.canonicalize().unwrap_or(next);
                } else {
                    missing.push(name.to_os_string());
                }
            }
        }
    }
    missing.iter().fold(base, |path, name| path.join(name))
}

/// Whether writing to `target` would replace one of `protected`: the same
/// file by identity, once `target` is resolved as it will be.
pub fn is_one_of(target: &Path, protected: &[FileIdentity]) -> bool {
    let found = FileIdentity::of(target).or_else(|| FileIdentity::of(&resolved(target)));
    found.is_some_and(|id| protected.contains(&id))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn dot_dot_through_a_missing_folder_reaches_the_file_beside_it() {
        let dir = tempfile::tempdir().unwrap();
        let input = dir.path().join("data.xlsx");
        std::fs::write(&input, b"input").unwrap();
        let via_missing = dir.path().join("nosuch").join("..").join("data.xlsx");
        assert!(!via_missing.exists(), "the OS cannot resolve it yet");
        let protected = [FileIdentity::of(&input).unwrap()];
        assert!(is_one_of(&via_missing, &protected));
        let deeper = dir.path().join("a/b/../../data.xlsx");
        assert!(is_one_of(&deeper, &protected));
        let elsewhere = dir.path().join("nosuch/data.xlsx");
        assert!(!is_one_of(&elsewhere, &protected));
    }

    #[cfg(unix)]
    #[test]
    fn symbolic_and_hard_links_are_the_same_file() {
        let dir = tempfile::tempdir().unwrap();
        let input = dir.path().join("data.xlsx");
        std::fs::write(&input, b"input").unwrap();
        let protected = [FileIdentity::of(&input).unwrap()];
        let hard = dir.path().join("hard.xlsx");
        std::fs::hard_link(&input, &hard).unwrap();
        assert!(is_one_of(&hard, &protected));
        std::fs::create_dir(dir.path().join("real")).unwrap();
        std::os::unix::fs::symlink(dir.path(), dir.path().join("real/up")).unwrap();
        let through_link = dir.path().join("real/up/nosuch/../data.xlsx");
        assert!(is_one_of(&through_link, &protected));
    }
}
