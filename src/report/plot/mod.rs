//! The report's plots as SVG strings (plotters, SVG backend, no system fonts): each plot a
//! function of the assessment and its sampled series, drawn at one size that fits an A4 page.

mod accumulation;
mod chart;
mod envelope;
mod ladder;
mod temperature;
mod tmr;

use super::series::Series;
use crate::assess::Assessment;
use plotters::prelude::*;

pub use accumulation::accumulation_plot;
pub use envelope::{envelope_plot, time_to_max_rate_plot};
pub use ladder::ladder_plot;
pub use temperature::temperature_plot;
pub use tmr::tmr_plot;

/// Width and height of every plot, px (720 px is 19 cm at 96 dpi: an A4 text width).
pub const WIDTH: u32 = 720;
pub const HEIGHT: u32 = 360;

/// One plot ready to embed or write.
#[derive(Debug, Clone)]
pub struct Plot {
    pub file_name: &'static str,
    pub title: String,
    /// What it shows and how to read it.
    pub caption: String,
    pub svg: String,
}

/// Every plot of a report, in reading order; the TMRad plot only with decomposition data.
pub fn all_plots(assessment: &Assessment, series: &Series) -> Vec<Plot> {
    let mut plots = vec![
        temperature_plot(assessment, series),
        accumulation_plot(assessment, series),
        envelope_plot(assessment),
        time_to_max_rate_plot(assessment),
    ];
    plots.extend(tmr_plot(assessment));
    plots.push(ladder_plot(assessment));
    plots
}

/// Draws on a fresh white SVG of the plots' size; on a drawing error, an SVG that says so.
/// The SVG gets the title as its accessible name (`<title>`, role="img").
pub(crate) fn finish(
    title: &str,
    draw: impl FnOnce(&chart::Area<'_>) -> chart::DrawResult,
) -> String {
    let mut svg = String::new();
    let outcome = {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, HEIGHT)).into_drawing_area();
        let drawn = root
            .fill(&WHITE)
            .map_err(|e| e.to_string())
            .and_then(|()| draw(&root).map_err(|e| e.to_string()));
        drawn.and_then(|()| root.present().map_err(|e| e.to_string()))
    };
    match outcome {
        Ok(()) => accessible(&svg, title),
        Err(e) => no_data(title, &format!("the plot could not be drawn ({e})")),
    }
}

/// The SVG with role="img", an aria-label and a `<title>` first inside it.
fn accessible(svg: &str, title: &str) -> String {
    let title = escape(title);
    let Some(open_end) = svg.find('>') else {
        return svg.to_string();
    };
    let (open, rest) = svg.split_at(open_end);
    let open = open.replacen(
        "<svg",
        &format!("<svg role=\"img\" aria-label=\"{title}\""),
        1,
    );
    format!("{open}><title>{title}</title>{}", &rest[1..])
}

/// A plot-sized SVG with the title and why there is nothing to show.
pub(crate) fn no_data(title: &str, reason: &str) -> String {
    let (t, r) = (escape(title), escape(reason));
    format!(
        concat!(
            "<svg width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" xmlns=\"http://www.w3.org/2000/svg\" role=\"img\" aria-label=\"{t}\">",
            "<title>{t}</title>",
            "<rect x=\"0.5\" y=\"0.5\" width=\"{rw}\" height=\"{rh}\" fill=\"#FFFFFF\" stroke=\"#999999\"/>",
            "<text x=\"{cx}\" y=\"40\" text-anchor=\"middle\" font-family=\"sans-serif\" font-size=\"18\">{t}</text>",
            "<text x=\"{cx}\" y=\"{cy}\" text-anchor=\"middle\" font-family=\"sans-serif\" font-size=\"15\" fill=\"#444444\">No data: {r}</text>",
            "</svg>\n"
        ),
        w = WIDTH,
        h = HEIGHT,
        rw = WIDTH - 1,
        rh = HEIGHT - 1,
        cx = WIDTH / 2,
        cy = HEIGHT / 2,
        t = t,
        r = r,
    )
}

pub(crate) fn escape(text: &str) -> String {
    text.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// A temperature for a label, degC with one decimal.
pub(crate) fn degc(kelvin: f64) -> String {
    format!("{:.1} degC", super::celsius(kelvin))
}

#[cfg(test)]
mod tests;
