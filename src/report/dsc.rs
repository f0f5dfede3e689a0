//! `exoscreen dsc` as a terminal report and as JSON: the scans, the Kissinger and
//! Flynn–Wall–Ozawa kinetics, the `decomposition:` block ready to paste, its TD24.

use super::cautions::CAUTIONS;
use super::{cautions_section, celsius, new_table};
use crate::lab::decomposition::{Basis, Block, block_yaml};
use crate::lab::kinetics::ArrheniusFit;
use crate::lab::study::DscStudy;
use crate::warning::Warning;
use serde::Serialize;

const KISSINGER_BASIS: &str = "first order (the assumption of Kissinger, ASTM E2890): activation energy and pre-exponential factor from the Kissinger fit, energy the mean of the scans, heat_release_rate = A * energy * exp(-E/(R T_ref)) at the lowest extrapolated onset";
const SINGLE_RATE_BASIS: &str = "zero order at an assumed activation energy of 50 kJ/mol (common practice for one heating rate, conservative): energy the mean of the scans, heat_release_rate = the net heat flow where the signal reaches 5 % of the peak height (above the onset), credited at the lower extrapolated onset";

fn basis_text(block: &Block) -> &'static str {
    match block.basis {
        Basis::Kissinger => KISSINGER_BASIS,
        Basis::SingleRateZeroOrder => SINGLE_RATE_BASIS,
    }
}

// ---------------------------------------------------------------------------------------------
// Terminal
// ---------------------------------------------------------------------------------------------

pub fn render_table(study: &DscStudy) -> String {
    let mut out = format!(
        "exoscreen {} — DSC scans ({})\n\nSCANS\n",
        env!("CARGO_PKG_VERSION"),
        study.scans.len()
    );
    out.push_str(&scans_table(study).to_string());
    out.push_str("\n\nKINETICS (peak temperatures against heating rate)\n");
    out.push_str(&kinetics_table(study).to_string());
    out.push_str("\n\nDECOMPOSITION BLOCK FOR A CASE\n");
    match &study.block {
        Some(block) => {
            out.push_str(&format!("  basis: {}\n\n", basis_text(block)));
            for line in block_yaml(block).lines() {
                out.push_str(&format!("    {line}\n"));
            }
            out.push_str(&td24_line(study));
        }
        None => out.push_str("  none: no positive energy and rate from the scans\n"),
    }
    out.push_str("\nWARNINGS\n");
    if study.warnings.is_empty() {
        out.push_str("  none\n");
    }
    for w in &study.warnings {
        out.push_str(&format!("  [{}] {}\n", w.code, w.message));
    }
    out.push_str(&cautions_section());
    out
}

fn scans_table(study: &DscStudy) -> comfy_table::Table {
    let mut table = new_table(&[
        "file",
        "rate K/min",
        "baseline °C",
        "onset °C",
        "peak °C",
        "energy J/g",
    ]);
    for s in &study.scans {
        let rate = format!(
            "{:.3}{}",
            s.heating_rate * 60.0,
            if s.rate_given { " (given)" } else { "" }
        );
        let limits = format!(
            "{:.1} – {:.1}{}",
            celsius(s.limits.0),
            celsius(s.limits.1),
            if s.limits_automatic { " (auto)" } else { "" }
        );
        table.add_row(vec![
            s.file.clone(),
            rate,
            limits,
            format!("{:.1}", celsius(s.onset)),
            format!("{:.1}", celsius(s.peak)),
            format!("{:.1}", s.energy / 1e3),
        ]);
    }
    table
}

fn kinetics_table(study: &DscStudy) -> comfy_table::Table {
    let mut table = new_table(&["method", "Ea kJ/mol", "A 1/s", "r²", "scans"]);
    for (name, fit) in [
        ("Kissinger (ASTM E2890)", &study.kissinger),
        ("Flynn–Wall–Ozawa (ASTM E698)", &study.ozawa),
    ] {
        match fit {
            Some(f) => table.add_row(vec![
                name.to_string(),
                format!("{:.1}", f.activation_energy / 1e3),
                format!("{:.3e}", f.pre_exponential),
                format!("{:.5}", f.r2),
                f.points.to_string(),
            ]),
            None => table.add_row(vec![name, "—", "—", "—", "needs two or more rates"]),
        };
    }
    table
}

fn td24_line(study: &DscStudy) -> String {
    let cp = format!(
        "cp {:.2} kJ/(kg K){}",
        study.specific_heat / 1e3,
        if study.specific_heat_assumed {
            ", assumed"
        } else {
            ""
        }
    );
    match study.td24 {
        Some(t) => format!(
            "\n  TD24 implied: {:.1} °C (zero-order TMRad of Townsend and Tou, {cp})\n",
            celsius(t)
        ),
        None => format!("\n  TD24 implied: none found ({cp})\n"),
    }
}

// ---------------------------------------------------------------------------------------------
// JSON
// ---------------------------------------------------------------------------------------------

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Report<'a> {
    exoscreen_version: &'static str,
    runs: Vec<Run<'a>>,
    kissinger: Option<Fit>,
    ozawa: Option<Fit>,
    decomposition: Option<Decomposition>,
    td24_C: Option<f64>,
    specific_heat_kJ_kg_K: f64,
    specific_heat_assumed: bool,
    warnings: &'a [Warning],
    cautions: &'static [&'static str],
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Run<'a> {
    file: &'a str,
    heating_rate_K_min: f64,
    heating_rate_given: bool,
    onset_C: f64,
    peak_C: f64,
    energy_J_g: f64,
    baseline_from_C: f64,
    baseline_to_C: f64,
    baseline_automatic: bool,
    peak_height_W_g: f64,
    points: usize,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Fit {
    activation_energy_kJ_mol: f64,
    pre_exponential_1_s: f64,
    r2: f64,
    scans: usize,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Decomposition {
    energy_kJ_kg: f64,
    heat_release_rate_W_kg: f64,
    reference_temperature_C: f64,
    activation_energy_kJ_mol: f64,
    order: f64,
    basis: &'static str,
    yaml: String,
}

fn fit(f: &Option<ArrheniusFit>) -> Option<Fit> {
    f.as_ref().map(|f| Fit {
        activation_energy_kJ_mol: f.activation_energy / 1e3,
        pre_exponential_1_s: f.pre_exponential,
        r2: f.r2,
        scans: f.points,
    })
}

pub fn render_json(study: &DscStudy) -> String {
    let runs = study
        .scans
        .iter()
        .map(|s| Run {
            file: &s.file,
            heating_rate_K_min: s.heating_rate * 60.0,
            heating_rate_given: s.rate_given,
            onset_C: celsius(s.onset),
            peak_C: celsius(s.peak),
            energy_J_g: s.energy / 1e3,
            baseline_from_C: celsius(s.limits.0),
            baseline_to_C: celsius(s.limits.1),
            baseline_automatic: s.limits_automatic,
            peak_height_W_g: s.peak_height / 1e3,
            points: s.points,
        })
        .collect();
    let decomposition = study.block.as_ref().map(|b| Decomposition {
        energy_kJ_kg: b.law.energy / 1e3,
        heat_release_rate_W_kg: b.law.q_ref,
        reference_temperature_C: celsius(b.law.reference_temperature),
        activation_energy_kJ_mol: b.law.activation_energy / 1e3,
        order: b.law.order,
        basis: basis_text(b),
        yaml: block_yaml(b),
    });
    let report = Report {
        exoscreen_version: env!("CARGO_PKG_VERSION"),
        runs,
        kissinger: fit(&study.kissinger),
        ozawa: fit(&study.ozawa),
        decomposition,
        td24_C: study.td24.map(celsius),
        specific_heat_kJ_kg_K: study.specific_heat / 1e3,
        specific_heat_assumed: study.specific_heat_assumed,
        warnings: &study.warnings,
        cautions: &CAUTIONS,
    };
    let mut text =
        serde_json::to_string_pretty(&report).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}
