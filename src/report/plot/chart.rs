//! The one line chart every data plot is drawn with: lines, horizontal and vertical labelled
//! marks and point markers on linear (or log10) axes, guarded against data it cannot draw.

use super::{finish, no_data};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

/// How a line is drawn: colour and dash pattern both differ, for greyscale print.
#[derive(Debug, Clone, Copy)]
pub(crate) struct Pen {
    pub colour: RGBColor,
    /// Dash and gap in px; None draws it solid.
    pub dash: Option<(u32, u32)>,
    pub width: u32,
}

pub(crate) const BLACK_SOLID: Pen = Pen {
    colour: RGBColor(0, 0, 0),
    dash: None,
    width: 2,
};
pub(crate) const RED_DASHED: Pen = Pen {
    colour: RGBColor(200, 30, 30),
    dash: Some((9, 5)),
    width: 2,
};
/// Pens of the reference marks, in the order Tp, MTSR, MTT, TD24 (and any further).
pub(crate) const MARK_PENS: [Pen; 4] = [
    Pen {
        colour: RGBColor(110, 110, 110),
        dash: Some((2, 4)),
        width: 1,
    },
    Pen {
        colour: RGBColor(190, 0, 0),
        dash: Some((10, 4)),
        width: 1,
    },
    Pen {
        colour: RGBColor(0, 70, 170),
        dash: Some((16, 4)),
        width: 1,
    },
    Pen {
        colour: RGBColor(150, 80, 0),
        dash: Some((5, 3)),
        width: 2,
    },
];

pub(crate) struct Line {
    pub label: String,
    pub points: Vec<(f64, f64)>,
    pub pen: Pen,
}

/// A labelled reference value: a horizontal line (a y value) or a vertical one (an x value).
pub(crate) struct Mark {
    pub label: String,
    pub value: f64,
    pub pen: Pen,
}

/// A labelled point.
pub(crate) struct Marker {
    pub label: String,
    pub at: (f64, f64),
}

pub(crate) struct Chart {
    pub title: String,
    pub x_label: String,
    pub y_label: String,
    pub lines: Vec<Line>,
    pub horizontal: Vec<Mark>,
    pub vertical: Vec<Mark>,
    pub markers: Vec<Marker>,
    /// The y values are log10 of the quantity; the axis is labelled with the quantity.
    pub log_y: bool,
    /// Always show y = 0 (amounts that start from nothing).
    pub y_from_zero: bool,
}

/// Values beyond this magnitude are not drawn (a screening figure never gets there).
const LARGEST_DRAWN: f64 = 1e9;
/// Smallest gap between two mark labels, px.
const LABEL_GAP_PX: f64 = 14.0;
const FONT: &str = "sans-serif";

impl Chart {
    pub fn new(title: &str, x_label: &str, y_label: &str) -> Chart {
        Chart {
            title: title.to_string(),
            x_label: x_label.to_string(),
            y_label: y_label.to_string(),
            lines: Vec::new(),
            horizontal: Vec::new(),
            vertical: Vec::new(),
            markers: Vec::new(),
            log_y: false,
            y_from_zero: false,
        }
    }

    /// The chart as SVG, or an SVG that says why there is nothing to draw.
    pub fn render(mut self) -> String {
        self.drop_non_finite();
        if self.lines.iter().all(|l| l.points.is_empty()) {
            return no_data(&self.title, "no data to plot");
        }
        let Some(x) = self.x_range() else {
            return no_data(&self.title, "the values are out of the drawable range");
        };
        let Some(y) = self.y_range() else {
            return no_data(&self.title, "the values are out of the drawable range");
        };
        finish(&self.title, |root| self.draw(root, x, y))
    }

    fn drop_non_finite(&mut self) {
        let finite = |v: f64| v.is_finite() && v.abs() < LARGEST_DRAWN;
        for line in &mut self.lines {
            line.points.retain(|(x, y)| finite(*x) && finite(*y));
        }
        self.horizontal.retain(|m| finite(m.value));
        self.vertical.retain(|m| finite(m.value));
        self.markers.retain(|m| finite(m.at.0) && finite(m.at.1));
    }

    fn x_range(&self) -> Option<(f64, f64)> {
        let xs = self.lines.iter().flat_map(|l| l.points.iter().map(|p| p.0));
        padded(xs.chain(self.vertical.iter().map(|m| m.value)), 0.0)
    }

    fn y_range(&self) -> Option<(f64, f64)> {
        let ys = self.lines.iter().flat_map(|l| l.points.iter().map(|p| p.1));
        let zero = self.y_from_zero.then_some(0.0);
        let values = ys
            .chain(self.horizontal.iter().map(|m| m.value))
            .chain(self.markers.iter().map(|m| m.at.1))
            .chain(zero);
        padded(values, 0.06)
    }

    fn draw(&self, root: &Area<'_>, x: (f64, f64), y: (f64, f64)) -> DrawResult {
        let has_legend = self.lines.iter().any(|l| !l.label.is_empty());
        let header_height = if has_legend { 58 } else { 36 };
        let (header, body) = root.split_vertically(header_height);
        header.draw(&Text::new(
            self.title.clone(),
            (i32::try_from(super::WIDTH / 2).unwrap_or(360), 8),
            (FONT, 18)
                .into_font()
                .color(&BLACK)
                .pos(Pos::new(HPos::Center, VPos::Top)),
        ))?;
        if has_legend {
            self.draw_legend(&header)?;
        }
        let mut chart = ChartBuilder::on(&body)
            .margin(12)
            .margin_top(6)
            .x_label_area_size(44)
            .y_label_area_size(64)
            .build_cartesian_2d(x.0..x.1, y.0..y.1)?;
        let log_y = self.log_y;
        let y_format = move |v: &f64| {
            if log_y {
                axis_number(two_significant(10f64.powf(*v)))
            } else {
                axis_number(*v)
            }
        };
        chart
            .configure_mesh()
            .x_desc(self.x_label.as_str())
            .y_desc(self.y_label.as_str())
            .x_label_formatter(&|v| axis_number(*v))
            .y_label_formatter(&y_format)
            .light_line_style(RGBColor(235, 235, 235))
            .bold_line_style(RGBColor(205, 205, 205))
            .label_style((FONT, 13))
            .axis_desc_style((FONT, 14))
            .draw()?;
        for line in &self.lines {
            draw_path(&mut chart, line.points.clone(), line.pen)?;
        }
        let plot_height = f64::from(chart.plotting_area().dim_in_pixel().1).max(1.0);
        let plot_width = f64::from(chart.plotting_area().dim_in_pixel().0).max(1.0);
        self.draw_horizontal(&mut chart, x, y, (plot_width, plot_height))?;
        self.draw_vertical(&mut chart, x, y, plot_width)?;
        for marker in &self.markers {
            chart.draw_series(std::iter::once(Circle::new(
                marker.at,
                5,
                ShapeStyle::from(BLACK).stroke_width(2),
            )))?;
            let right_half = marker.at.0 > (x.0 + x.1) / 2.0;
            let (anchor, dx) = if right_half {
                (Pos::new(HPos::Right, VPos::Center), -0.015)
            } else {
                (Pos::new(HPos::Left, VPos::Center), 0.015)
            };
            chart.draw_series(std::iter::once(Text::new(
                marker.label.clone(),
                (marker.at.0 + dx * (x.1 - x.0), marker.at.1),
                (FONT, 13).into_font().color(&BLACK).pos(anchor),
            )))?;
        }
        Ok(())
    }

    /// The legend as one row under the title, outside the plot so it hides no data.
    fn draw_legend(&self, header: &Area<'_>) -> DrawResult {
        let mut x = 80;
        for line in self.lines.iter().filter(|l| !l.label.is_empty()) {
            let y = 44;
            let style = ShapeStyle::from(line.pen.colour).stroke_width(line.pen.width);
            let segment = match line.pen.dash {
                None => vec![vec![(x, y), (x + 30, y)]],
                Some((dash, gap)) => dashes(x, y, 30, dash, gap),
            };
            for piece in segment {
                header.draw(&PathElement::new(piece, style))?;
            }
            header.draw(&Text::new(
                line.label.clone(),
                (x + 36, y),
                (FONT, 13)
                    .into_font()
                    .color(&BLACK)
                    .pos(Pos::new(HPos::Left, VPos::Center)),
            ))?;
            // The naive text metrics: about 0.6 em a character.
            let width = i32::try_from(line.label.chars().count()).unwrap_or(0) * 8;
            x += 36 + width + 30;
        }
        Ok(())
    }

    fn draw_horizontal(
        &self,
        chart: &mut Cartesian<'_, '_>,
        x: (f64, f64),
        y: (f64, f64),
        (plot_width, plot_height): (f64, f64),
    ) -> DrawResult {
        let gap = (y.1 - y.0) * LABEL_GAP_PX / plot_height;
        let px_x = (x.1 - x.0) / plot_width;
        let values: Vec<f64> = self.horizontal.iter().map(|m| m.value).collect();
        let label_at = spread(&values, gap, y.1 - gap * 0.2);
        for (mark, at) in self.horizontal.iter().zip(label_at) {
            let style = ShapeStyle::from(mark.pen.colour).stroke_width(mark.pen.width);
            draw_path(chart, vec![(x.0, mark.value), (x.1, mark.value)], mark.pen)?;
            // A light box behind the label keeps it readable where a curve passes.
            let right = x.1 - px_x * 4.0;
            let width = px_x * (7.0 * mark.label.chars().count() as f64 + 6.0);
            chart.draw_series(std::iter::once(Rectangle::new(
                [(right - width, at), (right + px_x * 2.0, at + gap * 0.95)],
                WHITE.mix(0.8).filled(),
            )))?;
            chart.draw_series(std::iter::once(Text::new(
                mark.label.clone(),
                (right, at),
                (FONT, 12)
                    .into_font()
                    .color(&style.color)
                    .pos(Pos::new(HPos::Right, VPos::Bottom)),
            )))?;
        }
        Ok(())
    }

    fn draw_vertical(
        &self,
        chart: &mut Cartesian<'_, '_>,
        x: (f64, f64),
        y: (f64, f64),
        plot_width: f64,
    ) -> DrawResult {
        let values: Vec<f64> = self.vertical.iter().map(|m| m.value).collect();
        // Labels stand at the top, one row each where two are closer than a label is wide.
        let wide = (x.1 - x.0) * 90.0 / plot_width;
        let row_height = (y.1 - y.0) * LABEL_GAP_PX / 300.0;
        let mut order: Vec<usize> = (0..values.len()).collect();
        order.sort_by(|a, b| values[*a].total_cmp(&values[*b]));
        let mut rows = vec![0usize; values.len()];
        for pair in order.windows(2) {
            if (values[pair[1]] - values[pair[0]]).abs() < wide {
                rows[pair[1]] = rows[pair[0]] + 1;
            }
        }
        for (k, mark) in self.vertical.iter().enumerate() {
            let style = ShapeStyle::from(mark.pen.colour).stroke_width(mark.pen.width);
            draw_path(chart, vec![(mark.value, y.0), (mark.value, y.1)], mark.pen)?;
            chart.draw_series(std::iter::once(Text::new(
                mark.label.clone(),
                (
                    mark.value + (x.1 - x.0) * 0.005,
                    y.1 - row_height * (0.3 + rows[k] as f64 * 1.1),
                ),
                (FONT, 12)
                    .into_font()
                    .color(&style.color)
                    .pos(Pos::new(HPos::Left, VPos::Top)),
            )))?;
        }
        Ok(())
    }
}

pub(crate) type Area<'a> = DrawingArea<SVGBackend<'a>, plotters::coord::Shift>;
pub(crate) type DrawResult = Result<(), Box<dyn std::error::Error>>;
type Cartesian<'a, 'b> = ChartContext<
    'a,
    SVGBackend<'b>,
    Cartesian2d<plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>,
>;

fn draw_path(chart: &mut Cartesian<'_, '_>, points: Vec<(f64, f64)>, pen: Pen) -> DrawResult {
    let style = ShapeStyle::from(pen.colour).stroke_width(pen.width);
    match pen.dash {
        None => {
            chart.draw_series(LineSeries::new(points, style))?;
        }
        Some((dash, gap)) => {
            chart.draw_series(DashedLineSeries::new(points, dash, gap, style))?;
        }
    }
    Ok(())
}

/// A dashed horizontal segment of `length` px from (x, y), as separate pieces.
fn dashes(x: i32, y: i32, length: i32, dash: u32, gap: u32) -> Vec<Vec<(i32, i32)>> {
    let (dash, gap) = (
        i32::try_from(dash).unwrap_or(1).max(1),
        i32::try_from(gap).unwrap_or(1),
    );
    (0..)
        .map(|k| x + k * (dash + gap))
        .take_while(|start| *start < x + length)
        .map(|start| vec![(start, y), ((start + dash).min(x + length), y)])
        .collect()
}

/// The range of the values, widened by `pad` of its span on each side (a flat range by 1 on
/// each side); None when there are none, or the range is too narrow or wide to draw.
pub(crate) fn padded(values: impl Iterator<Item = f64>, pad: f64) -> Option<(f64, f64)> {
    let (low, high) = values
        .filter(|v| v.is_finite())
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    if !(low.is_finite() && high.is_finite()) {
        return None;
    }
    let span = high - low;
    let (low, high) = if span <= 1e-9 * high.abs().max(low.abs()).max(1e-300) {
        (low - 1.0, high + 1.0)
    } else {
        (low - pad * span, high + pad * span)
    };
    let drawable = low.is_finite()
        && high.is_finite()
        && high > low
        && high - low > 1e-9 * high.abs().max(low.abs())
        && low.abs().max(high.abs()) < 10.0 * LARGEST_DRAWN;
    drawable.then_some((low, high))
}

/// Label positions for marks at `values`: each at its value unless it would stand closer
/// than `gap` to the one below, then pushed up; pushed back down from `top` if needed.
pub(crate) fn spread(values: &[f64], gap: f64, top: f64) -> Vec<f64> {
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|a, b| values[*a].total_cmp(&values[*b]));
    let mut at = values.to_vec();
    for pair in order.windows(2) {
        if at[pair[1]] < at[pair[0]] + gap {
            at[pair[1]] = at[pair[0]] + gap;
        }
    }
    for k in (0..order.len()).rev() {
        let limit = if k + 1 < order.len() {
            at[order[k + 1]] - gap
        } else {
            top
        };
        if at[order[k]] > limit {
            at[order[k]] = limit;
        }
    }
    at
}

/// `v` rounded to two significant digits (log-axis labels: 3162.3 -> 3200).
pub(crate) fn two_significant(v: f64) -> f64 {
    if v == 0.0 || !v.is_finite() {
        return v;
    }
    let scale = 10f64.powf(v.abs().log10().floor() - 1.0);
    (v / scale).round() * scale
}

/// An axis tick label: short, no trailing zeros, never "NaN".
pub(crate) fn axis_number(v: f64) -> String {
    if !v.is_finite() {
        return String::new();
    }
    let magnitude = v.abs();
    if magnitude != 0.0 && !(1e-3..1e5).contains(&magnitude) {
        return format!("{v:.1e}");
    }
    let text = format!("{v:.3}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" {
        "0".to_string()
    } else {
        text.to_string()
    }
}
