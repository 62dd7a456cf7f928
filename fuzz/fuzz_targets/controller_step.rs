//! Fuzz target `controller_step`: the example skid's controller (f32 or f64) driven through up
//! to 64 ticks of arbitrary inputs — tick periods, probe potentials, temperatures and flows from
//! raw float bits (NaN, ±inf, huge, negative, subnormal) or plausible ranges; switches, resets,
//! mode changes and manual flows at random.
//!
//! `Controller::step` must never panic, and every tick must keep the safety invariants that
//! SAFETY.md states: the pumps are commanded only in a dosing state (Auto, Manual), the
//! dosing-enable relay is closed only there, a latched trip never doses, and every delivered
//! flow is finite, ≥ 0 and at most the pump's maximum.
#![no_main]

use libfuzzer_sys::fuzz_target;
use phdose::Real;
use phdose::config::build::{controller, pump};
use phdose::config::example::plating_rinse;
use phdose::control::controller::{Controller, TickInputs};
use phdose::control::feedforward::ReagentSide;
use phdose::control::pump::PumpCommand;
use phdose::control::supervisor::ModeRequest;
use phdose::probe::vote::MAX_PROBES;

#[path = "input.rs"]
mod input;
use input::Input;

impl Input<'_> {
    /// A value in `lo`–`hi`, or raw f32 bits (NaN, ±inf, huge, subnormal…) one time in four.
    fn value(&mut self, lo: f64, hi: f64) -> f64 {
        if self.u8() % 4 == 0 { f64::from(f32::from_bits(self.u32())) } else { self.uniform(lo, hi) }
    }
}

fn ticks<R: Real, const N: usize>(c: &mut Controller<R, N>, inp: &mut Input<'_>, max_l_per_h: [f64; 2]) {
    for _ in 0..64 {
        if inp.u8() == 0xff {
            break;
        }
        let mut probe_mv = [R::ZERO; MAX_PROBES];
        for mv in &mut probe_mv {
            *mv = R::from_f64(inp.value(-450.0, 450.0));
        }
        let inputs = TickInputs {
            dt_s: R::from_f64(inp.value(0.0, 60.0)),
            probe_mv,
            temperature_c: R::from_f64(inp.value(-5.0, 105.0)),
            influent_flow_l_per_h: if inp.flag() { Some(R::from_f64(inp.value(0.0, 3000.0))) } else { None },
            flow_switch: inp.u8() % 8 != 0,
            reagent_low: [inp.u8() % 16 == 0, inp.u8() % 16 == 0],
            reset: inp.u8() % 8 == 0,
            mode: match inp.u8() % 6 {
                0 => ModeRequest::Off,
                1 => ModeRequest::Manual,
                _ => ModeRequest::Auto,
            },
            manual: (
                if inp.flag() { ReagentSide::Caustic } else { ReagentSide::Acid },
                R::from_f64(inp.value(0.0, 20.0)),
            ),
        };
        let out = c.step(&inputs);
        let doses = out.state.doses();
        assert!(!out.dosing_enabled || doses, "relay closed in {:?}", out.state);
        assert!(!(out.trip.is_some() && doses), "doses with a latched trip {:?}", out.trip);
        for (k, pump) in out.pumps.iter().enumerate() {
            let delivered = out.delivered_l_per_h[k].to_f64();
            assert!(delivered.is_finite() && delivered >= 0.0, "delivered {delivered} L/h");
            assert!(delivered <= max_l_per_h[k] * (1.0 + 1e-5), "delivered {delivered} > max {}", max_l_per_h[k]);
            if let Some(p) = pump {
                let commanded = match p.command {
                    PumpCommand::Strokes(n) => n > 0,
                    PumpCommand::Duty(d) => {
                        assert!(d.is_finite() && d >= R::ZERO && d <= R::ONE, "duty {:?}", d.to_f64());
                        d > R::ZERO
                    }
                };
                assert!(!commanded || doses, "pump {k} commanded in {:?}", out.state);
            }
        }
        if !doses {
            assert!(out.delivered_l_per_h.iter().all(|d| *d == R::ZERO), "delivery while not dosing");
        }
    }
}

fn run<R: Real>(inp: &mut Input<'_>) {
    let skid = plating_rinse();
    let max = |line: Option<&phdose::config::ReagentSettings>| {
        line.map_or(0.0, |l| pump::<f64>(&l.pump).expect("the example's pumps are valid").max_l_per_h())
    };
    let max_l_per_h = [max(skid.caustic.as_ref()), max(skid.acid.as_ref())];
    let (mut c, report) = controller::<R>(&skid).expect("the example skid builds");
    assert!(report.allowed(), "the example skid passes its boot checks");
    ticks(&mut c, inp, max_l_per_h);
}

fuzz_target!(|data: &[u8]| {
    let mut inp = Input::new(data);
    if inp.flag() { run::<f32>(&mut inp) } else { run::<f64>(&mut inp) }
});
