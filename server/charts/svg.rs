//! A small typed SVG writer: the charts build a tree of elements and this module alone
//! turns it into text.
//!
//! What it guarantees by construction:
//! - element and attribute names are `&'static str` chosen in this crate, never data;
//! - every text node and attribute value is escaped on the way out (`&`, `<`, `>`,
//!   quotes; characters XML 1.0 does not allow become U+FFFD), so a well, horizon or
//!   lithology name cannot break the document or inject markup, whatever it holds;
//! - numbers are formatted in one place: pixel positions to at most two decimals
//!   ([`Value::Px`]), data values exactly as Rust prints them, which reads back to the
//!   same `f64` ([`Value::Num`]); colours as `#RRGGBB`.
//!
//! The output is a standalone SVG 1.1 document that browsers, resvg and XML parsers read.

use std::fmt::Write;

/// An sRGB colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Colour(pub u8, pub u8, pub u8);

impl Colour {
    /// `#RRGGBB`, upper case.
    pub(crate) fn hex(self) -> String {
        format!("#{:02X}{:02X}{:02X}", self.0, self.1, self.2)
    }
}

/// A colour with an opacity in [0, 1].
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Paint {
    pub colour: Colour,
    pub opacity: f64,
}

impl Paint {
    pub(crate) fn solid(colour: Colour) -> Self {
        Paint {
            colour,
            opacity: 1.0,
        }
    }
}

impl From<Colour> for Paint {
    fn from(colour: Colour) -> Self {
        Paint::solid(colour)
    }
}

/// An attribute value, written by [`Element::write`] in the one way its kind is written.
#[derive(Debug, Clone, PartialEq)]
pub(crate) enum Value {
    /// Free text (escaped).
    Text(String),
    /// A fixed keyword of this crate (escaped all the same).
    Keyword(&'static str),
    /// A position or length in pixels: at most two decimals, no `-0`; a non-finite
    /// value (a bug upstream) is written as 0 so the document stays readable.
    Px(f64),
    /// A data value (an age, a stretching factor): Rust's shortest exact form, which
    /// parses back to the same number.
    Num(f64),
    /// An integer (a count).
    Int(i64),
    Colour(Colour),
    /// A point list `x,y x,y …` in pixels.
    Points(Vec<(f64, f64)>),
}

impl From<&str> for Value {
    fn from(v: &str) -> Self {
        Value::Text(v.to_string())
    }
}

impl From<String> for Value {
    fn from(v: String) -> Self {
        Value::Text(v)
    }
}

impl From<&String> for Value {
    fn from(v: &String) -> Self {
        Value::Text(v.clone())
    }
}

impl From<f64> for Value {
    fn from(v: f64) -> Self {
        Value::Num(v)
    }
}

impl From<usize> for Value {
    fn from(v: usize) -> Self {
        Value::Int(i64::try_from(v).unwrap_or(i64::MAX))
    }
}

impl From<Colour> for Value {
    fn from(v: Colour) -> Self {
        Value::Colour(v)
    }
}

/// A pixel value as the document writes it: rounded to 0.01 px, trailing zeros dropped.
pub(crate) fn px_text(v: f64) -> String {
    if !v.is_finite() {
        return "0".into();
    }
    let text = format!("{:.2}", (v * 100.0).round() / 100.0);
    let text = text.trim_end_matches('0').trim_end_matches('.');
    if text == "-0" {
        "0".into()
    } else {
        text.into()
    }
}

#[derive(Debug, Clone, PartialEq)]
enum Node {
    Element(Element),
    Text(String),
}

/// One SVG element with its attributes (in the order given) and children.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Element {
    name: &'static str,
    attrs: Vec<(&'static str, Value)>,
    children: Vec<Node>,
}

impl Element {
    pub(crate) fn new(name: &'static str) -> Self {
        debug_assert!(is_xml_name(name), "bad element name {name:?}");
        Element {
            name,
            attrs: Vec::new(),
            children: Vec::new(),
        }
    }

    /// Set attribute `name` (replacing an earlier value of the same name).
    pub(crate) fn attr(mut self, name: &'static str, value: impl Into<Value>) -> Self {
        self.set(name, value.into());
        self
    }

    fn set(&mut self, name: &'static str, value: Value) {
        debug_assert!(is_xml_name(name), "bad attribute name {name:?}");
        match self.attrs.iter_mut().find(|(n, _)| *n == name) {
            Some(slot) => slot.1 = value,
            None => self.attrs.push((name, value)),
        }
    }

    pub(crate) fn px(self, name: &'static str, v: f64) -> Self {
        self.attr(name, Value::Px(v))
    }

    pub(crate) fn keyword(self, name: &'static str, v: &'static str) -> Self {
        self.attr(name, Value::Keyword(v))
    }

    /// Fill with `paint` (its opacity as `fill-opacity` when below 1).
    pub(crate) fn fill(self, paint: impl Into<Paint>) -> Self {
        let paint = paint.into();
        let e = self.attr("fill", paint.colour);
        if paint.opacity < 1.0 {
            e.attr("fill-opacity", Value::Num(round3(paint.opacity)))
        } else {
            e
        }
    }

    pub(crate) fn no_fill(self) -> Self {
        self.keyword("fill", "none")
    }

    /// Stroke with `paint`, `width` px wide (its opacity as `stroke-opacity` when below 1).
    pub(crate) fn stroke(self, paint: impl Into<Paint>, width: f64) -> Self {
        let paint = paint.into();
        let e = self.attr("stroke", paint.colour).px("stroke-width", width);
        if paint.opacity < 1.0 {
            e.attr("stroke-opacity", Value::Num(round3(paint.opacity)))
        } else {
            e
        }
    }

    /// Add a child element.
    pub(crate) fn child(mut self, child: Element) -> Self {
        self.children.push(Node::Element(child));
        self
    }

    pub(crate) fn push(&mut self, child: Element) {
        self.children.push(Node::Element(child));
    }

    /// Add a text node (escaped when written).
    pub(crate) fn text(mut self, text: impl Into<String>) -> Self {
        self.children.push(Node::Text(text.into()));
        self
    }

    /// The attribute's value as written, if set (for tests and layout checks).
    #[cfg(test)]
    pub(crate) fn written_attr(&self, name: &str) -> Option<String> {
        self.attrs.iter().find(|(n, _)| *n == name).map(|(_, v)| {
            let mut out = String::new();
            write_value(&mut out, v);
            out
        })
    }

    /// Write the element as XML into `out`.
    pub(crate) fn write(&self, out: &mut String) {
        out.push('<');
        out.push_str(self.name);
        for (name, value) in &self.attrs {
            out.push(' ');
            out.push_str(name);
            out.push_str("=\"");
            write_value(out, value);
            out.push('"');
        }
        if self.children.is_empty() {
            out.push_str("/>");
            return;
        }
        out.push('>');
        let has_elements = self.children.iter().any(|c| matches!(c, Node::Element(_)));
        for child in &self.children {
            match child {
                Node::Element(e) => {
                    if has_elements {
                        out.push('\n');
                    }
                    e.write(out);
                }
                Node::Text(t) => escape_into(out, t, false),
            }
        }
        if has_elements {
            out.push('\n');
        }
        out.push_str("</");
        out.push_str(self.name);
        out.push('>');
    }
}

fn round3(v: f64) -> f64 {
    (v.clamp(0.0, 1.0) * 1000.0).round() / 1000.0
}

fn write_value(out: &mut String, value: &Value) {
    match value {
        Value::Text(t) => escape_into(out, t, true),
        Value::Keyword(k) => escape_into(out, k, true),
        Value::Px(v) => out.push_str(&px_text(*v)),
        Value::Num(v) => {
            let _ = write!(out, "{v}");
        }
        Value::Int(v) => {
            let _ = write!(out, "{v}");
        }
        Value::Colour(c) => out.push_str(&c.hex()),
        Value::Points(points) => {
            for (i, (x, y)) in points.iter().enumerate() {
                if i > 0 {
                    out.push(' ');
                }
                out.push_str(&px_text(*x));
                out.push(',');
                out.push_str(&px_text(*y));
            }
        }
    }
}

/// Whether `c` may appear in an XML 1.0 document.
fn xml_char(c: char) -> bool {
    matches!(c, '\u{9}' | '\u{A}' | '\u{D}' | '\u{20}'..='\u{D7FF}' | '\u{E000}'..='\u{FFFD}' | '\u{10000}'..)
}

/// Escape `text` for a text node, or (`attribute`) a double- or single-quoted attribute
/// value, where tabs and line breaks are written as character references so that they
/// survive attribute-value normalisation.
fn escape_into(out: &mut String, text: &str, attribute: bool) {
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\r' => out.push_str("&#13;"),
            '\n' if attribute => out.push_str("&#10;"),
            '\t' if attribute => out.push_str("&#9;"),
            c if xml_char(c) => out.push(c),
            _ => out.push('\u{FFFD}'),
        }
    }
}

/// Whether `name` is a plain XML name (checked in debug builds: names are literals).
fn is_xml_name(name: &str) -> bool {
    let mut chars = name.chars();
    chars
        .next()
        .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
        && chars.all(|c| c.is_ascii_alphanumeric() || matches!(c, '-' | '_' | ':' | '.'))
}

/// A `<g data-series="…">` group: how tests and page scripts find a series. Further
/// `data-*` (or presentation) attributes and a `<title>` (a browser tooltip) are optional.
pub(crate) fn group(series: &'static str) -> Element {
    Element::new("g").keyword("data-series", series)
}

/// Give a group (or any element) a `<title>` as its first child.
pub(crate) fn titled(mut element: Element, title: impl Into<String>) -> Element {
    element
        .children
        .insert(0, Node::Element(Element::new("title").text(title)));
    element
}

pub(crate) fn rect(x: f64, y: f64, width: f64, height: f64) -> Element {
    Element::new("rect")
        .px("x", x)
        .px("y", y)
        .px("width", width.max(0.0))
        .px("height", height.max(0.0))
}

/// The rectangle between two corners given in any order.
pub(crate) fn rect_between((x0, y0): (f64, f64), (x1, y1): (f64, f64)) -> Element {
    rect(x0.min(x1), y0.min(y1), (x1 - x0).abs(), (y1 - y0).abs())
}

pub(crate) fn line((x1, y1): (f64, f64), (x2, y2): (f64, f64)) -> Element {
    Element::new("line")
        .px("x1", x1)
        .px("y1", y1)
        .px("x2", x2)
        .px("y2", y2)
}

/// An open line through `points` (no fill).
pub(crate) fn polyline(points: Vec<(f64, f64)>) -> Element {
    Element::new("polyline")
        .no_fill()
        .attr("points", Value::Points(points))
}

/// A closed, filled outline.
pub(crate) fn polygon(points: Vec<(f64, f64)>) -> Element {
    Element::new("polygon").attr("points", Value::Points(points))
}

pub(crate) fn circle((cx, cy): (f64, f64), r: f64) -> Element {
    Element::new("circle").px("cx", cx).px("cy", cy).px("r", r)
}

/// Horizontal alignment of a text on its anchor point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum HAlign {
    Start,
    Middle,
    End,
}

/// Vertical alignment of a text on its anchor point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum VAlign {
    /// The anchor is at the top of the capitals.
    Top,
    /// The anchor is at the middle of the lower-case letters.
    Middle,
    /// The anchor is on the baseline.
    Baseline,
}

/// How a text is set: size in CSS pixels, weight, colour, alignment, rotation.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct TextStyle {
    pub size_px: f64,
    pub bold: bool,
    pub colour: Colour,
    pub h: HAlign,
    pub v: VAlign,
    /// Turned a quarter turn anticlockwise (reading upwards), about the anchor.
    pub upright: bool,
}

impl TextStyle {
    pub(crate) fn new(size_px: f64, colour: Colour) -> Self {
        TextStyle {
            size_px,
            bold: false,
            colour,
            h: HAlign::Start,
            v: VAlign::Baseline,
            upright: false,
        }
    }

    pub(crate) fn bold(self) -> Self {
        TextStyle { bold: true, ..self }
    }

    pub(crate) fn colour(self, colour: Colour) -> Self {
        TextStyle { colour, ..self }
    }

    pub(crate) fn align(self, h: HAlign, v: VAlign) -> Self {
        TextStyle { h, v, ..self }
    }

    pub(crate) fn upright(self) -> Self {
        TextStyle {
            upright: true,
            ..self
        }
    }
}

/// A `<text>` at `(x, y)` holding `content` (escaped when written).
pub(crate) fn text((x, y): (f64, f64), content: impl Into<String>, style: TextStyle) -> Element {
    let mut e = Element::new("text").px("x", x).px("y", y);
    e = match style.v {
        // Offsets of the em box that put the anchor where the names say, in any font.
        VAlign::Top => e.keyword("dy", "0.76em"),
        VAlign::Middle => e.keyword("dy", "0.35em"),
        VAlign::Baseline => e,
    };
    e = e
        .keyword(
            "text-anchor",
            match style.h {
                HAlign::Start => "start",
                HAlign::Middle => "middle",
                HAlign::End => "end",
            },
        )
        .keyword("font-family", "sans-serif")
        .px("font-size", style.size_px);
    if style.bold {
        e = e.keyword("font-weight", "bold");
    }
    e = e.attr("fill", style.colour);
    if style.upright {
        let transform = format!("rotate(-90 {} {})", px_text(x), px_text(y));
        e = e.attr("transform", Value::Text(transform));
    }
    e.text(content)
}

/// A whole SVG document of `width` x `height` px with a `<title>`, its children drawn
/// in order (later on top).
pub(crate) struct Document {
    width: u32,
    height: u32,
    title: String,
    root: Element,
}

impl Document {
    pub(crate) fn new(width: u32, height: u32, title: impl Into<String>) -> Self {
        Document {
            width,
            height,
            title: title.into(),
            root: Element::new("svg"),
        }
    }

    pub(crate) fn push(&mut self, element: Element) {
        self.root.push(element);
    }

    /// The document as text. The root's opening tag always reads
    /// `<svg width="W" height="H" viewBox="0 0 W H" xmlns="http://www.w3.org/2000/svg">`.
    pub(crate) fn finish(self) -> String {
        let Document {
            width,
            height,
            title,
            root,
        } = self;
        let root = Element {
            attrs: vec![
                ("width", Value::Int(width.into())),
                ("height", Value::Int(height.into())),
                ("viewBox", Value::Text(format!("0 0 {width} {height}"))),
                ("xmlns", Value::Keyword("http://www.w3.org/2000/svg")),
            ],
            ..root
        };
        let root = titled(root, title);
        let mut out = String::with_capacity(16 * 1024);
        root.write(&mut out);
        out.push('\n');
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Names that try every way out of an attribute or text node.
    const HOSTILE: [&str; 8] = [
        "<script>alert(1)</script>",
        "A & B",
        "\"double\" and 'single' quotes",
        "]]> end of a CDATA section",
        "<!-- comment --> and <![CDATA[ x ]]>",
        "tab\there, line\nbreak, return\r",
        "control \u{1} \u{8} \u{B} \u{1F} and \u{FFFE}",
        "&amp; already escaped &lt;",
    ];

    fn parse(svg: &str) -> roxmltree::Document<'_> {
        roxmltree::Document::parse(svg).unwrap_or_else(|e| panic!("not XML ({e}): {svg}"))
    }

    /// What an XML reader must give back for `name`: the same text, with the characters
    /// XML cannot carry replaced.
    fn readable(name: &str) -> String {
        name.chars()
            .map(|c| match c {
                '\u{1}' | '\u{8}' | '\u{B}' | '\u{1F}' | '\u{FFFE}' => '\u{FFFD}',
                other => other,
            })
            .collect()
    }

    #[test]
    fn hostile_names_stay_text_in_attributes_titles_and_texts() {
        for name in HOSTILE {
            let mut doc = Document::new(100, 50, name);
            doc.push(titled(
                group("well").attr("data-name", name),
                format!("{name}: no fit"),
            ));
            doc.push(text(
                (1.0, 2.0),
                name,
                TextStyle::new(13.0, Colour(0, 0, 0)),
            ));
            let svg = doc.finish();
            let parsed = parse(&svg);
            let root = parsed.root_element();
            // Exactly the elements written: nothing was injected.
            let tags: Vec<&str> = root
                .descendants()
                .filter(|n| n.is_element())
                .map(|n| n.tag_name().name())
                .collect();
            assert_eq!(tags, ["svg", "title", "g", "title", "text"], "{name:?}");
            let title = root.first_element_child().and_then(|t| t.text());
            assert_eq!(title, Some(readable(name).as_str()), "{name:?}");
            let g = root.children().find(|n| n.has_tag_name("g")).unwrap();
            assert_eq!(
                g.attribute("data-name"),
                Some(readable(name).as_str()),
                "{name:?}: attribute"
            );
            assert_eq!(
                g.first_element_child().and_then(|t| t.text()),
                Some(format!("{}: no fit", readable(name)).as_str())
            );
            let t = root.children().find(|n| n.has_tag_name("text")).unwrap();
            assert_eq!(t.text(), Some(readable(name).as_str()));
            assert!(!svg.contains("<script"), "{svg}");
        }
    }

    #[test]
    fn escaping_writes_the_references_of_the_xml_specification() {
        let mut out = String::new();
        escape_into(&mut out, "a<b>&\"'\n", true);
        assert_eq!(out, "a&lt;b&gt;&amp;&quot;&apos;&#10;");
        let mut out = String::new();
        escape_into(&mut out, "]]>\n", false);
        assert_eq!(out, "]]&gt;\n");
    }

    #[test]
    fn numbers_are_written_one_way_per_kind() {
        assert_eq!(px_text(12.0), "12");
        assert_eq!(px_text(12.345), "12.35");
        assert_eq!(px_text(-0.001), "0");
        assert_eq!(px_text(f64::NAN), "0");
        assert_eq!(px_text(3.1), "3.1");
        let e = Element::new("g")
            .attr("data-beta", 1.4200000000000002)
            .attr("data-count", 3_usize)
            .px("x", 0.5)
            .attr("fill", Colour(0x1f, 0x6f, 0x78));
        assert_eq!(
            e.written_attr("data-beta").as_deref(),
            Some("1.4200000000000002")
        );
        assert_eq!(e.written_attr("data-count").as_deref(), Some("3"));
        assert_eq!(e.written_attr("x").as_deref(), Some("0.5"));
        assert_eq!(e.written_attr("fill").as_deref(), Some("#1F6F78"));
        let line = polyline(vec![(1.0, 2.5), (3.333, 4.0)]);
        assert_eq!(line.written_attr("points").as_deref(), Some("1,2.5 3.33,4"));
    }

    #[test]
    fn the_root_opens_with_size_and_view_box_and_groups_nest() {
        let mut doc = Document::new(300, 200, "T");
        doc.push(
            group("outer").child(group("inner").child(rect(1.0, 2.0, 3.0, 4.0).fill(Paint {
                colour: Colour(1, 2, 3),
                opacity: 0.25,
            }))),
        );
        let svg = doc.finish();
        assert!(svg.starts_with(
            "<svg width=\"300\" height=\"200\" viewBox=\"0 0 300 200\" xmlns=\"http://www.w3.org/2000/svg\">"
        ));
        let parsed = parse(&svg);
        let inner = parsed
            .descendants()
            .find(|n| n.attribute("data-series") == Some("inner"))
            .unwrap();
        assert_eq!(
            inner.parent_element().unwrap().attribute("data-series"),
            Some("outer")
        );
        let r = inner.first_element_child().unwrap();
        assert_eq!(
            (
                r.attribute("x"),
                r.attribute("width"),
                r.attribute("fill"),
                r.attribute("fill-opacity")
            ),
            (Some("1"), Some("3"), Some("#010203"), Some("0.25"))
        );
    }

    #[test]
    fn upright_text_turns_about_its_anchor() {
        let t = text(
            (20.0, 100.5),
            "Depth (m)",
            TextStyle::new(14.0, Colour(0, 0, 0)).upright(),
        );
        assert_eq!(
            t.written_attr("transform").as_deref(),
            Some("rotate(-90 20 100.5)")
        );
    }
}
