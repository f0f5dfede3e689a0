//! The dosing limit (`exoscreen limit`) as a terminal report and as JSON, and its progress
//! display on the terminal.

use super::cautions::CAUTIONS;
use super::{Source, cautions_section, celsius, new_table};
use crate::assess::limit::{
    COLDEST_COOLANT_K, Check, Criterion, DURATION_TOLERANCE, DosingLimit, Evaluation, Progress,
    RequiredCoolant, SCAN_RATIO, Stage,
};
use comfy_table::{Cell, CellAlignment, Table};
use indicatif::{ProgressBar, ProgressDrawTarget, ProgressStyle};
use serde::Serialize;
use std::io::IsTerminal;
use std::time::{Duration, Instant};

const HOUR: f64 = 3600.0;

/// Where the cooling-use default comes from, said wherever it is printed.
pub(crate) const COOLING_USE_BASIS: &str =
    "share of U A (Tp - T_cold) the peak may use; 0.8 by default, a common-practice margin";

// ---------------------------------------------------------------------------------------------
// Terminal
// ---------------------------------------------------------------------------------------------

pub fn render_table(limit: &DosingLimit, title: &str, source: &Source) -> String {
    let mut out = String::new();
    out.push_str(&format!(
        "exoscreen {} — dosing limit of {}\n",
        env!("CARGO_PKG_VERSION"),
        source.file
    ));
    out.push_str(&format!("{title}\n\n"));
    out.push_str("RESULT\n");
    out.push_str(&result_table(limit).to_string());
    out.push_str("\n\n");
    let at = limit.reported.feed_duration;
    let heading = match (limit.batch, limit.feasible, limit.min_feed_duration) {
        (true, _, _) => "CRITERIA (the batch as it is)".to_string(),
        (false, true, Some(d)) => format!("CRITERIA AT THE LIMIT (feed over {:.2} h)", d / HOUR),
        _ => format!(
            "CRITERIA AT THE LONGEST FEED TRIED ({:.2} h)",
            at.unwrap_or(0.0) / HOUR
        ),
    };
    out.push_str(&format!("{heading}\n"));
    out.push_str(&criteria_table(&limit.reported).to_string());
    out.push('\n');
    if !limit.batch {
        out.push_str(&format!(
            "\nCRITERIA AT THE CASE'S OWN FEED ({:.2} h)\n",
            limit.case_feed_duration.unwrap_or(0.0) / HOUR
        ));
        out.push_str(&criteria_table(&limit.case).to_string());
        out.push('\n');
    }
    for (heading, lines) in [("NOTES", &limit.notes), ("SUGGESTIONS", &limit.suggestions)] {
        out.push_str(&format!("\n{heading}\n"));
        if lines.is_empty() {
            out.push_str("  none\n");
        }
        for line in lines.iter() {
            out.push_str(&format!("  - {line}\n"));
        }
    }
    out.push_str(&cautions_section());
    out
}

fn result_table(limit: &DosingLimit) -> Table {
    let mut t = new_table(&["item", "value"]);
    let mut add = |item: &str, value: String| {
        t.add_row(vec![item.to_string(), value]);
    };
    let verdict = match (limit.batch, limit.feasible) {
        (true, true) => "a batch: nothing to dose; the case as it is meets every criterion",
        (true, false) => {
            "a batch: nothing to dose; the case as it is does NOT meet every criterion"
        }
        (false, true) => "feasible: a constant-rate feed meets every criterion",
        (false, false) => "NOT feasible: no feed duration tried meets every criterion",
    };
    add("verdict", verdict.to_string());
    if let Some(d) = limit.min_feed_duration {
        add("shortest feed duration", format!("{:.2} h", d / HOUR));
        add(
            "fastest feed rate",
            format!("{:.1} kg/h", limit.max_feed_rate.unwrap_or(0.0) * HOUR),
        );
    }
    if let Some(b) = limit.binding {
        let why = if limit.feasible {
            "fails just below the limit"
        } else {
            "fails at every duration tried"
        };
        add("binding criterion", format!("{} ({why})", b.name()));
    }
    if let Some(own) = limit.case_feed_duration {
        add(
            "case's own feed",
            format!(
                "{:.2} h, {:.1} kg/h: {}",
                own / HOUR,
                limit.feed_mass / own * HOUR,
                if limit.case.met() {
                    "meets every criterion".to_string()
                } else {
                    format!("fails {}", names(&limit.case.failing()))
                }
            ),
        );
        add(
            "durations searched",
            format!(
                "{:.3} -> {:.1} h, ratio {:.3}, then bisection to {:.1} %; {} runs",
                limit.scanned_from / HOUR,
                limit.scanned_to / HOUR,
                SCAN_RATIO,
                100.0 * DURATION_TOLERANCE,
                limit.runs
            ),
        );
    }
    add("required coolant", required_coolant_text(limit));
    add(
        "settings",
        format!(
            "cooling_use {:.2} ({COOLING_USE_BASIS}); mtsr_margin {:.1} K; off_gas_capacity {}",
            limit.settings.cooling_use,
            limit.settings.mtsr_margin_k,
            limit
                .settings
                .off_gas_capacity_kg_s
                .map_or("not given".to_string(), |c| format!("{:.1} kg/h", c * HOUR))
        ),
    );
    t
}

pub(crate) fn names(criteria: &[Criterion]) -> String {
    criteria
        .iter()
        .map(|c| c.name())
        .collect::<Vec<_>>()
        .join(", ")
}

pub(crate) fn required_coolant_text(limit: &DosingLimit) -> String {
    let what = if limit.held_jacket {
        "the jacket's minimum"
    } else {
        "the coolant"
    };
    match limit.required_coolant {
        RequiredCoolant::AtMost(t) => format!(
            "{what} at or below {:.1} degC keeps the cooling criterion at the case's own feed (now {:.1} degC)",
            celsius(t),
            celsius(limit.case.coolant_temperature)
        ),
        RequiredCoolant::NotReachable => format!(
            "none: not even {what} at {:.0} degC keeps the cooling criterion at the case's own feed",
            celsius(COLDEST_COOLANT_K)
        ),
        RequiredCoolant::Failed => {
            "not found: a run of the search could not be computed".to_string()
        }
        RequiredCoolant::NotSearched => "not searched".to_string(),
    }
}

/// A criterion's numbers in report units: (value, limit, margin, unit).
pub(crate) fn in_report_units(c: &Check) -> (f64, f64, f64, &'static str, &'static str) {
    match c.criterion {
        Criterion::Cooling => (c.value / 1e3, c.limit / 1e3, c.margin() / 1e3, "kW", "kW"),
        Criterion::Temperature => (celsius(c.value), celsius(c.limit), c.margin(), "degC", "K"),
        Criterion::OffGas => (
            c.value * HOUR,
            c.limit * HOUR,
            c.margin() * HOUR,
            "kg/h",
            "kg/h",
        ),
    }
}

pub(crate) fn basis(e: &Evaluation, c: &Check, cooling_use: f64) -> String {
    let f = &e.figures;
    match c.criterion {
        Criterion::Cooling => format!(
            "peak reaction power at {:.2} h <= {:.2} x U A(h) (Tp - T_cold) = {:.2} x {:.1} kW",
            f.normal.peak_time / HOUR,
            cooling_use,
            cooling_use,
            f.normal.cooling_capacity_at_tp / 1e3
        ),
        Criterion::Temperature => format!(
            "max(MTSR {:.1}, simulated MTSR {:.1}) <= {} {:.1} degC - margin",
            celsius(f.mtsr),
            celsius(f.worst.max_temperature),
            e.temperature_limit.name(),
            celsius(match e.temperature_limit {
                crate::assess::limit::TemperatureLimit::Mtt => f.mtt,
                crate::assess::limit::TemperatureLimit::Td24 => f.td24.unwrap_or(f.mtt),
            })
        ),
        Criterion::OffGas => "peak off-gas in normal operation <= limits.off_gas_capacity".into(),
    }
}

fn criteria_table(e: &Evaluation) -> Table {
    let mut t = new_table(&[
        "criterion",
        "value",
        "limit",
        "margin",
        "unit",
        "met",
        "basis",
    ]);
    let cooling_use = if e.figures.normal.cooling_capacity_at_tp > 0.0 {
        e.cooling.limit / e.figures.normal.cooling_capacity_at_tp
    } else {
        0.0
    };
    for c in e.checks() {
        let (value, limit, margin, unit, margin_unit) = in_report_units(c);
        let unit = if unit == margin_unit {
            unit.to_string()
        } else {
            format!("{unit} (margin {margin_unit})")
        };
        let right = |s: String| Cell::new(s).set_alignment(CellAlignment::Right);
        t.add_row(vec![
            Cell::new(c.criterion.name()),
            right(format!("{value:.1}")),
            right(format!("{limit:.1}")),
            right(format!("{margin:+.1}")),
            Cell::new(unit),
            Cell::new(if c.met() { "yes" } else { "NO" }),
            Cell::new(basis(e, c, cooling_use)),
        ]);
    }
    if e.off_gas.is_none() {
        t.add_row(vec![
            Cell::new("off_gas"),
            Cell::new(format!("{:.1}", e.figures.normal.peak_off_gas * HOUR))
                .set_alignment(CellAlignment::Right),
            Cell::new("—").set_alignment(CellAlignment::Right),
            Cell::new("—").set_alignment(CellAlignment::Right),
            Cell::new("kg/h"),
            Cell::new("n/a"),
            Cell::new("no limits.off_gas_capacity given: not a criterion"),
        ]);
    }
    t
}

// ---------------------------------------------------------------------------------------------
// JSON
// ---------------------------------------------------------------------------------------------

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Report<'a> {
    format: u32,
    title: &'a str,
    case_file: &'a str,
    exoscreen_version: &'static str,
    feasible: bool,
    batch: bool,
    min_feed_duration_h: Option<f64>,
    max_feed_rate_kg_h: Option<f64>,
    binding_criterion: Option<&'static str>,
    /// The feed duration the criteria are given for (the limit, or the longest tried).
    criteria_feed_duration_h: Option<f64>,
    criteria: Criteria,
    just_below: Option<Below>,
    case_feed_duration_h: Option<f64>,
    case_feed_rate_kg_h: Option<f64>,
    case_meets_every_criterion: bool,
    case_criteria: Criteria,
    never_met: Vec<&'static str>,
    required_coolant_C: Option<f64>,
    required_coolant_basis: String,
    coolant_C: f64,
    settings: Settings,
    search: Search,
    notes: &'a [String],
    suggestions: &'a [String],
    cautions: &'static [&'static str],
}

#[derive(Serialize)]
struct Criteria {
    cooling: CriterionReport,
    temperature: CriterionReport,
    off_gas: Option<CriterionReport>,
}

#[derive(Serialize)]
struct CriterionReport {
    value: f64,
    limit: f64,
    margin: f64,
    met: bool,
    unit: &'static str,
    margin_unit: &'static str,
    basis: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    limited_by: Option<&'static str>,
}

#[derive(Serialize)]
struct Below {
    feed_duration_h: Option<f64>,
    criteria: Criteria,
}

#[allow(non_snake_case)]
#[derive(Serialize)]
struct Settings {
    cooling_use: f64,
    cooling_use_basis: &'static str,
    mtsr_margin_K: f64,
    off_gas_capacity_kg_h: Option<f64>,
}

#[derive(Serialize)]
struct Search {
    from_h: f64,
    to_h: f64,
    ratio: f64,
    tolerance: f64,
    runs: usize,
}

fn criteria_json(e: &Evaluation) -> Criteria {
    let cooling_use = if e.figures.normal.cooling_capacity_at_tp > 0.0 {
        e.cooling.limit / e.figures.normal.cooling_capacity_at_tp
    } else {
        0.0
    };
    let one = |c: &Check| {
        let (value, limit, margin, unit, margin_unit) = in_report_units(c);
        CriterionReport {
            value,
            limit,
            margin,
            met: c.met(),
            unit,
            margin_unit,
            basis: basis(e, c, cooling_use),
            limited_by: (c.criterion == Criterion::Temperature).then(|| e.temperature_limit.name()),
        }
    };
    Criteria {
        cooling: one(&e.cooling),
        temperature: one(&e.temperature),
        off_gas: e.off_gas.as_ref().map(one),
    }
}

pub fn render_json(limit: &DosingLimit, title: &str, source: &Source) -> String {
    let required_coolant = match limit.required_coolant {
        RequiredCoolant::AtMost(t) => Some(celsius(t)),
        _ => None,
    };
    let report = Report {
        format: 1,
        title,
        case_file: &source.file,
        exoscreen_version: env!("CARGO_PKG_VERSION"),
        feasible: limit.feasible,
        batch: limit.batch,
        min_feed_duration_h: limit.min_feed_duration.map(|d| d / HOUR),
        max_feed_rate_kg_h: limit.max_feed_rate.map(|r| r * HOUR),
        binding_criterion: limit.binding.map(Criterion::name),
        criteria_feed_duration_h: limit.reported.feed_duration.map(|d| d / HOUR),
        criteria: criteria_json(&limit.reported),
        just_below: limit.below.as_ref().map(|b| Below {
            feed_duration_h: b.feed_duration.map(|d| d / HOUR),
            criteria: criteria_json(b),
        }),
        case_feed_duration_h: limit.case_feed_duration.map(|d| d / HOUR),
        case_feed_rate_kg_h: limit.case_feed_duration.map(|d| limit.feed_mass / d * HOUR),
        case_meets_every_criterion: limit.case.met(),
        case_criteria: criteria_json(&limit.case),
        never_met: limit.never_met.iter().map(|c| c.name()).collect(),
        required_coolant_C: required_coolant,
        required_coolant_basis: required_coolant_text(limit),
        coolant_C: celsius(limit.case.coolant_temperature),
        settings: Settings {
            cooling_use: limit.settings.cooling_use,
            cooling_use_basis: COOLING_USE_BASIS,
            mtsr_margin_K: limit.settings.mtsr_margin_k,
            off_gas_capacity_kg_h: limit.settings.off_gas_capacity_kg_s.map(|c| c * HOUR),
        },
        search: Search {
            from_h: limit.scanned_from / HOUR,
            to_h: limit.scanned_to / HOUR,
            ratio: SCAN_RATIO,
            tolerance: DURATION_TOLERANCE,
            runs: limit.runs,
        },
        notes: &limit.notes,
        suggestions: &limit.suggestions,
        cautions: &CAUTIONS,
    };
    let mut text =
        serde_json::to_string_pretty(&report).unwrap_or_else(|e| format!("{{\"error\": \"{e}\"}}"));
    text.push('\n');
    text
}

// ---------------------------------------------------------------------------------------------
// Progress
// ---------------------------------------------------------------------------------------------

/// Shown once the search has run this long, and only when stderr is a terminal.
const PROGRESS_AFTER: Duration = Duration::from_secs(1);

/// A spinner on stderr for a long search: hidden for the first second and whenever stderr is
/// not a terminal.
pub struct TerminalProgress {
    bar: ProgressBar,
    started: Instant,
    shown: bool,
    terminal: bool,
}

impl Default for TerminalProgress {
    fn default() -> Self {
        Self::new()
    }
}

impl TerminalProgress {
    pub fn new() -> TerminalProgress {
        let bar = ProgressBar::with_draw_target(None, ProgressDrawTarget::hidden());
        if let Ok(style) = ProgressStyle::with_template("{spinner} {elapsed} {msg}") {
            bar.set_style(style);
        }
        TerminalProgress {
            bar,
            started: Instant::now(),
            shown: false,
            terminal: std::io::stderr().is_terminal(),
        }
    }

    pub fn update(&mut self, p: Progress) {
        if !self.shown && self.terminal && self.started.elapsed() >= PROGRESS_AFTER {
            self.bar.set_draw_target(ProgressDrawTarget::stderr());
            self.bar.enable_steady_tick(Duration::from_millis(120));
            self.shown = true;
        }
        let what = match p.stage {
            Stage::Case => format!("the case as it is ({:.2} h feed)", p.trying / HOUR),
            Stage::Coolant => format!("required coolant: trying {:.1} degC", celsius(p.trying)),
            Stage::Scan => format!("scanning feed durations: {:.2} h", p.trying / HOUR),
            Stage::Refine => format!("refining the limit: {:.3} h", p.trying / HOUR),
        };
        let variant = if p.feed_stopped_variant {
            "with the feed stopped on a failure: "
        } else {
            ""
        };
        self.bar.set_message(format!(
            "dosing limit — {variant}{what} (run {})",
            p.runs + 1
        ));
    }

    pub fn finish(&self) {
        self.bar.finish_and_clear();
    }
}
