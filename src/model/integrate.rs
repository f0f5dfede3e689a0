//! Integration of the balance over one stretch without discontinuities, on a scaled state:
//! ode_solvers' Dopri5 (adaptive explicit Runge-Kutta 5(4), tight tolerances) while the
//! problem is not stiff, and the extrapolated linearly implicit Euler method of `stiff` from
//! where Dopri5 finds it stiff. Every accepted step is kept with its derivative, so that
//! values in between come from cubic Hermite interpolation.
//!
//! Small states (the usual case) use fixed-size vectors, so that the explicit stages
//! allocate nothing; larger networks fall back to a heap vector.

use super::balance::{Layout, Phase};
use super::plant::Plant;
use super::stiff::{StiffFailure, StiffSettings, integrate_stiff};
use nalgebra::allocator::Allocator;
use nalgebra::{Const, DefaultAllocator, Dim, Dyn, OVector};
use ode_solvers::dop_shared::{IntegrationError, OutputType};
use ode_solvers::{Dopri5, System};
use std::cell::{Cell, RefCell};
use std::time::Instant;

/// Relative and absolute tolerance on the scaled state (all components of order one).
pub const RELATIVE_TOLERANCE: f64 = 1e-9;
pub const ABSOLUTE_TOLERANCE: f64 = 1e-11;
/// Accepted steps allowed in one stretch, for each method.
pub const MAX_STEPS: u32 = 400_000;
/// Dopri5 tests for stiffness every this many steps (and every step once it suspects it).
const STIFFNESS_CHECK_INTERVAL: u32 = 100;

/// Why a stretch could not be integrated.
#[derive(Debug, Clone, PartialEq)]
pub enum IntegrationFailure {
    TooManySteps { at_time: f64 },
    StepSizeUnderflow { at_time: f64 },
    OutOfTime { at_time: f64 },
    NotFinite { at_time: f64 },
}

/// The result of one stretch: accepted steps with their derivatives (physical units).
pub struct Piece {
    pub phase: Phase,
    pub t_start: f64,
    pub t_end: f64,
    pub times: Vec<f64>,
    pub states: Vec<Vec<f64>>,
    pub derivatives: Vec<Vec<f64>>,
    /// True when the stop rule ended the stretch before the planned end.
    pub stopped_early: bool,
    /// True when part of the stretch needed the stiff method.
    pub went_stiff: bool,
}

impl Piece {
    /// The state at `t` within the stretch: cubic Hermite interpolation between the steps.
    pub fn state_at(&self, t: f64) -> Vec<f64> {
        let t = t.clamp(self.t_start, self.t_end);
        let k = self.times.partition_point(|time| *time < t);
        if k == 0 {
            return self.states[0].clone();
        }
        if k >= self.times.len() {
            return self.states.last().cloned().unwrap_or_default();
        }
        let (t0, t1) = (self.times[k - 1], self.times[k]);
        let h = t1 - t0;
        if h <= 0.0 {
            return self.states[k].clone();
        }
        let s = (t - t0) / h;
        let (h00, h10, h01, h11) = hermite_basis(s);
        let (x0, x1) = (&self.states[k - 1], &self.states[k]);
        let (d0, d1) = (&self.derivatives[k - 1], &self.derivatives[k]);
        (0..x0.len())
            .map(|i| h00 * x0[i] + h10 * h * d0[i] + h01 * x1[i] + h11 * h * d1[i])
            .collect()
    }

    pub fn last_state(&self) -> &[f64] {
        self.states.last().map(Vec::as_slice).unwrap_or(&[])
    }

    /// d(state)/dt at `t`: the derivative of the Hermite interpolant.
    pub fn derivative_at(&self, t: f64) -> Vec<f64> {
        let t = t.clamp(self.t_start, self.t_end);
        let k = self
            .times
            .partition_point(|time| *time < t)
            .clamp(1, self.times.len().max(2) - 1);
        if self.times.len() < 2 {
            return self.derivatives[0].clone();
        }
        let (t0, t1) = (self.times[k - 1], self.times[k]);
        let h = t1 - t0;
        if h <= 0.0 {
            return self.derivatives[k].clone();
        }
        let s = (t - t0) / h;
        let (d00, d10, d01, d11) = (
            6.0 * s * s - 6.0 * s,
            3.0 * s * s - 4.0 * s + 1.0,
            -6.0 * s * s + 6.0 * s,
            3.0 * s * s - 2.0 * s,
        );
        let (x0, x1) = (&self.states[k - 1], &self.states[k]);
        let (v0, v1) = (&self.derivatives[k - 1], &self.derivatives[k]);
        (0..x0.len())
            .map(|i| (d00 * x0[i] + d01 * x1[i]) / h + d10 * v0[i] + d11 * v1[i])
            .collect()
    }

    /// Time of the accepted step before the last one (where an event found at the last step
    /// began to be crossed).
    pub fn previous_step_time(&self) -> f64 {
        let n = self.times.len();
        self.times[n.saturating_sub(2)]
    }

    /// Ends the stretch at `t` (within it), with the interpolated state there, which may be
    /// adjusted by `adjust` (an event puts a state exactly on its threshold).
    pub fn truncate(&mut self, t: f64, adjust: &dyn Fn(&mut Vec<f64>)) {
        let k = self.times.partition_point(|time| *time < t).max(1);
        let mut state = self.state_at(t);
        adjust(&mut state);
        let derivative = self.derivative_at(t);
        self.times.truncate(k);
        self.states.truncate(k);
        self.derivatives.truncate(k);
        self.times.push(t);
        self.states.push(state);
        self.derivatives.push(derivative);
        self.t_end = t;
        self.stopped_early = true;
    }
}

/// Cubic Hermite basis functions on [0, 1].
fn hermite_basis(s: f64) -> (f64, f64, f64, f64) {
    let (s2, s3) = (s * s, s * s * s);
    (
        2.0 * s3 - 3.0 * s2 + 1.0,
        s3 - 2.0 * s2 + s,
        -2.0 * s3 + 3.0 * s2,
        s3 - s2,
    )
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
    scale[layout.jacket()] = 100.0;
    scale
}

/// The accepted steps so far, physical units.
#[derive(Default)]
struct Record {
    times: Vec<f64>,
    states: Vec<Vec<f64>>,
    derivatives: Vec<Vec<f64>>,
}

/// What the step callback saw, read back after the solver has finished.
#[derive(Debug, Clone, Copy, Default)]
struct RunStatus {
    steps: u32,
    out_of_time: bool,
    not_finite: bool,
    stopped: bool,
}

/// The balance on the scaled state: y = x / scale; components past the state are padding.
struct ScaledBalance<'a, 'r> {
    plant: &'a Plant,
    phase: Phase,
    scale: &'a [f64],
    scratch: RefCell<(Vec<f64>, Vec<f64>, Vec<f64>)>,
    stop: RefCell<Option<StopRule<'r>>>,
    deadline: Option<Instant>,
    status: Cell<RunStatus>,
    record: RefCell<Record>,
}

impl ScaledBalance<'_, '_> {
    /// f on scaled slices (the first `scale.len()` components; padding gets zero).
    fn scaled_rhs(&self, t: f64, y: &[f64], dy: &mut [f64]) {
        let mut guard = self.scratch.borrow_mut();
        let (x, dx, rates) = &mut *guard;
        for ((xi, yi), s) in x.iter_mut().zip(y).zip(self.scale) {
            *xi = yi * s;
        }
        self.plant.derivatives(&self.phase, t, x, dx, rates);
        dy.iter_mut().for_each(|d| *d = 0.0);
        for ((d, v), s) in dy.iter_mut().zip(dx.iter()).zip(self.scale) {
            *d = v / s;
        }
    }

    /// Records an accepted step and asks the stop rule; true ends the stretch.
    fn accept(&self, t: f64, y: &[f64], dy: &[f64]) -> bool {
        let mut status = self.status.get();
        status.steps += 1;
        status.not_finite = !y.iter().all(|v| v.is_finite());
        status.out_of_time =
            status.steps % 512 == 0 && self.deadline.is_some_and(|d| Instant::now() > d);
        if status.not_finite || status.out_of_time {
            self.status.set(status);
            return true;
        }
        let x: Vec<f64> = y.iter().zip(self.scale).map(|(v, s)| v * s).collect();
        let dx: Vec<f64> = dy.iter().zip(self.scale).map(|(v, s)| v * s).collect();
        status.stopped = self
            .stop
            .borrow_mut()
            .as_mut()
            .is_some_and(|rule| rule(t, &x, &dx));
        self.status.set(status);
        let mut record = self.record.borrow_mut();
        record.times.push(t);
        record.states.push(x);
        record.derivatives.push(dx);
        status.stopped
    }
}

impl<D: Dim> System<f64, OVector<f64, D>> for &ScaledBalance<'_, '_>
where
    DefaultAllocator: Allocator<D>,
{
    fn system(&self, t: f64, y: &OVector<f64, D>, dy: &mut OVector<f64, D>) {
        self.scaled_rhs(t, y.as_slice(), dy.as_mut_slice());
    }

    fn solout(&mut self, t: f64, y: &OVector<f64, D>, dy: &OVector<f64, D>) -> bool {
        let n = self.scale.len();
        self.accept(t, &y.as_slice()[..n], &dy.as_slice()[..n])
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
    let n = x0.len();
    let system = ScaledBalance {
        plant,
        phase,
        scale: &scale,
        scratch: RefCell::new((
            vec![0.0; n],
            vec![0.0; n],
            vec![0.0; plant.network.reactions.len()],
        )),
        stop: RefCell::new(stop),
        deadline,
        status: Cell::new(RunStatus::default()),
        record: RefCell::new(Record::default()),
    };
    let y0: Vec<f64> = x0.iter().zip(&scale).map(|(v, s)| v / s).collect();
    let mut dy0 = vec![0.0; n];
    system.scaled_rhs(t0, &y0, &mut dy0);
    {
        let mut record = system.record.borrow_mut();
        record.times.push(t0);
        record.states.push(x0.to_vec());
        record
            .derivatives
            .push(dy0.iter().zip(&scale).map(|(v, s)| v * s).collect());
    }
    let mut went_stiff = false;
    if t1 > t0 {
        let explicit = match n {
            0..=8 => explicit_run(
                &system,
                t0,
                t1,
                OVector::<f64, Const<8>>::from_iterator(padded(&y0, 8)),
            ),
            9..=16 => explicit_run(
                &system,
                t0,
                t1,
                OVector::<f64, Const<16>>::from_iterator(padded(&y0, 16)),
            ),
            _ => explicit_run(
                &system,
                t0,
                t1,
                OVector::<f64, Dyn>::from_iterator(n, y0.iter().copied()),
            ),
        };
        match explicit {
            Ok(()) => {}
            Err(Stiff) => {
                went_stiff = true;
                stiff_run(&system, t1)?;
            }
        }
    }
    let status = system.status.get();
    let record = system.record.into_inner();
    let last_time = record.times.last().copied().unwrap_or(t0);
    if status.out_of_time {
        return Err(IntegrationFailure::OutOfTime { at_time: last_time });
    }
    if status.not_finite {
        return Err(IntegrationFailure::NotFinite { at_time: last_time });
    }
    let stopped_early = status.stopped && last_time < t1 - 1e-9 * (t1 - t0).max(1.0);
    Ok(Piece {
        phase,
        t_start: t0,
        t_end: last_time,
        times: record.times,
        states: record.states,
        derivatives: record.derivatives,
        stopped_early,
        went_stiff,
    })
}

fn padded(values: &[f64], size: usize) -> impl Iterator<Item = f64> + '_ {
    values
        .iter()
        .copied()
        .chain(std::iter::repeat(0.0))
        .take(size)
}

/// Dopri5 found the stretch stiff (or too long for it): go on with the stiff method.
struct Stiff;

fn explicit_run<D: Dim>(
    system: &ScaledBalance<'_, '_>,
    t0: f64,
    t1: f64,
    y0: OVector<f64, D>,
) -> Result<(), Stiff>
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
        STIFFNESS_CHECK_INTERVAL,
        OutputType::Sparse,
    );
    match solver.integrate() {
        Ok(_) => Ok(()),
        Err(
            IntegrationError::StiffnessDetected { .. }
            | IntegrationError::MaxNumStepReached { .. }
            | IntegrationError::StepSizeUnderflow { .. },
        ) => Err(Stiff),
    }
}

/// Continues the stretch from the last accepted step with the stiff method.
fn stiff_run(system: &ScaledBalance<'_, '_>, t1: f64) -> Result<(), IntegrationFailure> {
    let (t_from, y_from, h) = {
        let record = system.record.borrow();
        let k = record.times.len() - 1;
        let y: Vec<f64> = record.states[k]
            .iter()
            .zip(system.scale)
            .map(|(v, s)| v / s)
            .collect();
        let h = if k > 0 {
            record.times[k] - record.times[k - 1]
        } else {
            (t1 - record.times[k]) * 1e-6
        };
        (record.times[k], y, h)
    };
    let settings = StiffSettings {
        relative_tolerance: RELATIVE_TOLERANCE * 100.0,
        absolute_tolerance: ABSOLUTE_TOLERANCE * 100.0,
        max_steps: MAX_STEPS,
        initial_step: h.max(1e-9),
    };
    let rhs = |t: f64, y: &[f64], dy: &mut [f64]| system.scaled_rhs(t, y, dy);
    let mut on_step = |t: f64, y: &[f64], dy: &[f64]| system.accept(t, y, dy);
    integrate_stiff(&rhs, t_from, &y_from, t1, settings, &mut on_step)
        .map(|_| ())
        .map_err(|e| match e {
            StiffFailure::TooManySteps { at_time } => IntegrationFailure::TooManySteps { at_time },
            StiffFailure::StepSizeUnderflow { at_time } | StiffFailure::Singular { at_time } => {
                IntegrationFailure::StepSizeUnderflow { at_time }
            }
        })
}
