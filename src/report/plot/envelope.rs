//! The failure envelope: the highest temperature after a cooling failure at each time of the
//! process (decomposition on), with MTT and TD24; and the time to maximum rate after it.

use super::Plot;
use super::chart::{BLACK_SOLID, Chart, Line};
use super::temperature::reference_marks;
use crate::assess::Assessment;
use crate::report::celsius;

pub const TITLE: &str = "Failure envelope: highest temperature after a cooling failure";
pub const RATE_TITLE: &str = "Failure envelope: time to maximum rate after a cooling failure";

pub fn envelope_plot(a: &Assessment) -> Plot {
    let mut chart = Chart::new(TITLE, "Failure time (h)", "Highest temperature (degC)");
    chart.lines = vec![Line {
        label: String::new(),
        points: a
            .envelope
            .iter()
            .map(|p| (p.failure_time / 3600.0, celsius(p.max_temperature)))
            .collect(),
        pen: BLACK_SOLID,
    }];
    chart.horizontal = reference_marks(a, false)
        .into_iter()
        .filter(|m| !m.label.starts_with("MTSR"))
        .collect();
    Plot {
        file_name: "envelope.svg",
        title: TITLE.to_string(),
        caption: "For a cooling failure at each time of the process (horizontal axis), the \
                  highest temperature the contents then reach with the full model, \
                  decomposition on. Where the curve lies above MTT or TD24, a failure at that \
                  time reaches them."
            .to_string(),
        svg: chart.render(),
    }
}

pub fn time_to_max_rate_plot(a: &Assessment) -> Plot {
    let mut chart = Chart::new(RATE_TITLE, "Failure time (h)", "Time to maximum rate (h)");
    chart.y_from_zero = true;
    chart.lines = vec![Line {
        label: String::new(),
        points: a
            .envelope
            .iter()
            .map(|p| (p.failure_time / 3600.0, p.time_to_max_rate / 3600.0))
            .collect(),
        pen: BLACK_SOLID,
    }];
    Plot {
        file_name: "time-to-max-rate.svg",
        title: RATE_TITLE.to_string(),
        caption: "For a cooling failure at each time of the process, the time from the failure \
                  to the fastest temperature rise (full model, decomposition on): the time left \
                  to act. Zero means the temperature rises fastest at once; a value equal to the failure \
                  horizon means it was still rising faster when the run ended."
            .to_string(),
        svg: chart.render(),
    }
}
