//! Reaction-calorimetry results (`exoscreen calorimetry`) as a terminal report and as JSON,
//! with a ready `reactions:` entry of the case file.

use super::cautions::CAUTIONS;
use super::{cautions_section, celsius, new_table};
use crate::lab::calorimetry::input::Study;
use crate::lab::calorimetry::kinetics::ArrheniusFit;
use crate::warning::Warning;
use serde::Serialize;

const HOUR: f64 = 3600.0;

/// A rate constant (SI, (m^3/mol)^(n-1)/s) in the unit the case file reads for overall order
/// n: 1/s, L/(mol*s), mol/(L*s), else (m^3/mol)^(n-1)/s.
pub fn rate_constant_text(k_si: f64, order: f64) -> String {
    if (order - 1.0).abs() < 1e-12 {
        format!("{k_si:.4e} 1/s")
    } else if (order - 2.0).abs() < 1e-12 {
        format!("{:.4e} L/(mol*s)", k_si * 1e3)
    } else if order.abs() < 1e-12 {
        format!("{:.4e} mol/(L*s)", k_si / 1e3)
    } else {
        format!("{k_si:.4e} (m^3/mol)^{}/s", order - 1.0)
    }
}

/// The `reactions:` entry: A + B -> P with the mean enthalpy per mole of B and the fit.
pub fn reactions_entry(study: &Study, fit: &ArrheniusFit) -> String {
    let (a, b) = (&study.charged_species, &study.dosed_species);
    let order = study.order_charged + study.order_dosed;
    format!(
        "reactions:\n  - equation: {a} + {b} -> P\n    enthalpy: {:.1} kJ/mol\n    rate_constant: {}\n    reference_temperature: {:.2} degC\n    activation_energy: {:.1} kJ/mol\n    orders: {{ {a}: {}, {b}: {} }}\n    # fit: RMS of X_th {:.4} over {} isothermal runs; name the product yourself\n",
        study.enthalpy() / 1e3,
        rate_constant_text(fit.k_ref, order),
        celsius(fit.reference_temperature),
        fit.activation_energy / 1e3,
        study.order_charged,
        study.order_dosed,
        fit.residual_rms,
        fit.runs.len()
    )
}

pub fn render_table(study: &Study) -> String {
    let mut out = format!(
        "exoscreen {} — reaction calorimetry, {} run(s)\n\n",
        env!("CARGO_PKG_VERSION"),
        study.runs.len()
    );
    let mut table = new_table(&[
        "run",
        "T reactor",
        "enthalpy",
        "heat",
        "dosed",
        "max accumulation",
        "k (this run)",
    ]);
    let order = study.order_charged + study.order_dosed;
    for r in &study.runs {
        table.add_row(vec![
            r.file.clone(),
            format!(
                "{:.1} degC (span {:.1} K)",
                celsius(r.mean_temperature),
                r.temperature_span
            ),
            format!("{:.1} kJ/mol", r.heat.enthalpy / 1e3),
            format!("{:.2} kJ", r.heat.total_heat / 1e3),
            format!("{:.4} mol", r.heat.dosed_total),
            format!(
                "{:.1} % at {:.2} h",
                100.0 * r.heat.max_accumulation,
                r.heat.max_accumulation_time / HOUR
            ),
            r.rate_constant.map_or("-".to_string(), |(k, e)| {
                format!("{} (RMS {e:.4})", rate_constant_text(k, order))
            }),
        ]);
    }
    out.push_str(&table.to_string());
    out.push_str(&format!(
        "\nEnthalpy per mole of dosed reagent, assuming it is limiting and fully converted at the end of each run: mean {:.1} kJ/mol.\n",
        study.enthalpy() / 1e3
    ));
    out.push_str("Accumulation X_dosed - X_th over the feed; X_th = Q(t)/Q_total above a straight baseline.\n");
    match &study.kinetics {
        Some(fit) => {
            out.push_str(&format!(
                "\nKINETICS (rate {} k c_{}^{} c_{}^{}; ln k per run by least squares of X_th, then ln k against 1/T)\n",
                "r =", study.charged_species, study.order_charged, study.dosed_species, study.order_dosed
            ));
            out.push_str(&format!(
                "  k_ref {} at {:.2} degC, Ea {:.1} kJ/mol, residual RMS of X_th {:.4}\n",
                rate_constant_text(fit.k_ref, order),
                celsius(fit.reference_temperature),
                fit.activation_energy / 1e3,
                fit.residual_rms
            ));
            out.push_str("\nFOR THE CASE FILE\n");
            out.push_str(&reactions_entry(study, fit));
        }
        None => out.push_str("\nNo kinetic fit across temperatures (see the warnings).\n"),
    }
    if !study.warnings.is_empty() {
        out.push_str("\nWARNINGS\n");
        for w in &study.warnings {
            out.push_str(&format!("  - [{}] {}\n", w.code, w.message));
        }
    }
    out.push_str(&cautions_section());
    out
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Report<'a> {
    exoscreen_version: &'static str,
    enthalpy_kJ_mol: f64,
    max_accumulation: f64,
    runs: Vec<RunReport<'a>>,
    kinetics: Option<KineticsReport>,
    reactions_yaml: Option<String>,
    warnings: &'a [Warning],
    cautions: &'static [&'static str],
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct RunReport<'a> {
    data_file: &'a str,
    reactor_temperature_C: f64,
    reactor_temperature_span_K: f64,
    jacket_temperature_mean_C: Option<f64>,
    isothermal: bool,
    enthalpy_kJ_mol: f64,
    total_heat_kJ: f64,
    dosed_mol: f64,
    feed_start_h: f64,
    feed_end_h: f64,
    max_accumulation: f64,
    max_accumulation_time_h: f64,
    baseline_start_W: f64,
    baseline_end_W: f64,
    rate_constant_SI: Option<f64>,
    residual_rms: Option<f64>,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct KineticsReport {
    rate_constant_SI: f64,
    rate_constant: String,
    reference_temperature_C: f64,
    activation_energy_kJ_mol: f64,
    order_charged: f64,
    order_dosed: f64,
    residual_rms: f64,
    runs: usize,
}

pub fn render_json(study: &Study) -> String {
    let order = study.order_charged + study.order_dosed;
    let report = Report {
        exoscreen_version: env!("CARGO_PKG_VERSION"),
        enthalpy_kJ_mol: study.enthalpy() / 1e3,
        max_accumulation: study.max_accumulation(),
        runs: study
            .runs
            .iter()
            .map(|r| RunReport {
                data_file: &r.file,
                reactor_temperature_C: celsius(r.mean_temperature),
                reactor_temperature_span_K: r.temperature_span,
                jacket_temperature_mean_C: r.mean_jacket_temperature.map(celsius),
                isothermal: r.isothermal(),
                enthalpy_kJ_mol: r.heat.enthalpy / 1e3,
                total_heat_kJ: r.heat.total_heat / 1e3,
                dosed_mol: r.heat.dosed_total,
                feed_start_h: r.heat.feed_start / HOUR,
                feed_end_h: r.heat.feed_end / HOUR,
                max_accumulation: r.heat.max_accumulation,
                max_accumulation_time_h: r.heat.max_accumulation_time / HOUR,
                baseline_start_W: r.heat.baseline.at(r.time[0]),
                baseline_end_W: r.heat.baseline.at(r.time[r.time.len() - 1]),
                rate_constant_SI: r.rate_constant.map(|p| p.0),
                residual_rms: r.rate_constant.map(|p| p.1),
            })
            .collect(),
        kinetics: study.kinetics.as_ref().map(|f| KineticsReport {
            rate_constant_SI: f.k_ref,
            rate_constant: rate_constant_text(f.k_ref, order),
            reference_temperature_C: celsius(f.reference_temperature),
            activation_energy_kJ_mol: f.activation_energy / 1e3,
            order_charged: study.order_charged,
            order_dosed: study.order_dosed,
            residual_rms: f.residual_rms,
            runs: f.runs.len(),
        }),
        reactions_yaml: study.kinetics.as_ref().map(|f| reactions_entry(study, f)),
        warnings: &study.warnings,
        cautions: &CAUTIONS,
    };
    let mut text =
        serde_json::to_string_pretty(&report).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::case::units::parse_quantity;

    /// Each printed rate constant reads back through the case file's unit parser to its SI value.
    #[test]
    fn rate_constant_units_read_back() {
        for (k, order) in [(2.5e-4, 1.0), (5e-7, 2.0), (3e-3, 0.0), (1e-5, 1.5)] {
            let text = rate_constant_text(k, order);
            let q = parse_quantity(&text).unwrap();
            assert!(
                (q.value_si / k - 1.0).abs() < 1e-4,
                "{text}: {}",
                q.value_si
            );
            assert!(
                (q.dimension.time + 1.0).abs() < 1e-9
                    && (q.dimension.amount + order - 1.0).abs() < 1e-9,
                "{text}"
            );
        }
    }
}
