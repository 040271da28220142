//! How long runs report how far they got, from any stage (a terminal bar in the binary).

/// Where long runs report how far they got (a terminal progress bar in the binary). Units of
/// work: one per series, plus one per bootstrap replicate.
pub trait Progress: Sync {
    /// `n` more units are done.
    fn advance(&self, n: u64);
}

/// No progress reporting.
impl Progress for () {
    fn advance(&self, _: u64) {}
}
