//! Integration of the balance over one stretch without discontinuities, with ode_solvers'
//! Dopri5 (adaptive explicit Runge-Kutta 5(4), tight tolerances) on a scaled state, keeping
//! every accepted step and the solver's dense output for values in between.
//!
//! Small states (the usual case) use fixed-size vectors, so the solver's stages allocate
//! nothing; larger networks fall back to a heap vector.

use super::balance::{Layout, Phase};
use super::plant::Plant;
use nalgebra::allocator::Allocator;
use nalgebra::{Const, DefaultAllocator, Dim, Dyn, OVector};
use ode_solvers::continuous_output_model::ContinuousOutputModel;
use ode_solvers::dop_shared::{IntegrationError, OutputType};
use ode_solvers::{Dopri5, System};
use std::cell::{Cell, RefCell};
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

/// The solver's dense output, for the vector size the stretch was solved with.
enum Dense {
    Small(ContinuousOutputModel<f64, OVector<f64, Const<8>>>),
    Medium(ContinuousOutputModel<f64, OVector<f64, Const<16>>>),
    Large(ContinuousOutputModel<f64, OVector<f64, Dyn>>),
    None,
}

impl Dense {
    fn evaluate(&self, t: f64) -> Option<Vec<f64>> {
        match self {
            Dense::Small(m) => m.evaluate(t).map(|y| y.iter().copied().collect()),
            Dense::Medium(m) => m.evaluate(t).map(|y| y.iter().copied().collect()),
            Dense::Large(m) => m.evaluate(t).map(|y| y.iter().copied().collect()),
            Dense::None => None,
        }
    }
}

/// The result of one stretch: accepted steps (physical state) and dense output.
pub struct Piece {
    pub phase: Phase,
    pub t_start: f64,
    pub t_end: f64,
    pub times: Vec<f64>,
    pub states: Vec<Vec<f64>>,
    dense: Dense,
    scale: Vec<f64>,
    /// True when the stop rule ended the stretch before the planned end.
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

/// Buffers reused by every evaluation of the right-hand side.
struct Scratch {
    x: Vec<f64>,
    dx: Vec<f64>,
    rates: Vec<f64>,
}

/// What the step callback saw, read back after the solver has finished.
#[derive(Debug, Clone, Copy, Default)]
struct RunStatus {
    steps: u32,
    out_of_time: bool,
    not_finite: bool,
}

/// The balance on the scaled state: y = x / scale; components past the state are padding.
struct ScaledBalance<'a, 'r> {
    plant: &'a Plant,
    phase: Phase,
    scale: &'a [f64],
    scratch: RefCell<Scratch>,
    stop: Option<StopRule<'r>>,
    deadline: Option<Instant>,
    status: &'a Cell<RunStatus>,
}

impl<D: Dim> System<f64, OVector<f64, D>> for ScaledBalance<'_, '_>
where
    DefaultAllocator: Allocator<D>,
{
    fn system(&self, t: f64, y: &OVector<f64, D>, dy: &mut OVector<f64, D>) {
        let mut guard = self.scratch.borrow_mut();
        let Scratch { x, dx, rates } = &mut *guard;
        for ((xi, yi), s) in x.iter_mut().zip(y.iter()).zip(self.scale) {
            *xi = yi * s;
        }
        self.plant.derivatives(&self.phase, t, x, dx, rates);
        dy.fill(0.0);
        for ((d, v), s) in dy.iter_mut().zip(dx.iter()).zip(self.scale) {
            *d = v / s;
        }
    }

    fn solout(&mut self, t: f64, y: &OVector<f64, D>, dy: &OVector<f64, D>) -> bool {
        let mut status = self.status.get();
        status.steps += 1;
        status.not_finite = !y.iter().all(|v| v.is_finite());
        status.out_of_time =
            status.steps % 512 == 0 && self.deadline.is_some_and(|d| Instant::now() > d);
        self.status.set(status);
        if status.not_finite || status.out_of_time {
            return true;
        }
        let Some(rule) = self.stop.as_mut() else {
            return false;
        };
        let mut guard = self.scratch.borrow_mut();
        let Scratch { x, dx, .. } = &mut *guard;
        let scaled = y.iter().zip(dy.iter()).zip(self.scale);
        for ((xi, di), ((yi, dyi), s)) in x.iter_mut().zip(dx.iter_mut()).zip(scaled) {
            *xi = yi * s;
            *di = dyi * s;
        }
        rule(t, x, dx)
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
    if t1 <= t0 {
        return Ok(single_point_piece(phase, t0, x0, scale));
    }
    let status = Cell::new(RunStatus::default());
    let system = ScaledBalance {
        plant,
        phase,
        scale: &scale,
        scratch: RefCell::new(Scratch {
            x: vec![0.0; x0.len()],
            dx: vec![0.0; x0.len()],
            rates: vec![0.0; plant.network.reactions.len()],
        }),
        stop,
        deadline,
        status: &status,
    };
    let y0: Vec<f64> = x0.iter().zip(&scale).map(|(v, s)| v / s).collect();
    let (times, ys, dense) = match x0.len() {
        0..=8 => solve(
            system,
            t0,
            t1,
            OVector::<f64, Const<8>>::from_iterator(padded(&y0, 8)),
            Dense::Small,
        )?,
        9..=16 => solve(
            system,
            t0,
            t1,
            OVector::<f64, Const<16>>::from_iterator(padded(&y0, 16)),
            Dense::Medium,
        )?,
        n => solve(
            system,
            t0,
            t1,
            OVector::<f64, Dyn>::from_iterator(n, y0.iter().copied()),
            Dense::Large,
        )?,
    };
    let last_time = times.last().copied().unwrap_or(t0);
    let outcome = status.get();
    if outcome.out_of_time {
        return Err(IntegrationFailure::OutOfTime { at_time: last_time });
    }
    if outcome.not_finite {
        return Err(IntegrationFailure::NotFinite { at_time: last_time });
    }
    let mut all_times = Vec::with_capacity(times.len() + 1);
    all_times.push(t0);
    all_times.extend(times);
    let mut states = Vec::with_capacity(ys.len() + 1);
    states.push(x0.to_vec());
    states.extend(ys.into_iter().map(|y| {
        y.iter()
            .zip(&scale)
            .map(|(v, s)| v * s)
            .collect::<Vec<f64>>()
    }));
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

fn padded(values: &[f64], size: usize) -> impl Iterator<Item = f64> + '_ {
    values
        .iter()
        .copied()
        .chain(std::iter::repeat(0.0))
        .take(size)
}

type Solved = (Vec<f64>, Vec<Vec<f64>>, Dense);

fn solve<D: Dim>(
    system: ScaledBalance<'_, '_>,
    t0: f64,
    t1: f64,
    y0: OVector<f64, D>,
    wrap: fn(ContinuousOutputModel<f64, OVector<f64, D>>) -> Dense,
) -> Result<Solved, IntegrationFailure>
where
    DefaultAllocator: Allocator<D>,
{
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
    let mut dense = ContinuousOutputModel::new();
    solver
        .integrate_with_continuous_output_model(&mut dense)
        .map_err(|e| match e {
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
    let (times, ys) = solver.results().get();
    let states = ys.iter().map(|y| y.iter().copied().collect()).collect();
    Ok((times.clone(), states, wrap(dense)))
}

fn single_point_piece(phase: Phase, t0: f64, x0: &[f64], scale: Vec<f64>) -> Piece {
    Piece {
        phase,
        t_start: t0,
        t_end: t0,
        times: vec![t0],
        states: vec![x0.to_vec()],
        dense: Dense::None,
        scale,
        stopped_early: false,
    }
}
