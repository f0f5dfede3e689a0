//! Scenarios: normal operation, and a cooling failure at any time with the feed going on or
//! stopping. Each is integrated piecewise between its discontinuities (feed start and end,
//! the failure), with the decomposition switched off once it is spent.

use super::balance::{Layout, Phase};
use super::integrate::{IntegrationFailure, Piece, integrate_stretch};
use super::plant::Plant;
use crate::case::Dosing;
use crate::numeric::golden_section_max;
use std::time::Instant;

/// Decomposition conversion above which its remaining heat is negligible and it is switched
/// off, so that the burnt-out plateau does not make the run stiff.
const SPENT_CONVERSION: f64 = 1.0 - 1e-9;
/// A failure run ends once the heat still releasable would raise T by less than this, K.
const SETTLED_RISE_K: f64 = 1e-6;

#[derive(Debug, Clone, PartialEq, thiserror::Error)]
#[error("the {scenario} could not be integrated: {reason} at t = {at_h:.4} h; {advice}")]
pub struct ScenarioError {
    pub scenario: String,
    pub reason: String,
    pub at_h: f64,
    pub advice: String,
}

fn scenario_error(scenario: &str, failure: IntegrationFailure) -> ScenarioError {
    let (reason, at) = match failure {
        IntegrationFailure::TooManySteps { at_time } => (
            "the solver needed too many steps (the kinetics are very stiff)",
            at_time,
        ),
        IntegrationFailure::StepSizeUnderflow { at_time } => {
            ("the step size fell below round-off", at_time)
        }
        IntegrationFailure::OutOfTime { at_time } => ("the time budget ran out", at_time),
        IntegrationFailure::NotFinite { at_time } => ("the state stopped being finite", at_time),
    };
    ScenarioError {
        scenario: scenario.to_string(),
        reason: reason.to_string(),
        at_h: at / 3600.0,
        advice: "check the rate constants, activation energies and their units; extreme kinetics are outside what this screening model follows".to_string(),
    }
}

/// A scenario's run: consecutive pieces.
pub struct Trajectory {
    pub pieces: Vec<Piece>,
}

/// One stored point of a run.
#[derive(Debug, Clone, Copy)]
pub struct Sample<'a> {
    pub phase: &'a Phase,
    pub time: f64,
    pub state: &'a [f64],
}

impl Trajectory {
    pub fn end_time(&self) -> f64 {
        self.pieces.last().map_or(0.0, |p| p.t_end)
    }

    pub fn last_state(&self) -> &[f64] {
        self.pieces.last().map_or(&[], |p| p.last_state())
    }

    pub fn samples(&self) -> impl Iterator<Item = Sample<'_>> {
        self.pieces.iter().flat_map(|p| {
            p.times.iter().zip(&p.states).map(move |(t, x)| Sample {
                phase: &p.phase,
                time: *t,
                state: x,
            })
        })
    }

    /// The piece that holds time t (the later one at a boundary), and the state there.
    pub fn state_at(&self, t: f64) -> (Phase, Vec<f64>) {
        let piece = self
            .pieces
            .iter()
            .rev()
            .find(|p| t >= p.t_start)
            .or(self.pieces.first())
            .expect("a trajectory has at least one piece");
        (piece.phase, piece.state_at(t))
    }

    /// The largest value of `f` over samples in [from, to], refined between the steps next
    /// to the best sample by a golden-section search on the dense output.
    pub fn maximum(
        &self,
        from: f64,
        to: f64,
        f: &dyn Fn(&Phase, f64, &[f64]) -> f64,
    ) -> (f64, f64) {
        let mut best = (from, f64::NEG_INFINITY);
        for piece in &self.pieces {
            let inside = |t: f64| t >= from && t <= to;
            for (t, x) in piece.times.iter().zip(&piece.states) {
                if !inside(*t) {
                    continue;
                }
                let value = f(&piece.phase, *t, x);
                if value > best.1 {
                    best = (*t, value);
                }
            }
        }
        self.refine_maximum(best, from, to, f)
    }

    fn refine_maximum(
        &self,
        best: (f64, f64),
        from: f64,
        to: f64,
        f: &dyn Fn(&Phase, f64, &[f64]) -> f64,
    ) -> (f64, f64) {
        let Some(piece) = self
            .pieces
            .iter()
            .find(|p| best.0 >= p.t_start && best.0 <= p.t_end)
        else {
            return best;
        };
        let k = piece.times.partition_point(|t| *t < best.0);
        let left = piece.times[k.saturating_sub(1)].max(from);
        let right = piece.times[(k + 1).min(piece.times.len() - 1)].min(to);
        if right <= left {
            return best;
        }
        let value_at = |t: f64| f(&piece.phase, t, &piece.state_at(t));
        let refined = golden_section_max(&value_at, left, right, 40);
        if refined.1 > best.1 { refined } else { best }
    }
}

/// What is switched on over time in one scenario.
#[derive(Debug, Clone, Copy)]
struct Switches {
    failure_time: Option<f64>,
    feed_stops_at_failure: bool,
    decomposition: bool,
}

impl Switches {
    fn phase_at(&self, plant: &Plant, t: f64, fed_mass: f64, spent: bool) -> Phase {
        let failed = self.failure_time.is_some_and(|tf| t >= tf);
        let feed_planned = plant.feed.as_ref().is_some_and(|f| f.is_on_at(t));
        Phase {
            feed_on: feed_planned && !(failed && self.feed_stops_at_failure),
            cooling_on: !failed,
            decomposition_on: self.decomposition && plant.decomposition.is_some() && !spent,
            t_start: t,
            fed_at_start: fed_mass,
        }
    }
}

/// Options of a cooling-failure run.
#[derive(Debug, Clone, Copy)]
pub struct FailureOptions {
    pub dosing: Dosing,
    pub decomposition: bool,
}

/// Normal operation from t = 0 to the end of the process (and of the feed, if later).
pub fn run_normal(plant: &Plant, deadline: Option<Instant>) -> Result<Trajectory, ScenarioError> {
    let switches = Switches {
        failure_time: None,
        feed_stops_at_failure: false,
        decomposition: true,
    };
    run(
        plant,
        0.0,
        &plant.initial_state(),
        0.0,
        plant.normal_horizon(),
        switches,
        deadline,
    )
    .map_err(|e| scenario_error("normal operation", e))
}

/// A cooling failure at `failure_time`, from the normal state then, followed for the horizon.
pub fn run_failure(
    plant: &Plant,
    normal: &Trajectory,
    failure_time: f64,
    options: FailureOptions,
    deadline: Option<Instant>,
) -> Result<Trajectory, ScenarioError> {
    let (phase, state) = normal.state_at(failure_time);
    let fed = plant.fed_mass(&phase, failure_time);
    let switches = Switches {
        failure_time: Some(failure_time),
        feed_stops_at_failure: options.dosing == Dosing::Stops,
        decomposition: options.decomposition,
    };
    let end = failure_time + plant.failure_horizon;
    run(plant, failure_time, &state, fed, end, switches, deadline).map_err(|e| {
        scenario_error(
            &format!("cooling failure at {:.3} h", failure_time / 3600.0),
            e,
        )
    })
}

/// Times in (t0, t_end) where something switches.
fn breakpoints(plant: &Plant, t0: f64, t_end: f64, switches: &Switches) -> Vec<f64> {
    let mut points: Vec<f64> = Vec::new();
    if let Some(feed) = &plant.feed {
        points.extend([feed.start, feed.end()]);
    }
    points.extend(switches.failure_time);
    points.retain(|t| *t > t0 && *t < t_end);
    points.push(t_end);
    points.sort_by(f64::total_cmp);
    points.dedup();
    points
}

fn run(
    plant: &Plant,
    t0: f64,
    x0: &[f64],
    fed0: f64,
    t_end: f64,
    switches: Switches,
    deadline: Option<Instant>,
) -> Result<Trajectory, IntegrationFailure> {
    let layout = plant.layout();
    let mut pieces: Vec<Piece> = Vec::new();
    let (mut t, mut x, mut fed) = (t0, x0.to_vec(), fed0);
    let mut spent = false;
    for stop_at in breakpoints(plant, t0, t_end, &switches) {
        while t < stop_at {
            let phase = switches.phase_at(plant, t, fed, spent);
            let mut settled = false;
            let mut rule = |_: f64, state: &[f64], _: &[f64]| {
                if phase.decomposition_on && state[layout.alpha()] > SPENT_CONVERSION {
                    return true;
                }
                settled = is_settled(plant, &phase, state);
                settled
            };
            let piece = integrate_stretch(plant, phase, t, &x, stop_at, Some(&mut rule), deadline)?;
            t = if piece.stopped_early {
                piece.t_end
            } else {
                stop_at
            };
            x = piece.last_state().to_vec();
            fed = plant.fed_mass(&phase, t);
            spent |= phase.decomposition_on && x[layout.alpha()] > SPENT_CONVERSION;
            pieces.push(piece);
            if settled {
                return Ok(Trajectory { pieces });
            }
        }
    }
    Ok(Trajectory { pieces })
}

/// After a failure with nothing fed and no decomposition, T no longer changes once the
/// releasable heat is gone: the run can end there.
fn is_settled(plant: &Plant, phase: &Phase, state: &[f64]) -> bool {
    if phase.cooling_on || phase.feed_on || phase.decomposition_on {
        return false;
    }
    let layout = plant.layout();
    let amounts: Vec<f64> = (0..layout.species)
        .map(|i| state[layout.amount(i)])
        .collect();
    let remaining = plant.network.releasable_heat(&amounts);
    remaining / plant.final_heat_capacity() < SETTLED_RISE_K
}

impl Layout {
    /// The amounts (mol) in a state; gas species hold what has formed, not what is present.
    pub fn amounts<'a>(&self, state: &'a [f64]) -> &'a [f64] {
        &state[1..1 + self.species]
    }
}
