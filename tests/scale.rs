//! The film model, the ambient loss and the lab-to-plant ladder (`exoscreen scale`): the
//! contract's figures unchanged without the new keys, the ladder's JSON, its physics.

mod common;

use common::run;
use exoscreen::assess::figures::compute;
use exoscreen::assess::scale::{scale_ladder, scaled_plant};
use exoscreen::case::load::load_case_text;
use exoscreen::model::film::SpeedRule;
use exoscreen::model::plant::{Ambient, Plant};

const DEMO_CASES: [&str; 5] = [
    "batch-elliptical",
    "bromination-protected",
    "bromination-semibatch",
    "chlorination-accumulating",
    "nitration-no-dsc",
];

fn plant_of(path: &str) -> Plant {
    let text = std::fs::read_to_string(common::root().join(path)).expect("case readable");
    let case = load_case_text(&text, path).expect("case valid");
    Plant::from_case(&case).expect("geometry")
}

fn json(args: &[&str]) -> serde_json::Value {
    let r = run(args);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    serde_json::from_str(&r.stdout).expect("JSON")
}

/// Without the new keys every figure is bit-identical to the program before them:
/// tests/golden/*.json is the `check --format json` output of the demo cases produced by the
/// build of commit 06d2ee1 (before vessel.heat_transfer and vessel.ambient_loss existed),
/// regenerated once after the stiff-stretch changes of the bounded-work commit 8fec5c3 (which
/// left every contract figure as it was and moved envelope and runaway entries of stiff runs
/// by under 1e-7 relative, and the bromination failure off-gas peak from 182.18 to 182.14
/// kg/h), compared as text: serde_json prints the shortest decimal that reads back to the same
/// f64, so equal text is equal bits.
#[test]
fn without_the_new_keys_every_figure_is_bit_identical() {
    for name in DEMO_CASES {
        let path = format!("cases/{name}.yaml");
        let r = run(&["check", &path, "--format", "json"]);
        assert_eq!(r.code, Some(0), "{name}: {}", r.stderr);
        let golden =
            std::fs::read_to_string(common::root().join(format!("tests/golden/{name}.json")))
                .expect("golden file");
        assert!(
            without_version(&r.stdout) == without_version(&golden),
            "{name}: the JSON report differs from tests/golden/{name}.json"
        );
    }
}

/// The report without its `exoscreen_version` line (the only line a release may change).
fn without_version(json: &str) -> String {
    json.lines()
        .filter(|l| !l.trim_start().starts_with("\"exoscreen_version\""))
        .collect::<Vec<_>>()
        .join("\n")
}

#[test]
fn the_ladder_reports_every_field_per_scale_with_cautions() {
    let v = json(&["scale", "cases/bromination-film.yaml", "--format", "json"]);
    let scales = v["scales"].as_array().expect("scales");
    assert_eq!(scales.len(), 5);
    for key in [
        "volume_m3",
        "area_m2",
        "area_per_volume_1_m",
        "u_W_m2K",
        "cooling_capacity_kW_m3",
        "time_constant_min",
        "peak_power_kW_m3",
        "max_temperature_C",
        "mtsr_C",
        "criticality_class",
        "required_coolant_C",
    ] {
        assert!(scales.iter().all(|s| s.get(key).is_some()), "{key}");
    }
    assert!(!v["cautions"].as_array().expect("cautions").is_empty());
    let shares: f64 = v["resistances"]
        .as_array()
        .expect("resistances")
        .iter()
        .map(|r| r["share"].as_f64().unwrap_or(0.0))
        .sum();
    assert!((shares - 1.0).abs() < 1e-9);
    // The case's own vessel is the 4 m^3 rung: its U is the case's.
    let own = &scales[3];
    assert!((own["volume_m3"].as_f64().unwrap_or(0.0) - 4.0).abs() < 1e-12);
    // A/V falls as V^(-1/3) along the ladder (geometric similarity).
    let av = |s: &serde_json::Value| s["area_per_volume_1_m"].as_f64().unwrap_or(f64::NAN);
    let vol = |s: &serde_json::Value| s["volume_m3"].as_f64().unwrap_or(f64::NAN);
    for s in scales {
        let expected = av(own) * (vol(s) / vol(own)).powf(-1.0 / 3.0);
        assert!((av(s) / expected - 1.0).abs() < 1e-6, "{s}");
    }
}

#[test]
fn a_given_u_is_held_across_the_scales_with_a_warning() {
    let v = json(&[
        "scale",
        common::DEMO,
        "--format",
        "json",
        "--volumes",
        "100 L, 4 m^3",
    ]);
    let scales = v["scales"].as_array().expect("scales");
    assert!(scales.iter().all(|s| s["u_W_m2K"].as_f64() == Some(280.0)));
    let warned = v["warnings"]
        .as_array()
        .expect("warnings")
        .iter()
        .any(|w| w["code"] == "scale-constant-u");
    assert!(warned);
    // The 4 m^3 rung is the case itself: the same figures as `check`.
    let check = json(&["check", common::DEMO, "--format", "json"]);
    assert_eq!(scales[1]["mtsr_C"], check["mtsr_C"]);
    assert_eq!(
        scales[1]["max_temperature_C"],
        check["normal"]["max_temperature_C"]
    );
}

#[test]
fn bad_volumes_are_usage_errors_and_nothing_is_printed() {
    for volumes in ["1 kg, 4 m^3", "0 L", "", "4 zorks"] {
        let r = run(&["scale", common::DEMO, "--volumes", volumes]);
        assert_eq!(r.code, Some(2), "{volumes}: {}", r.stderr);
        assert!(r.stdout.is_empty());
        assert!(r.stderr.contains("--volumes"), "{}", r.stderr);
    }
}

/// The table prints the resistances and, from lab data, the Wilson plot.
#[test]
fn the_table_shows_the_resistances_and_the_wilson_plot() {
    let r = run(&[
        "scale",
        "cases/bromination-wilson.yaml",
        "--speed-rule",
        "tip-speed",
    ]);
    assert_eq!(r.code, Some(0), "{}", r.stderr);
    for part in [
        "RESISTANCES",
        "process film",
        "wall: enamel",
        "coolant film",
        "WILSON PLOT",
        "CAUTIONS",
    ] {
        assert!(r.stdout.contains(part), "{part}");
    }
}

/// The Wilson-plot case carries the lab's process film to the plant by h ∝ N^(2/3) d^(4/3)/D:
/// rebuilt here by hand from the fitted slope (derived from the correlation's exponents).
#[test]
fn the_lab_film_is_carried_to_the_plant_by_the_correlations_scaling() {
    let text = std::fs::read_to_string(common::root().join("cases/bromination-wilson.yaml"))
        .expect("case");
    let case = load_case_text(&text, "wilson").expect("valid");
    let film = case.vessel.film.as_ref().expect("film");
    let lab = film.lab.as_ref().expect("lab");
    let (n, d, big_d) = (80.0 / 60.0, 0.8, 1.6);
    let h_lab_at_n = lab.fit.process_film(n);
    let h_plant =
        h_lab_at_n * (d / lab.impeller_diameter).powf(4.0 / 3.0) * (lab.vessel_diameter / big_d);
    let r = film.model.resistances(big_d);
    assert!((1.0 / r.process_film / h_plant - 1.0).abs() < 1e-12);
}

/// Ambient loss takes heat in normal operation only: the failure figures stay adiabatic, and
/// in normal operation T runs lower (a loss to 20 degC from contents at 75 degC).
#[test]
fn the_ambient_loss_cools_in_normal_operation_only() {
    let base = plant_of(common::DEMO);
    let mut lossy = base.clone();
    lossy.ambient = Some(Ambient {
        conductance: 200.0,
        temperature: 293.15,
    });
    let a = compute(&base, None).expect("base");
    let b = compute(&lossy, None).expect("lossy");
    assert_eq!(a.figures.adiabatic_rise, b.figures.adiabatic_rise);
    assert!(b.figures.normal.max_temperature <= a.figures.normal.max_temperature);
    let (phase, state) = b.normal_run.state_at(3600.0);
    let s = lossy.snapshot(&phase, 3600.0, &state);
    let expected = 200.0 * (state[0] - 293.15);
    assert!((s.ambient_power - expected).abs() < 1e-9 * expected.abs());
}

/// The rung at the case's own volume is the case: the same plant, the same figures.
#[test]
fn the_rung_at_the_case_volume_is_the_case() {
    let plant = plant_of("cases/bromination-film.yaml");
    let same = scaled_plant(&plant, 4.0, SpeedRule::PowerPerVolume).expect("plant");
    assert!((same.u / plant.u - 1.0).abs() < 1e-12);
    assert!((same.charge.mass / plant.charge.mass - 1.0).abs() < 1e-12);
    let ladder = scale_ladder(&plant, &[4.0], SpeedRule::TipSpeed, None).expect("ladder");
    let own = compute(&plant, None).expect("case");
    assert_eq!(ladder.rungs[0].mtsr, own.figures.mtsr);
}
