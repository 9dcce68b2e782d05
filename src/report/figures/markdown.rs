//! The Markdown the memo is written in, as HTML blocks for the report.
//!
//! The report must say everything the memo says, from whatever template rendered it, so it
//! converts the rendered memo instead of keeping a second template. The memo uses a small part
//! of Markdown (headings, paragraphs, `-` lists with indented continuation lines, pipe tables
//! with alignment, images, `**bold**`, `` `code` ``, links, backslash escapes), and that part is
//! what this converts; anything else passes through as escaped text, never as raw HTML.

/// One block of the document.
#[derive(Debug, Clone, PartialEq)]
pub enum Block {
    /// A heading: level (1–6), its text (plain), its HTML and its `id` (unique in the
    /// document: a second heading of the same text gets `-2`, a third `-3`).
    Heading {
        level: usize,
        text: String,
        html: String,
        id: String,
    },
    /// A paragraph made only of images: (alt text, path) of each.
    Images(Vec<(String, String)>),
    /// Anything else, as HTML.
    Html(String),
}

/// Splits `markdown` into blocks.
pub fn blocks(markdown: &str) -> Vec<Block> {
    let lines: Vec<&str> = markdown.lines().collect();
    let mut out = Vec::new();
    // Ids given so far: an id twice in one page breaks the contents' links (HTML requires
    // each id once), which a template repeating a heading would otherwise give.
    let mut taken = std::collections::HashSet::new();
    let mut i = 0;
    while i < lines.len() {
        let line = lines[i];
        let trimmed = line.trim();
        if trimmed.is_empty() {
            i += 1;
        } else if let Some((level, text)) = heading(trimmed) {
            let base = anchor(&text);
            let id = (1..)
                .map(|n| match n {
                    1 => base.clone(),
                    n => format!("{base}-{n}"),
                })
                .find(|id| taken.insert(id.clone()))
                .expect("some suffix is free");
            out.push(Block::Heading {
                level,
                html: format!("<h{level} id=\"{id}\">{}</h{level}>", inline(&text)),
                text: plain(&text),
                id,
            });
            i += 1;
        } else if trimmed.starts_with("```") {
            let end = (i + 1..lines.len())
                .find(|&j| lines[j].trim().starts_with("```"))
                .unwrap_or(lines.len());
            let code: Vec<String> = lines[i + 1..end].iter().map(|l| escape(l)).collect();
            out.push(Block::Html(format!(
                "<pre><code>{}</code></pre>",
                code.join("\n")
            )));
            i = end + 1;
        } else if trimmed.starts_with('|') {
            let end = (i..lines.len())
                .find(|&j| !lines[j].trim().starts_with('|'))
                .unwrap_or(lines.len());
            out.push(Block::Html(table(&lines[i..end])));
            i = end;
        } else if is_item(line) {
            let end = (i + 1..lines.len())
                .find(|&j| {
                    lines[j].trim().is_empty() || !(is_item(lines[j]) || lines[j].starts_with(' '))
                })
                .unwrap_or(lines.len());
            out.push(Block::Html(list(&lines[i..end])));
            i = end;
        } else {
            let end = (i + 1..lines.len())
                .find(|&j| {
                    let t = lines[j].trim();
                    t.is_empty() || heading(t).is_some() || t.starts_with('|') || is_item(lines[j])
                })
                .unwrap_or(lines.len());
            let text = lines[i..end]
                .iter()
                .map(|l| l.trim())
                .collect::<Vec<_>>()
                .join(" ");
            out.push(match images_only(&text) {
                Some(images) => Block::Images(images),
                None => Block::Html(format!("<p>{}</p>", inline(&text))),
            });
            i = end;
        }
    }
    out
}

fn heading(line: &str) -> Option<(usize, String)> {
    let level = line.chars().take_while(|&c| c == '#').count();
    let rest = &line[level..];
    ((1..=6).contains(&level) && rest.starts_with(' ')).then(|| (level, rest.trim().to_string()))
}

fn is_item(line: &str) -> bool {
    line.starts_with("- ") || line.starts_with("* ")
}

/// An id for a heading: lower-case letters and digits, other runs as one hyphen.
pub fn anchor(text: &str) -> String {
    let mut id = String::from("s-");
    for c in plain(text).chars() {
        if c.is_alphanumeric() {
            id.extend(c.to_lowercase());
        } else if !id.ends_with('-') {
            id.push('-');
        }
    }
    id.trim_end_matches('-').to_string()
}

/// The text without Markdown marks: bold and code marks dropped, an escaped character kept as
/// itself (`A\\B \#` reads `A\B #`).
fn plain(text: &str) -> String {
    let text = text.replace("**", "");
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars();
    while let Some(c) = chars.next() {
        match c {
            '`' => {}
            '\\' => match chars.clone().next() {
                Some(next) if next.is_ascii_punctuation() => {
                    out.push(next);
                    chars.next();
                }
                _ => out.push(c),
            },
            other => out.push(other),
        }
    }
    out
}

/// A list, with one level of items nested under an item (an indented `- `, as the memo's
/// "Figures to check" lists them; found by review: they ran together in one item). A line
/// indented without a marker continues the item (or nested item) before it.
fn list(lines: &[&str]) -> String {
    let mut items: Vec<(String, Vec<String>)> = Vec::new();
    for line in lines {
        let nested = line.starts_with(' ') && is_item(line.trim_start());
        if is_item(line) {
            items.push((line[2..].trim().to_string(), Vec::new()));
        } else if let Some((text, inner)) = items.last_mut() {
            let continued = match (nested, inner.last_mut()) {
                (true, _) => {
                    inner.push(line.trim_start()[2..].trim().to_string());
                    continue;
                }
                (false, Some(last)) => last,
                (false, None) => text,
            };
            continued.push(' ');
            continued.push_str(line.trim());
        }
    }
    let item = |text: &str| format!("<li>{}</li>", inline(text));
    let body: String = (items.iter())
        .map(|(text, inner)| match inner.is_empty() {
            true => item(text),
            false => format!(
                "<li>{}<ul>{}</ul></li>",
                inline(text),
                inner.iter().map(|t| item(t)).collect::<String>()
            ),
        })
        .collect();
    format!("<ul>{body}</ul>")
}

/// A cell a line break would garble: an interval (`[1.364, 1.562]`) or an ISO date, which a
/// browser otherwise breaks at the comma or the hyphen when a long name narrows its column.
fn unbreakable(text: &str) -> bool {
    let text = text.trim();
    let interval = text.starts_with('[') && text.ends_with(']') && text.len() <= 32;
    let date = text.len() == 10
        && text.char_indices().all(|(i, c)| match i {
            4 | 7 => c == '-',
            _ => c.is_ascii_digit(),
        });
    interval || date
}

/// A pipe table: header row, delimiter row (with `:` for alignment), body rows.
fn table(lines: &[&str]) -> String {
    let rows: Vec<Vec<String>> = lines.iter().map(|l| cells(l)).collect();
    let delimiter = |row: &Vec<String>| {
        !row.is_empty()
            && row
                .iter()
                .all(|c| !c.is_empty() && c.chars().all(|ch| matches!(ch, '-' | ':')))
    };
    if rows.len() < 2 || !delimiter(&rows[1]) {
        let text = lines
            .iter()
            .map(|l| inline(l.trim()))
            .collect::<Vec<_>>()
            .join("<br>");
        return format!("<p>{text}</p>");
    }
    let align: Vec<&str> = rows[1]
        .iter()
        .map(|c| match (c.starts_with(':'), c.ends_with(':')) {
            (_, true) => " class=\"num\"",
            _ => "",
        })
        .collect();
    let cell = |tag: &str, i: usize, text: &str| {
        let class = match align.get(i).copied().unwrap_or("") {
            "" if unbreakable(text) => " class=\"keep\"",
            class => class,
        };
        format!("<{tag}{class}>{}</{tag}>", inline(text))
    };
    let mut html = String::from("<div class=\"table\"><table>");
    if rows[0].iter().any(|c| !c.is_empty()) {
        html.push_str("<thead><tr>");
        html.extend(rows[0].iter().enumerate().map(|(i, c)| cell("th", i, c)));
        html.push_str("</tr></thead>");
    }
    html.push_str("<tbody>");
    for row in &rows[2..] {
        html.push_str("<tr>");
        html.extend(row.iter().enumerate().map(|(i, c)| cell("td", i, c)));
        html.push_str("</tr>");
    }
    html.push_str("</tbody></table></div>");
    html
}

/// The cells of a table row, split on unescaped pipes; an escaped pipe is the cell's own `|`,
/// in a code span too (GFM §4.10: the escape belongs to the table, not the cell's content).
fn cells(line: &str) -> Vec<String> {
    let inner = line.trim();
    let inner = inner.strip_prefix('|').unwrap_or(inner);
    let inner = inner
        .strip_suffix('|')
        .filter(|s| !s.ends_with('\\'))
        .unwrap_or(inner);
    let mut out = Vec::new();
    let mut current = String::new();
    let mut chars = inner.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            // An escaped pipe is the cell's; any other escape is kept whole for the cell's
            // inline text, so `\\|` is an escaped backslash before an escaped pipe.
            '\\' => match chars.next() {
                Some('|') => current.push('|'),
                Some(next) => {
                    current.push('\\');
                    current.push(next);
                }
                None => current.push('\\'),
            },
            '|' => out.push(std::mem::take(&mut current).trim().to_string()),
            other => current.push(other),
        }
    }
    out.push(current.trim().to_string());
    out
}

/// `Some` when the paragraph is nothing but images `![alt](path)`.
fn images_only(text: &str) -> Option<Vec<(String, String)>> {
    let mut rest = text.trim();
    let mut images = Vec::new();
    while !rest.is_empty() {
        let after = rest.strip_prefix("![")?;
        let (alt, after) = after.split_once("](")?;
        let (path, after) = after.split_once(')')?;
        images.push((plain(alt), path.trim().to_string()));
        rest = after.trim_start();
    }
    (!images.is_empty()).then_some(images)
}

/// Inline Markdown: code spans, bold, links, images, escapes; the rest HTML-escaped.
pub fn inline(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 16);
    let mut rest = text;
    let mut bold = false;
    while let Some(c) = rest.chars().next() {
        if let Some(after) = rest.strip_prefix('\\') {
            match after.chars().next() {
                // Any ASCII punctuation may be escaped (CommonMark 0.31, "Backslash escapes").
                Some(next) if next.is_ascii_punctuation() => {
                    escape_char(&mut out, next);
                    rest = &after[next.len_utf8()..];
                }
                _ => {
                    out.push('\\');
                    rest = after;
                }
            }
        } else if rest.starts_with('`') {
            let fence = rest.len() - rest.trim_start_matches('`').len();
            let after = &rest[fence..];
            match code_span_end(after, fence) {
                Some((code, tail)) => {
                    out.push_str("<code>");
                    escape_into(&mut out, code);
                    out.push_str("</code>");
                    rest = tail;
                }
                None => {
                    out.push_str(&rest[..fence]);
                    rest = after;
                }
            }
        } else if let Some(after) = rest.strip_prefix("**") {
            if bold || after.contains("**") {
                out.push_str(if bold { "</strong>" } else { "<strong>" });
                bold = !bold;
            } else {
                out.push_str("**");
            }
            rest = after;
        } else if let Some((html, tail)) = link(rest) {
            out.push_str(&html);
            rest = tail;
        } else {
            // This character, and the run of plain text after it (up to the next character that
            // can open a mark), as text.
            let run = c.len_utf8()
                + rest[c.len_utf8()..]
                    .find(['\\', '`', '*', '[', '!'])
                    .unwrap_or(rest.len() - c.len_utf8());
            escape_into(&mut out, &rest[..run]);
            rest = &rest[run..];
        }
    }
    if bold {
        out.push_str("</strong>");
    }
    out
}

/// The code of a span opened by `fence` backticks, and what follows its closing run of as many
/// backticks (CommonMark 0.31, "Code spans": a longer or shorter run is part of the code; one
/// space inside each end is stripped when both are there and the code is not all spaces).
fn code_span_end(text: &str, fence: usize) -> Option<(&str, &str)> {
    let mut from = 0;
    while let Some(start) = text[from..].find('`').map(|at| from + at) {
        let run = text[start..].len() - text[start..].trim_start_matches('`').len();
        if run == fence {
            let code = &text[..start];
            let code = match code.len() > 2 && code.starts_with(' ') && code.ends_with(' ') {
                true if code.trim() != "" => &code[1..code.len() - 1],
                _ => code,
            };
            return Some((code, &text[start + run..]));
        }
        from = start + run;
    }
    None
}

/// `[text](url)` or `![alt](url)` at the start of `text`: its HTML and what follows.
fn link(text: &str) -> Option<(String, &str)> {
    let (image, after) = match text.strip_prefix("![") {
        Some(after) => (true, after),
        None => (false, text.strip_prefix('[')?),
    };
    let (label, after) = after.split_once("](")?;
    let (url, tail) = after.split_once(')')?;
    let html = if image {
        format!("<img src=\"{}\" alt=\"{}\">", escape(url), escape(label))
    } else {
        format!("<a href=\"{}\">{}</a>", escape(url), inline(label))
    };
    Some((html, tail))
}

/// Escapes text for HTML content and attribute values.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    escape_into(&mut out, text);
    out
}

/// [`escape`], appended to `out`.
fn escape_into(out: &mut String, text: &str) {
    let mut rest = text;
    while let Some(at) = rest.find(['<', '>', '&', '"']) {
        out.push_str(&rest[..at]);
        escape_char(out, rest[at..].chars().next().expect("found"));
        rest = &rest[at + 1..];
    }
    out.push_str(rest);
}

/// One character of [`escape`], appended to `out`.
fn escape_char(out: &mut String, c: char) {
    match c {
        '<' => out.push_str("&lt;"),
        '>' => out.push_str("&gt;"),
        '&' => out.push_str("&amp;"),
        '"' => out.push_str("&quot;"),
        other => out.push(other),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // CommonMark 0.31, "Backslash escapes": any ASCII punctuation after a backslash is the
    // character itself, so an escaped `<b>` in a justification is text, not a tag.
    #[test]
    fn an_escaped_angle_bracket_is_text() {
        assert_eq!(inline("R² \\<b\\> and \\<i>"), "R² &lt;b&gt; and &lt;i&gt;");
        assert_eq!(
            crate::report::format::plain_text("a <b>x</b> [y]".into()),
            "a \\<b>x\\</b> \\[y\\]"
        );
        // A note: its own code spans kept whole, a lone backtick escaped (it opens nothing, and
        // must not stop the escaping after it), and the escapes read back as the text.
        let note = "`beta.x = [1]` for [a](b) *c* d`e <i>";
        let escaped = crate::report::format::prose(note.into());
        assert_eq!(escaped, "`beta.x = [1]` for \\[a\\](b) \\*c\\* d\\`e \\<i>");
        assert_eq!(
            inline(&escaped),
            "<code>beta.x = [1]</code> for [a](b) *c* d`e &lt;i&gt;"
        );
        // Brackets that open no link are left as they read; every `<` is escaped (two names
        // joined could make one tag), and reads back as itself.
        let plain = "peers[].stability and the keys of [target], p < 0.001";
        let escaped = crate::report::format::prose(plain.into());
        assert_eq!(escaped, plain.replace('<', "\\<"));
        assert_eq!(inline(&escaped), escape(plain));
    }

    // CommonMark 0.31, "Emphasis and strong emphasis" (an underscore between two letters
    // opens nothing) and "Entity and numeric character references", GFM "Strikethrough" (from
    // memory): the marks a name or a note could hold are escaped, the rest left as written, and
    // the converter reads every escape back as the character.
    #[test]
    fn underscores_tildes_and_references_are_escaped_where_they_would_mark() {
        use crate::report::format::{plain_text, prose};
        let cases = [
            ("_Draft_ of cost_pre_tax", "\\_Draft\\_ of cost_pre_tax"),
            ("~~old~~ ~5%", "\\~\\~old\\~\\~ \\~5%"),
            (
                "R&D &amp; A & B &#38; &#x26; &x",
                "R&D \\&amp; A & B \\&#38; \\&#x26; \\&x",
            ),
            ("a__b snake_case", "a\\_\\_b snake_case"),
        ];
        for (text, escaped) in cases {
            assert_eq!(plain_text(text.into()), escaped, "{text}");
            assert_eq!(prose(text.into()), escaped, "{text}");
            let html = inline(escaped);
            assert_eq!(html, escape(text), "{text}");
        }
        // What would open a block where the text begins a line or a list item (CommonMark
        // 0.31, "ATX headings", "Block quotes", "List items", "Setext headings", from memory).
        for (text, escaped) in [
            ("# 2 Holdings", "\\# 2 Holdings"),
            ("Case #", "Case \\#"),
            ("Case ##", "Case \\##"),
            ("Case#", "Case#"),
            ("> X", "\\> X"),
            ("- X", "\\- X"),
            ("+ X", "\\+ X"),
            ("== X", "\\== X"),
            ("1. First", "1\\. First"),
            ("12) Twelve", "12\\) Twelve"),
            ("3M Partners", "3M Partners"),
        ] {
            assert_eq!(plain_text(text.into()), escaped, "{text}");
            assert_eq!(inline(escaped), escape(text), "{text}");
        }
        // A code span around text that holds backticks (CommonMark 0.31, "Code spans",
        // examples 329 and 330 from memory: ``` `` foo ` bar `` ``` is `foo ` bar`).
        for text in ["data/ind`ex.csv", "a``b", "`x`", "plain.csv"] {
            let span = crate::report::format::code_span(text.into());
            assert_eq!(
                inline(&span),
                format!("<code>{}</code>", escape(text)),
                "{span}"
            );
        }
        assert_eq!(inline("`` foo ` bar ``"), "<code>foo ` bar</code>");
        assert_eq!(inline("`a` and ``b``"), "<code>a</code> and <code>b</code>");
        assert_eq!(inline("an ``unclosed` span"), "an ``unclosed` span");
        // A note that opens a list item with a peer's name escapes its block opener as the
        // name would (found by review); a reference a template's next text could complete is
        // escaped at the text's end.
        assert_eq!(
            prose("1. Brenvale: the rolling beta moved".into()),
            "1\\. Brenvale: the rolling beta moved"
        );
        assert_eq!(prose("# Brenvale".into()), "\\# Brenvale");
        assert_eq!(plain_text("Foo&amp".into()), "Foo\\&amp");
        assert_eq!(plain_text("R&D Holdings".into()), "R&D Holdings");
        // Lines and surrounding white space: one line, no indentation to make a code block.
        assert_eq!(plain_text("  x\n# H\r\n\n- y  ".into()), "x # H - y");
        // Inside a note's own code span nothing is escaped.
        assert_eq!(prose("`_x_ ~y~`".into()), "`_x_ ~y~`");
    }

    // GFM §4.10, example 200 (from memory): an escaped pipe in a table cell is the cell's own
    // `|`, inside a code span too.
    #[test]
    fn an_escaped_pipe_in_a_code_span_stays_in_its_cell() {
        let b = blocks("| File | N |\n|---|---:|\n| `a\\|b.csv` | 1 |\n");
        let Block::Html(html) = &b[0] else {
            panic!("a table: {b:?}")
        };
        assert!(html.contains("<td><code>a|b.csv</code></td>"), "{html}");
        // A name `a\|b` as `plain_text` writes it: an escaped backslash, then an escaped pipe
        // (GFM §4.10 and CommonMark "Backslash escapes": the cell holds `a\\|b`, shown `a\|b`).
        let name = crate::report::format::plain_text("a\\|b".into());
        assert_eq!(name, "a\\\\\\|b");
        let b = blocks(&format!("| Peer | N |\n|---|---:|\n| {name} | 1 |\n"));
        let Block::Html(html) = &b[0] else {
            panic!("a table: {b:?}")
        };
        assert!(html.contains("<td>a\\|b</td><td class"), "{html}");
        // A path holding `\|` in a code span keeps its row whole (its backslash cannot be shown
        // in a GFM table; see `table_cell`).
        let path = crate::report::format::table_cell(crate::report::format::code_span(
            "data/a\\|b.csv".into(),
        ));
        let b = blocks(&format!("| File | N |\n|---|---:|\n| {path} | 1 |\n"));
        let Block::Html(html) = &b[0] else {
            panic!("a table: {b:?}")
        };
        assert!(
            html.contains("<td><code>data/a|b.csv</code></td><td class"),
            "{html}"
        );
    }

    // An interval and an ISO date are kept on one line; a name or a hash may wrap.
    #[test]
    fn intervals_and_dates_are_kept_whole() {
        let html = table(&[
            "| Peer | 95% CI | Date | SHA-256 |",
            "|---|---|---|---|",
            "| A long name | [1.364, 1.562] | 2021-01-04 | 3fb9d096 |",
        ]);
        assert!(
            html.contains("<td class=\"keep\">[1.364, 1.562]</td>"),
            "{html}"
        );
        assert!(
            html.contains("<td class=\"keep\">2021-01-04</td>"),
            "{html}"
        );
        assert!(html.contains("<td>A long name</td>") && html.contains("<td>3fb9d096</td>"));
        assert!(!unbreakable("2021-1-04") && !unbreakable("[a long list of many, many words]"));
    }

    // The constructs of CommonMark 0.31 / GFM tables that the memo uses, with the HTML those
    // specifications give for them (GFM §4.10 tables: alignment from the delimiter row; escaped
    // pipes inside cells).
    // A nested list as CommonMark renders it (spec 0.30, "List items", from memory): the
    // indented items in a list of their own inside the item above, a continuation line joined
    // to the nested item it follows.
    #[test]
    fn nested_items_keep_their_own_list() {
        let b = blocks("- Figures to check:\n  - one\n    more\n  - two\n- last");
        assert_eq!(
            b,
            [Block::Html(
                "<ul><li>Figures to check:<ul><li>one more</li><li>two</li></ul></li>\
                 <li>last</li></ul>"
                    .into()
            )]
        );
    }

    #[test]
    fn converts_the_memo_subset() {
        let md = "# Title\n\nSome **bold** and `a<b` text\ncontinued.\n\n- one\n  more\n- two\n\n\
                  | A | B \\| C |\n|---|---:|\n| x | 1.0 |\n\n![Chart](figures/a.svg)\n![B](figures/b.svg)\n";
        let b = blocks(md);
        assert_eq!(
            b[0],
            Block::Heading {
                level: 1,
                text: "Title".into(),
                html: "<h1 id=\"s-title\">Title</h1>".into(),
                id: "s-title".into()
            }
        );
        assert_eq!(
            b[1],
            Block::Html(
                "<p>Some <strong>bold</strong> and <code>a&lt;b</code> text continued.</p>".into()
            )
        );
        assert_eq!(
            b[2],
            Block::Html("<ul><li>one more</li><li>two</li></ul>".into())
        );
        assert_eq!(
            b[3],
            Block::Html(
                "<div class=\"table\"><table><thead><tr><th>A</th><th class=\"num\">B | C</th></tr></thead>\
                 <tbody><tr><td>x</td><td class=\"num\">1.0</td></tr></tbody></table></div>"
                    .into()
            )
        );
        assert_eq!(
            b[4],
            Block::Images(vec![
                ("Chart".into(), "figures/a.svg".into()),
                ("B".into(), "figures/b.svg".into())
            ])
        );
    }

    #[test]
    fn raw_html_is_escaped_never_passed_through() {
        assert_eq!(
            inline("<script>x</script> & \"q\""),
            "&lt;script&gt;x&lt;/script&gt; &amp; &quot;q&quot;"
        );
        assert_eq!(inline("a ** b"), "a ** b");
        assert_eq!(
            inline("[site](https://example.org/a?b=1&c=2)"),
            "<a href=\"https://example.org/a?b=1&amp;c=2\">site</a>"
        );
    }

    #[test]
    fn an_empty_header_row_gives_no_thead() {
        let html = table(&["| | |", "|---|---|", "| a | b |"]);
        assert!(
            !html.contains("<thead>") && html.contains("<td>a</td>"),
            "{html}"
        );
    }
}
