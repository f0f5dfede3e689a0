//! Scenarios: normal operation, and a cooling failure at any time with the feed going on or
//! stopping. Each is integrated piecewise between its discontinuities: scheduled ones (feed
//! start and end, the failure) and events found on the way (the dosing interlock tripping or
//! resetting, boiling starting or ending, the decomposition spent), each located on the
//! solver's dense output before the next stretch starts from it.

use super::balance::{Layout, Phase};
use super::integrate::{FailureKind, IntegrationFailure, Piece, integrate_stretch};
use super::plant::Plant;
use crate::case::Dosing;
use crate::numeric::{bisect, golden_section_max};
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

fn scenario_error(plant: &Plant, scenario: &str, failure: IntegrationFailure) -> ScenarioError {
    let reason = match failure.kind {
        FailureKind::TooManySteps => {
            "the solver needed too many steps (the kinetics are very stiff)"
        }
        FailureKind::StepSizeUnderflow => "the step size fell below round-off",
        FailureKind::OutOfTime => "the time budget ran out",
        FailureKind::NotFinite => "the state stopped being finite",
        FailureKind::TooManyEvents => {
            "events followed one another without end (something chatters)"
        }
    };
    let fastest = fastest_process(plant, &failure.state).map(|p| {
        format!(
            "at {:.1} degC the fastest process is {} with a time scale of {:.1e} s (activation energy {:.0} kJ/mol)",
            p.temperature - 273.15,
            p.name,
            p.time_scale,
            p.activation_energy / 1e3
        )
    });
    let check = "check the rate constants, activation energies and their units";
    let advice = match (failure.kind, fastest) {
        (FailureKind::OutOfTime, fastest) => format!(
            "allow more time (the command's --time-budget option) or shorten process.duration or failure.horizon{}",
            fastest.map_or(String::new(), |f| format!("; {f}"))
        ),
        (FailureKind::TooManyEvents, _) => {
            "check failure.stop_above and the boiling data, whose events chatter".to_string()
        }
        (_, fastest) => format!(
            "{}{check}; if they are right, the runaway is effectively instantaneous at that temperature and this screening model cannot follow it: take the MTSR as reached at once and confirm by adiabatic calorimetry",
            fastest.map_or(String::new(), |f| format!("{f}: "))
        ),
    };
    ScenarioError {
        scenario: scenario.to_string(),
        reason: reason.to_string(),
        at_h: failure.at_time / 3600.0,
        advice,
    }
}

/// The fastest reaction or decomposition at a state, for the advice of a failed run.
struct FastProcess {
    name: String,
    time_scale: f64,
    temperature: f64,
    activation_energy: f64,
}

/// Time scales at the state's temperature: a reaction's 1 / (k(T) c^(n-1)) at the recipe's
/// largest concentration, the decomposition's E / q(T) of fresh mass.
fn fastest_process(plant: &Plant, state: &[f64]) -> Option<FastProcess> {
    let temperature = *state.get(Layout::TEMPERATURE)?;
    if !temperature.is_finite() || temperature <= 0.0 {
        return None;
    }
    let largest_amount = plant.recipe_amounts().into_iter().fold(0.0, f64::max);
    let concentration = largest_amount / plant.final_volume();
    let reactions = plant.network.reactions.iter().enumerate().map(|(j, law)| {
        let order: f64 = law.orders.iter().map(|(_, n)| n).sum();
        let rate = law.rate_constant(temperature) * concentration.powf(order - 1.0);
        FastProcess {
            name: format!("reactions[{j}]"),
            time_scale: 1.0 / rate,
            temperature,
            activation_energy: law.activation_energy,
        }
    });
    let decomposition = plant.decomposition.iter().map(|d| FastProcess {
        name: "decomposition".to_string(),
        time_scale: d.energy / d.fresh_rate(temperature),
        temperature,
        activation_energy: d.activation_energy,
    });
    reactions
        .chain(decomposition)
        .filter(|p| p.time_scale.is_finite() && p.time_scale > 0.0)
        .min_by(|a, b| a.time_scale.total_cmp(&b.time_scale))
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

    /// When the feed actually ended (later than planned if an interlock held it), if it ran.
    pub fn feed_end(&self) -> Option<f64> {
        self.pieces
            .iter()
            .rev()
            .find(|p| p.phase.feed_on)
            .map(|p| p.t_end)
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

    /// The peak over [from, to] of a rate whose integral is a state function `cumulative`
    /// (the reaction heat released, the gas formed). On stretches that needed the stiff method
    /// the rate at a stored state is a huge rate constant times a residual a tolerance wide, so
    /// there the rate is the secant of `cumulative` over the last `RATE_WINDOW` of the span
    /// (1e-4 of it: seconds in a process of hours, far shorter than any thermal time constant
    /// of a vessel); elsewhere it is the rate at the state, refined between steps.
    pub fn peak_rate(
        &self,
        from: f64,
        to: f64,
        rate: &dyn Fn(&Phase, f64, &[f64]) -> f64,
        cumulative: &dyn Fn(&[f64]) -> f64,
    ) -> (f64, f64) {
        let window = RATE_WINDOW * (to - from);
        let mut best = (from, f64::NEG_INFINITY);
        let mut best_is_smooth = false;
        for piece in &self.pieces {
            let mut window_start = 0;
            for (k, (t, x)) in piece.times.iter().zip(&piece.states).enumerate() {
                if *t < from || *t > to {
                    continue;
                }
                let value = if piece.went_stiff {
                    while window_start + 1 < k && piece.times[window_start + 1] <= t - window {
                        window_start += 1;
                    }
                    let dt = t - piece.times[window_start];
                    if dt <= 0.0 || dt < window.min(piece.t_end - piece.t_start) {
                        continue;
                    }
                    (cumulative(x) - cumulative(&piece.states[window_start])) / dt
                } else {
                    rate(&piece.phase, *t, x)
                };
                if value > best.1 {
                    best = (*t, value);
                    best_is_smooth = !piece.went_stiff;
                }
            }
        }
        if best_is_smooth {
            self.refine_maximum(best, from, to, rate)
        } else {
            best
        }
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

/// Averaging window of a rate on a stiff stretch, as a fraction of the span looked at.
const RATE_WINDOW: f64 = 1e-4;
/// The dosing interlock resets this far below its set point, K (so that it does not chatter).
pub const INTERLOCK_HYSTERESIS_K: f64 = 1.0;
/// Relative size of a stretch below which it is round-off, not time.
const ROUND_OFF: f64 = 1e-12;
/// More events than this in one run means something chatters: the run is stopped.
const MAX_EVENTS: usize = 10_000;

/// What a scenario switches, fixed for the whole run.
#[derive(Debug, Clone, Copy)]
struct Switches {
    failure_time: Option<f64>,
    feed_stops_at_failure: bool,
    decomposition: bool,
}

/// What the run knows at the start of each stretch besides the state vector.
#[derive(Debug, Clone, Copy)]
struct Status {
    fed: f64,
    interlocked: bool,
    delay: f64,
    boiling: bool,
    spent: bool,
}

/// What ended a stretch before its scheduled end.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Event {
    Spent,
    Settled,
    InterlockTrip,
    InterlockReset,
    BoilingStarts,
    BoilingEnds,
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
    let status = Status {
        fed: 0.0,
        interlocked: false,
        delay: 0.0,
        boiling: false,
        spent: false,
    };
    let end = plant.normal_horizon();
    run(
        plant,
        0.0,
        plant.initial_state(),
        status,
        end,
        switches,
        deadline,
    )
    .map_err(|e| scenario_error(plant, "normal operation", e))
}

/// A cooling failure at `failure_time`, from the normal state then, followed for the
/// horizon. With a boiling barrier in the plant, the contents boil at its boiling point.
pub fn run_failure(
    plant: &Plant,
    normal: &Trajectory,
    failure_time: f64,
    options: FailureOptions,
    deadline: Option<Instant>,
) -> Result<Trajectory, ScenarioError> {
    let (phase, state) = normal.state_at(failure_time);
    let held_for = if phase.feed_interlocked {
        failure_time - phase.t_start
    } else {
        0.0
    };
    let status = Status {
        fed: plant.fed_mass(&phase, failure_time),
        interlocked: phase.feed_interlocked,
        delay: phase.feed_delay + held_for,
        boiling: false,
        spent: !phase.decomposition_on && plant.decomposition.is_some(),
    };
    let switches = Switches {
        failure_time: Some(failure_time),
        feed_stops_at_failure: options.dosing == Dosing::Stops,
        decomposition: options.decomposition,
    };
    let end = failure_time + plant.failure_horizon;
    run(plant, failure_time, state, status, end, switches, deadline).map_err(|e| {
        scenario_error(
            plant,
            &format!("cooling failure at {:.3} h", failure_time / 3600.0),
            e,
        )
    })
}

fn phase_at(plant: &Plant, switches: &Switches, t: f64, status: &Status) -> Phase {
    let failed = switches.failure_time.is_some_and(|tf| t >= tf);
    let feed_window = plant
        .feed
        .as_ref()
        .is_some_and(|f| t >= f.start && t < f.end() + status.delay);
    Phase {
        feed_on: feed_window && !status.interlocked && !(failed && switches.feed_stops_at_failure),
        cooling_on: !failed,
        decomposition_on: switches.decomposition && plant.decomposition.is_some() && !status.spent,
        decomposition_spent: switches.decomposition
            && plant.decomposition.is_some()
            && status.spent,
        t_start: t,
        fed_at_start: status.fed,
        feed_interlocked: status.interlocked,
        feed_delay: status.delay,
        boiling: status.boiling,
    }
}

/// The next scheduled switch after t: feed start, feed end (moved by the interlock's
/// delay), the failure, or the end of the run.
fn next_scheduled(plant: &Plant, switches: &Switches, t: f64, status: &Status, t_end: f64) -> f64 {
    let mut candidates = vec![t_end];
    if let Some(feed) = &plant.feed {
        candidates.extend([feed.start, feed.end() + status.delay]);
    }
    candidates.extend(switches.failure_time);
    candidates
        .into_iter()
        .filter(|c| *c > t)
        .fold(t_end, f64::min)
}

fn run(
    plant: &Plant,
    t0: f64,
    x0: Vec<f64>,
    mut status: Status,
    t_end: f64,
    switches: Switches,
    deadline: Option<Instant>,
) -> Result<Trajectory, IntegrationFailure> {
    let mut pieces: Vec<Piece> = Vec::new();
    let (mut t, mut x) = (t0, x0);
    for _ in 0..MAX_EVENTS {
        if t >= t_end {
            if pieces.is_empty() {
                // A run holds at least its starting point, even with no time to run.
                let phase = phase_at(plant, &switches, t0, &status);
                pieces.push(integrate_stretch(plant, phase, t0, &x, t0, None, deadline)?);
            }
            return Ok(Trajectory { pieces });
        }
        let phase = phase_at(plant, &switches, t, &status);
        let stop_at = next_scheduled(plant, &switches, t, &status, t_end);
        let mut found: Option<Event> = None;
        let mut rule = |time: f64, state: &[f64], _: &[f64]| {
            found = detect_event(plant, &phase, time, state);
            found.is_some()
        };
        if stop_at - t <= ROUND_OFF * stop_at.abs().max(1.0) {
            // A failure time within round-off of a breakpoint: the breakpoint is reached.
            t = stop_at;
            continue;
        }
        let mut piece = integrate_stretch(plant, phase, t, &x, stop_at, Some(&mut rule), deadline)?;
        // An event seen at the last step of the stretch counts too: it was crossed before the
        // scheduled end.
        let event = found;
        if let Some(event) = event {
            locate_event(plant, &mut piece, event);
        }
        t = if piece.stopped_early {
            piece.t_end
        } else {
            stop_at
        };
        x = piece.last_state().to_vec();
        status.fed = plant.fed_mass(&phase, t);
        if phase.feed_interlocked {
            status.delay += t - phase.t_start;
        }
        pieces.push(piece);
        match event {
            Some(Event::Settled) => return Ok(Trajectory { pieces }),
            Some(Event::Spent) => status.spent = true,
            Some(Event::InterlockTrip) => status.interlocked = true,
            Some(Event::InterlockReset) => status.interlocked = false,
            Some(Event::BoilingStarts) => status.boiling = true,
            Some(Event::BoilingEnds) => status.boiling = false,
            None => {}
        }
    }
    Err(IntegrationFailure {
        kind: FailureKind::TooManyEvents,
        at_time: t,
        state: x,
    })
}

/// The event, if any, that the state at an accepted step shows.
fn detect_event(plant: &Plant, phase: &Phase, t: f64, state: &[f64]) -> Option<Event> {
    let layout = plant.layout();
    let temperature = state[Layout::TEMPERATURE];
    if phase.decomposition_on && state[layout.alpha()] > SPENT_CONVERSION {
        return Some(Event::Spent);
    }
    if let Some(limit) = plant.stop_feed_above {
        if phase.feed_on && temperature > limit {
            return Some(Event::InterlockTrip);
        }
        if phase.feed_interlocked && temperature < limit - INTERLOCK_HYSTERESIS_K {
            return Some(Event::InterlockReset);
        }
    }
    if let Some(barrier) = &plant.boiling {
        if !phase.cooling_on && !phase.boiling && temperature >= barrier.boiling_point {
            return Some(Event::BoilingStarts);
        }
        if phase.boiling
            && plant
                .snapshot(phase, t, state)
                .net_heat_without_evaporation()
                < 0.0
        {
            return Some(Event::BoilingEnds);
        }
    }
    is_settled(plant, phase, state).then_some(Event::Settled)
}

/// Signed distance of a state from an event's threshold: crossing zero is the event.
type EventFunction<'a> = dyn Fn(f64, &[f64]) -> f64 + 'a;

/// Moves the end of `piece` back to where the event's threshold was crossed, found by
/// bisection on the dense output over the last step.
fn locate_event(plant: &Plant, piece: &mut Piece, event: Event) {
    let threshold: Box<EventFunction<'_>> = match event {
        Event::InterlockTrip => {
            let limit = plant.stop_feed_above.unwrap_or(f64::INFINITY);
            Box::new(move |_, x: &[f64]| x[Layout::TEMPERATURE] - limit)
        }
        Event::InterlockReset => {
            let reset = plant.stop_feed_above.unwrap_or(f64::INFINITY) - INTERLOCK_HYSTERESIS_K;
            Box::new(move |_, x: &[f64]| reset - x[Layout::TEMPERATURE])
        }
        Event::BoilingStarts => {
            let boiling = plant.boiling.map_or(f64::INFINITY, |b| b.boiling_point);
            Box::new(move |_, x: &[f64]| x[Layout::TEMPERATURE] - boiling)
        }
        Event::BoilingEnds => {
            let phase = piece.phase;
            Box::new(move |t, x: &[f64]| {
                -plant.snapshot(&phase, t, x).net_heat_without_evaporation()
            })
        }
        Event::Spent | Event::Settled => return,
    };
    let (low, high) = (piece.previous_step_time(), piece.t_end);
    let crossing = |t: f64| threshold(t, &piece.state_at(t));
    let at = bisect(&crossing, low, high, 1e-9 * high.abs().max(1.0)).unwrap_or(high);
    let on_threshold = plant
        .boiling
        .map(|b| b.boiling_point)
        .filter(|_| event == Event::BoilingStarts);
    piece.truncate(at.max(low), &|x: &mut Vec<f64>| {
        if let Some(boiling) = on_threshold {
            x[Layout::TEMPERATURE] = boiling;
        }
    });
}

/// After a failure with nothing fed and no decomposition, T no longer changes once the
/// releasable heat is gone: the run can end there.
fn is_settled(plant: &Plant, phase: &Phase, state: &[f64]) -> bool {
    if phase.cooling_on || phase.feed_on || phase.decomposition_on {
        return false;
    }
    let layout = plant.layout();
    let remaining = plant.network.releasable_heat(layout.amounts(state));
    remaining / plant.final_heat_capacity() < SETTLED_RISE_K
}

impl Layout {
    /// The amounts (mol) in a state; gas species hold what has formed, not what is present.
    pub fn amounts<'a>(&self, state: &'a [f64]) -> &'a [f64] {
        &state[1..1 + self.species]
    }
}
