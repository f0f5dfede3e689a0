//! The corpus of broken cases in tests/bad/: each file is rejected with exit status 2, no
//! output, and messages that place the error (file:LINE:COL:), name its key path and say
//! what is wrong. One file (valid-anchors-aliases.yaml) is valid and must compute.

use std::collections::BTreeSet;
use std::path::PathBuf;

/// What the run of one corpus file must report.
enum Expect {
    /// Exit 2 with these errors: (key path, line, substring of the message), all of them.
    /// An empty key path is an error about the whole file.
    Errors(&'static [(&'static str, usize, &'static str)]),
    /// A valid case that computes the same figures as the demo case.
    SameAsDemo,
}

use Expect::{Errors, SameAsDemo};

/// Every file of tests/bad/ and what it must give; a file missing here fails the test.
const CORPUS: &[(&str, Expect)] = &[
    (
        "bare-number-mass.yaml",
        Errors(&[("charge.mass", 9, "a bare number without a unit")]),
    ),
    (
        "colon-in-value.yaml",
        Errors(&[("title", 3, "a value holding \": \" that needs quotes")]),
    ),
    (
        "control-character.yaml",
        Errors(&[("", 3, "the control character U+0007 stands here")]),
    ),
    (
        "duplicate-key.yaml",
        Errors(&[(
            "vessel.diameter",
            33,
            "written a second time (first at line 31",
        )]),
    ),
    (
        "empty-value.yaml",
        Errors(&[("charge.specific_heat", 10, "has no value")]),
    ),
    ("empty.yaml", Errors(&[("", 1, "no YAML content")])),
    (
        "equation-bad-species.yaml",
        Errors(&[("reactions[0].equation", 24, "\"H-Br\" is not a species")]),
    ),
    (
        "equation-no-arrow.yaml",
        Errors(&[("reactions[0].equation", 24, "no arrow")]),
    ),
    (
        "equation-no-change.yaml",
        Errors(&[("reactions[1].equation", 29, "changes no amount")]),
    ),
    (
        "exothermic-cycle.yaml",
        Errors(&[("reactions[1]", 29, "and reactions[2] (Q -> P")]),
    ),
    (
        "feed-species-unused.yaml",
        Errors(&[("feed.amounts.C", 19, "no reaction uses it")]),
    ),
    (
        "fill-above-nominal.yaml",
        Errors(&[(
            "vessel.nominal_volume",
            33,
            "above the nominal volume 4.000 m^3 (from charge.mass, charge.density, feed.mass, feed.density)",
        )]),
    ),
    (
        "format-2.yaml",
        Errors(&[("format", 2, "format \"2\" is not known")]),
    ),
    (
        "gas-not-boolean.yaml",
        Errors(&[("species.HBr.gas", 6, "\"yes\" is not a choice")]),
    ),
    (
        "gas-reactant.yaml",
        Errors(&[(
            "reactions[1].equation",
            29,
            "\"HBr\" is a reactant but is marked gas",
        )]),
    ),
    (
        "heat-transfer-both.yaml",
        Errors(&[(
            "vessel.heat_transfer",
            37,
            "both vessel.heat_transfer_coefficient and vessel.heat_transfer are given",
        )]),
    ),
    (
        "heat-transfer-neither.yaml",
        Errors(&[(
            "vessel.heat_transfer_coefficient",
            31,
            "the required key \"heat_transfer_coefficient\" is missing in vessel",
        )]),
    ),
    (
        "inf-mass.yaml",
        Errors(&[("feed.mass", 15, "only finite numbers")]),
    ),
    (
        "jacket-above-vessel.yaml",
        Errors(&[(
            "vessel.jacket_height",
            34,
            "above the top of the vessel at 2.098 m (from vessel.nominal_volume",
        )]),
    ),
    (
        "list-where-value.yaml",
        Errors(&[(
            "charge.mass",
            9,
            "found a list where a single value belongs",
        )]),
    ),
    (
        "long-key.yaml",
        Errors(&[("vessel.xxxxxxxx", 33, "(1000 characters)\" in vessel")]),
    ),
    (
        "long-value.yaml",
        Errors(&[(
            "charge.density",
            11,
            "(5005 characters)\": unknown unit symbol",
        )]),
    ),
    (
        "merge-key.yaml",
        Errors(&[
            ("process.<<", 41, "merge keys (<<) are not supported"),
            ("process.temperature", 41, "is missing in process"),
        ]),
    ),
    (
        "missing-activation-energy.yaml",
        Errors(&[(
            "reactions[0].activation_energy",
            24,
            "the required key \"activation_energy\" is missing",
        )]),
    ),
    (
        "missing-vessel.yaml",
        Errors(&[("vessel", 2, "the required key \"vessel\" is missing")]),
    ),
    (
        "misspelt-key.yaml",
        Errors(&[
            ("reactions[0].activation_energy", 24, "is missing"),
            (
                "reactions[0].activation_enrgy",
                28,
                "did you mean \"activation_energy\"?",
            ),
        ]),
    ),
    (
        "nan-mass.yaml",
        Errors(&[("charge.mass", 9, "only finite numbers")]),
    ),
    (
        "negative-mass.yaml",
        Errors(&[("feed.mass", 15, "a mass must be more than zero")]),
    ),
    (
        "negative-order.yaml",
        Errors(&[("reactions[0].orders.A", 29, "an order must be zero or more")]),
    ),
    (
        "rate-constant-order.yaml",
        Errors(&[(
            "reactions[0].rate_constant",
            26,
            "\"1/s\" is a unit for overall order 1, but the reaction's overall order is 2",
        )]),
    ),
    (
        "several-errors.yaml",
        Errors(&[
            ("charge.mass", 9, "a mass must be more than zero"),
            ("reactions[0].enthalpy", 25, "is an energy per mass"),
            ("vessel.bottom", 32, "\"conical\" is not a choice"),
            ("vessel.heat_capacty", 35, "did you mean \"heat_capacity\"?"),
            ("process.duration", 42, "is missing"),
        ]),
    ),
    (
        "tab-indent.yaml",
        Errors(&[("charge", 11, "YAML indents with spaces only")]),
    ),
    (
        "temperature-below-absolute-zero.yaml",
        Errors(&[("coolant.temperature", 38, "below absolute zero")]),
    ),
    (
        "temperature-above-range.yaml",
        Errors(&[("feed.temperature", 18, "above 1000 degC")]),
    ),
    ("top-level-list.yaml", Errors(&[("", 1, "holds a list")])),
    (
        "two-documents.yaml",
        Errors(&[("", 57, "a second YAML document starts on this line")]),
    ),
    (
        "undefined-alias.yaml",
        Errors(&[("process.temperature", 41, "alias \"*tp\" names no anchor")]),
    ),
    (
        "unknown-bottom.yaml",
        Errors(&[("vessel.bottom", 32, "\"conical\" is not a choice")]),
    ),
    (
        "unknown-key-vessel.yaml",
        Errors(&[(
            "vessel.agitator_speed",
            33,
            "unknown key \"agitator_speed\"",
        )]),
    ),
    (
        "unknown-top-level-key.yaml",
        Errors(&[("operator", 5, "unknown key \"operator\"")]),
    ),
    (
        "unknown-unit.yaml",
        Errors(&[("vessel.diameter", 31, "unknown unit symbol \"ft\"")]),
    ),
    ("valid-anchors-aliases.yaml", SameAsDemo),
    (
        "wrong-dimension-enthalpy.yaml",
        Errors(&[(
            "reactions[0].enthalpy",
            25,
            "the unit \"kJ/kg\" is an energy per mass (m^2·s^-2), but this key takes an energy per amount of substance",
        )]),
    ),
    (
        "wall-conductivity-dimension.yaml",
        Errors(&[(
            "vessel.heat_transfer.wall[1].conductivity",
            38,
            "but this key takes a thermal conductivity",
        )]),
    ),
    (
        "wilson-one-speed.yaml",
        Errors(&[(
            "vessel.heat_transfer.lab.measurements",
            46,
            "two or more different speeds (found 1)",
        )]),
    ),
    (
        "yaml-bad-indentation.yaml",
        Errors(&[("vessel", 32, "YAML syntax error")]),
    ),
    (
        "yaml-inf-mass.yaml",
        Errors(&[("charge.mass", 9, "\".inf\" is YAML's infinity")]),
    ),
    (
        "yaml-nan-order.yaml",
        Errors(&[("decomposition.order", 53, "\".nan\" is YAML's not-a-number")]),
    ),
    (
        "yaml-syntax-error.yaml",
        Errors(&[(
            "charge.amounts",
            14,
            "flow mapping that starts at line 12, column 12",
        )]),
    ),
];

mod common;
use common::{DEMO, Run, root};

fn check(path: &str, extra: &[&str]) -> Run {
    let mut args = vec!["check", path];
    args.extend_from_slice(extra);
    common::run(&args)
}

/// One placed error line of stderr: `file:LINE:COL: [path: ]message; accepted: ...`.
struct Placed {
    line: usize,
    rest: String,
}

/// The error lines of `stderr` that are placed in `file`.
fn placed_errors(stderr: &str, file: &str) -> Vec<Placed> {
    stderr
        .lines()
        .filter_map(|line| {
            let line = line.strip_prefix("exoscreen: ").unwrap_or(line);
            let rest = line.strip_prefix(file)?.strip_prefix(':')?;
            let (line_no, rest) = rest.split_once(':')?;
            let (column, rest) = rest.split_once(':')?;
            let line_no: usize = line_no.parse().ok()?;
            let column: usize = column.parse().ok()?;
            assert!(
                line_no >= 1 && column >= 1,
                "position {line_no}:{column} in {line}"
            );
            Some(Placed {
                line: line_no,
                rest: rest.trim_start().to_string(),
            })
        })
        .collect()
}

fn corpus_files() -> BTreeSet<String> {
    std::fs::read_dir(root().join("tests/bad"))
        .expect("tests/bad/ exists")
        .map(|entry| entry.expect("readable entry").file_name())
        .map(|name| name.to_string_lossy().into_owned())
        .filter(|name| name.ends_with(".yaml"))
        .collect()
}

#[test]
fn every_corpus_file_has_an_entry_and_a_comment() {
    let listed: BTreeSet<String> = CORPUS.iter().map(|(f, _)| f.to_string()).collect();
    let present = corpus_files();
    assert_eq!(
        listed, present,
        "tests/bad/ and the CORPUS table list different files"
    );
    for name in &present {
        let text = std::fs::read_to_string(root().join("tests/bad").join(name)).unwrap();
        let first = text.lines().next().unwrap_or("");
        assert!(
            first.starts_with("# ") && first.len() > 10,
            "{name}: the first line is a # comment saying what is wrong"
        );
    }
}

fn assert_rejected(name: &str, expected: &[(&str, usize, &str)]) -> Result<(), String> {
    let file = format!("tests/bad/{name}");
    let run = check(&file, &["--format", "json"]);
    let fail = |why: String| Err(format!("{name}: {why}\n--- stderr:\n{}", run.stderr));
    if run.code != Some(2) {
        return fail(format!("exit status {:?}, expected 2", run.code));
    }
    if !run.stdout.is_empty() {
        return fail(format!("stdout is not empty: {}", run.stdout));
    }
    if run.stderr.contains("panicked") {
        return fail("the program panicked".to_string());
    }
    let placed = placed_errors(&run.stderr, &file);
    if placed.is_empty() {
        return fail(format!("no error line starts with \"{file}:LINE:COL:\""));
    }
    for (path, line, message) in expected {
        let found = placed.iter().find(|p| {
            let names_path = path.is_empty() || p.rest.starts_with(path);
            names_path && p.rest.contains(message)
        });
        match found {
            None => {
                return fail(format!(
                    "no error names the key path \"{path}\" with \"{message}\""
                ));
            }
            Some(p) if p.line != *line => {
                return fail(format!(
                    "the error at \"{path}\" is placed on line {}, expected {line}",
                    p.line
                ));
            }
            Some(p) if !p.rest.contains("; accepted: ") => {
                return fail(format!(
                    "the error at \"{path}\" does not say what would be accepted: {}",
                    p.rest
                ));
            }
            Some(_) => {}
        }
    }
    if placed.len() != expected.len() {
        return fail(format!(
            "{} errors reported, {} expected",
            placed.len(),
            expected.len()
        ));
    }
    let count = match expected.len() {
        1 => "1 error in the case".to_string(),
        n => format!("{n} errors in the case"),
    };
    if !run.stderr.contains(&count) {
        return fail(format!("stderr does not say \"{count}\""));
    }
    if run.stderr.len() > 4000 {
        return fail(format!("stderr is {} bytes long", run.stderr.len()));
    }
    Ok(())
}

#[test]
fn every_broken_case_is_rejected_with_placed_messages() {
    let failures: Vec<String> = std::thread::scope(|scope| {
        let runs: Vec<_> = CORPUS
            .iter()
            .filter_map(|(name, expect)| match expect {
                Errors(expected) => Some(scope.spawn(move || assert_rejected(name, expected))),
                SameAsDemo => None,
            })
            .collect();
        runs.into_iter()
            .filter_map(|run| run.join().expect("no thread panics").err())
            .collect()
    });
    assert!(failures.is_empty(), "\n{}", failures.join("\n\n"));
}

/// The JSON report without the fields that name the file.
fn figures(run: &Run, what: &str) -> serde_json::Value {
    assert_eq!(run.code, Some(0), "{what}: {}", run.stderr);
    let mut json: serde_json::Value =
        serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("{what}: {e}"));
    json.as_object_mut()
        .expect("a JSON object")
        .remove("case_file");
    json
}

#[test]
fn anchors_and_aliases_compute_like_the_demo_case() {
    let valid: Vec<&str> = CORPUS
        .iter()
        .filter(|(_, e)| matches!(e, SameAsDemo))
        .map(|(name, _)| *name)
        .collect();
    assert!(!valid.is_empty());
    let demo = figures(&check(DEMO, &["--format", "json"]), DEMO);
    for name in valid {
        let run = check(&format!("tests/bad/{name}"), &["--format", "json"]);
        assert!(!run.stderr.contains("panicked"), "{name}: {}", run.stderr);
        assert_eq!(figures(&run, name), demo, "{name}");
    }
}

#[test]
fn a_missing_file_is_named_with_exit_2() {
    let run = check("tests/bad/no-such-case.yaml", &[]);
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(run.stdout.is_empty());
    assert!(
        run.stderr
            .contains("tests/bad/no-such-case.yaml: cannot read the case file"),
        "{}",
        run.stderr
    );
    assert!(!run.stderr.contains("panicked"));
}

#[test]
fn a_directory_is_not_a_case_file() {
    let run = check("tests/bad", &[]);
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(run.stdout.is_empty());
    assert!(
        run.stderr.contains("tests/bad: cannot read the case file"),
        "{}",
        run.stderr
    );
}

fn temp_case(bytes: &[u8]) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let path = dir.path().join("case.yaml");
    std::fs::write(&path, bytes).expect("writable");
    (dir, path)
}

#[test]
fn a_file_that_is_not_utf8_is_rejected() {
    let (_dir, path) = temp_case(b"format: 1\ntitle: \xff\xfe\n");
    let file = path.display().to_string();
    let run = check(&file, &[]);
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(run.stdout.is_empty());
    assert!(
        run.stderr
            .contains(&format!("{file}:1:1: the file is not UTF-8 text")),
        "{}",
        run.stderr
    );
}

#[test]
fn an_oversized_file_is_rejected_before_it_is_read() {
    let mut text = b"format: 1\n".to_vec();
    text.extend(std::iter::repeat_n(b'#', 5 * 1024 * 1024));
    let (_dir, path) = temp_case(&text);
    let run = check(&path.display().to_string(), &[]);
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(
        run.stderr.contains("a case file is at most"),
        "{}",
        run.stderr
    );
}

#[test]
fn a_byte_order_mark_is_not_part_of_the_document() {
    let demo = std::fs::read_to_string(root().join(DEMO)).unwrap();
    let line = demo
        .lines()
        .position(|l| l == "format: 1")
        .expect("the demo case says format: 1")
        + 1;
    let text = format!("\u{feff}{}", demo.replacen("format: 1", "format: 2", 1));
    let (_dir, path) = temp_case(text.as_bytes());
    let file = path.display().to_string();
    let run = check(&file, &[]);
    assert_eq!(run.code, Some(2), "{}", run.stderr);
    assert!(
        run.stderr
            .contains(&format!("{file}:{line}:9: format: format \"2\"")),
        "{}",
        run.stderr
    );
    assert!(run.stderr.contains("1 error in the case"), "{}", run.stderr);
}
