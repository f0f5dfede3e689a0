//! The lab-to-plant ladder as a terminal table and as JSON: one row per scale, the resistances
//! of the film model, the Wilson plot where lab data are given, warnings and cautions.

use super::cautions::CAUTIONS;
use super::{Source, cautions_section, celsius, new_table};
use crate::assess::scale::{Ladder, Rung};
use crate::case::Case;
use crate::model::film::Resistances;
use crate::warning::Warning;
use serde::Serialize;

const KW: f64 = 1e3;

/// How the per-volume figures and the required coolant are defined (printed with both).
const BASIS: [&str; 4] = [
    "geometrically similar vessels of the case's bottom shape: diameter, jacket height and impeller diameter as (V/V_case)^(1/3); the same fill ratio, masses and amounts per volume, dosing time, coolant and wall; the coolant film is held",
    "area: the jacketed wetted area at the final fill, A/V over the final fill volume; time constant: C_final / (U A) at the final fill",
    "cooling capacity and peak power per volume: at the moment of the peak reaction power, over the contents' volume then; capacity U A (Tp - T_coolant)",
    "required coolant: the warmest constant coolant with U A (Tp - Tc) (+ ambient loss at Tp) equal to the peak reaction power of the run at that scale (one run, the peak held fixed)",
];

fn all_warnings(case: &Case, ladder: &Ladder) -> Vec<Warning> {
    let mut out = case.input_warnings.clone();
    out.extend(ladder.warnings.iter().cloned());
    out
}

pub fn render_table(case: &Case, ladder: &Ladder, source: &Source) -> String {
    let mut out = format!(
        "exoscreen {} — scale-up ladder of {}\n{}\n\n",
        env!("CARGO_PKG_VERSION"),
        source.file,
        case.title
    );
    out.push_str(&format!(
        "impeller speed scaled at constant {}; U from {}\n\n",
        ladder.speed_rule.name().replace('-', " "),
        if ladder.film_model {
            "the resistances of vessel.heat_transfer at each scale"
        } else {
            "the case (held constant)"
        }
    ));
    out.push_str("SCALES\n");
    out.push_str(&ladder_table(ladder).to_string());
    out.push('\n');
    for line in BASIS {
        out.push_str(&format!("  * {line}\n"));
    }
    if let Some(film) = &case.vessel.film {
        out.push_str("\nRESISTANCES (1/U = sum), the case's vessel\n");
        out.push_str(
            &resistance_table(&film.model.resistances(case.vessel.diameter.value)).to_string(),
        );
        out.push('\n');
        if let Some(lab) = &film.lab {
            out.push_str(&format!(
                "\nWILSON PLOT (lab vessel D {:.3} m, impeller {:.3} m, {} points): 1/U = {:.4e} m2K/W + {:.4e} N^(-2/3), r^2 = {:.4}; process film carried to the plant by h ∝ N^(2/3) d^(4/3) / D; the lab's intercept (its wall and coolant side) is replaced by the plant's own\n",
                lab.vessel_diameter,
                lab.impeller_diameter,
                lab.fit.points,
                lab.fit.intercept,
                lab.fit.slope,
                lab.fit.r_squared
            ));
        }
    }
    out.push_str("\nWARNINGS\n");
    let warnings = all_warnings(case, ladder);
    if warnings.is_empty() {
        out.push_str("  none\n");
    }
    for w in &warnings {
        out.push_str(&format!("  ! [{}] {}\n", w.code, w.message));
    }
    out.push_str(&cautions_section());
    out
}

fn ladder_table(ladder: &Ladder) -> comfy_table::Table {
    let mut t = new_table(&[
        "V",
        "D m",
        "A m2",
        "A/V 1/m",
        "N rpm",
        "U W/m2K",
        "cool kW/m3",
        "tau min",
        "peak kW/m3",
        "Tmax C",
        "MTSR C",
        "class",
        "Tc<= C",
    ]);
    for r in &ladder.rungs {
        t.add_row(vec![
            volume_text(r.nominal_volume),
            format!("{:.3}", r.diameter),
            format!("{:.3}", r.cooled_area),
            format!("{:.2}", r.cooled_area / r.final_volume),
            r.impeller_speed
                .map_or("-".into(), |n| format!("{:.0}", n * 60.0)),
            format!("{:.0}", r.u),
            format!("{:.1}", r.cooling_capacity_per_volume / KW),
            format!("{:.1}", r.time_constant / 60.0),
            format!("{:.1}", r.peak_power_per_volume / KW),
            format!("{:.1}", celsius(r.max_temperature)),
            format!("{:.1}", celsius(r.mtsr)),
            r.class.map_or("-".into(), |c| c.to_string()),
            format!("{:.1}", celsius(r.required_coolant)),
        ]);
    }
    t
}

/// "1 L", "100 L", "4 m3": litres below 1 m^3.
fn volume_text(v: f64) -> String {
    if v < 1.0 {
        format!("{} L", trimmed(v * 1e3))
    } else {
        format!("{} m3", trimmed(v))
    }
}

fn trimmed(x: f64) -> String {
    let text = format!("{x:.3}");
    text.trim_end_matches('0').trim_end_matches('.').to_string()
}

fn resistance_table(r: &Resistances) -> comfy_table::Table {
    let mut t = new_table(&["resistance", "m2 K/W", "share of 1/U"]);
    for (name, value, share) in r.breakdown() {
        t.add_row(vec![
            name,
            format!("{value:.3e}"),
            format!("{:.1} %", 100.0 * share),
        ]);
    }
    t.add_row(vec![
        "1/U".to_string(),
        format!("{:.3e}", r.total()),
        format!("U = {:.0} W/(m2 K)", r.coefficient()),
    ]);
    t
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Report<'a> {
    title: &'a str,
    case_file: &'a str,
    exoscreen_version: &'static str,
    speed_rule: &'static str,
    u_from_film_model: bool,
    basis: &'static [&'static str],
    scales: Vec<ScaleRow>,
    /// At the case's vessel; null without `vessel.heat_transfer`.
    resistances: Option<Vec<ResistanceRow>>,
    wilson_plot: Option<WilsonRow>,
    warnings: Vec<Warning>,
    cautions: &'static [&'static str],
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct ScaleRow {
    volume_m3: f64,
    diameter_m: f64,
    final_fill_m3: f64,
    area_m2: f64,
    wetted_area_m2: f64,
    area_per_volume_1_m: f64,
    impeller_speed_rpm: Option<f64>,
    process_film_W_m2K: Option<f64>,
    u_W_m2K: f64,
    cooling_capacity_kW_m3: f64,
    time_constant_min: f64,
    peak_power_kW_m3: f64,
    max_temperature_C: f64,
    mtsr_C: f64,
    criticality_class: Option<u8>,
    required_coolant_C: f64,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct ResistanceRow {
    name: String,
    m2K_W: f64,
    share: f64,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct WilsonRow {
    lab_vessel_diameter_m: f64,
    lab_impeller_diameter_m: f64,
    points: usize,
    intercept_m2K_W: f64,
    slope: f64,
    r_squared: f64,
}

fn scale_row(r: &Rung) -> ScaleRow {
    ScaleRow {
        volume_m3: r.nominal_volume,
        diameter_m: r.diameter,
        final_fill_m3: r.final_volume,
        area_m2: r.cooled_area,
        wetted_area_m2: r.wetted_area,
        area_per_volume_1_m: r.cooled_area / r.final_volume,
        impeller_speed_rpm: r.impeller_speed.map(|n| n * 60.0),
        process_film_W_m2K: r.resistances.as_ref().map(|x| 1.0 / x.process_film),
        u_W_m2K: r.u,
        cooling_capacity_kW_m3: r.cooling_capacity_per_volume / KW,
        time_constant_min: r.time_constant / 60.0,
        peak_power_kW_m3: r.peak_power_per_volume / KW,
        max_temperature_C: celsius(r.max_temperature),
        mtsr_C: celsius(r.mtsr),
        criticality_class: r.class,
        required_coolant_C: celsius(r.required_coolant),
    }
}

pub fn render_json(case: &Case, ladder: &Ladder, source: &Source) -> String {
    let film = case.vessel.film.as_ref();
    let report = Report {
        title: &case.title,
        case_file: &source.file,
        exoscreen_version: env!("CARGO_PKG_VERSION"),
        speed_rule: ladder.speed_rule.name(),
        u_from_film_model: ladder.film_model,
        basis: &BASIS,
        scales: ladder.rungs.iter().map(scale_row).collect(),
        resistances: film.map(|f| {
            f.model
                .resistances(case.vessel.diameter.value)
                .breakdown()
                .into_iter()
                .map(|(name, resistance, share)| ResistanceRow {
                    name,
                    m2K_W: resistance,
                    share,
                })
                .collect()
        }),
        wilson_plot: film.and_then(|f| f.lab.as_ref()).map(|lab| WilsonRow {
            lab_vessel_diameter_m: lab.vessel_diameter,
            lab_impeller_diameter_m: lab.impeller_diameter,
            points: lab.fit.points,
            intercept_m2K_W: lab.fit.intercept,
            slope: lab.fit.slope,
            r_squared: lab.fit.r_squared,
        }),
        warnings: all_warnings(case, ladder),
        cautions: &CAUTIONS,
    };
    let mut text =
        serde_json::to_string_pretty(&report).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}
