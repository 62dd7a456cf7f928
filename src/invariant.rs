//! Invariants the code relies on, checked loudly in debug and test builds and panic-free in
//! release builds.
//!
//! Library code may not index a slice (`clippy::indexing_slicing` is denied: an out-of-bounds
//! index panics). Where an index is in bounds by construction (a loop over a fixed-size matrix,
//! a component slot the same function just filled), [`at`] reads it and [`set`] writes it (and
//! [`at2`] / [`set2`] for a row-major matrix); where a library call would panic on a broken
//! invariant, [`holds`] guards it. In debug and test builds a broken invariant fails the test at
//! once (`debug_assert!`); in release builds, which the link-time no-panic proof covers, a read
//! returns `T::default()`, a write is dropped and a guard returns `false` instead of panicking.
//! Everything that can fail for a *caller's* reason returns a typed error instead; this module
//! is only for the crate's own invariants.

/// `slice[index]`, with the bound asserted in debug and test builds (see the module docs).
#[inline]
pub(crate) fn at<T: Copy + Default>(slice: &[T], index: usize) -> T {
    debug_assert!(index < slice.len(), "invariant broken: index {index} out of bounds (len {})", slice.len());
    slice.get(index).copied().unwrap_or_default()
}

/// `slice[index] = value`, with the bound asserted in debug and test builds (see the module docs).
#[inline]
pub(crate) fn set<T>(slice: &mut [T], index: usize, value: T) {
    debug_assert!(index < slice.len(), "invariant broken: index {index} out of bounds (len {})", slice.len());
    if let Some(x) = slice.get_mut(index) {
        *x = value;
    }
}

/// `matrix[row][col]`, with both bounds asserted in debug and test builds.
#[inline]
pub(crate) fn at2<T: Copy + Default, const C: usize>(matrix: &[[T; C]], row: usize, col: usize) -> T {
    debug_assert!(row < matrix.len(), "invariant broken: row {row} out of bounds (rows {})", matrix.len());
    matrix.get(row).map(|r| at(r, col)).unwrap_or_default()
}

/// `matrix[row][col] = value`, with both bounds asserted in debug and test builds.
#[inline]
pub(crate) fn set2<T, const C: usize>(matrix: &mut [[T; C]], row: usize, col: usize, value: T) {
    debug_assert!(row < matrix.len(), "invariant broken: row {row} out of bounds (rows {})", matrix.len());
    if let Some(r) = matrix.get_mut(row) {
        set(r, col, value);
    }
}

/// `condition`, asserted in debug and test builds; the caller skips the guarded call when it is
/// `false` (only in a release build with a broken invariant).
#[inline]
pub(crate) fn holds(condition: bool, invariant: &str) -> bool {
    debug_assert!(condition, "invariant broken: {invariant}");
    condition
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn in_bounds_reads_and_writes() {
        let mut v = [1.0_f64, 2.0, 3.0];
        assert_eq!(at(&v, 2), 3.0);
        set(&mut v, 1, 5.0);
        assert_eq!(v, [1.0, 5.0, 3.0]);
        let mut m = [[1.0_f64, 2.0], [3.0, 4.0], [5.0, 6.0]];
        assert_eq!(at2(&m, 2, 1), 6.0);
        set2(&mut m, 1, 0, 7.0);
        assert_eq!(m, [[1.0, 2.0], [7.0, 4.0], [5.0, 6.0]]);
        assert!(holds(m.len() == 3, "three rows"));
    }

    #[test]
    #[cfg(debug_assertions)]
    #[should_panic(expected = "invariant broken: two rows")]
    fn a_broken_guard_fails_loudly_in_tests() {
        let _ = holds([0; 3].len() == 2, "two rows");
    }

    #[test]
    #[cfg(debug_assertions)]
    #[should_panic(expected = "invariant broken")]
    fn a_broken_invariant_fails_loudly_in_tests() {
        let v = [1.0_f64];
        let _ = at(&v, 1);
    }

    #[test]
    #[cfg(debug_assertions)]
    #[should_panic(expected = "invariant broken")]
    fn a_write_out_of_bounds_fails_loudly_in_tests() {
        let mut v = [1.0_f64];
        set(&mut v, 1, 2.0);
    }

    #[test]
    #[cfg(debug_assertions)]
    #[should_panic(expected = "invariant broken")]
    fn a_matrix_row_out_of_bounds_fails_loudly_in_tests() {
        let m = [[1.0_f64; 2]; 2];
        let _ = at2(&m, 2, 0);
    }

    #[test]
    #[cfg(debug_assertions)]
    #[should_panic(expected = "invariant broken")]
    fn a_matrix_column_out_of_bounds_fails_loudly_in_tests() {
        let mut m = [[1.0_f64; 2]; 2];
        set2(&mut m, 0, 2, 3.0);
    }

    #[test]
    #[cfg(not(debug_assertions))]
    fn release_builds_read_the_default_and_drop_the_write() {
        let mut m = [[1.0_f64; 2]; 2];
        assert_eq!(at(&m[0], 2), 0.0);
        assert_eq!(at2(&m, 2, 0), 0.0);
        set2(&mut m, 2, 0, 3.0);
        set2(&mut m, 0, 2, 3.0);
        assert_eq!(m, [[1.0; 2]; 2]);
        assert!(!holds(m.len() == 3, "three rows"));
    }
}
