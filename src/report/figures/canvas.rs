//! A chart drawn in named layers with plotters' SVG backend, and assembled into one accessible
//! SVG document.
//!
//! Each layer (the frame, the grid, each axis, the band, the points, …) is drawn by plotters on
//! its own `SVGBackend::with_string` of the chart's size, with the same layout, so every layer
//! shares one coordinate mapping; its elements are then wrapped in `<g class="…">`. The classes
//! let a reader's tools (and the tests) tell a point from a tick without guessing from colours.
//! The document gets `role="img"`, a `<title>` and a `<desc>` for screen readers, and holds no
//! timestamp or random id, so the same result draws the same bytes.

use plotters::coord::Shift;
use plotters::prelude::*;

use super::style;
use crate::error::{Error, Result};

/// A drawing area of one layer.
pub type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// What a layer's drawing code returns.
pub type Drawn = std::result::Result<(), DrawingAreaErrorKind<std::io::Error>>;

/// A chart being drawn: its size and the layers drawn so far.
pub struct Canvas {
    name: String,
    width: u32,
    height: u32,
    body: String,
}

impl Canvas {
    /// A blank chart; `name` (the file name) labels drawing errors.
    pub fn new(name: &str, width: u32, height: u32) -> Canvas {
        Canvas {
            name: name.to_string(),
            width,
            height,
            body: String::new(),
        }
    }

    /// The chart's size in pixels.
    pub fn size(&self) -> (u32, u32) {
        (self.width, self.height)
    }

    /// Draws one layer with `draw` and keeps its elements under `<g class="{class}">`.
    pub fn layer(&mut self, class: &str, draw: impl FnOnce(&Area) -> Drawn) -> Result<()> {
        let mut buffer = String::new();
        {
            let root =
                SVGBackend::with_string(&mut buffer, (self.width, self.height)).into_drawing_area();
            draw(&root).map_err(|e| self.error(class, &e.to_string()))?;
            root.present()
                .map_err(|e| self.error(class, &e.to_string()))?;
        }
        // plotters writes `<svg …>` on the first line and `</svg>` on the last.
        let inner = buffer
            .split_once('\n')
            .map(|(_, rest)| rest)
            .and_then(|rest| rest.trim_end().strip_suffix("</svg>"))
            .ok_or_else(|| self.error(class, "the SVG backend wrote no document"))?;
        self.body
            .push_str(&format!("<g class=\"{class}\">\n{inner}</g>\n"));
        Ok(())
    }

    /// Gives the first drawn label reading `shown` that has no tooltip yet a `<title>` holding
    /// `full` (its first child, so a browser shows it on hover and a screen reader reads it):
    /// the whole text of a label shortened to fit. Nothing happens when `shown` is `full`.
    pub fn tooltip(&mut self, shown: &str, full: &str) {
        if shown == full {
            return;
        }
        // plotters writes a label as `<text …>`, the escaped text on a line of its own, `</text>`.
        let drawn = format!(">\n{}\n</text>", escape(shown));
        if let Some(at) = self.body.find(&drawn) {
            self.body
                .insert_str(at + 2, &format!("<title>{}</title>", escape(full)));
        }
    }

    /// Runs `measure` on a scratch area of the chart's size, keeping nothing it draws: where a
    /// layout puts things (a label's pixels, say) before they are drawn. `what` labels an error.
    pub fn measure<T>(
        &self,
        what: &str,
        measure: impl FnOnce(&Area) -> std::result::Result<T, DrawingAreaErrorKind<std::io::Error>>,
    ) -> Result<T> {
        let mut buffer = String::new();
        let root =
            SVGBackend::with_string(&mut buffer, (self.width, self.height)).into_drawing_area();
        measure(&root).map_err(|e| self.error(what, &e.to_string()))
    }

    fn error(&self, layer: &str, message: &str) -> Error {
        Error::Figure {
            name: self.name.clone(),
            message: format!("layer {layer}: {message}"),
        }
    }

    /// The finished SVG document. `id` prefixes the ids of the title and description (unique
    /// per chart, so several charts can sit inline in one HTML page).
    pub fn finish(self, id: &str, title: &str, description: &str) -> String {
        let (w, h) = (self.width, self.height);
        format!(
            "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" \
             viewBox=\"0 0 {w} {h}\" role=\"img\" aria-labelledby=\"{id}-title {id}-desc\" \
             font-family=\"{font}\">\n<title id=\"{id}-title\">{title}</title>\n\
             <desc id=\"{id}-desc\">{description}</desc>\n{body}</svg>\n",
            font = escape(style::FONT_STACK),
            title = escape(title),
            description = escape(description),
            body = self.body
        )
    }
}

/// Escapes text for XML content and attribute values; a character XML 1.0 does not allow (a C0
/// control other than tab and line ends, U+FFFE, U+FFFF; XML 1.0 §2.2 "Characters") is written
/// as U+FFFD, so a universe's industry label holding one cannot make a chart unreadable (found
/// by review: U+FFFE in a name made every chart fail to parse).
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '\t' | '\n' | '\r' => out.push(c),
            '\u{0}'..='\u{1f}' | '\u{fffe}' | '\u{ffff}' => out.push('\u{fffd}'),
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

/// `text` cut to at most `width` characters, the last of them an ellipsis when it is cut: a
/// label that would run out of its space (the whole text stays in the chart's description).
pub fn shorten(text: &str, width: usize) -> String {
    if text.chars().count() <= width {
        return text.to_string();
    }
    let kept: String = text.chars().take(width.saturating_sub(1)).collect();
    format!("{}…", kept.trim_end())
}

/// `text` cut to at most `width` characters by leaving out its middle, marked by an ellipsis:
/// the start and the end are kept ("Caddlewick Precision…North America"), so names that share a
/// long start (a group's regional companies, share classes) still read differently.
pub fn shorten_middle(text: &str, width: usize) -> String {
    let count = text.chars().count();
    if count <= width {
        return text.to_string();
    }
    let chars: Vec<char> = text.chars().collect();
    let kept = width.saturating_sub(1);
    // The start takes the larger half: it names the firm, the end tells it from its siblings.
    let mut head = kept.div_ceil(2);
    // Each part ends (or starts) at a space rather than inside a word when that keeps at least
    // half of it: "Caddlewick…North America" reads better than "Caddlewick P…rth America". What
    // the start gives up goes to the end.
    if !chars[head].is_whitespace() {
        if let Some(space) = chars[..head].iter().rposition(|c| c.is_whitespace()) {
            if space >= head / 2 {
                head = space;
            }
        }
    }
    let mut tail = count - (kept - head);
    if tail > 0 && !chars[tail - 1].is_whitespace() {
        if let Some(space) = chars[tail..].iter().position(|c| c.is_whitespace()) {
            if space <= (count - tail) / 2 {
                tail += space + 1;
            }
        }
    }
    let start: String = chars[..head].iter().collect();
    let end: String = chars[tail..].iter().collect();
    format!("{}…{}", start.trim_end(), end.trim_start())
}

/// Each of `names` shortened in the middle to `width` characters ([`shorten_middle`]), with
/// labels that would read alike told apart: two names that differ only inside the part the
/// cut leaves out ("Orrin Holdings Class A Voting Shares" and "… Class B …") keep their start,
/// then an ellipsis, then the text from the first character where they differ ("Orrin Ho…A
/// Voting Shares", "Orrin Ho…B Voting Shares"), cut again at the end if need be. A label that
/// still reads like another (three names or more, each pair differing elsewhere) ends with its
/// place in `names` ("#3"). Names are unique, so whole names never need it.
pub fn distinct_middle(names: &[&str], width: usize) -> Vec<String> {
    let mut labels: Vec<String> = names.iter().map(|n| shorten_middle(n, width)).collect();
    // Too narrow to tell anything apart (no chart lays out names this short).
    if width < 6 {
        return labels;
    }
    let first = labels.clone();
    for (i, name) in names.iter().enumerate() {
        let shared = (names.iter().zip(&first))
            .filter(|(other, label)| *other != name && **label == first[i])
            .map(|(other, _)| common_prefix(name, other))
            .max();
        if let Some(shared) = shared {
            labels[i] = from_difference(name, shared, width);
        }
    }
    let second = labels.clone();
    for (i, label) in labels.iter_mut().enumerate() {
        if second.iter().filter(|l| *l == label).count() > 1 {
            let mark = format!(" #{}", i + 1);
            let room = width.saturating_sub(mark.chars().count()).max(2);
            *label = format!("{}{mark}", shorten(label, room));
        }
    }
    labels
}

/// How many leading characters `a` and `b` share.
fn common_prefix(a: &str, b: &str) -> usize {
    a.chars().zip(b.chars()).take_while(|(x, y)| x == y).count()
}

/// `text` as a start, an ellipsis and the text from the word holding character `from` on, in
/// `width` characters: the start at most a third of them (ending at a space when that keeps
/// half of it), the rest taking whole words before that one while they fit, else cut at its
/// end with a second ellipsis. When the word is too long to show the character `from` (a name
/// without spaces, or a long word), the rest starts a few characters before it instead; when
/// nothing lies between the start and the rest, no ellipsis stands there.
fn from_difference(text: &str, from: usize, width: usize) -> String {
    let chars: Vec<char> = text.chars().collect();
    let from = from.min(chars.len());
    let mut head = (width.saturating_sub(2) / 3).clamp(1, from.max(1));
    if let Some(space) = chars[..head].iter().rposition(|c| c.is_whitespace()) {
        if space >= head / 2 && space > 0 {
            head = space;
        }
    }
    let room = width.saturating_sub(head + 1).max(1);
    let word_start = |at: usize| {
        chars[..at]
            .iter()
            .rposition(|c| c.is_whitespace())
            .map_or(0, |space| space + 1)
            .max(head)
    };
    let mut start = word_start(from);
    // Earlier words while the rest still fits whole.
    while start > head + 1 && chars.len() - word_start(start - 1) <= room {
        start = word_start(start - 1);
    }
    // The characters shown before a closing ellipsis, when the rest is cut.
    let shown = match chars.len() - start <= room {
        true => room,
        false => room.saturating_sub(1),
    };
    if from >= start + shown {
        start = from.saturating_sub(shown / 2).max(head);
    }
    if start == head {
        // Nothing left out between the start and the rest: the text cut at its end alone.
        return shorten(text, width);
    }
    let head_text: String = chars[..head].iter().collect();
    let rest: String = chars[start..].iter().collect();
    format!(
        "{}…{}",
        head_text.trim_end(),
        shorten(rest.trim_start(), room)
    )
}

/// Breaks `text` into lines of at most `width` characters at spaces (a longer word stands
/// alone on its line).
pub fn wrap(text: &str, width: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut line = String::new();
    for word in text.split_whitespace() {
        if !line.is_empty() && line.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut line));
        }
        if !line.is_empty() {
            line.push(' ');
        }
        line.push_str(word);
    }
    if !line.is_empty() {
        lines.push(line);
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn shortening_keeps_short_text_and_marks_a_cut() {
        assert_eq!(shorten("Corrowick Valves", 16), "Corrowick Valves");
        assert_eq!(shorten("Corrowick Valves", 12), "Corrowick V…");
        assert_eq!(shorten("Corrowick Valves", 11), "Corrowick…");
        assert_eq!(shorten("Ünïcode names", 5), "Ünïc…");
    }

    #[test]
    fn shortening_in_the_middle_keeps_both_ends() {
        assert_eq!(shorten_middle("Corrowick Valves", 16), "Corrowick Valves");
        let america = "Caddlewick Precision Flow Control Holdings North America";
        let europe = "Caddlewick Precision Flow Control Holdings Europe";
        assert_eq!(shorten_middle(america, 24), "Caddlewick…North America");
        assert_eq!(shorten_middle(europe, 24), "Caddlewick…Europe");
        assert_eq!(
            shorten_middle(america, 40),
            "Caddlewick Precision…North America"
        );
        for width in 3..40 {
            assert!(shorten_middle(america, width).chars().count() <= width);
        }
    }

    #[test]
    fn names_alike_but_for_their_middle_are_drawn_apart() {
        let a = "Orrin Valve and Pump Holdings Class A Voting Shares";
        let b = "Orrin Valve and Pump Holdings Class B Voting Shares";
        let c = "Corrowick Valves";
        // Cut in the middle alone, the two read the same.
        assert_eq!(shorten_middle(a, 24), shorten_middle(b, 24));
        let labels = distinct_middle(&[a, b, c], 24);
        assert_eq!(labels[0], "Orrin…A Voting Shares");
        assert_eq!(labels[1], "Orrin…B Voting Shares");
        // Wider, the words before the difference come back while they fit.
        let wide = distinct_middle(&[a, b], 30);
        assert_eq!(wide[0], "Orrin…Class A Voting Shares");
        assert_eq!(labels[2], c);
        // Narrower, the text after the difference is cut too; still apart and within width.
        for width in 8..30 {
            let labels = distinct_middle(&[a, b, c], width);
            assert_ne!(labels[0], labels[1], "{width}");
            assert!(
                labels.iter().all(|l| l.chars().count() <= width),
                "{labels:?}"
            );
        }
        // Names without spaces (written without them, as in Japanese) and a difference inside
        // a long word: the character that differs is shown, and the labels differ without
        // resorting to their places (found by review: "霧港測…器計装工… #1").
        let kanji = ["霧港測器計装工業第一製作所", "霧港測器計装工業第二製作所"];
        let drawn = distinct_middle(&kanji, 12);
        assert_ne!(drawn[0], drawn[1]);
        assert!(
            drawn[0].contains('一') && drawn[1].contains('二'),
            "{drawn:?}"
        );
        assert!(drawn
            .iter()
            .all(|l| !l.contains('#') && l.chars().count() <= 12));
        let long = [
            "Orrin Supercalifragilistic1 Holdings",
            "Orrin Supercalifragilistic2 Holdings",
            "Orrin Supercalifragilistic3 Holdings",
        ];
        let drawn = distinct_middle(&long, 24);
        for (label, digit) in drawn.iter().zip(['1', '2', '3']) {
            assert!(label.contains(digit) && !label.contains('#'), "{drawn:?}");
            assert!(label.chars().count() <= 24, "{label}");
        }
        // Three names each pair of which differs in the cut part: no two labels alike.
        let names = [
            "Tessaly Group Industrial A Holdings North",
            "Tessaly Group Industrial B Holdings North",
            "Tessaly Group Industrial C Holdings North",
        ];
        let labels = distinct_middle(&names, 16);
        for i in 0..3 {
            for j in 0..i {
                assert_ne!(labels[i], labels[j], "{labels:?}");
            }
        }
    }

    #[test]
    fn a_tooltip_goes_on_the_label_that_reads_so() {
        let mut canvas = Canvas::new("test.svg", 100, 50);
        let style = style::text(style::LABEL, &style::INK);
        canvas
            .layer("names", |root| {
                root.draw_text("A & B", &style, (0, 0))?;
                root.draw_text("A & B", &style, (0, 20))
            })
            .unwrap();
        canvas.tooltip("A & B", "A & B Holdings");
        canvas.tooltip("A & B", "A & B Europe");
        let svg = canvas.finish("t", "T", "D");
        let first = svg.find("<title>A &amp; B Holdings</title>A &amp; B\n</text>");
        let second = svg.find("<title>A &amp; B Europe</title>A &amp; B\n</text>");
        assert!(
            first.is_some() && second.is_some() && first < second,
            "{svg}"
        );
    }

    #[test]
    fn wrapping_keeps_words_whole() {
        let lines = wrap("the quick brown fox jumps over the lazy dog", 10);
        assert_eq!(
            lines,
            ["the quick", "brown fox", "jumps over", "the lazy", "dog"]
        );
        assert!(wrap("", 10).is_empty());
    }

    // XML 1.0 §2.4: `<` and `&` may not appear literally in character data, and quotes end an
    // attribute value; the five predefined entities replace them.
    #[test]
    fn escapes_the_xml_specials() {
        assert_eq!(
            escape("a<b & \"c\" 'd'>"),
            "a&lt;b &amp; &quot;c&quot; &apos;d&apos;&gt;"
        );
    }

    #[test]
    fn layers_are_grouped_and_the_document_is_labelled() {
        let mut canvas = Canvas::new("test.svg", 100, 50);
        canvas
            .layer("points", |root| {
                root.draw(&Circle::new((10, 10), 3, style::PRIMARY.filled()))
            })
            .unwrap();
        let svg = canvas.finish("t", "A <title>", "What it shows");
        assert!(svg.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"100\""));
        assert!(svg.contains("<title id=\"t-title\">A &lt;title&gt;</title>"));
        assert!(svg.contains("<g class=\"points\">\n<circle cx=\"10\" cy=\"10\""));
        assert!(svg.trim_end().ends_with("</g>\n</svg>"));
        assert_eq!(svg.matches("<svg").count(), 1);
    }
}
