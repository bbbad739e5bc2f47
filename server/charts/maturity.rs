//! The maturity chart of the well page: modelled vitrinite reflectance (EASY%Ro) of
//! every horizon through time, over the maturity windows.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Swatch, age_axis, axes, centred_message, legend,
    number_label, plot_and_side, render,
};
use super::style::{BAND_OPACITY, sequential_colour};
use super::svg::{Document, Paint, group, polyline, rect_between, titled};

/// One horizon's %Ro through time.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct MaturityHorizon {
    pub name: String,
    /// (age Ma, %Ro), any order.
    pub ro: Vec<(f64, f64)>,
}

/// A maturity window drawn as a band: (name, lower %Ro, upper %Ro).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct MaturityBand {
    pub name: String,
    pub ro_min: f64,
    pub ro_max: f64,
}

/// Everything the maturity chart shows.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct MaturityChartData {
    pub title: String,
    /// Horizons in well order (shallowest first).
    pub horizons: Vec<MaturityHorizon>,
    pub windows: Vec<MaturityBand>,
}

/// Draw the maturity chart as an SVG document.
pub fn maturity_chart(data: &MaturityChartData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

/// Window colours: warm for the first (oil), cool for the second (gas), grey after.
fn band_colour(i: usize) -> super::svg::Colour {
    match i {
        0 => super::svg::Colour(46, 139, 87),
        1 => super::svg::Colour(214, 110, 40),
        _ => super::svg::Colour(150, 150, 150),
    }
}

fn draw(data: &MaturityChartData, doc: &mut Document, body: Area) {
    let horizons: Vec<(&str, Vec<(f64, f64)>)> = data
        .horizons
        .iter()
        .map(|h| {
            let mut pts: Vec<(f64, f64)> =
                h.ro.iter()
                    .copied()
                    .filter(|p| p.0.is_finite() && p.1.is_finite())
                    .collect();
            pts.sort_by(|a, b| b.0.total_cmp(&a.0));
            (h.name.as_str(), pts)
        })
        .filter(|h| !h.1.is_empty())
        .collect();
    if horizons.is_empty() {
        doc.push(centred_message(
            body,
            "No maturity to show: the well has no thermal history yet.",
        ));
        return;
    }
    let highest = horizons
        .iter()
        .flat_map(|h| h.1.iter().map(|p| p.1))
        .fold(0.0, f64::max);
    let windows: Vec<&MaturityBand> = data
        .windows
        .iter()
        .filter(|w| w.ro_min.is_finite() && w.ro_max.is_finite() && w.ro_max > w.ro_min)
        .collect();
    // Show the first window whole even when nothing has reached it, so the reader sees
    // how far the horizons are from it.
    let reach = windows.first().map_or(0.0, |w| w.ro_max);
    let top = (highest.max(reach) * 1.08).max(0.5);
    let (panel, side) = plot_and_side(body);
    let spec = AxesSpec {
        x: age_axis(horizons.iter().flat_map(|h| h.1.iter().map(|p| p.0))),
        y: 0.0..top,
        x_desc: "Age (Ma)",
        y_desc: "Modelled vitrinite reflectance (EASY%Ro, %)",
        y_label_area: 64.0,
        y_ticks: true,
    };
    let (plot, axes_group) = axes(panel, &spec);
    for (i, w) in windows.iter().enumerate() {
        let (lo, hi) = (w.ro_min.max(0.0), w.ro_max.min(top));
        if hi <= lo {
            continue;
        }
        let x = &plot.x.data;
        doc.push(titled(
            group("window")
                .attr("data-name", w.name.as_str())
                .attr("data-ro-min", w.ro_min)
                .attr("data-ro-max", w.ro_max)
                .child(
                    rect_between(plot.at((x.start, lo)), plot.at((x.end, hi)))
                        .fill(Paint::solid(band_colour(i)))
                        .attr("fill-opacity", BAND_OPACITY),
                ),
            format!(
                "{} window {}-{} %Ro",
                w.name,
                number_label(w.ro_min),
                number_label(w.ro_max)
            ),
        ));
    }
    doc.push(axes_group);
    let n = horizons.len();
    let colour = |i: usize| {
        sequential_colour(if n > 1 {
            i as f64 / (n - 1) as f64
        } else {
            0.5
        })
    };
    for (i, (name, pts)) in horizons.iter().enumerate() {
        doc.push(titled(
            group("horizon-ro")
                .attr("data-horizon", *name)
                .attr("data-ro-now", pts.last().map_or(f64::NAN, |p| p.1))
                .child(polyline(plot.points(pts.iter().copied())).stroke(colour(i), 2.0)),
            format!(
                "{name}: {} %Ro today (model)",
                number_label(pts.last().map_or(f64::NAN, |p| p.1))
            ),
        ));
    }
    // The windows first: two entries that must show, however many horizons follow.
    let mut below = 6.0;
    if !windows.is_empty() {
        let entries: Vec<LegendEntry> = windows
            .iter()
            .enumerate()
            .map(|(i, w)| {
                LegendEntry::new(
                    format!(
                        "{} {}-{} %Ro",
                        w.name,
                        number_label(w.ro_min),
                        number_label(w.ro_max)
                    ),
                    Swatch::Fill(Paint::solid(band_colour(i))),
                )
            })
            .collect();
        let (block, next) = legend(side, "Windows", &entries, below);
        doc.push(block);
        below = next;
    }
    let entries: Vec<LegendEntry> = horizons
        .iter()
        .enumerate()
        .map(|(i, (name, _))| LegendEntry::new(*name, Swatch::Line(colour(i))))
        .collect();
    doc.push(legend(side, "Horizons", &entries, below).0);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    fn sample() -> MaturityChartData {
        MaturityChartData {
            title: "Maturity of well Test-1".into(),
            horizons: vec![
                MaturityHorizon {
                    name: "Top shallow".into(),
                    ro: vec![(50.0, 0.2), (25.0, 0.3), (0.0, 0.4)],
                },
                MaturityHorizon {
                    name: "Top deep".into(),
                    ro: vec![(100.0, 0.2), (50.0, 0.6), (0.0, 1.5)],
                },
            ],
            windows: vec![
                MaturityBand {
                    name: "oil".into(),
                    ro_min: 0.55,
                    ro_max: 1.3,
                },
                MaturityBand {
                    name: "gas".into(),
                    ro_min: 1.3,
                    ro_max: 2.0,
                },
            ],
        }
    }

    #[test]
    fn each_horizon_is_a_line_ending_at_its_present_value() {
        let svg = maturity_chart(&sample(), ChartSize::default());
        let doc = parse(&svg);
        assert_legible(&doc);
        let lines = groups(&doc, "horizon-ro");
        assert_eq!(lines.len(), 2);
        let y = y_axis_map(&doc);
        let deep = lines
            .iter()
            .find(|g| g.attribute("data-horizon") == Some("Top deep"))
            .unwrap();
        let points = first_child(deep, "polyline")
            .attribute("points")
            .unwrap()
            .to_string();
        let last_y: f64 = points
            .split_whitespace()
            .last()
            .unwrap()
            .split(',')
            .nth(1)
            .unwrap()
            .parse()
            .unwrap();
        assert_close(last_y, y(1.5), 0.6, "the deep horizon ends at 1.5 %Ro");
    }

    #[test]
    fn the_windows_are_bands_between_their_bounds() {
        let svg = maturity_chart(&sample(), ChartSize::default());
        let doc = parse(&svg);
        let y = y_axis_map(&doc);
        let oil = groups(&doc, "window")
            .into_iter()
            .find(|g| g.attribute("data-name") == Some("oil"))
            .expect("an oil band");
        let r = first_child(&oil, "rect");
        let (top, height) = (attr_f64(&r, "y"), attr_f64(&r, "height"));
        assert_close(top, y(1.3), 0.6, "top of the oil band");
        assert_close(top + height, y(0.55), 0.6, "base of the oil band");
        assert!(
            legend_labels(&doc)
                .iter()
                .any(|l| l.contains("oil 0.55-1.3"))
        );
    }

    #[test]
    fn no_horizons_gives_a_message_not_a_panic() {
        let svg = maturity_chart(&MaturityChartData::default(), ChartSize::default());
        assert!(message(&parse(&svg)).contains("No maturity"));
    }
}
