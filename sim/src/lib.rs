//! **phdose-sim** — the skid simulator: the real `phdose` controller in the loop with a plant
//! model of a neutralisation tank, on the host (std).
//!
//! The plant is deliberately not the controller's own model: it runs Davies activities and the
//! true temperature whatever the controller is configured with, its influent may differ from
//! the configured one, and it has dead time, probe lag, noise and drift, pump errors and
//! transport delay (see [`plant`]). [`run`] ticks the controller at its configured period and
//! integrates the plant in between; [`kpi`] scores the run.

pub mod baseline;
pub mod benchmark;
pub mod kpi;
pub mod plant;
pub mod run;
pub mod scenario;
pub mod sweep;
