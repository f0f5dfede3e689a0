//! `cargo bench`: wall-clock time of the whole `check` computation (load, validate, normal
//! run, worst-failure search, figures) on the demo cases, median of repeated runs.

use exoscreen::assess::assess;
use exoscreen::case::load::load_case_text;
use std::time::{Duration, Instant};

const CASES: [&str; 4] = [
    "cases/bromination-semibatch.yaml",
    "cases/chlorination-accumulating.yaml",
    "cases/batch-elliptical.yaml",
    "cases/nitration-no-dsc.yaml",
];

fn median(mut samples: Vec<Duration>) -> Duration {
    samples.sort();
    samples[samples.len() / 2]
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

fn main() {
    let repeats: usize = std::env::var("EXOSCREEN_BENCH_REPEATS")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(20);
    println!(
        "check (load + validate + normal run + worst-failure search + figures), {repeats} runs each"
    );
    for path in CASES {
        let (median, min) = time_case(path, repeats);
        println!(
            "  {path:<45} median {:>8.2} ms   min {:>8.2} ms",
            median.as_secs_f64() * 1e3,
            min.as_secs_f64() * 1e3
        );
    }
}
