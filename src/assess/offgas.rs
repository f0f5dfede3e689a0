//! Off-gas: the peak formation rate of every gas species over a run, for the scrubber.

use crate::model::balance::Phase;
use crate::model::plant::Plant;
use crate::model::scenario::Trajectory;
use serde::Serialize;

/// The peak of one gas species over a stretch of a run.
#[derive(Debug, Clone, Serialize)]
pub struct SpeciesPeak {
    pub species: String,
    pub peak_mol_s: f64,
    pub peak_kg_h: f64,
    pub peak_time_h: f64,
}

/// Peak rates of each gas species over [from, to] of `run`.
pub fn species_peaks(plant: &Plant, run: &Trajectory, from: f64, to: f64) -> Vec<SpeciesPeak> {
    let net = &plant.network;
    (0..net.species_count())
        .filter(|i| net.gas[*i])
        .map(|i| {
            let rate = |phase: &Phase, t: f64, x: &[f64]| {
                plant
                    .gas_formation_rates(phase, t, x)
                    .into_iter()
                    .find(|(j, _)| *j == i)
                    .map_or(0.0, |(_, r)| r)
            };
            let formed = |x: &[f64]| x[plant.layout().amount(i)];
            let (time, peak) = run.peak_rate(from, to, &rate, &formed);
            SpeciesPeak {
                species: net.species[i].clone(),
                peak_mol_s: peak.max(0.0),
                peak_kg_h: peak.max(0.0) * net.molar_mass[i] * 3600.0,
                peak_time_h: time / 3600.0,
            }
        })
        .collect()
}
