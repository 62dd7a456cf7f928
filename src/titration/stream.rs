//! Streams: a solution flowing at a rate. Mixing adds the reaction invariants weighted by flow.

use crate::chem::{CompositionError, Solution};
use crate::real::Real;
use crate::units::LitresPerHour;

pub use crate::units::MAX_FLOW_L_PER_H;

/// A solution flowing at a checked flow.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Stream<R: Real, const N: usize> {
    /// What flows.
    pub solution: Solution<R, N>,
    /// How fast (0–[`MAX_FLOW_L_PER_H`] L/h, checked by its type).
    pub flow: LitresPerHour<R>,
}

impl<R: Real, const N: usize> Stream<R, N> {
    /// A stream of `solution` at `flow`.
    pub fn new(solution: Solution<R, N>, flow: LitresPerHour<R>) -> Self {
        Self { solution, flow }
    }

    /// Joins `other` into this stream: flows add, totals and strong ions are flow-weighted
    /// (see [`Solution::mix`]). The result keeps this stream's capacity `N`; a joined flow
    /// above [`MAX_FLOW_L_PER_H`] is refused with both flows.
    pub fn join<const M: usize>(&self, other: &Stream<R, M>) -> Result<Self, CompositionError> {
        let (a, b) = (self.flow.l_per_h(), other.flow.l_per_h());
        let solution = self.solution.mix(a, &other.solution, b)?;
        let flow = LitresPerHour::new(a + b)
            .map_err(|_| CompositionError::InvalidFlow { first_l_per_h: a.to_f64(), second_l_per_h: b.to_f64() })?;
        Ok(Self::new(solution, flow))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn joining_streams_adds_flows_and_conserves_moles() {
        let mut a: Solution<f64, 4> = Solution::standard();
        a.add_formula("NaHCO3", 0.003).unwrap();
        let mut b: Solution<f64, 2> = Solution::standard();
        b.add_formula("NaOH", 0.5).unwrap();
        let flow = |q: f64| LitresPerHour::new(q).unwrap();
        let s = Stream::new(a, flow(900.0)).join(&Stream::new(b, flow(100.0))).unwrap();
        assert_eq!(s.flow.l_per_h(), 1000.0);
        // mol/h in = mol/h out.
        assert!((s.solution.total_of("carbonate") * 1000.0 - 0.003 * 900.0).abs() < 1e-12);
        assert!((s.solution.strong_charge_eq_per_l() * 1000.0 - (0.003 * 900.0 + 0.5 * 100.0)).abs() < 1e-12);
        let big = Stream::new(Solution::<f64, 1>::standard(), flow(9e6));
        assert!(matches!(big.join(&big), Err(CompositionError::InvalidFlow { first_l_per_h: 9e6, .. })));
    }
}
