//! The case's `scale_up` key and `exoscreen scale`: the case's volumes and speed rule are
//! used without `--volumes`/`--speed-rule`, the command line overrides them, and a case
//! without the key gets the default ladder.

mod common;

use common::run;

fn json(args: &[&str]) -> serde_json::Value {
    let r = run(args);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).expect("JSON")
}

fn volumes(report: &serde_json::Value) -> Vec<f64> {
    report["scales"]
        .as_array()
        .expect("scales")
        .iter()
        .map(|s| s["volume_m3"].as_f64().expect("volume"))
        .collect()
}

/// The film demo case with its `scale_up` replaced by `block`, in a temporary file.
fn film_case_with(block: &str) -> (tempfile::TempDir, String) {
    let text = std::fs::read_to_string(common::root().join("cases/bromination-film.yaml"))
        .expect("demo case");
    let cut = text
        .find("\nscale_up:")
        .expect("the demo case has scale_up");
    let dir = tempfile::tempdir().expect("temporary directory");
    let path = dir.path().join("case.yaml");
    std::fs::write(&path, format!("{}\n{block}", &text[..cut])).expect("writable");
    (dir, path.display().to_string())
}

/// Nominal volumes are read as 1 L = 1e-3 m^3 (SI definition of the litre).
fn close(found: &[f64], expected: &[f64]) -> bool {
    found.len() == expected.len()
        && found
            .iter()
            .zip(expected)
            .all(|(f, e)| (f / e - 1.0).abs() < 1e-12)
}

#[test]
fn the_case_asks_for_its_scales_and_the_command_line_overrides_them() {
    let (_dir, path) =
        film_case_with("scale_up:\n  volumes: [10 L, 2 m^3]\n  speed_rule: tip_speed\n");
    let from_case = json(&["scale", &path, "--format", "json"]);
    assert!(
        close(&volumes(&from_case), &[0.01, 2.0]),
        "{:?}",
        volumes(&from_case)
    );
    assert_eq!(from_case["speed_rule"], "tip-speed");

    let volumes_given = json(&["scale", &path, "--volumes", "1 m^3", "--format", "json"]);
    assert!(close(&volumes(&volumes_given), &[1.0]));
    assert_eq!(
        volumes_given["speed_rule"], "tip-speed",
        "the case's rule stays"
    );

    let rule_given = json(&[
        "scale",
        &path,
        "--speed-rule",
        "power-per-volume",
        "--format",
        "json",
    ]);
    assert!(
        close(&volumes(&rule_given), &[0.01, 2.0]),
        "the case's volumes stay"
    );
    assert_eq!(rule_given["speed_rule"], "power-per-volume");
}

#[test]
fn the_speed_rule_defaults_to_power_per_volume() {
    let (_dir, path) = film_case_with("scale_up:\n  volumes: [50 L]\n");
    let report = json(&["scale", &path, "--format", "json"]);
    assert!(close(&volumes(&report), &[0.05]));
    assert_eq!(report["speed_rule"], "power-per-volume");
}

#[test]
fn without_scale_up_the_default_ladder_is_used() {
    let report = json(&[
        "scale",
        "cases/bromination-semibatch.yaml",
        "--format",
        "json",
    ]);
    assert!(close(&volumes(&report), &[1e-3, 0.1, 1.0, 4.0, 16.0]));
    assert_eq!(report["speed_rule"], "power-per-volume");
}

/// A bad `scale_up` is bad input (exit 2, placed, nothing printed) even with `--volumes`
/// given: the whole case is checked before anything is computed.
#[test]
fn a_bad_scale_up_is_refused_even_when_the_command_line_overrides_it() {
    let (_dir, path) = film_case_with("scale_up:\n  volumes: [10 kg]\n");
    let r = run(&["scale", &path, "--volumes", "1 m^3"]);
    assert_eq!(r.code, Some(2), "{}", r.stderr);
    assert!(r.stdout.is_empty());
    assert!(r.stderr.contains("scale_up.volumes[0]"), "{}", r.stderr);
}
