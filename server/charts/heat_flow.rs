//! The heat-flow chart of the well page: basal (mantle) heat flow through time from the
//! stretching fit, against the equilibrium (pre-rift) heat flow.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Swatch, age_axis, axes, centred_message, extent,
    legend, number_label, old_to_young, plot_and_side, render,
};
use super::style::{DASH, HEAT, REFERENCE, phase_colour};
use super::subsidence::{PhaseBand, line_with_points, phase_bands};
use super::svg::{Document, group, polyline, titled};

/// Everything the heat-flow chart shows.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct HeatFlowChartData {
    pub title: String,
    /// (age Ma, basal heat flow mW/m²); any order.
    pub heat_flow: Vec<(f64, f64)>,
    /// The equilibrium heat flow of the unstretched lithosphere (mW/m²).
    pub equilibrium_mw_m2: Option<f64>,
    /// Rift phases to shade behind the curve (may be empty).
    pub phases: Vec<PhaseBand>,
}

/// Draw the heat-flow chart as an SVG document.
pub fn heat_flow_chart(data: &HeatFlowChartData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

/// Above this many points the curve is drawn without a dot at each.
const MAX_DOTTED_POINTS: usize = 60;

fn draw(data: &HeatFlowChartData, doc: &mut Document, body: Area) {
    let curve = old_to_young(&data.heat_flow);
    if curve.is_empty() {
        doc.push(centred_message(
            body,
            "No heat flow to show: the well has no stretching fit yet.",
        ));
        return;
    }
    let equilibrium = data.equilibrium_mw_m2.filter(|v| v.is_finite());
    let phases: Vec<&PhaseBand> = data
        .phases
        .iter()
        .filter(|p| p.from_ma.is_finite() && p.to_ma.is_finite())
        .collect();
    let ages = curve
        .iter()
        .map(|p| p.0)
        .chain(phases.iter().flat_map(|p| [p.from_ma, p.to_ma]));
    let (lowest, highest) =
        extent(curve.iter().map(|p| p.1).chain(equilibrium)).unwrap_or((0.0, 1.0));
    // Heat flow is positive: the axis starts at 0 so that changes are seen in proportion
    // (and lower only for a value below 0, which then stays on the chart).
    let top = if highest > 0.0 { highest * 1.12 } else { 1.0 };
    let bottom = lowest.min(0.0);
    let (panel, side) = plot_and_side(body);
    let spec = AxesSpec {
        x: age_axis(ages),
        y: bottom..top,
        x_desc: "Age (Ma)",
        y_desc: "Basal heat flow (mW/m²)",
        y_label_area: 64.0,
        y_ticks: true,
    };
    let (plot, axes_group) = axes(panel, &spec);
    doc.push(axes_group);
    for band in phase_bands(&plot, &phases) {
        doc.push(band);
    }
    if let Some(q) = equilibrium {
        let x = &plot.x.data;
        doc.push(titled(
            group("equilibrium")
                .attr("data-value", q)
                .keyword("stroke-dasharray", DASH)
                .child(polyline(plot.points([(x.start, q), (x.end, q)])).stroke(REFERENCE, 2.0)),
            format!("Equilibrium {} mW/m²", number_label(q)),
        ));
    }
    let heat = if curve.len() > MAX_DOTTED_POINTS {
        group("heat-flow").child(polyline(plot.points(curve.iter().copied())).stroke(HEAT, 2.0))
    } else {
        line_with_points(&plot, &curve, HEAT, group("heat-flow"))
    };
    doc.push(titled(heat, "Basal (mantle) heat flow"));

    let mut entries = vec![LegendEntry::new("Heat flow (fit)", Swatch::Line(HEAT))];
    if let Some(q) = equilibrium {
        entries.push(LegendEntry::new(
            format!("Equilibrium {} mW/m²", number_label(q)),
            Swatch::DashedLine(REFERENCE),
        ));
    }
    let (series, below) = legend(side, "Series", &entries, 6.0);
    doc.push(series);
    if !phases.is_empty() {
        let entries: Vec<LegendEntry> = phases
            .iter()
            .enumerate()
            .map(|(i, p)| LegendEntry::new(p.name.clone(), Swatch::Fill(phase_colour(&p.name, i))))
            .collect();
        doc.push(legend(side, "Phases", &entries, below).0);
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    #[test]
    fn the_equilibrium_line_sits_at_its_value() {
        let data = sample_heat_flow();
        let svg = heat_flow_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let y = y_axis_map(&doc);
        let group = &groups(&doc, "equilibrium")[0];
        assert!(
            group.attribute("stroke-dasharray").is_some(),
            "the reference line is dashed"
        );
        let line = first_child(group, "polyline");
        let ys: Vec<f64> = line
            .attribute("points")
            .unwrap()
            .split_whitespace()
            .map(|p| p.split(',').nth(1).unwrap().parse().unwrap())
            .collect();
        for py in ys {
            assert_close(
                py,
                y(data.equilibrium_mw_m2.unwrap()),
                1.5,
                "equilibrium line",
            );
        }
        assert!(legend_labels(&doc).iter().any(|l| l.contains("mW/m²")));
    }

    #[test]
    fn heat_flow_axis_has_units_and_time_runs_old_to_young() {
        let svg = heat_flow_chart(&sample_heat_flow(), ChartSize::default());
        let doc = parse(&svg);
        assert!(axis_labels(&doc).contains(&"Basal heat flow (mW/m²)".to_string()));
        let x = x_axis_map(&doc);
        assert!(x(100.0) < x(10.0));
        let y = y_axis_map(&doc);
        assert!(
            y(80.0) < y(40.0),
            "higher heat flow lies higher on the page"
        );
        assert_eq!(groups(&doc, "heat-flow").len(), 1);
        assert_legible(&doc);
    }

    #[test]
    fn no_fit_gives_a_message() {
        let svg = heat_flow_chart(&HeatFlowChartData::default(), ChartSize::default());
        assert!(message(&parse(&svg)).contains("no stretching fit"));
    }
}
