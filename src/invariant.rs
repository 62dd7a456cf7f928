//! Invariants the code relies on, checked loudly in debug and test builds and panic-free in
//! release builds.
//!
//! Library code may not index a slice (`clippy::indexing_slicing` is denied: an out-of-bounds
//! index panics). Where an index is in bounds by construction (a loop over a fixed-size matrix,
//! a component slot the same function just filled), [`at`] reads it: in debug and test builds a
//! broken invariant fails the test at once (`debug_assert!`); in release builds, which the
//! link-time no-panic proof covers, it returns `T::default()` instead of panicking. Everything
//! that can fail for a *caller's* reason returns a typed error instead; this module is only for
//! the crate's own invariants.

/// `slice[index]`, with the bound asserted in debug and test builds (see the module docs).
#[inline]
pub(crate) fn at<T: Copy + Default>(slice: &[T], index: usize) -> T {
    debug_assert!(index < slice.len(), "invariant broken: index {index} out of bounds (len {})", slice.len());
    slice.get(index).copied().unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn in_bounds_reads() {
        let v = [1.0_f64, 2.0, 3.0];
        assert_eq!(at(&v, 2), 3.0);
    }

    #[test]
    #[cfg(debug_assertions)]
    #[should_panic(expected = "invariant broken")]
    fn a_broken_invariant_fails_loudly_in_tests() {
        let v = [1.0_f64];
        let _ = at(&v, 1);
    }
}
