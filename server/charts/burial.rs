//! The burial-history chart of the well page: each horizon's burial depth through
//! time, the units between them filled by lithology, and the water column.
//!
//! Datum: depth below the depositional surface (the sediment surface of each age),
//! positive down, as the analysis reports horizon depths. The water column is drawn
//! above that surface, from 0 up to the palaeo-water depth, so its part of the axis
//! reads negative; the surface itself is drawn as a solid line at 0.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Plot, Swatch, TEXT_PX, age_axis, axes, centred_message,
    extent, fit_text, font, legend, old_to_young, padded, plot_and_side, render, spread_labels,
};
use super::style::{INK, WATER, lithology_colour, with_alpha};
use super::svg::{
    Document, Element, HAlign, Paint, VAlign, circle, group, polygon, polyline, text, titled,
};

/// One horizon's burial depth below the depositional surface through time.
#[derive(Debug, Clone, PartialEq)]
pub struct BurialHorizon {
    pub name: String,
    /// (age Ma, depth m); any order.
    pub depths: Vec<(f64, f64)>,
}

/// A unit's restored top and base at one age (m below the depositional surface).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BurialUnitStep {
    pub age_ma: f64,
    pub top_m: f64,
    pub base_m: f64,
}

/// One unit of the column through time.
#[derive(Debug, Clone, PartialEq)]
pub struct BurialUnit {
    /// The horizon at the unit's base; while the unit is being deposited (before its
    /// first step) it is drawn from the surface down to this horizon's line.
    pub base_horizon: String,
    /// Lithology label as the analysis writes it: `shale` or `shale:60;sandstone:40`.
    pub lithology: String,
    pub steps: Vec<BurialUnitStep>,
}

/// Palaeo-water depth at one age (m).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WaterDepthPoint {
    pub age_ma: f64,
    pub min_m: f64,
    pub best_m: f64,
    pub max_m: f64,
}

/// Everything the burial-history chart shows.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct BurialChartData {
    pub title: String,
    pub horizons: Vec<BurialHorizon>,
    pub units: Vec<BurialUnit>,
    pub water_depth: Vec<WaterDepthPoint>,
}

/// Width of the strip right of the plot that holds the horizon names.
const NAME_STRIP: f64 = 150.0;
/// Vertical distance between horizon names (px).
const NAME_GAP: f64 = 15.0;

/// Draw the burial-history chart as an SVG document.
pub fn burial_chart(data: &BurialChartData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

fn draw(data: &BurialChartData, doc: &mut Document, body: Area) {
    let horizons: Vec<(&str, Vec<(f64, f64)>)> = data
        .horizons
        .iter()
        .map(|h| (h.name.as_str(), old_to_young(&h.depths)))
        .filter(|(_, points)| !points.is_empty())
        .collect();
    if horizons.is_empty() {
        doc.push(centred_message(
            body,
            "No burial history to show for this well.",
        ));
        return;
    }
    let units: Vec<Vec<(f64, f64, f64)>> =
        data.units.iter().map(|u| unit_outline(u, data)).collect();
    let mut water: Vec<WaterDepthPoint> = data
        .water_depth
        .iter()
        .copied()
        .filter(|w| {
            [w.age_ma, w.min_m, w.best_m, w.max_m]
                .iter()
                .all(|v| v.is_finite())
        })
        .collect();
    water.sort_by(|a, b| b.age_ma.total_cmp(&a.age_ma));

    let ages = horizons
        .iter()
        .flat_map(|(_, p)| p.iter().map(|q| q.0))
        .chain(units.iter().flatten().map(|s| s.0))
        .chain(water.iter().map(|w| w.age_ma));
    let deepest = extent(
        horizons
            .iter()
            .flat_map(|(_, p)| p.iter().map(|q| q.1))
            .chain(units.iter().flatten().map(|s| s.2)),
    )
    .map_or(1.0, |(_, hi)| hi.max(1.0));
    let highest_water =
        extent(water.iter().map(|w| w.max_m.max(w.best_m))).map_or(0.0, |(_, hi)| hi.max(0.0));
    let (top, bottom) = padded(-highest_water, deepest, 0.04, 100.0);

    let (plot_panel, side) = plot_and_side(body);
    let (panel, names) = plot_panel.split_left((plot_panel.width - NAME_STRIP).max(0.0));
    let spec = AxesSpec {
        x: age_axis(ages),
        y: bottom..top,
        x_desc: "Age (Ma)",
        y_desc: "Depth below depositional surface (m)",
        y_label_area: 72.0,
        y_ticks: true,
    };
    let (plot, axes_group) = axes(panel, &spec);
    doc.push(axes_group);

    if !water.is_empty() {
        let [range, column] = water_groups(&plot, &water);
        doc.push(range);
        doc.push(column);
    }
    for (unit, outline) in data.units.iter().zip(&units) {
        if outline.len() < 2 {
            continue;
        }
        let mut outline_points: Vec<(f64, f64)> = outline.iter().map(|s| (s.0, s.1)).collect();
        outline_points.extend(outline.iter().rev().map(|s| (s.0, s.2)));
        doc.push(titled(
            group("unit")
                .attr("data-lithology", &unit.lithology)
                .attr("data-base-horizon", &unit.base_horizon)
                .child(
                    polygon(plot.points(outline_points))
                        .fill(with_alpha(lithology_colour(&unit.lithology), 0.9)),
                ),
            format!("{} above {}", unit.lithology, unit.base_horizon),
        ));
    }
    let x = &plot.x.data;
    doc.push(titled(
        group("depositional-surface")
            .child(polyline(plot.points([(x.start, 0.0), (x.end, 0.0)])).stroke(INK, 2.0)),
        "Depositional surface (depth 0)",
    ));

    for element in horizon_groups(&plot, names, &horizons) {
        doc.push(element);
    }

    let mut lithologies: Vec<&str> = Vec::new();
    for unit in &data.units {
        if !lithologies.contains(&unit.lithology.as_str()) {
            lithologies.push(&unit.lithology);
        }
    }
    let entries: Vec<LegendEntry> = lithologies
        .iter()
        .map(|l| {
            LegendEntry::new(
                lithology_legend_label(l),
                Swatch::Fill(with_alpha(lithology_colour(l), 0.9)),
            )
        })
        .collect();
    let mut below = 6.0;
    if !entries.is_empty() {
        let (g, y) = legend(side, "Lithology", &entries, below);
        doc.push(g);
        below = y;
    }
    if !water.is_empty() {
        let entries = [
            LegendEntry::new("Best estimate", Swatch::Fill(with_alpha(WATER, 0.55))),
            LegendEntry::new("Range", Swatch::Fill(with_alpha(WATER, 0.22))),
        ];
        doc.push(legend(side, "Water column", &entries, below).0);
    }
}

/// `shale:60;sandstone:40` as `shale 60%, sandstone 40%`.
fn lithology_legend_label(label: &str) -> String {
    label
        .split(';')
        .map(str::trim)
        .filter(|p| !p.is_empty())
        .map(|p| match p.split_once(':') {
            Some((name, pct)) => format!("{} {}%", name.trim(), pct.trim().trim_end_matches('%')),
            None => p.to_string(),
        })
        .collect::<Vec<_>>()
        .join(", ")
}

/// The unit's (age, top, base) from old to young, extended back through its
/// deposition (top at the surface, base on its base horizon) if the unit is the
/// first one laid on that horizon.
fn unit_outline(unit: &BurialUnit, data: &BurialChartData) -> Vec<(f64, f64, f64)> {
    let mut steps: Vec<(f64, f64, f64)> = unit
        .steps
        .iter()
        .filter(|s| s.age_ma.is_finite() && s.top_m.is_finite() && s.base_m.is_finite())
        .map(|s| (s.age_ma, s.top_m, s.base_m))
        .collect();
    steps.sort_by(|a, b| b.0.total_cmp(&a.0));
    let Some(&(oldest, _, _)) = steps.first() else {
        return steps;
    };
    // Several units can rest on one horizon (a section later eroded, then the unit
    // that replaced it); only the first one laid down grows from that horizon.
    let first_on_base = data
        .units
        .iter()
        .filter(|u| u.base_horizon == unit.base_horizon)
        .all(|u| {
            u.steps
                .iter()
                .all(|s| s.age_ma.is_nan() || s.age_ma <= oldest)
        });
    let base = data.horizons.iter().find(|h| h.name == unit.base_horizon);
    if let (true, Some(base)) = (first_on_base, base) {
        let growth: Vec<(f64, f64, f64)> = old_to_young(&base.depths)
            .into_iter()
            .filter(|p| p.0 > oldest)
            .map(|p| (p.0, 0.0, p.1))
            .collect();
        steps.splice(0..0, growth);
    }
    steps
}

/// Water column from the surface up to the best palaeo-water depth, with the
/// min-max range lighter behind it: groups "water-depth-range" and "water-column".
fn water_groups(plot: &Plot, water: &[WaterDepthPoint]) -> [Element; 2] {
    let mut range: Vec<(f64, f64)> = water.iter().map(|w| (w.age_ma, -w.min_m)).collect();
    range.extend(water.iter().rev().map(|w| (w.age_ma, -w.max_m)));
    let mut column: Vec<(f64, f64)> = water.iter().map(|w| (w.age_ma, 0.0)).collect();
    column.extend(water.iter().rev().map(|w| (w.age_ma, -w.best_m)));
    [
        titled(
            group("water-depth-range")
                .child(polygon(plot.points(range)).fill(with_alpha(WATER, 0.22))),
            "Palaeo-water depth range",
        ),
        titled(
            group("water-column").child(polygon(plot.points(column)).fill(with_alpha(WATER, 0.55))),
            "Palaeo-water depth, best estimate",
        ),
    ]
}

/// One group "horizon" per horizon with its line (a dot if it has a single point),
/// each followed by a group "horizon-name" with its name in the strip `names` right of
/// the plot, spread so that names never overlap and tied to the line's end by a leader.
fn horizon_groups(plot: &Plot, names: Area, horizons: &[(&str, Vec<(f64, f64)>)]) -> Vec<Element> {
    let area = plot.area;
    let ends: Vec<(f64, f64)> = horizons
        .iter()
        .map(|(_, p)| plot.at(p[p.len() - 1]))
        .collect();
    let wanted: Vec<f64> = ends.iter().map(|e| e.1).collect();
    // With too many horizons for the height, name every k-th (all keep a tooltip).
    let stride = ((horizons.len() as f64 * NAME_GAP) / area.height.max(1.0))
        .ceil()
        .max(1.0) as usize;
    let named: Vec<usize> = (0..horizons.len()).filter(|i| i % stride == 0).collect();
    let placed = spread_labels(
        &named.iter().map(|&i| wanted[i]).collect::<Vec<_>>(),
        NAME_GAP,
        area.top + 6.0,
        area.bottom() - 6.0,
    );
    let leader = Paint {
        colour: INK,
        opacity: 0.5,
    };
    let mut out = Vec::new();
    for (i, (name, points)) in horizons.iter().enumerate() {
        let mark = if points.len() >= 2 {
            polyline(plot.points(points.iter().copied())).stroke(INK, 1.0)
        } else {
            circle(ends[i], 3.0).fill(INK)
        };
        out.push(titled(
            group("horizon").attr("data-name", *name).child(mark),
            *name,
        ));
        if let Some(slot) = named.iter().position(|&k| k == i) {
            let (x, y) = ends[i];
            let label_y = placed[slot].round();
            out.push(
                group("horizon-name")
                    .attr("data-name", *name)
                    .child(
                        polyline(vec![(x + 2.0, y), (names.left + 10.0, label_y)])
                            .stroke(leader, 1.0),
                    )
                    .child(text(
                        (names.left + 14.0, label_y),
                        fit_text(name, names.width - 20.0, TEXT_PX),
                        font(TEXT_PX).align(HAlign::Start, VAlign::Middle),
                    )),
            );
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    #[test]
    fn one_horizon_line_per_horizon() {
        let data = sample_burial();
        let svg = burial_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let drawn = groups(&doc, "horizon");
        assert_eq!(drawn.len(), data.horizons.len());
        for (group, horizon) in drawn.iter().zip(&data.horizons) {
            assert_eq!(group.attribute("data-name"), Some(horizon.name.as_str()));
            // A horizon seen at one age only (the present sea bed) is a dot, the others lines.
            let mark = if horizon.depths.len() == 1 {
                "circle"
            } else {
                "polyline"
            };
            first_child(group, mark);
        }
        let lines: usize = drawn
            .iter()
            .map(|g| {
                g.descendants()
                    .filter(|n| n.has_tag_name("polyline"))
                    .count()
            })
            .sum();
        assert_eq!(
            lines,
            data.horizons.iter().filter(|h| h.depths.len() > 1).count()
        );
        let names: Vec<_> = groups(&doc, "horizon-name").iter().map(text_of).collect();
        assert_eq!(
            names,
            [
                "Sea bed",
                "Top Kettle Sand",
                "Top Brindle Shale",
                "Base Tern Chalk"
            ]
        );
    }

    #[test]
    fn horizon_names_do_not_overlap() {
        let svg = burial_chart(&sample_burial(), ChartSize::default());
        let doc = parse(&svg);
        let mut ys: Vec<f64> = groups(&doc, "horizon-name")
            .iter()
            .flat_map(|g| {
                g.descendants()
                    .filter(|n| n.has_tag_name("text"))
                    .map(|t| attr_f64(&t, "y"))
                    .collect::<Vec<_>>()
            })
            .collect();
        ys.sort_by(f64::total_cmp);
        assert_eq!(ys.len(), sample_burial().horizons.len());
        for pair in ys.windows(2) {
            assert!(
                pair[1] - pair[0] >= 13.0,
                "names {} and {} px apart",
                pair[0],
                pair[1]
            );
        }
    }

    #[test]
    fn units_are_filled_by_lithology_with_a_legend() {
        let data = sample_burial();
        let svg = burial_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let units = groups(&doc, "unit");
        assert_eq!(units.len(), data.units.len());
        let fill = |lithology: &str| {
            let unit = units
                .iter()
                .find(|u| u.attribute("data-lithology") == Some(lithology))
                .unwrap();
            first_child(unit, "polygon")
                .attribute("fill")
                .unwrap()
                .to_string()
        };
        assert_ne!(
            fill("sandstone"),
            fill("shale"),
            "different lithologies get different fills"
        );
        let legend = legend_labels(&doc);
        assert!(
            legend.join(" ").contains("shale 60%, sandstone 40%"),
            "{legend:?}"
        );
    }

    #[test]
    fn water_is_drawn_above_the_depositional_surface() {
        let svg = burial_chart(&sample_burial(), ChartSize::default());
        let doc = parse(&svg);
        let y = y_axis_map(&doc);
        let column = first_child(&groups(&doc, "water-column")[0], "polygon");
        let points: Vec<f64> = column
            .attribute("points")
            .unwrap()
            .split_whitespace()
            .map(|p| p.split(',').nth(1).unwrap().parse().unwrap())
            .collect();
        assert!(
            points.iter().all(|&py| py <= y(0.0) + 1.0),
            "the water column lies above depth 0"
        );
        assert!(points.iter().any(|&py| py < y(0.0) - 5.0));
        let labels = axis_labels(&doc);
        assert!(
            labels.contains(&"Depth below depositional surface (m)".to_string()),
            "{labels:?}"
        );
        assert!(y(2000.0) > y(0.0), "depth increases downwards");
        assert_legible(&doc);
    }

    #[test]
    fn a_unit_grows_from_its_base_horizon_while_it_is_deposited() {
        let data = sample_burial();
        let top_unit = &data.units[0];
        let outline = unit_outline(top_unit, &data);
        // Its base horizon appears at 23 Ma at the surface; the unit's first restored
        // step is at 0 Ma, so the outline starts at 23 Ma with zero thickness.
        assert_eq!(outline.first(), Some(&(23.0, 0.0, 0.0)));
        assert_eq!(outline.last().map(|s| s.0), Some(0.0));
    }

    #[test]
    fn no_horizons_gives_a_message() {
        let svg = burial_chart(&BurialChartData::default(), ChartSize::default());
        assert!(message(&parse(&svg)).contains("No burial history"));
    }
}
