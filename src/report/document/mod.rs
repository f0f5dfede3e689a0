//! The stage-gate report as one document model, built once from the assessment; `html` and
//! `markdown` render that one model, so both files say the same.

pub mod figures;
pub mod files;
pub mod html;
pub mod inputs;
pub mod limit;
pub mod markdown;
pub mod notes;
pub mod provenance;
pub mod scale;
pub mod verdict;

use crate::assess::Assessment;
use crate::assess::limit::DosingLimit;
use crate::report::plot::Plot;
use crate::report::scale_section::ScaleSection;
use provenance::Provenance;

/// The whole report: a title and its sections in reading order.
#[derive(Debug, Clone)]
pub struct Document {
    pub title: String,
    pub subtitle: String,
    pub sections: Vec<Section>,
}

#[derive(Debug, Clone)]
pub struct Section {
    /// Stable anchor, also the HTML id.
    pub id: &'static str,
    pub heading: String,
    /// Starts a new printed page.
    pub new_page: bool,
    pub blocks: Vec<Block>,
}

#[derive(Debug, Clone)]
pub enum Block {
    Paragraph(String),
    Subheading(String),
    /// A highlighted box: the verdict's headline.
    Callout {
        tone: Tone,
        title: String,
        text: String,
    },
    Bullets(Vec<String>),
    /// A few figures at a glance.
    KeyFigures(Vec<KeyFigure>),
    /// Numbered references: [n] text.
    References(Vec<String>),
    /// A list of term: explanation pairs.
    Definitions(Vec<(String, String)>),
    Table(Table),
    Plot(Plot),
}

/// One figure at a glance: its value with its unit, flagged when it reaches a barrier.
#[derive(Debug, Clone)]
pub struct KeyFigure {
    pub label: String,
    pub value: String,
    pub alert: bool,
}

/// How strongly a callout is coloured.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Tone {
    Good,
    Caution,
    Danger,
}

#[derive(Debug, Clone)]
pub struct Table {
    pub header: Vec<String>,
    pub rows: Vec<Vec<String>>,
    /// Columns aligned right (numbers).
    pub numeric: Vec<usize>,
}

/// The dosing-limit part: the search's result, or why there is none.
pub enum LimitPart<'a> {
    Found(&'a DosingLimit),
    Skipped,
    Failed(String),
}

/// The scale-up part: the case's `scale_up` ladder, none asked for, or why it failed.
pub enum ScalePart<'a> {
    Found(&'a ScaleSection),
    Absent,
    Failed(String),
}

/// What the report is built from beyond the assessment.
pub struct Parts<'a> {
    pub limit: LimitPart<'a>,
    pub scale: ScalePart<'a>,
    pub plots: &'a [Plot],
    pub provenance: &'a Provenance,
}

/// Builds the document: the verdict first, then the inputs, the figures, the plots, the
/// dosing limit, the warnings, the models' assumptions, the cautions and the provenance.
pub fn build(a: &Assessment, parts: &Parts) -> Document {
    let limit = match &parts.limit {
        LimitPart::Found(l) => Some(*l),
        _ => None,
    };
    let mut sections = vec![
        verdict::section(a, limit),
        inputs::section(a),
        figures::section(a),
    ];
    if let Some(s) = figures::after_failure_section(a) {
        sections.push(s);
    }
    sections.push(plots_section(parts.plots));
    sections.push(limit::section(&parts.limit));
    sections.extend(scale::section(&parts.scale));
    sections.push(notes::warnings_section(a));
    sections.push(notes::assumptions_section());
    sections.push(notes::cautions_section());
    sections.push(provenance::section(parts.provenance));
    Document {
        title: format!("Thermal screening: {}", a.case.title),
        subtitle: format!(
            "Stage-gate report of {} — exoscreen {}",
            parts.provenance.case_file, parts.provenance.version
        ),
        sections,
    }
}

fn plots_section(plots: &[Plot]) -> Section {
    let mut blocks = Vec::new();
    if plots.is_empty() {
        blocks.push(Block::Paragraph("No plots were drawn.".to_string()));
    }
    blocks.extend(plots.iter().cloned().map(Block::Plot));
    Section {
        id: "plots",
        heading: "Plots".to_string(),
        new_page: true,
        blocks,
    }
}

/// A number with a fixed count of decimals, or a dash where there is none.
pub(crate) fn fixed(value: Option<f64>, digits: usize) -> String {
    value.map_or("—".to_string(), |v| format!("{v:.digits$}"))
}
