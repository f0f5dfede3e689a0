//! The HTML report in a real browser: headless Chromium loads report.html of every demo
//! case, takes an A4-sized screenshot and dumps the DOM; the page must load, the screenshot
//! must not be blank, and every plot and section heading must be in the DOM. Without
//! Chromium on PATH the test says so loudly and passes, unless EXOSCREEN_REQUIRE_BROWSER=1
//! (as .ci/run sets it after installing Debian's chromium).

use std::path::{Path, PathBuf};
use std::process::Command;

mod common;
use common::{exoscreen, root};

fn browser() -> Option<PathBuf> {
    let path = std::env::var_os("PATH")?;
    ["chromium", "chromium-browser"].iter().find_map(|name| {
        std::env::split_paths(&path)
            .map(|dir| dir.join(name))
            .find(|candidate| candidate.is_file())
    })
}

fn demo_cases() -> Vec<String> {
    let mut cases: Vec<String> = std::fs::read_dir(root().join("cases"))
        .expect("the demo cases")
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".yaml"))
        .collect();
    cases.sort();
    cases
}

fn chromium(browser: &Path, profile: &Path, args: &[String]) -> std::process::Output {
    Command::new(browser)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--hide-scrollbars",
            "--no-first-run",
            "--window-size=1240,1754",
        ])
        .arg(format!("--user-data-dir={}", profile.display()))
        .args(args)
        .output()
        .expect("chromium runs")
}

/// The text of every <h2> in the HTML as written (the DOM must show the same).
fn headings(html: &str) -> Vec<String> {
    html.split("<h2>")
        .skip(1)
        .filter_map(|s| s.split_once("</h2>").map(|(h, _)| h.to_string()))
        .collect()
}

#[test]
fn every_demo_report_renders_in_chromium_with_all_its_figures() {
    let Some(browser) = browser() else {
        let required = std::env::var("EXOSCREEN_REQUIRE_BROWSER").is_ok_and(|v| v == "1");
        eprintln!(
            "\n*** NOTE: chromium is not on PATH: the HTML report was NOT checked in a browser. ***\n\
             *** Install it (apt-get install chromium) or run .ci/run, which does.            ***\n"
        );
        assert!(
            !required,
            "EXOSCREEN_REQUIRE_BROWSER=1 but chromium is not on PATH"
        );
        return;
    };
    let dir = tempfile::tempdir().expect("a temporary directory");
    for case in demo_cases() {
        let out = dir.path().join(case.trim_end_matches(".yaml"));
        let written = exoscreen()
            .args(["report", &format!("cases/{case}"), "--no-limit", "--out"])
            .arg(&out)
            .output()
            .expect("exoscreen runs");
        assert_eq!(
            written.status.code(),
            Some(0),
            "{case}: {}",
            String::from_utf8_lossy(&written.stderr)
        );
        let page = out.join("report.html");
        let html = std::fs::read_to_string(&page).expect("report.html");
        let url = format!("file://{}", page.display());
        let profile = dir.path().join(format!("profile-{case}"));
        let png = dir.path().join(format!("{case}.png"));
        let shot = chromium(
            &browser,
            &profile,
            &[format!("--screenshot={}", png.display()), url.clone()],
        );
        assert!(
            shot.status.success(),
            "{case}: chromium --screenshot failed: {}",
            String::from_utf8_lossy(&shot.stderr)
        );
        let size = std::fs::metadata(&png).map_or(0, |m| m.len());
        // A blank 1240 x 1754 page compresses to a few KB; text, tables and a coloured
        // verdict make it far larger.
        assert!(
            size > 30_000,
            "{case}: the screenshot is {size} bytes: blank?"
        );
        let dump = chromium(
            &browser,
            &profile,
            &[
                "--enable-logging=stderr".to_string(),
                "--dump-dom".to_string(),
                url,
            ],
        );
        assert!(dump.status.success(), "{case}: chromium --dump-dom failed");
        // The page's console: a script error or a resource that failed to load shows here.
        let log = String::from_utf8_lossy(&dump.stderr);
        for sign in ["Uncaught", "Failed to load resource", "net::ERR_"] {
            assert!(
                !log.contains(sign),
                "{case}: the page logged {sign}:\n{log}"
            );
        }
        let dom = String::from_utf8_lossy(&dump.stdout);
        assert!(dom.contains("</main>"), "{case}: the page loaded whole");
        let markdown = std::fs::read_to_string(out.join("report.md")).expect("report.md");
        let plots = markdown.lines().filter(|l| l.starts_with("![")).count();
        assert_eq!(
            dom.matches("<svg").count(),
            plots,
            "{case}: every plot's <svg> in the DOM"
        );
        for plot in markdown.lines().filter_map(|l| l.split_once("](")) {
            let file = plot.1.trim_end_matches(')');
            let id = format!("id=\"plot-{}\"", file.trim_end_matches(".svg"));
            assert!(dom.contains(&id), "{case}: figure {file} in the DOM");
        }
        for heading in headings(&html) {
            assert!(
                dom.contains(&format!("<h2>{heading}</h2>")),
                "{case}: heading {heading} in the DOM"
            );
        }
    }
}
