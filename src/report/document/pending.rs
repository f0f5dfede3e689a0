//! Temporary stand-in for the plots of branch `report-plots` (`crate::report::plot`),
//! removed once that branch is merged.

use crate::assess::Assessment;
use crate::report::series::Series;

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
