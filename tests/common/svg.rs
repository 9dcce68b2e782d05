//! Reading back what a chart draws: a small tag scanner for the SVG plotters writes (plain SVG,
//! one element a line), the groups (layers) by class, and an axis read from its own tick labels,
//! so a test compares drawn marks with the figures they stand for.
//!
//! Tolerances: plotters places every mark on a whole pixel (rounding down), and the scale is read
//! from tick labels that are placed the same way, so a drawn value is within two pixels' worth of
//! the figure; [`Axis::tolerance`] is that, in data units.

use std::collections::HashMap;

/// One SVG element: its tag, attributes, text content, the tooltip of a label (a `<title>` as its
/// first child) and the classes of its group.
#[allow(dead_code)]
#[derive(Debug, Clone)]
pub struct Element {
    pub tag: String,
    pub attributes: HashMap<String, String>,
    pub text: String,
    pub tooltip: Option<String>,
    pub group: String,
}

#[allow(dead_code)]
impl Element {
    pub fn number(&self, name: &str) -> f64 {
        self.attributes[name].parse().unwrap()
    }

    pub fn points(&self) -> Vec<(f64, f64)> {
        self.attributes["points"]
            .split_whitespace()
            .map(|p| {
                let (x, y) = p.split_once(',').unwrap();
                (x.parse().unwrap(), y.parse().unwrap())
            })
            .collect()
    }
}

#[allow(dead_code)]
pub fn unescape(text: &str) -> String {
    text.replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&apos;", "'")
        .replace("&amp;", "&")
}

/// Scans an SVG document into its elements (XML 1.0 tags and attributes; no DTD, no CDATA).
#[allow(dead_code)]
pub fn parse(svg: &str) -> Vec<Element> {
    let mut out = Vec::new();
    let mut groups: Vec<String> = Vec::new();
    let mut rest = svg;
    while let Some(start) = rest.find('<') {
        let end = start + rest[start..].find('>').expect("a tag closes");
        let tag = &rest[start + 1..end];
        rest = &rest[end + 1..];
        if let Some(name) = tag.strip_prefix('/') {
            if name.trim() == "g" {
                groups.pop();
            }
            continue;
        }
        let closed = tag.ends_with('/');
        let tag = tag.trim_end_matches('/');
        let name = tag.split_whitespace().next().unwrap().to_string();
        let mut attributes = HashMap::new();
        let mut attrs = &tag[name.len()..];
        while let Some(eq) = attrs.find("=\"") {
            let key = attrs[..eq].trim().to_string();
            let value_end = eq + 2 + attrs[eq + 2..].find('"').unwrap();
            attributes.insert(key, unescape(&attrs[eq + 2..value_end]));
            attrs = &attrs[value_end + 1..];
        }
        if name == "g" {
            groups.push(attributes.get("class").cloned().unwrap_or_default());
            continue;
        }
        let mut text = String::new();
        let mut tooltip = None;
        if !closed && (name == "text" || name == "title" || name == "desc") {
            let close = rest.find(&format!("</{name}>")).unwrap();
            let mut content = rest[..close].trim();
            if let Some(inner) = content.strip_prefix("<title>") {
                let (title, after) = inner.split_once("</title>").unwrap();
                tooltip = Some(unescape(title));
                content = after;
            }
            text = unescape(content.trim());
            rest = &rest[close..];
        }
        out.push(Element {
            tag: name,
            attributes,
            text,
            tooltip,
            group: groups.last().cloned().unwrap_or_default(),
        });
    }
    out
}

/// Elements of groups whose classes include every word of `class`.
#[allow(dead_code)]
pub fn in_group<'a>(elements: &'a [Element], class: &str) -> Vec<&'a Element> {
    elements
        .iter()
        .filter(|e| {
            let classes: Vec<&str> = e.group.split_whitespace().collect();
            class.split_whitespace().all(|c| classes.contains(&c))
        })
        .collect()
}

/// A tick label as a number: "−7.5%" is −0.075.
#[allow(dead_code)]
pub fn tick_value(text: &str) -> Option<f64> {
    let text = text.replace('\u{2212}', "-");
    match text.strip_suffix('%') {
        Some(p) => p.parse::<f64>().ok().map(|v| v / 100.0),
        None => text.parse().ok(),
    }
}

/// An axis read from its tick labels: value = a + b·pixel.
#[allow(dead_code)]
#[derive(Debug, Clone, Copy)]
pub struct Axis {
    a: f64,
    b: f64,
}

#[allow(dead_code)]
impl Axis {
    /// From the numeric labels of the group `class`; `coordinate` is "x" or "y".
    pub fn read(elements: &[Element], class: &str, coordinate: &str) -> Axis {
        let mut ticks: Vec<(f64, f64)> = in_group(elements, class)
            .iter()
            .filter(|e| e.tag == "text")
            .filter_map(|e| tick_value(&e.text).map(|v| (e.number(coordinate), v)))
            .collect();
        ticks.sort_by(|p, q| p.0.total_cmp(&q.0));
        assert!(
            ticks.len() >= 2,
            "{class}: fewer than two numeric tick labels"
        );
        let ((p0, v0), (p1, v1)) = (ticks[0], ticks[ticks.len() - 1]);
        let b = (v1 - v0) / (p1 - p0);
        Axis { a: v0 - b * p0, b }
    }

    pub fn value(&self, pixel: f64) -> f64 {
        self.a + self.b * pixel
    }

    /// Two pixels' worth (see the module comment).
    pub fn tolerance(&self) -> f64 {
        2.0 * self.b.abs()
    }
}

/// Asserts that a drawn value is within `tolerance` of the figure.
#[allow(dead_code)]
pub fn close(label: &str, drawn: f64, expected: f64, tolerance: f64) {
    assert!(
        (drawn - expected).abs() <= tolerance,
        "{label}: drawn {drawn}, expected {expected} (tolerance {tolerance})"
    );
}
