//! The screening figures of model.md, computed from the normal-operation run and the worst
//! cooling failure: adiabatic rise, accumulation, MTSR, TMRad, TD24, class, conversion and
//! the cooling figures.

use super::class::criticality_class;
use super::decomposition::{td24, tmr_ad};
use super::search::{WorstFailure, worst_failure};
use crate::model::balance::{Layout, Phase};
use crate::model::plant::Plant;
use crate::model::scenario::{ScenarioError, Trajectory, run_normal};
use std::time::Instant;

/// Every figure in SI (K, s, W, J); temperatures absolute.
#[derive(Debug, Clone)]
pub struct Figures {
    pub releasable_heat: f64,
    pub final_heat_capacity: f64,
    pub final_mass: f64,
    pub adiabatic_rise: f64,
    pub max_accumulation: f64,
    pub max_accumulation_time: f64,
    pub mtsr: f64,
    pub mtsr_time: f64,
    pub worst: WorstFailure,
    pub mtt: f64,
    pub td24: Option<f64>,
    pub tmr_ad_at_mtsr: Option<f64>,
    pub class: Option<u8>,
    /// Class with the simulated MTSR in place of MTSR, where that differs.
    pub class_simulated: Option<u8>,
    pub final_conversion: Option<f64>,
    pub conversion_species: Option<String>,
    pub normal: NormalFigures,
}

#[derive(Debug, Clone)]
pub struct NormalFigures {
    pub max_temperature: f64,
    pub max_temperature_time: f64,
    pub peak_reaction_power: f64,
    pub peak_time: f64,
    /// U A(h) (T - T_coolant) at the moment of the peak.
    pub cooling_at_peak: f64,
    /// U A(h) (Tp - T_cold) at the moment of the peak, T_cold the coldest the jacket can be:
    /// what the jacket can take with the contents at Tp.
    pub cooling_capacity_at_tp: f64,
    /// Peak off-gas rate of all gas species together, kg/s.
    pub peak_off_gas: f64,
    /// The coldest the jacket was in normal operation, K (hold mode: what holding Tp takes).
    pub min_coolant_temperature: f64,
    /// Off-gas mass formed by the end of normal operation, kg.
    pub final_gas_mass: f64,
    pub final_decomposition_conversion: f64,
}

/// The normal run, the worst failure and every figure.
pub struct Computation {
    pub normal_run: Trajectory,
    pub figures: Figures,
}

pub fn compute(plant: &Plant, deadline: Option<Instant>) -> Result<Computation, ScenarioError> {
    let normal_run = run_normal(plant, deadline)?;
    let worst = worst_failure(plant, &normal_run, deadline)?;
    let figures = figures_from(plant, &normal_run, worst);
    Ok(Computation {
        normal_run,
        figures,
    })
}

fn figures_from(plant: &Plant, run: &Trajectory, worst: WorstFailure) -> Figures {
    let layout = plant.layout();
    let end = plant.process_duration;
    let releasable_heat = plant.network.releasable_heat(&plant.recipe_amounts());
    let c_final = plant.final_heat_capacity();
    let held_heat = |x: &[f64]| plant.network.releasable_heat(layout.amounts(x));
    let accumulation =
        |_: &Phase, _: f64, x: &[f64]| thermal_accumulation(plant, releasable_heat, x);
    let (max_accumulation_time, max_accumulation) = run.maximum(0.0, end, &accumulation);
    let mtsr_at = |phase: &Phase, t: f64, x: &[f64]| {
        x[Layout::TEMPERATURE] + held_heat(x) / plant.snapshot(phase, t, x).heat_capacity
    };
    let (mtsr_time, mtsr) = run.maximum(0.0, end, &mtsr_at);
    let cp_final = c_final / plant.final_mass();
    let td24 = plant.decomposition.as_ref().and_then(|d| td24(d, cp_final));
    let tmr = plant
        .decomposition
        .as_ref()
        .map(|d| tmr_ad(d, cp_final, mtsr));
    let class = td24.map(|t| criticality_class(mtsr, plant.mtt, t));
    let class_simulated =
        td24.map(|t| criticality_class(mtsr.max(worst.max_temperature), plant.mtt, t));
    let (conversion_species, final_conversion) = final_conversion(plant, run);
    Figures {
        releasable_heat,
        final_heat_capacity: c_final,
        final_mass: plant.final_mass(),
        adiabatic_rise: releasable_heat / c_final,
        max_accumulation: max_accumulation.clamp(0.0, 1.0),
        max_accumulation_time,
        mtsr,
        mtsr_time,
        worst,
        mtt: plant.mtt,
        td24,
        tmr_ad_at_mtsr: tmr,
        class,
        class_simulated,
        final_conversion,
        conversion_species,
        normal: normal_figures(plant, run),
    }
}

fn normal_figures(plant: &Plant, run: &Trajectory) -> NormalFigures {
    let end = plant.process_duration;
    let temperature = |_: &Phase, _: f64, x: &[f64]| x[Layout::TEMPERATURE];
    let (max_temperature_time, max_temperature) = run.maximum(0.0, end, &temperature);
    let power = |phase: &Phase, t: f64, x: &[f64]| plant.snapshot(phase, t, x).reaction_power;
    let released = |x: &[f64]| x[plant.layout().reaction_heat()];
    let (peak_time, peak_reaction_power) = run.peak_rate(0.0, end, &power, &released);
    let (phase, state) = run.state_at(peak_time);
    let at_peak = plant.snapshot(&phase, peak_time, &state);
    let (_, state_end) = run.state_at(end);
    let off_gas = |phase: &Phase, t: f64, x: &[f64]| plant.snapshot(phase, t, x).off_gas_rate;
    let gas_formed = |x: &[f64]| plant.gas_mass(x);
    let (_, peak_off_gas) = run.peak_rate(0.0, end, &off_gas, &gas_formed);
    let coolant =
        |phase: &Phase, t: f64, x: &[f64]| -plant.snapshot(phase, t, x).coolant_temperature;
    let (_, min_coolant) = run.maximum(0.0, end, &coolant);
    NormalFigures {
        max_temperature,
        max_temperature_time,
        peak_reaction_power,
        peak_time,
        cooling_at_peak: at_peak.cooling_power,
        cooling_capacity_at_tp: plant.u
            * at_peak.cooled_area
            * (plant.process_temperature - plant.coldest_coolant_temperature()),
        peak_off_gas,
        min_coolant_temperature: -min_coolant,
        final_gas_mass: {
            let (phase, state) = run.state_at(end);
            plant.snapshot(&phase, end, &state).gas_mass
        },
        final_decomposition_conversion: state_end[plant.layout().alpha()],
    }
}

/// Thermal accumulation X = Q_acc / Q_total at state x: the heat still releasable by the
/// amounts present over `releasable_heat`, the heat of the whole recipe (0 when it is none).
pub(crate) fn thermal_accumulation(plant: &Plant, releasable_heat: f64, x: &[f64]) -> f64 {
    if releasable_heat > 0.0 {
        plant.network.releasable_heat(plant.layout().amounts(x)) / releasable_heat
    } else {
        0.0
    }
}

/// The first reaction's reactant that limits it in the recipe totals (smallest
/// (n_charge + n_feed) / nu among reactants present), as a species index.
pub(crate) fn limiting_reactant(plant: &Plant) -> Option<usize> {
    let first = plant.network.reactions.first()?;
    let totals = plant.recipe_amounts();
    (0..totals.len())
        .filter(|i| first.nu[*i] < 0.0 && totals[*i] > 0.0 && !plant.network.gas[*i])
        .min_by(|a, b| (totals[*a] / -first.nu[*a]).total_cmp(&(totals[*b] / -first.nu[*b])))
}

/// Conversion at the end of normal operation of the first reaction's limiting reactant.
fn final_conversion(plant: &Plant, run: &Trajectory) -> (Option<String>, Option<f64>) {
    let Some(i) = limiting_reactant(plant) else {
        return (None, None);
    };
    let totals = plant.recipe_amounts();
    let layout = plant.layout();
    let (_, state) = run.state_at(plant.process_duration);
    let conversion = 1.0 - state[layout.amount(i)] / totals[i];
    (Some(plant.network.species[i].clone()), Some(conversion))
}
