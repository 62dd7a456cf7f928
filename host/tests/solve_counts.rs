//! The solver's cold worst cases as `phdose speciate --json` reports them: for seeded random
//! mixtures of one to four substances from the substance table (0.1–10 mmol/L each, 5–60 °C, ideal
//! and Davies), every mixture whose ionic strength is at most 0.1 mol/L is solved in at most 10
//! charge-balance evaluations in Davies mode and 8 ideal (the `iterations` key). Invented waters;
//! the bound, not the chemistry, is under test here.
#![allow(clippy::unwrap_used, clippy::expect_used, clippy::indexing_slicing, clippy::panic)]

mod common;

use common::{num, ok_json};
use phdose::chem::substance::SUBSTANCES;

/// splitmix64 (Steele, Lea & Flood 2014): a small seeded generator.
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    fn unit(&mut self) -> f64 {
        (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// Mixtures per activity mode (each is one run of the binary).
const MIXTURES: usize = 400;

#[test]
fn speciate_reports_solves_within_the_cold_worst_cases() {
    let mut rng = Rng(0x5EED_0000_C0DE_0010);
    let (mut checked, mut worst) = (0, [0_u64; 2]);
    for (mode, (activity, bound)) in [("davies", 10_u64), ("ideal", 8)].into_iter().enumerate() {
        for _ in 0..MIXTURES {
            let n = 1 + (rng.next() % 4) as usize;
            let mut dissolved = serde_json::Map::new();
            while dissolved.len() < n {
                let s = &SUBSTANCES[(rng.next() % SUBSTANCES.len() as u64) as usize];
                let amount = 10f64.powf(-4.0 + 2.0 * rng.unit());
                dissolved.insert(s.formula.to_owned(), serde_json::json!(amount));
            }
            let celsius = 5.0 + 55.0 * rng.unit();
            let request = serde_json::json!({"temperature_c": celsius, "activity": activity, "dissolved": dissolved});
            let doc = ok_json(&["speciate", "--json"], &request.to_string());
            if num(&doc, "ionic_strength") > 0.1 {
                continue;
            }
            let iterations = doc["iterations"].as_u64().unwrap();
            assert!(iterations <= bound, "{activity}: {iterations} evaluations for {request}");
            worst[mode] = worst[mode].max(iterations);
            checked += 1;
        }
    }
    println!("speciate: {checked} mixtures in range; worst evaluations Davies {}, ideal {}", worst[0], worst[1]);
    assert!(checked >= MIXTURES, "too few mixtures in range: {checked}");
}
