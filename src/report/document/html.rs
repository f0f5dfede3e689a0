//! The document as one self-contained HTML file: inline CSS (A4 print rules), inline SVG,
//! no scripts, no fonts or images from anywhere else.

use super::{Block, Document, Section, Table, Tone};
use crate::report::plot::Plot;

const STYLE: &str = r#"
@page { size: A4; margin: 16mm 15mm 18mm 15mm; }
:root { --ink: #1d232b; --muted: #56606b; --rule: #c9d0d8; --head: #eef1f5;
  --good: #e5f4ea; --good-edge: #2f7d4a; --caution: #fff4d6; --caution-edge: #a66b00;
  --danger: #fde6e4; --danger-edge: #b3261e; }
* { box-sizing: border-box; }
html { font-family: "Helvetica Neue", Helvetica, Arial, "Liberation Sans", sans-serif;
  font-size: 10.5pt; line-height: 1.4; color: var(--ink); background: #fff; }
body { max-width: 190mm; margin: 0 auto; padding: 8mm 6mm; }
header.title { border-bottom: 2px solid var(--ink); padding-bottom: 3mm; margin-bottom: 4mm; }
h1 { font-size: 18pt; margin: 0 0 1mm 0; }
.subtitle { color: var(--muted); margin: 0; }
nav.contents { font-size: 9pt; color: var(--muted); margin-bottom: 4mm; }
nav.contents a { color: inherit; text-decoration: none; margin-right: 3mm; white-space: nowrap; }
h2 { font-size: 13.5pt; border-bottom: 1px solid var(--rule); padding-bottom: 1mm;
  margin: 7mm 0 2.5mm 0; break-after: avoid; page-break-after: avoid; }
h3 { font-size: 11pt; margin: 4mm 0 1.5mm 0; break-after: avoid; page-break-after: avoid; }
p { margin: 1.5mm 0; }
ul { margin: 1mm 0 2mm 0; padding-left: 6mm; }
li { margin: 0.8mm 0; }
table { border-collapse: collapse; width: 100%; margin: 2mm 0 3mm 0; font-size: 9pt;
  break-inside: avoid; page-break-inside: avoid; }
th, td { border: 1px solid var(--rule); padding: 1.2mm 1.8mm; vertical-align: top; text-align: left; }
th { background: var(--head); font-weight: 600; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; font-weight: 600; }
tr { break-inside: avoid; page-break-inside: avoid; }
dl { display: grid; grid-template-columns: max-content 1fr; gap: 1mm 4mm; margin: 2mm 0; }
dt { font-weight: 600; }
dd { margin: 0; overflow-wrap: anywhere; }
.callout { border-left: 5px solid; padding: 3mm 4mm; margin: 2mm 0 3mm 0; border-radius: 2px;
  break-inside: avoid; page-break-inside: avoid; }
.callout .callout-title { font-size: 14pt; font-weight: 700; margin: 0 0 1mm 0; }
.tone-good { background: var(--good); border-color: var(--good-edge); }
.tone-caution { background: var(--caution); border-color: var(--caution-edge); }
.tone-danger { background: var(--danger); border-color: var(--danger-edge); }
figure.plot { margin: 3mm 0 5mm 0; break-inside: avoid; page-break-inside: avoid; }
figure.plot svg { display: block; width: 100%; height: auto; max-height: 120mm; }
figure.plot figcaption { font-size: 9pt; color: var(--muted); margin-top: 1mm; }
figure.plot figcaption strong { color: var(--ink); }
.key-figures { display: grid; grid-template-columns: repeat(4, 1fr); gap: 2mm; margin: 3mm 0;
  break-inside: avoid; page-break-inside: avoid; }
.key { border: 1px solid var(--rule); border-radius: 2px; padding: 1.5mm 2mm; }
.key-label { display: block; font-size: 8.5pt; color: var(--muted); }
.key.alert { border-color: var(--danger-edge); background: var(--danger); }
.key.alert .key-value { color: var(--danger-edge); }
.key-value { display: block; font-size: 13pt; font-weight: 700; font-variant-numeric: tabular-nums; }
ol.references { font-size: 9pt; padding-left: 7mm; }
section.new-page { break-before: page; page-break-before: always; }
#cautions { border: 2px solid var(--danger-edge); padding: 1mm 4mm 2mm 4mm; break-inside: avoid; page-break-inside: avoid; }
#cautions h2 { border: none; margin-top: 2mm; }
footer { margin-top: 6mm; font-size: 8.5pt; color: var(--muted); border-top: 1px solid var(--rule); padding-top: 2mm; }
@media screen { body { padding-top: 10mm; } }
@media print { body { max-width: none; padding: 0; } nav.contents { display: none; } }
"#;

pub fn render(doc: &Document) -> String {
    let mut out = String::new();
    out.push_str("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n");
    out.push_str("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n");
    out.push_str(&format!("<title>{}</title>\n", escape(&doc.title)));
    out.push_str(&format!("<style>{STYLE}</style>\n</head>\n<body>\n"));
    out.push_str(&format!(
        "<header class=\"title\"><h1>{}</h1><p class=\"subtitle\">{}</p></header>\n",
        escape(&doc.title),
        escape(&doc.subtitle)
    ));
    out.push_str(&contents(doc));
    out.push_str("<main>\n");
    for section in &doc.sections {
        out.push_str(&render_section(section));
    }
    out.push_str("</main>\n");
    out.push_str(&format!(
        "<footer>{} — screening only; not a safety assessment on its own.</footer>\n",
        escape(&doc.subtitle)
    ));
    out.push_str("</body>\n</html>\n");
    out
}

fn contents(doc: &Document) -> String {
    let links: Vec<String> = doc
        .sections
        .iter()
        .map(|s| format!("<a href=\"#{}\">{}</a>", s.id, escape(&s.heading)))
        .collect();
    format!("<nav class=\"contents\">{}</nav>\n", links.join(" "))
}

fn render_section(s: &Section) -> String {
    let class = if s.new_page {
        " class=\"new-page\""
    } else {
        ""
    };
    let mut out = format!(
        "<section id=\"{}\"{class}>\n<h2>{}</h2>\n",
        s.id,
        escape(&s.heading)
    );
    for block in &s.blocks {
        out.push_str(&render_block(block));
    }
    out.push_str("</section>\n");
    out
}

fn render_block(block: &Block) -> String {
    match block {
        Block::Paragraph(text) => format!("<p>{}</p>\n", escape(text)),
        Block::Subheading(text) => format!("<h3>{}</h3>\n", escape(text)),
        Block::Callout { tone, title, text } => {
            let paragraphs: String = text
                .lines()
                .map(|l| format!("<p>{}</p>", escape(l)))
                .collect();
            format!(
                "<div class=\"callout {}\"><p class=\"callout-title\">{}</p>{paragraphs}</div>\n",
                tone_class(*tone),
                escape(title)
            )
        }
        Block::Bullets(items) => {
            let items: String = items
                .iter()
                .map(|i| format!("<li>{}</li>", escape(i)))
                .collect();
            format!("<ul>{items}</ul>\n")
        }
        Block::Definitions(pairs) => {
            let items: String = pairs
                .iter()
                .map(|(t, d)| format!("<dt>{}</dt><dd>{}</dd>", escape(t), escape(d)))
                .collect();
            format!("<dl>{items}</dl>\n")
        }
        Block::KeyFigures(figures) => {
            let items: String = figures
                .iter()
                .map(|k| {
                    format!(
                        "<div class=\"key{}\"><span class=\"key-label\">{}</span><span class=\"key-value\">{}</span></div>",
                        if k.alert { " alert" } else { "" },
                        escape(&k.label),
                        escape(&k.value)
                    )
                })
                .collect();
            format!("<div class=\"key-figures\">{items}</div>\n")
        }
        Block::References(items) => {
            let items: String = items
                .iter()
                .map(|i| format!("<li>{}</li>", escape(i)))
                .collect();
            format!("<ol class=\"references\">{items}</ol>\n")
        }
        Block::Table(table) => render_table(table),
        Block::Plot(plot) => render_plot(plot),
    }
}

fn tone_class(tone: Tone) -> &'static str {
    match tone {
        Tone::Good => "tone-good",
        Tone::Caution => "tone-caution",
        Tone::Danger => "tone-danger",
    }
}

fn render_table(t: &Table) -> String {
    let mut out = String::from("<table>\n<thead><tr>");
    for h in &t.header {
        out.push_str(&format!("<th scope=\"col\">{}</th>", escape(h)));
    }
    out.push_str("</tr></thead>\n<tbody>\n");
    for row in &t.rows {
        out.push_str("<tr>");
        for (i, cell) in row.iter().enumerate() {
            let class = if t.numeric.contains(&i) {
                " class=\"num\""
            } else {
                ""
            };
            out.push_str(&format!("<td{class}>{}</td>", escape(cell)));
        }
        out.push_str("</tr>\n");
    }
    out.push_str("</tbody>\n</table>\n");
    out
}

fn render_plot(plot: &Plot) -> String {
    format!(
        "<figure class=\"plot\" id=\"plot-{}\">\n{}\n<figcaption><strong>{}.</strong> {}</figcaption>\n</figure>\n",
        escape(plot.file_name.trim_end_matches(".svg")),
        inline_svg(&plot.svg),
        escape(&plot.title),
        escape(&plot.caption)
    )
}

/// The SVG document as an element inside HTML: without its XML declaration or doctype.
fn inline_svg(svg: &str) -> &str {
    svg.find("<svg")
        .map_or(svg, |start| &svg[start..])
        .trim_end()
}

/// Text as HTML character data or attribute value.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            _ => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_in_text_is_escaped() {
        assert_eq!(
            escape("a < b & \"c\" > 'd'"),
            "a &lt; b &amp; &quot;c&quot; &gt; &#39;d&#39;"
        );
    }

    #[test]
    fn an_svg_loses_its_xml_declaration() {
        let svg = "<?xml version=\"1.0\"?>\n<svg viewBox=\"0 0 1 1\"></svg>\n";
        assert_eq!(inline_svg(svg), "<svg viewBox=\"0 0 1 1\"></svg>");
    }
}
