//! The failure envelope: its points, that it reaches the simulated MTSR where the two
//! scenarios coincide but for the decomposition, and `check --envelope-csv`.

use assert_cmd::Command;
use exoscreen::assess::envelope::{ENVELOPE_POINTS, envelope_point, failure_envelope};
use exoscreen::assess::figures::{Computation, compute};
use exoscreen::case::load::load_case_text;
use exoscreen::model::plant::Plant;
use std::path::Path;

/// An accumulating semibatch with the feed stopping at the failure (for the CLI checks).
const CHLORINATION: &str = "cases/chlorination-accumulating.yaml";
const BATCH: &str = "cases/batch-elliptical.yaml";

fn root() -> &'static Path {
    Path::new(env!("CARGO_MANIFEST_DIR"))
}

fn plant_of(case: &str) -> Plant {
    let text = std::fs::read_to_string(root().join(case)).expect("the demo case");
    let case = load_case_text(&text, case).expect("a valid demo case");
    Plant::from_case(&case).expect("its geometry")
}

/// Every demo case in cases/.
fn demo_cases() -> Vec<String> {
    let mut cases: Vec<String> = std::fs::read_dir(root().join("cases"))
        .expect("the cases directory")
        .map(|e| {
            e.expect("an entry")
                .file_name()
                .to_string_lossy()
                .into_owned()
        })
        .filter(|n| n.ends_with(".yaml"))
        .map(|n| format!("cases/{n}"))
        .collect();
    cases.sort();
    assert!(cases.len() >= 4, "{cases:?}");
    cases
}

fn computed(plant: &Plant) -> Computation {
    compute(plant, None).expect("the figures")
}

#[test]
fn the_envelope_has_the_requested_points_over_the_whole_process_all_finite() {
    for case in demo_cases() {
        let case = case.as_str();
        let plant = plant_of(case);
        let run = computed(&plant).normal_run;
        let envelope = failure_envelope(&plant, &run, ENVELOPE_POINTS, None).expect(case);
        assert_eq!(envelope.len(), ENVELOPE_POINTS, "{case}");
        assert_eq!(envelope[0].failure_time, 0.0, "{case}");
        assert_eq!(
            envelope[ENVELOPE_POINTS - 1].failure_time,
            plant.process_duration,
            "{case}"
        );
        let step = plant.process_duration / (ENVELOPE_POINTS - 1) as f64;
        for (k, p) in envelope.iter().enumerate() {
            let numbers = [
                p.failure_time,
                p.max_temperature,
                p.time_to_max_rate,
                p.max_rate,
            ];
            assert!(numbers.iter().all(|v| v.is_finite()), "{case}: {p:?}");
            assert!(
                (p.failure_time - k as f64 * step).abs() < 1e-6 * step,
                "{case}"
            );
            assert!(p.time_to_max_rate >= 0.0, "{case}: {p:?}");
            assert!(
                p.time_to_max_rate <= plant.failure_horizon * (1.0 + 1e-12),
                "{case}: {p:?}"
            );
        }
    }
}

#[test]
fn few_and_no_points() {
    let plant = plant_of(CHLORINATION);
    let run = computed(&plant).normal_run;
    assert!(failure_envelope(&plant, &run, 0, None).unwrap().is_empty());
    let one = failure_envelope(&plant, &run, 1, None).unwrap();
    assert_eq!(one.len(), 1);
    assert_eq!(one[0].failure_time, 0.0);
    let five = failure_envelope(&plant, &run, 5, None).unwrap();
    let times: Vec<f64> = five.iter().map(|p| p.failure_time / 3600.0).collect();
    assert_eq!(times, [0.0, 2.5, 5.0, 7.5, 10.0]);
}

/// The envelope and the simulated MTSR follow the same failure with the same dosing rule; the
/// envelope adds the decomposition, which only releases heat, so it reaches at least as high.
/// The simulated MTSR leaves the boiling barrier out (the contract's figure), so the envelope
/// is compared here on the plant without it; in the report it keeps it.
#[test]
fn the_envelope_reaches_the_simulated_mtsr_where_the_scenarios_coincide() {
    for case in demo_cases() {
        let case = case.as_str();
        let plant = Plant {
            boiling: None,
            ..plant_of(case)
        };
        let Computation {
            normal_run,
            figures,
        } = computed(&plant);
        let worst = figures.worst;
        let at_worst = envelope_point(&plant, &normal_run, worst.failure_time, None).expect(case);
        assert!(
            at_worst.max_temperature >= worst.max_temperature - 0.5,
            "{case}: {} K at the worst failure time, simulated MTSR {} K",
            at_worst.max_temperature,
            worst.max_temperature
        );
        // The feed window as the search sees it (an interlock may stretch it).
        let (start, end) = plant.feed.as_ref().map_or((0.0, 0.0), |f| {
            (f.start, normal_run.feed_end().unwrap_or(f.end()))
        });
        let envelope = failure_envelope(&plant, &normal_run, ENVELOPE_POINTS, None).expect(case);
        let highest_in_feed_window = envelope
            .iter()
            .filter(|p| p.failure_time >= start && p.failure_time <= end)
            .map(|p| p.max_temperature)
            .fold(f64::NEG_INFINITY, f64::max);
        assert!(
            highest_in_feed_window >= worst.max_temperature - 0.5,
            "{case}: envelope {highest_in_feed_window} K over the feed window, simulated MTSR {} K",
            worst.max_temperature
        );
    }
}

fn exoscreen() -> Command {
    let mut command = Command::cargo_bin("exoscreen").expect("the exoscreen binary is built");
    command.current_dir(root());
    command
}

#[test]
fn envelope_csv_has_a_header_and_one_line_per_failure_time() {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let file = dir.path().join("envelope.csv");
    let output = exoscreen()
        .args(["check", CHLORINATION, "--envelope-csv"])
        .arg(&file)
        .output()
        .expect("exoscreen runs");
    assert_eq!(output.status.code(), Some(0), "{output:?}");
    let text = std::fs::read_to_string(&file).expect("the CSV file");
    let lines: Vec<&str> = text.lines().collect();
    assert_eq!(lines.len(), 1 + ENVELOPE_POINTS);
    assert_eq!(
        lines[0],
        "failure_time [h],max_temperature [degC],time_to_max_rate [h],max_rate [K/min]"
    );
    for line in &lines[1..] {
        let values: Vec<f64> = line
            .split(',')
            .map(|v| v.parse().expect("a number"))
            .collect();
        assert_eq!(values.len(), 4, "{line}");
        assert!(values.iter().all(|v| v.is_finite()), "{line}");
    }
    let names: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(names, ["envelope.csv"], "no temporary file left");
}

#[test]
fn bad_input_writes_no_envelope_and_keeps_an_old_one() {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let fresh = dir.path().join("fresh.csv");
    let old = dir.path().join("old.csv");
    std::fs::write(&old, "old contents\n").unwrap();
    for target in [&fresh, &old] {
        let output = exoscreen()
            .args(["check", "tests/bad/negative-mass.yaml", "--envelope-csv"])
            .arg(target)
            .output()
            .expect("exoscreen runs");
        assert_eq!(output.status.code(), Some(2), "{output:?}");
    }
    assert!(!fresh.exists());
    assert_eq!(std::fs::read_to_string(&old).unwrap(), "old contents\n");
    assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
}

#[test]
fn the_json_report_carries_the_envelope() {
    let output = exoscreen()
        .args(["check", BATCH, "--format", "json"])
        .output()
        .expect("exoscreen runs");
    assert_eq!(output.status.code(), Some(0), "{output:?}");
    let report: serde_json::Value = serde_json::from_slice(&output.stdout).expect("JSON");
    let envelope = report["failure_envelope"]
        .as_array()
        .expect("failure_envelope is a list");
    assert_eq!(envelope.len(), ENVELOPE_POINTS);
    for key in [
        "failure_time_h",
        "max_temperature_C",
        "time_to_max_rate_h",
        "max_rate_K_min",
    ] {
        assert!(envelope.iter().all(|p| p[key].is_f64()), "{key}");
    }
}
