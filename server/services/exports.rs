//! What every download carries: the study name, the parameters used, the date and
//! the caution line, so that a file that leaves the app explains itself.

use sagline_science::analysis::StudyInputs;
use serde::Serialize;

/// The caution shown on every page and export.
pub const CAUTION: &str = "Results are interpretations computed from the data and parameters shown. They support, and do not replace, the judgement of qualified geoscientists and the rules that apply locally.";

/// The header block of an export.
#[derive(Debug, Clone, Serialize)]
pub struct ExportMeta {
    pub study: String,
    pub generated_at: String,
    pub generated_by: String,
    pub parameters: sagline_science::analysis::contract::ParametersOut,
    pub caution: &'static str,
}

impl ExportMeta {
    pub fn new(study: &str, inputs: &StudyInputs) -> Self {
        let now = time::OffsetDateTime::now_utc();
        ExportMeta {
            study: study.to_string(),
            generated_at: now
                .format(&time::format_description::well_known::Rfc3339)
                .unwrap_or_else(|_| now.unix_timestamp().to_string()),
            generated_by: format!("Sagline {}", env!("CARGO_PKG_VERSION")),
            parameters: sagline_science::analysis::parameters_out(inputs),
            caution: CAUTION,
        }
    }

    /// The model parameters on one line, `name=value; …`.
    fn parameter_line(&self) -> String {
        self.parameters
            .model
            .entries()
            .iter()
            .map(|(r, v)| format!("{}={v}", r.name))
            .collect::<Vec<_>>()
            .join("; ")
    }

    fn lithology_line(&self) -> String {
        self.parameters
            .lithologies
            .iter()
            .map(|l| {
                format!(
                    "{} (phi0 {}, c {} /km, grain {} kg/m3)",
                    l.name, l.surface_porosity, l.compaction_per_km, l.grain_density_kg_m3
                )
            })
            .collect::<Vec<_>>()
            .join("; ")
    }

    /// `#` comment lines to put above a CSV table. Each entry stays on its own line
    /// starting with `#` (a line break in a study, well or lithology name is written as a
    /// space), so a reader that skips `#` lines finds the table's header next.
    ///
    /// A spreadsheet splits a line at its commas into cells. The first cell starts with
    /// `#`, so it is never a formula and is written as it is; every later piece is
    /// written as a CSV record, quoted and neutralised like any other cell
    /// ([`crate::csv_cells`]), so a name such as `a,=HYPERLINK(…)` never becomes a live
    /// formula and a piece beginning with a quote cannot swallow the lines after it.
    pub fn csv_preamble(&self, what: &str) -> String {
        [
            what.to_string(),
            format!("study: {}", self.study),
            format!("generated: {} by {}", self.generated_at, self.generated_by),
            format!("parameters: {}", self.parameter_line()),
            format!("lithologies: {}", self.lithology_line()),
            self.caution.to_string(),
        ]
        .iter()
        .map(|entry| comment_line(&format!("# {}", one_line(entry))))
        .collect()
    }

    /// Put the metadata into an SVG document (as `<metadata>` and a `<desc>`).
    pub fn stamp_svg(&self, svg: &str) -> String {
        let Some(open_end) = svg
            .find("<svg")
            .and_then(|i| svg[i..].find('>').map(|j| i + j + 1))
        else {
            return svg.to_string();
        };
        let desc = format!(
            "Study: {}. Generated {} by {}. Parameters: {}. {}",
            self.study,
            self.generated_at,
            self.generated_by,
            self.parameter_line(),
            self.caution
        );
        let json = serde_json::to_string(self).unwrap_or_default();
        format!(
            "{}\n<desc>{}</desc>\n<metadata id=\"sagline-export\">{}</metadata>\n{}",
            &svg[..open_end],
            xml_escape(&desc),
            xml_escape(&json),
            &svg[open_end..]
        )
    }
}

/// One `#` line (no line break in `line`): its first comma-separated piece as it is,
/// the rest as a CSV record of neutralised cells.
fn comment_line(line: &str) -> String {
    let (first, rest) = match line.split_once(',') {
        Some((first, rest)) => (first, Some(rest)),
        None => (line, None),
    };
    let Some(rest) = rest else {
        return format!("{first}\n");
    };
    let mut w = csv::WriterBuilder::new().from_writer(Vec::new());
    // Writing to memory cannot fail but for a bug; keep what was written.
    let _ = crate::csv_cells::write_row(&mut w, rest.split(','));
    let record = w
        .into_inner()
        .map(|b| String::from_utf8_lossy(&b).into_owned())
        .unwrap_or_else(|_| "\n".to_string());
    format!("{first},{record}")
}

fn one_line(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

impl ExportMeta {
    /// The chart with a caption strip below it (study, date, parameters, caution), so a
    /// picture pasted into a report still says where it comes from. For the PNG export.
    pub fn captioned_svg(&self, svg: &str) -> String {
        const LINE_PX: u32 = 14;
        let Some((width, height)) = svg_size(svg) else {
            return svg.to_string();
        };
        let p = &self.parameters.model;
        let lines = [
            format!(
                "{} · generated {} by {}",
                self.study, self.generated_at, self.generated_by
            ),
            format!(
                "mantle {} kg/m³, crust {} kg/m³, water {} kg/m³, lithosphere {} m, crust {} m, T1 {} °C, α {} /°C, κ {} m²/s, k {} W/(m·K)",
                p.mantle_density_kg_m3,
                p.crust_density_kg_m3,
                p.water_density_kg_m3,
                p.lithosphere_thickness_m,
                p.crust_thickness_m,
                p.asthenosphere_temperature_c,
                p.thermal_expansion_per_c,
                p.thermal_diffusivity_m2_s,
                p.thermal_conductivity_w_m_k
            ),
            self.caution.to_string(),
        ];
        let strip = LINE_PX * (lines.len() as u32) + 10;
        let mut caption = format!(
            "<g data-series=\"export-caption\"><rect x=\"0\" y=\"{height}\" width=\"{width}\" height=\"{strip}\" fill=\"#FFFFFF\"/>"
        );
        for (i, line) in lines.iter().enumerate() {
            let y = height + 14 + LINE_PX * i as u32;
            caption.push_str(&format!(
                "<text x=\"8\" y=\"{y}\" font-family=\"sans-serif\" font-size=\"10\" fill=\"#4a5866\" textLength=\"{}\" lengthAdjust=\"spacingAndGlyphs\">{}</text>",
                // Keep a long line inside the picture by squeezing it, never clipping it.
                (width - 16).min((line.chars().count() as u32) * 6),
                xml_escape(line)
            ));
        }
        caption.push_str("</g>");
        let new_height = height + strip;
        let resized = svg.replacen(
            &format!("height=\"{height}\" viewBox=\"0 0 {width} {height}\""),
            &format!("height=\"{new_height}\" viewBox=\"0 0 {width} {new_height}\""),
            1,
        );
        match resized.rfind("</svg>") {
            Some(end) => format!("{}{}{}", &resized[..end], caption, &resized[end..]),
            None => svg.to_string(),
        }
    }
}

/// Width and height of a chart's `<svg width=".." height="..">`.
fn svg_size(svg: &str) -> Option<(u32, u32)> {
    let attr = |name: &str| -> Option<u32> {
        let start = svg.find(&format!("{name}=\""))? + name.len() + 2;
        svg[start..].split('"').next()?.parse().ok()
    };
    Some((attr("width")?, attr("height")?))
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Turn rows into CSV text (with the preamble); no cell is a live formula.
pub fn csv_text(meta: &ExportMeta, what: &str, header: &[&str], rows: &[Vec<String>]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    // Writing to memory cannot fail but for a bug; keep going with what was written.
    let _ = crate::csv_cells::write_row(&mut w, header);
    for r in rows {
        let _ = crate::csv_cells::write_row(&mut w, r);
    }
    let body = w
        .into_inner()
        .map(|b| String::from_utf8_lossy(&b).into_owned())
        .unwrap_or_default();
    format!("{}{}", meta.csv_preamble(what), body)
}

#[cfg(test)]
mod tests {
    use super::*;
    use sagline_science::analysis::StudyInputs;
    use sagline_science::lithology::Catalogue;
    use sagline_science::{ModelParameters, SeaLevelCurve};

    fn meta() -> ExportMeta {
        let inputs = StudyInputs {
            params: ModelParameters::default(),
            catalogue: Catalogue::published_defaults(),
            sea_level: SeaLevelCurve::default(),
            thermal: sagline_science::analysis::thermal::ThermalInputs::default(),
        };
        ExportMeta::new("Orrin <Shelf>", &inputs)
    }

    #[test]
    fn a_captioned_chart_grows_by_its_caption_and_names_study_parameters_and_caution() {
        let svg = r##"<svg width="900" height="480" viewBox="0 0 900 480" xmlns="http://www.w3.org/2000/svg"><rect width="900" height="480" fill="#fff"/></svg>"##;
        let out = meta().captioned_svg(svg);
        assert!(
            out.starts_with(r#"<svg width="900" height="532" viewBox="0 0 900 532""#),
            "{out}"
        );
        assert!(
            out.contains("Orrin &lt;Shelf&gt;"),
            "the study name, escaped: {out}"
        );
        assert!(
            out.contains("mantle 3330 kg/m³") && out.contains("k 3.1 W/(m·K)"),
            "{out}"
        );
        assert!(out.contains("do not replace"), "{out}");
        assert!(out.ends_with("</g></svg>"), "{out}");
    }

    #[test]
    fn a_comment_line_keeps_its_hash_first_and_neutralises_what_follows_a_comma() {
        for (line, expected) in [
            ("# study: Veyra", "# study: Veyra\n"),
            // A quote in the first piece is read as it is (the cell starts with `#`).
            ("# well \"=x\"", "# well \"=x\"\n"),
            (
                "# study: a,=HYPERLINK(\"y\")",
                "# study: a,\"'=HYPERLINK(\"\"y\"\")\"\n",
            ),
            ("# s: a,@b,-2.5,+c", "# s: a,'@b,-2.5,'+c\n"),
            // A piece starting with a quote is quoted, so it cannot open a quoted field.
            ("# s: a,\"b", "# s: a,\"\"\"b\"\n"),
            (
                "# lithologies: shale (phi0 0.63, c 0.51 /km)",
                "# lithologies: shale (phi0 0.63, c 0.51 /km)\n",
            ),
        ] {
            assert_eq!(comment_line(line), expected, "{line:?}");
        }
    }

    #[test]
    fn every_preamble_line_starts_with_a_hash() {
        let preamble = ExportMeta {
            study: "Orrin,=1+1,\"@x\"".into(),
            ..meta()
        }
        .csv_preamble("Wells of =HYPERLINK(\"z\")");
        assert_eq!(preamble.lines().count(), 6, "{preamble}");
        assert!(preamble.lines().all(|l| l.starts_with('#')), "{preamble}");
        assert!(
            preamble.contains("# study: Orrin,'=1+1,\"\"\"@x\"\"\"\n"),
            "{preamble}"
        );
    }

    #[test]
    fn something_without_a_size_is_left_as_it_is() {
        assert_eq!(meta().captioned_svg("<svg></svg>"), "<svg></svg>");
    }
}
