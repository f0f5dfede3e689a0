//! Reports: one exporter per format behind one trait.

pub mod atomic;
pub mod cautions;
pub mod csv;
pub mod json;
pub mod limit;
pub mod table;

use crate::assess::Assessment;

/// Where the assessed case came from, for the report's header.
#[derive(Debug, Clone)]
pub struct Source {
    pub file: String,
}

/// Renders an assessment as text in one format.
pub trait Exporter {
    fn render(&self, assessment: &Assessment, source: &Source) -> String;
}

/// Temperature in degC from K.
pub fn celsius(kelvin: f64) -> f64 {
    kelvin - 273.15
}
