//! Solver benchmarks (filled in below).
fn main() {}
