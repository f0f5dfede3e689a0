//! Bounded work: extreme kinetics end in bounded time, either with figures or with exit
//! status 1 and a message that names the scenario and what to change; never a hang.

mod common;

use common::{DEMO, root, run};
use std::time::{Duration, Instant};

/// The budget given to every extreme case, and the wall time it may take at most (the budget
/// plus loading, the report, and a test-profile binary on a loaded 2-core machine).
const BUDGET_S: &str = "20";
const WALL_LIMIT: Duration = Duration::from_secs(45);

/// The demo case with `edits` (find, replace) applied, written to a temporary file.
fn variant(edits: &[(&str, &str)]) -> tempfile::NamedTempFile {
    let mut text = std::fs::read_to_string(root().join(DEMO)).expect("the demo case reads");
    for (find, replace) in edits {
        assert!(text.contains(find), "the demo case has {find:?}");
        text = text.replacen(find, replace, 1);
    }
    let file = tempfile::Builder::new()
        .suffix(".yaml")
        .tempfile()
        .expect("a temporary file");
    std::fs::write(file.path(), text).expect("the variant is written");
    file
}

const RATE: &str = "rate_constant: 6.0e-4 L/(mol*s)";
const REACTION_EA: &str = "activation_energy: 75 kJ/mol";
const DECOMPOSITION_EA: &str = "activation_energy: 100 kJ/mol";
const DECOMPOSITION_Q: &str = "heat_release_rate: 2.0 W/kg";

fn extreme_cases() -> Vec<(&'static str, Vec<(&'static str, &'static str)>)> {
    vec![
        (
            "reaction Ea 400 kJ/mol",
            vec![(REACTION_EA, "activation_energy: 400 kJ/mol")],
        ),
        (
            "k_ref 1e20 L/(mol s)",
            vec![(RATE, "rate_constant: 1e20 L/(mol*s)")],
        ),
        (
            "k_ref 1e20 and Ea 400",
            vec![
                (RATE, "rate_constant: 1e20 L/(mol*s)"),
                (REACTION_EA, "activation_energy: 400 kJ/mol"),
            ],
        ),
        (
            "microsecond reaction time (k c = 4e6 1/s)",
            vec![(RATE, "rate_constant: 1e3 m^3/(mol*s)")],
        ),
        (
            "decomposition Ea 400 kJ/mol, 1 MW/kg at 150 degC",
            vec![
                (DECOMPOSITION_EA, "activation_energy: 400 kJ/mol"),
                (DECOMPOSITION_Q, "heat_release_rate: 1e6 W/kg"),
            ],
        ),
        (
            "decomposition 1e20 W/kg",
            vec![(DECOMPOSITION_Q, "heat_release_rate: 1e20 W/kg")],
        ),
        (
            "jacket time constant 1 microsecond",
            vec![(
                "  temperature: 50 degC\n",
                "  temperature: 50 degC\n  control: hold\n  minimum: -20 degC\n  maximum: 140 degC\n  time_constant: 1 us\n",
            )],
        ),
    ]
}

/// Every extreme case ends within the wall limit: exit 0 with finite figures, or exit 1 with a
/// message naming the scenario and what to check or change. Never a panic, never a hang.
#[test]
fn extreme_kinetics_end_in_bounded_time_with_figures_or_advice() {
    for (name, edits) in extreme_cases() {
        let file = variant(&edits);
        let path = file.path().to_str().expect("a UTF-8 path");
        let started = Instant::now();
        let out = run(&["check", path, "--format", "json", "--time-budget", BUDGET_S]);
        let took = started.elapsed();
        assert!(took < WALL_LIMIT, "{name}: took {took:?}");
        assert!(!out.stderr.contains("panicked"), "{name}: {}", out.stderr);
        match out.code {
            Some(0) => {
                let json: serde_json::Value =
                    serde_json::from_str(&out.stdout).expect("the report is JSON");
                assert!(
                    json["mtsr_C"].as_f64().is_some_and(f64::is_finite),
                    "{name}"
                );
            }
            Some(1) => {
                assert!(out.stdout.is_empty(), "{name}: nothing on stdout");
                let names_scenario = out.stderr.contains("normal operation")
                    || out.stderr.contains("cooling failure at");
                assert!(names_scenario, "{name}: {}", out.stderr);
                let says_what_to_change =
                    out.stderr.contains("check the rate") || out.stderr.contains("--time-budget");
                assert!(says_what_to_change, "{name}: {}", out.stderr);
            }
            other => panic!("{name}: exit {other:?}\n{}", out.stderr),
        }
    }
}

/// A budget far too small for the demo case stops it at once with exit 1, naming the scenario
/// and the option that gives more time.
#[test]
fn a_spent_time_budget_ends_the_run_with_exit_1_and_says_how_to_allow_more() {
    let started = Instant::now();
    let out = run(&["check", DEMO, "--time-budget", "0.001"]);
    assert!(started.elapsed() < Duration::from_secs(10));
    assert_eq!(out.code, Some(1), "{}", out.stderr);
    assert!(out.stderr.contains("time budget ran out"), "{}", out.stderr);
    assert!(out.stderr.contains("--time-budget"), "{}", out.stderr);
    assert!(out.stdout.is_empty());
}

#[test]
fn a_time_budget_that_is_not_a_positive_number_is_a_usage_error() {
    for bad in ["0", "-5", "nan", "inf", "ten"] {
        let out = run(&["check", DEMO, &format!("--time-budget={bad}")]);
        assert_eq!(out.code, Some(2), "{bad}: {}", out.stderr);
        assert!(out.stderr.contains("seconds"), "{bad}: {}", out.stderr);
    }
}

/// An instantaneous reaction (k_ref 1e20 L/(mol s)) is feed-controlled: whatever enters reacts
/// at once, so the peak reaction power is the feed's molar rate times -dH, 9500 mol / 5 h x
/// 95 kJ/mol = 50.139 kW (a mass balance; the feed-controlled limit of semibatch operation),
/// there is no accumulation, and the conversion cannot pass 1. Before the stiff method kept
/// amounts nonnegative and the peak came from the secant of the heat released, this case
/// printed a peak of 4.6e12 kW and a conversion of 1.015.
#[test]
fn an_instantaneous_reaction_gives_the_feed_controlled_figures() {
    let file = variant(&[(RATE, "rate_constant: 1e20 L/(mol*s)")]);
    let path = file.path().to_str().expect("a UTF-8 path");
    let out = run(&["check", path, "--format", "json"]);
    assert_eq!(out.code, Some(0), "{}", out.stderr);
    let json: serde_json::Value = serde_json::from_str(&out.stdout).expect("JSON");
    let feed_controlled_kw = 9500.0 / (5.0 * 3600.0) * 95.0;
    let peak = json["normal"]["peak_reaction_power_kW"]
        .as_f64()
        .expect("peak");
    assert!(
        (peak / feed_controlled_kw - 1.0).abs() < 5e-3,
        "peak {peak} kW vs {feed_controlled_kw} kW"
    );
    let accumulation = json["max_thermal_accumulation"].as_f64().expect("X");
    assert!(accumulation < 1e-3, "{accumulation}");
    let conversion = json["final_conversion"].as_f64().expect("conversion");
    assert!(conversion <= 1.0 + 1e-6, "{conversion}");
}
