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
/// Explicit steps of one stretch before the stiff method takes over: the demo cases need at
/// most about 3 000; a stretch far beyond that is stiff even where Dopri5's own test (which
/// looks at h times the dominant eigenvalue estimate) does not say so.
pub const MAX_EXPLICIT_STEPS: u32 = 20_000;
/// Dopri5 tests for stiffness every this many steps (and every step once it suspects it).
const STIFFNESS_CHECK_INTERVAL: u32 = 100;

/// What stopped a stretch.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FailureKind {
    TooManySteps,
    StepSizeUnderflow,
    OutOfTime,
    NotFinite,
    TooManyEvents,
}

/// Why a stretch could not be integrated, where, and the last state it reached.
#[derive(Debug, Clone, PartialEq)]
pub struct IntegrationFailure {
    pub kind: FailureKind,
    pub at_time: f64,
    pub state: Vec<f64>,
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
    /// The state at `t` within the stretch: cubic Hermite interpolation between the steps
    /// (monotone on stretches that needed the stiff method, see `segment`).
    pub fn state_at(&self, t: f64) -> Vec<f64> {
        let t = t.clamp(self.t_start, self.t_end);
        let k = self.times.partition_point(|time| *time < t);
        if k == 0 {
            return self.states[0].clone();
        }
        if k >= self.times.len() {
            return self.states.last().cloned().unwrap_or_default();
        }
        let h = self.times[k] - self.times[k - 1];
        if h <= 0.0 {
            return self.states[k].clone();
        }
        let s = (t - self.times[k - 1]) / h;
        let (h00, h10, h01, h11) = hermite_basis(s);
        (0..self.states[k].len())
            .map(|i| {
                let (x0, x1, m0, m1) = self.segment(k, i, h);
                h00 * x0 + h10 * m0 + h01 * x1 + h11 * m1
            })
            .collect()
    }

    /// Component i on the step (k-1, k) of length h: its end values and end slopes times h.
    /// On a stretch that needed the stiff method the stored derivatives are those of states a
    /// tolerance away from the slow manifold, where a fast mode makes f huge (an instantaneous
    /// reaction: k c_A times a residual of B); there the slopes are limited so that the cubic
    /// stays monotone between the steps (Fritsch and Carlson, SIAM J. Numer. Anal. 17 (1980)
    /// 238), which keeps an interpolated state as physical as the steps it lies between.
    fn segment(&self, k: usize, i: usize, h: f64) -> (f64, f64, f64, f64) {
        let (x0, x1) = (self.states[k - 1][i], self.states[k][i]);
        let (m0, m1) = (h * self.derivatives[k - 1][i], h * self.derivatives[k][i]);
        if !self.went_stiff {
            return (x0, x1, m0, m1);
        }
        let (m0, m1) = monotone_slopes(x1 - x0, m0, m1);
        (x0, x1, m0, m1)
    }

    pub fn last_state(&self) -> &[f64] {
        self.states.last().map(Vec::as_slice).unwrap_or(&[])
    }

    /// d(state)/dt at `t`: the derivative of the Hermite interpolant.
    pub fn derivative_at(&self, t: f64) -> Vec<f64> {
        let t = t.clamp(self.t_start, self.t_end);
        if self.times.len() < 2 {
            return self.derivatives[0].clone();
        }
        let k = self
            .times
            .partition_point(|time| *time < t)
            .clamp(1, self.times.len() - 1);
        let h = self.times[k] - self.times[k - 1];
        if h <= 0.0 {
            return self.derivatives[k].clone();
        }
        let s = (t - self.times[k - 1]) / h;
        let (d00, d10, d01, d11) = (
            6.0 * s * s - 6.0 * s,
            3.0 * s * s - 4.0 * s + 1.0,
            -6.0 * s * s + 6.0 * s,
            3.0 * s * s - 2.0 * s,
        );
        (0..self.states[k].len())
            .map(|i| {
                let (x0, x1, m0, m1) = self.segment(k, i, h);
                (d00 * x0 + d10 * m0 + d01 * x1 + d11 * m1) / h
            })
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

/// End slopes (times the step) limited so that the cubic Hermite interpolant of a change
/// `delta` is monotone: slopes against the secant become zero, and (alpha, beta) = slopes /
/// delta is pulled into the circle alpha^2 + beta^2 <= 9 (Fritsch and Carlson 1980).
fn monotone_slopes(delta: f64, m0: f64, m1: f64) -> (f64, f64) {
    if delta == 0.0 || !delta.is_finite() {
        return (0.0, 0.0);
    }
    let (alpha, beta) = ((m0 / delta).max(0.0), (m1 / delta).max(0.0));
    let radius = alpha.hypot(beta);
    let shrink = if radius > 3.0 { 3.0 / radius } else { 1.0 };
    (alpha * shrink * delta, beta * shrink * delta)
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
    let failed = |kind| IntegrationFailure {
        kind,
        at_time: last_time,
        state: record.states.last().cloned().unwrap_or_default(),
    };
    if status.out_of_time {
        return Err(failed(FailureKind::OutOfTime));
    }
    if status.not_finite {
        return Err(failed(FailureKind::NotFinite));
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
        MAX_EXPLICIT_STEPS,
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
        nonnegative: (Layout::TEMPERATURE + 1, system.plant.layout().alpha() + 1),
    };
    let rhs = |t: f64, y: &[f64], dy: &mut [f64]| system.scaled_rhs(t, y, dy);
    let mut on_step = |t: f64, y: &[f64], dy: &[f64]| system.accept(t, y, dy);
    integrate_stiff(&rhs, t_from, &y_from, t1, settings, &mut on_step)
        .map(|_| ())
        .map_err(|e| {
            let (kind, at_time) = match e {
                StiffFailure::TooManySteps { at_time } => (FailureKind::TooManySteps, at_time),
                StiffFailure::StepSizeUnderflow { at_time }
                | StiffFailure::Singular { at_time } => (FailureKind::StepSizeUnderflow, at_time),
            };
            let state = system.record.borrow().states.last().cloned();
            IntegrationFailure {
                kind,
                at_time,
                state: state.unwrap_or_default(),
            }
        })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Fritsch and Carlson (1980): with slopes limited to the circle alpha^2 + beta^2 <= 9 and
    /// none against the secant, the cubic Hermite interpolant is monotone, so it never leaves
    /// the interval of its end values, whatever slopes the solver stored.
    #[test]
    fn limited_slopes_keep_the_interpolant_between_its_end_values() {
        for (delta, m0, m1) in [(1.0, 1e20, -3.0), (-2.0, 5.0, 1e9), (1e-25, 4e-7, 0.0)] {
            let (a, b) = monotone_slopes(delta, m0, m1);
            for k in 0..=100 {
                let (h00, h10, h01, h11) = hermite_basis(k as f64 / 100.0);
                let value = h01 * delta + h10 * a + h11 * b + h00 * 0.0;
                let (low, high) = (delta.min(0.0), delta.max(0.0));
                let slack = 1e-12 * delta.abs();
                assert!(value >= low - slack && value <= high + slack, "{value}");
            }
        }
        assert_eq!(monotone_slopes(0.0, 3.0, -4.0), (0.0, 0.0));
    }
}
