//! The temperature ladder: Tp, MTSR, MTT and TD24 as labelled marks on one vertical
//! temperature axis, in their order, beside the criticality class and the first sentence of
//! its meaning (class.rs wording).

use super::chart::{DrawResult, MARK_PENS, Pen, axis_number, padded, spread};
use super::{HEIGHT, Plot, degc, finish, no_data};
use crate::assess::Assessment;
use crate::assess::class::class_meaning;
use crate::report::celsius;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

pub const TITLE: &str = "Temperature ladder and criticality class";
const FONT: &str = "sans-serif";
/// Axis position and extent, px.
const AXIS_X: i32 = 480;
const AXIS_TOP: i32 = 64;
const AXIS_BOTTOM: i32 = HEIGHT as i32 - 30;
/// Characters per line of the class meaning.
const WRAP: usize = 56;

struct Rung {
    name: &'static str,
    kelvin: f64,
    pen: Pen,
}

pub fn ladder_plot(a: &Assessment) -> Plot {
    let f = &a.figures;
    let mut rungs = vec![
        Rung {
            name: "Tp",
            kelvin: a.plant.process_temperature,
            pen: MARK_PENS[0],
        },
        Rung {
            name: "MTSR",
            kelvin: f.mtsr,
            pen: MARK_PENS[1],
        },
        Rung {
            name: "MTT",
            kelvin: f.mtt,
            pen: MARK_PENS[2],
        },
    ];
    rungs.extend(f.td24.map(|t| Rung {
        name: "TD24",
        kelvin: t,
        pen: MARK_PENS[3],
    }));
    rungs.retain(|r| r.kelvin.is_finite());
    Plot {
        file_name: "ladder.svg",
        title: TITLE.to_string(),
        caption: "Process temperature, MTSR, MTT and TD24 on one temperature scale; their \
                  order gives the criticality class (Stoessel's scale), shown with what it \
                  means for the plant."
            .to_string(),
        svg: draw_ladder(f.class, &rungs),
    }
}

fn draw_ladder(class: Option<u8>, rungs: &[Rung]) -> String {
    let values: Vec<f64> = rungs.iter().map(|r| celsius(r.kelvin)).collect();
    let Some(range) = padded(values.iter().copied(), 0.12) else {
        return no_data(TITLE, "no temperatures to place");
    };
    finish(TITLE, |root| {
        root.draw(&Text::new(
            TITLE,
            (20, 14),
            (FONT, 18)
                .into_font()
                .color(&BLACK)
                .pos(Pos::new(HPos::Left, VPos::Top)),
        ))?;
        draw_class(root, class, &order_line(rungs))?;
        draw_axis(root, range)?;
        draw_rungs(root, range, rungs, &values)
    })
}

fn y_of(range: (f64, f64), celsius: f64) -> i32 {
    let share = (celsius - range.0) / (range.1 - range.0);
    (f64::from(AXIS_BOTTOM) - share * f64::from(AXIS_BOTTOM - AXIS_TOP)).round() as i32
}

/// The rungs in rising order, e.g. "Tp < MTSR < TD24 < MTT" ("=" where two are equal).
fn order_line(rungs: &[Rung]) -> String {
    let mut sorted: Vec<&Rung> = rungs.iter().collect();
    sorted.sort_by(|a, b| a.kelvin.total_cmp(&b.kelvin));
    let mut text = String::new();
    for (k, rung) in sorted.iter().enumerate() {
        if k > 0 {
            let equal = (rung.kelvin - sorted[k - 1].kelvin).abs() < 0.05;
            text.push_str(if equal { " = " } else { " < " });
        }
        text.push_str(rung.name);
    }
    text
}

fn draw_class(root: &super::chart::Area<'_>, class: Option<u8>, order: &str) -> DrawResult {
    let (headline, meaning) = match class {
        Some(c) => (format!("Class {c}"), first_sentence(class_meaning(c))),
        None => (
            "No class".to_string(),
            "The case has no decomposition data: TD24, and with it the class, is not defined."
                .to_string(),
        ),
    };
    root.draw(&Text::new(
        headline,
        (20, 70),
        (FONT, 56, FontStyle::Bold)
            .into_font()
            .color(&BLACK)
            .pos(Pos::new(HPos::Left, VPos::Top)),
    ))?;
    root.draw(&Text::new(
        order.to_string(),
        (20, 142),
        (FONT, 17)
            .into_font()
            .color(&BLACK)
            .pos(Pos::new(HPos::Left, VPos::Top)),
    ))?;
    for (k, line) in wrap(&meaning, WRAP).iter().enumerate() {
        root.draw(&Text::new(
            line.clone(),
            (20, 180 + 19 * k as i32),
            (FONT, 14)
                .into_font()
                .color(&BLACK)
                .pos(Pos::new(HPos::Left, VPos::Top)),
        ))?;
    }
    Ok(())
}

fn draw_axis(root: &super::chart::Area<'_>, range: (f64, f64)) -> DrawResult {
    let grey = ShapeStyle::from(RGBColor(90, 90, 90)).stroke_width(1);
    root.draw(&PathElement::new(
        vec![(AXIS_X, AXIS_TOP), (AXIS_X, AXIS_BOTTOM)],
        grey.stroke_width(2),
    ))?;
    root.draw(&Text::new(
        "Temperature (degC)",
        (AXIS_X, AXIS_TOP - 8),
        (FONT, 13)
            .into_font()
            .color(&BLACK)
            .pos(Pos::new(HPos::Center, VPos::Bottom)),
    ))?;
    for tick in ticks(range) {
        let y = y_of(range, tick);
        root.draw(&PathElement::new(vec![(AXIS_X - 6, y), (AXIS_X, y)], grey))?;
        root.draw(&Text::new(
            axis_number(tick),
            (AXIS_X - 12, y),
            (FONT, 12)
                .into_font()
                .color(&RGBColor(60, 60, 60))
                .pos(Pos::new(HPos::Right, VPos::Center)),
        ))?;
    }
    Ok(())
}

fn draw_rungs(
    root: &super::chart::Area<'_>,
    range: (f64, f64),
    rungs: &[Rung],
    values: &[f64],
) -> DrawResult {
    let ys: Vec<f64> = values.iter().map(|v| -f64::from(y_of(range, *v))).collect();
    // Labels are spread in "upward px" (the negated screen y), at least 18 px apart.
    let label_ys = spread(&ys, 18.0, -f64::from(AXIS_TOP) + 6.0);
    for ((rung, y), label_y) in rungs.iter().zip(&ys).zip(label_ys) {
        let y = -*y as i32;
        let label_y = -label_y as i32;
        let style = ShapeStyle::from(rung.pen.colour).stroke_width(3);
        root.draw(&PathElement::new(
            vec![(AXIS_X - 4, y), (AXIS_X + 16, y)],
            style,
        ))?;
        root.draw(&PathElement::new(
            vec![(AXIS_X + 16, y), (AXIS_X + 30, label_y)],
            ShapeStyle::from(rung.pen.colour).stroke_width(1),
        ))?;
        root.draw(&Text::new(
            format!("{}  {}", rung.name, degc(rung.kelvin)),
            (AXIS_X + 34, label_y),
            (FONT, 15)
                .into_font()
                .color(&rung.pen.colour)
                .pos(Pos::new(HPos::Left, VPos::Center)),
        ))?;
    }
    Ok(())
}

/// Round tick values inside the range: about five, at 1, 2 or 5 times a power of ten.
fn ticks(range: (f64, f64)) -> Vec<f64> {
    let span = range.1 - range.0;
    if !(span.is_finite() && span > 0.0) {
        return Vec::new();
    }
    let raw = span / 5.0;
    let power = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * power)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * power);
    let first = (range.0 / step).ceil() as i64;
    let last = (range.1 / step).floor() as i64;
    (first..=last).take(50).map(|k| k as f64 * step).collect()
}

fn first_sentence(text: &str) -> String {
    match text.find(". ") {
        Some(end) => text[..=end].to_string(),
        None => text.to_string(),
    }
}

/// Greedy word wrap at `width` characters.
fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.len() + 1 + word.len() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}
