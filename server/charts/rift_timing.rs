//! The rift-timing chart of the study overview: one bar per well from rift onset
//! to rift end, oldest onset at the top, so that diachronous rifting shows at a glance.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Swatch, TEXT_PX, age_axis, axes, centred_message,
    extent, fit_text, font, legend, number_label, padded, plot_and_side, render, text_width,
    wrap_text,
};
use super::style::{INK, INK_SOFT, RIFT_BAR, with_alpha};
use super::svg::{Document, HAlign, VAlign, group, rect_between, text, titled};

/// A well's fitted rift interval.
#[derive(Debug, Clone, PartialEq)]
pub struct RiftTimingWell {
    pub name: String,
    /// Age at which rifting began (Ma).
    pub rift_onset_ma: f64,
    /// Age at which rifting ended (Ma).
    pub rift_end_ma: f64,
    /// Later rift events of the same well, (onset, end) in Ma, drawn on its row.
    pub later_events: Vec<(f64, f64)>,
}

#[derive(Debug, Clone, Default, PartialEq)]
pub struct RiftTimingData {
    pub title: String,
    pub wells: Vec<RiftTimingWell>,
    /// Names of the study's wells that have no stretching fit (listed in a note).
    pub wells_without_fit: Vec<String>,
}

/// Closest spacing of well names on the y axis (px); denser rows name every k-th well.
const NAME_GAP: f64 = 15.0;
const BAR_COLOUR_ALPHA: f64 = 0.85;

/// Draw the rift-timing chart as an SVG document.
pub fn rift_timing_chart(data: &RiftTimingData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

fn draw(data: &RiftTimingData, doc: &mut Document, body: Area) {
    let mut wells: Vec<&RiftTimingWell> = data
        .wells
        .iter()
        .filter(|w| w.rift_onset_ma.is_finite() && w.rift_end_ma.is_finite())
        .collect();
    if wells.is_empty() {
        let text = if data.wells_without_fit.is_empty() {
            "No wells in this study yet."
        } else {
            "No wells with a stretching fit yet."
        };
        doc.push(centred_message(body, text));
        return;
    }
    // Oldest onset first (top row); ties by name so the order is stable.
    wells.sort_by(|a, b| {
        b.rift_onset_ma
            .total_cmp(&a.rift_onset_ma)
            .then_with(|| a.name.cmp(&b.name))
    });
    let rows = wells.len() as f64;

    let (panel, side) = plot_and_side(body);
    let longest = wells
        .iter()
        .map(|w| text_width(&w.name, TEXT_PX))
        .fold(0.0, f64::max);
    let name_room = longest.clamp(40.0, 160.0).round();
    let (young, old) = extent(wells.iter().flat_map(|w| {
        [w.rift_onset_ma, w.rift_end_ma]
            .into_iter()
            .chain(w.later_events.iter().flat_map(|&(o, e)| [o, e]))
            .filter(|v| v.is_finite())
    }))
    .unwrap_or((0.0, 1.0));
    let (young, old) = padded(young, old, 0.05, 2.0);
    let spec = AxesSpec {
        // Ages are not negative: the padding stops at the present.
        x: age_axis([young.max(0.0), old]),
        // Row 0 at the top.
        y: rows..0.0,
        x_desc: "Age (Ma)",
        y_desc: "Well",
        y_label_area: name_room + 34.0,
        y_ticks: false,
    };
    let (plot, axes_group) = axes(panel, &spec);
    doc.push(axes_group);
    let pitch = plot.area.height / rows;
    let stride = (NAME_GAP / pitch.max(0.1)).ceil().max(1.0) as usize;

    for (i, well) in wells.iter().enumerate() {
        let row = i as f64;
        let title = format!(
            "{}: rift {}–{} Ma",
            well.name,
            number_label(well.rift_onset_ma),
            number_label(well.rift_end_ma)
        );
        let mut bar = titled(
            group("rift-interval")
                .attr("data-name", &well.name)
                .attr("data-onset-ma", well.rift_onset_ma)
                .attr("data-end-ma", well.rift_end_ma),
            title,
        );
        let half = bar_half_height(pitch);
        let (top, bottom) = (plot.y.at(row + 0.5 - half), plot.y.at(row + 0.5 + half));
        let intervals = std::iter::once((well.rift_onset_ma, well.rift_end_ma)).chain(
            well.later_events
                .iter()
                .copied()
                .filter(|(o, e)| o.is_finite() && e.is_finite()),
        );
        for (k, (onset, end)) in intervals.enumerate() {
            let (a, b) = (plot.x.at(onset), plot.x.at(end));
            // At least 2 px wide, so that a rift of no duration still shows.
            let (left, right) = (a.min(b), a.max(b).max(a.min(b) + 2.0));
            // A later event is drawn lighter, so the first rift stays the eye's anchor.
            let alpha = if k == 0 {
                BAR_COLOUR_ALPHA
            } else {
                BAR_COLOUR_ALPHA * 0.45
            };
            bar.push(
                rect_between((left, top), (right, bottom))
                    .fill(with_alpha(RIFT_BAR, alpha))
                    .stroke(INK, 1.0),
            );
        }
        if i % stride == 0 {
            bar.push(text(
                (plot.area.left - 8.0, plot.y.at(row + 0.5)),
                fit_text(&well.name, name_room, TEXT_PX),
                font(TEXT_PX).align(HAlign::End, VAlign::Middle),
            ));
        }
        doc.push(bar);
    }

    let entries = [LegendEntry::new(
        "Rift interval, onset to end",
        Swatch::Fill(with_alpha(RIFT_BAR, BAR_COLOUR_ALPHA)),
    )];
    let (legend_group, below) = legend(side, "Wells by rift onset", &entries, 6.0);
    doc.push(legend_group);
    if !data.wells_without_fit.is_empty() {
        let note = format!("No fit: {}", data.wells_without_fit.join(", "));
        let mut g = group("note").attr("data-count", data.wells_without_fit.len());
        for (k, line) in wrap_text(&note, side.width - 16.0, TEXT_PX, 4)
            .into_iter()
            .enumerate()
        {
            g.push(text(
                (side.left + 8.0, side.top + below + 16.0 * k as f64),
                line,
                font(TEXT_PX)
                    .colour(INK_SOFT)
                    .align(HAlign::Start, VAlign::Top),
            ));
        }
        doc.push(g);
    }
}

/// Half a bar's height in row units: 30 % of the row, but at most 11 px tall overall.
fn bar_half_height(pitch_px: f64) -> f64 {
    (0.3_f64).min(11.0 / pitch_px.max(1.0))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    #[test]
    fn one_bar_per_well_sorted_by_onset_spanning_its_ages() {
        let data = sample_rift_timing();
        let svg = rift_timing_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let bars = groups(&doc, "rift-interval");
        assert_eq!(bars.len(), data.wells.len());
        let onsets: Vec<f64> = bars.iter().map(|b| attr_f64(b, "data-onset-ma")).collect();
        assert!(
            onsets.windows(2).all(|p| p[0] >= p[1]),
            "oldest onset first: {onsets:?}"
        );
        let x = x_axis_map(&doc);
        let mut last_y = f64::NEG_INFINITY;
        for bar in &bars {
            let rect = first_child(bar, "rect");
            let (left, width, y) = (
                attr_f64(&rect, "x"),
                attr_f64(&rect, "width"),
                attr_f64(&rect, "y"),
            );
            assert_close(
                left,
                x(attr_f64(bar, "data-onset-ma")),
                1.5,
                "bar starts at the onset (old on the left)",
            );
            assert_close(
                left + width,
                x(attr_f64(bar, "data-end-ma")),
                1.5,
                "bar ends at the rift end",
            );
            assert!(y > last_y, "rows run down the page in order");
            last_y = y;
            let name = bar
                .descendants()
                .find(|n| n.has_tag_name("text"))
                .map(|t| text_of(&t));
            assert_eq!(
                name.as_deref(),
                bar.attribute("data-name"),
                "well name on the y axis"
            );
        }
        assert_legible(&doc);
        assert!(axis_labels(&doc).contains(&"Age (Ma)".to_string()));
    }

    #[test]
    fn wells_without_a_fit_are_listed_in_a_note() {
        let svg = rift_timing_chart(&sample_rift_timing(), ChartSize::default());
        let doc = parse(&svg);
        let note = groups(&doc, "note")
            .first()
            .map(text_of)
            .unwrap_or_default();
        assert!(note.contains("Q-4"), "{note}");
    }

    #[test]
    fn many_wells_keep_their_names_apart() {
        let wells = (0..60)
            .map(|i| RiftTimingWell {
                name: format!("W-{i:02}"),
                rift_onset_ma: 150.0 - f64::from(i) * 0.5,
                rift_end_ma: 120.0 - f64::from(i) * 0.3,
                later_events: Vec::new(),
            })
            .collect();
        let svg = rift_timing_chart(
            &RiftTimingData {
                title: "Many".into(),
                wells,
                wells_without_fit: Vec::new(),
            },
            ChartSize::default(),
        );
        let doc = parse(&svg);
        let mut ys: Vec<f64> = groups(&doc, "rift-interval")
            .iter()
            .filter_map(|g| {
                g.descendants()
                    .find(|n| n.has_tag_name("text"))
                    .map(|t| attr_f64(&t, "y"))
            })
            .collect();
        ys.sort_by(f64::total_cmp);
        assert!(
            ys.len() >= 10 && ys.len() < 60,
            "every k-th well named: {}",
            ys.len()
        );
        assert!(ys.windows(2).all(|p| p[1] - p[0] >= 13.0));
    }

    #[test]
    fn no_fits_give_a_message() {
        let data = RiftTimingData {
            title: "None".into(),
            wells: Vec::new(),
            wells_without_fit: vec!["Q-4".into()],
        };
        let svg = rift_timing_chart(&data, ChartSize::default());
        assert!(message(&parse(&svg)).contains("No wells with a stretching fit"));
        let svg = rift_timing_chart(&RiftTimingData::default(), ChartSize::default());
        assert!(message(&parse(&svg)).contains("No wells"));
    }
}
