//! Ctrl-C (SIGINT) and SIGTERM: the first signal raises a flag that the engine checks between
//! chunks of batches, so a run stops at a clean point, writes partial results and a checkpoint,
//! and exits with code 130. A second signal ends the process at once (output files are written
//! atomically, so none is left truncated).

use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::OnceLock;

static FLAG: AtomicBool = AtomicBool::new(false);
static INSTALLED: OnceLock<()> = OnceLock::new();

/// The stop flag, with the signal handler installed on first use.
pub fn flag() -> &'static AtomicBool {
    INSTALLED.get_or_init(|| {
        let _ = ctrlc::set_handler(|| {
            if FLAG.swap(true, Ordering::SeqCst) {
                std::process::exit(130);
            }
            eprintln!("\ninterrupt: finishing the current batches, then writing partial results and a checkpoint");
        });
    });
    &FLAG
}

/// A run stopped by a signal (exit code 130).
#[derive(Debug, thiserror::Error)]
#[error("interrupted: partial results and a checkpoint are in {0}; continue with `tether-risk simulate --resume {0}`")]
pub struct Interrupted(pub String);

/// A sweep stopped by a signal (exit code 130); its finished points are kept.
#[derive(Debug, thiserror::Error)]
#[error("interrupted: {done} of {total} sweep points are finished and kept in {dir}/points; continue with `tether-risk sweep --resume {dir}`")]
pub struct SweepInterrupted {
    /// The sweep folder.
    pub dir: String,
    /// Points finished.
    pub done: usize,
    /// Points in the grid.
    pub total: usize,
}
