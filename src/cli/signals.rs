//! SIGINT and SIGTERM during a run: the first one sets a flag that the run
//! checks between draws, so it stops on a whole record, ends the saved
//! section with its trailer and says how many draws were saved; a second
//! signal ends the process at once (the default action).

use std::sync::atomic::{AtomicBool, Ordering};

static INTERRUPTED: AtomicBool = AtomicBool::new(false);

/// True once SIGINT or SIGTERM has arrived.
pub fn interrupted() -> bool {
    INTERRUPTED.load(Ordering::SeqCst)
}

#[cfg(unix)]
extern "C" fn on_signal(sig: libc::c_int) {
    // Only async-signal-safe work here: an atomic store and a reset of
    // the handler, so that a second signal ends the process.
    INTERRUPTED.store(true, Ordering::SeqCst);
    // SAFETY: signal(2) is async-signal-safe; SIG_DFL is a valid action.
    unsafe {
        libc::signal(sig, libc::SIG_DFL);
    }
}

/// Installs the handler for SIGINT and SIGTERM (Unix; elsewhere a no-op,
/// and an interrupt ends the process as before).
pub fn install() {
    #[cfg(unix)]
    {
        let handler = on_signal as extern "C" fn(libc::c_int) as libc::sighandler_t;
        // SAFETY: `on_signal` has the C signature signal(2) expects and
        // does only async-signal-safe work.
        unsafe {
            libc::signal(libc::SIGINT, handler);
            libc::signal(libc::SIGTERM, handler);
        }
    }
}
