//! Integration of the balance over one stretch without discontinuities, with ode_solvers'
//! Dopri5 (adaptive explicit Runge-Kutta 5(4), tight tolerances) on a scaled state, keeping
//! every accepted step and the solver's dense output for values in between.

use super::balance::{Layout, Phase};
use super::plant::Plant;
use ode_solvers::continuous_output_model::ContinuousOutputModel;
use ode_solvers::dop_shared::{IntegrationError, OutputType};
use ode_solvers::{DVector, Dopri5, System};
use std::cell::Cell;
use std::time::Instant;

/// Relative and absolute tolerance on the scaled state (all components of order one).
pub const RELATIVE_TOLERANCE: f64 = 1e-9;
pub const ABSOLUTE_TOLERANCE: f64 = 1e-11;
/// Accepted steps allowed in one stretch before the run is declared too stiff.
pub const MAX_STEPS: u32 = 400_000;

/// Why a stretch could not be integrated.
#[derive(Debug, Clone, PartialEq)]
pub enum IntegrationFailure {
    TooManySteps { at_time: f64 },
    StepSizeUnderflow { at_time: f64 },
    OutOfTime { at_time: f64 },
    NotFinite { at_time: f64 },
}

/// The result of one stretch: accepted steps (physical state) and dense output.
pub struct Piece {
    pub phase: Phase,
    pub t_start: f64,
    pub t_end: f64,
    pub times: Vec<f64>,
    pub states: Vec<Vec<f64>>,
    dense: ContinuousOutputModel<f64, DVector<f64>>,
    scale: Vec<f64>,
    /// True when the stop rule ended the stretch before `t_end` was planned.
    pub stopped_early: bool,
}

impl Piece {
    /// The state at `t` within the stretch, from the solver's dense output.
    pub fn state_at(&self, t: f64) -> Vec<f64> {
        let t = t.clamp(self.t_start, self.t_end);
        if t <= self.t_start {
            return self.states[0].clone();
        }
        match self.dense.evaluate(t) {
            Some(y) => y.iter().zip(&self.scale).map(|(v, s)| v * s).collect(),
            None => self.states.last().cloned().unwrap_or_default(),
        }
    }

    pub fn last_state(&self) -> &[f64] {
        self.states.last().map(Vec::as_slice).unwrap_or(&[])
    }
}

/// A rule checked after every accepted step: (t, state, derivative) -> stop now.
pub type StopRule<'a> = &'a mut dyn FnMut(f64, &[f64], &[f64]) -> bool;

/// Scale of each state component, so that one tolerance fits all.
pub fn state_scale(plant: &Plant) -> Vec<f64> {
    let layout = plant.layout();
    let amount_scale = plant
        .recipe_amounts()
        .iter()
        .fold(1e-6_f64, |a, b| a.max(*b));
    let heat_scale = (plant.final_heat_capacity() * 100.0).max(1.0);
    let mut scale = vec![amount_scale; layout.state_len()];
    scale[Layout::TEMPERATURE] = 100.0;
    scale[layout.alpha()] = 1.0;
    scale[layout.reaction_heat()] = heat_scale;
    scale[layout.decomposition_heat()] = heat_scale;
    scale
}

struct ScaledBalance<'a, 'r> {
    plant: &'a Plant,
    phase: Phase,
    scale: &'a [f64],
    rates: std::cell::RefCell<Vec<f64>>,
    stop: Option<StopRule<'r>>,
    deadline: Option<Instant>,
    status: &'a Cell<RunStatus>,
}

/// What the step callback saw, read back after the solver has finished.
#[derive(Debug, Clone, Copy, Default)]
struct RunStatus {
    steps: u32,
    out_of_time: bool,
    not_finite: bool,
}

impl ScaledBalance<'_, '_> {
    fn unscale(&self, y: &DVector<f64>) -> Vec<f64> {
        y.iter().zip(self.scale).map(|(v, s)| v * s).collect()
    }
}

impl System<f64, DVector<f64>> for ScaledBalance<'_, '_> {
    fn system(&self, t: f64, y: &DVector<f64>, dy: &mut DVector<f64>) {
        let x = self.unscale(y);
        let mut dx = vec![0.0; x.len()];
        self.plant
            .derivatives(&self.phase, t, &x, &mut dx, &mut self.rates.borrow_mut());
        for ((d, v), s) in dy.iter_mut().zip(&dx).zip(self.scale) {
            *d = v / s;
        }
    }

    fn solout(&mut self, t: f64, y: &DVector<f64>, dy: &DVector<f64>) -> bool {
        let mut status = self.status.get();
        status.steps += 1;
        status.not_finite = !y.iter().all(|v| v.is_finite());
        status.out_of_time =
            status.steps % 512 == 0 && self.deadline.is_some_and(|d| Instant::now() > d);
        self.status.set(status);
        if status.not_finite || status.out_of_time {
            return true;
        }
        match self.stop.as_mut() {
            Some(rule) => {
                let x: Vec<f64> = y.iter().zip(self.scale).map(|(v, s)| v * s).collect();
                let dx: Vec<f64> = dy.iter().zip(self.scale).map(|(v, s)| v * s).collect();
                rule(t, &x, &dx)
            }
            None => false,
        }
    }
}

/// Integrates from (t0, x0) to t1 in `phase`, stopping early where `stop` says so.
pub fn integrate_stretch(
    plant: &Plant,
    phase: Phase,
    t0: f64,
    x0: &[f64],
    t1: f64,
    stop: Option<StopRule<'_>>,
    deadline: Option<Instant>,
) -> Result<Piece, IntegrationFailure> {
    let scale = state_scale(plant);
    let status = Cell::new(RunStatus::default());
    let y0 = DVector::from_iterator(x0.len(), x0.iter().zip(&scale).map(|(v, s)| v / s));
    if t1 <= t0 {
        return Ok(single_point_piece(phase, t0, x0, scale));
    }
    let system = ScaledBalance {
        plant,
        phase,
        scale: &scale,
        rates: std::cell::RefCell::new(vec![0.0; plant.network.reactions.len()]),
        stop,
        deadline,
        status: &status,
    };
    let mut solver = Dopri5::from_param(
        system,
        t0,
        t1,
        0.0,
        y0,
        RELATIVE_TOLERANCE,
        ABSOLUTE_TOLERANCE,
        0.9,
        0.04,
        0.2,
        10.0,
        t1 - t0,
        0.0,
        MAX_STEPS,
        u32::MAX,
        OutputType::Continuous,
    );
    let mut dense = ContinuousOutputModel::default();
    let outcome = solver.integrate_with_continuous_output_model(&mut dense);
    let (times, ys) = solver.results().get();
    let last_time = times.last().copied().unwrap_or(t0);
    outcome.map_err(|e| match e {
        IntegrationError::MaxNumStepReached { x, .. } => {
            IntegrationFailure::TooManySteps { at_time: x }
        }
        IntegrationError::StepSizeUnderflow { x } => {
            IntegrationFailure::StepSizeUnderflow { at_time: x }
        }
        IntegrationError::StiffnessDetected { x } => {
            IntegrationFailure::TooManySteps { at_time: x }
        }
    })?;
    let mut states: Vec<Vec<f64>> = Vec::with_capacity(ys.len() + 1);
    states.push(x0.to_vec());
    states.extend(ys.iter().map(|y| {
        y.iter()
            .zip(&scale)
            .map(|(v, s)| v * s)
            .collect::<Vec<f64>>()
    }));
    let mut all_times = Vec::with_capacity(times.len() + 1);
    all_times.push(t0);
    all_times.extend_from_slice(times);
    if status.get().out_of_time {
        return Err(IntegrationFailure::OutOfTime { at_time: last_time });
    }
    if status.get().not_finite {
        return Err(IntegrationFailure::NotFinite { at_time: last_time });
    }
    let stopped_early = last_time < t1 - 1e-9 * (t1 - t0).max(1.0);
    Ok(Piece {
        phase,
        t_start: t0,
        t_end: last_time,
        times: all_times,
        states,
        dense,
        scale,
        stopped_early,
    })
}

fn single_point_piece(phase: Phase, t0: f64, x0: &[f64], scale: Vec<f64>) -> Piece {
    Piece {
        phase,
        t_start: t0,
        t_end: t0,
        times: vec![t0],
        states: vec![x0.to_vec()],
        dense: ContinuousOutputModel::default(),
        scale,
        stopped_early: false,
    }
}
