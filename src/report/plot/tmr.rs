//! TMRad against temperature from the decomposition data (log scale in hours), with TD24
//! (TMRad = 24 h) and the MTSR marked.

use super::Plot;
use super::chart::{BLACK_SOLID, Chart, Line, MARK_PENS, Mark};
use super::degc;
use crate::assess::Assessment;
use crate::assess::decomposition::tmr_ad;
use crate::report::celsius;

pub const TITLE: &str = "Time to maximum rate under adiabatic conditions (TMRad)";
/// Points of the TMRad curve.
const CURVE_POINTS: usize = 120;

/// None without decomposition data.
pub fn tmr_plot(a: &Assessment) -> Option<Plot> {
    let law = a.plant.decomposition.as_ref()?;
    let f = &a.figures;
    let cp = f.final_heat_capacity / f.final_mass;
    let known = [Some(a.plant.process_temperature), Some(f.mtsr), f.td24];
    let low = known.iter().flatten().fold(f64::INFINITY, |m, t| m.min(*t)) - 20.0;
    let high = known
        .iter()
        .flatten()
        .fold(f64::NEG_INFINITY, |m, t| m.max(*t))
        + 40.0;
    let points = (0..CURVE_POINTS)
        .map(|k| low + (high - low) * k as f64 / (CURVE_POINTS - 1) as f64)
        .filter(|t| *t > 0.0)
        .map(|t| (celsius(t), (tmr_ad(law, cp, t) / 3600.0).log10()))
        .collect();
    let mut chart = Chart::new(TITLE, "Temperature (degC)", "TMRad (h, log scale)");
    chart.log_y = true;
    chart.lines = vec![Line {
        label: String::new(),
        points,
        pen: BLACK_SOLID,
    }];
    chart.horizontal = vec![Mark {
        label: "24 h".to_string(),
        value: 24f64.log10(),
        pen: MARK_PENS[0],
    }];
    chart.vertical = vec![Mark {
        label: format!("MTSR {}", degc(f.mtsr)),
        value: celsius(f.mtsr),
        pen: MARK_PENS[1],
    }];
    chart.vertical.extend(f.td24.map(|t| Mark {
        label: format!("TD24 {}", degc(t)),
        value: celsius(t),
        pen: MARK_PENS[3],
    }));
    Some(Plot {
        file_name: "tmr.svg",
        title: TITLE.to_string(),
        caption: "TMRad from the decomposition data (zero-order approximation, Townsend and \
                  Tou 1980) against the starting temperature. TD24 is where the curve crosses \
                  24 h; the MTSR line shows how long the decomposition would take to run away \
                  from there."
            .to_string(),
        svg: chart.render(),
    })
}
