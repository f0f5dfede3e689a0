//! Temperature against time: normal operation and the worst cooling failure, with Tp, MTSR,
//! MTT and TD24 as labelled horizontal lines.

use super::chart::{BLACK_SOLID, Chart, Line, MARK_PENS, Mark, RED_DASHED};
use super::{Plot, degc};
use crate::assess::Assessment;
use crate::report::celsius;
use crate::report::series::{Series, SeriesPoint};

pub const TITLE: &str = "Temperature: normal operation and worst cooling failure";

pub fn temperature_plot(a: &Assessment, series: &Series) -> Plot {
    let mut chart = Chart::new(TITLE, "Time (h)", "Temperature (degC)");
    chart.lines = vec![
        Line {
            label: "Normal operation".to_string(),
            points: temperatures(&series.normal),
            pen: BLACK_SOLID,
        },
        Line {
            label: format!(
                "Cooling failure at {:.2} h (decomposition off)",
                series.failure_time_h
            ),
            points: temperatures(&series.failure),
            pen: RED_DASHED,
        },
    ];
    chart.horizontal = reference_marks(a, true);
    Plot {
        file_name: "temperature.svg",
        title: TITLE.to_string(),
        caption: "Contents temperature in normal operation (solid) and after a cooling failure \
                  at the worst time (dashed, decomposition off: the simulated MTSR run). \
                  Horizontal lines mark the process temperature, MTSR, MTT and TD24; a curve \
                  crossing MTT or TD24 shows where a failure would take the mass."
            .to_string(),
        svg: chart.render(),
    }
}

fn temperatures(points: &[SeriesPoint]) -> Vec<(f64, f64)> {
    points.iter().map(|p| (p.time_h, p.temperature_C)).collect()
}

/// Tp (when `with_tp`), MTSR, MTT and TD24 (when present) as marks, degC.
pub(crate) fn reference_marks(a: &Assessment, with_tp: bool) -> Vec<Mark> {
    let f = &a.figures;
    let mut marks = Vec::new();
    let mut push = |name: &str, kelvin: f64, pen| {
        marks.push(Mark {
            label: format!("{name} {}", degc(kelvin)),
            value: celsius(kelvin),
            pen,
        })
    };
    if with_tp {
        push("Tp", a.plant.process_temperature, MARK_PENS[0]);
    }
    push("MTSR", f.mtsr, MARK_PENS[1]);
    push("MTT", f.mtt, MARK_PENS[2]);
    if let Some(td24) = f.td24 {
        push("TD24", td24, MARK_PENS[3]);
    }
    marks
}
