//! Files a user asked for, written so that a failure or an interruption
//! never leaves half a file behind: each goes to a temporary file (or
//! folder) beside its target first and is renamed into place only whole.
//!
//! Owns: the temporary name beside a target, writing a file whole or
//! through a [`TempFile`] that is renamed over its target on
//! [`TempFile::commit`], staging folders ([`TempDir`]), and the
//! process-wide list of temporaries being written, which the command
//! line's interrupt handler removes ([`remove_temporaries`]) before it ends
//! the process.
//! May use: std only.

use std::fs::File;
use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::{Mutex, MutexGuard, PoisonError};

/// Temporary files and folders being written now.
static TEMPORARIES: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

fn temporaries() -> MutexGuard<'static, Vec<PathBuf>> {
    TEMPORARIES.lock().unwrap_or_else(PoisonError::into_inner)
}

fn forget(path: &Path) {
    temporaries().retain(|p| p != path);
}

/// Remove every temporary file and folder being written (for an
/// interruption: the process ends right after).
pub fn remove_temporaries() {
    remove_listed(|_| true);
}

/// Remove the listed temporaries that `which` picks, and take them off the
/// list.
fn remove_listed(which: impl Fn(&Path) -> bool) {
    temporaries().retain(|p| {
        if !which(p) {
            return true;
        }
        let _ = if p.is_dir() {
            std::fs::remove_dir_all(p)
        } else {
            std::fs::remove_file(p)
        };
        false
    });
}

/// The temporary file beside `path` that an atomic write of it goes
/// through: `.NAME.tmp-PID` in the same folder (so the rename stays on one
/// file system). `None` when `path` has no file name.
pub fn temp_beside(path: &Path) -> Option<PathBuf> {
    let name = path.file_name()?;
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    Some(dir.join(format!(
        ".{}.tmp-{}",
        name.to_string_lossy(),
        std::process::id()
    )))
}

/// Create `path` and write `bytes` to it, synced to the disk.
///
/// # Errors
/// When a step fails.
pub fn write_synced(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let mut f = File::create(path)?;
    f.write_all(bytes)?;
    f.sync_all()
}

/// Write `bytes` to `path` atomically: to its temporary file, synced, then
/// renamed over the target.
///
/// # Errors
/// When `path` names no file or folder entry, or a step fails (the
/// temporary file is then removed).
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let mut f = TempFile::create(path)?;
    f.writer().write_all(bytes)?;
    f.commit()
}

/// A file being written: a temporary file beside the target, renamed over
/// it only by [`TempFile::commit`], removed on failure or drop, and on the
/// list [`remove_temporaries`] clears while it exists.
pub struct TempFile {
    target: PathBuf,
    tmp: PathBuf,
    file: Option<BufWriter<File>>,
}

impl TempFile {
    /// Start writing `target`.
    ///
    /// # Errors
    /// `InvalidInput` when `target` has no file name or is a folder, or the
    /// error creating the temporary file.
    pub fn create(target: &Path) -> std::io::Result<Self> {
        let invalid = |why: &str| std::io::Error::new(std::io::ErrorKind::InvalidInput, why);
        let tmp = temp_beside(target).ok_or_else(|| invalid("not a file name"))?;
        if target.is_dir() {
            return Err(invalid("it is a folder; give a file name"));
        }
        temporaries().push(tmp.clone());
        let file = File::create(&tmp).inspect_err(|_| forget(&tmp))?;
        Ok(TempFile {
            target: target.to_path_buf(),
            tmp,
            file: Some(BufWriter::with_capacity(1 << 20, file)),
        })
    }

    /// The writer of the temporary file.
    ///
    /// # Panics
    /// Never: the writer is only taken by `commit`, which consumes `self`.
    pub fn writer(&mut self) -> &mut BufWriter<File> {
        self.file
            .as_mut()
            .expect("the writer is taken only by commit")
    }

    /// Flush and sync the temporary file and rename it over the target.
    ///
    /// # Errors
    /// When a step fails; the temporary file is then removed.
    pub fn commit(mut self) -> std::io::Result<()> {
        let file = self.file.take().expect("commit consumes the file");
        let f = file.into_inner().map_err(|e| e.into_error())?;
        f.sync_all()?;
        drop(f);
        std::fs::rename(&self.tmp, &self.target)?;
        forget(&self.tmp);
        Ok(())
    }
}

impl Drop for TempFile {
    fn drop(&mut self) {
        // Not committed, or the rename failed: remove the temporary file.
        self.file = None;
        if self.tmp.exists() {
            let _ = std::fs::remove_file(&self.tmp);
        }
        forget(&self.tmp);
    }
}

/// A staging folder: created empty (an old one of the same name is
/// removed first), removed with what it holds on drop, and on the list
/// [`remove_temporaries`] clears while it exists.
pub struct TempDir {
    path: PathBuf,
}

impl TempDir {
    /// Create the folder `path`.
    ///
    /// # Errors
    /// When it cannot be created.
    pub fn create(path: &Path) -> std::io::Result<Self> {
        if path.exists() {
            let _ = std::fs::remove_dir_all(path);
        }
        temporaries().push(path.to_path_buf());
        std::fs::create_dir(path).inspect_err(|_| forget(path))?;
        Ok(TempDir {
            path: path.to_path_buf(),
        })
    }

    /// The folder.
    pub fn path(&self) -> &Path {
        &self.path
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.path);
        forget(&self.path);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn folder(tag: &str) -> PathBuf {
        let d = std::env::temp_dir().join(format!("wearout-files-{tag}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&d);
        std::fs::create_dir_all(&d).unwrap();
        d
    }

    fn names(dir: &Path) -> Vec<String> {
        let mut v: Vec<String> = std::fs::read_dir(dir)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        v.sort();
        v
    }

    #[test]
    fn an_atomic_write_replaces_the_file_and_leaves_nothing_else() {
        let dir = folder("atomic");
        let p = dir.join("a.svg");
        write_atomic(&p, b"one").unwrap();
        write_atomic(&p, b"two").unwrap();
        assert_eq!(std::fs::read(&p).unwrap(), b"two");
        assert_eq!(names(&dir), vec!["a.svg"]);
        assert!(write_atomic(&dir.join("no/such/dir/x.svg"), b"x").is_err());
        assert!(write_atomic(&dir, b"x").is_err(), "a folder is no file");
        std::fs::remove_dir_all(&dir).unwrap();
    }

    #[test]
    fn unfinished_files_and_folders_are_on_the_list_until_done() {
        let dir = folder("list");
        let target = dir.join("out.shard");
        std::fs::write(&target, "earlier").unwrap();
        let mut f = TempFile::create(&target).unwrap();
        f.writer().write_all(b"half").unwrap();
        let staging = TempDir::create(&dir.join(".staging")).unwrap();
        std::fs::write(staging.path().join("index.html"), "x").unwrap();
        let tmp = temp_beside(&target).unwrap();
        {
            let list = temporaries();
            assert!(list.contains(&tmp) && list.contains(&dir.join(".staging")));
        }
        // An interruption: both go, the earlier file stays as it was. (Only
        // this test's, as other tests of this process write files too.)
        remove_listed(|p| p.starts_with(&dir));
        assert_eq!(names(&dir), vec!["out.shard"]);
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "earlier");
        drop((f, staging));
        // A write that completes leaves nothing on the list.
        let mut f = TempFile::create(&target).unwrap();
        f.writer().write_all(b"whole").unwrap();
        f.commit().unwrap();
        assert_eq!(std::fs::read_to_string(&target).unwrap(), "whole");
        assert!(!temporaries().contains(&tmp));
        std::fs::remove_dir_all(&dir).unwrap();
    }
}
