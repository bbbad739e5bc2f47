//! Test helpers: reading the charts' SVG back (with roxmltree) and invented sample data.
//!
//! Positions are read through the tick labels the chart printed (value and pixel side
//! by side), so a series drawn off its axis shows up as a failure; the frame's own
//! tests check the mapping itself against coordinates worked out by hand.

use super::*;
use roxmltree::{Document, Node};

pub(crate) fn parse(svg: &str) -> Document<'_> {
    Document::parse(svg).unwrap_or_else(|e| panic!("not well-formed SVG ({e}):\n{svg}"))
}

/// The `<g data-series="series">` groups, in document order.
pub(crate) fn groups<'a>(doc: &'a Document<'a>, series: &str) -> Vec<Node<'a, 'a>> {
    doc.descendants()
        .filter(|n| n.has_tag_name("g") && n.attribute("data-series") == Some(series))
        .collect()
}

pub(crate) fn first_child<'a>(node: &Node<'a, 'a>, tag: &str) -> Node<'a, 'a> {
    node.descendants()
        .find(|n| n.has_tag_name(tag))
        .unwrap_or_else(|| panic!("no <{tag}> in group {:?}", node.attribute("data-series")))
}

pub(crate) fn attr_f64(node: &Node<'_, '_>, name: &str) -> f64 {
    let value = node
        .attribute(name)
        .unwrap_or_else(|| panic!("no attribute {name}"));
    value
        .parse()
        .unwrap_or_else(|_| panic!("attribute {name}={value} is not a number"))
}

pub(crate) fn text_of(node: &Node<'_, '_>) -> String {
    node.descendants()
        .filter(|n| n.is_text())
        .filter_map(|n| n.text())
        .collect::<String>()
        .trim()
        .to_string()
}

pub(crate) fn assert_close(actual: f64, expected: f64, tolerance: f64, what: &str) {
    assert!(
        (actual - expected).abs() <= tolerance,
        "{what}: {actual} vs expected {expected} (± {tolerance})"
    );
}

/// Texts of the "axes" group with their anchor, numeric value (if any) and position.
fn axis_texts<'a>(doc: &'a Document<'a>) -> Vec<(String, Option<f64>, f64, f64, String)> {
    groups(doc, "axes")
        .iter()
        .flat_map(|g| {
            g.descendants()
                .filter(|n| n.has_tag_name("text"))
                .collect::<Vec<_>>()
        })
        .map(|t| {
            let text = text_of(&t);
            let value = text.parse::<f64>().ok();
            (
                text,
                value,
                attr_f64(&t, "x"),
                attr_f64(&t, "y"),
                t.attribute("text-anchor").unwrap_or("").to_string(),
            )
        })
        .collect()
}

/// Linear map from value to pixel through the extreme printed ticks.
fn linear(ticks: &[(f64, f64)]) -> impl Fn(f64) -> f64 + use<> {
    let lo = ticks
        .iter()
        .copied()
        .min_by(|a, b| a.0.total_cmp(&b.0))
        .expect("at least two ticks");
    let hi = ticks
        .iter()
        .copied()
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .expect("at least two ticks");
    assert!(hi.0 > lo.0, "at least two distinct ticks: {ticks:?}");
    move |v| lo.1 + (v - lo.0) * (hi.1 - lo.1) / (hi.0 - lo.0)
}

/// x ticks: printed numbers centred under the plot.
pub(crate) fn x_ticks(doc: &Document<'_>) -> Vec<(f64, f64)> {
    axis_texts(doc)
        .into_iter()
        .filter(|t| t.4 == "middle")
        .filter_map(|t| t.1.map(|v| (v, t.2)))
        .collect()
}

/// y ticks: printed numbers right-aligned left of the plot.
pub(crate) fn y_ticks(doc: &Document<'_>) -> Vec<(f64, f64)> {
    axis_texts(doc)
        .into_iter()
        .filter(|t| t.4 == "end")
        .filter_map(|t| t.1.map(|v| (v, t.3)))
        .collect()
}

pub(crate) fn x_axis_map(doc: &Document<'_>) -> impl Fn(f64) -> f64 + use<> {
    linear(&x_ticks(doc))
}

pub(crate) fn y_axis_map(doc: &Document<'_>) -> impl Fn(f64) -> f64 + use<> {
    linear(&y_ticks(doc))
}

/// The axis labels (the non-numeric texts of the axes).
pub(crate) fn axis_labels(doc: &Document<'_>) -> Vec<String> {
    axis_texts(doc)
        .into_iter()
        .filter(|t| t.1.is_none())
        .map(|t| t.0)
        .collect()
}

pub(crate) fn legend_labels(doc: &Document<'_>) -> Vec<String> {
    groups(doc, "legend")
        .iter()
        .flat_map(|g| {
            g.descendants()
                .filter(|n| n.has_tag_name("text"))
                .map(|t| text_of(&t))
                .collect::<Vec<_>>()
        })
        .collect()
}

pub(crate) fn message(doc: &Document<'_>) -> String {
    groups(doc, "message")
        .first()
        .map(text_of)
        .unwrap_or_default()
}

/// Every text is at least 12 px, and no drawing marker was left behind.
pub(crate) fn assert_legible(doc: &Document<'_>) {
    for t in doc.descendants().filter(|n| n.has_tag_name("text")) {
        let size = attr_f64(&t, "font-size");
        assert!(size >= 12.0 - 1e-9, "text {:?} is {size} px", text_of(&t));
        assert!(
            !text_of(&t).contains("@@"),
            "a drawing marker was left in the SVG"
        );
    }
}

// Invented sample data (no real wells or places).

pub(crate) fn sample_subsidence() -> SubsidenceChartData {
    let ages = [120.0, 100.0, 85.0, 66.0, 40.0, 20.0, 0.0];
    let best = [0.0, 600.0, 1100.0, 1500.0, 1850.0, 2050.0, 2200.0];
    SubsidenceChartData {
        title: "Subsidence, well Q-7".into(),
        tectonic: ages
            .iter()
            .zip(best)
            .map(|(&age_ma, best_m)| TectonicPoint {
                age_ma,
                min_m: best_m - 80.0,
                best_m,
                max_m: best_m + 120.0,
            })
            .collect(),
        total: ages.iter().zip(best).map(|(&a, b)| (a, b * 1.45)).collect(),
        model_curve: (0..=24)
            .map(|i| 120.0 - 5.0 * f64::from(i))
            .map(|a| (a, 2200.0 * (1.0 - a / 120.0).powf(0.7)))
            .collect(),
        phases: vec![
            PhaseBand {
                name: "pre-rift".into(),
                from_ma: 120.0,
                to_ma: 100.0,
            },
            PhaseBand {
                name: "syn-rift".into(),
                from_ma: 100.0,
                to_ma: 85.0,
            },
            PhaseBand {
                name: "post-rift".into(),
                from_ma: 85.0,
                to_ma: 0.0,
            },
        ],
    }
}

pub(crate) fn sample_burial() -> BurialChartData {
    let horizon = |name: &str, depths: &[(f64, f64)]| BurialHorizon {
        name: name.into(),
        depths: depths.to_vec(),
    };
    let unit = |base: &str, lithology: &str, steps: &[(f64, f64, f64)]| BurialUnit {
        base_horizon: base.into(),
        lithology: lithology.into(),
        steps: steps
            .iter()
            .map(|&(age_ma, top_m, base_m)| BurialUnitStep {
                age_ma,
                top_m,
                base_m,
            })
            .collect(),
    };
    BurialChartData {
        title: "Burial history, well Q-7".into(),
        horizons: vec![
            horizon("Sea bed", &[(0.0, 0.0)]),
            horizon("Top Kettle Sand", &[(23.0, 0.0), (0.0, 700.0)]),
            horizon(
                "Top Brindle Shale",
                &[(56.0, 0.0), (23.0, 600.0), (0.0, 1450.0)],
            ),
            horizon(
                "Base Tern Chalk",
                &[(66.0, 0.0), (56.0, 200.0), (23.0, 850.0), (0.0, 1700.0)],
            ),
        ],
        units: vec![
            unit(
                "Top Kettle Sand",
                "shale:60;sandstone:40",
                &[(0.0, 0.0, 700.0)],
            ),
            unit(
                "Top Brindle Shale",
                "shale",
                &[(23.0, 0.0, 600.0), (0.0, 700.0, 1450.0)],
            ),
            unit(
                "Base Tern Chalk",
                "sandstone",
                &[
                    (56.0, 0.0, 200.0),
                    (23.0, 600.0, 850.0),
                    (0.0, 1450.0, 1700.0),
                ],
            ),
        ],
        water_depth: [
            (66.0, 150.0, 250.0, 400.0),
            (56.0, 100.0, 180.0, 300.0),
            (23.0, 50.0, 85.0, 120.0),
            (0.0, 100.0, 120.0, 150.0),
        ]
        .iter()
        .map(|&(age_ma, min_m, best_m, max_m)| WaterDepthPoint {
            age_ma,
            min_m,
            best_m,
            max_m,
        })
        .collect(),
    }
}

pub(crate) fn sample_heat_flow() -> HeatFlowChartData {
    // An invented curve: steady before the rift, a jump during it, then decay.
    let curve = (0..=24)
        .map(|i| 120.0 - 5.0 * f64::from(i))
        .map(|age: f64| {
            let q = if age > 100.0 {
                40.0
            } else {
                40.0 + 35.0 * (-(100.0 - age) / 35.0).exp()
            };
            (age, q)
        })
        .collect();
    HeatFlowChartData {
        title: "Heat flow, well Q-7".into(),
        heat_flow: curve,
        equilibrium_mw_m2: Some(40.0),
        phases: sample_subsidence().phases,
    }
}

pub(crate) fn sample_map() -> WellMapData {
    let well = |name: &str, x_m: f64, y_m: f64, beta: Option<f64>| MapWell {
        name: name.into(),
        x_m,
        y_m,
        beta,
    };
    WellMapData {
        title: "Wells by stretching factor".into(),
        wells: vec![
            well("Q-1", 402_500.0, 6_101_200.0, Some(1.18)),
            well("Q-2", 409_800.0, 6_106_900.0, Some(1.42)),
            well("Q-3", 415_300.0, 6_098_400.0, Some(1.65)),
            well("Q-4", 421_900.0, 6_112_300.0, None),
            well("Q-5", 411_200.0, 6_117_800.0, Some(1.31)),
            well("Q-6 (no coordinates)", f64::NAN, f64::NAN, Some(2.4)),
        ],
        sections: Vec::new(),
    }
}

pub(crate) fn sample_rift_timing() -> RiftTimingData {
    let well = |name: &str, rift_onset_ma: f64, rift_end_ma: f64| RiftTimingWell {
        name: name.into(),
        rift_onset_ma,
        rift_end_ma,
        later_events: Vec::new(),
    };
    RiftTimingData {
        title: "Rift timing across the study".into(),
        wells: vec![
            well("Q-1", 148.0, 128.0),
            well("Q-2", 152.5, 131.0),
            well("Q-3", 139.0, 121.5),
            well("Q-5 east flank", 145.0, 126.0),
        ],
        wells_without_fit: vec!["Q-4".into()],
    }
}

#[test]
fn every_chart_survives_odd_sizes_and_sparse_data() {
    let one_point = vec![(5.0, 60.0)];
    for (width, height) in [(0, 0), (1, 1), (120, 80), (300, 200), (2000, 1200)] {
        let size = ChartSize { width, height };
        let svgs = [
            subsidence_chart(
                &SubsidenceChartData {
                    title: "t".into(),
                    total: one_point.clone(),
                    ..Default::default()
                },
                size,
            ),
            burial_chart(
                &BurialChartData {
                    title: "b".into(),
                    horizons: vec![BurialHorizon {
                        name: "x".into(),
                        depths: vec![(0.0, 0.0)],
                    }],
                    ..Default::default()
                },
                size,
            ),
            heat_flow_chart(
                &HeatFlowChartData {
                    title: "h".into(),
                    heat_flow: one_point.clone(),
                    equilibrium_mw_m2: Some(f64::NAN),
                    phases: Vec::new(),
                },
                size,
            ),
            well_map_chart(
                &WellMapData {
                    title: "m".into(),
                    wells: vec![MapWell {
                        name: "A".into(),
                        x_m: 0.0,
                        y_m: 0.0,
                        beta: Some(1.2),
                    }],
                    sections: Vec::new(),
                },
                size,
            ),
            rift_timing_chart(
                &RiftTimingData {
                    title: "r".into(),
                    wells: vec![RiftTimingWell {
                        name: "A".into(),
                        rift_onset_ma: 10.0,
                        rift_end_ma: 10.0,
                        later_events: Vec::new(),
                    }],
                    wells_without_fit: Vec::new(),
                },
                size,
            ),
        ];
        for svg in svgs {
            let doc = parse(&svg);
            assert_eq!(
                doc.root_element().attribute("width"),
                Some(width.to_string().as_str())
            );
            assert!(!svg.contains("could not be drawn"), "{svg}");
        }
    }
}

/// Names that try every way out of an attribute value or a text node, as a user could
/// type them for a study, well, horizon, lithology or phase.
const HOSTILE: [&str; 6] = [
    "<script>alert('x')</script>",
    "Smith & Sons \"deep\" well",
    "]]> <![CDATA[ <g data-series=\"fake\"> ]]>",
    "O'Neil <b>bold</b> &amp; &#60;",
    "</title></g></svg><svg onload=\"x\">",
    "tab\tand\nline break",
];

#[test]
fn hostile_names_stay_text_in_every_chart() {
    let size = ChartSize::default();
    for (k, name) in HOSTILE.iter().enumerate() {
        let other = HOSTILE[(k + 1) % HOSTILE.len()];
        let mut subsidence = sample_subsidence();
        subsidence.title = name.to_string();
        subsidence.phases[1].name = name.to_string();
        let mut burial = sample_burial();
        burial.title = name.to_string();
        burial.horizons[1].name = name.to_string();
        burial.units[0].base_horizon = name.to_string();
        burial.units[1].lithology = other.to_string();
        let mut heat = sample_heat_flow();
        heat.title = name.to_string();
        heat.phases[0].name = name.to_string();
        let mut map = sample_map();
        map.title = name.to_string();
        map.wells[0].name = name.to_string();
        map.wells[3].name = other.to_string();
        let mut rift = sample_rift_timing();
        rift.title = name.to_string();
        rift.wells[0].name = name.to_string();
        rift.wells_without_fit = vec![other.to_string()];
        let charts = [
            ("subsidence", subsidence_chart(&subsidence, size)),
            ("burial", burial_chart(&burial, size)),
            ("heat flow", heat_flow_chart(&heat, size)),
            ("map", well_map_chart(&map, size)),
            ("rift timing", rift_timing_chart(&rift, size)),
        ];
        for (chart, svg) in charts {
            let doc = parse(&svg);
            let root = doc.root_element();
            assert_eq!(root.tag_name().name(), "svg", "{chart}");
            assert_eq!(
                root.first_element_child().and_then(|t| t.text()),
                Some(*name),
                "{chart}: the document title reads back as given"
            );
            // No element other than the writer's own, and only one <svg>.
            for node in doc.descendants().filter(|n| n.is_element()) {
                let tag = node.tag_name().name();
                assert!(
                    [
                        "svg", "title", "g", "rect", "line", "polyline", "polygon", "circle",
                        "text"
                    ]
                    .contains(&tag),
                    "{chart}: unexpected <{tag}> for {name:?}"
                );
                assert!(tag != "svg" || node == root, "{chart}: a second <svg>");
                assert!(
                    node.attributes().all(|a| !a.name().starts_with("on")),
                    "{chart}: an event attribute"
                );
            }
            // Every series is one of the charts' own; the hostile name is only ever text.
            assert!(groups(&doc, "fake").is_empty(), "{chart}");
            let named: Vec<&str> = doc
                .descendants()
                .filter_map(|n| n.attribute("data-name"))
                .collect();
            assert!(named.contains(name), "{chart}: {named:?}");
            let titles: Vec<&str> = doc
                .descendants()
                .filter(|n| n.has_tag_name("title"))
                .filter_map(|n| n.text())
                .collect();
            assert!(
                titles.iter().filter(|t| t.contains(name)).count() >= 2,
                "{chart}: the name in the document title and a series title: {titles:?}"
            );
        }
        let burial_doc = burial_chart(&burial, size);
        let doc = parse(&burial_doc);
        assert!(
            groups(&doc, "unit")
                .iter()
                .any(|u| u.attribute("data-lithology") == Some(other)
                    && u.attribute("data-base-horizon").is_some()),
            "the lithology reads back whole"
        );
        assert!(
            groups(&doc, "unit")
                .iter()
                .any(|u| u.attribute("data-base-horizon") == Some(*name))
        );
    }
}

/// Writes one of each chart, as SVG and PNG, to `<temp dir>/charts/` for a look:
/// `cargo test -p sagline-charts -- --ignored`.
#[test]
#[ignore = "writes files for visual review"]
fn render_samples_for_review() {
    let dir = std::env::temp_dir().join("charts");
    std::fs::create_dir_all(&dir).unwrap();
    let size = ChartSize::default();
    let charts = [
        ("subsidence", subsidence_chart(&sample_subsidence(), size)),
        ("burial", burial_chart(&sample_burial(), size)),
        ("heat_flow", heat_flow_chart(&sample_heat_flow(), size)),
        ("well_map", well_map_chart(&sample_map(), size)),
        (
            "rift_timing",
            rift_timing_chart(&sample_rift_timing(), size),
        ),
    ];
    for (name, svg) in charts {
        let png = svg_to_png(&svg, 1.0).unwrap();
        std::fs::write(dir.join(format!("{name}.png")), png).unwrap();
        std::fs::write(dir.join(format!("{name}.svg")), svg).unwrap();
    }
}
