//! What every download carries: the study name, the parameters used, the date and
//! the caution line, so that a file that leaves the app explains itself.

use super::pages::CAUTION;
use crate::analysis::StudyInputs;
use axum::http::header;
use axum::response::{IntoResponse, Response};
use serde::Serialize;

/// The header block of an export.
#[derive(Debug, Clone, Serialize)]
pub struct ExportMeta {
    pub study: String,
    pub generated_at: String,
    pub generated_by: String,
    pub parameters: crate::analysis::contract::ParametersOut,
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
            parameters: crate::analysis::parameters_out(inputs),
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

    /// `#` comment lines to put above a CSV table. Each entry stays on its own line (a
    /// line break in a study, well or lithology name is written as a space), so a reader
    /// that skips `#` lines finds the table's header next.
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
        .map(|entry| format!("# {}\n", one_line(entry)))
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

fn one_line(text: &str) -> String {
    text.chars()
        .map(|c| if c.is_control() { ' ' } else { c })
        .collect()
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// Turn rows into CSV text (with the preamble).
pub fn csv_text(meta: &ExportMeta, what: &str, header: &[&str], rows: &[Vec<String>]) -> String {
    let mut w = csv::Writer::from_writer(Vec::new());
    // Writing to memory cannot fail but for a bug; keep going with what was written.
    let _ = w.write_record(header);
    for r in rows {
        let _ = w.write_record(r);
    }
    let body = w
        .into_inner()
        .map(|b| String::from_utf8_lossy(&b).into_owned())
        .unwrap_or_default();
    format!("{}{}", meta.csv_preamble(what), body)
}

/// A download response with a file name.
pub fn download(content_type: &'static str, file_name: &str, body: String) -> Response {
    let safe: String = file_name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || ".-_".contains(c) {
                c
            } else {
                '_'
            }
        })
        .collect();
    (
        [
            (header::CONTENT_TYPE, content_type.to_string()),
            (
                header::CONTENT_DISPOSITION,
                format!("attachment; filename=\"{safe}\""),
            ),
        ],
        body,
    )
        .into_response()
}
