//! The sampled time series of a report: normal operation and the worst cooling failure at
//! evenly spaced times, in report units (h, degC, kW, kg/h), from the assessment's runs.

use super::celsius;
use crate::assess::figures::{limiting_reactant, thermal_accumulation};
use crate::assess::search::{simulated_mtsr_run, without_boiling};
use crate::assess::{Assessment, TIME_BUDGET};
use crate::model::balance::{Layout, Phase};
use crate::model::plant::Plant;
use crate::model::scenario::{ScenarioError, Trajectory};
use serde::Serialize;
use std::time::Instant;

const HOUR: f64 = 3600.0;
/// The fewest sample times a series accepts.
pub const MIN_POINTS: usize = 2;

/// One sampled moment of a run, in report units.
#[allow(non_snake_case)]
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct SeriesPoint {
    /// From the start of the process, h (also for the failure run).
    pub time_h: f64,
    pub temperature_C: f64,
    /// The jacket temperature (still reported after a cooling failure, when it takes no heat).
    pub coolant_C: f64,
    /// Liquid volume over the vessel's nominal volume, -.
    pub fill: f64,
    /// Of the first reaction's limiting reactant (figures.rs): what has reacted of the whole
    /// recipe's amount, (n_charge + n_fed(t) - n(t)) / (n_charge + n_feed); at the end of the
    /// process it is the figures' final conversion.
    pub conversion: f64,
    /// X(t) = Q_acc / Q_total (figures.rs), clamped to [0, 1] as the figures' maximum is.
    pub accumulation: f64,
    /// Synthesis reactions only (the decomposition is not in it), kW.
    pub reaction_power_kW: f64,
    /// Heat taken by the jacket, kW (0 after the failure).
    pub cooling_power_kW: f64,
    /// All gas species leaving, kg/h.
    pub off_gas_kg_h: f64,
}

/// Normal operation over [0, process duration], and the worst cooling failure of the
/// simulated MTSR from its failure time over the failure horizon (or until it settles).
#[derive(Debug, Clone, PartialEq)]
pub struct Series {
    pub normal: Vec<SeriesPoint>,
    /// Decomposition off and no boiling barrier: the run whose maximum is the simulated MTSR.
    pub failure: Vec<SeriesPoint>,
    pub failure_time_h: f64,
}

#[derive(Debug, thiserror::Error)]
pub enum SeriesError {
    #[error("a time series needs at least {MIN_POINTS} points, {points} were asked for")]
    TooFewPoints { points: usize },
    #[error(transparent)]
    Scenario(#[from] ScenarioError),
}

/// Samples both runs at `points` evenly spaced times each (ends included), plus the times at
/// which the figures' maxima fall (temperature, accumulation, MTSR, peak reaction power; the
/// failure run's highest temperature), so that a series' maximum is the figure's.
///
/// The failure run is integrated again from the worst failure time as the simulated MTSR
/// defines it (search.rs): decomposition off, no boiling barrier, the case's dosing rule.
pub fn sample(assessment: &Assessment, points: usize) -> Result<Series, SeriesError> {
    if points < MIN_POINTS {
        return Err(SeriesError::TooFewPoints { points });
    }
    let plant = &assessment.plant;
    let figures = &assessment.figures;
    let sampler = Sampler::new(assessment);
    let end = plant.process_duration;
    let normal_extra = [
        figures.normal.max_temperature_time,
        figures.max_accumulation_time,
        figures.mtsr_time,
        figures.normal.peak_time,
    ];
    let normal_times = sample_times(0.0, end, points, &normal_extra);
    let normal = sampler.points(plant, &assessment.normal_run, &normal_times);

    let failure_plant = without_boiling(plant);
    let t_f = figures.worst.failure_time;
    let deadline = Some(Instant::now() + TIME_BUDGET);
    let run = simulated_mtsr_run(&failure_plant, &assessment.normal_run, t_f, deadline)?;
    let temperature = |_: &Phase, _: f64, x: &[f64]| x[Layout::TEMPERATURE];
    let (hottest, _) = run.maximum(t_f, run.end_time(), &temperature);
    let failure_times = sample_times(t_f, run.end_time(), points, &[hottest]);
    let failure = sampler.points(&failure_plant, &run, &failure_times);
    Ok(Series {
        normal,
        failure,
        failure_time_h: t_f / HOUR,
    })
}

/// `points` evenly spaced times over [from, to] (ends included) and the `extra` ones inside
/// it, sorted, without repeats; one time when the span is empty.
fn sample_times(from: f64, to: f64, points: usize, extra: &[f64]) -> Vec<f64> {
    if to.is_nan() || to <= from {
        return vec![from];
    }
    let n = points.max(MIN_POINTS);
    let mut times: Vec<f64> = (0..n)
        .map(|k| {
            if k == n - 1 {
                to
            } else {
                from + (to - from) * k as f64 / (n - 1) as f64
            }
        })
        .collect();
    times.extend(
        extra
            .iter()
            .copied()
            .filter(|t| t.is_finite() && *t >= from && *t <= to),
    );
    times.sort_by(f64::total_cmp);
    times.dedup();
    times
}

/// What the points of both runs share: the recipe's heat, the limiting reactant, the vessel.
struct Sampler {
    releasable_heat: f64,
    limiting: Option<Limiting>,
    nominal_volume: f64,
}

/// The limiting reactant's index, its charged and fed amounts, mol, and the feed's mass, kg.
struct Limiting {
    species: usize,
    charged: f64,
    fed: f64,
    feed_mass: f64,
}

impl Sampler {
    fn new(assessment: &Assessment) -> Sampler {
        let plant = &assessment.plant;
        let limiting = limiting_reactant(plant).map(|i| Limiting {
            species: i,
            charged: plant.charge.amounts[i],
            fed: plant.feed.as_ref().map_or(0.0, |f| f.stream.amounts[i]),
            feed_mass: plant.feed.as_ref().map_or(0.0, |f| f.stream.mass),
        });
        Sampler {
            releasable_heat: plant.network.releasable_heat(&plant.recipe_amounts()),
            limiting,
            nominal_volume: assessment
                .case
                .vessel
                .nominal_volume
                .get::<uom::si::volume::cubic_meter>(),
        }
    }

    fn points(&self, plant: &Plant, run: &Trajectory, times: &[f64]) -> Vec<SeriesPoint> {
        times
            .iter()
            .map(|&t| {
                let (phase, x) = run.state_at(t);
                self.point(plant, &phase, t, &x)
            })
            .collect()
    }

    fn point(&self, plant: &Plant, phase: &Phase, t: f64, x: &[f64]) -> SeriesPoint {
        let s = plant.snapshot(phase, t, x);
        SeriesPoint {
            time_h: t / HOUR,
            temperature_C: celsius(x[Layout::TEMPERATURE]),
            coolant_C: celsius(s.coolant_temperature),
            fill: s.volume / self.nominal_volume,
            conversion: self.conversion(plant, s.fed_mass, x),
            accumulation: thermal_accumulation(plant, self.releasable_heat, x).clamp(0.0, 1.0),
            reaction_power_kW: s.reaction_power / 1e3,
            cooling_power_kW: s.cooling_power / 1e3,
            off_gas_kg_h: s.off_gas_rate * HOUR,
        }
    }

    /// What has reacted of the limiting reactant, as a fraction of the recipe's amount; 0
    /// without one.
    fn conversion(&self, plant: &Plant, fed_mass: f64, x: &[f64]) -> f64 {
        let Some(l) = &self.limiting else {
            return 0.0;
        };
        let fed_share = if l.feed_mass > 0.0 {
            (fed_mass / l.feed_mass).clamp(0.0, 1.0)
        } else {
            0.0
        };
        let present = x[plant.layout().amount(l.species)];
        (l.charged + l.fed * fed_share - present) / (l.charged + l.fed)
    }
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::assess::assess;
    use crate::case::load::load_case_text;
    use crate::report::json::JsonExporter;
    use crate::report::{Exporter, Source};
    use std::sync::OnceLock;

    /// The demo cases of cases/, by file name.
    const DEMO_CASES: [(&str, &str); 5] = [
        (
            "batch-elliptical.yaml",
            include_str!("../../cases/batch-elliptical.yaml"),
        ),
        (
            "bromination-protected.yaml",
            include_str!("../../cases/bromination-protected.yaml"),
        ),
        (
            "bromination-semibatch.yaml",
            include_str!("../../cases/bromination-semibatch.yaml"),
        ),
        (
            "chlorination-accumulating.yaml",
            include_str!("../../cases/chlorination-accumulating.yaml"),
        ),
        (
            "nitration-no-dsc.yaml",
            include_str!("../../cases/nitration-no-dsc.yaml"),
        ),
    ];

    /// Points per run in the tests (a report would use a few hundred).
    pub(crate) const TEST_POINTS: usize = 120;

    /// Each demo case assessed once, with its series, shared by the report's tests.
    pub(crate) fn demo_cases() -> &'static [(&'static str, Assessment, Series)] {
        static CASES: OnceLock<Vec<(&'static str, Assessment, Series)>> = OnceLock::new();
        CASES.get_or_init(|| {
            DEMO_CASES
                .iter()
                .map(|(name, text)| {
                    let case = load_case_text(text, name).expect("a demo case loads");
                    let assessment = assess(case).expect("a demo case is assessed");
                    let series = sample(&assessment, TEST_POINTS).expect("a demo case samples");
                    (*name, assessment, series)
                })
                .collect()
        })
    }

    fn json_figures(a: &Assessment, name: &str) -> serde_json::Value {
        let text = JsonExporter.render(
            a,
            &Source {
                file: name.to_string(),
            },
        );
        serde_json::from_str(&text).expect("the JSON report parses")
    }

    fn number(v: &serde_json::Value, pointer: &str) -> f64 {
        v.pointer(pointer)
            .and_then(serde_json::Value::as_f64)
            .unwrap_or_else(|| panic!("{pointer} is a number"))
    }

    fn max_of(points: &[SeriesPoint], f: impl Fn(&SeriesPoint) -> f64) -> f64 {
        points.iter().map(f).fold(f64::NEG_INFINITY, f64::max)
    }

    /// Check values: the `check --format json` figures of the same case (the JSON exporter),
    /// which come from the maxima over the accepted steps refined on the dense output; the
    /// series samples the same runs, so their maxima must agree (0.5 K, 0.01 of X).
    #[test]
    fn the_series_maxima_are_the_reported_figures() {
        for (name, a, series) in demo_cases() {
            let json = json_figures(a, name);
            let t_max = max_of(&series.normal, |p| p.temperature_C);
            let expected = number(&json, "/normal/max_temperature_C");
            assert!(
                (t_max - expected).abs() < 0.5,
                "{name}: {t_max} vs {expected}"
            );
            let x_max = max_of(&series.normal, |p| p.accumulation);
            let expected = number(&json, "/max_thermal_accumulation");
            assert!(
                (x_max - expected).abs() < 0.01,
                "{name}: {x_max} vs {expected}"
            );
            let t_fail = max_of(&series.failure, |p| p.temperature_C);
            let expected = number(&json, "/mtsr_simulated_C");
            assert!(
                (t_fail - expected).abs() < 0.5,
                "{name}: {t_fail} vs {expected}"
            );
            let t_f = number(&json, "/worst_failure_time_h");
            assert!((series.failure_time_h - t_f).abs() < 1e-12, "{name}");
        }
    }

    /// The series span the runs as documented: normal operation from 0 to the process
    /// duration, the failure from its time on; times increase, every value is finite.
    #[test]
    fn the_series_span_their_runs_in_order_with_finite_values() {
        for (name, a, series) in demo_cases() {
            let duration_h = a.plant.process_duration / HOUR;
            assert_eq!(series.normal.first().map(|p| p.time_h), Some(0.0), "{name}");
            let last = series.normal.last().map_or(f64::NAN, |p| p.time_h);
            assert!((last - duration_h).abs() < 1e-12, "{name}");
            assert!(series.normal.len() >= TEST_POINTS, "{name}");
            let first = series.failure.first().map_or(f64::NAN, |p| p.time_h);
            assert!((first - series.failure_time_h).abs() < 1e-12, "{name}");
            for run in [&series.normal, &series.failure] {
                assert!(run.windows(2).all(|w| w[0].time_h < w[1].time_h), "{name}");
                for p in run {
                    let values = [
                        p.time_h,
                        p.temperature_C,
                        p.coolant_C,
                        p.fill,
                        p.conversion,
                        p.accumulation,
                        p.reaction_power_kW,
                        p.cooling_power_kW,
                        p.off_gas_kg_h,
                    ];
                    assert!(values.iter().all(|v| v.is_finite()), "{name}: {p:?}");
                }
            }
            // After a cooling failure the jacket takes no heat (model.md).
            assert!(series.failure.iter().all(|p| p.cooling_power_kW == 0.0));
        }
    }

    /// Conversion at the end of the process is the figures' final conversion (figures.rs, the
    /// same definition once everything is fed); the fill at the end is the final volume over
    /// the nominal volume (plant.rs, volumes add).
    #[test]
    fn end_values_match_the_recipe_totals() {
        for (name, a, series) in demo_cases() {
            let last = series.normal.last().expect("a series has points");
            if let Some(x) = a.figures.final_conversion {
                assert!((last.conversion - x).abs() < 1e-9, "{name}");
            }
            let nominal = a
                .case
                .vessel
                .nominal_volume
                .get::<uom::si::volume::cubic_meter>();
            let final_fill = a.plant.final_volume() / nominal;
            let fed_all = a.plant.feed_end() <= a.plant.process_duration;
            if fed_all {
                assert!((last.fill - final_fill).abs() < 1e-9, "{name}");
            }
            assert!(
                last.fill <= 1.0 + 1e-12,
                "{name}: validation keeps the fill below 1"
            );
        }
    }

    #[test]
    fn too_few_points_is_an_error() {
        let (_, a, _) = &demo_cases()[0];
        assert!(matches!(
            sample(a, 1),
            Err(SeriesError::TooFewPoints { points: 1 })
        ));
    }

    #[test]
    fn sample_times_cover_the_span_and_take_the_extra_times_inside() {
        assert_eq!(
            sample_times(0.0, 2.0, 3, &[0.5, 1.0, 5.0, f64::NAN]),
            [0.0, 0.5, 1.0, 2.0]
        );
        assert_eq!(sample_times(3.0, 3.0, 10, &[3.0]), [3.0]);
        assert_eq!(sample_times(3.0, f64::NAN, 10, &[]), [3.0]);
    }
}
