//! Ctrl-C (SIGINT) and SIGTERM: the first signal raises a flag (and the engine's process-wide
//! stop request) that the engine polls between histories and every 1024 events inside one, so a
//! run stops within a fraction of a second at a clean point, writes partial results and a checkpoint,
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
            tether_risk::engine::request_stop();
            if FLAG.swap(true, Ordering::SeqCst) {
                std::process::exit(130);
            }
            eprintln!("\ninterrupt: stopping; writing the finished batches and a checkpoint");
        });
    });
    &FLAG
}

/// A run stopped by a signal (exit code 130).
#[derive(Debug, thiserror::Error)]
#[error("interrupted: partial results and a checkpoint are in {0}; continue with `tether-risk simulate --resume {0}`")]
pub struct Interrupted(pub String);

/// A command other than `simulate` stopped by a signal (exit code 130); the text says what was
/// kept.
#[derive(Debug, thiserror::Error)]
#[error("interrupted: {0}")]
pub struct Stopped(pub String);

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
