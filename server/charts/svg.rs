//! Tagging plotters' SVG output: wrapping series in `<g data-series="…">` groups.
//!
//! `plotters` writes flat SVG elements and has no notion of groups. While drawing we
//! emit a tiny marker `<text>` element where a group opens or closes; [`Tags::finish`]
//! then replaces each marker by the group's tag. Groups are flat (opening one closes
//! the one before), which is all the charts need.

use super::frame::{Area, DrawResult};
use plotters::prelude::*;

const MARK_OPEN: &str = "@@sagline-group:";
const MARK_CLOSE: &str = "@@sagline-group-end@@";

/// A `<g>` element to open: its `data-series` name, further attributes and an
/// optional `<title>` (shown by browsers as a tooltip).
pub(crate) struct Group {
    attrs: Vec<(String, String)>,
    title: Option<String>,
}

impl Group {
    pub(crate) fn new(series: &str) -> Self {
        Group {
            attrs: vec![("data-series".into(), series.into())],
            title: None,
        }
    }

    pub(crate) fn attr(mut self, name: &str, value: impl ToString) -> Self {
        self.attrs.push((name.into(), value.to_string()));
        self
    }

    pub(crate) fn title(mut self, text: &str) -> Self {
        self.title = Some(text.into());
        self
    }

    fn open_tag(&self) -> String {
        let mut tag = String::from("<g");
        for (name, value) in &self.attrs {
            tag.push_str(&format!(" {name}=\"{}\"", escape(value)));
        }
        tag.push('>');
        if let Some(title) = &self.title {
            tag.push_str(&format!("<title>{}</title>", escape(title)));
        }
        tag.push('\n');
        tag
    }
}

/// The groups opened while drawing one chart, in order.
#[derive(Default)]
pub(crate) struct Tags {
    opened: Vec<String>,
}

impl Tags {
    /// Start `group` here; it ends at the next `open`, `close` or the end of the chart.
    pub(crate) fn open(&mut self, area: &Area<'_>, group: Group) -> DrawResult {
        let index = self.opened.len();
        self.opened.push(group.open_tag());
        mark(area, &format!("{MARK_OPEN}{index}@@"))
    }

    pub(crate) fn close(&mut self, area: &Area<'_>) -> DrawResult {
        mark(area, MARK_CLOSE)
    }

    /// Replace the markers in `svg` (as written by plotters) by group tags, give the
    /// document a `<title>` and round font sizes.
    pub(crate) fn finish(&self, svg: &str, title: &str) -> String {
        let svg = round_font_sizes(svg);
        let svg = svg.as_str();
        let mut out = String::with_capacity(svg.len() + 64 * self.opened.len());
        let mut rest = svg;
        // The root element's opening tag ends at its first '>'.
        if let Some(end) = rest.find('>') {
            out.push_str(&rest[..=end]);
            out.push_str(&format!("\n<title>{}</title>", escape(title)));
            rest = &rest[end + 1..];
        }
        let mut in_group = false;
        while let Some(start) = rest.find("<text") {
            let Some(len) = rest[start..].find("</text>") else {
                break;
            };
            let end = start + len + "</text>".len();
            let element = &rest[start..end];
            let content = element
                .split_once('>')
                .map_or("", |(_, c)| c.trim_end_matches("</text>").trim());
            out.push_str(&rest[..start]);
            if let Some(index) = content
                .strip_prefix(MARK_OPEN)
                .and_then(|s| s.strip_suffix("@@"))
            {
                if in_group {
                    out.push_str("</g>");
                }
                let tag = index.parse::<usize>().ok().and_then(|i| self.opened.get(i));
                out.push_str(tag.map_or("<g>", String::as_str));
                in_group = true;
            } else if content == MARK_CLOSE {
                if in_group {
                    out.push_str("</g>");
                }
                in_group = false;
            } else {
                out.push_str(element);
            }
            rest = &rest[end..];
            if (content.starts_with(MARK_OPEN) || content == MARK_CLOSE) && rest.starts_with('\n') {
                rest = &rest[1..];
            }
        }
        if in_group {
            match rest.rfind("</svg>") {
                Some(at) => {
                    out.push_str(&rest[..at]);
                    out.push_str("</g>\n");
                    out.push_str(&rest[at..]);
                }
                None => out.push_str(rest),
            }
        } else {
            out.push_str(rest);
        }
        out
    }
}

/// plotters writes `font-size` as size / 1.24, which leaves `13.000000000000002`;
/// round every font size to two decimals.
fn round_font_sizes(svg: &str) -> String {
    const KEY: &str = "font-size=\"";
    let mut out = String::with_capacity(svg.len());
    let mut rest = svg;
    while let Some(at) = rest.find(KEY) {
        let value_start = at + KEY.len();
        out.push_str(&rest[..value_start]);
        rest = &rest[value_start..];
        let value_end = rest.find('"').unwrap_or(rest.len());
        match rest[..value_end].parse::<f64>() {
            Ok(size) => {
                out.push_str(super::frame::number_label((size * 100.0).round() / 100.0).as_str())
            }
            Err(_) => out.push_str(&rest[..value_end]),
        }
        rest = &rest[value_end..];
    }
    out.push_str(rest);
    out
}

/// Draw a marker text. It must not be fully transparent: plotters skips those.
fn mark(area: &Area<'_>, text: &str) -> DrawResult {
    let faint = BLACK.mix(0.01);
    let style = TextStyle::from(("sans-serif", 1.0).into_font()).color(&faint);
    area.draw(&Text::new(text.to_string(), (0, 0), style))?;
    Ok(())
}

/// Escape text for an XML attribute value or text node.
pub(crate) fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '&' => out.push_str("&amp;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            other => out.push(other),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn draw_two_groups() -> String {
        let mut buf = String::new();
        let mut tags = Tags::default();
        {
            let root = SVGBackend::with_string(&mut buf, (100, 50)).into_drawing_area();
            tags.open(
                &root,
                Group::new("first")
                    .attr("data-name", "A \"quoted\" <name>")
                    .title("A & B"),
            )
            .unwrap();
            root.draw(&Rectangle::new([(1, 1), (5, 5)], BLACK.filled()))
                .unwrap();
            tags.open(&root, Group::new("second")).unwrap();
            root.draw(&Circle::new((10, 10), 3, BLACK.filled()))
                .unwrap();
            tags.close(&root).unwrap();
            root.draw(&Text::new("kept", (20, 20), ("sans-serif", 16.0)))
                .unwrap();
            tags.open(&root, Group::new("third")).unwrap();
            root.draw(&Rectangle::new([(30, 30), (40, 40)], BLACK.filled()))
                .unwrap();
            root.present().unwrap();
        }
        tags.finish(&buf, "Two <groups>")
    }

    #[test]
    fn markers_become_well_formed_groups() {
        let svg = draw_two_groups();
        let doc = roxmltree::Document::parse(&svg).expect("well-formed SVG");
        let root = doc.root_element();
        let title = root
            .children()
            .find(|n| n.has_tag_name("title"))
            .and_then(|n| n.text());
        assert_eq!(title, Some("Two <groups>"));
        let groups: Vec<_> = root.children().filter(|n| n.has_tag_name("g")).collect();
        let series: Vec<_> = groups
            .iter()
            .map(|g| g.attribute("data-series").unwrap())
            .collect();
        assert_eq!(series, ["first", "second", "third"]);
        assert_eq!(
            groups[0].attribute("data-name"),
            Some("A \"quoted\" <name>")
        );
        assert!(groups[0].children().any(|n| n.has_tag_name("rect")));
        assert!(groups[1].children().any(|n| n.has_tag_name("circle")));
        assert!(
            groups[2].children().any(|n| n.has_tag_name("rect")),
            "the last group closes before </svg>"
        );
        // The text drawn after `close` stays outside every group; no marker is left.
        let kept = root
            .children()
            .find(|n| n.has_tag_name("text"))
            .and_then(|n| n.text())
            .map(str::trim);
        assert_eq!(kept, Some("kept"));
        assert!(!svg.contains("@@sagline"));
    }

    #[test]
    fn font_sizes_are_rounded() {
        let svg = round_font_sizes(
            "<text font-size=\"13.000000000000002\">a</text><text font-size=\"x\">b</text>",
        );
        assert_eq!(
            svg,
            "<text font-size=\"13\">a</text><text font-size=\"x\">b</text>"
        );
    }
}
