//! The command line: exit statuses, the stage gate (--fail-at-class), --help, and the JSON
//! report of every demo case against the keys of the model's JSON contract.

use serde_json::Value;
use std::path::PathBuf;

mod common;
use common::{DEMO, Run, root, run};

fn json_of(run: &Run, what: &str) -> Value {
    serde_json::from_str(&run.stdout)
        .unwrap_or_else(|e| panic!("{what}: stdout is not JSON ({e}):\n{}", run.stdout))
}

fn class_of(report: &Value) -> Option<u64> {
    match &report["criticality_class"] {
        Value::Null => None,
        Value::Number(n) => Some(n.as_u64().expect("the class is a whole number")),
        other => panic!("criticality_class is {other}"),
    }
}

/// The demo case without its decomposition section, in a temporary file.
fn case_without_decomposition() -> (tempfile::TempDir, PathBuf) {
    let demo = std::fs::read_to_string(root().join(DEMO)).expect("the demo case");
    let mut kept = Vec::new();
    let mut skipping = false;
    for line in demo.lines() {
        if line.starts_with("decomposition:") {
            skipping = true;
            continue;
        }
        if skipping && (line.starts_with(' ') || line.trim().is_empty()) {
            continue;
        }
        skipping = false;
        kept.push(line);
    }
    assert!(
        kept.len() < demo.lines().count(),
        "the demo case has a decomposition section"
    );
    let dir = tempfile::tempdir().expect("a temporary directory");
    let path = dir.path().join("no-decomposition.yaml");
    std::fs::write(&path, kept.join("\n") + "\n").expect("writable");
    (dir, path)
}

#[test]
fn the_demo_case_computes_with_exit_0() {
    let run = run(&["check", DEMO]);
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    assert!(!run.stdout.is_empty());
    assert!(!run.stderr.contains("panicked"));
}

#[test]
fn the_gate_fails_at_class_1_when_there_is_a_class() {
    let run = run(&["check", DEMO, "--format", "json", "--fail-at-class", "1"]);
    let report = json_of(&run, DEMO);
    let class = class_of(&report).expect("the demo case has decomposition data and a class");
    assert!(class >= 1);
    assert_eq!(run.code, Some(3), "{}", run.stderr);
    assert!(run.stderr.contains("stage gate failed"), "{}", run.stderr);
    assert!(
        run.stderr.contains(&format!("class {class}")),
        "{}",
        run.stderr
    );
}

#[test]
fn the_gate_passes_at_class_5_when_the_class_is_below() {
    let run = run(&["check", DEMO, "--format", "json", "--fail-at-class", "5"]);
    let report = json_of(&run, DEMO);
    let class = class_of(&report).expect("the demo case has a class");
    assert!(
        class < 5,
        "the demo case is class {class}; this test needs one below 5"
    );
    assert_eq!(run.code, Some(0), "{}", run.stderr);
    assert!(run.stderr.is_empty(), "{}", run.stderr);
}

#[test]
fn without_decomposition_data_the_gate_fails_and_says_there_is_no_class() {
    let (_dir, path) = case_without_decomposition();
    let file = path.display().to_string();
    let run = run(&["check", &file, "--format", "json", "--fail-at-class", "3"]);
    assert_eq!(run.code, Some(3), "{}", run.stderr);
    assert!(
        run.stderr.contains("no criticality class"),
        "the message says there is no class: {}",
        run.stderr
    );
    let report = json_of(&run, &file);
    assert_eq!(report["criticality_class"], Value::Null);
    assert_eq!(report["td24_C"], Value::Null);
    assert_eq!(report["tmr_ad_at_mtsr_h"], Value::Null);
}

#[test]
fn help_lists_the_exit_statuses() {
    for args in [&["--help"][..], &["check", "--help"][..]] {
        let run = run(args);
        assert_eq!(run.code, Some(0), "{args:?}: {}", run.stderr);
        let help = run.stdout;
        assert!(help.contains("Exit status"), "{args:?}: {help}");
        for line in ["0  ", "1  ", "2  ", "3  "] {
            assert!(
                help.lines().any(|l| l.trim_start().starts_with(line)),
                "{args:?}: no line for exit status {}: {help}",
                line.trim()
            );
        }
        assert!(help.contains("--fail-at-class"), "{args:?}: {help}");
    }
}

#[test]
fn bad_usage_exits_2() {
    for args in [
        &["check"][..],
        &["check", DEMO, "--format", "xml"][..],
        &["check", DEMO, "--fail-at-class", "0"][..],
        &["check", DEMO, "--fail-at-class", "6"][..],
        &["check", DEMO, "--no-such-option"][..],
        &["frobnicate"][..],
    ] {
        let run = run(args);
        assert_eq!(run.code, Some(2), "{args:?}: {}", run.stderr);
        assert!(run.stdout.is_empty(), "{args:?}: {}", run.stdout);
    }
}

/// The keys of the JSON report (model.md) whose values are numbers or null.
const NUMBER_KEYS: [&str; 12] = [
    "adiabatic_temperature_rise_K",
    "process_temperature_C",
    "max_thermal_accumulation",
    "mtsr_C",
    "mtsr_simulated_C",
    "worst_failure_time_h",
    "mtt_C",
    "td24_C",
    "tmr_ad_at_mtsr_h",
    "criticality_class",
    "final_conversion",
    "format",
];

const NORMAL_KEYS: [&str; 3] = [
    "max_temperature_C",
    "peak_reaction_power_kW",
    "cooling_capacity_at_peak_kW",
];

fn assert_number_or_null(case: &str, key: &str, value: Option<&Value>) {
    match value {
        None => panic!("{case}: the JSON report has no key \"{key}\""),
        Some(Value::Null) => {}
        Some(Value::Number(n)) => {
            let x = n.as_f64().expect("a number");
            assert!(x.is_finite(), "{case}: {key} = {x}");
        }
        Some(other) => panic!("{case}: {key} is {other}, not a number or null"),
    }
}

fn assert_report_keys(case: &str, report: &Value) {
    let object = report
        .as_object()
        .unwrap_or_else(|| panic!("{case}: the report is not a JSON object"));
    for key in NUMBER_KEYS {
        assert_number_or_null(case, key, object.get(key));
    }
    assert_eq!(report["format"], 1, "{case}");
    assert!(report["title"].is_string(), "{case}: title");
    if let Some(class) = class_of(report) {
        assert!((1..=5).contains(&class), "{case}: class {class}");
    }
    let normal = report["normal"]
        .as_object()
        .unwrap_or_else(|| panic!("{case}: normal is not an object"));
    for key in NORMAL_KEYS {
        assert_number_or_null(case, &format!("normal.{key}"), normal.get(key));
    }
    let warnings = report["warnings"]
        .as_array()
        .unwrap_or_else(|| panic!("{case}: warnings is not a list"));
    for warning in warnings {
        assert!(warning["code"].is_string(), "{case}: {warning}");
        assert!(warning["message"].is_string(), "{case}: {warning}");
    }
}

#[test]
fn every_demo_case_gives_a_json_report_with_the_contract_keys() {
    let mut cases: Vec<String> = std::fs::read_dir(root().join("cases"))
        .expect("cases/ exists")
        .map(|entry| entry.expect("readable entry").file_name())
        .map(|name| format!("cases/{}", name.to_string_lossy()))
        .filter(|name| name.ends_with(".yaml") || name.ends_with(".yml"))
        .collect();
    cases.sort();
    assert!(cases.iter().any(|c| c == DEMO), "{cases:?}");
    std::thread::scope(|scope| {
        let runs: Vec<_> = cases
            .iter()
            .map(|case| {
                scope.spawn(move || {
                    let run = run(&["check", case, "--format", "json"]);
                    assert_eq!(run.code, Some(0), "{case}: {}", run.stderr);
                    assert_report_keys(case, &json_of(&run, case));
                })
            })
            .collect();
        for handle in runs {
            if let Err(panic) = handle.join() {
                std::panic::resume_unwind(panic);
            }
        }
    });
}
