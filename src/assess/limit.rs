//! The dosing limit: the shortest constant-rate feed duration (the fastest dosing) that meets
//! every criterion at once, found by a bracketing search over full simulations, and the
//! warmest coolant that keeps the cooling criterion at the case's own feed duration.
//!
//! Criteria, each met when its value is at or below its limit:
//! - cooling: the peak normal-operation reaction power <= `cooling_use` x U A(h) (Tp - T_cold)
//!   at the moment of the peak (the jacket's capacity with the contents at Tp);
//! - temperature: max(MTSR, simulated MTSR) <= MTT - margin, and <= TD24 - margin where
//!   decomposition data exist;
//! - off-gas: the peak off-gas rate <= the scrubber's capacity, where one is given.
//!
//! None of the margins is guaranteed to be monotone in the feed duration, so the search does
//! not assume it: it scans durations geometrically from short to long, takes the first
//! duration that meets every criterion, and bisects (in log duration) the bracket between it
//! and the failing duration before it.

use super::figures::{Figures, compute};
use crate::case::{Case, Dosing};
use crate::model::balance::{Layout, Phase};
use crate::model::plant::{Jacket, Plant};
use crate::model::scenario::ScenarioError;
use std::time::{Duration, Instant};
use uom::si::{mass_rate, temperature_interval};

/// Share of the jacket's capacity at Tp the peak reaction power may use by default: 0.8, a
/// common-practice margin, not a rule of any standard.
pub use crate::case::DEFAULT_COOLING_USE;
/// Wall-clock budget of one whole limit search (some 30 to 60 full assessments).
pub const LIMIT_TIME_BUDGET: Duration = Duration::from_secs(600);

/// Shortest duration tried: this share of the case's own feed duration ...
pub const SCAN_FROM_SHARE: f64 = 0.05;
/// ... or 10 min, whichever is shorter.
pub const SCAN_FROM_AT_MOST_S: f64 = 600.0;
/// Longest duration tried: this many times the case's own feed duration ...
pub const SCAN_TO_FACTOR: f64 = 20.0;
/// ... or 100 h, whichever is shorter (never shorter than the case's own duration).
pub const SCAN_TO_AT_MOST_S: f64 = 100.0 * 3600.0;
/// Ratio between consecutive durations of the scan.
pub const SCAN_RATIO: f64 = std::f64::consts::SQRT_2;
/// The bisection stops once the bracket is narrower than this share of the duration.
pub const DURATION_TOLERANCE: f64 = 0.005;
/// The required-coolant search ends within this, K.
pub const COOLANT_TOLERANCE_K: f64 = 0.05;
/// A note says so when T falls this far below Tp in normal operation at the reported
/// duration, K.
pub const FLOATING_NOTE_K: f64 = 5.0;
/// The coldest coolant the required-coolant search considers, K (-100 degC).
pub const COLDEST_COOLANT_K: f64 = 173.15;

/// The settings of the criteria, in SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LimitSettings {
    /// Share of U A (Tp - T_cold) the peak reaction power may use.
    pub cooling_use: f64,
    /// Subtracted from MTT and TD24, K.
    pub mtsr_margin_k: f64,
    /// Capacity of the off-gas treatment (scrubber), kg/s; None: no off-gas criterion.
    pub off_gas_capacity_kg_s: Option<f64>,
}

impl Default for LimitSettings {
    fn default() -> Self {
        LimitSettings {
            cooling_use: DEFAULT_COOLING_USE,
            mtsr_margin_k: 0.0,
            off_gas_capacity_kg_s: None,
        }
    }
}

impl LimitSettings {
    /// The settings of a case's `limits` section (`cooling_use`, `mtsr_margin`,
    /// `off_gas_capacity`), with the defaults where a key is absent.
    pub fn from_case(case: &Case) -> LimitSettings {
        let raw = &case.limit_settings;
        LimitSettings {
            cooling_use: raw.cooling_use,
            mtsr_margin_k: raw.mtsr_margin.get::<temperature_interval::kelvin>(),
            off_gas_capacity_kg_s: raw
                .off_gas_capacity
                .map(|c| c.get::<mass_rate::kilogram_per_second>()),
        }
    }
}

/// The three criteria.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Criterion {
    Cooling,
    Temperature,
    OffGas,
}

impl Criterion {
    pub fn name(self) -> &'static str {
        match self {
            Criterion::Cooling => "cooling",
            Criterion::Temperature => "temperature",
            Criterion::OffGas => "off_gas",
        }
    }
}

/// One criterion at one feed duration, in SI (W, K or kg/s): met when value <= limit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Check {
    pub criterion: Criterion,
    pub value: f64,
    pub limit: f64,
    /// What a margin is measured against, to compare criteria of different units: the limit
    /// itself (cooling, off-gas), or the temperature rise allowed above Tp.
    pub scale: f64,
}

impl Check {
    /// limit - value: positive when the criterion is met.
    pub fn margin(&self) -> f64 {
        self.limit - self.value
    }
    pub fn met(&self) -> bool {
        self.value <= self.limit
    }
    /// The margin as a share of the scale.
    pub fn relative_margin(&self) -> f64 {
        self.margin() / self.scale.abs().max(f64::MIN_POSITIVE)
    }
}

/// Which temperature sets the temperature criterion's limit.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TemperatureLimit {
    Mtt,
    Td24,
}

impl TemperatureLimit {
    pub fn name(self) -> &'static str {
        match self {
            TemperatureLimit::Mtt => "MTT",
            TemperatureLimit::Td24 => "TD24",
        }
    }
}

/// Every criterion of one run (a feed duration, a coolant temperature), with its figures.
#[derive(Debug, Clone)]
pub struct Evaluation {
    /// Feed duration, s; None for a batch.
    pub feed_duration: Option<f64>,
    /// The coldest coolant of the run (constant coolant, or a held jacket's minimum), K.
    pub coolant_temperature: f64,
    /// The lowest temperature of the contents in normal operation, K (NaN where not computed):
    /// with a constant coolant T floats, and a slow feed can leave it well below Tp.
    pub min_temperature: f64,
    pub cooling: Check,
    pub temperature: Check,
    pub temperature_limit: TemperatureLimit,
    pub off_gas: Option<Check>,
    pub figures: Figures,
}

impl Evaluation {
    pub fn checks(&self) -> impl Iterator<Item = &Check> {
        [
            Some(&self.cooling),
            Some(&self.temperature),
            self.off_gas.as_ref(),
        ]
        .into_iter()
        .flatten()
    }
    pub fn met(&self) -> bool {
        self.checks().all(Check::met)
    }
    pub fn check(&self, criterion: Criterion) -> Option<&Check> {
        self.checks().find(|c| c.criterion == criterion)
    }
    /// The failing criterion with the largest shortfall (relative to its scale), if any.
    pub fn worst_failing(&self) -> Option<Criterion> {
        self.checks()
            .filter(|c| !c.met())
            .min_by(|a, b| a.relative_margin().total_cmp(&b.relative_margin()))
            .map(|c| c.criterion)
    }
    pub fn failing(&self) -> Vec<Criterion> {
        self.checks()
            .filter(|c| !c.met())
            .map(|c| c.criterion)
            .collect()
    }
}

/// The criteria from the figures of one run.
pub fn evaluate_figures(plant: &Plant, figures: &Figures, settings: &LimitSettings) -> Evaluation {
    let n = &figures.normal;
    let cooling = Check {
        criterion: Criterion::Cooling,
        value: n.peak_reaction_power,
        limit: settings.cooling_use * n.cooling_capacity_at_tp,
        scale: settings.cooling_use * n.cooling_capacity_at_tp,
    };
    let margin = settings.mtsr_margin_k;
    let (temperature_limit, limit) = match figures.td24 {
        Some(td24) if td24 < figures.mtt => (TemperatureLimit::Td24, td24 - margin),
        _ => (TemperatureLimit::Mtt, figures.mtt - margin),
    };
    let temperature = Check {
        criterion: Criterion::Temperature,
        value: figures.mtsr.max(figures.worst.max_temperature),
        limit,
        scale: (limit - plant.process_temperature).abs().max(1.0),
    };
    let off_gas = settings.off_gas_capacity_kg_s.map(|capacity| Check {
        criterion: Criterion::OffGas,
        value: n.peak_off_gas,
        limit: capacity,
        scale: capacity,
    });
    Evaluation {
        feed_duration: plant.feed.as_ref().map(|f| f.duration),
        coolant_temperature: plant.coldest_coolant_temperature(),
        cooling,
        temperature,
        temperature_limit,
        off_gas,
        figures: figures.clone(),
        min_temperature: f64::NAN,
    }
}

/// The plant with the feed spread over `duration` (same masses and amounts, so the rates
/// follow) and the same time after the end of the feed. A batch is returned as it is.
pub fn with_feed_duration(plant: &Plant, duration: f64) -> Plant {
    let mut out = plant.clone();
    let after_feed = (plant.process_duration - plant.feed_end()).max(0.0);
    if let Some(feed) = out.feed.as_mut() {
        feed.duration = duration;
        out.process_duration = feed.start + duration + after_feed;
    }
    out
}

/// The plant with its coldest coolant at `temperature` (K): the constant coolant, or the
/// minimum of a held jacket (kept at or below its maximum).
pub fn with_coolant(plant: &Plant, temperature: f64) -> Plant {
    let mut out = plant.clone();
    match &mut out.jacket {
        Jacket::Constant(t) => {
            *t = temperature;
            out.coolant_temperature = temperature;
        }
        Jacket::Hold {
            minimum, maximum, ..
        } => {
            *minimum = temperature.min(*maximum);
        }
    }
    out
}

/// Runs the full computation on a plant and evaluates the criteria.
pub fn evaluate(
    plant: &Plant,
    settings: &LimitSettings,
    deadline: Option<Instant>,
) -> Result<Evaluation, ScenarioError> {
    let computation = compute(plant, deadline)?;
    let mut evaluation = evaluate_figures(plant, &computation.figures, settings);
    let minus_t = |_: &Phase, _: f64, x: &[f64]| -x[Layout::TEMPERATURE];
    let (_, lowest) = computation
        .normal_run
        .maximum(0.0, plant.process_duration, &minus_t);
    evaluation.min_temperature = -lowest;
    Ok(evaluation)
}

/// What the search is doing, for a progress display.
#[derive(Debug, Clone, Copy)]
pub enum Stage {
    /// Geometric scan of feed durations (s).
    Scan,
    /// Bisection of the bracket (s).
    Refine,
    /// The case as it is.
    Case,
    /// Coolant temperatures (K).
    Coolant,
}

#[derive(Debug, Clone, Copy)]
pub struct Progress {
    pub stage: Stage,
    /// The duration (s) or coolant temperature (K) being tried.
    pub trying: f64,
    /// Full assessments run so far.
    pub runs: usize,
    /// The search on the case with the feed stopped on a failure (see `with_feed_stopping`).
    pub feed_stopped_variant: bool,
}

/// The warmest coldest-coolant temperature that keeps the cooling criterion: the coolant's
/// temperature in constant mode, the jacket's minimum in hold mode.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum RequiredCoolant {
    /// The coolant must be at or below this, K.
    AtMost(f64),
    /// Not met even with the coolant at `COLDEST_COOLANT_K`.
    NotReachable,
    /// A run the search needed could not be computed.
    Failed,
    /// Not searched (a variant of the case).
    NotSearched,
}

/// Result of the dosing-limit search.
#[derive(Debug, Clone)]
pub struct DosingLimit {
    pub settings: LimitSettings,
    /// The case is a batch: there is no feed to search.
    pub batch: bool,
    /// Every criterion met at `min_feed_duration` (or, for a batch, by the case as it is).
    pub feasible: bool,
    /// The shortest feed duration that meets every criterion, s.
    pub min_feed_duration: Option<f64>,
    /// Feed mass over that duration, kg/s.
    pub max_feed_rate: Option<f64>,
    /// The criterion that fails just below the limit.
    pub binding: Option<Criterion>,
    /// The criteria where they are reported: at the limit; for a batch, the case; with no
    /// feasible duration, the longest duration tried.
    pub reported: Evaluation,
    /// Just below the limit (the failing side of the final bracket).
    pub below: Option<Evaluation>,
    /// The case as it is (its own feed duration).
    pub case: Evaluation,
    /// The feed duration and mass of the case, s and kg.
    pub case_feed_duration: Option<f64>,
    pub feed_mass: f64,
    /// The durations scanned, s.
    pub scanned_from: f64,
    pub scanned_to: f64,
    /// Criteria never met at any duration tried (with no feasible duration).
    pub never_met: Vec<Criterion>,
    pub required_coolant: RequiredCoolant,
    /// The jacket holds Tp (hold mode): the required coolant is its minimum.
    pub held_jacket: bool,
    /// Full assessments run.
    pub runs: usize,
    /// With the feed stopping on a cooling failure, where the case lets it go on and the
    /// simulated MTSR fails the temperature criterion: the same search's answer.
    pub with_feed_stopping: Option<Alternative>,
    pub notes: Vec<String>,
    pub suggestions: Vec<String>,
}

/// The outcome of the search on a variant of the case.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Alternative {
    pub feasible: bool,
    pub min_feed_duration: Option<f64>,
    pub binding: Option<Criterion>,
}

/// Outcome of a scan for the first grid point that passes, refined by bisection.
#[derive(Debug, Clone, PartialEq)]
pub enum FirstPass<T> {
    /// The first grid point already passes: the limit is at or before it.
    AtStart { at: f64, pass: T },
    /// Passes at `at`, fails at `below`, the two within the tolerance of each other.
    Bracketed {
        below: f64,
        fail: T,
        at: f64,
        pass: T,
    },
    /// No grid point passes; the evaluation at the last one.
    Never { last_at: f64, last: T },
}

/// Scans `grid` in order for the first point whose evaluation passes, then bisects between it
/// and the point before (with `midpoint`) until `close_enough(fail_x, pass_x)`. The bisection
/// keeps a failing point on one side and a passing point on the other, so it ends on a flip
/// from fail to pass whether or not the functions behind `passes` are monotone; a passing
/// stretch narrower than the grid's spacing can be missed by the scan.
pub fn first_pass<T, E>(
    grid: &[f64],
    evaluate: &mut dyn FnMut(f64) -> Result<T, E>,
    passes: &dyn Fn(&T) -> bool,
    midpoint: &dyn Fn(f64, f64) -> f64,
    close_enough: &dyn Fn(f64, f64) -> bool,
) -> Result<Option<FirstPass<T>>, E> {
    let mut previous: Option<(f64, T)> = None;
    for &x in grid {
        let value = evaluate(x)?;
        if !passes(&value) {
            previous = Some((x, value));
            continue;
        }
        let Some((mut below, mut fail)) = previous else {
            return Ok(Some(FirstPass::AtStart { at: x, pass: value }));
        };
        let (mut at, mut pass) = (x, value);
        for _ in 0..200 {
            if close_enough(below, at) {
                break;
            }
            let mid = midpoint(below, at);
            if mid == below || mid == at {
                break;
            }
            let value = evaluate(mid)?;
            if passes(&value) {
                (at, pass) = (mid, value);
            } else {
                (below, fail) = (mid, value);
            }
        }
        return Ok(Some(FirstPass::Bracketed {
            below,
            fail,
            at,
            pass,
        }));
    }
    Ok(previous.map(|(last_at, last)| FirstPass::Never { last_at, last }))
}

/// Root of a continuous `f` between `a` and `b` (f(a), f(b) of opposite signs, given) by the
/// Illinois variant of false position: a bracketing method, ending when the bracket is
/// narrower than `tolerance`. Returns the end of the final bracket on the side of `b`'s sign.
pub fn illinois<E>(
    f: &mut dyn FnMut(f64) -> Result<f64, E>,
    (mut a, mut fa): (f64, f64),
    (mut b, mut fb): (f64, f64),
    tolerance: f64,
) -> Result<f64, E> {
    let b_sign = fb.signum();
    let mut side = 0i8;
    for _ in 0..100 {
        if (b - a).abs() <= tolerance {
            break;
        }
        let mut c = (a * fb - b * fa) / (fb - fa);
        if !c.is_finite() || c == a || c == b {
            c = 0.5 * (a + b);
        }
        let fc = f(c)?;
        if fc == 0.0 {
            return Ok(c);
        }
        if fc.signum() == fb.signum() {
            (b, fb) = (c, fc);
            if side == 1 {
                fa *= 0.5;
            }
            side = 1;
        } else {
            (a, fa) = (c, fc);
            if side == -1 {
                fb *= 0.5;
            }
            side = -1;
        }
    }
    Ok(if fb.signum() == b_sign { b } else { a })
}

/// The geometric grid of feed durations for a case whose own feed lasts `own` s.
pub fn duration_grid(own: f64, longest_allowed: Option<f64>) -> Vec<f64> {
    let from = (SCAN_FROM_SHARE * own).min(SCAN_FROM_AT_MOST_S);
    let mut to = (SCAN_TO_FACTOR * own).min(SCAN_TO_AT_MOST_S).max(own);
    if let Some(cap) = longest_allowed {
        to = to.min(cap).max(from);
    }
    let mut grid = Vec::new();
    let mut d = from;
    while d < to * (1.0 - 1e-9) {
        grid.push(d);
        d *= SCAN_RATIO;
    }
    grid.push(to);
    grid
}

const HOUR: f64 = 3600.0;

/// The shortest constant-rate feed duration that meets every criterion; see the module doc.
pub fn dosing_limit(
    plant: &Plant,
    settings: &LimitSettings,
    deadline: Option<Instant>,
) -> Result<DosingLimit, ScenarioError> {
    dosing_limit_with_progress(plant, settings, deadline, &mut |_| {})
}

/// Runs the full computation at trial feed durations, counting runs and telling progress.
struct Runner<'a> {
    plant: &'a Plant,
    settings: &'a LimitSettings,
    deadline: Option<Instant>,
    progress: &'a mut dyn FnMut(Progress),
    runs: usize,
    /// Every duration that computed, in the order tried.
    tried: Vec<Evaluation>,
    /// The first run that could not be integrated.
    failure: Option<ScenarioError>,
}

impl Runner<'_> {
    fn tell(&mut self, stage: Stage, trying: f64) {
        (self.progress)(Progress {
            stage,
            trying,
            runs: self.runs,
            feed_stopped_variant: false,
        });
    }

    /// The criteria at feed duration `d`; None when the run could not be integrated (a
    /// runaway too stiff to follow cannot be shown to meet them: it counts as failing).
    fn at_duration(&mut self, d: f64, stage: Stage) -> Result<Option<Evaluation>, ScenarioError> {
        self.tell(stage, d);
        self.runs += 1;
        let mut result = self.run(d);
        if result.is_err() && !self.out_of_time() {
            // A failure time that lands within round-off of the feed's end can trip the
            // integrator; the same duration 1 ppm away does not.
            self.runs += 1;
            result = self.run(d * (1.0 + 1e-6));
        }
        match result {
            Ok(e) => {
                self.tried.push(e.clone());
                Ok(Some(e))
            }
            Err(e) if self.out_of_time() => Err(e),
            Err(e) => {
                self.failure.get_or_insert(e);
                Ok(None)
            }
        }
    }

    fn run(&self, d: f64) -> Result<Evaluation, ScenarioError> {
        evaluate(
            &with_feed_duration(self.plant, d),
            self.settings,
            self.deadline,
        )
    }

    fn out_of_time(&self) -> bool {
        self.deadline.is_some_and(|t| Instant::now() >= t)
    }
}

/// Whether the feed stops by itself after a cooling failure: it is stopped then, or a
/// temperature interlock stops it once T rises.
fn feed_stops_after_failure(plant: &Plant) -> bool {
    plant.dosing_after_failure == Dosing::Stops || plant.stop_feed_above.is_some()
}

/// [`dosing_limit`], telling `progress` before each run.
pub fn dosing_limit_with_progress(
    plant: &Plant,
    settings: &LimitSettings,
    deadline: Option<Instant>,
    progress: &mut dyn FnMut(Progress),
) -> Result<DosingLimit, ScenarioError> {
    search(plant, settings, deadline, progress, true)
}

/// The search; `full`: also the required coolant and, where the feed going on after a
/// failure is what fails, the same search with the feed stopping (not `full` itself).
fn search(
    plant: &Plant,
    settings: &LimitSettings,
    deadline: Option<Instant>,
    progress: &mut dyn FnMut(Progress),
    full: bool,
) -> Result<DosingLimit, ScenarioError> {
    let mut notes = Vec::new();
    let own = plant.feed.as_ref().map(|f| f.duration);
    progress(Progress {
        stage: Stage::Case,
        trying: own.unwrap_or(0.0),
        runs: 0,
        feed_stopped_variant: false,
    });
    let case = evaluate(plant, settings, deadline)?;
    let mut runs = 1;
    let (required_coolant, coolant_runs) = if full {
        required_coolant(plant, settings, &case, deadline, &mut |p| {
            progress(Progress {
                runs: runs + p.runs,
                ..p
            })
        })
    } else {
        (RequiredCoolant::NotSearched, 0)
    };
    runs += coolant_runs;
    let mut limit = DosingLimit {
        settings: *settings,
        batch: plant.feed.is_none(),
        feasible: case.met(),
        min_feed_duration: None,
        max_feed_rate: None,
        binding: None,
        reported: case.clone(),
        below: None,
        case: case.clone(),
        case_feed_duration: own,
        feed_mass: plant.feed.as_ref().map_or(0.0, |f| f.stream.mass),
        scanned_from: 0.0,
        scanned_to: 0.0,
        never_met: Vec::new(),
        required_coolant,
        held_jacket: matches!(plant.jacket, Jacket::Hold { .. }),
        runs,
        with_feed_stopping: None,
        notes: Vec::new(),
        suggestions: Vec::new(),
    };
    let Some(feed) = &plant.feed else {
        limit.notes.push(
            "a batch: nothing is dosed, so there is no feed rate to search; the criteria are those of the case as it is".to_string(),
        );
        limit.binding = case.worst_failing();
        limit.suggestions = suggestions(plant, &limit);
        return Ok(limit);
    };
    // With the feed going on after a failure, a feed longer than the failure horizon would be
    // cut short in the failure runs, and their maximum understated.
    let horizon_cap = (!feed_stops_after_failure(plant)).then_some(plant.failure_horizon);
    let grid = duration_grid(feed.duration, horizon_cap);
    limit.scanned_from = grid[0];
    limit.scanned_to = *grid.last().unwrap_or(&feed.duration);
    if let Some(cap) = horizon_cap
        && limit.scanned_to >= cap * (1.0 - 1e-9)
    {
        notes.push(format!(
            "durations tried up to the failure horizon ({:.1} h) only: the feed goes on after a failure, and a longer feed would not be followed to its end in the failure runs",
            cap / HOUR
        ));
    }
    let mut runner = Runner {
        plant,
        settings,
        deadline,
        progress,
        runs,
        tried: Vec::new(),
        failure: None,
    };
    let mut found_pass = false;
    let outcome = first_pass(
        &grid,
        &mut |d| {
            let stage = if found_pass {
                Stage::Refine
            } else {
                Stage::Scan
            };
            let e = runner.at_duration(d, stage)?;
            found_pass |= e.as_ref().is_some_and(Evaluation::met);
            Ok(e)
        },
        &|e: &Option<Evaluation>| e.as_ref().is_some_and(Evaluation::met),
        &|a, b| (a * b).sqrt(),
        &|fail, pass| (pass - fail).abs() <= DURATION_TOLERANCE * pass.max(fail),
    )?;
    limit.runs = runner.runs;
    if let Some(e) = &runner.failure {
        notes.push(format!(
            "some durations could not be computed and count as failing: {e}"
        ));
    }
    match outcome {
        Some(FirstPass::AtStart { at, pass }) => {
            notes.push(format!(
                "every criterion is met already at the shortest duration tried ({:.3} h): these criteria do not limit the dosing rate in the range searched",
                at / HOUR
            ));
            limit.feasible = true;
            limit.min_feed_duration = Some(at);
            limit.reported = pass.expect("a passing run has an evaluation");
        }
        Some(FirstPass::Bracketed {
            below,
            fail,
            at,
            pass,
        }) => {
            limit.feasible = true;
            limit.min_feed_duration = Some(at);
            limit.reported = pass.expect("a passing run has an evaluation");
            limit.binding = fail.as_ref().and_then(Evaluation::worst_failing);
            if fail.is_none() {
                notes.push(format!(
                    "just below the limit ({:.3} h) the run could not be computed",
                    below / HOUR
                ));
            }
            limit.below = fail;
        }
        Some(FirstPass::Never { .. }) | None => {
            let tried = &runner.tried;
            limit.feasible = false;
            limit.never_met = [
                Criterion::Cooling,
                Criterion::Temperature,
                Criterion::OffGas,
            ]
            .into_iter()
            .filter(|c| {
                !tried.is_empty()
                    && tried
                        .iter()
                        .all(|e| e.check(*c).is_some_and(|check| !check.met()))
            })
            .collect();
            // Reported at the longest duration that computed.
            if let Some(e) = tried.iter().max_by(|a, b| {
                let d = |e: &Evaluation| e.feed_duration.unwrap_or(0.0);
                d(a).total_cmp(&d(b))
            }) {
                limit.reported = e.clone();
            }
            let reported = &limit.reported;
            limit.binding = limit
                .never_met
                .iter()
                .copied()
                .min_by(|a, b| {
                    let m = |c: Criterion| {
                        reported
                            .check(c)
                            .map_or(f64::INFINITY, Check::relative_margin)
                    };
                    m(*a).total_cmp(&m(*b))
                })
                .or_else(|| reported.worst_failing());
        }
    }
    if let Some(d) = limit.min_feed_duration {
        limit.max_feed_rate = Some(feed.stream.mass / d);
        if d < feed.duration && !case.met() {
            notes.push(format!(
                "the case's own feed ({:.2} h) fails although a faster feed ({:.2} h) meets every criterion: the criteria are not monotone in the feed duration here",
                feed.duration / HOUR,
                d / HOUR
            ));
        }
    }
    let r = &limit.reported;
    if let Some(d) = r.feed_duration
        && !limit.held_jacket
        && r.min_temperature < plant.process_temperature - FLOATING_NOTE_K
    {
        notes.push(format!(
            "over a {:.2} h feed the contents fall to {:.1} degC in normal operation (Tp {:.1} degC): with a constant coolant T floats, and a slow feed reacts colder and accumulates more; a jacket that holds Tp (coolant.control: hold) gives other figures",
            d / HOUR,
            celsius(r.min_temperature),
            celsius(plant.process_temperature)
        ));
    }
    if limit.reported.temperature_limit == TemperatureLimit::Td24 {
        notes.push(format!(
            "TD24 ({:.1} degC) is below MTT ({:.1} degC): it sets the temperature limit",
            celsius(limit.reported.figures.td24.unwrap_or(0.0)),
            celsius(limit.reported.figures.mtt)
        ));
    }
    limit.notes = notes;
    let simulated_fails = {
        let f = &limit.reported.figures;
        f.worst.max_temperature > limit.reported.temperature.limit
    };
    if full && !limit.feasible && simulated_fails && !feed_stops_after_failure(plant) {
        let mut stopped = plant.clone();
        stopped.dosing_after_failure = Dosing::Stops;
        let runs = limit.runs;
        let alternative = search(
            &stopped,
            settings,
            deadline,
            &mut |p| {
                (runner.progress)(Progress {
                    runs: runs + p.runs,
                    feed_stopped_variant: true,
                    ..p
                })
            },
            false,
        )?;
        limit.runs += alternative.runs;
        limit.with_feed_stopping = Some(Alternative {
            feasible: alternative.feasible,
            min_feed_duration: alternative.min_feed_duration,
            binding: alternative.binding,
        });
    }
    limit.suggestions = suggestions(plant, &limit);
    Ok(limit)
}

/// The warmest coolant at which the cooling criterion holds for the case as it is:
/// cooling_use U A (Tp - Tc) = peak power solved for Tc (the constant coolant, or the minimum
/// of a held jacket), by a bracketing search over runs (the peak power depends on Tc through
/// T): steps out from a one-run estimate until the margin changes sign, then Illinois false
/// position to 0.05 K. Returns the result and the runs it took.
fn required_coolant(
    plant: &Plant,
    settings: &LimitSettings,
    case: &Evaluation,
    deadline: Option<Instant>,
    progress: &mut dyn FnMut(Progress),
) -> (RequiredCoolant, usize) {
    let tp = plant.process_temperature;
    let mut runs = 0usize;
    let mut margin_at = |tc: f64| -> Result<f64, ScenarioError> {
        progress(Progress {
            stage: Stage::Coolant,
            trying: tc,
            runs,
            feed_stopped_variant: false,
        });
        runs += 1;
        let e = evaluate(&with_coolant(plant, tc), settings, deadline)?;
        Ok(e.cooling.margin())
    };
    let tc_case = case.coolant_temperature;
    let g_case = case.cooling.margin();
    // A first estimate with the peak power of the case's run held fixed.
    let per_kelvin = case.cooling.limit / (tp - tc_case);
    let estimate = if per_kelvin.is_finite() && per_kelvin > 0.0 {
        tp - case.cooling.value / per_kelvin
    } else {
        tc_case - 10.0
    };
    let result = (|| -> Result<RequiredCoolant, ScenarioError> {
        // The cooling criterion holds for colder coolants: g(Tc) decreases with Tc.
        let (mut warm, mut g_warm, mut cold, mut g_cold);
        if g_case >= 0.0 {
            (cold, g_cold) = (tc_case, g_case);
            let mut step = (estimate - tc_case).max(0.5) + 0.5;
            loop {
                let tc = (cold + step).min(tp);
                let g = if tc >= tp {
                    -case.cooling.value
                } else {
                    margin_at(tc)?
                };
                if g < 0.0 {
                    (warm, g_warm) = (tc, g);
                    break;
                }
                if tc >= tp {
                    return Ok(RequiredCoolant::AtMost(tp));
                }
                (cold, g_cold) = (tc, g);
                step *= 2.0;
            }
        } else {
            (warm, g_warm) = (tc_case, g_case);
            let mut step = (tc_case - estimate).max(0.5) + 0.5;
            loop {
                let tc = (warm - step).max(COLDEST_COOLANT_K);
                let g = margin_at(tc)?;
                if g >= 0.0 {
                    (cold, g_cold) = (tc, g);
                    break;
                }
                if tc <= COLDEST_COOLANT_K {
                    return Ok(RequiredCoolant::NotReachable);
                }
                (warm, g_warm) = (tc, g);
                step *= 2.0;
            }
        }
        let tc = illinois(
            &mut margin_at,
            (warm, g_warm),
            (cold, g_cold),
            COOLANT_TOLERANCE_K,
        )?;
        Ok(RequiredCoolant::AtMost(tc))
    })();
    let out = result.unwrap_or(RequiredCoolant::Failed);
    (out, runs)
}

fn celsius(k: f64) -> f64 {
    k - 273.15
}

/// What would help, from the numbers of the search.
fn suggestions(plant: &Plant, limit: &DosingLimit) -> Vec<String> {
    let mut out = Vec::new();
    let r = &limit.reported;
    // At the limit the binding criterion is met just: what failed is seen just below it.
    let (failing, seen): (Vec<Criterion>, &Evaluation) = if limit.feasible {
        (
            limit.binding.into_iter().collect(),
            limit.below.as_ref().unwrap_or(r),
        )
    } else if limit.never_met.is_empty() {
        (r.failing(), r)
    } else {
        (limit.never_met.clone(), r)
    };
    let faster = if limit.feasible {
        " would allow a faster feed"
    } else {
        ""
    };
    let coolant = if limit.held_jacket {
        "the jacket's minimum"
    } else {
        "the coolant"
    };
    for criterion in failing {
        match criterion {
            Criterion::Temperature => temperature_suggestions(plant, limit, seen, faster, &mut out),
            Criterion::Cooling => {
                match limit.required_coolant {
                    RequiredCoolant::AtMost(tc) if !limit.case.cooling.met() => out.push(format!(
                        "a colder jacket: the case's own feed ({}) meets the cooling criterion with {coolant} at or below {:.1} degC (now {:.1} degC)",
                        limit
                            .case_feed_duration
                            .map_or("the batch".to_string(), |d| format!("{:.2} h", d / HOUR)),
                        celsius(tc),
                        celsius(limit.case.coolant_temperature)
                    )),
                    RequiredCoolant::AtMost(_) => out.push(format!(
                        "a colder jacket{faster}: each K colder adds {:.2} kW to the usable capacity cooling_use x U A (Tp - T_cold)",
                        seen.cooling.limit / (plant.process_temperature - seen.coolant_temperature)
                            / 1e3
                    )),
                    RequiredCoolant::NotReachable => out.push(format!(
                        "more cooling area or a better heat-transfer coefficient: not even {coolant} at {:.0} degC meets the cooling criterion at the case's own feed",
                        celsius(COLDEST_COOLANT_K)
                    )),
                    RequiredCoolant::Failed | RequiredCoolant::NotSearched => {}
                }
                if !limit.feasible && !limit.batch {
                    out.push(format!(
                        "the peak reaction power ({:.1} kW) stays above {:.0} % of the jacket's capacity at Tp ({:.1} kW) even over {:.1} h: a slower feed alone does not help",
                        seen.cooling.value / 1e3,
                        100.0 * limit.settings.cooling_use,
                        seen.figures.normal.cooling_capacity_at_tp / 1e3,
                        seen.feed_duration.unwrap_or(0.0) / HOUR
                    ));
                }
            }
            Criterion::OffGas => {
                if let Some(c) = seen.off_gas {
                    out.push(format!(
                        "a larger off-gas treatment{faster}: the peak off-gas is {:.1} kg/h against the {:.1} kg/h given",
                        c.value * HOUR,
                        c.limit * HOUR
                    ));
                }
            }
        }
    }
    out
}

fn temperature_suggestions(
    plant: &Plant,
    limit: &DosingLimit,
    seen: &Evaluation,
    faster: &str,
    out: &mut Vec<String>,
) {
    let f = &seen.figures;
    let bound = seen.temperature.limit;
    let limit_c = celsius(bound);
    let simulated = f.worst.max_temperature;
    if !limit.batch && !feed_stops_after_failure(plant) && simulated > bound {
        let alternative = match &limit.with_feed_stopping {
            Some(a) if a.feasible => format!(
                "; with it, the shortest feed is {:.2} h ({:.1} kg/h, {} binding)",
                a.min_feed_duration.unwrap_or(0.0) / HOUR,
                limit.feed_mass / a.min_feed_duration.unwrap_or(1.0) * HOUR,
                a.binding.map_or("no criterion", Criterion::name)
            ),
            Some(a) => format!(
                "; even with it no duration meets every criterion ({} fails)",
                a.binding.map_or("a criterion", Criterion::name)
            ),
            None => String::new(),
        };
        out.push(format!(
            "a dosing interlock{faster}: the feed goes on after a cooling failure, and the simulated MTSR ({:.1} degC) is above the limit ({:.1} degC, {}){}; stopping the feed on a cooling failure (failure.dosing: stops, or a temperature trip on the feed) leaves the MTSR from accumulation ({:.1} degC){alternative}",
            celsius(simulated),
            limit_c,
            seen.temperature_limit.name(),
            if limit.feasible { "" } else { " at every duration tried" },
            celsius(f.mtsr)
        ));
    }
    if let Some(trip) = plant.stop_feed_above
        && simulated > bound
        && plant.dosing_after_failure == Dosing::Continues
    {
        out.push(format!(
            "a lower set point for the dosing interlock{faster}: the feed stops only above {:.1} degC, and the simulated MTSR reaches {:.1} degC against {:.1} degC; or stop the feed on a cooling failure (failure.dosing: stops)",
            celsius(trip),
            celsius(simulated),
            limit_c
        ));
    }
    let accumulation_fails =
        f.mtsr > bound || (feed_stops_after_failure(plant) && simulated > bound);
    if accumulation_fails && f.releasable_heat > 0.0 {
        if limit.batch {
            out.push(format!(
                "dosing one reactant instead of charging it (a semibatch): a batch's MTSR is Tp + dT_ad = {:.1} degC, a feed that reacts as it comes keeps the accumulation low; or dilution, which lowers dT_ad ({:.1} K)",
                celsius(f.mtsr),
                f.adiabatic_rise
            ));
        } else {
            out.push(format!(
                "a higher Tp held by the jacket{faster}: the feed then reacts as it comes and less accumulates; over a {:.2} h feed the thermal accumulation still reaches {:.0} % (MTSR {:.1} degC, simulated {:.1} degC, against {:.1} degC); check any higher Tp against the limit itself",
                seen.feed_duration.unwrap_or(0.0) / HOUR,
                100.0 * f.max_accumulation,
                celsius(f.mtsr),
                celsius(simulated),
                limit_c
            ));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn grid(from: f64, to: f64) -> Vec<f64> {
        let mut g = Vec::new();
        let mut x = from;
        while x < to {
            g.push(x);
            x *= SCAN_RATIO;
        }
        g.push(to);
        g
    }

    fn search(f: &dyn Fn(f64) -> bool, g: &[f64]) -> (Option<FirstPass<bool>>, usize) {
        let mut calls = 0;
        let out = first_pass::<bool, ()>(
            g,
            &mut |x| {
                calls += 1;
                Ok(f(x))
            },
            &|p| *p,
            &|a, b| (a * b).sqrt(),
            &|a, b| (b - a).abs() <= DURATION_TOLERANCE * a.max(b),
        )
        .unwrap();
        (out, calls)
    }

    #[test]
    fn a_monotone_step_is_bracketed_to_the_tolerance() {
        let threshold = 3.7;
        let (out, calls) = search(&|x| x >= threshold, &grid(0.1, 100.0));
        let Some(FirstPass::Bracketed { below, at, .. }) = out else {
            panic!("{out:?}");
        };
        assert!(below < threshold && at >= threshold);
        assert!((at - below) <= DURATION_TOLERANCE * at);
        assert!(calls < 25, "{calls} evaluations");
    }

    #[test]
    fn the_first_flip_is_taken_when_the_pass_region_is_not_upward_closed() {
        // Passes on [2, 5] and again above 40: the smallest passing duration is 2.
        let (out, _) = search(&|x| (2.0..=5.0).contains(&x) || x > 40.0, &grid(0.1, 100.0));
        let Some(FirstPass::Bracketed { below, at, .. }) = out else {
            panic!("{out:?}");
        };
        assert!(below < 2.0 && (2.0..2.02).contains(&at), "{below} {at}");
    }

    #[test]
    fn a_margin_that_dips_and_rises_again_is_bracketed_at_its_last_crossing() {
        // g(x) = (x - 1)(x - 3)(x - 6) is positive on (1, 3) and above 6; the grid from 4
        // sees only the crossing at 6.
        let g = |x: f64| (x - 1.0) * (x - 3.0) * (x - 6.0);
        let (out, _) = search(&|x| g(x) >= 0.0, &grid(4.0, 50.0));
        let Some(FirstPass::Bracketed { at, .. }) = out else {
            panic!("{out:?}");
        };
        assert!((at - 6.0).abs() < 0.04, "{at}");
    }

    #[test]
    fn passing_at_the_first_point_and_never_passing_are_told_apart() {
        let (out, calls) = search(&|_| true, &grid(0.1, 10.0));
        assert!(matches!(out, Some(FirstPass::AtStart { at, .. }) if at == 0.1));
        assert_eq!(calls, 1);
        let g = grid(0.1, 10.0);
        let (out, calls) = search(&|_| false, &g);
        assert!(matches!(out, Some(FirstPass::Never { last_at, .. }) if last_at == 10.0));
        assert_eq!(calls, g.len());
        let (out, _) = search(&|_| true, &[]);
        assert!(out.is_none());
    }

    #[test]
    fn an_error_ends_the_search() {
        let out = first_pass::<bool, &str>(
            &[1.0, 2.0, 4.0],
            &mut |x| if x > 1.5 { Err("boom") } else { Ok(false) },
            &|p| *p,
            &|a, b| 0.5 * (a + b),
            &|a, b| (b - a).abs() < 1e-3,
        );
        assert_eq!(out, Err("boom"));
    }

    #[test]
    fn illinois_finds_a_root_within_the_tolerance_and_stays_on_the_chosen_side() {
        // Decreasing in x, like the cooling margin in the coolant temperature.
        let f = |x: f64| 30.0 - x - 0.01 * x * x;
        let root = 30.0_f64.mul_add(0.04, 1.0).sqrt() * 50.0 - 50.0;
        let mut calls = 0;
        let x = illinois::<()>(
            &mut |x| {
                calls += 1;
                Ok(f(x))
            },
            (40.0, f(40.0)),
            (0.0, f(0.0)),
            1e-6,
        )
        .unwrap();
        assert!(x <= root + 1e-6 && x > root - 1e-5, "{x} vs {root}");
        assert!(f(x) >= 0.0);
        assert!(calls < 20, "{calls}");
    }

    #[test]
    fn the_duration_grid_spans_the_documented_range() {
        let own = 5.0 * HOUR;
        let g = duration_grid(own, None);
        assert_eq!(g[0], SCAN_FROM_AT_MOST_S.min(0.05 * own));
        assert_eq!(*g.last().unwrap(), 100.0 * HOUR);
        assert!(
            g.windows(2)
                .all(|w| w[1] > w[0] && w[1] / w[0] <= SCAN_RATIO + 1e-12)
        );
        let short = duration_grid(1.0 * HOUR, None);
        assert_eq!(short[0], 0.05 * HOUR);
        assert_eq!(*short.last().unwrap(), 20.0 * HOUR);
        let capped = duration_grid(own, Some(24.0 * HOUR));
        assert_eq!(*capped.last().unwrap(), 24.0 * HOUR);
    }

    #[test]
    fn a_check_is_met_at_its_limit() {
        let c = Check {
            criterion: Criterion::Cooling,
            value: 10.0,
            limit: 10.0,
            scale: 10.0,
        };
        assert!(c.met() && c.margin() == 0.0);
        let over = Check { value: 12.0, ..c };
        assert!(!over.met() && (over.relative_margin() + 0.2).abs() < 1e-12);
    }
}
