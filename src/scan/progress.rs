//! Progress reporting hooks; the scan calls them, the CLI decides how to show them.

/// Receives progress from long stages. Implementations must be cheap and thread-safe.
pub trait Progress: Sync {
    /// A new stage with `total` steps begins.
    fn stage(&self, name: &str, total: u64);
    /// `steps` more steps of the current stage are done.
    fn advance(&self, steps: u64);
    /// All stages are done.
    fn finish(&self);
}

/// Reports nothing (tests, library use, `--quiet`).
pub struct Silent;

impl Progress for Silent {
    fn stage(&self, _name: &str, _total: u64) {}
    fn advance(&self, _steps: u64) {}
    fn finish(&self) {}
}
