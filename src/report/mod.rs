//! Reports: one exporter per format behind one trait.

pub mod arc;
pub mod atomic;
pub mod calorimetry;
pub mod cautions;
pub mod csv;
pub mod document;
pub mod dsc;
pub mod enthalpy;
pub mod json;
pub mod limit;
pub mod plot;
pub mod scale;
pub mod scale_section;
pub mod series;
pub mod table;
pub mod timeseries_csv;

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

/// A terminal table in the reports' one style.
pub(crate) fn new_table(header: &[&str]) -> comfy_table::Table {
    let mut table = comfy_table::Table::new();
    table
        .load_style(comfy_table::presets::UTF8_FULL_CONDENSED)
        .set_content_arrangement(comfy_table::ContentArrangement::Dynamic)
        .set_width(110)
        .set_header(header.to_vec());
    table
}

/// The cautions as the closing section of a terminal report.
pub(crate) fn cautions_section() -> String {
    let mut out = String::from("\nCAUTIONS\n");
    for c in cautions::CAUTIONS {
        out.push_str(&format!("  - {c}\n"));
    }
    out
}
