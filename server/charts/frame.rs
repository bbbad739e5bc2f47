//! The frame every chart shares: canvas and title, the plot rectangle and its scales,
//! axes with their ticks and labels, the legend panel, messages, and text sizing.
//!
//! Layout at the default 900 x 480 px: a 40 px title strip on top; below it the
//! plot on the left and a side panel (legend, colour bar) on the right, so that no
//! legend ever covers data. All positions are absolute canvas pixels, origin top left.

use super::style::{GRID, INK, INK_SOFT, PAPER};
use super::svg::{
    Colour, Document, Element, HAlign, Paint, TextStyle, VAlign, circle, group, line, rect, text,
};
use std::ops::Range;

/// Pixel size of a chart's SVG canvas; the page scales it with CSS.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ChartSize {
    pub width: u32,
    pub height: u32,
}

impl Default for ChartSize {
    /// 900 x 480 px: the size the layouts and font sizes are tuned for.
    fn default() -> Self {
        ChartSize {
            width: 900,
            height: 480,
        }
    }
}

/// Font sizes in CSS pixels at the default chart size; all at least 12 px.
const TITLE_PX: f64 = 18.0;
const AXIS_LABEL_PX: f64 = 14.0;
pub(crate) const TEXT_PX: f64 = 13.0;

const TITLE_STRIP: f64 = 40.0;
/// Height of the strip under the plot for tick labels and the x-axis label.
const X_LABEL_AREA: f64 = 52.0;
/// Chart margins inside the plot panel.
const MARGIN_TOP: f64 = 14.0;
const MARGIN_RIGHT: f64 = 14.0;
const MARGIN_BOTTOM: f64 = 6.0;
const MARGIN_LEFT: f64 = 8.0;
/// Length of a tick mark outside the plot, and the gap between it and its label.
const TICK: f64 = 5.0;
const TICK_GAP: f64 = 3.0;
/// At most this many labelled ticks on an axis.
const X_TICKS: usize = 8;
const Y_TICKS: usize = 7;

/// A text style of `px` CSS pixels in the ink colour, left-aligned on its baseline.
pub(crate) fn font(px: f64) -> TextStyle {
    TextStyle::new(px, INK)
}

pub(crate) fn bold_font(px: f64) -> TextStyle {
    font(px).bold()
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
    let keep = ((max_width / (px * 0.58)).floor().max(0.0) as usize).saturating_sub(1);
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

/// A rectangle of the canvas in pixels.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Area {
    pub left: f64,
    pub top: f64,
    pub width: f64,
    pub height: f64,
}

impl Area {
    pub(crate) fn right(&self) -> f64 {
        self.left + self.width
    }

    pub(crate) fn bottom(&self) -> f64 {
        self.top + self.height
    }

    /// The strip of `height` px at the top (at most all of it) and the rest below.
    pub(crate) fn split_top(&self, height: f64) -> (Area, Area) {
        let h = height.clamp(0.0, self.height);
        (
            Area { height: h, ..*self },
            Area {
                top: self.top + h,
                height: self.height - h,
                ..*self
            },
        )
    }

    /// The strip of `width` px on the left (at most all of it) and the rest right of it.
    pub(crate) fn split_left(&self, width: f64) -> (Area, Area) {
        let w = width.clamp(0.0, self.width);
        (
            Area { width: w, ..*self },
            Area {
                left: self.left + w,
                width: self.width - w,
                ..*self
            },
        )
    }

    /// The area less the given margins; never of negative size.
    fn inset(&self, top: f64, right: f64, bottom: f64, left: f64) -> Area {
        let width = (self.width - left - right).max(0.0);
        let height = (self.height - top - bottom).max(0.0);
        Area {
            left: self.left + left.min(self.width),
            top: self.top + top.min(self.height),
            width,
            height,
        }
    }
}

/// A linear map from data values to pixels: `data.start` lies at `px.0`, `data.end`
/// at `px.1` (either may be the larger, which reverses the axis).
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Scale {
    pub data: Range<f64>,
    pub px: (f64, f64),
}

impl Scale {
    pub(crate) fn at(&self, v: f64) -> f64 {
        let span = self.data.end - self.data.start;
        if span == 0.0 || !span.is_finite() {
            return (self.px.0 + self.px.1) / 2.0;
        }
        self.px.0 + (v - self.data.start) * (self.px.1 - self.px.0) / span
    }
}

/// The plotting rectangle with its two scales.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Plot {
    pub area: Area,
    pub x: Scale,
    pub y: Scale,
}

impl Plot {
    /// The pixel position of the data point `(x, y)`.
    pub(crate) fn at(&self, (x, y): (f64, f64)) -> (f64, f64) {
        (self.x.at(x), self.y.at(y))
    }

    pub(crate) fn points(&self, data: impl IntoIterator<Item = (f64, f64)>) -> Vec<(f64, f64)> {
        data.into_iter().map(|p| self.at(p)).collect()
    }
}

/// Draw one chart: white canvas, title, then `draw` on the area below the title.
/// A panic while drawing odd input gives a chart that says so: a chart must never
/// take its page down.
pub(crate) fn render(
    size: ChartSize,
    title: &str,
    draw: impl FnOnce(&mut Document, Area),
) -> String {
    let drawn = std::panic::catch_unwind(std::panic::AssertUnwindSafe(|| {
        let (w, h) = (f64::from(size.width), f64::from(size.height));
        let mut doc = Document::new(size.width, size.height, title);
        doc.push(rect(0.0, 0.0, w, h).fill(PAPER));
        let canvas = Area {
            left: 0.0,
            top: 0.0,
            width: w,
            height: h,
        };
        let (_, body) = canvas.split_top(TITLE_STRIP);
        doc.push(group("title").child(text(
            (16.0, 12.0),
            fit_text(title, w - 32.0, TITLE_PX),
            bold_font(TITLE_PX).align(HAlign::Start, VAlign::Top),
        )));
        draw(&mut doc, body);
        doc.finish()
    }));
    drawn.unwrap_or_else(|_| fallback_svg(size, title, "The chart could not be drawn."))
}

/// A plain chart with a title and a message.
fn fallback_svg(size: ChartSize, title: &str, message: &str) -> String {
    let (w, h) = (f64::from(size.width), f64::from(size.height));
    let mut doc = Document::new(size.width, size.height, title);
    doc.push(rect(0.0, 0.0, w, h).fill(PAPER));
    doc.push(group("message").child(text((16.0, h / 2.0), message, font(AXIS_LABEL_PX))));
    doc.finish()
}

/// Centre a message (such as "No wells to show") in `area`.
pub(crate) fn centred_message(area: Area, message: &str) -> Element {
    group("message").child(text(
        (area.left + area.width / 2.0, area.top + area.height / 2.0),
        fit_text(message, area.width - 24.0, AXIS_LABEL_PX),
        font(AXIS_LABEL_PX)
            .colour(INK_SOFT)
            .align(HAlign::Middle, VAlign::Middle),
    ))
}

/// Split the body into the plot (left) and a side panel of about 22 % of the width.
pub(crate) fn plot_and_side(body: Area) -> (Area, Area) {
    let side = (body.width * 0.22).clamp(150.0, 240.0).round();
    body.split_left((body.width - side).max(0.0))
}

/// The axes of a chart: data ranges with `x.start` at the left and `y.start` at the
/// bottom (so a reversed range reverses the axis), and their labels.
pub(crate) struct AxesSpec<'t> {
    pub x: Range<f64>,
    pub y: Range<f64>,
    pub x_desc: &'t str,
    pub y_desc: &'t str,
    /// Width of the strip left of the plot for tick labels and the y-axis label.
    pub y_label_area: f64,
    /// Whether to print the y ticks (false for categorical axes drawn by hand).
    pub y_ticks: bool,
}

/// The plotting rectangle inside `panel` once the margins and label strips are taken.
pub(crate) fn plot_area(panel: Area, y_label_area: f64) -> Area {
    panel.inset(
        MARGIN_TOP,
        MARGIN_RIGHT,
        MARGIN_BOTTOM + X_LABEL_AREA,
        MARGIN_LEFT + y_label_area,
    )
}

/// Values for the ticks of an axis over `a..b` (either order): multiples of 1, 2 or 5
/// times a power of ten, the finest such step that gives at most `max_count` ticks.
pub(crate) fn nice_ticks(a: f64, b: f64, max_count: usize) -> Vec<f64> {
    let (lo, hi) = (a.min(b), a.max(b));
    if !(a.is_finite() && b.is_finite() && (hi - lo).is_finite()) || max_count == 0 {
        return Vec::new();
    }
    if hi == lo {
        return vec![lo];
    }
    let mut exponent = ((hi - lo) / max_count as f64).log10().floor() as i32 - 1;
    loop {
        for m in [1.0, 2.0, 5.0] {
            let step = m * 10f64.powi(exponent);
            // A hair of slack so that a tick on the very end of the range counts.
            let first = (lo / step - 1e-9).ceil();
            let last = (hi / step + 1e-9).floor();
            if last - first + 1.0 <= max_count as f64 {
                return (first as i64..=last as i64)
                    .map(|i| i as f64 * step)
                    .collect();
            }
        }
        exponent += 1;
    }
}

/// The plot of `panel` for `spec`, and its "axes" group: grid, axis lines, ticks with
/// their labels, and the axis labels.
pub(crate) fn axes(panel: Area, spec: &AxesSpec<'_>) -> (Plot, Element) {
    let area = plot_area(panel, spec.y_label_area);
    let plot = Plot {
        area,
        x: Scale {
            data: spec.x.clone(),
            px: (area.left, area.right()),
        },
        y: Scale {
            data: spec.y.clone(),
            px: (area.bottom(), area.top),
        },
    };
    let mut g = group("axes");
    let label = font(TEXT_PX);
    let x_ticks = nice_ticks(spec.x.start, spec.x.end, X_TICKS);
    for &v in &x_ticks {
        let x = plot.x.at(v);
        g.push(line((x, area.top), (x, area.bottom())).stroke(GRID, 1.0));
    }
    let y_ticks = if spec.y_ticks {
        nice_ticks(spec.y.start, spec.y.end, Y_TICKS)
    } else {
        Vec::new()
    };
    for &v in &y_ticks {
        let y = plot.y.at(v);
        g.push(line((area.left, y), (area.right(), y)).stroke(GRID, 1.0));
    }
    g.push(line((area.left, area.top), (area.left, area.bottom())).stroke(INK, 1.0));
    g.push(line((area.left, area.bottom()), (area.right(), area.bottom())).stroke(INK, 1.0));
    for &v in &x_ticks {
        let x = plot.x.at(v);
        let y = area.bottom();
        g.push(line((x, y), (x, y + TICK)).stroke(INK, 1.0));
        g.push(text(
            (x, y + TICK + TICK_GAP),
            number_label(v),
            label.align(HAlign::Middle, VAlign::Top),
        ));
    }
    for &v in &y_ticks {
        let y = plot.y.at(v);
        let x = area.left;
        g.push(line((x - TICK, y), (x, y)).stroke(INK, 1.0));
        g.push(text(
            (x - TICK - TICK_GAP, y),
            number_label(v),
            label.align(HAlign::End, VAlign::Middle),
        ));
    }
    let desc = font(AXIS_LABEL_PX);
    g.push(text(
        (
            area.left + area.width / 2.0,
            area.bottom() + X_LABEL_AREA - 8.0,
        ),
        spec.x_desc,
        desc.align(HAlign::Middle, VAlign::Baseline),
    ));
    g.push(text(
        (panel.left + MARGIN_LEFT + 2.0, area.top + area.height / 2.0),
        spec.y_desc,
        desc.align(HAlign::Middle, VAlign::Top).upright(),
    ));
    (plot, g)
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

/// Finite points sorted from old to young (largest first coordinate first).
pub(crate) fn old_to_young(points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out: Vec<(f64, f64)> = points
        .iter()
        .copied()
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect();
    out.sort_by(|a, b| b.0.total_cmp(&a.0));
    out
}

/// How a legend entry shows its series.
pub(crate) enum Swatch {
    Line(Colour),
    DashedLine(Colour),
    Fill(Paint),
    Dot(Colour),
    Hollow(Colour),
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

const LEGEND_ROW: f64 = 22.0;
/// Line spacing of a legend label broken over two lines.
const LINE_STEP: f64 = 16.0;

/// A legend block with a heading in the side panel, `top` px below the panel's top
/// (group "legend"). Entries that do not fit are summarised as "+ n more". Returns the
/// group and the offset below the block.
pub(crate) fn legend(
    side: Area,
    heading: &str,
    entries: &[LegendEntry],
    top: f64,
) -> (Element, f64) {
    let text_left = side.left + 44.0;
    let max_text = side.width - 44.0 - 6.0;
    let mut g = group("legend").attr("data-heading", heading);
    g.push(text(
        (side.left + 8.0, side.top + top),
        fit_text(heading, side.width - 12.0, TEXT_PX),
        bold_font(TEXT_PX).align(HAlign::Start, VAlign::Top),
    ));
    let mut y = top + LEGEND_ROW + 2.0;
    for (i, entry) in entries.iter().enumerate() {
        let remaining = entries.len() - i;
        let lines = wrap_text(&entry.label, max_text, TEXT_PX, 2);
        let extra = LINE_STEP * (lines.len() as f64 - 1.0);
        if remaining > 1 && y + extra + 2.0 * LEGEND_ROW > side.height {
            g.push(text(
                (text_left, side.top + y),
                format!("+ {remaining} more"),
                font(TEXT_PX)
                    .colour(INK_SOFT)
                    .align(HAlign::Start, VAlign::Middle),
            ));
            y += LEGEND_ROW;
            break;
        }
        g.push(swatch(&entry.swatch, (side.left + 8.0, side.top + y)));
        for (k, line) in lines.into_iter().enumerate() {
            g.push(text(
                (text_left, side.top + y + LINE_STEP * k as f64),
                line,
                font(TEXT_PX).align(HAlign::Start, VAlign::Middle),
            ));
        }
        y += LEGEND_ROW + extra;
    }
    (g, y + 6.0)
}

/// A 28 x 14 px swatch whose left edge is at `x` and vertical centre at `y`.
fn swatch(swatch: &Swatch, (x, y): (f64, f64)) -> Element {
    match swatch {
        Swatch::Line(c) => line((x, y), (x + 28.0, y)).stroke(*c, 3.0),
        Swatch::DashedLine(c) => line((x, y), (x + 28.0, y))
            .stroke(*c, 3.0)
            .keyword("stroke-dasharray", super::style::DASH),
        Swatch::Fill(paint) => rect(x, y - 7.0, 28.0, 14.0).fill(*paint).stroke(
            Paint {
                colour: INK,
                opacity: 0.45,
            },
            1.0,
        ),
        Swatch::Dot(c) => circle((x + 14.0, y), 6.0).fill(*c).stroke(INK, 1.0),
        Swatch::Hollow(c) => circle((x + 14.0, y), 6.0).no_fill().stroke(*c, 2.0),
    }
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
    fn a_panic_while_drawing_gives_the_fallback_chart() {
        let svg = render(ChartSize::default(), "Broken", |_, _| panic!("odd input"));
        assert!(svg.contains("could not be drawn"), "{svg}");
        roxmltree::Document::parse(&svg).expect("well-formed");
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
    fn ticks_are_round_steps_within_the_range() {
        // By hand: 0-66 in at most 8 ticks; steps 1, 2 and 5 give 67, 34 and 14 ticks,
        // 10 gives 0, 10, ..., 60.
        assert_eq!(
            nice_ticks(66.0, 0.0, 8),
            [0.0, 10.0, 20.0, 30.0, 40.0, 50.0, 60.0]
        );
        // -100 to 3000 in at most 7: step 200 gives 16, 500 gives 0..3000 (7 ticks).
        assert_eq!(
            nice_ticks(-100.0, 3000.0, 7),
            [0.0, 500.0, 1000.0, 1500.0, 2000.0, 2500.0, 3000.0]
        );
        // Northings 6,095,000-6,121,000 in at most 7: 5,000 m apart.
        assert_eq!(
            nice_ticks(6_095_000.0, 6_121_000.0, 7),
            [
                6_095_000.0,
                6_100_000.0,
                6_105_000.0,
                6_110_000.0,
                6_115_000.0,
                6_120_000.0
            ]
        );
        // 0 to 1.12 in at most 7: step 0.2.
        let ticks: Vec<String> = nice_ticks(0.0, 1.12, 7)
            .into_iter()
            .map(number_label)
            .collect();
        assert_eq!(ticks, ["0", "0.2", "0.4", "0.6", "0.8", "1"]);
        assert_eq!(nice_ticks(5.0, 5.0, 7), [5.0]);
        assert!(nice_ticks(f64::NAN, 1.0, 7).is_empty());
    }

    #[test]
    fn the_plot_sits_inside_its_margins_and_maps_data_linearly() {
        // The default chart by hand: body 900 x 440 below the 40 px title strip; side
        // panel 0.22 * 900 = 198 px, so the plot panel is 702 px wide. With a 72 px
        // y-label strip the plot runs from x = 8 + 72 = 80 to 702 - 14 = 688, and from
        // y = 40 + 14 = 54 to 480 - 6 - 52 = 422.
        let body = Area {
            left: 0.0,
            top: 40.0,
            width: 900.0,
            height: 440.0,
        };
        let (panel, side) = plot_and_side(body);
        assert_eq!((panel.width, side.left, side.width), (702.0, 702.0, 198.0));
        let spec = AxesSpec {
            x: 120.0..0.0,
            y: 3000.0..0.0,
            x_desc: "Age (Ma)",
            y_desc: "Depth (m)",
            y_label_area: 72.0,
            y_ticks: true,
        };
        let (plot, _) = axes(panel, &spec);
        assert_eq!(
            plot.area,
            Area {
                left: 80.0,
                top: 54.0,
                width: 608.0,
                height: 368.0
            }
        );
        // 120 Ma on the left edge, 0 Ma on the right, 60 Ma halfway: 80 + 304 = 384.
        assert_eq!(plot.at((120.0, 3000.0)), (80.0, 422.0));
        assert_eq!(plot.at((0.0, 0.0)), (688.0, 54.0));
        assert_eq!(plot.at((60.0, 1500.0)), (384.0, 238.0));
        // 30 Ma is a quarter of the way from the right: 688 - 152 = 536; 750 m is a
        // quarter of the way down from the top: 54 + 92 = 146.
        assert_eq!(plot.at((30.0, 750.0)), (536.0, 146.0));
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
