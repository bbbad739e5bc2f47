//! The frame every chart shares: canvas and title, axes with their labels, the
//! legend panel, messages, and text sizing.
//!
//! Layout at the default 900 x 480 px: a 40 px title strip on top; below it the
//! plot on the left and a side panel (legend, colour bar) on the right, so that no
//! legend ever covers data.

use super::ChartSize;
use super::style::{DASH, GRID, INK, INK_SOFT, PAPER};
use super::svg::{Group, Tags};
use plotters::coord::Shift;
use plotters::coord::types::RangedCoordf64;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::ops::Range;

pub(crate) type DrawResult<T = ()> = Result<T, Box<dyn std::error::Error>>;
pub(crate) type Area<'b> = DrawingArea<SVGBackend<'b>, Shift>;
pub(crate) type Chart<'a, 'b> =
    ChartContext<'a, SVGBackend<'b>, Cartesian2d<RangedCoordf64, RangedCoordf64>>;

/// Font sizes in CSS pixels at the default chart size; all at least 12 px.
const TITLE_PX: f64 = 18.0;
const AXIS_LABEL_PX: f64 = 14.0;
pub(crate) const TEXT_PX: f64 = 13.0;

const TITLE_STRIP: u32 = 40;
/// Height of the strip under the plot for tick labels and the x-axis label.
const X_LABEL_AREA: u32 = 52;
/// Chart margins inside the plot panel (top, right, bottom, left).
const PLOT_MARGIN: (u32, u32, u32, u32) = (14, 14, 6, 8);

/// A text style of `px` CSS pixels. plotters' SVG backend writes `font-size` as the
/// given size / 1.24, so we hand it the size times 1.24 ([`super::svg::Tags::finish`]
/// rounds away the floating-point rest).
pub(crate) fn font(px: f64) -> TextStyle<'static> {
    TextStyle::from(("sans-serif", px * 1.24).into_font()).color(&INK)
}

pub(crate) fn bold_font(px: f64) -> TextStyle<'static> {
    TextStyle::from(("sans-serif", px * 1.24, FontStyle::Bold).into_font()).color(&INK)
}

pub(crate) fn anchored(style: TextStyle<'static>, h: HPos, v: VPos) -> TextStyle<'static> {
    style.pos(Pos::new(h, v))
}

/// Estimated width of `text` in sans-serif at `px`; a little generous so that
/// estimated layouts do not collide in real fonts.
pub(crate) fn text_width(text: &str, px: f64) -> f64 {
    text.chars().count() as f64 * px * 0.58
}

/// `text` shortened with an ellipsis to fit `max_width` px at `px`.
pub(crate) fn fit_text(text: &str, max_width: f64, px: f64) -> String {
    if text_width(text, px) <= max_width {
        return text.to_string();
    }
    let keep = ((max_width / (px * 0.58)).floor() as usize).saturating_sub(1);
    let mut short: String = text.chars().take(keep).collect();
    short.push('…');
    short
}

/// `text` broken at spaces into at most `max_lines` lines that fit `max_width` px
/// at `px`; what still does not fit is shortened with an ellipsis.
pub(crate) fn wrap_text(text: &str, max_width: f64, px: f64, max_lines: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    let mut words = text.split(' ').peekable();
    while words.peek().is_some() {
        if lines.len() + 1 == max_lines.max(1) {
            lines.push(fit_text(
                &words.collect::<Vec<_>>().join(" "),
                max_width,
                px,
            ));
            break;
        }
        let mut line = String::new();
        while let Some(word) = words.peek() {
            let candidate = if line.is_empty() {
                word.to_string()
            } else {
                format!("{line} {word}")
            };
            if !line.is_empty() && text_width(&candidate, px) > max_width {
                break;
            }
            line = candidate;
            words.next();
        }
        lines.push(fit_text(&line, max_width, px));
    }
    lines
}

/// A tick or value label: at most three decimals, trailing zeros dropped, no "-0".
pub(crate) fn number_label(value: f64) -> String {
    let text = format!("{value:.3}");
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" {
        "0".to_string()
    } else {
        text.to_string()
    }
}

/// Draw one chart: white canvas, title, then `draw` on the area below the title.
/// A drawing error, or a panic inside plotters on odd input, gives a chart that
/// says so: a chart must never take its page down.
pub(crate) fn render(
    size: ChartSize,
    title: &str,
    draw: impl FnOnce(&Area<'_>, &mut Tags) -> DrawResult,
) -> String {
    let drawn = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        draw_chart(size, title, draw)
    }));
    match drawn {
        Ok(Ok(svg)) => svg,
        Ok(Err(e)) => fallback_svg(size, title, &format!("The chart could not be drawn: {e}")),
        Err(_) => fallback_svg(size, title, "The chart could not be drawn."),
    }
}

fn draw_chart(
    size: ChartSize,
    title: &str,
    draw: impl FnOnce(&Area<'_>, &mut Tags) -> DrawResult,
) -> DrawResult<String> {
    let mut buf = String::new();
    let mut tags = Tags::default();
    (|| -> DrawResult {
        let root = SVGBackend::with_string(&mut buf, (size.width, size.height)).into_drawing_area();
        root.fill(&PAPER)?;
        let (head, body) = root.split_vertically(TITLE_STRIP.min(size.height));
        tags.open(&head, Group::new("title"))?;
        let max_title = f64::from(size.width) - 32.0;
        head.draw(&Text::new(
            fit_text(title, max_title, TITLE_PX),
            (16, 12),
            bold_font(TITLE_PX),
        ))?;
        tags.close(&head)?;
        draw(&body, &mut tags)?;
        root.present()?;
        Ok(())
    })()?;
    Ok(tags.finish(&buf, title))
}

/// A plain SVG with a title and a message, written by hand so that it cannot fail.
fn fallback_svg(size: ChartSize, title: &str, message: &str) -> String {
    use super::svg::escape;
    let (w, h) = (size.width, size.height);
    format!(
        "<svg width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" xmlns=\"http://www.w3.org/2000/svg\">\n\
         <title>{t}</title>\n<rect x=\"0\" y=\"0\" width=\"{w}\" height=\"{h}\" fill=\"#FFFFFF\"/>\n\
         <g data-series=\"message\"><text x=\"16\" y=\"{y}\" font-family=\"sans-serif\" font-size=\"14\">{m}</text></g>\n</svg>\n",
        t = escape(title),
        m = escape(message),
        y = h / 2,
    )
}

/// Centre a message (such as "No wells to show") in `area`.
pub(crate) fn draw_message(area: &Area<'_>, tags: &mut Tags, message: &str) -> DrawResult {
    let (w, h) = area.dim_in_pixel();
    tags.open(area, Group::new("message"))?;
    let style = anchored(
        font(AXIS_LABEL_PX).color(&INK_SOFT),
        HPos::Center,
        VPos::Center,
    );
    area.draw(&Text::new(
        fit_text(message, f64::from(w) - 24.0, AXIS_LABEL_PX),
        (w as i32 / 2, h as i32 / 2),
        style,
    ))?;
    tags.close(area)?;
    Ok(())
}

/// Split the body into the plot (left) and a side panel of about 22 % of the width.
pub(crate) fn plot_and_side<'b>(body: &Area<'b>) -> (Area<'b>, Area<'b>) {
    let (w, _) = body.dim_in_pixel();
    let side = (f64::from(w) * 0.22).clamp(150.0, 240.0) as u32;
    body.split_horizontally(w.saturating_sub(side))
}

/// The axes of a chart: data ranges as plotters takes them (`x.start` at the left,
/// `y.start` at the bottom, so a reversed range reverses the axis) and their labels.
pub(crate) struct AxesSpec<'t> {
    pub x: Range<f64>,
    pub y: Range<f64>,
    pub x_desc: &'t str,
    pub y_desc: &'t str,
    /// Width of the strip left of the plot for tick labels and the y-axis label.
    pub y_label_area: u32,
    /// Whether to print the y tick labels (false for categorical axes drawn by hand).
    pub y_ticks: bool,
}

/// The pixel size of the plotting rectangle [`draw_axes`] will make in `area` (for
/// charts whose ranges depend on it, such as a map at equal scale).
pub(crate) fn plot_pixels(area: &Area<'_>, y_label_area: u32) -> DrawResult<(u32, u32)> {
    let chart = builder(area, y_label_area).build_cartesian_2d(0.0..1.0, 0.0..1.0)?;
    Ok(chart.plotting_area().dim_in_pixel())
}

fn builder<'a, 'b>(area: &'a Area<'b>, y_label_area: u32) -> ChartBuilder<'a, 'b, SVGBackend<'b>> {
    let (top, right, bottom, left) = PLOT_MARGIN;
    let mut builder = ChartBuilder::on(area);
    builder
        .margin_top(top)
        .margin_right(right)
        .margin_bottom(bottom)
        .margin_left(left)
        .x_label_area_size(X_LABEL_AREA)
        .y_label_area_size(y_label_area);
    builder
}

/// Build the chart and draw grid, axes, tick labels and axis labels (group "axes").
pub(crate) fn draw_axes<'a, 'b>(
    area: &'a Area<'b>,
    tags: &mut Tags,
    spec: &AxesSpec<'_>,
) -> DrawResult<Chart<'a, 'b>> {
    let mut chart =
        builder(area, spec.y_label_area).build_cartesian_2d(spec.x.clone(), spec.y.clone())?;
    tags.open(area, Group::new("axes"))?;
    let formatter = |v: &f64| number_label(*v);
    let mut mesh = chart.configure_mesh();
    mesh.x_desc(spec.x_desc)
        .y_desc(spec.y_desc)
        .x_labels(8)
        .y_labels(if spec.y_ticks { 7 } else { 0 })
        .x_label_formatter(&formatter)
        .y_label_formatter(&formatter)
        .label_style(font(TEXT_PX))
        .axis_desc_style(font(AXIS_LABEL_PX))
        .axis_style(INK)
        .bold_line_style(GRID)
        .max_light_lines(0);
    if !spec.y_ticks {
        mesh.disable_y_mesh();
    }
    mesh.draw()?;
    tags.close(area)?;
    Ok(chart)
}

/// A range padded by `pad` of its span on both ends; a zero span widens to `min_span`.
pub(crate) fn padded(lo: f64, hi: f64, pad: f64, min_span: f64) -> (f64, f64) {
    let span = hi - lo;
    if span.is_nan() || span <= 0.0 {
        return (lo - min_span / 2.0, hi + min_span / 2.0);
    }
    (lo - span * pad, hi + span * pad)
}

/// The age axis from the oldest to the youngest of `ages` (old on the left); a
/// single age gets one Myr either side.
pub(crate) fn age_axis(ages: impl IntoIterator<Item = f64>) -> Range<f64> {
    let (young, old) = extent(ages).unwrap_or((0.0, 1.0));
    let (young, old) = if old > young {
        (young, old)
    } else {
        padded(young, old, 0.0, 2.0)
    };
    old..young
}

/// Smallest and largest finite value, if any.
pub(crate) fn extent(values: impl IntoIterator<Item = f64>) -> Option<(f64, f64)> {
    values
        .into_iter()
        .filter(|v| v.is_finite())
        .fold(None, |acc, v| {
            Some(acc.map_or((v, v), |(lo, hi): (f64, f64)| (lo.min(v), hi.max(v))))
        })
}

/// How a legend entry shows its series.
pub(crate) enum Swatch {
    Line(RGBColor),
    DashedLine(RGBColor),
    Fill(RGBAColor),
    Dot(RGBColor),
    Hollow(RGBColor),
}

pub(crate) struct LegendEntry {
    pub label: String,
    pub swatch: Swatch,
}

impl LegendEntry {
    pub(crate) fn new(label: impl Into<String>, swatch: Swatch) -> Self {
        LegendEntry {
            label: label.into(),
            swatch,
        }
    }
}

const LEGEND_ROW: i32 = 22;
/// Line spacing of a legend label broken over two lines.
const LINE_STEP: i32 = 16;

/// Draw a legend block with a heading into the side panel from `top` down (group
/// "legend"). Entries that do not fit are summarised as "+ n more". Returns the y
/// below the block.
pub(crate) fn draw_legend(
    side: &Area<'_>,
    tags: &mut Tags,
    heading: &str,
    entries: &[LegendEntry],
    top: i32,
) -> DrawResult<i32> {
    let (w, h) = side.dim_in_pixel();
    let (w, h) = (w as i32, h as i32);
    let text_left = 44;
    let max_text = f64::from(w - text_left - 6);
    tags.open(side, Group::new("legend").attr("data-heading", heading))?;
    side.draw(&Text::new(
        fit_text(heading, f64::from(w - 12), TEXT_PX),
        (8, top),
        bold_font(TEXT_PX),
    ))?;
    let mut y = top + LEGEND_ROW + 2;
    for (i, entry) in entries.iter().enumerate() {
        let remaining = entries.len() - i;
        let lines = wrap_text(&entry.label, max_text, TEXT_PX, 2);
        let extra = LINE_STEP * (lines.len() as i32 - 1);
        if remaining > 1 && y + extra + 2 * LEGEND_ROW > h {
            let more = format!("+ {remaining} more");
            side.draw(&Text::new(
                more,
                (text_left, y),
                anchored(font(TEXT_PX).color(&INK_SOFT), HPos::Left, VPos::Center),
            ))?;
            y += LEGEND_ROW;
            break;
        }
        draw_swatch(side, tags, heading, &entry.swatch, (8, y))?;
        for (k, line) in lines.into_iter().enumerate() {
            let at = (text_left, y + LINE_STEP * k as i32);
            side.draw(&Text::new(
                line,
                at,
                anchored(font(TEXT_PX), HPos::Left, VPos::Center),
            ))?;
        }
        y += LEGEND_ROW + extra;
    }
    tags.close(side)?;
    Ok(y + 6)
}

/// A 28 x 12 px swatch whose left edge is at `x` and vertical centre at `y`.
fn draw_swatch(
    side: &Area<'_>,
    tags: &mut Tags,
    heading: &str,
    swatch: &Swatch,
    (x, y): (i32, i32),
) -> DrawResult {
    match swatch {
        Swatch::Line(c) => {
            side.draw(&PathElement::new(
                vec![(x, y), (x + 28, y)],
                c.stroke_width(3),
            ))?;
        }
        Swatch::DashedLine(c) => {
            // A dashed segment inside its own group, so the legend stays in "legend".
            tags.open(
                side,
                Group::new("legend-dash").attr("stroke-dasharray", DASH),
            )?;
            side.draw(&PathElement::new(
                vec![(x, y), (x + 28, y)],
                c.stroke_width(3),
            ))?;
            tags.open(side, Group::new("legend").attr("data-heading", heading))?;
        }
        Swatch::Fill(c) => {
            side.draw(&Rectangle::new([(x, y - 7), (x + 28, y + 7)], c.filled()))?;
            side.draw(&Rectangle::new(
                [(x, y - 7), (x + 28, y + 7)],
                INK.mix(0.45).stroke_width(1),
            ))?;
        }
        Swatch::Dot(c) => {
            side.draw(&Circle::new((x + 14, y), 6, c.filled()))?;
            side.draw(&Circle::new((x + 14, y), 6, INK.stroke_width(1)))?;
        }
        Swatch::Hollow(c) => {
            side.draw(&Circle::new((x + 14, y), 6, c.stroke_width(2)))?;
        }
    }
    Ok(())
}

/// Spread label positions (sorted or not) so that neighbours are at least `gap` px
/// apart while staying within `lo..=hi`, moving each as little as the order allows.
/// Returns the new positions in the input order.
pub(crate) fn spread_labels(wanted: &[f64], gap: f64, lo: f64, hi: f64) -> Vec<f64> {
    let hi = hi.max(lo);
    let mut order: Vec<usize> = (0..wanted.len()).collect();
    order.sort_by(|&a, &b| wanted[a].total_cmp(&wanted[b]));
    let mut placed: Vec<f64> = order.iter().map(|&i| wanted[i].clamp(lo, hi)).collect();
    for k in 1..placed.len() {
        placed[k] = placed[k].max(placed[k - 1] + gap);
    }
    // Push back up from the bottom if the stack ran past `hi`.
    if let Some(last) = placed.last_mut() {
        *last = last.min(hi);
    }
    for k in (0..placed.len().saturating_sub(1)).rev() {
        placed[k] = placed[k].min(placed[k + 1] - gap);
    }
    let mut out = vec![0.0; wanted.len()];
    for (slot, &i) in order.iter().enumerate() {
        out[i] = placed[slot];
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_fallback_chart_is_well_formed() {
        let svg = fallback_svg(
            ChartSize::default(),
            "A <title> & more",
            "It failed: \"x\" < y",
        );
        let doc = roxmltree::Document::parse(&svg).expect("well-formed");
        let text = doc
            .descendants()
            .find(|n| n.has_tag_name("text"))
            .and_then(|n| n.text());
        assert_eq!(text, Some("It failed: \"x\" < y"));
    }

    #[test]
    fn number_labels_are_short() {
        assert_eq!(number_label(100.0), "100");
        assert_eq!(number_label(12.5), "12.5");
        assert_eq!(number_label(0.30000000000000004), "0.3");
        assert_eq!(number_label(-0.0001), "0");
        assert_eq!(number_label(1.23456), "1.235");
    }

    #[test]
    fn long_text_is_shortened_to_fit() {
        let short = fit_text("A very long horizon name indeed", 100.0, TEXT_PX);
        assert!(short.ends_with('…'));
        assert!(text_width(&short, TEXT_PX) <= 100.0);
        assert_eq!(fit_text("Top", 100.0, TEXT_PX), "Top");
    }

    #[test]
    fn long_labels_wrap_onto_lines() {
        let lines = wrap_text("shale 60%, sandstone 40%", 120.0, TEXT_PX, 2);
        assert_eq!(lines, ["shale 60%,", "sandstone 40%"]);
        assert_eq!(wrap_text("short", 120.0, TEXT_PX, 2), ["short"]);
        let lines = wrap_text(
            "one two three four five six seven eight nine ten",
            120.0,
            TEXT_PX,
            2,
        );
        assert_eq!(lines.len(), 2);
        assert!(lines[1].ends_with('…'));
        assert!(lines.iter().all(|l| text_width(l, TEXT_PX) <= 120.0));
        let lines = wrap_text(
            "one two three four five six seven eight nine ten",
            120.0,
            TEXT_PX,
            5,
        );
        assert_eq!(
            lines.join(" "),
            "one two three four five six seven eight nine ten"
        );
        assert_eq!(
            wrap_text("Averyveryverylongwordwithoutspaces", 80.0, TEXT_PX, 2).len(),
            1
        );
    }

    #[test]
    fn spread_labels_keep_their_gap_and_order() {
        let wanted = [100.0, 102.0, 50.0, 101.0];
        let placed = spread_labels(&wanted, 15.0, 0.0, 400.0);
        let mut sorted = placed.clone();
        sorted.sort_by(f64::total_cmp);
        for pair in sorted.windows(2) {
            assert!(pair[1] - pair[0] >= 15.0 - 1e-9);
        }
        assert_eq!(placed[2], 50.0, "a label with room stays where it is");
        assert!(
            placed[0] < placed[3] && placed[3] < placed[1],
            "labels keep the order of their lines"
        );
        // Crowded at the bottom edge: the stack is pushed back up inside the range.
        let placed = spread_labels(&[395.0, 398.0, 399.0], 15.0, 0.0, 400.0);
        assert!(placed.iter().all(|&y| y <= 400.0));
    }

    #[test]
    fn a_single_age_still_gives_an_axis() {
        let axis = age_axis([10.0]);
        assert!(axis.start > axis.end, "old on the left");
        assert_eq!(age_axis([0.0, 66.0]), 66.0..0.0);
    }
}
