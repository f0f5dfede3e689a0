//! The document as Markdown: the same sections as the HTML, with the plots referenced as the
//! SVG files beside it.

use super::{Block, Document, Section, Table, Tone};

pub fn render(doc: &Document) -> String {
    let mut out = format!("# {}\n\n{}\n\n", doc.title, doc.subtitle);
    for section in &doc.sections {
        out.push_str(&render_section(section));
    }
    out
}

fn render_section(s: &Section) -> String {
    let mut out = format!("## {}\n\n", s.heading);
    for block in &s.blocks {
        out.push_str(&render_block(block));
        out.push('\n');
    }
    out
}

fn render_block(block: &Block) -> String {
    match block {
        Block::Paragraph(text) => format!("{text}\n"),
        Block::Subheading(text) => format!("### {text}\n"),
        Block::Callout { tone, title, text } => {
            let text = text.replace('\n', "\n>\n> ");
            format!("> **{}{title}**\n>\n> {text}\n", tone_mark(*tone))
        }
        Block::Bullets(items) => items.iter().map(|i| format!("- {i}\n")).collect(),
        Block::Definitions(pairs) => pairs
            .iter()
            .map(|(t, d)| format!("- **{t}**: {d}\n"))
            .collect(),
        Block::KeyFigures(figures) => render_table(&Table {
            header: figures.iter().map(|k| k.label.clone()).collect(),
            rows: vec![
                figures
                    .iter()
                    .map(|k| {
                        if k.alert {
                            format!("**{}** (!)", k.value)
                        } else {
                            k.value.clone()
                        }
                    })
                    .collect(),
            ],
            numeric: (0..figures.len()).collect(),
        }),
        Block::References(items) => items
            .iter()
            .enumerate()
            .map(|(i, r)| format!("{}. {r}\n", i + 1))
            .collect(),
        Block::Table(t) => render_table(t),
        Block::Plot(p) => format!(
            "![{}]({})\n\n*{}.* {}\n",
            p.title, p.file_name, p.title, p.caption
        ),
    }
}

fn tone_mark(tone: Tone) -> &'static str {
    match tone {
        Tone::Good => "",
        Tone::Caution => "CAUTION: ",
        Tone::Danger => "DANGER: ",
    }
}

fn render_table(t: &Table) -> String {
    let mut out = row(&t.header);
    let rule: Vec<String> = (0..t.header.len())
        .map(|i| {
            if t.numeric.contains(&i) {
                "---:".to_string()
            } else {
                "---".to_string()
            }
        })
        .collect();
    out.push_str(&row(&rule));
    for r in &t.rows {
        out.push_str(&row(r));
    }
    out
}

fn row(cells: &[String]) -> String {
    let cells: Vec<String> = cells.iter().map(|c| cell(c)).collect();
    format!("| {} |\n", cells.join(" | "))
}

/// A table cell: pipes escaped, line breaks as spaces.
fn cell(text: &str) -> String {
    text.replace('|', "\\|").replace('\n', " ")
}
