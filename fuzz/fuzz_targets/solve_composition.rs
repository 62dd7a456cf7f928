//! Fuzz target `solve_composition`: arbitrary bytes → a composition (up to 16 composition
//! changes: catalogue systems, substances, strong ions, custom systems (their own temperature
//! functions or given pKa values), temperature, activity,
//! mixing) → one of five ways of solving it. Errors are fine; panics, hangs and broken
//! invariants of a successful solve are not.
//!
//! Byte layout (every read past the end yields 0, so any input is valid):
//! `flags` (bit 0 f32, bit 1 Davies, bit 2 capacity 3 instead of 8) · `ops` (count mod 17) ·
//! ops … · `solve mode` · mode arguments. Amounts, pH and temperatures come either from raw
//! float bits (NaN, ±inf, negative, huge, subnormal) or from a plausible range, chosen by a
//! tag byte, so the fuzzer reaches both the error paths and the solver.
#![no_main]

use libfuzzer_sys::fuzz_target;
use phdose::Real;
use phdose::chem::catalogue::ALL;
use phdose::chem::substance::SUBSTANCES;
use phdose::chem::{
    AcidBaseSystem, Activity, DAVIES_MAX_IONIC_STRENGTH, Equilibrium, QUICK_ITERATIONS, LogK,
    MAX_ACTIVITY_ITERATIONS, PH_MAX, PH_MIN, Solution, SolverOptions, max_ph_iterations, salt,
};
use phdose::units::Celsius;

#[path = "input.rs"]
mod input;
use input::Input;

/// The hostile decoders of this target (the differential target only decodes plausible values).
impl Input<'_> {
    /// Edge values every float input should survive.
    fn special(&mut self) -> f64 {
        const SPECIAL: [f64; 18] = [
            0.0,
            -0.0,
            f64::NAN,
            f64::INFINITY,
            f64::NEG_INFINITY,
            20.0,
            20.000_000_000_000_004,
            19.999_999,
            f64::MIN_POSITIVE,
            5e-324,
            1e-300,
            1e300,
            f64::MAX,
            -1e-12,
            1e-7,
            0.5,
            3.4e38,
            1e-40,
        ];
        SPECIAL[usize::from(self.u8()) % SPECIAL.len()]
    }

    /// An amount (mol/L): raw bits, an edge value, or plausible 0–20 mol/L on a log scale.
    fn amount(&mut self) -> f64 {
        match self.u8() % 6 {
            0 => f64::from_bits(self.u64()),
            1 => f64::from(f32::from_bits(self.u32())),
            2 => self.special(),
            3 => f64::from(self.u32()) / f64::from(u32::MAX) * 20.0,
            _ => {
                // mantissa 0–1 × 10^-(0..=12): dilute waters, where real plants live.
                self.uniform(0.0, 1.0) * 10f64.powi(-i32::from(self.u8() % 13))
            }
        }
    }

    /// A pH: raw bits, an edge value, or −3 … 19 (beyond the search bracket on both sides).
    fn ph(&mut self) -> f64 {
        match self.u8() % 4 {
            0 => f64::from_bits(self.u64()),
            1 => self.special(),
            _ => self.uniform(-3.0, 19.0),
        }
    }

    /// A temperature (°C): raw bits, an edge value, or −5 … 105 °C.
    fn celsius(&mut self) -> f64 {
        match self.u8() % 4 {
            0 => f64::from_bits(self.u64()),
            1 => self.special(),
            _ => self.uniform(-5.0, 105.0),
        }
    }

    /// A coefficient of a custom log K: raw bits or a plausible pK-sized value.
    fn coefficient(&mut self) -> f64 {
        match self.u8() % 3 {
            0 => f64::from_bits(self.u64()),
            1 => self.special(),
            _ => self.uniform(-15.0, 15.0),
        }
    }
}

const CUSTOM_KEYS: [&str; 3] = ["fuzz-a", "fuzz-b", "fuzz-c"];

/// Temperature functions of the pool's systems: a plausible one and finite ones whose pK at
/// some temperature overflows or is huge.
const FLAVOURS: [LogK; 5] = [
    LogK::vant_hoff(4.0, 10.0),
    LogK::analytic(0.0, 0.0, 0.0, 0.0, 1e300),
    LogK::analytic(1e300, 0.0, 0.0, 0.0, 0.0),
    LogK::analytic(f64::MAX, 0.0, 0.0, f64::MAX, 0.0),
    LogK::analytic(0.0, -1e308, 1e-300, 0.0, 0.0),
];
/// Step counts of the pool: 0 and 4 are invalid on purpose.
const STEP_COUNTS: u8 = 5;

/// A solution refers to `&'static` systems, so the custom systems come from a pool built once
/// (reachable for the whole run: no leak): every key × step count × protonated charge ×
/// temperature function.
fn pool() -> &'static [AcidBaseSystem] {
    static POOL: std::sync::OnceLock<Vec<AcidBaseSystem>> = std::sync::OnceLock::new();
    POOL.get_or_init(|| {
        let mut v = Vec::new();
        for key in CUSTOM_KEYS {
            for steps in 0..STEP_COUNTS {
                for charge in i8::MIN..=i8::MAX {
                    for flavour in FLAVOURS {
                        v.push(AcidBaseSystem {
                            key,
                            forms: ["HxA", "Hx-1A", "Hx-2A", "Hx-3A"],
                            steps,
                            log_k: [flavour; 3],
                            charge_protonated: charge,
                            parent_acid: "HxA",
                        });
                    }
                }
            }
        }
        v
    })
}

/// A custom system from the pool.
fn custom_system(inp: &mut Input<'_>) -> &'static AcidBaseSystem {
    let pool = pool();
    let key = usize::from(inp.u8()) % CUSTOM_KEYS.len();
    let steps = usize::from(inp.u8() % STEP_COUNTS);
    let charge = usize::from(inp.u8());
    let flavour = usize::from(inp.u8()) % FLAVOURS.len();
    let index = ((key * usize::from(STEP_COUNTS) + steps) * 256 + charge) * FLAVOURS.len() + flavour;
    &pool[index]
}

/// A fuzzed temperature function (raw bits, edge values or plausible coefficients).
fn custom_log_k(inp: &mut Input<'_>) -> LogK {
    if inp.flag() {
        LogK::vant_hoff(inp.coefficient(), inp.coefficient())
    } else {
        LogK::analytic(inp.coefficient(), inp.coefficient(), inp.coefficient(), inp.coefficient(), inp.coefficient())
    }
}

/// Invariants of every successful solve. `per_solve_limit` is the iteration limit of one inner
/// solve.
fn check<R: Real, const N: usize>(s: &Solution<R, N>, eq: &Equilibrium<R>, per_solve_limit: u32) {
    let ph = eq.ph.to_f64();
    assert!(ph.is_finite() && (PH_MIN..=PH_MAX).contains(&ph), "pH {ph} outside [{PH_MIN}, {PH_MAX}]");
    // Documented bound (src/chem/solve.rs, `solve_with`): the quick path spends at most
    // min(limit, QUICK_ITERATIONS); then one inner solve ≤ min(limit, max_ph_iterations) in ideal
    // mode, or MAX_ACTIVITY_ITERATIONS of them in Davies mode (+1 for the first ionic strength
    // when the quick path is off).
    // A lowered limit caps a whole ideal-mode solve.
    let quick = per_solve_limit.min(QUICK_ITERATIONS);
    let lowered = per_solve_limit < max_ph_iterations::<R>();
    let bound = match s.activity() {
        Activity::Ideal if lowered => per_solve_limit,
        Activity::Ideal => quick + per_solve_limit,
        Activity::Davies => quick + MAX_ACTIVITY_ITERATIONS * per_solve_limit + 1,
    };
    assert!(eq.iterations >= 1 && eq.iterations <= bound, "{} iterations, bound {bound}", eq.iterations);
    let beta = eq.buffer_capacity_mol_per_l_per_ph.to_f64();
    assert!(beta.is_finite() && beta > 0.0, "buffer capacity {beta}");
    let ionic = eq.ionic_strength_mol_per_l.to_f64();
    assert!(ionic.is_finite() && ionic >= 0.0, "ionic strength {ionic}");
    assert!(eq.residual_eq_per_l.to_f64().is_finite(), "residual {:?}", eq.residual_eq_per_l.to_f64());
    let resolution = eq.resolution_ph.to_f64();
    assert!(resolution.is_finite() && resolution >= 0.0, "resolution {resolution}");
    match s.activity() {
        Activity::Ideal => assert_eq!(eq.davies_factor.to_f64(), 0.0),
        Activity::Davies => {
            assert!(ionic <= DAVIES_MAX_IONIC_STRENGTH, "Davies result at I = {ionic}");
            assert!(eq.davies_factor.to_f64().is_finite());
        }
    }
    let sp = s.speciate(eq);
    assert!(sp.h_mol_per_l.to_f64().is_finite() && sp.h_mol_per_l.to_f64() >= 0.0);
    assert!(sp.oh_mol_per_l.to_f64().is_finite() && sp.oh_mol_per_l.to_f64() >= 0.0);
    assert_eq!(sp.forms_mol_per_l.len(), s.components().len());
    for forms in &sp.forms_mol_per_l {
        for x in forms {
            let x = x.to_f64();
            assert!(x.is_finite() && x >= 0.0, "species concentration {x}");
        }
    }
}

fn run<R: Real, const N: usize>(inp: &mut Input<'_>, activity: Activity) {
    let mut s: Solution<R, N> = Solution::new(Celsius::standard(), activity);
    let ops = inp.u8() % 17;
    for _ in 0..ops {
        let result = match inp.u8() % 8 {
            0 => s.add_system(ALL[usize::from(inp.u8()) % ALL.len()], R::from_f64(inp.amount())),
            1 => s.add_strong_ion(i8::from_le_bytes([inp.u8()]), R::from_f64(inp.amount())),
            2 => {
                let sub = &SUBSTANCES[usize::from(inp.u8()) % SUBSTANCES.len()];
                let by_name = inp.flag();
                s.add_formula(if by_name { sub.name } else { sub.formula }, R::from_f64(inp.amount()))
            }
            3 => {
                let sys = custom_system(inp);
                if inp.flag() {
                    // Its own temperature functions (hostile ones included).
                    s.add_system(sys, R::from_f64(inp.amount()))
                } else {
                    // pKa values from fuzzed temperature functions at the solution's
                    // temperature: NaN, infinite, huge or plausible.
                    let tk = s.temperature().kelvin();
                    let pka = [custom_log_k(inp).pk(tk), custom_log_k(inp).pk(tk), custom_log_k(inp).pk(tk)];
                    s.add_system_with_pka(sys, pka, R::from_f64(inp.amount()))
                }
            }
            4 => Celsius::new(R::from_f64(inp.celsius())).map(|t| s.set_temperature(t)).map_err(Into::into),
            5 => {
                s.set_activity(if inp.flag() { Activity::Ideal } else { Activity::Davies });
                Ok(())
            }
            6 => {
                let (a, b) = (R::from_f64(inp.amount()), R::from_f64(inp.amount()));
                let other = s.clone();
                s.mix(a, &other, b).map(|m| s = m)
            }
            _ => {
                // Salt-hydrolysis analysis of one substance (its own small solution and solve).
                let sub = &SUBSTANCES[usize::from(inp.u8()) % SUBSTANCES.len()];
                let t = Celsius::new(R::from_f64(inp.celsius())).unwrap_or_else(|_| Celsius::standard());
                if let Err(e) = salt::analyse_substance(sub, R::from_f64(inp.amount()), t, s.activity()) {
                    let _ = format!("{e}");
                }
                Ok(())
            }
        };
        if let Err(e) = result {
            let _ = format!("{e}"); // Display must not panic either
        }
    }
    let _ = s.charge_excess_eq_per_l(R::from_f64(inp.ph()), R::from_f64(inp.amount()));

    let full = max_ph_iterations::<R>();
    let outcome = match inp.u8() % 5 {
        0 => s.solve().map(|eq| check(&s, &eq, full)),
        1 => s.solve_from(R::from_f64(inp.ph())).map(|eq| check(&s, &eq, full)),
        2 => {
            // Control loop: solve, change the strong charge a little, solve warm.
            s.solve().and_then(|first| {
                check(&s, &first, full);
                let mut next = s.clone();
                let _ = next.add_strong_ion(i8::from_le_bytes([inp.u8()]), R::from_f64(inp.amount()));
                next.solve_warm(&first).map(|eq| check(&next, &eq, full))
            })
        }
        3 => {
            let warm_start_ph = if inp.flag() { Some(R::from_f64(inp.ph())) } else { None };
            let warm_start_ionic_strength = if inp.flag() { Some(R::from_f64(inp.amount())) } else { None };
            let max_iterations = if inp.flag() { inp.u32() % 100 } else { inp.u32() };
            let newton = inp.flag();
            let options = SolverOptions { warm_start_ph, warm_start_ionic_strength, max_iterations, newton };
            s.solve_with(options).map(|eq| check(&s, &eq, max_iterations.min(full)))
        }
        _ => {
            // Warm start from a fabricated (possibly absurd) previous equilibrium.
            let previous = Equilibrium {
                ph: R::from_f64(inp.ph()),
                iterations: inp.u32(),
                buffer_capacity_mol_per_l_per_ph: R::from_f64(inp.amount()),
                ionic_strength_mol_per_l: R::from_f64(inp.amount()),
                residual_eq_per_l: R::from_f64(inp.amount()),
                davies_factor: R::from_f64(inp.amount()),
                resolution_ph: R::from_f64(inp.amount()),
            };
            s.solve_warm(&previous).map(|eq| check(&s, &eq, full))
        }
    };
    if let Err(e) = outcome {
        let _ = format!("{e}");
    }
}

fuzz_target!(|data: &[u8]| {
    let mut inp = Input::new(data);
    let flags = inp.u8();
    let activity = if flags & 2 == 0 { Activity::Ideal } else { Activity::Davies };
    match (flags & 1 == 0, flags & 4 == 0) {
        (true, true) => run::<f64, 8>(&mut inp, activity),
        (true, false) => run::<f64, 3>(&mut inp, activity),
        (false, true) => run::<f32, 8>(&mut inp, activity),
        (false, false) => run::<f32, 3>(&mut inp, activity),
    }
});
