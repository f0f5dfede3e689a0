//! The model: vessel geometry, reaction network, heat balance, integration and scenarios.

pub mod balance;
pub mod film;
pub mod integrate;
pub mod network;
pub mod plant;
pub mod scenario;
pub mod stiff;
pub mod vessel;
pub mod wilson;
