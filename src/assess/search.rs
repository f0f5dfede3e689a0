//! The worst cooling-failure time: the failure time over the feed window whose adiabatic run
//! (decomposition off) reaches the highest temperature, by a coarse sweep refined by a
//! golden-section search in the bracket around the best sweep point.

use crate::model::balance::Layout;
use crate::model::plant::Plant;
use crate::model::scenario::{FailureOptions, ScenarioError, Trajectory, run_failure};
use crate::numeric::golden_section_max;
use std::borrow::Cow;
use std::cell::RefCell;
use std::time::Instant;

/// Failure times of the coarse sweep over the feed window (ends included).
pub const SWEEP_POINTS: usize = 11;
/// Golden-section iterations in the best bracket: it shrinks by 0.618^n.
pub const REFINE_ITERATIONS: usize = 12;

/// The result: the worst failure time (s) and the maximum temperature it reaches (K).
#[derive(Debug, Clone, Copy)]
pub struct WorstFailure {
    pub failure_time: f64,
    pub max_temperature: f64,
    pub runs: usize,
}

/// Highest temperature after a cooling failure at `t_f`, decomposition off.
pub fn max_temperature_after_failure(
    plant: &Plant,
    normal: &Trajectory,
    t_f: f64,
    deadline: Option<Instant>,
) -> Result<f64, ScenarioError> {
    let run = simulated_mtsr_run(plant, normal, t_f, deadline)?;
    let temperature = |_: &_, _: f64, x: &[f64]| x[Layout::TEMPERATURE];
    Ok(run.maximum(t_f, run.end_time(), &temperature).1)
}

/// The cooling-failure run at `t_f` with decomposition off, on a plant already without its
/// boiling barrier (see `without_boiling`): the run whose maximum is the simulated MTSR.
pub(crate) fn simulated_mtsr_run(
    plant: &Plant,
    normal: &Trajectory,
    t_f: f64,
    deadline: Option<Instant>,
) -> Result<Trajectory, ScenarioError> {
    let options = FailureOptions {
        dosing: plant.dosing_after_failure,
        decomposition: false,
    };
    run_failure(plant, normal, t_f, options, deadline)
}

/// The plant of the contract's simulated MTSR: the case's plant with no boiling barrier.
pub(crate) fn without_boiling(plant: &Plant) -> Cow<'_, Plant> {
    match plant.boiling {
        Some(_) => Cow::Owned(Plant {
            boiling: None,
            ..plant.clone()
        }),
        None => Cow::Borrowed(plant),
    }
}

/// The worst failure time and its temperature. The contract's simulated MTSR: decomposition
/// off and no boiling barrier (the synthesis reaction's own reach), whatever the case adds.
pub fn worst_failure(
    plant: &Plant,
    normal: &Trajectory,
    deadline: Option<Instant>,
) -> Result<WorstFailure, ScenarioError> {
    let plant = without_boiling(plant);
    let plant = plant.as_ref();
    let (start, end) = match &plant.feed {
        Some(feed) => (feed.start, normal.feed_end().unwrap_or(feed.end())),
        None => (0.0, 0.0),
    };
    if end <= start {
        let max_temperature = max_temperature_after_failure(plant, normal, start, deadline)?;
        return Ok(WorstFailure {
            failure_time: start,
            max_temperature,
            runs: 1,
        });
    }
    let times: Vec<f64> = (0..SWEEP_POINTS)
        .map(|k| start + (end - start) * k as f64 / (SWEEP_POINTS - 1) as f64)
        .collect();
    let mut sweep = Vec::with_capacity(times.len());
    for &t in &times {
        sweep.push(max_temperature_after_failure(plant, normal, t, deadline)?);
    }
    let best = (0..sweep.len())
        .max_by(|a, b| sweep[*a].total_cmp(&sweep[*b]))
        .unwrap_or(0);
    let left = times[best.saturating_sub(1)];
    let right = times[(best + 1).min(times.len() - 1)];
    let failure = RefCell::new(None);
    let objective = |t: f64| match max_temperature_after_failure(plant, normal, t, deadline) {
        Ok(v) => v,
        Err(e) => {
            failure.borrow_mut().get_or_insert(e);
            f64::NEG_INFINITY
        }
    };
    let refined = golden_section_max(&objective, left, right, REFINE_ITERATIONS);
    if let Some(e) = failure.into_inner() {
        return Err(e);
    }
    let runs = SWEEP_POINTS + REFINE_ITERATIONS + 2;
    let result = if refined.1 > sweep[best] {
        refined
    } else {
        (times[best], sweep[best])
    };
    Ok(WorstFailure {
        failure_time: result.0,
        max_temperature: result.1,
        runs,
    })
}
