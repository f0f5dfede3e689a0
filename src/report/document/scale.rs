//! The scale-up section: the case's `scale_up` ladder (the recipe in geometrically similar
//! vessels), as `exoscreen scale` computes it.

use super::{Block, ScalePart, Section, Table};

/// The section, or None when the case does not ask for scales.
pub fn section(part: &ScalePart) -> Option<Section> {
    let blocks = match part {
        ScalePart::Absent => return None,
        ScalePart::Failed(why) => vec![Block::Paragraph(format!(
            "The scale ladder asked for by `scale_up` could not be computed: {why}"
        ))],
        ScalePart::Found(s) => {
            let mut blocks = vec![
                Block::Paragraph(s.intro.clone()),
                Block::Table(Table {
                    header: s.headers.clone(),
                    rows: s.rows.clone(),
                    numeric: numeric_columns(&s.headers),
                }),
            ];
            if !s.notes.is_empty() {
                blocks.push(Block::Bullets(s.notes.clone()));
            }
            blocks
        }
    };
    let heading = match part {
        ScalePart::Found(s) => s.title.clone(),
        _ => "Scale-up".to_string(),
    };
    Some(Section {
        id: "scale-up",
        heading,
        new_page: true,
        blocks,
    })
}

/// Every column holds numbers but the class.
fn numeric_columns(headers: &[String]) -> Vec<usize> {
    (0..headers.len())
        .filter(|i| !headers[*i].eq_ignore_ascii_case("class"))
        .collect()
}
