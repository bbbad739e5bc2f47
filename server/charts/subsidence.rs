//! The subsidence chart of the well page: total and tectonic subsidence through
//! time, the tectonic curve's water-depth range, the fitted model curve and the
//! rift phases as shaded bands.

use super::frame::{
    Area, AxesSpec, ChartSize, LegendEntry, Plot, Swatch, TEXT_PX, age_axis, axes, centred_message,
    extent, font, legend, number_label, old_to_young, padded, plot_and_side, render, text_width,
};
use super::style::{BAND_OPACITY, DASH, MODEL, TECTONIC, TOTAL, phase_colour, with_alpha};
use super::svg::{
    Document, Element, HAlign, VAlign, circle, group, polygon, polyline, rect_between, text, titled,
};

/// Tectonic subsidence at one age: the best estimate and the range that follows
/// from the palaeo-water-depth range (m below sea level).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TectonicPoint {
    pub age_ma: f64,
    pub min_m: f64,
    pub best_m: f64,
    pub max_m: f64,
}

/// A rift phase (pre-rift, syn-rift, post-rift or any other named interval).
#[derive(Debug, Clone, PartialEq)]
pub struct PhaseBand {
    pub name: String,
    /// Older end of the interval (Ma).
    pub from_ma: f64,
    /// Younger end of the interval (Ma).
    pub to_ma: f64,
}

/// Everything the subsidence chart shows. Depths are metres below sea level,
/// positive down; points may come in any order. Empty `model_curve` or `phases`
/// (no fit yet) are simply left out.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct SubsidenceChartData {
    pub title: String,
    pub tectonic: Vec<TectonicPoint>,
    /// Total subsidence: (age Ma, basement depth m).
    pub total: Vec<(f64, f64)>,
    /// The fitted model's tectonic subsidence: (age Ma, depth m).
    pub model_curve: Vec<(f64, f64)>,
    pub phases: Vec<PhaseBand>,
}

/// Draw the subsidence chart as an SVG document.
pub fn subsidence_chart(data: &SubsidenceChartData, size: ChartSize) -> String {
    render(size, &data.title, |doc, body| draw(data, doc, body))
}

fn draw(data: &SubsidenceChartData, doc: &mut Document, body: Area) {
    let mut tectonic: Vec<TectonicPoint> = data
        .tectonic
        .iter()
        .copied()
        .filter(|p| {
            [p.age_ma, p.min_m, p.best_m, p.max_m]
                .iter()
                .all(|v| v.is_finite())
        })
        .collect();
    tectonic.sort_by(|a, b| b.age_ma.total_cmp(&a.age_ma));
    let total = old_to_young(&data.total);
    let model = old_to_young(&data.model_curve);
    let phases: Vec<&PhaseBand> = data
        .phases
        .iter()
        .filter(|p| p.from_ma.is_finite() && p.to_ma.is_finite())
        .collect();
    if tectonic.is_empty() && total.is_empty() {
        doc.push(centred_message(
            body,
            "No subsidence history to show for this well.",
        ));
        return;
    }

    let ages = tectonic
        .iter()
        .map(|p| p.age_ma)
        .chain(total.iter().chain(&model).map(|p| p.0))
        .chain(phases.iter().flat_map(|p| [p.from_ma, p.to_ma]));
    let depths = tectonic
        .iter()
        .flat_map(|p| [p.min_m, p.best_m, p.max_m])
        .chain(total.iter().chain(&model).map(|p| p.1));
    let (shallow, deep) = extent(depths).unwrap_or((0.0, 1.0));
    let (top, bottom) = padded(shallow.min(0.0), deep.max(0.0), 0.04, 100.0);
    let (panel, side) = plot_and_side(body);
    let spec = AxesSpec {
        x: age_axis(ages),
        y: bottom..top.min(0.0),
        x_desc: "Age (Ma)",
        y_desc: "Subsidence below sea level (m)",
        y_label_area: 72.0,
        y_ticks: true,
    };
    let (plot, axes_group) = axes(panel, &spec);
    doc.push(axes_group);
    doc.push(age_axis_record(&plot));
    for band in phase_bands(&plot, &phases) {
        doc.push(band);
    }

    if !tectonic.is_empty() {
        let mut outline: Vec<(f64, f64)> = tectonic.iter().map(|p| (p.age_ma, p.min_m)).collect();
        outline.extend(tectonic.iter().rev().map(|p| (p.age_ma, p.max_m)));
        doc.push(titled(
            group("tectonic-range")
                .child(polygon(plot.points(outline)).fill(with_alpha(TECTONIC, BAND_OPACITY))),
            "Tectonic subsidence: water-depth range",
        ));
    }
    if !total.is_empty() {
        doc.push(titled(
            line_with_points(&plot, &total, TOTAL, group("total-subsidence")),
            "Total subsidence",
        ));
    }
    if !tectonic.is_empty() {
        let best: Vec<(f64, f64)> = tectonic.iter().map(|p| (p.age_ma, p.best_m)).collect();
        doc.push(titled(
            line_with_points(&plot, &best, TECTONIC, group("tectonic-best")),
            "Tectonic subsidence (best)",
        ));
    }
    if model.len() >= 2 {
        doc.push(titled(
            group("model-curve")
                .keyword("stroke-dasharray", DASH)
                .child(polyline(plot.points(model.iter().copied())).stroke(MODEL, 2.0)),
            "Fitted model",
        ));
    }

    let mut entries = Vec::new();
    if !total.is_empty() {
        entries.push(LegendEntry::new("Total subsidence", Swatch::Line(TOTAL)));
    }
    if !tectonic.is_empty() {
        entries.push(LegendEntry::new("Tectonic (best)", Swatch::Line(TECTONIC)));
        entries.push(LegendEntry::new(
            "Tectonic, water-depth range",
            Swatch::Fill(with_alpha(TECTONIC, BAND_OPACITY)),
        ));
    }
    if model.len() >= 2 {
        entries.push(LegendEntry::new("Fitted model", Swatch::DashedLine(MODEL)));
    }
    let (series_legend, below) = legend(side, "Series", &entries, 6.0);
    doc.push(series_legend);
    if !phases.is_empty() {
        let phase_entries: Vec<LegendEntry> = phases
            .iter()
            .enumerate()
            .map(|(i, p)| {
                LegendEntry::new(
                    phase_legend_label(p),
                    Swatch::Fill(phase_colour(&p.name, i)),
                )
            })
            .collect();
        doc.push(legend(side, "Phases (Ma)", &phase_entries, below).0);
    }
}

/// A 2 px line through `points` with a 3 px ring at each, in `group`.
pub(crate) fn line_with_points(
    plot: &Plot,
    points: &[(f64, f64)],
    colour: super::svg::Colour,
    group: Element,
) -> Element {
    let px = plot.points(points.iter().copied());
    let mut g = group.child(polyline(px.clone()).stroke(colour, 2.0));
    for p in px {
        g.push(circle(p, 3.0).no_fill().stroke(colour, 2.0));
    }
    g
}

fn phase_legend_label(p: &PhaseBand) -> String {
    format!(
        "{} {}–{}",
        p.name,
        number_label(p.from_ma),
        number_label(p.to_ma)
    )
}

/// Where the age axis lies in SVG pixels (group "age-axis"), so a page script can turn
/// a click on the chart into an age: `data-age-a-ma` sits at `data-px-a`,
/// `data-age-b-ma` at `data-px-b`.
fn age_axis_record(plot: &Plot) -> Element {
    let x = &plot.x;
    group("age-axis")
        .attr("data-age-a-ma", x.data.start)
        .attr("data-px-a", x.px.0)
        .attr("data-age-b-ma", x.data.end)
        .attr("data-px-b", x.px.1)
}

/// Each phase as a full-height band (group "phase-band" with its name and ages),
/// named at the top of the band when the name fits inside it.
pub(crate) fn phase_bands(plot: &Plot, phases: &[&PhaseBand]) -> Vec<Element> {
    let area = plot.area;
    phases
        .iter()
        .enumerate()
        .map(|(i, phase)| {
            let (left, right) = (plot.x.at(phase.from_ma), plot.x.at(phase.to_ma));
            let mut band = titled(
                group("phase-band")
                    .attr("data-name", &phase.name)
                    .attr("data-from-ma", phase.from_ma)
                    .attr("data-to-ma", phase.to_ma),
                phase_legend_label(phase),
            )
            .child(
                rect_between((left, area.top), (right, area.bottom()))
                    .fill(phase_colour(&phase.name, i)),
            );
            if text_width(&phase.name, TEXT_PX) + 8.0 <= (right - left).abs() {
                band.push(text(
                    ((left + right) / 2.0, area.top + 6.0),
                    phase.name.clone(),
                    font(TEXT_PX).align(HAlign::Middle, VAlign::Top),
                ));
            }
            band
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::test_support::*;

    #[test]
    fn phase_bands_sit_at_the_x_positions_of_their_ages() {
        let data = sample_subsidence();
        let svg = subsidence_chart(&data, ChartSize::default());
        let doc = parse(&svg);
        let to_px = x_axis_map(&doc);
        let bands = groups(&doc, "phase-band");
        assert_eq!(bands.len(), data.phases.len());
        for (band, phase) in bands.iter().zip(&data.phases) {
            assert_eq!(band.attribute("data-name"), Some(phase.name.as_str()));
            let rect = first_child(band, "rect");
            let (x, w) = (attr_f64(&rect, "x"), attr_f64(&rect, "width"));
            // Old on the left: the band's left edge is its older age.
            assert_close(x, to_px(phase.from_ma), 1.5, "left edge of the band");
            assert_close(x + w, to_px(phase.to_ma), 1.5, "right edge of the band");
        }
        // By hand (layout in frame.rs): the ages run 120-0 Ma over x = 80..688 px, so
        // 100 Ma lies at 80 + 20/120 * 608 = 181.33 and 85 Ma at 80 + 35/120 * 608 = 257.33.
        let syn = &bands[1];
        let rect = first_child(syn, "rect");
        assert_eq!(syn.attribute("data-name"), Some("syn-rift"));
        assert_close(attr_f64(&rect, "x"), 181.33, 0.01, "syn-rift left edge");
        assert_close(attr_f64(&rect, "width"), 76.0, 0.01, "syn-rift width");
        // Full height of the plot: y = 54..422.
        assert_close(attr_f64(&rect, "y"), 54.0, 0.01, "band top");
        assert_close(attr_f64(&rect, "height"), 368.0, 0.01, "band height");
    }

    #[test]
    fn time_runs_old_to_young_and_depth_increases_downwards() {
        let doc_text = subsidence_chart(&sample_subsidence(), ChartSize::default());
        let doc = parse(&doc_text);
        let x = x_axis_map(&doc);
        assert!(x(100.0) < x(0.0), "older ages lie to the left");
        let y = y_axis_map(&doc);
        assert!(y(3000.0) > y(0.0), "deeper lies lower on the page");
    }

    #[test]
    fn axis_labels_carry_units_and_text_is_legible() {
        let svg = subsidence_chart(&sample_subsidence(), ChartSize::default());
        let doc = parse(&svg);
        let labels = axis_labels(&doc);
        assert!(labels.contains(&"Age (Ma)".to_string()), "{labels:?}");
        assert!(labels.iter().any(|l| l.contains("(m)")), "{labels:?}");
        assert_legible(&doc);
    }

    #[test]
    fn every_series_is_drawn_and_the_model_is_dashed() {
        let doc_text = subsidence_chart(&sample_subsidence(), ChartSize::default());
        let doc = parse(&doc_text);
        for series in [
            "total-subsidence",
            "tectonic-best",
            "tectonic-range",
            "model-curve",
        ] {
            assert_eq!(groups(&doc, series).len(), 1, "{series}");
        }
        let model = &groups(&doc, "model-curve")[0];
        assert!(model.attribute("stroke-dasharray").is_some());
        first_child(model, "polyline");
        first_child(&groups(&doc, "tectonic-range")[0], "polygon");
        assert!(
            legend_labels(&doc)
                .iter()
                .any(|l| l.starts_with("syn-rift"))
        );
    }

    #[test]
    fn a_well_without_a_fit_is_drawn_without_model_and_phases() {
        let data = SubsidenceChartData {
            model_curve: Vec::new(),
            phases: Vec::new(),
            ..sample_subsidence()
        };
        let doc_text = subsidence_chart(&data, ChartSize::default());
        let doc = parse(&doc_text);
        assert!(groups(&doc, "model-curve").is_empty());
        assert!(groups(&doc, "phase-band").is_empty());
        assert_eq!(groups(&doc, "tectonic-best").len(), 1);
    }

    #[test]
    fn no_history_gives_a_message() {
        let data = SubsidenceChartData {
            title: "Empty".into(),
            ..Default::default()
        };
        let doc_text = subsidence_chart(&data, ChartSize::default());
        let doc = parse(&doc_text);
        assert!(message(&doc).contains("No subsidence history"));
    }
}
