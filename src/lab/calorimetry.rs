//! Reaction calorimetry: the baseline of the heat flow, the reaction enthalpy per mole of the
//! dosed limiting reagent, the thermal conversion X_th(t) and the accumulation over the feed.
//!
//! Pure functions on slices of SI values (s, K, W, mol); `kinetics` fits the rate law.

pub mod input;
pub mod kinetics;

use crate::lab::arc::{Line, least_squares_line};
use crate::warning::Warning;

/// Share of the run's duration at each end taken as baseline when no limits are given.
pub const DEFAULT_BASELINE_SHARE: f64 = 0.05;
/// A baseline window whose own drift over it exceeds this share of the peak net heat flow is
/// not flat (a screening choice of this program, not a standard).
const FLATNESS_SHARE: f64 = 0.02;
/// A step between the baseline's two ends above this share of the peak net heat flow is warned
/// about: the reaction may not be over, or the instrument's baseline moved (a screening
/// choice of this program).
const STEP_SHARE: f64 = 0.05;
/// Dosed amount within this share of the final one counts as the end of the feed.
const FEED_END_SHARE: f64 = 1e-6;

/// One run as SI series of equal length: s, K, W (heat released by the reaction, after the
/// instrument's own corrections, positive when exothermic), mol (cumulative amount dosed of the
/// limiting reagent).
#[derive(Debug, Clone, Copy)]
pub struct RunSeries<'a> {
    pub time: &'a [f64],
    pub reactor_temperature: &'a [f64],
    pub heat_flow: &'a [f64],
    pub dosed: &'a [f64],
}

/// Where the signal is baseline: before `head_end` and after `tail_start` (s).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BaselineLimits {
    pub head_end: f64,
    pub tail_start: f64,
}

impl BaselineLimits {
    /// The first and last DEFAULT_BASELINE_SHARE of the run.
    pub fn default_for(time: &[f64]) -> BaselineLimits {
        let (first, last) = (time[0], time[time.len() - 1]);
        let span = last - first;
        BaselineLimits {
            head_end: first + DEFAULT_BASELINE_SHARE * span,
            tail_start: last - DEFAULT_BASELINE_SHARE * span,
        }
    }
}

/// Why a run gives no heat figures.
#[derive(Debug, Clone, PartialEq)]
pub enum HeatProblem {
    TooFewPoints { found: usize },
    TimeNotIncreasing { index: usize },
    EmptyBaselineWindow { which: &'static str },
    BaselineOrder,
    NothingDosed,
    NoHeat { total: f64 },
}

impl std::fmt::Display for HeatProblem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            HeatProblem::TooFewPoints { found } => {
                write!(f, "{found} data points; at least 10 are needed")
            }
            HeatProblem::TimeNotIncreasing { index } => write!(
                f,
                "time does not increase at data point {} (accepted: strictly increasing time)",
                index + 1
            ),
            HeatProblem::EmptyBaselineWindow { which } => write!(
                f,
                "no data point in the {which} baseline window (accepted: limits inside the run, e.g. --baseline 0.2h,5h)"
            ),
            HeatProblem::BaselineOrder => write!(
                f,
                "the baseline's head ends after its tail starts (accepted: START < END)"
            ),
            HeatProblem::NothingDosed => write!(
                f,
                "the dosed amount does not grow: nothing was dosed (accepted: a cumulative dosed amount that ends above zero)"
            ),
            HeatProblem::NoHeat { total } => write!(
                f,
                "the heat released above the baseline is {:.3} kJ; an exothermic reaction is needed",
                total / 1e3
            ),
        }
    }
}

/// The heat figures of one run.
#[derive(Debug, Clone)]
pub struct HeatFigures {
    /// W at time t: baseline.at(t).
    pub baseline: Line,
    /// J released above the baseline over the run.
    pub total_heat: f64,
    /// mol of the limiting reagent dosed over the run.
    pub dosed_total: f64,
    /// J/mol of dosed reagent, negative when exothermic: -total_heat / dosed_total.
    pub enthalpy: f64,
    /// Q(t)/Q_total at every point.
    pub thermal_conversion: Vec<f64>,
    /// n_dosed(t)/n_dosed,total at every point.
    pub dosed_fraction: Vec<f64>,
    pub max_accumulation: f64,
    pub max_accumulation_time: f64,
    pub feed_start: f64,
    pub feed_end: f64,
    pub peak_net_heat_flow: f64,
    pub warnings: Vec<Warning>,
}

/// Baseline, enthalpy, conversion and accumulation of one run; the dosed reagent is assumed
/// limiting and fully converted at the end of the run (warned when the signal is not flat).
pub fn analyse_heat(run: &RunSeries, limits: BaselineLimits) -> Result<HeatFigures, HeatProblem> {
    check_series(run.time)?;
    if limits.head_end >= limits.tail_start {
        return Err(HeatProblem::BaselineOrder);
    }
    let head = window(run.time, run.heat_flow, |t| t <= limits.head_end, "head")?;
    let tail = window(run.time, run.heat_flow, |t| t >= limits.tail_start, "tail")?;
    let baseline = baseline_line(run, limits, &head, &tail);
    let net: Vec<f64> = run
        .time
        .iter()
        .zip(run.heat_flow)
        .map(|(&t, &q)| q - baseline.at(t))
        .collect();
    let heat = cumulative_trapezoid(run.time, &net);
    let total_heat = heat[heat.len() - 1];
    if total_heat.is_nan() || total_heat <= 0.0 {
        return Err(HeatProblem::NoHeat { total: total_heat });
    }
    let dosed_start = run.dosed[0];
    let dosed_total = run.dosed[run.dosed.len() - 1] - dosed_start;
    if dosed_total.is_nan() || dosed_total <= 0.0 {
        return Err(HeatProblem::NothingDosed);
    }
    let thermal_conversion: Vec<f64> = heat.iter().map(|q| q / total_heat).collect();
    let dosed_fraction: Vec<f64> = run
        .dosed
        .iter()
        .map(|n| (n - dosed_start) / dosed_total)
        .collect();
    let (feed_start, feed_end) = feed_window(run.time, &dosed_fraction);
    let (max_accumulation, max_accumulation_time) =
        max_accumulation(run.time, &dosed_fraction, &thermal_conversion, feed_end);
    let peak = net.iter().fold(0.0_f64, |a, &b| a.max(b));
    let warnings = flatness_warnings(&head, &tail, peak);
    Ok(HeatFigures {
        baseline,
        total_heat,
        dosed_total,
        enthalpy: -total_heat / dosed_total,
        thermal_conversion,
        dosed_fraction,
        max_accumulation,
        max_accumulation_time,
        feed_start,
        feed_end,
        peak_net_heat_flow: peak,
        warnings,
    })
}

fn check_series(time: &[f64]) -> Result<(), HeatProblem> {
    if time.len() < 10 {
        return Err(HeatProblem::TooFewPoints { found: time.len() });
    }
    match time.windows(2).position(|w| w[1].is_nan() || w[1] <= w[0]) {
        Some(i) => Err(HeatProblem::TimeNotIncreasing { index: i + 1 }),
        None => Ok(()),
    }
}

/// The points of one baseline window: their centre and their own straight line.
struct Window {
    mean_point: (f64, f64),
    line: Option<Line>,
    span: f64,
}

fn window(
    time: &[f64],
    signal: &[f64],
    inside: impl Fn(f64) -> bool,
    which: &'static str,
) -> Result<Window, HeatProblem> {
    let (t, q): (Vec<f64>, Vec<f64>) = time
        .iter()
        .zip(signal)
        .filter(|(t, _)| inside(**t))
        .map(|(t, q)| (*t, *q))
        .unzip();
    if t.is_empty() {
        return Err(HeatProblem::EmptyBaselineWindow { which });
    }
    let n = t.len() as f64;
    Ok(Window {
        mean_point: (t.iter().sum::<f64>() / n, q.iter().sum::<f64>() / n),
        line: least_squares_line(&t, &q),
        span: t[t.len() - 1] - t[0],
    })
}

/// The straight baseline: least squares through every point of both windows (which averages
/// the noise of all of them), or through the windows' centres when that fit is degenerate.
fn baseline_line(run: &RunSeries, limits: BaselineLimits, head: &Window, tail: &Window) -> Line {
    let (t, q): (Vec<f64>, Vec<f64>) = run
        .time
        .iter()
        .zip(run.heat_flow)
        .filter(|(t, _)| **t <= limits.head_end || **t >= limits.tail_start)
        .map(|(t, q)| (*t, *q))
        .unzip();
    least_squares_line(&t, &q).unwrap_or_else(|| line_through(head.mean_point, tail.mean_point))
}

fn line_through(a: (f64, f64), b: (f64, f64)) -> Line {
    let slope = if b.0 > a.0 {
        (b.1 - a.1) / (b.0 - a.0)
    } else {
        0.0
    };
    Line {
        slope,
        intercept: a.1,
        x_mean: a.0,
    }
}

/// Running integral by the trapezoidal rule, starting at 0.
pub fn cumulative_trapezoid(x: &[f64], y: &[f64]) -> Vec<f64> {
    let mut out = Vec::with_capacity(x.len());
    let mut sum = 0.0;
    out.push(0.0);
    for i in 1..x.len().min(y.len()) {
        sum += 0.5 * (y[i] + y[i - 1]) * (x[i] - x[i - 1]);
        out.push(sum);
    }
    out
}

/// (first time the dosed amount grows, first time it is complete).
fn feed_window(time: &[f64], dosed_fraction: &[f64]) -> (f64, f64) {
    let start = dosed_fraction
        .iter()
        .position(|&x| x > FEED_END_SHARE)
        .map_or(time[0], |i| time[i.saturating_sub(1)]);
    let end = dosed_fraction
        .iter()
        .position(|&x| x >= 1.0 - FEED_END_SHARE)
        .map_or(time[time.len() - 1], |i| time[i]);
    (start, end)
}

/// max of X_dosed - X_th up to the end of the feed, and when.
fn max_accumulation(time: &[f64], dosed: &[f64], thermal: &[f64], feed_end: f64) -> (f64, f64) {
    time.iter()
        .zip(dosed.iter().zip(thermal))
        .filter(|(t, _)| **t <= feed_end)
        .map(|(t, (d, x))| (d - x, *t))
        .fold((f64::NEG_INFINITY, time[0]), |best, p| {
            if p.0 > best.0 { p } else { best }
        })
}

fn flatness_warnings(head: &Window, tail: &Window, peak: f64) -> Vec<Warning> {
    let drift = |w: &Window| w.line.map_or(0.0, |l| (l.slope * w.span).abs());
    let mut out = Vec::new();
    if drift(tail) > FLATNESS_SHARE * peak {
        out.push(Warning::new(
            "heat_flow_not_at_baseline",
            format!(
                "the heat flow still changes by {:.3} W over the tail baseline window ({:.1} % of the peak): the reaction may not be complete, so the enthalpy (which assumes full conversion of the dosed reagent at the end) may be too small",
                drift(tail),
                100.0 * drift(tail) / peak
            ),
        ));
    }
    let step = tail.mean_point.1 - head.mean_point.1;
    if step.abs() > STEP_SHARE * peak {
        out.push(Warning::new(
            "baseline_step",
            format!(
                "the heat flow ends {step:+.3} W from where it started ({:.1} % of the peak): the reaction may not be over (the enthalpy assumes full conversion), or the instrument's baseline moved; check the end of the run or set --baseline",
                100.0 * step.abs() / peak
            ),
        ));
    }
    if drift(head) > FLATNESS_SHARE * peak {
        out.push(Warning::new(
            "heat_flow_head_not_flat",
            format!(
                "the heat flow changes by {:.3} W over the head baseline window: the baseline may be misplaced (set --baseline)",
                drift(head)
            ),
        ));
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn trapezoid_is_exact_for_a_line() {
        let x: Vec<f64> = (0..11).map(|i| i as f64).collect();
        let y: Vec<f64> = x.iter().map(|x| 2.0 * x + 1.0).collect();
        let q = cumulative_trapezoid(&x, &y);
        assert!((q[10] - 110.0).abs() < 1e-12); // integral of 2x + 1 over [0, 10]
    }

    /// A rectangular pulse of 10 W for 100 s on a drifting baseline: 1000 J above it.
    #[test]
    fn a_pulse_on_a_sloped_baseline_gives_its_area() {
        let time: Vec<f64> = (0..=400).map(|i| i as f64).collect();
        let base = |t: f64| 1.0 + 0.001 * t;
        let q: Vec<f64> = time
            .iter()
            .map(|&t| {
                base(t)
                    + if (150.0..250.0).contains(&t) {
                        10.0
                    } else {
                        0.0
                    }
            })
            .collect();
        let dosed: Vec<f64> = time.iter().map(|&t| (t / 200.0).min(1.0) * 2.0).collect();
        let temp = vec![300.0; time.len()];
        let run = RunSeries {
            time: &time,
            reactor_temperature: &temp,
            heat_flow: &q,
            dosed: &dosed,
        };
        let h = analyse_heat(&run, BaselineLimits::default_for(&time)).unwrap();
        assert!((h.total_heat - 1000.0).abs() < 10.5, "{}", h.total_heat);
        assert!((h.enthalpy + 500.0).abs() < 5.3);
        assert!(h.warnings.is_empty());
        assert!((h.feed_end - 200.0).abs() < 1e-9);
    }

    /// An exponential tail still at a tenth of its peak in the last 5 % of the run is warned
    /// about (the step between the baseline's ends).
    #[test]
    fn a_signal_still_falling_at_the_end_is_warned_about() {
        let time: Vec<f64> = (0..=400).map(|i| i as f64).collect();
        let q: Vec<f64> = time
            .iter()
            .map(|&t| {
                if t < 50.0 {
                    0.0
                } else {
                    10.0 * (-(t - 50.0) / 150.0).exp()
                }
            })
            .collect();
        let dosed: Vec<f64> = time.iter().map(|&t| (t / 100.0).min(1.0)).collect();
        let temp = vec![300.0; time.len()];
        let run = RunSeries {
            time: &time,
            reactor_temperature: &temp,
            heat_flow: &q,
            dosed: &dosed,
        };
        let h = analyse_heat(&run, BaselineLimits::default_for(&time)).unwrap();
        assert!(
            h.warnings.iter().any(|w| w.code == "baseline_step"),
            "{:?}",
            h.warnings
        );
    }
}
