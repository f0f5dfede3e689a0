//! The JSON report: the keys of the contract (model.md), and a few more.

use super::cautions::CAUTIONS;
use super::{Exporter, Source, celsius};
use crate::assess::Assessment;
use crate::assess::class::class_meaning;
use crate::case::Dosing;
use crate::warning::Warning;
use serde::Serialize;

pub struct JsonExporter;

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Report<'a> {
    format: u32,
    title: &'a str,
    adiabatic_temperature_rise_K: f64,
    process_temperature_C: f64,
    max_thermal_accumulation: f64,
    mtsr_C: f64,
    mtsr_simulated_C: f64,
    worst_failure_time_h: f64,
    mtt_C: f64,
    td24_C: Option<f64>,
    tmr_ad_at_mtsr_h: Option<f64>,
    criticality_class: Option<u8>,
    final_conversion: Option<f64>,
    normal: Normal,
    warnings: &'a [Warning],
    // Beyond the contract.
    exoscreen_version: &'static str,
    case_file: &'a str,
    criticality_class_meaning: Option<&'static str>,
    criticality_class_with_simulated_mtsr: Option<u8>,
    mtsr_time_h: f64,
    max_thermal_accumulation_time_h: f64,
    releasable_heat_kJ: f64,
    final_mass_kg: f64,
    final_heat_capacity_kJ_K: f64,
    final_conversion_species: Option<&'a str>,
    failure_dosing: &'static str,
    failure_runs: usize,
    /// null when a run of the envelope could not be integrated (see the warnings).
    failure_envelope: Option<Vec<EnvelopeRow>>,
    /// The full model from the worst failure time; null when it could not be computed.
    runaway: Option<RunawayReport>,
    /// The boiling barrier in that run; null without `solvent` data.
    boiling: Option<BoilingReport>,
    off_gas: Vec<OffGasReport>,
    cautions: &'static [&'static str],
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct RunawayReport {
    failure_time_h: f64,
    max_temperature_C: f64,
    time_to_max_rate_h: f64,
    max_rate_K_min: f64,
    decomposition_conversion: f64,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct BoilingReport {
    boiling_point_C: f64,
    boils: bool,
    starts_after_failure_h: Option<f64>,
    peak_vapour_rate_mol_s: f64,
    peak_vapour_rate_kg_h: f64,
    peak_heat_to_remove_kW: f64,
    condenser_capacity_kW: Option<f64>,
    condenser_exceeded: bool,
    condenser_exceeded_after_failure_h: Option<f64>,
}

#[derive(Serialize)]
struct OffGasReport {
    species: String,
    normal_peak_mol_s: f64,
    normal_peak_kg_h: f64,
    failure_peak_mol_s: Option<f64>,
    failure_peak_kg_h: Option<f64>,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct EnvelopeRow {
    failure_time_h: f64,
    max_temperature_C: f64,
    time_to_max_rate_h: f64,
    max_rate_K_min: f64,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Normal {
    max_temperature_C: f64,
    peak_reaction_power_kW: f64,
    cooling_capacity_at_peak_kW: f64,
    cooling_capacity_at_tp_kW: f64,
    peak_off_gas_kg_h: f64,
    min_coolant_temperature_C: f64,
    max_temperature_time_h: f64,
    peak_reaction_power_time_h: f64,
    final_decomposition_conversion: f64,
}

const HOUR: f64 = 3600.0;

impl Exporter for JsonExporter {
    fn render(&self, a: &Assessment, source: &Source) -> String {
        let f = &a.figures;
        let n = &f.normal;
        let report = Report {
            format: 1,
            title: &a.case.title,
            adiabatic_temperature_rise_K: f.adiabatic_rise,
            process_temperature_C: celsius(a.plant.process_temperature),
            max_thermal_accumulation: f.max_accumulation,
            mtsr_C: celsius(f.mtsr),
            mtsr_simulated_C: celsius(f.worst.max_temperature),
            worst_failure_time_h: f.worst.failure_time / HOUR,
            mtt_C: celsius(f.mtt),
            td24_C: f.td24.map(celsius),
            tmr_ad_at_mtsr_h: f.tmr_ad_at_mtsr.map(|t| t / HOUR),
            criticality_class: f.class,
            final_conversion: f.final_conversion,
            normal: Normal {
                max_temperature_C: celsius(n.max_temperature),
                peak_reaction_power_kW: n.peak_reaction_power / 1e3,
                cooling_capacity_at_peak_kW: n.cooling_at_peak / 1e3,
                cooling_capacity_at_tp_kW: n.cooling_capacity_at_tp / 1e3,
                peak_off_gas_kg_h: n.peak_off_gas * HOUR,
                min_coolant_temperature_C: celsius(n.min_coolant_temperature),
                max_temperature_time_h: n.max_temperature_time / HOUR,
                peak_reaction_power_time_h: n.peak_time / HOUR,
                final_decomposition_conversion: n.final_decomposition_conversion,
            },
            warnings: &a.warnings,
            exoscreen_version: env!("CARGO_PKG_VERSION"),
            case_file: &source.file,
            criticality_class_meaning: f.class.map(class_meaning),
            criticality_class_with_simulated_mtsr: f.class_simulated,
            mtsr_time_h: f.mtsr_time / HOUR,
            max_thermal_accumulation_time_h: f.max_accumulation_time / HOUR,
            releasable_heat_kJ: f.releasable_heat / 1e3,
            final_mass_kg: f.final_mass,
            final_heat_capacity_kJ_K: f.final_heat_capacity / 1e3,
            final_conversion_species: f.conversion_species.as_deref(),
            failure_dosing: match a.plant.dosing_after_failure {
                Dosing::Continues => "continues",
                Dosing::Stops => "stops",
            },
            failure_runs: f.worst.runs,
            failure_envelope: a.envelope_error.is_none().then(|| {
                a.envelope
                    .iter()
                    .map(|p| EnvelopeRow {
                        failure_time_h: p.failure_time / HOUR,
                        max_temperature_C: celsius(p.max_temperature),
                        time_to_max_rate_h: p.time_to_max_rate / HOUR,
                        max_rate_K_min: p.max_rate * 60.0,
                    })
                    .collect()
            }),
            runaway: a.runaway.as_ref().map(|r| RunawayReport {
                failure_time_h: r.failure_time / HOUR,
                max_temperature_C: celsius(r.max_temperature),
                time_to_max_rate_h: r.time_to_max_rate / HOUR,
                max_rate_K_min: r.max_rate * 60.0,
                decomposition_conversion: r.decomposition_conversion,
            }),
            boiling: a
                .runaway
                .as_ref()
                .and_then(|r| r.boiling.as_ref())
                .map(|b| BoilingReport {
                    boiling_point_C: celsius(b.boiling_point),
                    boils: b.starts_after.is_some(),
                    starts_after_failure_h: b.starts_after.map(|t| t / HOUR),
                    peak_vapour_rate_mol_s: b.peak_vapour_rate_mol_s,
                    peak_vapour_rate_kg_h: b.peak_vapour_rate_kg_h,
                    peak_heat_to_remove_kW: b.peak_heat / 1e3,
                    condenser_capacity_kW: b.condenser_capacity.map(|c| c / 1e3),
                    condenser_exceeded: b.condenser_exceeded_after.is_some(),
                    condenser_exceeded_after_failure_h: b
                        .condenser_exceeded_after
                        .map(|t| t / HOUR),
                }),
            off_gas: off_gas_rows(a),
            cautions: &CAUTIONS,
        };
        let mut text = serde_json::to_string_pretty(&report)
            .unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
        text.push('\n');
        text
    }
}

fn off_gas_rows(a: &Assessment) -> Vec<OffGasReport> {
    a.normal_off_gas
        .iter()
        .map(|normal| {
            let failure = a
                .runaway
                .as_ref()
                .and_then(|r| r.off_gas.iter().find(|p| p.species == normal.species));
            OffGasReport {
                species: normal.species.clone(),
                normal_peak_mol_s: normal.peak_mol_s,
                normal_peak_kg_h: normal.peak_kg_h,
                failure_peak_mol_s: failure.map(|p| p.peak_mol_s),
                failure_peak_kg_h: failure.map(|p| p.peak_kg_h),
            }
        })
        .collect()
}
