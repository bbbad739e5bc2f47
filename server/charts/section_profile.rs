//! The deflection chart of the section page: along a section at one age, how far the
//! sediment load pushes the basement down when each column is compensated on its own
//! (local, Airy) and when the plate carries it (flexural, elastic thickness Te), with
//! the wells marked at their distance along the line.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Swatch, TEXT_PX, axes, centred_message, extent, font,
    legend, padded, plot_and_side, render,
};
use super::style::{DASH, INK_SOFT, REFERENCE, TECTONIC};
use super::svg::{Document, HAlign, VAlign, group, line, polyline, text, titled};

/// Everything the deflection chart shows.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SectionProfileChartData {
    pub title: String,
    /// Distance along the section (m) of each profile point, in order.
    pub distance_m: Vec<f64>,
    /// The load's deflection compensated locally (m, positive down), per point.
    pub local_deflection_m: Vec<f64>,
    /// The load's deflection on the plate (m, positive down), per point.
    pub flexural_deflection_m: Vec<f64>,
    /// The elastic thickness of the flexural profile (km).
    pub elastic_thickness_km: f64,
    /// The wells on the section: (name, distance along it in m).
    pub wells: Vec<(String, f64)>,
}

/// Draw the deflection chart as an SVG document.
pub fn section_profile_chart(data: &SectionProfileChartData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

/// (distance km, value) pairs of the finite points.
fn curve(distance_m: &[f64], values: &[f64]) -> Vec<(f64, f64)> {
    distance_m
        .iter()
        .zip(values)
        .filter(|(d, v)| d.is_finite() && v.is_finite())
        .map(|(d, v)| (d / 1e3, *v))
        .collect()
}

fn draw(data: &SectionProfileChartData, doc: &mut Document, body: Area) {
    let local = curve(&data.distance_m, &data.local_deflection_m);
    let flexural = curve(&data.distance_m, &data.flexural_deflection_m);
    if local.is_empty() && flexural.is_empty() {
        doc.push(centred_message(
            body,
            "No deflection to show: no well with a record lies on the section.",
        ));
        return;
    }
    let wells: Vec<(&str, f64)> = data
        .wells
        .iter()
        .filter(|w| w.1.is_finite())
        .map(|(n, d)| (n.as_str(), d / 1e3))
        .collect();
    let (x_lo, x_hi) = extent(
        local
            .iter()
            .chain(&flexural)
            .map(|p| p.0)
            .chain(wells.iter().map(|w| w.1)),
    )
    .unwrap_or((0.0, 1.0));
    let (x_lo, x_hi) = if x_hi > x_lo {
        (x_lo, x_hi)
    } else {
        padded(x_lo, x_hi, 0.0, 2.0)
    };
    let (lo, hi) = extent(local.iter().chain(&flexural).map(|p| p.1)).unwrap_or((0.0, 1.0));
    // Deflection is downward, deeper lower on the page; the axis spans the values (not
    // from 0), so the difference between the two compensations stays visible.
    let (top, bottom) = padded(lo, hi, 0.08, 2.0);
    let (panel, side) = plot_and_side(body);
    let spec = AxesSpec {
        x: x_lo..x_hi,
        y: bottom..top,
        x_desc: "Distance along the section (km)",
        y_desc: "Load deflection, down (m)",
        y_label_area: 64.0,
        y_ticks: true,
    };
    let (plot, axes_group) = axes(panel, &spec);
    doc.push(axes_group);
    let mut marks = group("wells");
    for (name, d) in &wells {
        let x = plot.x.at(*d);
        marks.push(titled(
            group("well")
                .attr("data-well", *name)
                .attr("data-distance-km", *d)
                .child(
                    line((x, plot.area.top), (x, plot.area.bottom()))
                        .stroke(INK_SOFT, 1.0)
                        .keyword("stroke-dasharray", "2 4"),
                ),
            format!(
                "Well {name}, {} km along the section",
                super::frame::number_label(*d)
            ),
        ));
    }
    if wells.len() <= 30 {
        for (name, d) in &wells {
            marks.push(text(
                (plot.x.at(*d) - 3.0, plot.area.top + 4.0),
                *name,
                font(TEXT_PX - 1.0)
                    .colour(INK_SOFT)
                    .align(HAlign::End, VAlign::Baseline)
                    .upright(),
            ));
        }
    }
    doc.push(marks);
    if !local.is_empty() {
        doc.push(titled(
            group("local")
                .keyword("stroke-dasharray", DASH)
                .child(polyline(plot.points(local.iter().copied())).stroke(REFERENCE, 2.0)),
            "Local (Airy) compensation",
        ));
    }
    if !flexural.is_empty() {
        doc.push(titled(
            group("flexural")
                .attr("data-te-km", data.elastic_thickness_km)
                .child(polyline(plot.points(flexural.iter().copied())).stroke(TECTONIC, 2.5)),
            format!(
                "Flexural, Te {} km",
                super::frame::number_label(data.elastic_thickness_km)
            ),
        ));
    }
    let entries = [
        LegendEntry::new(
            format!(
                "Flexural, Te {} km",
                super::frame::number_label(data.elastic_thickness_km)
            ),
            Swatch::Line(TECTONIC),
        ),
        LegendEntry::new("Local (Airy)", Swatch::DashedLine(REFERENCE)),
    ];
    doc.push(legend(side, "Compensation", &entries, 6.0).0);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    /// Invented profile: a load 400 m deep locally in the middle of a 40 km line, the
    /// plate spreading it to 250 m there.
    fn sample() -> SectionProfileChartData {
        let distance_m: Vec<f64> = (0..=40).map(|i| f64::from(i) * 1000.0).collect();
        let local: Vec<f64> = distance_m
            .iter()
            .map(|d| {
                if (15e3..=25e3).contains(d) {
                    400.0
                } else {
                    0.0
                }
            })
            .collect();
        let flexural: Vec<f64> = distance_m
            .iter()
            .map(|d| 250.0 * (-((d - 20e3) / 8e3).powi(2)).exp())
            .collect();
        SectionProfileChartData {
            title: "Load deflection, invented line".into(),
            distance_m,
            local_deflection_m: local,
            flexural_deflection_m: flexural,
            elastic_thickness_km: 20.0,
            wells: vec![("North".into(), 5e3), ("Middle".into(), 20e3)],
        }
    }

    #[test]
    fn deflection_runs_down_and_distance_right_with_units() {
        let svg = section_profile_chart(&sample(), ChartSize::default());
        let doc = parse(&svg);
        let labels = axis_labels(&doc);
        assert!(labels.contains(&"Distance along the section (km)".to_string()));
        assert!(labels.contains(&"Load deflection, down (m)".to_string()));
        let x = x_axis_map(&doc);
        assert!(x(10.0) < x(30.0), "distance grows to the right");
        let y = y_axis_map(&doc);
        assert!(
            y(300.0) > y(0.0),
            "a deeper deflection lies lower on the page"
        );
        assert_eq!(groups(&doc, "flexural").len(), 1);
        assert_eq!(groups(&doc, "local").len(), 1);
        assert!(legend_labels(&doc).iter().any(|l| l.contains("Te 20 km")));
        assert_legible(&doc);
    }

    #[test]
    fn each_well_is_marked_at_its_distance() {
        let svg = section_profile_chart(&sample(), ChartSize::default());
        let doc = parse(&svg);
        let x = x_axis_map(&doc);
        let marks = groups(&doc, "well");
        assert_eq!(marks.len(), 2);
        let middle = marks
            .iter()
            .find(|g| g.attribute("data-well") == Some("Middle"))
            .expect("the middle well");
        let mark = first_child(middle, "line");
        assert_close(
            attr_f64(&mark, "x1"),
            x(20.0),
            1.5,
            "the middle well's mark",
        );
    }

    #[test]
    fn nothing_to_draw_gives_a_message() {
        let svg = section_profile_chart(&SectionProfileChartData::default(), ChartSize::default());
        assert!(message(&parse(&svg)).contains("no well"));
    }
}
