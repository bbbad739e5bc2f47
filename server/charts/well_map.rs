//! The well map of the study overview: wells at their projected coordinates,
//! coloured by stretching factor on a colour-blind-safe sequential scale, at equal
//! scale in x and y. Wells without a fit are drawn hollow.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Swatch, TEXT_PX, axes, bold_font, centred_message,
    extent, font, legend, padded, plot_and_side, plot_area, render, text_width, wrap_text,
};
use super::style::{INK, INK_SOFT, NO_FIT, sequential_colour};
use super::svg::{Document, Element, HAlign, VAlign, circle, group, line, rect, text, titled};

/// A well on the map.
#[derive(Debug, Clone, PartialEq)]
pub struct MapWell {
    pub name: String,
    /// Easting (projected metres).
    pub x_m: f64,
    /// Northing (projected metres).
    pub y_m: f64,
    /// Best-fit stretching factor; `None` when the well has no fit.
    pub beta: Option<f64>,
}

/// A section line on the map.
#[derive(Debug, Clone, PartialEq)]
pub struct MapSection {
    pub name: String,
    /// (easting, northing) in projected metres, in order along the line.
    pub points: Vec<(f64, f64)>,
}

#[derive(Debug, Clone, Default, PartialEq)]
pub struct WellMapData {
    pub title: String,
    pub wells: Vec<MapWell>,
    /// The study's section lines, drawn under the wells.
    pub sections: Vec<MapSection>,
}

/// Wells are named on the map up to this many; beyond it the names would crowd
/// the map, and each marker keeps its name as a tooltip.
pub const MAX_NAMED_WELLS: usize = 40;
const MARKER_RADIUS: f64 = 7.0;
/// Section lines on the map.
const SECTION_LINE: super::svg::Colour = super::svg::Colour(150, 60, 110);
const Y_LABEL_AREA: f64 = 84.0;

/// Draw the well map as an SVG document.
pub fn well_map_chart(data: &WellMapData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

fn draw(data: &WellMapData, doc: &mut Document, body: Area) {
    let shown: Vec<&MapWell> = data
        .wells
        .iter()
        .filter(|w| w.x_m.is_finite() && w.y_m.is_finite())
        .collect();
    let unplaced = data.wells.len() - shown.len();
    if shown.is_empty() {
        let text = if unplaced == 0 {
            "No wells in this study yet.".to_string()
        } else {
            format!("No wells to show: {unplaced} without coordinates.")
        };
        doc.push(centred_message(body, &text));
        return;
    }
    let beta = |w: &MapWell| w.beta.filter(|b| b.is_finite());
    let beta_range = extent(shown.iter().filter_map(|w| beta(w)));

    let (panel, side) = plot_and_side(body);
    let area = plot_area(panel, Y_LABEL_AREA);
    let line_points: Vec<(f64, f64)> = data
        .sections
        .iter()
        .flat_map(|s| s.points.iter().copied())
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect();
    let (x_range, y_range) = equal_scale(
        &shown,
        &line_points,
        area.width.max(1.0),
        area.height.max(1.0),
    );
    let spec = AxesSpec {
        x: x_range,
        y: y_range,
        x_desc: "Easting (m)",
        y_desc: "Northing (m)",
        y_label_area: Y_LABEL_AREA,
        y_ticks: true,
    };
    let (plot, axes_group) = axes(panel, &spec);
    doc.push(axes_group);
    let centres: Vec<(f64, f64)> = shown.iter().map(|w| plot.at((w.x_m, w.y_m))).collect();
    for section in &data.sections {
        let points: Vec<(f64, f64)> = section
            .points
            .iter()
            .copied()
            .filter(|p| p.0.is_finite() && p.1.is_finite())
            .collect();
        let Some(&first) = points.first() else {
            continue;
        };
        let start = plot.at(first);
        doc.push(titled(
            group("section")
                .attr("data-name", &section.name)
                .child(
                    super::svg::polyline(plot.points(points))
                        .stroke(SECTION_LINE, 2.0)
                        .keyword("stroke-dasharray", super::style::DASH),
                )
                .child(text(
                    (start.0, start.1 - 6.0),
                    section.name.clone(),
                    font(TEXT_PX)
                        .colour(SECTION_LINE)
                        .align(HAlign::Start, VAlign::Baseline),
                )),
            format!("Section {}", section.name),
        ));
    }

    for (well, &centre) in shown.iter().zip(&centres) {
        let g = group("well").attr("data-name", &well.name);
        doc.push(match beta(well) {
            Some(b) => {
                let fill = sequential_colour(scale_position(b, beta_range));
                titled(
                    g.keyword("data-fit", "yes")
                        .attr("data-beta", b)
                        .child(circle(centre, MARKER_RADIUS).fill(fill).stroke(INK, 1.0)),
                    format!("{}: β = {b:.2}", well.name),
                )
            }
            None => titled(
                g.keyword("data-fit", "no").child(
                    circle(centre, MARKER_RADIUS - 1.0)
                        .no_fill()
                        .stroke(NO_FIT, 2.0),
                ),
                format!("{}: no stretching fit", well.name),
            ),
        });
    }
    if shown.len() <= MAX_NAMED_WELLS {
        let a = plot.area;
        let bounds = Rect {
            left: a.left,
            top: a.top,
            right: a.right(),
            bottom: a.bottom(),
        };
        let names: Vec<&str> = shown.iter().map(|w| w.name.as_str()).collect();
        let mut g = group("well-names");
        for (name, place) in names.iter().zip(place_names(&names, &centres, bounds)) {
            if let Some(place) = place {
                g.push(text(
                    place.at,
                    name.to_string(),
                    font(TEXT_PX).align(place.h, place.v),
                ));
            }
        }
        doc.push(g);
    }

    let below = match beta_range {
        Some(range) => {
            let (bar, below) = colour_bar(side, range);
            doc.push(bar);
            below
        }
        None => {
            doc.push(
                group("note").child(text(
                    (side.left + 8.0, side.top + 12.0),
                    "No stretching fits yet.",
                    font(TEXT_PX)
                        .colour(INK_SOFT)
                        .align(HAlign::Start, VAlign::Top),
                )),
            );
            40.0
        }
    };
    let mut entries = Vec::new();
    if beta_range.is_some() {
        entries.push(LegendEntry::new(
            "Fitted well, coloured by β",
            Swatch::Dot(sequential_colour(0.5)),
        ));
    }
    if shown.iter().any(|w| beta(w).is_none()) {
        entries.push(LegendEntry::new("No fit (hollow)", Swatch::Hollow(NO_FIT)));
    }
    let (legend_group, below) = legend(side, "Wells", &entries, below);
    doc.push(legend_group);
    if unplaced > 0 {
        let note = if unplaced == 1 {
            "1 well without coordinates is not shown.".to_string()
        } else {
            format!("{unplaced} wells without coordinates are not shown.")
        };
        let mut g = group("note");
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

/// Position of `beta` on the colour scale; a single value (or one well) sits mid-scale.
fn scale_position(beta: f64, range: Option<(f64, f64)>) -> f64 {
    match range {
        Some((lo, hi)) if hi > lo => (beta - lo) / (hi - lo),
        _ => 0.5,
    }
}

/// x and y ranges around the wells, padded, with one metre per pixel the same on
/// both axes so that distances and shapes read true.
fn equal_scale(
    wells: &[&MapWell],
    lines: &[(f64, f64)],
    w_px: f64,
    h_px: f64,
) -> (std::ops::Range<f64>, std::ops::Range<f64>) {
    let (x_lo, x_hi) =
        extent(wells.iter().map(|w| w.x_m).chain(lines.iter().map(|p| p.0))).unwrap_or((0.0, 1.0));
    let (y_lo, y_hi) =
        extent(wells.iter().map(|w| w.y_m).chain(lines.iter().map(|p| p.1))).unwrap_or((0.0, 1.0));
    let (x_lo, x_hi) = padded(x_lo, x_hi, 0.08, 2000.0);
    let (y_lo, y_hi) = padded(y_lo, y_hi, 0.08, 2000.0);
    let per_px = ((x_hi - x_lo) / w_px).max((y_hi - y_lo) / h_px);
    let (x_mid, y_mid) = ((x_lo + x_hi) / 2.0, (y_lo + y_hi) / 2.0);
    let (half_w, half_h) = (per_px * w_px / 2.0, per_px * h_px / 2.0);
    (
        (x_mid - half_w)..(x_mid + half_w),
        (y_mid - half_h)..(y_mid + half_h),
    )
}

/// Place each name beside its marker: right, left, above or below, whichever first
/// stays inside `bounds` and clear of every marker and earlier name. Names with no free
/// place are left out.
fn place_names(names: &[&str], centres: &[(f64, f64)], bounds: Rect) -> Vec<Option<NamePlace>> {
    let r = MARKER_RADIUS + 1.0;
    let markers: Vec<Rect> = centres
        .iter()
        .map(|&(x, y)| Rect {
            left: x - r,
            top: y - r,
            right: x + r,
            bottom: y + r,
        })
        .collect();
    let mut taken: Vec<Rect> = Vec::new();
    let mut out = Vec::with_capacity(names.len());
    for (name, &(x, y)) in names.iter().zip(centres) {
        let w = text_width(name, TEXT_PX).ceil();
        let h = TEXT_PX + 2.0;
        let gap = MARKER_RADIUS + 4.0;
        let candidates = [
            (
                (x + gap, y),
                HAlign::Start,
                VAlign::Middle,
                Rect {
                    left: x + gap,
                    top: y - h / 2.0,
                    right: x + gap + w,
                    bottom: y + h / 2.0,
                },
            ),
            (
                (x - gap, y),
                HAlign::End,
                VAlign::Middle,
                Rect {
                    left: x - gap - w,
                    top: y - h / 2.0,
                    right: x - gap,
                    bottom: y + h / 2.0,
                },
            ),
            (
                (x, y - gap),
                HAlign::Middle,
                VAlign::Baseline,
                Rect {
                    left: x - w / 2.0,
                    top: y - gap - h,
                    right: x + w / 2.0,
                    bottom: y - gap,
                },
            ),
            (
                (x, y + gap),
                HAlign::Middle,
                VAlign::Top,
                Rect {
                    left: x - w / 2.0,
                    top: y + gap,
                    right: x + w / 2.0,
                    bottom: y + gap + h,
                },
            ),
        ];
        let free = candidates.into_iter().find(|(_, _, _, rect)| {
            rect.left >= bounds.left
                && rect.top >= bounds.top
                && rect.right <= bounds.right
                && rect.bottom <= bounds.bottom
                && !markers
                    .iter()
                    .chain(&taken)
                    .any(|other| rect.overlaps(other))
        });
        let place = free.map(|(at, h, v, rect)| NamePlace { at, h, v, rect });
        if let Some(p) = &place {
            taken.push(p.rect);
        }
        out.push(place);
    }
    out
}

/// Where a well's name goes: the text anchor point and alignment, and the box it takes.
struct NamePlace {
    at: (f64, f64),
    h: HAlign,
    v: VAlign,
    rect: Rect,
}

#[derive(Debug, Clone, Copy)]
struct Rect {
    left: f64,
    top: f64,
    right: f64,
    bottom: f64,
}

impl Rect {
    fn overlaps(&self, other: &Rect) -> bool {
        self.left < other.right
            && other.left < self.right
            && self.top < other.bottom
            && other.top < self.bottom
    }
}

/// The colour bar (group "colour-bar") in the side panel: the scale from the lowest β
/// shown (bottom) to the highest (top), labelled at both ends and the middle. Returns
/// the group and the offset below it.
fn colour_bar(side: Area, (lo, hi): (f64, f64)) -> (Element, f64) {
    const TOP: f64 = 34.0;
    const HEIGHT: f64 = 160.0;
    const STEPS: u32 = 64;
    let (x0, x1) = (side.left + 12.0, side.left + 34.0);
    let top = side.top + TOP;
    let mut g = titled(
        group("colour-bar")
            .attr("data-min", lo)
            .attr("data-max", hi),
        "Stretching factor β",
    );
    g.push(text(
        (side.left + 8.0, side.top + 6.0),
        "Stretching factor β",
        bold_font(TEXT_PX).align(HAlign::Start, VAlign::Top),
    ));
    let step_height = HEIGHT / f64::from(STEPS);
    for i in 0..STEPS {
        // Step i covers the scale from t = i / STEPS upward; t = 0 is at the bottom.
        let t = if hi > lo {
            (f64::from(i) + 0.5) / f64::from(STEPS)
        } else {
            0.5
        };
        let y_top = top + HEIGHT - f64::from(i + 1) * step_height;
        // A hair taller than its step so that no seam shows between steps.
        g.push(rect(x0, y_top, x1 - x0, step_height + 0.5).fill(sequential_colour(t)));
    }
    g.push(rect(x0, top, x1 - x0, HEIGHT).no_fill().stroke(INK, 1.0));
    let labels = if hi > lo {
        vec![
            (hi, top),
            ((lo + hi) / 2.0, top + HEIGHT / 2.0),
            (lo, top + HEIGHT),
        ]
    } else {
        vec![(hi, top + HEIGHT / 2.0)]
    };
    for (value, y) in labels {
        g.push(line((x1, y), (x1 + 5.0, y)).stroke(INK, 1.0));
        g.push(text(
            (x1 + 9.0, y),
            format!("{value:.2}"),
            font(TEXT_PX).align(HAlign::Start, VAlign::Middle),
        ));
    }
    (g, TOP + HEIGHT + 18.0)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    #[test]
    fn the_colour_bar_spans_the_beta_range_of_the_wells_shown() {
        let data = sample_map();
        let svg = well_map_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let bar = &groups(&doc, "colour-bar")[0];
        let betas: Vec<f64> = data
            .wells
            .iter()
            .filter(|w| w.x_m.is_finite())
            .filter_map(|w| w.beta)
            .collect();
        let lo = betas.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = betas.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        assert_eq!(attr_f64(bar, "data-min"), lo);
        assert_eq!(attr_f64(bar, "data-max"), hi);
        let labels: Vec<f64> = bar
            .descendants()
            .filter(|n| n.has_tag_name("text"))
            .filter_map(|t| text_of(&t).parse().ok())
            .collect();
        let printed_lo = labels.iter().copied().fold(f64::INFINITY, f64::min);
        let printed_hi = labels.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        assert_eq!(format!("{printed_lo:.2}"), format!("{lo:.2}"));
        assert_eq!(format!("{printed_hi:.2}"), format!("{hi:.2}"));
        // The lowest and highest wells wear the two ends of the scale.
        let fill_of = |beta: f64| {
            let well = groups(&doc, "well")
                .into_iter()
                .find(|g| {
                    g.attribute("data-beta").and_then(|b| b.parse::<f64>().ok()) == Some(beta)
                })
                .unwrap();
            first_child(&well, "circle")
                .attribute("fill")
                .unwrap()
                .to_string()
        };
        // The ends of the viridis table in style.rs: #440154 (low) and #FDE725 (high).
        assert_eq!(fill_of(lo), "#440154");
        assert_eq!(fill_of(hi), "#FDE725");
    }

    #[test]
    fn wells_without_a_fit_are_hollow() {
        let data = sample_map();
        let svg = well_map_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let wells = groups(&doc, "well");
        assert_eq!(
            wells.len(),
            data.wells.iter().filter(|w| w.x_m.is_finite()).count()
        );
        for well in &wells {
            let circle = first_child(well, "circle");
            let hollow = circle.attribute("fill") == Some("none");
            assert_eq!(
                hollow,
                well.attribute("data-fit") == Some("no"),
                "{:?}",
                well.attribute("data-name")
            );
        }
        assert!(wells.iter().any(|w| w.attribute("data-fit") == Some("no")));
        assert!(legend_labels(&doc).iter().any(|l| l.contains("hollow")));
    }

    #[test]
    fn the_map_has_equal_scale_and_labelled_axes() {
        let svg = well_map_chart(&sample_map(), ChartSize::default());
        let doc = parse(&svg);
        let (xt, yt) = (x_ticks(&doc), y_ticks(&doc));
        let per_metre = |t: &[(f64, f64)]| {
            (t[t.len() - 1].1 - t[0].1).abs() / (t[t.len() - 1].0 - t[0].0).abs()
        };
        assert_close(
            per_metre(&xt) / per_metre(&yt),
            1.0,
            0.02,
            "x and y pixels per metre",
        );
        let labels = axis_labels(&doc);
        assert!(
            labels.contains(&"Easting (m)".to_string())
                && labels.contains(&"Northing (m)".to_string()),
            "{labels:?}"
        );
        assert_legible(&doc);
    }

    #[test]
    fn well_names_are_shown_and_never_overlap() {
        let data = sample_map();
        let svg = well_map_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let names: Vec<String> = groups(&doc, "well-names")
            .iter()
            .flat_map(|g| {
                g.descendants()
                    .filter(|n| n.has_tag_name("text"))
                    .map(|t| text_of(&t))
                    .collect::<Vec<_>>()
            })
            .collect();
        assert!(names.len() >= 3, "{names:?}");
        // Crowded wells: every placed name keeps clear of the others.
        let centres: Vec<(f64, f64)> = (0..12)
            .map(|i| (300.0 + 4.0 * f64::from(i), 200.0))
            .collect();
        let names: Vec<String> = (0..12).map(|i| format!("W-{i}")).collect();
        let refs: Vec<&str> = names.iter().map(String::as_str).collect();
        let bounds = Rect {
            left: 0.0,
            top: 0.0,
            right: 600.0,
            bottom: 400.0,
        };
        let placed = place_names(&refs, &centres, bounds);
        assert!(placed.iter().any(Option::is_none), "some names give way");
        let boxes: Vec<Rect> = placed.iter().flatten().map(|p| p.rect).collect();
        assert!(boxes.len() >= 2);
        for (i, a) in boxes.iter().enumerate() {
            assert!(
                boxes[i + 1..].iter().all(|b| !a.overlaps(b)),
                "two names overlap"
            );
            let r = MARKER_RADIUS;
            assert!(
                centres.iter().all(|&(x, y)| !a.overlaps(&Rect {
                    left: x - r,
                    top: y - r,
                    right: x + r,
                    bottom: y + r
                })),
                "a name covers a marker"
            );
        }
    }

    #[test]
    fn many_wells_are_not_named() {
        let wells = (0..50)
            .map(|i| MapWell {
                name: format!("W-{i}"),
                x_m: f64::from(i) * 1000.0,
                y_m: f64::from(i % 7) * 900.0,
                beta: Some(1.1),
            })
            .collect();
        let svg = well_map_chart(
            &WellMapData {
                title: "Many".into(),
                wells,
                sections: Vec::new(),
            },
            ChartSize::default(),
        );
        let doc = parse(&svg);
        assert!(groups(&doc, "well-names").is_empty());
        assert_eq!(groups(&doc, "well").len(), 50);
    }

    #[test]
    fn an_empty_study_says_no_wells() {
        let svg = well_map_chart(
            &WellMapData {
                title: "Empty study".into(),
                wells: Vec::new(),
                sections: Vec::new(),
            },
            ChartSize::default(),
        );
        let doc = parse(&svg);
        assert!(message(&doc).contains("No wells"));
        assert_legible(&doc);
    }

    #[test]
    fn a_section_line_is_drawn_through_its_points_and_widens_the_map() {
        let mut data = sample_map();
        // Invented: a line from beside the first well to well beyond the others.
        data.sections.push(MapSection {
            name: "Ridge line".into(),
            points: vec![(400_000.0, 6_100_000.0), (440_000.0, 6_120_000.0)],
        });
        let svg = well_map_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let line = groups(&doc, "section")
            .into_iter()
            .find(|g| g.attribute("data-name") == Some("Ridge line"))
            .expect("the section line");
        let points: Vec<(f64, f64)> = first_child(&line, "polyline")
            .attribute("points")
            .unwrap()
            .split_whitespace()
            .map(|p| {
                let (a, b) = p.split_once(',').unwrap();
                (a.parse().unwrap(), b.parse().unwrap())
            })
            .collect();
        let (x, y) = (x_axis_map(&doc), y_axis_map(&doc));
        assert_eq!(points.len(), 2);
        assert_close(points[1].0, x(440_000.0), 1.5, "the far end's easting");
        assert_close(points[1].1, y(6_120_000.0), 1.5, "the far end's northing");
        let right_edge = doc
            .descendants()
            .filter(|n| n.has_tag_name("rect"))
            .map(|n| attr_f64(&n, "width"))
            .fold(0.0, f64::max);
        assert!(points[1].0 < right_edge, "the far end lies on the chart");
        assert_legible(&doc);
    }
}
