//! Streams: a solution flowing at a rate. Mixing adds the reaction invariants weighted by flow.

use crate::chem::{CompositionError, Solution};
use crate::real::Real;

/// Highest flow accepted anywhere, L/h (a sanity bound, 10⁷ L/h = 10 000 m³/h).
pub const MAX_FLOW_L_PER_H: f64 = 1e7;

/// A solution flowing at `flow_l_per_h`.
#[derive(Clone, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Stream<R: Real, const N: usize> {
    /// What flows.
    pub solution: Solution<R, N>,
    /// Flow, L/h (0–[`MAX_FLOW_L_PER_H`]).
    pub flow_l_per_h: R,
}

/// Checks a flow: finite and within 0–[`MAX_FLOW_L_PER_H`] L/h.
pub fn check_flow<R: Real>(flow_l_per_h: R) -> Result<R, CompositionError> {
    let f = flow_l_per_h.to_f64();
    if f.is_finite() && (0.0..=MAX_FLOW_L_PER_H).contains(&f) {
        Ok(flow_l_per_h)
    } else {
        Err(CompositionError::InvalidFlow)
    }
}

impl<R: Real, const N: usize> Stream<R, N> {
    /// A stream; the flow must be finite and within 0–[`MAX_FLOW_L_PER_H`] L/h.
    pub fn new(solution: Solution<R, N>, flow_l_per_h: R) -> Result<Self, CompositionError> {
        Ok(Self { solution, flow_l_per_h: check_flow(flow_l_per_h)? })
    }

    /// Joins `other` into this stream: flows add, totals and strong ions are flow-weighted
    /// (see [`Solution::mix`]). The result keeps this stream's capacity `N`.
    pub fn join<const M: usize>(&self, other: &Stream<R, M>) -> Result<Self, CompositionError> {
        let solution = self.solution.mix(self.flow_l_per_h, &other.solution, other.flow_l_per_h)?;
        Self::new(solution, self.flow_l_per_h + other.flow_l_per_h)
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
        let s = Stream::new(a, 900.0).unwrap().join(&Stream::new(b, 100.0).unwrap()).unwrap();
        assert_eq!(s.flow_l_per_h, 1000.0);
        // mol/h in = mol/h out.
        assert!((s.solution.total_of("carbonate") * 1000.0 - 0.003 * 900.0).abs() < 1e-12);
        assert!((s.solution.strong_charge_eq_per_l() * 1000.0 - (0.003 * 900.0 + 0.5 * 100.0)).abs() < 1e-12);
        assert!(Stream::new(Solution::<f64, 1>::standard(), -1.0).is_err());
        assert!(Stream::new(Solution::<f64, 1>::standard(), f64::INFINITY).is_err());
    }
}
