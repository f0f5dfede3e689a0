//! `exoscreen report CASE --out DIR`: the files it writes, the figures of report.md against
//! `check --format json`, units on every figure, refusal to overwrite, --force, and no partial
//! report after a failed or interrupted write.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use std::time::Duration;

mod common;
use common::{DEMO, exoscreen, root, run};

/// The files every report has (the plots are counted from report.md's image links).
const FIXED_FILES: [&str; 3] = ["report.html", "report.md", "timeseries.csv"];

/// One report of the demo case (without the dosing-limit search, which the limit tests cover),
/// shared by the tests that only read it; written with a fixed SOURCE_DATE_EPOCH.
fn demo_report() -> &'static Path {
    static REPORT: OnceLock<(tempfile::TempDir, PathBuf)> = OnceLock::new();
    let (_, out) = REPORT.get_or_init(|| {
        let dir = tempfile::tempdir().expect("a temporary directory");
        let out = dir.path().join("demo-report");
        let output = exoscreen()
            .env("SOURCE_DATE_EPOCH", "1700000000")
            .args(["report", DEMO, "--no-limit", "--out"])
            .arg(&out)
            .output()
            .expect("exoscreen runs");
        assert_eq!(
            output.status.code(),
            Some(0),
            "{}",
            String::from_utf8_lossy(&output.stderr)
        );
        (dir, out)
    });
    out
}

fn read(path: &Path) -> String {
    std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))
}

/// The SVG files report.md links to.
fn linked_plots(markdown: &str) -> Vec<String> {
    markdown
        .lines()
        .filter_map(|l| l.strip_prefix("!["))
        .filter_map(|l| l.split_once("](").map(|(_, rest)| rest))
        .filter_map(|rest| rest.split_once(')').map(|(file, _)| file.to_string()))
        .collect()
}

/// Whether `dir` holds a complete report: the fixed files, each non-empty, and every plot
/// report.md links to.
fn is_complete(dir: &Path) -> Result<(), String> {
    for name in FIXED_FILES {
        let len = std::fs::metadata(dir.join(name))
            .map_err(|e| format!("{name}: {e}"))?
            .len();
        if len == 0 {
            return Err(format!("{name} is empty"));
        }
    }
    for plot in linked_plots(&read(&dir.join("report.md"))) {
        if !dir.join(&plot).is_file() {
            return Err(format!("{plot} is linked but missing"));
        }
    }
    Ok(())
}

/// Names in `dir` other than `keep`: temporary directories left behind show up here.
fn leftovers(dir: &Path, keep: &[&str]) -> Vec<String> {
    std::fs::read_dir(dir)
        .expect("the directory")
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| !keep.contains(&n.as_str()))
        .collect()
}

#[test]
fn the_report_has_its_files_and_the_html_stands_alone() {
    let out = demo_report();
    is_complete(out).expect("a complete report");
    let html = read(&out.join("report.html"));
    let markdown = read(&out.join("report.md"));
    assert!(!html.contains("<script"), "no scripts");
    for attribute in ["src=", "href="] {
        for quote in ['"', '\''] {
            for scheme in ["http:", "https:", "//"] {
                let outside = format!("{attribute}{quote}{scheme}");
                assert!(!html.contains(&outside), "no outside resource: {outside}");
            }
        }
    }
    assert!(
        !html.contains("@import") && !html.contains("url("),
        "no outside CSS"
    );
    assert!(
        html.contains("@page") && html.contains("size: A4"),
        "A4 print rules"
    );
    for plot in linked_plots(&markdown) {
        let svg = read(&out.join(&plot));
        assert!(svg.contains("<svg"), "{plot} is an SVG");
    }
    assert_eq!(
        html.matches("<svg").count(),
        linked_plots(&markdown).len(),
        "every plot inline in the HTML"
    );
    for caution in exoscreen::report::cautions::CAUTIONS {
        let escaped = caution.replace('\'', "&#39;").replace('"', "&quot;");
        assert!(html.contains(&escaped), "HTML caution: {caution}");
        assert!(markdown.contains(caution), "Markdown caution: {caution}");
    }
}

#[test]
fn html_and_markdown_have_the_same_sections_in_the_same_order() {
    let out = demo_report();
    let html = read(&out.join("report.html"));
    let markdown = read(&out.join("report.md"));
    let md_headings: Vec<String> = markdown
        .lines()
        .filter_map(|l| l.strip_prefix("## "))
        .map(String::from)
        .collect();
    let html_headings: Vec<String> = html
        .split("<h2>")
        .skip(1)
        .filter_map(|s| s.split_once("</h2>").map(|(h, _)| h.replace("&#39;", "'")))
        .collect();
    assert_eq!(md_headings, html_headings);
    assert_eq!(md_headings.first().map(String::as_str), Some("Verdict"));
    for needed in [
        "Inputs",
        "Figures",
        "Plots",
        "Dosing limit",
        "Cautions",
        "Provenance",
    ] {
        assert!(md_headings.iter().any(|h| h == needed), "section {needed}");
    }
    assert!(md_headings.iter().any(|h| h.starts_with("Warnings")));
    assert!(md_headings.iter().any(|h| h.starts_with("Assumptions")));
}

/// The figure table of report.md: figure name -> (value cell, unit cell).
fn figure_table(markdown: &str) -> Vec<(String, String, String)> {
    let start = markdown
        .find("| figure | value | unit | formula |")
        .expect("the figure table");
    markdown[start..]
        .lines()
        .skip(2)
        .take_while(|l| l.starts_with('|'))
        .map(|l| {
            let cells: Vec<&str> = l.trim_matches('|').split(" | ").map(str::trim).collect();
            (
                cells[0].to_string(),
                cells[1].to_string(),
                cells[2].to_string(),
            )
        })
        .collect()
}

fn printed(table: &[(String, String, String)], figure: &str) -> (f64, usize, String) {
    let (_, value, unit) = table
        .iter()
        .find(|(name, _, _)| name == figure)
        .unwrap_or_else(|| panic!("the figure {figure} in report.md"));
    let decimals = value.split_once('.').map_or(0, |(_, d)| d.len());
    let number = value
        .parse::<f64>()
        .unwrap_or_else(|_| panic!("{figure}: {value:?} is a number"));
    (number, decimals, unit.clone())
}

/// The printed value equals the JSON one to within half its last printed digit.
fn assert_same(table: &[(String, String, String)], figure: &str, json: f64, unit: &str) {
    let (number, decimals, printed_unit) = printed(table, figure);
    let half_digit = 0.5 * 10f64.powi(-(decimals as i32)) + 1e-9;
    assert!(
        (number - json).abs() <= half_digit,
        "{figure}: report.md {number} against check --format json {json}"
    );
    assert_eq!(printed_unit, unit, "{figure}'s unit");
}

#[test]
fn the_figures_of_report_md_equal_those_of_check_json() {
    let check = run(&["check", DEMO, "--format", "json"]);
    assert_eq!(check.code, Some(0), "{}", check.stderr);
    let json: Value = serde_json::from_str(&check.stdout).expect("JSON");
    let number = |key: &str| json[key].as_f64().unwrap_or_else(|| panic!("{key}"));
    let table = figure_table(&read(&demo_report().join("report.md")));
    assert_same(
        &table,
        "adiabatic temperature rise ΔT_ad",
        number("adiabatic_temperature_rise_K"),
        "K",
    );
    assert_same(
        &table,
        "max thermal accumulation X_max",
        100.0 * number("max_thermal_accumulation"),
        "%",
    );
    assert_same(&table, "MTSR", number("mtsr_C"), "°C");
    assert_same(&table, "simulated MTSR", number("mtsr_simulated_C"), "°C");
    assert_same(&table, "MTT", number("mtt_C"), "°C");
    assert_same(&table, "TD24", number("td24_C"), "°C");
    assert_same(&table, "TMRad at MTSR", number("tmr_ad_at_mtsr_h"), "h");
    assert_same(
        &table,
        "criticality class",
        number("criticality_class"),
        "(-)",
    );
    assert_same(
        &table,
        "final conversion",
        100.0 * number("final_conversion"),
        "%",
    );
    let normal = |key: &str| {
        json["normal"][key]
            .as_f64()
            .unwrap_or_else(|| panic!("{key}"))
    };
    assert_same(
        &table,
        "max temperature, normal operation",
        normal("max_temperature_C"),
        "°C",
    );
    assert_same(
        &table,
        "peak reaction power",
        normal("peak_reaction_power_kW"),
        "kW",
    );
    assert_same(
        &table,
        "cooling at the peak",
        normal("cooling_capacity_at_peak_kW"),
        "kW",
    );
}

#[test]
fn every_figure_has_a_unit_and_every_value_is_a_number_or_a_dash() {
    let table = figure_table(&read(&demo_report().join("report.md")));
    assert!(table.len() >= 12, "the figure table has its rows");
    let known = ["K", "%", "°C", "h", "kW", "(-)"];
    for (figure, value, unit) in &table {
        assert!(known.contains(&unit.as_str()), "{figure}: unit {unit:?}");
        assert!(
            value == "—" || value.parse::<f64>().is_ok(),
            "{figure}: value {value:?}"
        );
    }
}

#[test]
fn provenance_has_the_version_the_case_sha256_and_the_fixed_date() {
    use sha2::Digest;
    let markdown = read(&demo_report().join("report.md"));
    // The digest from the sha2 crate directly (a reference implementation of FIPS 180-4).
    let bytes = std::fs::read(root().join(DEMO)).expect("the demo case");
    let digest: String = sha2::Sha256::digest(&bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect();
    assert!(markdown.contains(&format!("**case file SHA-256**: {digest}")));
    assert!(markdown.contains(&format!("exoscreen {}", env!("CARGO_PKG_VERSION"))));
    // SOURCE_DATE_EPOCH = 1 700 000 000 s: 2023-11-14 22:13:20 UTC by the POSIX day count.
    assert!(markdown.contains("2023-11-14 22:13:20 UTC"));
}

#[test]
fn the_timeseries_has_its_header_and_rows_of_numbers() {
    let csv = read(&demo_report().join("timeseries.csv"));
    let mut lines = csv.lines();
    let header = lines.next().expect("a header");
    assert!(header.starts_with("scenario,time [h],T [degC]"), "{header}");
    let columns = header.split(',').count();
    for line in lines {
        let cells: Vec<&str> = line.split(',').collect();
        assert_eq!(cells.len(), columns, "{line}");
        assert!(["normal", "worst failure"].contains(&cells[0]), "{line}");
        for c in &cells[1..] {
            assert!(c.parse::<f64>().is_ok_and(f64::is_finite), "{line}");
        }
    }
}

fn report_into(out: &Path, extra: &[&str]) -> common::Run {
    let output = exoscreen()
        .args(["report", DEMO, "--no-limit", "--out"])
        .arg(out)
        .args(extra)
        .output()
        .expect("exoscreen runs");
    common::Run {
        code: output.status.code(),
        stdout: String::from_utf8_lossy(&output.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&output.stderr).into_owned(),
    }
}

#[test]
fn an_existing_directory_is_refused_without_force_and_replaced_with_it() {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let out = dir.path().join("report");
    std::fs::create_dir(&out).expect("an old report");
    std::fs::write(out.join("report.md"), "old report").expect("its file");
    let refused = report_into(&out, &[]);
    assert_eq!(refused.code, Some(2), "{}", refused.stderr);
    assert!(refused.stderr.contains("--force"), "{}", refused.stderr);
    assert_eq!(
        read(&out.join("report.md")),
        "old report",
        "nothing changed"
    );
    let replaced = report_into(&out, &["--force"]);
    assert_eq!(replaced.code, Some(0), "{}", replaced.stderr);
    is_complete(&out).expect("the new report");
    assert!(leftovers(dir.path(), &["report"]).is_empty());
}

#[test]
fn force_does_not_replace_a_directory_that_is_not_a_report() {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let out = dir.path().join("documents");
    std::fs::create_dir_all(out.join("letters")).expect("someone's files");
    let refused = report_into(&out, &["--force"]);
    assert_eq!(refused.code, Some(2), "{}", refused.stderr);
    assert!(out.join("letters").is_dir());
}

#[test]
fn an_unwritable_parent_leaves_no_partial_report_and_no_temporary_directory() {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let parent = dir.path().join("parent");
    std::fs::create_dir(&parent).expect("the parent");
    let out = parent.join("report");
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt;
        let mode = |m| std::fs::Permissions::from_mode(m);
        std::fs::set_permissions(&parent, mode(0o555)).expect("read-only");
        // Root ignores permissions: then the check below uses a parent that is a file.
        let writable = std::fs::write(parent.join("probe"), "x").is_ok();
        let _ = std::fs::remove_file(parent.join("probe"));
        if !writable {
            let result = report_into(&out, &[]);
            std::fs::set_permissions(&parent, mode(0o755)).expect("writable again");
            assert_eq!(result.code, Some(1), "{}", result.stderr);
            assert!(
                result.stderr.contains("cannot write the report"),
                "{}",
                result.stderr
            );
            assert!(
                leftovers(&parent, &[]).is_empty(),
                "nothing left in the parent"
            );
        } else {
            std::fs::set_permissions(&parent, mode(0o755)).expect("writable again");
        }
    }
    // A parent that is a regular file: no directory can be made under it, by anyone.
    let blocker = dir.path().join("blocker");
    std::fs::write(&blocker, "not a directory").expect("a file");
    let result = report_into(&blocker.join("report"), &[]);
    assert_eq!(result.code, Some(1), "{}", result.stderr);
    assert_eq!(read(&blocker), "not a directory");
    assert!(leftovers(dir.path(), &["parent", "blocker"]).is_empty());
}

#[test]
fn bad_input_exits_2_and_writes_nothing() {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let case = dir.path().join("bad.yaml");
    let demo = read(&root().join(DEMO));
    std::fs::write(&case, demo.replace("mass: 2400 kg", "mass: 2400 furlongs")).expect("a case");
    let out = dir.path().join("report");
    let output = exoscreen()
        .args(["report"])
        .arg(&case)
        .arg("--out")
        .arg(&out)
        .output()
        .expect("exoscreen runs");
    assert_eq!(output.status.code(), Some(2));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("bad.yaml"), "{stderr}");
    assert!(!out.exists());
    assert!(leftovers(dir.path(), &["bad.yaml"]).is_empty());
}

/// Killed at any moment, the run leaves no report or a complete one: the files go to a
/// temporary directory that is renamed into place only once all are on disk.
#[cfg(unix)]
#[test]
fn a_killed_run_leaves_no_report_or_a_complete_one() {
    let binary = assert_cmd::cargo::cargo_bin("exoscreen");
    let dir = tempfile::tempdir().expect("a temporary directory");
    let delays_ms = [5u64, 30, 120, 400, 1200];
    for (i, delay) in delays_ms.iter().enumerate() {
        let out = dir.path().join(format!("report-{i}"));
        let mut child = std::process::Command::new(&binary)
            .current_dir(root())
            .args(["report", DEMO, "--no-limit", "--out"])
            .arg(&out)
            .stderr(std::process::Stdio::null())
            .spawn()
            .expect("exoscreen starts");
        std::thread::sleep(Duration::from_millis(*delay));
        let _ = child.kill();
        let _ = child.wait();
        if out.exists() {
            is_complete(&out).unwrap_or_else(|e| panic!("killed after {delay} ms: {e}"));
        }
        // Only temporary directories (named .report-N.tmp-*) may be left by a kill.
        for name in leftovers(dir.path(), &[]) {
            assert!(
                name.starts_with("report-") || name.contains(".tmp-"),
                "{name} left after a kill"
            );
        }
    }
}

/// The dosing-limit section says what `exoscreen limit --format json` says.
#[test]
fn the_dosing_limit_section_equals_limit_json() {
    const CASE: &str = "cases/bromination-protected.yaml";
    let limit = run(&["limit", CASE, "--format", "json"]);
    assert_eq!(limit.code, Some(0), "{}", limit.stderr);
    let json: Value = serde_json::from_str(&limit.stdout).expect("JSON");
    let dir = tempfile::tempdir().expect("a temporary directory");
    let out = dir.path().join("report");
    let output = exoscreen()
        .args(["report", CASE, "--out"])
        .arg(&out)
        .output()
        .expect("exoscreen runs");
    assert_eq!(output.status.code(), Some(0));
    let markdown = read(&out.join("report.md"));
    let section = markdown
        .split("## Dosing limit")
        .nth(1)
        .expect("the dosing-limit section");
    let duration = json["min_feed_duration_h"].as_f64().expect("a limit");
    let rate = json["max_feed_rate_kg_h"].as_f64().expect("a rate");
    let binding = json["binding_criterion"]
        .as_str()
        .expect("a binding criterion");
    assert!(section.contains(&format!("**shortest feed duration**: {duration:.2} h")));
    assert!(section.contains(&format!("**fastest feed rate**: {rate:.1} kg/h")));
    assert!(section.contains(&format!("**binding criterion**: {binding} (")));
    let verdict = markdown.split("## Inputs").next().expect("the verdict");
    assert!(
        verdict.contains(&format!("Feed over no less than {duration:.2} h")),
        "the verdict's advice carries the limit"
    );
}

/// A case with `scale_up` gets the scale-up section in both documents, with the rows that
/// `exoscreen scale --format json` computes; a case without it (the demo) has none.
#[test]
fn a_case_that_asks_for_scales_gets_the_scale_section_with_the_ladder_of_scale_json() {
    const FILM: &str = "cases/bromination-film.yaml";
    let dir = tempfile::tempdir().expect("a temporary directory");
    let out = dir.path().join("film-report");
    let output = exoscreen()
        .args(["report", FILM, "--no-limit", "--out"])
        .arg(&out)
        .output()
        .expect("exoscreen runs");
    assert_eq!(output.status.code(), Some(0));
    let markdown = read(&out.join("report.md"));
    let html = read(&out.join("report.html"));
    assert!(markdown.contains("## Scale-up"), "no scale section");
    assert!(
        html.contains("id=\"scale-up\""),
        "no scale section in the HTML"
    );
    let ladder = common::run(&["scale", FILM, "--format", "json"]);
    assert_eq!(ladder.code, Some(0), "{}", ladder.stderr);
    let json: serde_json::Value = serde_json::from_str(&ladder.stdout).expect("JSON");
    let scales = json["scales"].as_array().expect("scales");
    let rows: Vec<Vec<String>> = markdown
        .lines()
        .skip_while(|l| !l.starts_with("## Scale-up"))
        .filter(|l| l.starts_with("| ") && !l.starts_with("| V ") && !l.starts_with("| ---"))
        .map(|l| {
            l.trim_matches('|')
                .split('|')
                .map(|c| c.trim().to_string())
                .collect()
        })
        .take(scales.len())
        .collect();
    assert_eq!(rows.len(), scales.len(), "one row per scale");
    for (row, scale) in rows.iter().zip(scales) {
        let volume: f64 = row[0].parse().expect("a volume");
        let mtsr: f64 = row[9].parse().expect("an MTSR");
        let expected_volume = scale["volume_m3"].as_f64().expect("volume");
        assert!((volume - expected_volume).abs() <= 5e-4 * expected_volume.max(1.0));
        let expected_mtsr = scale["mtsr_C"].as_f64().expect("MTSR");
        assert!(
            (mtsr - expected_mtsr).abs() <= 0.05,
            "{mtsr} vs {expected_mtsr}"
        );
    }
    assert!(!read(&demo_report().join("report.md")).contains("## Scale-up"));
}
