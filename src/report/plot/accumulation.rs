//! Thermal accumulation X(t) = Q_acc / Q_total against time in normal operation, its maximum
//! marked.

use super::Plot;
use super::chart::{BLACK_SOLID, Chart, Line, Marker};
use crate::assess::Assessment;
use crate::report::series::Series;

pub const TITLE: &str = "Thermal accumulation in normal operation";

pub fn accumulation_plot(a: &Assessment, series: &Series) -> Plot {
    let mut chart = Chart::new(TITLE, "Time (h)", "Accumulation X = Qacc/Qtotal (-)");
    chart.y_from_zero = true;
    chart.lines = vec![Line {
        label: String::new(),
        points: series
            .normal
            .iter()
            .map(|p| (p.time_h, p.accumulation))
            .collect(),
        pen: BLACK_SOLID,
    }];
    let f = &a.figures;
    chart.markers = vec![Marker {
        label: format!(
            "max X = {:.3} at {:.2} h",
            f.max_accumulation,
            f.max_accumulation_time / 3600.0
        ),
        at: (f.max_accumulation_time / 3600.0, f.max_accumulation),
    }];
    Plot {
        file_name: "accumulation.svg",
        title: TITLE.to_string(),
        caption: "Share of the recipe's reaction heat that has been dosed but not yet released \
                  (0: nothing held, 1: all of it). The circle marks the maximum, the moment \
                  when a cooling failure would leave the most heat to release."
            .to_string(),
        svg: chart.render(),
    }
}
