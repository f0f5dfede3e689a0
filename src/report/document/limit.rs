//! The dosing-limit section: the shortest constant-rate feed that meets every criterion
//! (`exoscreen limit`), its binding criterion, the criteria there and at the case's own feed,
//! and the notes and suggestions of the search.

use super::{Block, LimitPart, Section, Table};
use crate::assess::limit::{DosingLimit, Evaluation};
use crate::report::limit::{
    COOLING_USE_BASIS, basis, in_report_units, names, required_coolant_text,
};

const HOUR: f64 = 3600.0;

pub fn section(part: &LimitPart) -> Section {
    let blocks = match part {
        LimitPart::Found(l) => found(l),
        LimitPart::Skipped => vec![Block::Paragraph(
            "Not computed: the report was written with --no-limit. Run `exoscreen limit CASE` for it."
                .to_string(),
        )],
        LimitPart::Failed(why) => vec![Block::Paragraph(format!(
            "The dosing-limit search could not be completed: {why}"
        ))],
    };
    Section {
        id: "dosing-limit",
        heading: "Dosing limit".to_string(),
        new_page: true,
        blocks,
    }
}

fn found(l: &DosingLimit) -> Vec<Block> {
    let mut blocks = vec![
        Block::Paragraph("The shortest constant-rate feed duration (the fastest dosing) that meets the cooling, temperature and off-gas criteria at once, each duration tried being the whole computation of this report with the feed spread over it (README, \"Dosing limit\").".to_string()),
        Block::Definitions(summary(l)),
    ];
    let heading = match (l.batch, l.feasible, l.min_feed_duration) {
        (true, _, _) => "Criteria of the batch as it is".to_string(),
        (false, true, Some(d)) => format!("Criteria at the limit (feed over {:.2} h)", d / HOUR),
        _ => format!(
            "Criteria at the longest feed tried ({:.2} h)",
            l.reported.feed_duration.unwrap_or(0.0) / HOUR
        ),
    };
    blocks.push(Block::Subheading(heading));
    blocks.push(Block::Table(criteria(&l.reported)));
    if !l.batch {
        blocks.push(Block::Subheading(format!(
            "Criteria at the case's own feed ({:.2} h)",
            l.case_feed_duration.unwrap_or(0.0) / HOUR
        )));
        blocks.push(Block::Table(criteria(&l.case)));
    }
    for (heading, lines) in [("Notes", &l.notes), ("Suggestions", &l.suggestions)] {
        if !lines.is_empty() {
            blocks.push(Block::Subheading(heading.to_string()));
            blocks.push(Block::Bullets(
                lines.iter().map(|l| l.replace("degC", "°C")).collect(),
            ));
        }
    }
    blocks
}

fn summary(l: &DosingLimit) -> Vec<(String, String)> {
    let verdict = match (l.batch, l.feasible) {
        (true, true) => "a batch: nothing to dose; the case as it is meets every criterion",
        (true, false) => {
            "a batch: nothing to dose; the case as it is does NOT meet every criterion"
        }
        (false, true) => "feasible: a constant-rate feed meets every criterion",
        (false, false) => "NOT feasible: no feed duration tried meets every criterion",
    };
    let mut rows = vec![("verdict".to_string(), verdict.to_string())];
    if let Some(d) = l.min_feed_duration {
        rows.push((
            "shortest feed duration".to_string(),
            format!("{:.2} h", d / HOUR),
        ));
        rows.push((
            "fastest feed rate".to_string(),
            format!("{:.1} kg/h", l.max_feed_rate.unwrap_or(0.0) * HOUR),
        ));
    }
    if let Some(b) = l.binding {
        let why = if l.feasible {
            "fails just below the limit"
        } else {
            "fails at every duration tried"
        };
        rows.push((
            "binding criterion".to_string(),
            format!("{} ({why})", b.name()),
        ));
    }
    if let Some(own) = l.case_feed_duration {
        let meets = if l.case.met() {
            "meets every criterion".to_string()
        } else {
            format!("fails {}", names(&l.case.failing()))
        };
        rows.push((
            "case's own feed".to_string(),
            format!(
                "{:.2} h, {:.1} kg/h: {meets}",
                own / HOUR,
                l.feed_mass / own * HOUR
            ),
        ));
        rows.push((
            "durations searched".to_string(),
            format!(
                "{:.3} h to {:.1} h; {} runs",
                l.scanned_from / HOUR,
                l.scanned_to / HOUR,
                l.runs
            ),
        ));
    }
    rows.push((
        "required coolant".to_string(),
        required_coolant_text(l).replace("degC", "°C"),
    ));
    rows.push((
        "settings".to_string(),
        format!(
            "cooling_use {:.2} (-) ({COOLING_USE_BASIS}); mtsr_margin {:.1} K; off-gas capacity {}",
            l.settings.cooling_use,
            l.settings.mtsr_margin_k,
            l.settings
                .off_gas_capacity_kg_s
                .map_or("not given".to_string(), |c| format!("{:.1} kg/h", c * HOUR))
        ),
    ));
    rows
}

fn criteria(e: &Evaluation) -> Table {
    let cooling_use = if e.figures.normal.cooling_capacity_at_tp > 0.0 {
        e.cooling.limit / e.figures.normal.cooling_capacity_at_tp
    } else {
        0.0
    };
    let rows = e
        .checks()
        .map(|c| {
            let (value, limit, margin, unit, margin_unit) = in_report_units(c);
            let print = |u: &str| u.replace("degC", "°C");
            vec![
                c.criterion.name().to_string(),
                format!("{value:.1} {}", print(unit)),
                format!("{limit:.1} {}", print(unit)),
                format!("{margin:+.1} {}", print(margin_unit)),
                if c.met() { "yes" } else { "NO" }.to_string(),
                basis(e, c, cooling_use).replace("degC", "°C"),
            ]
        })
        .collect();
    Table {
        header: ["criterion", "value", "limit", "margin", "met", "basis"]
            .map(String::from)
            .to_vec(),
        rows,
        numeric: vec![1, 2, 3],
    }
}
