//! Lab data in: tabular measurements (DSC scans, calorimeter records) read from CSV with units
//! in the header, and the analyses that turn them into case-file data.

pub mod arc;
pub mod calorimetry;
pub mod decomposition;
pub mod dsc;
pub mod error;
pub mod fit;
pub mod kinetics;
pub mod study;
pub mod synthetic;
pub mod table;

pub use error::{LabError, PlacedError};
pub use table::{Column, Metadata, Table, Wanted};
