//! `cargo bench`: wall-clock time of the screening figures alone (load, validate, normal run,
//! worst-failure search, figures: the contract's part of `check`), then of the whole `check` computation (load, validate, normal
//! run, worst-failure search, figures, failure envelope) on the demo cases, median of repeated
//! runs; then the failure envelope alone (200 failure times, decomposition on) on each case;
//! then the dosing-limit search (`exoscreen limit`) on the semibatch demo cases; then
//! `exoscreen dsc`'s analysis of four 10 000-point scans (`cargo bench --bench check -- dsc`
//! runs it alone); then the scale ladder (`exoscreen scale`, five volumes) on the film-model
//! demo case.

use exoscreen::assess::assess;
use exoscreen::assess::envelope::{ENVELOPE_POINTS, failure_envelope};
use exoscreen::assess::figures::compute;
use exoscreen::assess::limit::{LimitSettings, dosing_limit};
use exoscreen::assess::scale::{parse_volumes, scale_ladder};
use exoscreen::case::load::load_case_text;
use exoscreen::lab::Table;
use exoscreen::lab::dsc::ScanOptions;
use exoscreen::lab::study::study;
use exoscreen::lab::synthetic::{CurveSpec, scan_csv};
use exoscreen::model::film::SpeedRule;
use exoscreen::model::plant::Plant;
use exoscreen::model::scenario::run_normal;
use std::time::{Duration, Instant};

const CASES: [&str; 5] = [
    "cases/bromination-semibatch.yaml",
    "cases/bromination-protected.yaml",
    "cases/chlorination-accumulating.yaml",
    "cases/batch-elliptical.yaml",
    "cases/nitration-no-dsc.yaml",
];

fn median(mut samples: Vec<Duration>) -> Duration {
    samples.sort();
    samples[samples.len() / 2]
}

/// Load, validate, normal run, worst-failure search and figures: (median, min).
fn time_figures(path: &str, repeats: usize) -> (Duration, Duration) {
    let text = std::fs::read_to_string(path).expect("demo case readable");
    let mut samples = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        let case = load_case_text(&text, path).expect("demo case valid");
        let plant = Plant::from_case(&case).expect("demo geometry");
        let computation = compute(&plant, None).expect("demo case computes");
        std::hint::black_box(&computation.figures);
        samples.push(start.elapsed());
    }
    let min = *samples.iter().min().unwrap_or(&Duration::ZERO);
    (median(samples), min)
}

fn time_case(path: &str, repeats: usize) -> (Duration, Duration) {
    let text = std::fs::read_to_string(path).expect("demo case readable");
    let mut samples = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        let case = load_case_text(&text, path).expect("demo case valid");
        let assessment = assess(case).expect("demo case computes");
        std::hint::black_box(&assessment.figures);
        samples.push(start.elapsed());
    }
    let min = *samples.iter().min().unwrap_or(&Duration::ZERO);
    (median(samples), min)
}

/// The envelope alone, from a normal run computed once beforehand: (median, min) of the
/// repeats, or the error of a run that failed with the time it took.
fn time_envelope(path: &str, repeats: usize) -> Result<(Duration, Duration), String> {
    let text = std::fs::read_to_string(path).expect("demo case readable");
    let case = load_case_text(&text, path).expect("demo case valid");
    let plant = Plant::from_case(&case).expect("demo geometry");
    let normal = run_normal(&plant, None).expect("demo normal run");
    let mut samples = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        let envelope = failure_envelope(&plant, &normal, ENVELOPE_POINTS, None);
        let elapsed = start.elapsed();
        match envelope {
            Ok(points) => std::hint::black_box(points),
            Err(e) => {
                return Err(format!(
                    "failed after {:.0} ms: {e}",
                    elapsed.as_secs_f64() * 1e3
                ));
            }
        };
        samples.push(elapsed);
    }
    let min = *samples.iter().min().unwrap_or(&Duration::ZERO);
    Ok((median(samples), min))
}

fn main() {
    let repeats: usize = std::env::var("EXOSCREEN_BENCH_REPEATS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(20);
    let (median, min) = time_dsc(repeats);
    println!(
        "dsc kissinger (4 scans x 10 000 points: CSV parsed from memory, scans, Kissinger, Ozawa, block, TD24), {repeats} runs\n  median {:>8.2} ms   min {:>8.2} ms",
        median.as_secs_f64() * 1e3,
        min.as_secs_f64() * 1e3
    );
    if std::env::args().any(|a| a == "dsc") {
        return;
    }
    println!(
        "figures (load + validate + normal run + worst-failure search + figures), {repeats} runs each"
    );
    for path in CASES {
        let (median, min) = time_figures(path, repeats);
        println!(
            "  {path:<45} median {:>8.2} ms   min {:>8.2} ms",
            median.as_secs_f64() * 1e3,
            min.as_secs_f64() * 1e3
        );
    }
    println!("check (figures + failure envelope + coupled runaway + off-gas), {repeats} runs each");
    for path in CASES {
        let (median, min) = time_case(path, repeats);
        println!(
            "  {path:<45} median {:>8.2} ms   min {:>8.2} ms",
            median.as_secs_f64() * 1e3,
            min.as_secs_f64() * 1e3
        );
    }
    let envelope_repeats = repeats.clamp(1, 5);
    println!(
        "failure envelope ({ENVELOPE_POINTS} failure times over the process, decomposition on), {envelope_repeats} runs each"
    );
    for path in CASES {
        match time_envelope(path, envelope_repeats) {
            Ok((median, min)) => println!(
                "  {path:<45} median {:>8.2} ms   min {:>8.2} ms",
                median.as_secs_f64() * 1e3,
                min.as_secs_f64() * 1e3
            ),
            Err(why) => println!("  {path:<45} {why}"),
        }
    }
    let limit_repeats = repeats.clamp(1, 5);
    println!("limit (load + validate + the whole dosing-limit search), {limit_repeats} runs each");
    for path in LIMIT_CASES {
        let (median, min, runs) = time_limit(path, limit_repeats);
        println!(
            "  {path:<45} median {:>8.2} ms   min {:>8.2} ms   ({runs} simulations)",
            median.as_secs_f64() * 1e3,
            min.as_secs_f64() * 1e3
        );
    }
    let scale_repeats = repeats.clamp(1, 10);
    println!(
        "scale ladder (5 volumes): load + validate + 5 scaled screenings, {scale_repeats} runs"
    );
    let (median, min) = time_scale_ladder(SCALE_CASE, scale_repeats);
    println!(
        "  {SCALE_CASE:<45} median {:>8.2} ms   min {:>8.2} ms",
        median.as_secs_f64() * 1e3,
        min.as_secs_f64() * 1e3
    );
}

/// The demo case of the film model, for the scale ladder.
const SCALE_CASE: &str = "cases/bromination-film.yaml";

/// `exoscreen scale` with the five volumes of the README: (median, min).
fn time_scale_ladder(path: &str, repeats: usize) -> (Duration, Duration) {
    let text = std::fs::read_to_string(path).expect("demo case readable");
    let volumes = parse_volumes("1 L, 100 L, 1 m^3, 4 m^3, 16 m^3").expect("volumes");
    let mut samples = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        let case = load_case_text(&text, path).expect("demo case valid");
        let plant = Plant::from_case(&case).expect("demo geometry");
        let ladder = scale_ladder(&plant, &volumes, SpeedRule::PowerPerVolume, None)
            .expect("ladder computes");
        std::hint::black_box(&ladder);
        samples.push(start.elapsed());
    }
    let min = *samples.iter().min().unwrap_or(&Duration::ZERO);
    (median(samples), min)
}

/// The semibatch demo cases, for the dosing-limit search.
const LIMIT_CASES: [&str; 4] = [
    "cases/bromination-semibatch.yaml",
    "cases/bromination-protected.yaml",
    "cases/chlorination-accumulating.yaml",
    "cases/nitration-no-dsc.yaml",
];

/// The whole `limit` computation: (median, min, full assessments per search).
fn time_limit(path: &str, repeats: usize) -> (Duration, Duration, usize) {
    let text = std::fs::read_to_string(path).expect("demo case readable");
    let mut samples = Vec::with_capacity(repeats);
    let mut runs = 0;
    for _ in 0..repeats {
        let start = Instant::now();
        let case = load_case_text(&text, path).expect("demo case valid");
        let plant = Plant::from_case(&case).expect("demo geometry");
        let limit = dosing_limit(&plant, &LimitSettings::from_case(&case), None)
            .expect("demo limit computes");
        runs = limit.runs;
        std::hint::black_box(&limit);
        samples.push(start.elapsed());
    }
    let min = *samples.iter().min().unwrap_or(&Duration::ZERO);
    (median(samples), min, runs)
}

/// Four invented 10 000-point scans (2, 5, 10, 20 K/min, 1 % noise) made once as CSV text;
/// each run parses the four texts and does the whole `dsc` analysis: (median, min).
fn time_dsc(repeats: usize) -> (Duration, Duration) {
    let texts: Vec<String> = [2.0, 5.0, 10.0, 20.0]
        .iter()
        .enumerate()
        .map(|(i, rate)| {
            scan_csv(&CurveSpec {
                heating_rate: rate / 60.0,
                activation_energy: 120e3,
                pre_exponential: 1e12,
                order: 1.0,
                energy: 800e3,
                start: 313.15,
                end: 573.15,
                points: 10_000,
                baseline: 20.0,
                baseline_slope: 0.05,
                noise: 0.01,
                seed: 1 + i as u64,
                sample_mass: Some(3.2e-6),
            })
        })
        .collect();
    let options = vec![ScanOptions::default(); texts.len()];
    let mut samples = Vec::with_capacity(repeats);
    for _ in 0..repeats {
        let start = Instant::now();
        let tables: Vec<Table> = texts
            .iter()
            .map(|t| Table::parse(t, "bench.csv").expect("generated scan reads"))
            .collect();
        let result = study(&tables, &options, None).expect("generated scans analyse");
        std::hint::black_box(&result.kissinger);
        samples.push(start.elapsed());
    }
    let min = *samples.iter().min().unwrap_or(&Duration::ZERO);
    (median(samples), min)
}
