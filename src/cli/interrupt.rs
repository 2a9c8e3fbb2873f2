//! Ctrl-C (SIGINT) and SIGTERM (what Slurm and Kubernetes send to stop a
//! task): ask the run to stop, and make sure the process is gone within a
//! second, leaving no partial file behind.
//!
//! Owns: the process-wide cancel flag that the command line's progress
//! observer reports through `run::Progress::cancelled`, the list of
//! temporary files being written, and the signal handler. The engine checks
//! the flag before every trial, so a run normally stops by itself within a
//! trial's time; if it has not stopped after [`GRACE`] (a long linear
//! program, a huge trial), the handler removes the temporary files and ends
//! the process. Files a user asked for are only ever renamed into place
//! whole, so earlier reports and shard files are never touched.
//! May use: `ctrlc`, std.

use std::io::{BufWriter, Write};
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

use super::UserError;

static CANCELLED: AtomicBool = AtomicBool::new(false);
static TEMPS: Mutex<Vec<PathBuf>> = Mutex::new(Vec::new());

/// How long the handler waits for the run to stop by itself.
pub const GRACE: Duration = Duration::from_millis(600);

/// Exit status after an interruption (128 + SIGINT, as shells report it).
pub const EXIT_INTERRUPTED: u8 = 130;

/// The message printed when a run was stopped.
pub const MESSAGE: &str = "interrupted: the run was stopped; no output or file was written";

/// Install the handler (once per process; later calls do nothing).
pub fn install() {
    let _ = ctrlc::set_handler(|| {
        let again = CANCELLED.swap(true, Ordering::SeqCst);
        if !again {
            std::thread::sleep(GRACE);
        }
        remove_temps();
        let _ = writeln!(std::io::stderr(), "{MESSAGE}");
        std::process::exit(i32::from(EXIT_INTERRUPTED));
    });
}

/// Whether a stop was asked for.
pub fn cancelled() -> bool {
    CANCELLED.load(Ordering::Relaxed)
}

fn temps() -> std::sync::MutexGuard<'static, Vec<PathBuf>> {
    TEMPS
        .lock()
        .unwrap_or_else(std::sync::PoisonError::into_inner)
}

fn remove_temps() {
    for p in temps().drain(..) {
        let _ = std::fs::remove_file(p);
    }
}

/// A file being written: a temporary file beside the target, renamed over
/// it only when complete, removed on failure, drop or interruption.
pub struct TempOut {
    target: PathBuf,
    tmp: PathBuf,
    file: Option<BufWriter<std::fs::File>>,
}

impl TempOut {
    /// Start writing `target`.
    ///
    /// # Errors
    /// When the temporary file cannot be created.
    pub fn create(target: &Path) -> Result<Self, UserError> {
        let tmp = crate::fit::plot::temp_beside(target)
            .ok_or_else(|| UserError(format!("{}: not a file name", target.display())))?;
        if target.is_dir() {
            return Err(UserError(format!(
                "{} is a folder; give a file name for the output",
                target.display()
            )));
        }
        temps().push(tmp.clone());
        let file = std::fs::File::create(&tmp).map_err(|e| {
            temps().retain(|p| p != &tmp);
            UserError(format!("cannot write {}: {e}", target.display()))
        })?;
        Ok(TempOut {
            target: target.to_path_buf(),
            tmp,
            file: Some(BufWriter::with_capacity(1 << 20, file)),
        })
    }

    /// The writer of the temporary file.
    pub fn writer(&mut self) -> &mut BufWriter<std::fs::File> {
        self.file.as_mut().expect("writer used after commit")
    }

    /// Flush, sync and rename over the target, unless a stop was asked for.
    ///
    /// # Errors
    /// When a step fails (the temporary file is then removed), or
    /// `interrupted` after a stop.
    pub fn commit(mut self) -> Result<(), UserError> {
        let file = self.file.take().expect("committed once");
        let fail =
            |e: std::io::Error| UserError(format!("cannot write {}: {e}", self.target.display()));
        let f = file.into_inner().map_err(|e| fail(e.into_error()))?;
        f.sync_all().map_err(fail)?;
        drop(f);
        if cancelled() {
            return Err(UserError("interrupted".into()));
        }
        std::fs::rename(&self.tmp, &self.target).map_err(fail)?;
        temps().retain(|p| p != &self.tmp);
        Ok(())
    }
}

impl Drop for TempOut {
    fn drop(&mut self) {
        // Not committed (or the rename failed): remove the temporary file.
        self.file = None;
        if self.tmp.exists() {
            let _ = std::fs::remove_file(&self.tmp);
        }
        temps().retain(|p| p != &self.tmp);
    }
}
