//! The inputs section: the case in brief with units (the terminal report's rows).

use super::{Block, Section, Table};
use crate::assess::Assessment;

pub fn section(a: &Assessment) -> Section {
    let rows = crate::report::table::case_rows(a)
        .into_iter()
        .map(|[item, value]| vec![item, in_print_units(&value)])
        .collect();
    Section {
        id: "inputs",
        heading: "Inputs".to_string(),
        new_page: false,
        blocks: vec![
            Block::Paragraph(
                "The case as the model uses it (after unit conversion), with its units."
                    .to_string(),
            ),
            Block::Table(Table {
                header: vec!["item".to_string(), "value".to_string()],
                rows,
                numeric: vec![],
            }),
        ],
    }
}

/// The terminal's ASCII units in print: °C, m², m³.
fn in_print_units(text: &str) -> String {
    text.replace("degC", "°C")
        .replace("m3", "m³")
        .replace("m2", "m²")
}
