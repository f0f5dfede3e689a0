//! Tests of the plots: well-formed SVG with its labels on every demo case, and no panic or
//! NaN on data a chart cannot draw.

use super::chart::{BLACK_SOLID, Chart, Line, MARK_PENS, Mark, Marker, padded, spread};
use super::*;
use crate::report::series::tests::demo_cases;

/// A small well-formedness check: starts with <svg, ends with </svg>, every element closed
/// in order (self-closing ones count as closed). Returns the error, if any.
pub(crate) fn svg_problem(svg: &str) -> Option<String> {
    let text = svg.trim();
    if !text.starts_with("<svg") || !text.ends_with("</svg>") {
        return Some("does not start with <svg and end with </svg>".to_string());
    }
    let mut open: Vec<&str> = Vec::new();
    let mut rest = text;
    while let Some(start) = rest.find('<') {
        let Some(len) = rest[start..].find('>') else {
            return Some("a tag is not closed with >".to_string());
        };
        let tag = &rest[start + 1..start + len];
        rest = &rest[start + len + 1..];
        if tag.starts_with('?') || tag.starts_with('!') {
            continue;
        }
        let name = |t: &'_ str| -> String {
            t.trim_start_matches('/')
                .split(|c: char| c.is_whitespace() || c == '/')
                .next()
                .unwrap_or("")
                .to_string()
        };
        if tag.starts_with('/') {
            let closing = name(tag);
            match open.pop() {
                Some(o) if name(o) == closing => {}
                other => return Some(format!("</{closing}> closes {other:?}")),
            }
        } else if !tag.ends_with('/') {
            open.push(tag);
        }
    }
    (!open.is_empty()).then(|| format!("unclosed elements: {}", open.len()))
}

fn assert_good(svg: &str, what: &str, labels: &[&str]) {
    assert_eq!(svg_problem(svg), None, "{what}");
    assert!(
        !svg.contains("NaN") && !svg.contains("inf"),
        "{what}: NaN or inf"
    );
    assert!(svg.contains("<text"), "{what}: text is drawn as SVG text");
    assert!(svg.contains("<title>"), "{what}: accessible title");
    for label in labels {
        assert!(svg.contains(label), "{what}: missing {label:?}");
    }
}

/// Writes the plots to target/plots/CASE/ for looking at them (no test depends on it).
fn keep_for_inspection(case: &str, plot: &Plot) {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("target/plots")
        .join(case.trim_end_matches(".yaml"));
    if std::fs::create_dir_all(&dir).is_ok() {
        let _ = std::fs::write(dir.join(plot.file_name), &plot.svg);
    }
}

#[test]
fn every_plot_of_every_demo_case_is_well_formed_with_its_labels() {
    for (name, a, series) in demo_cases() {
        let plots = all_plots(a, series);
        let has_decomposition = a.plant.decomposition.is_some();
        assert_eq!(plots.len(), if has_decomposition { 6 } else { 5 }, "{name}");
        for plot in &plots {
            keep_for_inspection(name, plot);
            assert!(!plot.caption.is_empty() && !plot.title.is_empty());
            let what = format!("{name} {}", plot.file_name);
            let mut labels = vec![escape(&plot.title)];
            labels.extend(
                match plot.file_name {
                    "temperature.svg" => {
                        vec!["Time (h)", "Temperature (degC)", "Tp ", "MTSR ", "MTT "]
                    }
                    "accumulation.svg" => vec!["Time (h)", "Qacc/Qtotal (-)", "max X ="],
                    "envelope.svg" if a.envelope.is_empty() => vec!["No data"],
                    "envelope.svg" => vec!["Failure time (h)", "Highest temperature (degC)"],
                    "time-to-max-rate.svg" if a.envelope.is_empty() => vec!["No data"],
                    "time-to-max-rate.svg" => vec!["Failure time (h)", "Time to maximum rate (h"],
                    "tmr.svg" => vec!["Temperature (degC)", "TMRad (h", "24 h", "MTSR ", "TD24 "],
                    "ladder.svg" => vec!["Temperature (degC)", "Tp ", "MTSR ", "MTT "],
                    other => panic!("unexpected plot {other}"),
                }
                .into_iter()
                .map(str::to_string),
            );
            let shows_td24 = match plot.file_name {
                "temperature.svg" | "tmr.svg" | "ladder.svg" => true,
                "envelope.svg" => !a.envelope.is_empty(),
                _ => false,
            };
            if has_decomposition && shows_td24 {
                labels.push("TD24 ".to_string());
            }
            let labels: Vec<&str> = labels.iter().map(String::as_str).collect();
            assert_good(&plot.svg, &what, &labels);
        }
        let ladder = plots.iter().find(|p| p.file_name == "ladder.svg");
        let class = a
            .figures
            .class
            .map_or("No class".to_string(), |c| format!("Class {c}"));
        assert!(ladder.is_some_and(|p| p.svg.contains(&class)), "{name}");
    }
}

#[test]
fn the_tmr_plot_is_absent_without_decomposition_data() {
    for (name, a, _) in demo_cases() {
        assert_eq!(
            tmr::tmr_plot(a).is_some(),
            a.plant.decomposition.is_some(),
            "{name}"
        );
    }
}

/// The SVG is drawn with plotters' own text (no system fonts): the build has no font crate.
#[test]
fn plots_need_no_font_library() {
    let lock = include_str!("../../../Cargo.lock");
    for font_crate in [
        "name = \"font-kit\"",
        "name = \"freetype",
        "name = \"ab_glyph\"",
    ] {
        assert!(!lock.contains(font_crate), "{font_crate} is in Cargo.lock");
    }
}

fn chart_with(points: Vec<(f64, f64)>) -> Chart {
    let mut chart = Chart::new("Edge case", "x (h)", "y (degC)");
    chart.lines = vec![Line {
        label: "series".to_string(),
        points,
        pen: BLACK_SOLID,
    }];
    chart
}

#[test]
fn data_a_chart_cannot_draw_gives_a_no_data_svg_without_panicking() {
    let cases: Vec<(&str, Vec<(f64, f64)>)> = vec![
        ("empty", vec![]),
        ("all NaN", vec![(f64::NAN, 1.0), (1.0, f64::NAN)]),
        (
            "infinite",
            vec![(0.0, f64::INFINITY), (1.0, f64::NEG_INFINITY)],
        ),
        ("huge", vec![(0.0, 1e300), (1.0, -1e300)]),
    ];
    for (what, points) in cases {
        let svg = chart_with(points).render();
        assert_good(&svg, what, &["No data", "Edge case"]);
    }
}

#[test]
fn awkward_but_drawable_data_is_drawn() {
    let cases: Vec<(&str, Vec<(f64, f64)>)> = vec![
        ("single point", vec![(1.0, 20.0)]),
        ("flat", vec![(0.0, 20.0), (1.0, 20.0), (2.0, 20.0)]),
        ("vertical", vec![(1.0, 20.0), (1.0, 30.0)]),
        ("some NaN", vec![(0.0, 20.0), (f64::NAN, 5.0), (2.0, 25.0)]),
        ("wide", vec![(0.0, -1e8), (1e8, 1e8)]),
        ("tiny", vec![(0.0, 1e-12), (1e-12, 2e-12)]),
    ];
    for (what, points) in cases {
        let mut chart = chart_with(points);
        chart.horizontal = vec![
            Mark {
                label: "A 20.0".to_string(),
                value: 20.0,
                pen: MARK_PENS[0],
            },
            Mark {
                label: "B 20.1".to_string(),
                value: 20.1,
                pen: MARK_PENS[1],
            },
            Mark {
                label: "C NaN".to_string(),
                value: f64::NAN,
                pen: MARK_PENS[2],
            },
        ];
        chart.vertical = vec![Mark {
            label: "V".to_string(),
            value: 1.0,
            pen: MARK_PENS[3],
        }];
        chart.markers = vec![Marker {
            label: "m".to_string(),
            at: (1.0, 20.0),
        }];
        let svg = chart.render();
        assert_good(
            &svg,
            what,
            &["Edge case", "x (h)", "y (degC)", "A 20.0", "B 20.1"],
        );
        assert!(!svg.contains("C NaN"), "{what}: a NaN mark is left out");
    }
}

#[test]
fn ranges_and_label_spreading() {
    assert_eq!(padded([1.0, 3.0].into_iter(), 0.5), Some((0.0, 4.0)));
    assert_eq!(padded([2.0].into_iter(), 0.5), Some((1.0, 3.0)));
    assert_eq!(padded([f64::NAN].into_iter(), 0.5), None);
    assert_eq!(padded(std::iter::empty(), 0.5), None);
    assert_eq!(padded([1e300, -1e300].into_iter(), 0.0), None);
    // Two labels closer than the gap move apart; none passes the top.
    let at = spread(&[10.0, 10.5, 30.0], 2.0, 100.0);
    assert_eq!(at, vec![10.0, 12.0, 30.0]);
    let at = spread(&[99.0, 99.5], 2.0, 100.0);
    assert_eq!(at, vec![98.0, 100.0]);
}

#[test]
fn the_no_data_svg_escapes_its_text() {
    let svg = no_data("A & B <c>", "x > y");
    assert_good(&svg, "no data", &["A &amp; B &lt;c&gt;", "x &gt; y"]);
}
