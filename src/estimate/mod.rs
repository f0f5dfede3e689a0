//! Estimates made before any experiment: figures a chemist needs to write a case file, each
//! flagged as an estimate to be confirmed by calorimetry. One layer error: [`EstimateError`].

pub mod enthalpy;
pub mod error;

pub use enthalpy::{EnthalpyEstimate, EnthalpyRequest, Method, estimate_enthalpy};
pub use error::EstimateError;

/// The plain flag every estimate carries.
pub const ESTIMATE_FLAG: &str = "ESTIMATE — confirm by reaction calorimetry";
