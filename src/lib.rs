//! exoscreen: thermal-runaway screening of an exothermic recipe in a jacketed vessel.
//!
//! The pipeline reads left to right: `case` (load, units, validate) -> `model` (vessel,
//! kinetics, heat balance, scenarios) -> `assess` (figures, class, warnings) -> `report`
//! (terminal table, JSON).

pub mod assess;
pub mod case;
pub mod cli;
pub mod estimate;
pub mod lab;
pub mod model;
pub mod numeric;
pub mod report;
pub mod warning;
