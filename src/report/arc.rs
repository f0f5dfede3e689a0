//! The adiabatic-calorimetry figures (`exoscreen arc`) as a terminal report and as JSON, with
//! a ready `decomposition:` entry of the case file.

use super::cautions::CAUTIONS;
use super::{Source, cautions_section, celsius, new_table};
use crate::lab::arc::input::ArcRun;
use serde::Serialize;

const HOUR: f64 = 3600.0;
const MINUTE: f64 = 60.0;

/// The `decomposition:` block at phi = 1, when the sample's specific heat is known:
/// energy = cp dT_ad,true; heat_release_rate = energy k(T_ref), k the apparent rate constant.
pub fn decomposition_entry(run: &ArcRun) -> Option<String> {
    let cp = run.sample_specific_heat?;
    let f = &run.figures;
    let energy = cp * f.rise_corrected;
    let q_ref = energy * f.ln_rate_constant.exp();
    Some(format!(
        "decomposition:\n  energy: {:.0} kJ/kg\n  heat_release_rate: {} W/kg\n  reference_temperature: {:.1} degC\n  activation_energy: {:.1} kJ/mol\n  order: {}\n",
        energy / 1e3,
        readable(q_ref),
        celsius(f.fit_reference_temperature),
        f.activation_energy / 1e3,
        f.order
    ))
}

/// Four significant figures, in plain notation between 1e-3 and 1e5.
fn readable(value: f64) -> String {
    if (1e-3..1e5).contains(&value.abs()) {
        let decimals = (3 - value.abs().log10().floor() as i32).max(0) as usize;
        format!("{value:.decimals$}")
    } else {
        format!("{value:.3e}")
    }
}

pub fn render_table(run: &ArcRun, source: &Source) -> String {
    let f = &run.figures;
    let mut out = format!(
        "exoscreen {} — adiabatic run {}\n\n",
        env!("CARGO_PKG_VERSION"),
        source.file
    );
    let mut table = new_table(&["figure", "measured", "corrected to phi = 1"]);
    table.add_row(vec![
        "phi".to_string(),
        format!("{:.3} ({})", f.phi, run.phi_source),
        "1".to_string(),
    ]);
    table.add_row(vec![
        "onset (Fisher & Goetz 1991 for the correction)".to_string(),
        format!("{:.1} degC", celsius(f.onset_measured)),
        format!("{:.1} degC", celsius(f.onset_corrected)),
    ]);
    table.add_row(vec![
        "adiabatic temperature rise".to_string(),
        format!("{:.1} K", f.rise_measured),
        format!("{:.1} K", f.rise_corrected),
    ]);
    table.add_row(vec![
        "final temperature (T0 + phi (T - T0))".to_string(),
        format!("{:.1} degC", celsius(f.max_temperature_measured)),
        format!("{:.1} degC", celsius(f.max_temperature_corrected)),
    ]);
    table.add_row(vec![
        "max self-heat rate".to_string(),
        format!("{:.3} K/min", f.max_rate_measured * MINUTE),
        format!("{:.3} K/min", f.max_rate_corrected * MINUTE),
    ]);
    table.add_row(vec![
        "time from onset to max rate".to_string(),
        format!("{:.2} h", f.time_to_max_rate_measured / HOUR),
        format!("{:.2} h", f.time_to_max_rate_measured / f.phi / HOUR),
    ]);
    table.add_row(vec![
        format!(
            "activation energy (apparent order {}, {} points)",
            f.order, f.fit_points
        ),
        format!("{:.1} kJ/mol", f.activation_energy / 1e3),
        String::new(),
    ]);
    if let Some(p) = run.max_pressure {
        table.add_row(vec![
            "max pressure".to_string(),
            format!("{:.2} bar", p / 1e5),
            String::new(),
        ]);
    }
    out.push_str(&table.to_string());
    out.push_str(&format!(
        "\nExotherm from a self-heat rate of {:.3} K/min (0.02 K/min is common practice).\n",
        run.threshold * MINUTE
    ));
    out.push_str("\nTMRad AT PHI = 1 (measured time to max rate / phi, at the same temperature; Townsend & Tou 1980)\n");
    let mut curve = new_table(&["temperature", "self-heat rate (phi = 1)", "TMRad (phi = 1)"]);
    for p in &f.tmr_curve {
        curve.add_row(vec![
            format!("{:.1} degC", celsius(p.temperature)),
            format!("{:.4} K/min", p.self_heat_rate * MINUTE),
            format!("{:.2} h", p.tmr_ad / HOUR),
        ]);
    }
    out.push_str(&curve.to_string());
    out.push('\n');
    match decomposition_entry(run) {
        Some(entry) => {
            out.push_str("\nFOR THE CASE FILE (phi = 1)\n");
            out.push_str(&entry);
        }
        None => out.push_str(
            "\nNo `decomposition:` entry: give `# sample_specific_heat` for its energy.\n",
        ),
    }
    out.push_str(&cautions_section());
    out
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Report<'a> {
    data_file: &'a str,
    exoscreen_version: &'static str,
    phi: f64,
    phi_source: &'a str,
    threshold_K_min: f64,
    onset_measured_C: f64,
    onset_corrected_C: f64,
    adiabatic_rise_measured_K: f64,
    adiabatic_rise_corrected_K: f64,
    max_temperature_measured_C: f64,
    max_temperature_corrected_C: f64,
    max_self_heat_rate_measured_K_min: f64,
    max_self_heat_rate_corrected_K_min: f64,
    time_to_max_rate_measured_h: f64,
    activation_energy_kJ_mol: f64,
    apparent_order: f64,
    fit_points: usize,
    max_pressure_bar: Option<f64>,
    tmr_ad: Vec<CurvePoint>,
    decomposition_yaml: Option<String>,
    cautions: &'static [&'static str],
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct CurvePoint {
    temperature_C: f64,
    self_heat_rate_K_min: f64,
    tmr_ad_h: f64,
}

pub fn render_json(run: &ArcRun, source: &Source) -> String {
    let f = &run.figures;
    let report = Report {
        data_file: &source.file,
        exoscreen_version: env!("CARGO_PKG_VERSION"),
        phi: f.phi,
        phi_source: &run.phi_source,
        threshold_K_min: run.threshold * MINUTE,
        onset_measured_C: celsius(f.onset_measured),
        onset_corrected_C: celsius(f.onset_corrected),
        adiabatic_rise_measured_K: f.rise_measured,
        adiabatic_rise_corrected_K: f.rise_corrected,
        max_temperature_measured_C: celsius(f.max_temperature_measured),
        max_temperature_corrected_C: celsius(f.max_temperature_corrected),
        max_self_heat_rate_measured_K_min: f.max_rate_measured * MINUTE,
        max_self_heat_rate_corrected_K_min: f.max_rate_corrected * MINUTE,
        time_to_max_rate_measured_h: f.time_to_max_rate_measured / HOUR,
        activation_energy_kJ_mol: f.activation_energy / 1e3,
        apparent_order: f.order,
        fit_points: f.fit_points,
        max_pressure_bar: run.max_pressure.map(|p| p / 1e5),
        tmr_ad: f
            .tmr_curve
            .iter()
            .map(|p| CurvePoint {
                temperature_C: celsius(p.temperature),
                self_heat_rate_K_min: p.self_heat_rate * MINUTE,
                tmr_ad_h: p.tmr_ad / HOUR,
            })
            .collect(),
        decomposition_yaml: decomposition_entry(run),
        cautions: &CAUTIONS,
    };
    let mut text =
        serde_json::to_string_pretty(&report).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}
