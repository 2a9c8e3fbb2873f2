//! Ctrl-C (SIGINT) and SIGTERM (what Slurm and Kubernetes send to stop a
//! task): ask the run to stop, and make sure the process is gone within a
//! second, leaving no partial file behind.
//!
//! Owns: the process-wide cancel flag that the command line's progress
//! observer reports through `run::Progress::cancelled`, and the signal
//! handler. The engine checks the flag before every trial, so a run
//! normally stops by itself within a trial's time; if it has not stopped
//! after [`GRACE`] (a long linear program, a huge trial), the handler
//! removes the temporary files and folders being written (the library's
//! `files` keeps their list) and ends the process. Files a user asked for
//! are only ever renamed into place whole, so earlier reports, plots and
//! shard files are never touched.
//! May use: `ctrlc`, `wearout::files`, std.

use std::io::Write;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Duration;

static CANCELLED: AtomicBool = AtomicBool::new(false);

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
        wearout::files::remove_temporaries();
        let _ = writeln!(std::io::stderr(), "{MESSAGE}");
        std::process::exit(i32::from(EXIT_INTERRUPTED));
    });
}

/// Whether a stop was asked for.
pub fn cancelled() -> bool {
    CANCELLED.load(Ordering::Relaxed)
}
