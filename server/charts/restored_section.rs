//! The restored section of the section page: at one age, every horizon of the wells on
//! a section against distance along the line, below present sea level, with the
//! depositional surface and the base of each analysed column; the wells drawn as
//! columns at their distance.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Swatch, axes, centred_message, extent, legend, padded,
    plot_and_side, render,
};
use super::style::{INK, INK_SOFT, WATER, sequential_colour};
use super::svg::{Document, group, line, polyline, titled};

/// One well of the restored section at the chart's age.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RestoredColumn {
    pub name: String,
    /// Distance along the section (m).
    pub distance_m: f64,
    /// The depositional surface below present sea level (m, positive down).
    pub surface_m: f64,
    /// The base of the analysed column below present sea level (m).
    pub base_m: f64,
    /// (horizon, depth below present sea level in m), top down.
    pub horizons: Vec<(String, f64)>,
}

/// Everything the restored-section chart shows.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct RestoredSectionChartData {
    pub title: String,
    /// The wells with a record at the chart's age, any order.
    pub wells: Vec<RestoredColumn>,
}

/// Draw the restored section as an SVG document.
pub fn restored_section_chart(data: &RestoredSectionChartData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

fn draw(data: &RestoredSectionChartData, doc: &mut Document, body: Area) {
    let mut wells: Vec<&RestoredColumn> = data
        .wells
        .iter()
        .filter(|w| w.distance_m.is_finite() && w.surface_m.is_finite() && w.base_m.is_finite())
        .collect();
    if wells.is_empty() {
        doc.push(centred_message(
            body,
            "No restored section to show: no well has a record at this age.",
        ));
        return;
    }
    wells.sort_by(|a, b| a.distance_m.total_cmp(&b.distance_m));
    // Horizon names in the order they first appear, top down.
    let mut names: Vec<&str> = Vec::new();
    for w in &wells {
        for (h, _) in &w.horizons {
            if !names.contains(&h.as_str()) {
                names.push(h);
            }
        }
    }
    let (x_lo, x_hi) = extent(wells.iter().map(|w| w.distance_m / 1e3)).unwrap_or((0.0, 1.0));
    let (x_lo, x_hi) = padded(x_lo, x_hi, 0.04, 2.0);
    let depths = wells.iter().flat_map(|w| {
        [w.surface_m, w.base_m]
            .into_iter()
            .chain(w.horizons.iter().map(|h| h.1))
    });
    let (lo, hi) = extent(depths).unwrap_or((0.0, 1.0));
    let (top, bottom) = padded(lo.min(0.0), hi, 0.05, 10.0);
    let (panel, side) = plot_and_side(body);
    let spec = AxesSpec {
        x: x_lo..x_hi,
        y: bottom..top,
        x_desc: "Distance along the section (km)",
        y_desc: "Depth below present sea level (m)",
        y_label_area: 64.0,
        y_ticks: true,
    };
    let (plot, axes_group) = axes(panel, &spec);
    doc.push(axes_group);

    let colour = |i: usize| sequential_colour(i as f64 / (names.len().max(2) - 1) as f64);
    let mut horizons = group("horizons");
    for (i, name) in names.iter().enumerate() {
        let points: Vec<(f64, f64)> = wells
            .iter()
            .filter_map(|w| {
                let d = w.horizons.iter().find(|h| h.0 == *name)?.1;
                d.is_finite().then_some((w.distance_m / 1e3, d))
            })
            .collect();
        horizons.push(titled(
            group("horizon")
                .attr("data-horizon", *name)
                .child(polyline(plot.points(points)).stroke(colour(i), 2.0)),
            format!("Horizon {name}"),
        ));
    }
    doc.push(horizons);
    let along = |f: fn(&RestoredColumn) -> f64| -> Vec<(f64, f64)> {
        plot.points(wells.iter().map(|w| (w.distance_m / 1e3, f(w))))
    };
    doc.push(titled(
        group("surface").child(polyline(along(|w| w.surface_m)).stroke(WATER, 2.5)),
        "Depositional surface",
    ));
    doc.push(titled(
        group("base").child(polyline(along(|w| w.base_m)).stroke(INK, 2.0)),
        "Base of the analysed column",
    ));
    let mut columns = group("wells");
    for w in &wells {
        let x = plot.x.at(w.distance_m / 1e3);
        columns.push(titled(
            group("well")
                .attr("data-well", w.name.as_str())
                .attr("data-distance-km", w.distance_m / 1e3)
                .child(
                    line((x, plot.y.at(w.surface_m)), (x, plot.y.at(w.base_m)))
                        .stroke(INK_SOFT, 1.0),
                ),
            format!("Well {}", w.name),
        ));
    }
    doc.push(columns);

    let mut entries = vec![
        LegendEntry::new("Depositional surface", Swatch::Line(WATER)),
        LegendEntry::new("Base of column", Swatch::Line(INK)),
    ];
    entries.extend(
        names
            .iter()
            .enumerate()
            .map(|(i, n)| LegendEntry::new(*n, Swatch::Line(colour(i)))),
    );
    doc.push(legend(side, "Horizons", &entries, 6.0).0);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    /// Invented: two wells 12 km apart, a horizon deeper in the second.
    fn sample() -> RestoredSectionChartData {
        let column = |name: &str, d: f64, surface: f64, top: f64, base: f64| RestoredColumn {
            name: name.into(),
            distance_m: d,
            surface_m: surface,
            base_m: base,
            horizons: vec![("Sea floor".into(), surface), ("Top Marl".into(), top)],
        };
        RestoredSectionChartData {
            title: "Restored section, invented line, 40 Ma".into(),
            wells: vec![
                column("East", 14_000.0, 120.0, 1500.0, 2600.0),
                column("West", 2_000.0, 80.0, 900.0, 1800.0),
            ],
        }
    }

    #[test]
    fn horizons_join_the_wells_at_their_depths_and_depth_runs_down() {
        let data = sample();
        let svg = restored_section_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        assert!(axis_labels(&doc).contains(&"Depth below present sea level (m)".to_string()));
        let x = x_axis_map(&doc);
        let y = y_axis_map(&doc);
        assert!(y(2000.0) > y(500.0), "deeper lies lower");
        let marl = groups(&doc, "horizon")
            .into_iter()
            .find(|g| g.attribute("data-horizon") == Some("Top Marl"))
            .expect("the marl horizon");
        let points: Vec<(f64, f64)> = first_child(&marl, "polyline")
            .attribute("points")
            .unwrap()
            .split_whitespace()
            .map(|p| {
                let (a, b) = p.split_once(',').unwrap();
                (a.parse().unwrap(), b.parse().unwrap())
            })
            .collect();
        assert_eq!(points.len(), 2, "one point per well");
        // West (2 km, 900 m) comes first along the line, East (14 km, 1500 m) second.
        assert_close(points[0].0, x(2.0), 1.5, "west's distance");
        assert_close(points[0].1, y(900.0), 1.5, "west's depth");
        assert_close(points[1].0, x(14.0), 1.5, "east's distance");
        assert_close(points[1].1, y(1500.0), 1.5, "east's depth");
        assert_eq!(groups(&doc, "well").len(), 2);
        assert_legible(&doc);
    }

    #[test]
    fn no_well_gives_a_message() {
        let svg =
            restored_section_chart(&RestoredSectionChartData::default(), ChartSize::default());
        assert!(message(&parse(&svg)).contains("no well"));
    }
}
