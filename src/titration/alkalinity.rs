//! Alkalinity and acidity: from a composition (model) and from a titration with strong acid
//! (fixed endpoints, the low-alkalinity two-endpoint method, and the Gran method).
//!
//! Endpoints follow Standard Methods 2320 B: phenolphthalein alkalinity to pH 8.3, total
//! alkalinity to pH 4.5 (checked, via US EPA Region 9 SOP 560, "based on Standard Method 2320");
//! for low alkalinity a second endpoint 0.3 pH lower and T = (2B − C)·N/V (endpoint checked in
//! the same SOP; the formula from memory of SM 2320 B.4.d).

use crate::chem::{Solution, SolveError};
use crate::real::Real;

/// Phenolphthalein-alkalinity endpoint, pH (SM 2320 B).
pub const PHENOLPHTHALEIN_ENDPOINT_PH: f64 = 8.3;
/// Total-alkalinity endpoint, pH (SM 2320 B).
pub const TOTAL_ENDPOINT_PH: f64 = 4.5;
/// Second endpoint offset of the low-alkalinity method, pH (SM 2320 B).
pub const LOW_ALKALINITY_OFFSET_PH: f64 = 0.3;
/// mg of CaCO3 per milliequivalent: M(CaCO3)/2 = 100.086/2 (IUPAC atomic weights, calc).
pub const MG_CACO3_PER_MEQ: f64 = 50.043;
/// Gran method, default window: points with pH in [`GRAN_MIN_PH`, `GRAN_MAX_PH`] are used —
/// past the total-alkalinity endpoint, where excess strong acid dominates. The 3–4 window is the
/// default of the Calkulate library (Humphreys & Matthews, v23.7.1, `solve_pH_gran`); the lower
/// limit keeps points where a sulfuric-acid titrant is partly HSO4⁻ (which F does not count,
/// so the line bends and the alkalinity reads low) out of the fit.
pub const GRAN_MAX_PH: f64 = 4.0;
/// Lower end of the default Gran window, pH (see [`GRAN_MAX_PH`]).
pub const GRAN_MIN_PH: f64 = 3.0;

/// mmol/L of charge (meq/L) to mg/L as CaCO3.
pub fn mg_per_l_as_caco3<R: Real>(meq_per_l: R) -> R {
    meq_per_l * R::from_f64(MG_CACO3_PER_MEQ)
}

/// mg/L as CaCO3 to meq/L.
pub fn meq_per_l_from_caco3<R: Real>(mg_per_l: R) -> R {
    mg_per_l / R::from_f64(MG_CACO3_PER_MEQ)
}

/// Acid-neutralising capacity of `sample` to `endpoint_ph`, eq/L: the strong acid per litre of
/// sample that brings it to the endpoint (water terms included, activity as the sample's mode,
/// at the sample's own ionic strength). Negative when the sample is already below the endpoint
/// (then −value is its acidity to that endpoint).
pub fn capacity_to_endpoint_eq_per_l<R: Real, const N: usize>(
    sample: &Solution<R, N>,
    endpoint_ph: R,
) -> Result<R, SolveError> {
    let eq = sample.solve()?;
    Ok(sample.charge_excess_eq_per_l(endpoint_ph, eq.ionic_strength_mol_per_l))
}

/// Phenolphthalein (P) and total (T) alkalinity of a composition.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Alkalinity<R: Real> {
    /// P alkalinity, eq/L (0 when the sample is below pH 8.3).
    pub phenolphthalein_eq_per_l: R,
    /// T alkalinity, eq/L (0 when the sample is below pH 4.5; see `acidity_eq_per_l`).
    pub total_eq_per_l: R,
    /// Mineral acidity to pH 4.5, eq/L (0 when the sample is above 4.5).
    pub acidity_eq_per_l: R,
}

impl<R: Real> Alkalinity<R> {
    /// Total alkalinity in mg/L as CaCO3.
    pub fn total_mg_per_l_as_caco3(&self) -> R {
        mg_per_l_as_caco3(self.total_eq_per_l * R::from_f64(1000.0))
    }
    /// Phenolphthalein alkalinity in mg/L as CaCO3.
    pub fn phenolphthalein_mg_per_l_as_caco3(&self) -> R {
        mg_per_l_as_caco3(self.phenolphthalein_eq_per_l * R::from_f64(1000.0))
    }
}

/// P and T alkalinity of a composition (SM 2320 endpoints).
pub fn alkalinity<R: Real, const N: usize>(sample: &Solution<R, N>) -> Result<Alkalinity<R>, SolveError> {
    let p = capacity_to_endpoint_eq_per_l(sample, R::from_f64(PHENOLPHTHALEIN_ENDPOINT_PH))?;
    let t = capacity_to_endpoint_eq_per_l(sample, R::from_f64(TOTAL_ENDPOINT_PH))?;
    Ok(Alkalinity {
        phenolphthalein_eq_per_l: p.max(R::ZERO),
        total_eq_per_l: t.max(R::ZERO),
        acidity_eq_per_l: (-t).max(R::ZERO),
    })
}

/// One point of a lab titration with strong acid: acid volume added (L) and the pH read.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct AcidPoint<R: Real> {
    /// Titrant added, L (ascending along the data).
    pub titrant_l: R,
    /// pH read.
    pub ph: R,
}

/// Why an alkalinity could not be read from titration data.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum TitrationDataError {
    /// Sample volume or titrant normality not finite or ≤ 0.
    InvalidSetup,
    /// The data never cross the endpoint (or are not in ascending titrant order).
    EndpointNotReached,
    /// Fewer than three usable points in the Gran window, or they lie on no usable line.
    TooFewGranPoints,
}

impl core::fmt::Display for TitrationDataError {
    fn fmt(&self, f: &mut core::fmt::Formatter<'_>) -> core::fmt::Result {
        f.write_str(match self {
            Self::InvalidSetup => "sample volume and titrant normality must be finite and positive",
            Self::EndpointNotReached => "the titration data do not cross the endpoint",
            Self::TooFewGranPoints => "the Gran method needs at least three points in its pH window on a falling line",
        })
    }
}

impl core::error::Error for TitrationDataError {}

fn check_setup<R: Real>(sample_volume_l: R, normality_eq_per_l: R) -> Result<(), TitrationDataError> {
    let (v, n) = (sample_volume_l.to_f64(), normality_eq_per_l.to_f64());
    if v.is_finite() && v > 0.0 && n.is_finite() && n > 0.0 { Ok(()) } else { Err(TitrationDataError::InvalidSetup) }
}

/// Titrant volume (L) at which the pH first falls to `endpoint_ph`, by linear interpolation
/// between the two bracketing points. One pass over the data.
pub fn volume_at_endpoint<R: Real>(data: &[AcidPoint<R>], endpoint_ph: R) -> Result<R, TitrationDataError> {
    let mut prev: Option<&AcidPoint<R>> = None;
    for p in data {
        if let Some(a) = prev {
            if p.titrant_l < a.titrant_l {
                return Err(TitrationDataError::EndpointNotReached);
            }
            if a.ph >= endpoint_ph && p.ph <= endpoint_ph {
                if a.ph == p.ph {
                    return Ok(a.titrant_l);
                }
                return Ok(a.titrant_l + (p.titrant_l - a.titrant_l) * (a.ph - endpoint_ph) / (a.ph - p.ph));
            }
        } else if p.ph <= endpoint_ph {
            return Ok(p.titrant_l);
        }
        prev = Some(p);
    }
    Err(TitrationDataError::EndpointNotReached)
}

/// Alkalinity (eq/L) to a fixed endpoint from titration data: A·N/V (SM 2320 B; multiply by
/// 1000·[`MG_CACO3_PER_MEQ`] for mg/L as CaCO3, the "A·N·50 000/V" of the method).
pub fn fixed_endpoint_eq_per_l<R: Real>(
    data: &[AcidPoint<R>],
    sample_volume_l: R,
    normality_eq_per_l: R,
    endpoint_ph: R,
) -> Result<R, TitrationDataError> {
    check_setup(sample_volume_l, normality_eq_per_l)?;
    Ok(volume_at_endpoint(data, endpoint_ph)? * normality_eq_per_l / sample_volume_l)
}

/// Low-alkalinity total alkalinity (eq/L): endpoints B at 4.5 and C at 4.2; T = (2B − C)·N/V.
pub fn low_alkalinity_eq_per_l<R: Real>(
    data: &[AcidPoint<R>],
    sample_volume_l: R,
    normality_eq_per_l: R,
) -> Result<R, TitrationDataError> {
    check_setup(sample_volume_l, normality_eq_per_l)?;
    let b = volume_at_endpoint(data, R::from_f64(TOTAL_ENDPOINT_PH))?;
    let c = volume_at_endpoint(data, R::from_f64(TOTAL_ENDPOINT_PH - LOW_ALKALINITY_OFFSET_PH))?;
    Ok((R::from_f64(2.0) * b - c) * normality_eq_per_l / sample_volume_l)
}

/// Result of a Gran analysis.
#[derive(Clone, Copy, Debug, PartialEq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
pub struct Gran<R: Real> {
    /// Equivalence volume, L (the Gran line's intercept with F = 0).
    pub equivalence_l: R,
    /// Total alkalinity, eq/L (equivalence volume × N / V).
    pub total_eq_per_l: R,
    /// Points used.
    pub points: u32,
    /// Slope of F = (V0 + v)·10^(−pH) against v, L·(mol/L)/L; ≈ N/γ(H⁺) for a good electrode.
    pub slope: R,
}

/// The Gran method (Gran 1952, Analyst 77, 661; from memory): past the endpoint,
/// F = (V0 + v)·10^(−pH) = N·(v − v_e)/γ is linear in v; its zero is the equivalence volume.
/// Least squares over the points with pH in [[`GRAN_MIN_PH`], [`GRAN_MAX_PH`]]. One pass.
pub fn gran<R: Real>(
    data: &[AcidPoint<R>],
    sample_volume_l: R,
    normality_eq_per_l: R,
) -> Result<Gran<R>, TitrationDataError> {
    gran_in_window(data, sample_volume_l, normality_eq_per_l, R::from_f64(GRAN_MIN_PH), R::from_f64(GRAN_MAX_PH))
}

/// [`gran`] over the points with pH in [`min_ph`, `max_ph`] (pass −∞ for no lower limit).
pub fn gran_in_window<R: Real>(
    data: &[AcidPoint<R>],
    sample_volume_l: R,
    normality_eq_per_l: R,
    min_ph: R,
    max_ph: R,
) -> Result<Gran<R>, TitrationDataError> {
    check_setup(sample_volume_l, normality_eq_per_l)?;
    let (mut n, mut sx, mut sy, mut sxx, mut sxy) = (0_u32, R::ZERO, R::ZERO, R::ZERO, R::ZERO);
    let in_window = |p: &&AcidPoint<R>| p.ph <= max_ph && p.ph >= min_ph && p.ph.is_finite() && p.titrant_l.is_finite();
    for p in data.iter().filter(in_window) {
        let f = (sample_volume_l + p.titrant_l) * (-p.ph).exp10();
        n += 1;
        sx += p.titrant_l;
        sy += f;
        sxx += p.titrant_l * p.titrant_l;
        sxy += p.titrant_l * f;
    }
    if n < 3 {
        return Err(TitrationDataError::TooFewGranPoints);
    }
    let nr = R::from_f64(f64::from(n));
    let denom = nr * sxx - sx * sx;
    if denom <= R::ZERO {
        return Err(TitrationDataError::TooFewGranPoints);
    }
    let slope = (nr * sxy - sx * sy) / denom;
    let intercept = (sy - slope * sx) / nr;
    if slope <= R::ZERO {
        return Err(TitrationDataError::TooFewGranPoints);
    }
    let ve = -intercept / slope;
    Ok(Gran { equivalence_l: ve, total_eq_per_l: ve * normality_eq_per_l / sample_volume_l, points: n, slope })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::chem::Activity;
    use crate::titration::{CurvePoint, Titration};
    use crate::units::Celsius;

    /// Borehole make-up water of the fictional Brightwater Plating shop: 2.4 mM bicarbonate,
    /// 0.3 mM carbonate, some chloride.
    fn makeup() -> Solution<f64, 4> {
        let mut s = Solution::new(Celsius::new(15.0).unwrap(), Activity::Ideal);
        s.add_formula("NaHCO3", 0.0024).unwrap();
        s.add_formula("Na2CO3", 0.0003).unwrap();
        s.add_formula("NaCl", 0.001).unwrap();
        s
    }

    #[test]
    fn conversions() {
        // 1 meq/L = 50.04 mg/L as CaCO3 (calc: CaCO3 100.09 g/mol / 2, IUPAC atomic weights).
        assert!((mg_per_l_as_caco3(1.0_f64) - 50.04).abs() < 0.01);
        assert!((meq_per_l_from_caco3(mg_per_l_as_caco3(2.5_f64)) - 2.5).abs() < 1e-12);
    }

    #[test]
    fn composition_alkalinity_is_close_to_the_carbonate_stoichiometry() {
        // T ≈ [HCO3−] + 2[CO3²−] added = 2.4 + 0.6 = 3.0 meq/L (minus the small CO2-side terms);
        // P ≈ [CO3²−] = 0.3 meq/L (bicarbonate at pH 8.3 is the P endpoint).
        let a = alkalinity(&makeup()).unwrap();
        assert!((a.total_eq_per_l * 1000.0 - 3.0).abs() < 0.05, "{a:?}");
        assert!((a.phenolphthalein_eq_per_l * 1000.0 - 0.3).abs() < 0.05, "{a:?}");
        assert_eq!(a.acidity_eq_per_l, 0.0);
        assert!((a.total_mg_per_l_as_caco3() - 150.0).abs() < 3.0);
    }

    #[test]
    fn phenolphthalein_and_total_follow_the_standard_methods_table() {
        // SM 2320 B alkalinity relationships (Standard Methods for the Examination
        // of Water and Wastewater, 2320 B, table of alkalinity relationships): P = 0 → bicarbonate only; 2P < T → carbonate = 2P,
        // bicarbonate = T − 2P; 2P > T → hydroxide = 2P − T, carbonate = 2(T − P). The model's
        // endpoint capacities include the small water and CO2-side terms, so within 3 %.
        let water = |recipe: &[(&str, f64)]| {
            let mut s: Solution<f64, 2> = Solution::new(Celsius::new(20.0).unwrap(), Activity::Ideal);
            for (f, c) in recipe {
                s.add_formula(f, *c).unwrap();
            }
            let a = alkalinity(&s).unwrap();
            (a.phenolphthalein_eq_per_l * 1000.0, a.total_eq_per_l * 1000.0)
        };
        let close = |got: f64, want: f64| (got - want).abs() <= 0.03 * want.max(0.1);
        // Bicarbonate only (pH ≈ 8.3): P ≈ 0, T = 2 meq/L.
        let (p, t) = water(&[("NaHCO3", 0.002)]);
        assert!(p < 0.05 && close(t, 2.0), "{p} {t}");
        // Carbonate 0.5 mM + bicarbonate 1 mM: 2P < T; carbonate alkalinity 2P = 1 meq/L.
        let (p, t) = water(&[("Na2CO3", 0.0005), ("NaHCO3", 0.001)]);
        assert!(2.0 * p < t && close(2.0 * p, 1.0) && close(t - 2.0 * p, 1.0), "{p} {t}");
        // Hydroxide 1 mM + carbonate 1 mM: 2P > T; OH = 2P − T = 1, CO3 = 2(T − P) = 2 meq/L.
        let (p, t) = water(&[("NaOH", 0.001), ("Na2CO3", 0.001)]);
        assert!(2.0 * p > t && close(2.0 * p - t, 1.0) && close(2.0 * (t - p), 2.0), "{p} {t}");
    }

    fn simulated_titration(points: usize) -> (std::vec::Vec<AcidPoint<f64>>, f64) {
        // 100 mL of make-up water titrated with 0.02 N H2SO4 (0.01 M), computed by the model.
        let sample = makeup();
        let mut acid: Solution<f64, 1> = Solution::new(Celsius::new(15.0).unwrap(), Activity::Ideal);
        acid.add_formula("H2SO4", 0.01).unwrap();
        let t = Titration { sample: &sample, sample_volume_l: 0.1, titrant: &acid };
        let mut c: heapless::Vec<CurvePoint<f64>, 128> = heapless::Vec::new();
        t.curve(0.03, &mut c).unwrap();
        let data = c.iter().take(points).map(|p| AcidPoint { titrant_l: p.titrant_l, ph: p.ph }).collect();
        (data, alkalinity(&sample).unwrap().total_eq_per_l)
    }

    #[test]
    fn fixed_endpoint_and_gran_agree_with_the_composition() {
        let (data, truth) = simulated_titration(128);
        let fixed = fixed_endpoint_eq_per_l(&data, 0.1, 0.02, TOTAL_ENDPOINT_PH).unwrap();
        // The SM fixed endpoint measures ANC to pH 4.5 by construction (sulfate's HSO4− step adds
        // a little below pH 4.5): within 1 %.
        assert!((fixed - truth).abs() < 0.01 * truth, "fixed {fixed} vs model {truth}");
        let g = gran(&data, 0.1, 0.02).unwrap();
        // Gran's intercept is the true equivalence point (CO2 endpoint), slightly below ANC(4.5).
        assert!(g.points >= 3 && (g.total_eq_per_l - truth).abs() < 0.03 * truth, "{g:?} vs {truth}");
        let low = low_alkalinity_eq_per_l(&data, 0.1, 0.02).unwrap();
        assert!((low - truth).abs() < 0.05 * truth, "low {low}");
    }

    #[test]
    fn data_errors() {
        let (data, _) = simulated_titration(128);
        assert_eq!(fixed_endpoint_eq_per_l(&data, 0.0, 0.02, 4.5), Err(TitrationDataError::InvalidSetup));
        // Only the first few points: never reaches 4.5, nothing below 4.0 for Gran.
        let short = &data[..5];
        assert_eq!(fixed_endpoint_eq_per_l(short, 0.1, 0.02, 4.5), Err(TitrationDataError::EndpointNotReached));
        assert_eq!(gran(short, 0.1, 0.02).map(|g| g.points), Err(TitrationDataError::TooFewGranPoints));
    }
}
