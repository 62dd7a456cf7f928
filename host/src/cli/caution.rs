//! The one-line safety caution printed under every readable result.

/// Short on purpose; the detail is in SAFETY.md.
pub const CAUTION: &str =
    "Model result only: it does not replace pH measurement or the dosing interlocks (see SAFETY.md).";

/// The caution that ends every readable `plan` (two lines).
pub const PLAN_CAUTION: &str = "Caution: this plan is a model estimate, not a measurement. Interlocks (flow switch,\n\
independent pH cut-outs, manual reset) must exist in hardware; see SAFETY.md.";

/// The one line that ends every readable `check` and `pack` report.
pub const CHECK_CAUTION: &str = "Caution: a passed boot check does not replace hardwired interlocks (flow switch, \
independent pH cut-outs, manual reset); see SAFETY.md.";
