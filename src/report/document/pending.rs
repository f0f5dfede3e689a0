//! Temporary stand-in for the time series and plots of branch `report-plots`
//! (`crate::report::series`, `crate::report::plot`), removed once that branch is merged.

use crate::assess::Assessment;

#[derive(Debug, Clone, Default)]
pub struct SeriesPoint {
    pub time: f64,
    pub temperature: f64,
    pub coolant_temperature: f64,
    pub fill: f64,
    pub conversion: f64,
    pub accumulation: f64,
    pub reaction_power: f64,
    pub cooling_power: f64,
    pub off_gas: f64,
}

#[derive(Debug, Clone, Default)]
pub struct Series {
    pub normal: Vec<SeriesPoint>,
    pub failure: Vec<SeriesPoint>,
}

pub fn sample(_assessment: &Assessment, _points: usize) -> Series {
    Series::default()
}

#[derive(Debug, Clone)]
pub struct Plot {
    pub file_name: String,
    pub title: String,
    pub caption: String,
    pub svg: String,
}

pub fn all_plots(_assessment: &Assessment, _series: &Series) -> Vec<Plot> {
    Vec::new()
}
