//! The subsidence chart of the well page: total and tectonic subsidence through
//! time, the tectonic curve's water-depth range, the fitted model curve and the
//! rift phases as shaded bands.

use super::ChartSize;
use super::frame::{
    Area, AxesSpec, Chart, DrawResult, LegendEntry, Swatch, TEXT_PX, age_axis, anchored, draw_axes,
    draw_legend, draw_message, extent, font, number_label, padded, plot_and_side, render,
    text_width,
};
use super::style::{BAND_OPACITY, DASH, MODEL, TECTONIC, TOTAL, phase_colour, with_alpha};
use super::svg::{Group, Tags};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, VPos};

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
    render(size, &data.title, |body, tags| draw(data, body, tags))
}

fn draw(data: &SubsidenceChartData, body: &Area<'_>, tags: &mut Tags) -> DrawResult {
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
        return draw_message(body, tags, "No subsidence history to show for this well.");
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
    let (plot, side) = plot_and_side(body);
    let spec = AxesSpec {
        x: age_axis(ages),
        y: bottom..top.min(0.0),
        x_desc: "Age (Ma)",
        y_desc: "Subsidence below sea level (m)",
        y_label_area: 72,
        y_ticks: true,
    };
    let mut chart = draw_axes(&plot, tags, &spec)?;
    mark_age_axis(&chart, &plot, tags)?;

    draw_phase_bands(&mut chart, &plot, tags, &phases)?;

    if !tectonic.is_empty() {
        let mut outline: Vec<(f64, f64)> = tectonic.iter().map(|p| (p.age_ma, p.min_m)).collect();
        outline.extend(tectonic.iter().rev().map(|p| (p.age_ma, p.max_m)));
        tags.open(
            &plot,
            Group::new("tectonic-range").title("Tectonic subsidence: water-depth range"),
        )?;
        chart.draw_series(std::iter::once(Polygon::new(
            outline,
            with_alpha(TECTONIC, BAND_OPACITY).filled(),
        )))?;
    }
    if !total.is_empty() {
        tags.open(
            &plot,
            Group::new("total-subsidence").title("Total subsidence"),
        )?;
        chart.draw_series(
            LineSeries::new(total.iter().copied(), TOTAL.stroke_width(2)).point_size(3),
        )?;
    }
    if !tectonic.is_empty() {
        tags.open(
            &plot,
            Group::new("tectonic-best").title("Tectonic subsidence (best)"),
        )?;
        let line = tectonic.iter().map(|p| (p.age_ma, p.best_m));
        chart.draw_series(LineSeries::new(line, TECTONIC.stroke_width(2)).point_size(3))?;
    }
    if model.len() >= 2 {
        tags.open(
            &plot,
            Group::new("model-curve")
                .attr("stroke-dasharray", DASH)
                .title("Fitted model"),
        )?;
        chart.draw_series(LineSeries::new(
            model.iter().copied(),
            MODEL.stroke_width(2),
        ))?;
    }
    tags.close(&plot)?;

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
    let below = draw_legend(&side, tags, "Series", &entries, 6)?;
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
        draw_legend(&side, tags, "Phases (Ma)", &phase_entries, below)?;
    }
    Ok(())
}

fn phase_legend_label(p: &PhaseBand) -> String {
    format!(
        "{} {}–{}",
        p.name,
        number_label(p.from_ma),
        number_label(p.to_ma)
    )
}

/// Finite points sorted from old to young.
pub(crate) fn old_to_young(points: &[(f64, f64)]) -> Vec<(f64, f64)> {
    let mut out: Vec<(f64, f64)> = points
        .iter()
        .copied()
        .filter(|p| p.0.is_finite() && p.1.is_finite())
        .collect();
    out.sort_by(|a, b| b.0.total_cmp(&a.0));
    out
}

/// Shade each phase as a full-height band (group "phase-band" with its name and
/// ages), named at the top of the band when the name fits inside it.
/// Record where the age axis lies in SVG pixels, so a page script can turn a click on
/// the chart into an age: `data-age-a-ma` sits at `data-px-a`, `data-age-b-ma` at `data-px-b`.
fn mark_age_axis(chart: &Chart<'_, '_>, plot: &Area<'_>, tags: &mut Tags) -> DrawResult {
    let x = chart.x_range();
    let y = chart.y_range();
    let (px_a, _) = chart.backend_coord(&(x.start, y.end));
    let (px_b, _) = chart.backend_coord(&(x.end, y.end));
    let group = Group::new("age-axis")
        .attr("data-age-a-ma", x.start)
        .attr("data-px-a", px_a)
        .attr("data-age-b-ma", x.end)
        .attr("data-px-b", px_b);
    tags.open(plot, group)?;
    tags.close(plot)
}

pub(crate) fn draw_phase_bands(
    chart: &mut Chart<'_, '_>,
    plot: &Area<'_>,
    tags: &mut Tags,
    phases: &[&PhaseBand],
) -> DrawResult {
    let y = chart.y_range();
    let (y_bottom, y_top) = (y.start, y.end);
    let origin = plot.get_base_pixel();
    for (i, phase) in phases.iter().enumerate() {
        let group = Group::new("phase-band")
            .attr("data-name", &phase.name)
            .attr("data-from-ma", phase.from_ma)
            .attr("data-to-ma", phase.to_ma)
            .title(&phase_legend_label(phase));
        tags.open(plot, group)?;
        let corners = [(phase.from_ma, y_top), (phase.to_ma, y_bottom)];
        chart.draw_series(std::iter::once(Rectangle::new(
            corners,
            phase_colour(&phase.name, i).filled(),
        )))?;
        let (left, top) = chart.backend_coord(&(phase.from_ma, y_top));
        let (right, _) = chart.backend_coord(&(phase.to_ma, y_top));
        let width = f64::from((right - left).abs());
        if text_width(&phase.name, TEXT_PX) + 8.0 <= width {
            let centre = ((left + right) / 2 - origin.0, top + 6 - origin.1);
            plot.draw(&Text::new(
                phase.name.clone(),
                centre,
                anchored(font(TEXT_PX), HPos::Center, VPos::Top),
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
