//! Lab data in: tabular measurements (DSC scans, calorimeter records) read from CSV with units
//! in the header, and the analyses that turn them into case-file data.

pub mod arc;
pub mod calorimetry;
pub mod error;
pub mod table;

pub use error::{LabError, PlacedError};
pub use table::{Column, Metadata, Table, Wanted};
