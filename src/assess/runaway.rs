//! The coupled runaway: from the worst failure time, the full model with the decomposition
//! on (and the boiling barrier where the case has a solvent): how hot, how fast, how far the
//! decomposition goes, and what the condenser must take.

use super::offgas::{SpeciesPeak, species_peaks};
use crate::model::balance::{Layout, Phase};
use crate::model::plant::Plant;
use crate::model::scenario::{FailureOptions, ScenarioError, Trajectory, run_failure};
use std::time::Instant;

#[derive(Debug, Clone)]
pub struct Runaway {
    pub failure_time: f64,
    pub max_temperature: f64,
    /// From the failure to the maximum rate of temperature rise, s; and that rate, K/s.
    pub time_to_max_rate: f64,
    pub max_rate: f64,
    pub decomposition_conversion: f64,
    pub off_gas: Vec<SpeciesPeak>,
    pub boiling: Option<Boiling>,
}

/// The boiling barrier in the runaway run.
#[derive(Debug, Clone)]
pub struct Boiling {
    pub boiling_point: f64,
    /// From the failure until boiling starts, s (None: the run never boils).
    pub starts_after: Option<f64>,
    pub peak_vapour_rate_mol_s: f64,
    pub peak_vapour_rate_kg_h: f64,
    /// The largest heat the condenser must take, W.
    pub peak_heat: f64,
    pub condenser_capacity: Option<f64>,
    /// From the failure until the heat first exceeds the condenser, s.
    pub condenser_exceeded_after: Option<f64>,
}

pub fn coupled_runaway(
    plant: &Plant,
    normal: &Trajectory,
    failure_time: f64,
    deadline: Option<Instant>,
) -> Result<Runaway, ScenarioError> {
    let options = FailureOptions {
        dosing: plant.dosing_after_failure,
        decomposition: true,
    };
    let run = run_failure(plant, normal, failure_time, options, deadline)?;
    let end = run.end_time();
    let temperature = |_: &Phase, _: f64, x: &[f64]| x[Layout::TEMPERATURE];
    let (_, max_temperature) = run.maximum(failure_time, end, &temperature);
    let rate = |phase: &Phase, t: f64, x: &[f64]| plant.temperature_rate(phase, t, x);
    let (rate_time, max_rate) = run.maximum(failure_time, end, &rate);
    Ok(Runaway {
        failure_time,
        max_temperature,
        time_to_max_rate: rate_time - failure_time,
        max_rate,
        decomposition_conversion: run.last_state()[plant.layout().alpha()].clamp(0.0, 1.0),
        off_gas: species_peaks(plant, &run, failure_time, end),
        boiling: plant.boiling.map(|_| boiling(plant, &run, failure_time)),
    })
}

fn boiling(plant: &Plant, run: &Trajectory, failure_time: f64) -> Boiling {
    let barrier = plant.boiling.expect("called with a boiling barrier");
    let mut found = Boiling {
        boiling_point: barrier.boiling_point,
        starts_after: None,
        peak_vapour_rate_mol_s: 0.0,
        peak_vapour_rate_kg_h: 0.0,
        peak_heat: 0.0,
        condenser_capacity: barrier.condenser_capacity,
        condenser_exceeded_after: None,
    };
    for sample in run.samples().filter(|s| s.phase.boiling) {
        let s = plant.snapshot(sample.phase, sample.time, sample.state);
        found.starts_after.get_or_insert(sample.time - failure_time);
        if s.evaporation_power > found.peak_heat {
            found.peak_heat = s.evaporation_power;
            found.peak_vapour_rate_mol_s = s.vapour_rate;
            found.peak_vapour_rate_kg_h = s.vapour_rate * barrier.molar_mass * 3600.0;
        }
        if barrier
            .condenser_capacity
            .is_some_and(|c| s.evaporation_power > c)
        {
            found
                .condenser_exceeded_after
                .get_or_insert(sample.time - failure_time);
        }
    }
    found
}
