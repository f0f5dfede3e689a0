//! The verdict, first in the report: the class and its meaning, the binding hazard (which
//! barrier a cooling failure reaches first, or the cooling that does not suffice), and what
//! to do.

use super::{Block, KeyFigure, Section, Tone};
use crate::assess::Assessment;
use crate::assess::class::class_meaning;
use crate::assess::limit::DosingLimit;
use crate::report::celsius;

const HOUR: f64 = 3600.0;

pub fn section(a: &Assessment, limit: Option<&DosingLimit>) -> Section {
    let (tone, title, meaning) = headline(a);
    let mut blocks = vec![
        Block::Callout {
            tone,
            title,
            text: meaning,
        },
        Block::KeyFigures(key_figures(a)),
        Block::Subheading("Binding hazard".to_string()),
        Block::Paragraph(binding_hazard(a)),
    ];
    if let Some(text) = cooling_finding(a) {
        blocks.push(Block::Paragraph(text));
    }
    blocks.push(Block::Subheading("What to do".to_string()));
    blocks.push(Block::Bullets(what_to_do(a, limit)));
    Section {
        id: "verdict",
        heading: "Verdict".to_string(),
        new_page: false,
        blocks,
    }
}

/// The class, coloured by the worse of the class and the class with the simulated MTSR, and
/// what both mean.
fn headline(a: &Assessment) -> (Tone, String, String) {
    let f = &a.figures;
    let Some(class) = f.class else {
        return (
            Tone::Danger,
            "No criticality class".to_string(),
            "There are no decomposition data, so TD24 and the class cannot be given; the tool does not guess them.".to_string(),
        );
    };
    let title = format!("Criticality class {class} (of 1 to 5)");
    match f.class_simulated.filter(|s| *s > class) {
        Some(worse) => (
            tone_of(worse),
            format!("{title}, but {worse} with the simulated MTSR"),
            format!(
                "Class {class}: {}\nWith the simulated MTSR in place of MTSR (the cooling failure integrated, {}), class {worse}: {}",
                class_meaning(class),
                dosing_words(a),
                class_meaning(worse)
            ),
        ),
        None => (tone_of(class), title, class_meaning(class).to_string()),
    }
}

fn dosing_words(a: &Assessment) -> &'static str {
    match a.plant.dosing_after_failure {
        crate::case::Dosing::Continues => "the feed going on after it",
        crate::case::Dosing::Stops => "the feed stopped at it",
    }
}

/// The temperatures and figures a reviewer looks for first, with their units.
/// A temperature is flagged when it reaches the lowest barrier (MTT or TD24).
fn key_figures(a: &Assessment) -> Vec<KeyFigure> {
    let f = &a.figures;
    let lowest_barrier = f.td24.map_or(f.mtt, |t| t.min(f.mtt));
    let temperature = |label: &str, k: f64, flag: bool| KeyFigure {
        label: label.to_string(),
        value: format!("{:.1} °C", celsius(k)),
        alert: flag && k >= lowest_barrier,
    };
    let plain = |label: &str, value: String| KeyFigure {
        label: label.to_string(),
        value,
        alert: false,
    };
    vec![
        temperature("Tp", a.plant.process_temperature, false),
        temperature("MTSR", f.mtsr, true),
        temperature("simulated MTSR", f.worst.max_temperature, true),
        temperature("MTT", f.mtt, false),
        match f.td24 {
            Some(t) => temperature("TD24", t, false),
            None => KeyFigure {
                label: "TD24".to_string(),
                value: "— (no data)".to_string(),
                alert: true,
            },
        },
        plain("ΔT_ad", format!("{:.1} K", f.adiabatic_rise)),
        plain(
            "max accumulation",
            format!("{:.1} %", 100.0 * f.max_accumulation),
        ),
        plain(
            "TMRad at MTSR",
            f.tmr_ad_at_mtsr.map_or("— (no data)".to_string(), |s| {
                format!("{:.2} h", s / HOUR)
            }),
        ),
    ]
}

fn tone_of(class: u8) -> Tone {
    match class {
        1 | 2 => Tone::Good,
        3 => Tone::Caution,
        _ => Tone::Danger,
    }
}

/// A temperature barrier a runaway can reach.
struct Barrier {
    name: &'static str,
    temperature: f64,
    what: &'static str,
}

fn barriers(a: &Assessment) -> Vec<Barrier> {
    let f = &a.figures;
    let mut list = vec![Barrier {
        name: "MTT",
        temperature: f.mtt,
        what: "boiling or relief must then take the heat",
    }];
    if let Some(td24) = f.td24 {
        list.push(Barrier {
            name: "TD24",
            temperature: td24,
            what: "the decomposition can then run away within a day",
        });
    }
    list.sort_by(|x, y| x.temperature.total_cmp(&y.temperature));
    list
}

/// Which barrier the worse of MTSR and simulated MTSR reaches first.
fn binding_hazard(a: &Assessment) -> String {
    let f = &a.figures;
    let simulated_worse = f.worst.max_temperature > f.mtsr;
    let (name, peak) = if simulated_worse {
        ("the simulated MTSR", f.worst.max_temperature)
    } else {
        ("MTSR", f.mtsr)
    };
    let others = format!(
        "(MTSR {:.1} °C, simulated MTSR {:.1} °C after a failure at {:.2} h)",
        celsius(f.mtsr),
        celsius(f.worst.max_temperature),
        f.worst.failure_time / HOUR
    );
    let list = barriers(a);
    let no_td24 = if f.td24.is_none() {
        " Without decomposition data TD24 is unknown: the decomposition barrier cannot be placed."
    } else {
        ""
    };
    match list.iter().find(|b| b.temperature <= peak) {
        Some(b) => {
            let later = list
                .iter()
                .filter(|o| o.temperature > b.temperature)
                .map(|o| format!("{} {:.1} °C", o.name, celsius(o.temperature)))
                .collect::<Vec<_>>();
            let before = if later.is_empty() {
                String::new()
            } else {
                format!(" before {}", later.join(", "))
            };
            format!(
                "{} {:.1} °C reaches {} {:.1} °C{before}: {} {others}.{no_td24}",
                capitalise(name),
                celsius(peak),
                b.name,
                celsius(b.temperature),
                b.what
            )
        }
        None => {
            let nearest = &list[0];
            format!(
                "A cooling failure reaches no barrier: {name} {:.1} °C stays {:.1} K below the nearest, {} {:.1} °C {others}.{no_td24}",
                celsius(peak),
                nearest.temperature - peak,
                nearest.name,
                celsius(nearest.temperature)
            )
        }
    }
}

fn capitalise(text: &str) -> String {
    let mut chars = text.chars();
    chars.next().map_or(String::new(), |c| {
        c.to_uppercase().collect::<String>() + chars.as_str()
    })
}

/// Cooling that does not suffice in normal operation.
fn cooling_finding(a: &Assessment) -> Option<String> {
    let n = &a.figures.normal;
    (n.peak_reaction_power > n.cooling_capacity_at_tp).then(|| {
        format!(
            "Cooling insufficient: the peak reaction power {:.1} kW at {:.2} h exceeds what the jacket can take with the contents at Tp, {:.1} kW; the temperature rises above Tp to {:.1} °C in normal operation.",
            n.peak_reaction_power / 1e3,
            n.peak_time / HOUR,
            n.cooling_capacity_at_tp / 1e3,
            celsius(n.max_temperature)
        )
    })
}

fn what_to_do(a: &Assessment, limit: Option<&DosingLimit>) -> Vec<String> {
    let f = &a.figures;
    let mut actions = Vec::new();
    if f.td24.is_none() {
        actions.push("Measure the decomposition of the reaction mass (DSC, ARC) before relying on this screening: without it there is no TD24 and no class.".to_string());
    }
    if let (Some(c), Some(s)) = (f.class, f.class_simulated) {
        if s > c {
            actions.push(format!(
                "Stop the feed on a cooling failure (a dosing interlock): with the simulated MTSR the class is {s}, not {c}."
            ));
        }
    }
    if cooling_finding(a).is_some() {
        actions.push("Lengthen the feed or cool colder: the jacket cannot hold Tp at the peak (see the dosing limit).".to_string());
    }
    if let Some(l) = limit {
        actions.push(limit_action(l));
    }
    if !a.warnings.is_empty() {
        actions.push(match a.warnings.len() {
            1 => "Resolve or accept, in writing, the warning below.".to_string(),
            n => format!("Resolve or accept, in writing, each of the {n} warnings below."),
        });
    }
    actions.push("Confirm the inputs and figures by calorimetry on the real reaction mass and have them reviewed by competent, licensed people; local codes and regulations prevail (see the cautions).".to_string());
    actions
}

fn limit_action(l: &DosingLimit) -> String {
    match (l.batch, l.feasible, l.min_feed_duration) {
        (true, true, _) => "A batch: the case as it is meets every dosing criterion.".to_string(),
        (true, false, _) => {
            "A batch: the case as it is does not meet every dosing criterion; see the dosing limit."
                .to_string()
        }
        (false, true, Some(d)) => format!(
            "Feed over no less than {:.2} h ({:.1} kg/h at most): the shortest feed that meets every dosing criterion.",
            d / HOUR,
            l.max_feed_rate.unwrap_or(0.0) * HOUR
        ),
        _ => {
            let stopping = l
                .with_feed_stopping
                .filter(|alt| alt.feasible)
                .and_then(|alt| alt.min_feed_duration.map(|d| (d, alt.binding)))
                .map_or(String::new(), |(d, binding)| {
                    format!(
                        " With the feed stopping on a cooling failure, the shortest feed is {:.2} h{}.",
                        d / HOUR,
                        binding.map_or(String::new(), |b| format!(" ({} binding)", b.name()))
                    )
                });
            format!(
                "No feed duration tried meets every dosing criterion as the case stands: see the dosing limit's suggestions.{stopping}"
            )
        }
    }
}
