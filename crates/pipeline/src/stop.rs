//! A request to stop a running job cleanly, set from outside: by a signal handler (SIGINT,
//! SIGTERM, as batch schedulers send at the wall-time limit) or by a test.

use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::Arc;

/// Shared stop flag: 0 while the job may go on, else the number of the signal that asked it
/// to stop. Setting it is one atomic store, safe inside a signal handler.
#[derive(Clone, Debug, Default)]
pub struct StopRequest(Arc<AtomicUsize>);

impl StopRequest {
    pub fn new() -> StopRequest {
        StopRequest::default()
    }

    /// The atomic a signal handler stores the signal number into.
    pub fn flag(&self) -> Arc<AtomicUsize> {
        Arc::clone(&self.0)
    }

    /// Asks the job to stop, as signal `signal` would.
    pub fn request(&self, signal: usize) {
        self.0.store(signal.max(1), Ordering::SeqCst);
    }

    /// The signal that asked the job to stop, if any.
    pub fn requested(&self) -> Option<usize> {
        match self.0.load(Ordering::SeqCst) {
            0 => None,
            signal => Some(signal),
        }
    }
}

/// The name of a signal number (SIGINT and SIGTERM have the same numbers on every POSIX system).
pub fn signal_name(signal: usize) -> String {
    match signal {
        2 => "SIGINT".to_string(),
        15 => "SIGTERM".to_string(),
        other => format!("signal {other}"),
    }
}
