//! The one-line safety caution printed under every readable result.

/// Short on purpose; the detail is in SAFETY.md.
pub const CAUTION: &str =
    "Model result only: it does not replace pH measurement or the dosing interlocks (see SAFETY.md).";
