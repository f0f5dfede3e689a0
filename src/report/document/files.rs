//! The files of a stage-gate report, built in memory before any is written: report.html,
//! report.md, timeseries.csv and the plots.

use super::{Document, html, markdown};
use crate::report::plot::Plot;
use crate::report::series::Series;
use crate::report::timeseries_csv::timeseries_csv;

pub const HTML: &str = "report.html";
pub const MARKDOWN: &str = "report.md";
pub const TIMESERIES: &str = "timeseries.csv";

/// (file name, bytes) of every file of the report.
pub fn report_files(doc: &Document, series: &Series, plots: &[Plot]) -> Vec<(String, Vec<u8>)> {
    let mut files = vec![
        (HTML.to_string(), html::render(doc).into_bytes()),
        (MARKDOWN.to_string(), markdown::render(doc).into_bytes()),
        (TIMESERIES.to_string(), timeseries_csv(series)),
    ];
    files.extend(
        plots
            .iter()
            .map(|p| (p.file_name.to_string(), p.svg.clone().into_bytes())),
    );
    files
}
