//! The well map of the study overview: wells at their projected coordinates,
//! coloured by stretching factor on a colour-blind-safe sequential scale, at equal
//! scale in x and y. Wells without a fit are drawn hollow.

use super::ChartSize;
use super::frame::{
    Area, AxesSpec, DrawResult, LegendEntry, Swatch, TEXT_PX, anchored, bold_font, draw_axes,
    draw_legend, draw_message, extent, font, padded, plot_and_side, plot_pixels, render,
    text_width, wrap_text,
};
use super::style::{INK, INK_SOFT, NO_FIT, sequential_colour};
use super::svg::{Group, Tags};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

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

#[derive(Debug, Clone, Default, PartialEq)]
pub struct WellMapData {
    pub title: String,
    pub wells: Vec<MapWell>,
}

/// Wells are named on the map up to this many; beyond it the names would crowd
/// the map, and each marker keeps its name as a tooltip.
pub const MAX_NAMED_WELLS: usize = 40;
const MARKER_RADIUS: i32 = 7;
const Y_LABEL_AREA: u32 = 84;

/// Draw the well map as an SVG document.
pub fn well_map_chart(data: &WellMapData, size: ChartSize) -> String {
    render(size, &data.title, |body, tags| draw(data, body, tags))
}

fn draw(data: &WellMapData, body: &Area<'_>, tags: &mut Tags) -> DrawResult {
    let shown: Vec<&MapWell> = data
        .wells
        .iter()
        .filter(|w| w.x_m.is_finite() && w.y_m.is_finite())
        .collect();
    let unplaced = data.wells.len() - shown.len();
    if shown.is_empty() {
        let message = if unplaced == 0 {
            "No wells in this study yet.".to_string()
        } else {
            format!("No wells to show: {unplaced} without coordinates.")
        };
        return draw_message(body, tags, &message);
    }
    let beta = |w: &MapWell| w.beta.filter(|b| b.is_finite());
    let beta_range = extent(shown.iter().filter_map(|w| beta(w)));

    let (plot, side) = plot_and_side(body);
    let (w_px, h_px) = plot_pixels(&plot, Y_LABEL_AREA)?;
    let (x_range, y_range) = equal_scale(&shown, f64::from(w_px.max(1)), f64::from(h_px.max(1)));
    let spec = AxesSpec {
        x: x_range,
        y: y_range,
        x_desc: "Easting (m)",
        y_desc: "Northing (m)",
        y_label_area: Y_LABEL_AREA,
        y_ticks: true,
    };
    let chart = draw_axes(&plot, tags, &spec)?;
    let origin = plot.get_base_pixel();
    let centres: Vec<(i32, i32)> = shown
        .iter()
        .map(|w| chart.backend_coord(&(w.x_m, w.y_m)))
        .map(|(x, y)| (x - origin.0, y - origin.1))
        .collect();

    for (well, &centre) in shown.iter().zip(&centres) {
        let group = Group::new("well").attr("data-name", &well.name);
        match beta(well) {
            Some(b) => {
                let fill = sequential_colour(scale_position(b, beta_range));
                let title = format!("{}: β = {b:.2}", well.name);
                tags.open(
                    &plot,
                    group
                        .attr("data-fit", "yes")
                        .attr("data-beta", b)
                        .title(&title),
                )?;
                plot.draw(&Circle::new(centre, MARKER_RADIUS as u32, fill.filled()))?;
                plot.draw(&Circle::new(
                    centre,
                    MARKER_RADIUS as u32,
                    INK.stroke_width(1),
                ))?;
            }
            None => {
                tags.open(
                    &plot,
                    group
                        .attr("data-fit", "no")
                        .title(&format!("{}: no stretching fit", well.name)),
                )?;
                plot.draw(&Circle::new(
                    centre,
                    MARKER_RADIUS as u32 - 1,
                    NO_FIT.stroke_width(2),
                ))?;
            }
        }
    }
    tags.close(&plot)?;
    if shown.len() <= MAX_NAMED_WELLS {
        let (x_px, y_px) = chart.plotting_area().get_pixel_range();
        let bounds = (
            x_px.start - origin.0,
            y_px.start - origin.1,
            x_px.end - origin.0,
            y_px.end - origin.1,
        );
        let names: Vec<&str> = shown.iter().map(|w| w.name.as_str()).collect();
        tags.open(&plot, Group::new("well-names"))?;
        for (name, place) in names.iter().zip(place_names(&names, &centres, bounds)) {
            if let Some(place) = place {
                plot.draw(&Text::new(
                    name.to_string(),
                    place.at,
                    anchored(font(TEXT_PX), place.h, place.v),
                ))?;
            }
        }
        tags.close(&plot)?;
    }

    let below = match beta_range {
        Some(range) => draw_colour_bar(&side, tags, range)?,
        None => {
            side.draw(&Text::new(
                "No stretching fits yet.",
                (8, 12),
                font(TEXT_PX).color(&INK_SOFT),
            ))?;
            40
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
    let below = draw_legend(&side, tags, "Wells", &entries, below)?;
    if unplaced > 0 {
        let note = if unplaced == 1 {
            "1 well without coordinates is not shown.".to_string()
        } else {
            format!("{unplaced} wells without coordinates are not shown.")
        };
        let (side_w, _) = side.dim_in_pixel();
        tags.open(&side, Group::new("note"))?;
        for (k, line) in wrap_text(&note, f64::from(side_w) - 16.0, TEXT_PX, 4)
            .into_iter()
            .enumerate()
        {
            side.draw(&Text::new(
                line,
                (8, below + 16 * k as i32),
                font(TEXT_PX).color(&INK_SOFT),
            ))?;
        }
        tags.close(&side)?;
    }
    Ok(())
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
    w_px: f64,
    h_px: f64,
) -> (std::ops::Range<f64>, std::ops::Range<f64>) {
    let (x_lo, x_hi) = extent(wells.iter().map(|w| w.x_m)).unwrap_or((0.0, 1.0));
    let (y_lo, y_hi) = extent(wells.iter().map(|w| w.y_m)).unwrap_or((0.0, 1.0));
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
/// stays inside `bounds` (left, top, right, bottom) and clear of every marker and
/// earlier name. Names with no free place are left out.
fn place_names(
    names: &[&str],
    centres: &[(i32, i32)],
    bounds: (i32, i32, i32, i32),
) -> Vec<Option<NamePlace>> {
    let r = MARKER_RADIUS + 1;
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
        let w = text_width(name, TEXT_PX).ceil() as i32;
        let h = TEXT_PX as i32 + 2;
        let gap = MARKER_RADIUS + 4;
        let candidates = [
            (
                (x + gap, y),
                HPos::Left,
                VPos::Center,
                Rect {
                    left: x + gap,
                    top: y - h / 2,
                    right: x + gap + w,
                    bottom: y + h / 2,
                },
            ),
            (
                (x - gap, y),
                HPos::Right,
                VPos::Center,
                Rect {
                    left: x - gap - w,
                    top: y - h / 2,
                    right: x - gap,
                    bottom: y + h / 2,
                },
            ),
            (
                (x, y - gap),
                HPos::Center,
                VPos::Bottom,
                Rect {
                    left: x - w / 2,
                    top: y - gap - h,
                    right: x + w / 2,
                    bottom: y - gap,
                },
            ),
            (
                (x, y + gap),
                HPos::Center,
                VPos::Top,
                Rect {
                    left: x - w / 2,
                    top: y + gap,
                    right: x + w / 2,
                    bottom: y + gap + h,
                },
            ),
        ];
        let free = candidates.into_iter().find(|(_, _, _, rect)| {
            rect.left >= bounds.0
                && rect.top >= bounds.1
                && rect.right <= bounds.2
                && rect.bottom <= bounds.3
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
    at: (i32, i32),
    h: HPos,
    v: VPos,
    rect: Rect,
}

#[derive(Debug, Clone, Copy)]
struct Rect {
    left: i32,
    top: i32,
    right: i32,
    bottom: i32,
}

impl Rect {
    fn overlaps(&self, other: &Rect) -> bool {
        self.left < other.right
            && other.left < self.right
            && self.top < other.bottom
            && other.top < self.bottom
    }
}

/// The colour bar (group "colour-bar"): the scale from the lowest β shown (bottom)
/// to the highest (top), labelled at both ends and the middle. Returns the y below it.
fn draw_colour_bar(side: &Area<'_>, tags: &mut Tags, (lo, hi): (f64, f64)) -> DrawResult<i32> {
    const TOP: i32 = 34;
    const HEIGHT: i32 = 160;
    const STEPS: i32 = 64;
    let (x0, x1) = (12, 34);
    let group = Group::new("colour-bar")
        .attr("data-min", lo)
        .attr("data-max", hi)
        .title("Stretching factor β");
    tags.open(side, group)?;
    side.draw(&Text::new(
        "Stretching factor β",
        (8, 6),
        bold_font(TEXT_PX),
    ))?;
    for i in 0..STEPS {
        // Step i covers the scale from t = i / STEPS upward; t = 0 is at the bottom.
        let t = if hi > lo {
            (f64::from(i) + 0.5) / f64::from(STEPS)
        } else {
            0.5
        };
        let y_bottom = TOP + HEIGHT - i * HEIGHT / STEPS;
        let y_top = TOP + HEIGHT - (i + 1) * HEIGHT / STEPS;
        side.draw(&Rectangle::new(
            [(x0, y_top), (x1, y_bottom)],
            sequential_colour(t).filled(),
        ))?;
    }
    side.draw(&Rectangle::new(
        [(x0, TOP), (x1, TOP + HEIGHT)],
        INK.stroke_width(1),
    ))?;
    let labels = if hi > lo {
        vec![
            (hi, TOP),
            ((lo + hi) / 2.0, TOP + HEIGHT / 2),
            (lo, TOP + HEIGHT),
        ]
    } else {
        vec![(hi, TOP + HEIGHT / 2)]
    };
    for (value, y) in labels {
        side.draw(&PathElement::new(
            vec![(x1, y), (x1 + 5, y)],
            INK.stroke_width(1),
        ))?;
        side.draw(&Text::new(
            format!("{value:.2}"),
            (x1 + 9, y),
            anchored(font(TEXT_PX), HPos::Left, VPos::Center),
        ))?;
    }
    tags.close(side)?;
    Ok(TOP + HEIGHT + 18)
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
        assert_eq!(fill_of(lo), crate::sequential_colour_hex(0.0));
        assert_eq!(fill_of(hi), crate::sequential_colour_hex(1.0));
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
        let centres: Vec<(i32, i32)> = (0..12).map(|i| (300 + 4 * i, 200)).collect();
        let names: Vec<String> = (0..12).map(|i| format!("W-{i}")).collect();
        let refs: Vec<&str> = names.iter().map(String::as_str).collect();
        let placed = place_names(&refs, &centres, (0, 0, 600, 400));
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
            },
            ChartSize::default(),
        );
        let doc = parse(&svg);
        assert!(message(&doc).contains("No wells"));
        assert_legible(&doc);
    }
}
