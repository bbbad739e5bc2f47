//! The burial-history chart of the well page: each horizon's burial depth through
//! time, the units between them filled by lithology, and the water column.
//!
//! Datum: depth below the depositional surface (the sediment surface of each age),
//! positive down, as the analysis reports horizon depths. The water column is drawn
//! above that surface, from 0 up to the palaeo-water depth, so its part of the axis
//! reads negative; the surface itself is drawn as a solid line at 0.

use super::ChartSize;
use super::frame::{
    Area, AxesSpec, Chart, DrawResult, LegendEntry, Swatch, TEXT_PX, age_axis, anchored, draw_axes,
    draw_legend, draw_message, extent, fit_text, font, padded, plot_and_side, render,
    spread_labels,
};
use super::style::{INK, WATER, lithology_colour, with_alpha};
use super::subsidence::old_to_young;
use super::svg::{Group, Tags};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

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
const NAME_STRIP: u32 = 150;
/// Vertical distance between horizon names (px).
const NAME_GAP: f64 = 15.0;

/// Draw the burial-history chart as an SVG document.
pub fn burial_chart(data: &BurialChartData, size: ChartSize) -> String {
    render(size, &data.title, |body, tags| draw(data, body, tags))
}

fn draw(data: &BurialChartData, body: &Area<'_>, tags: &mut Tags) -> DrawResult {
    let horizons: Vec<(&str, Vec<(f64, f64)>)> = data
        .horizons
        .iter()
        .map(|h| (h.name.as_str(), old_to_young(&h.depths)))
        .filter(|(_, points)| !points.is_empty())
        .collect();
    if horizons.is_empty() {
        return draw_message(body, tags, "No burial history to show for this well.");
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
    let (panel_w, _) = plot_panel.dim_in_pixel();
    let (plot, names) = plot_panel.split_horizontally(panel_w.saturating_sub(NAME_STRIP));
    let spec = AxesSpec {
        x: age_axis(ages),
        y: bottom..top,
        x_desc: "Age (Ma)",
        y_desc: "Depth below depositional surface (m)",
        y_label_area: 72,
        y_ticks: true,
    };
    let mut chart = draw_axes(&plot, tags, &spec)?;

    draw_water(&mut chart, &plot, tags, &water)?;
    for (unit, outline) in data.units.iter().zip(&units) {
        if outline.len() < 2 {
            continue;
        }
        let mut polygon: Vec<(f64, f64)> = outline.iter().map(|s| (s.0, s.1)).collect();
        polygon.extend(outline.iter().rev().map(|s| (s.0, s.2)));
        let group = Group::new("unit")
            .attr("data-lithology", &unit.lithology)
            .attr("data-base-horizon", &unit.base_horizon)
            .title(&format!("{} above {}", unit.lithology, unit.base_horizon));
        tags.open(&plot, group)?;
        chart.draw_series(std::iter::once(Polygon::new(
            polygon,
            with_alpha(lithology_colour(&unit.lithology), 0.9).filled(),
        )))?;
    }
    tags.open(
        &plot,
        Group::new("depositional-surface").title("Depositional surface (depth 0)"),
    )?;
    let x = chart.x_range();
    chart.draw_series(LineSeries::new(
        [(x.start, 0.0), (x.end, 0.0)],
        INK.stroke_width(2),
    ))?;
    tags.close(&plot)?;

    draw_horizons(&mut chart, &plot, &names, tags, &horizons)?;

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
    let mut below = 6;
    if !entries.is_empty() {
        below = draw_legend(&side, tags, "Lithology", &entries, below)?;
    }
    if !water.is_empty() {
        let entries = [
            LegendEntry::new("Best estimate", Swatch::Fill(with_alpha(WATER, 0.55))),
            LegendEntry::new("Range", Swatch::Fill(with_alpha(WATER, 0.22))),
        ];
        draw_legend(&side, tags, "Water column", &entries, below)?;
    }
    Ok(())
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
/// min-max range lighter behind it.
fn draw_water(
    chart: &mut Chart<'_, '_>,
    plot: &Area<'_>,
    tags: &mut Tags,
    water: &[WaterDepthPoint],
) -> DrawResult {
    if water.is_empty() {
        return Ok(());
    }
    let mut range: Vec<(f64, f64)> = water.iter().map(|w| (w.age_ma, -w.min_m)).collect();
    range.extend(water.iter().rev().map(|w| (w.age_ma, -w.max_m)));
    tags.open(
        plot,
        Group::new("water-depth-range").title("Palaeo-water depth range"),
    )?;
    chart.draw_series(std::iter::once(Polygon::new(
        range,
        with_alpha(WATER, 0.22).filled(),
    )))?;
    let mut column: Vec<(f64, f64)> = water.iter().map(|w| (w.age_ma, 0.0)).collect();
    column.extend(water.iter().rev().map(|w| (w.age_ma, -w.best_m)));
    tags.open(
        plot,
        Group::new("water-column").title("Palaeo-water depth, best estimate"),
    )?;
    chart.draw_series(std::iter::once(Polygon::new(
        column,
        with_alpha(WATER, 0.55).filled(),
    )))?;
    tags.close(plot)?;
    Ok(())
}

/// One group "horizon" per horizon with its line (a dot if it has a single point),
/// then a group "horizon-name" with its name in the strip right of the plot, spread
/// so that names never overlap and tied to the line's end by a leader.
fn draw_horizons(
    chart: &mut Chart<'_, '_>,
    plot: &Area<'_>,
    names: &Area<'_>,
    tags: &mut Tags,
    horizons: &[(&str, Vec<(f64, f64)>)],
) -> DrawResult {
    let plot_origin = plot.get_base_pixel();
    let names_origin = names.get_base_pixel();
    let (strip_w, _) = names.dim_in_pixel();
    let (_, y_px) = chart.plotting_area().get_pixel_range();
    let ends: Vec<(i32, i32)> = horizons
        .iter()
        .map(|(_, p)| chart.backend_coord(&p[p.len() - 1]))
        .collect();
    let wanted: Vec<f64> = ends.iter().map(|e| f64::from(e.1)).collect();
    let span = f64::from(y_px.end - y_px.start);
    // With too many horizons for the height, name every k-th (all keep a tooltip).
    let stride = ((horizons.len() as f64 * NAME_GAP) / span.max(1.0))
        .ceil()
        .max(1.0) as usize;
    let named: Vec<usize> = (0..horizons.len()).filter(|i| i % stride == 0).collect();
    let placed = spread_labels(
        &named.iter().map(|&i| wanted[i]).collect::<Vec<_>>(),
        NAME_GAP,
        f64::from(y_px.start) + 6.0,
        f64::from(y_px.end) - 6.0,
    );
    for (i, (name, points)) in horizons.iter().enumerate() {
        tags.open(
            plot,
            Group::new("horizon").attr("data-name", name).title(name),
        )?;
        if points.len() >= 2 {
            chart.draw_series(LineSeries::new(points.iter().copied(), INK.stroke_width(1)))?;
        } else {
            let (x, y) = ends[i];
            plot.draw(&Circle::new(
                (x - plot_origin.0, y - plot_origin.1),
                3,
                INK.filled(),
            ))?;
        }
        if let Some(slot) = named.iter().position(|&k| k == i) {
            tags.open(names, Group::new("horizon-name").attr("data-name", name))?;
            let (x, y) = ends[i];
            let label_y = placed[slot].round() as i32;
            let leader = vec![
                (x - names_origin.0 + 2, y - names_origin.1),
                (10, label_y - names_origin.1),
            ];
            names.draw(&PathElement::new(leader, INK.mix(0.5).stroke_width(1)))?;
            let text = fit_text(name, f64::from(strip_w) - 20.0, TEXT_PX);
            names.draw(&Text::new(
                text,
                (14, label_y - names_origin.1),
                anchored(font(TEXT_PX), HPos::Left, VPos::Center),
            ))?;
        }
    }
    tags.close(plot)?;
    Ok(())
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
