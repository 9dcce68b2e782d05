//! `report.html`: the memo and its charts in one self-contained page a reviewer opens in any
//! browser and prints.
//!
//! The page is the rendered memo (whatever template the run used) converted to HTML
//! ([`super::markdown`]), with every chart the memo links inlined as SVG where the link stands;
//! charts the template does not link are gathered in a section of their own before the
//! cautions. Styles are inline, there is no script and nothing is fetched. For print, each
//! section starts a new page, tables keep their header rows on every page and rows whole, and
//! the cautions come last.

use super::markdown::{self, Block};
use super::Figure;

/// The cautions every report ends with, used when the memo's template has none of its own.
const CAUTIONS: &str = "<h2 id=\"s-cautions\">Cautions</h2><ul>\
<li><strong>A discount rate is a judgement.</strong> The figures here record a calculation from the inputs given; the choice of peers, index, window, frequency and premiums can move the result by more than any interval shows.</li>\
<li><strong>Estimates have error.</strong> Every beta is an estimate with statistical error, and so is every figure built on it; read the confidence intervals and the Monte Carlo range, not only the point estimates.</li>\
<li><strong>Inputs as supplied.</strong> Market data, capital-structure figures, rates and premiums were supplied by the user and not verified by the tool; verify each against its source before relying on the result.</li>\
<li><strong>Not advice.</strong> This is not investment, tax, legal or accounting advice nor a fairness opinion; defer to the applicable standards and to qualified professionals.</li>\
</ul>";

/// The HTML page of a rendered memo with `figures`.
pub fn page(memo: &str, figures: &[Figure]) -> String {
    let blocks = markdown::blocks(memo);
    let mut placed = vec![false; figures.len()];
    let mut title = String::from("Cost of capital report");
    let mut cover = String::new();
    let mut sections: Vec<(String, String, String)> = Vec::new(); // (id, heading text, html)
    for block in &blocks {
        let html = match block {
            Block::Heading {
                level: 1,
                text,
                html,
                ..
            } => {
                title = text.clone();
                cover.push_str(html);
                continue;
            }
            Block::Heading {
                level: 2,
                text,
                html,
                id,
            } => {
                sections.push((id.clone(), text.clone(), html.clone()));
                continue;
            }
            Block::Heading { html, .. } => html.clone(),
            Block::Images(images) => gallery(images, figures, &mut placed),
            Block::Html(html) => html.clone(),
        };
        match sections.last_mut() {
            Some((_, _, body)) => body.push_str(&html),
            None => cover.push_str(&html),
        }
    }
    let unplaced: Vec<&Figure> = figures
        .iter()
        .zip(&placed)
        .filter(|(_, &p)| !p)
        .map(|(f, _)| f)
        .collect();
    gather_charts_and_cautions(&mut sections, &unplaced);
    let mut body = String::new();
    body.push_str(&format!(
        "<header class=\"cover\">{cover}{}</header>",
        contents(&sections)
    ));
    for (id, text, html) in &sections {
        let class = if text.to_lowercase().contains("caution") {
            " class=\"cautions\""
        } else {
            ""
        };
        body.push_str(&format!(
            "<section id=\"{id}-section\"{class}>{html}</section>"
        ));
    }
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <meta name=\"color-scheme\" content=\"light\">\n<title>{}</title>\n<style>\n{STYLE}</style>\n\
         </head>\n<body>\n<main>\n{body}\n</main>\n</body>\n</html>\n",
        markdown::escape(&title)
    )
}

/// Adds the section of charts the memo does not link (before its cautions), and the standard
/// cautions, listed in the contents like any section, when the memo has none of its own.
fn gather_charts_and_cautions(sections: &mut Vec<(String, String, String)>, unplaced: &[&Figure]) {
    let cautions_at = sections
        .iter()
        .rposition(|(_, text, _)| text.to_lowercase().contains("caution"));
    if !unplaced.is_empty() {
        let body: String = unplaced.iter().map(|f| figure(f)).collect();
        let id = free_id(sections, "s-charts");
        let charts = (
            id.clone(),
            "Charts".to_string(),
            format!("<h2 id=\"{id}\">Charts</h2><div class=\"gallery\">{body}</div>"),
        );
        sections.insert(cautions_at.unwrap_or(sections.len()), charts);
    }
    if cautions_at.is_none() {
        let id = free_id(sections, "s-cautions");
        let html = CAUTIONS.replacen("s-cautions", &id, 1);
        sections.push((id, "Cautions".to_string(), html));
    }
}

/// `id`, or `id-2`, `id-3`… when a section of the memo has it already (a template's own
/// "Charts" heading, say): each id once in the page.
fn free_id(sections: &[(String, String, String)], id: &str) -> String {
    (1..)
        .map(|n| match n {
            1 => id.to_string(),
            n => format!("{id}-{n}"),
        })
        .find(|candidate| sections.iter().all(|(taken, ..)| taken != candidate))
        .expect("some suffix is free")
}

/// The list of sections under the title.
fn contents(sections: &[(String, String, String)]) -> String {
    let items: String = sections
        .iter()
        .map(|(id, text, _)| format!("<li><a href=\"#{id}\">{}</a></li>", markdown::escape(text)))
        .collect();
    format!(
        "<nav aria-label=\"Contents\"><h2 class=\"contents\">Contents</h2><ol>{items}</ol></nav>"
    )
}

/// A paragraph of image links: each chart the run drew inlined, any other image as a link.
fn gallery(images: &[(String, String)], figures: &[Figure], placed: &mut [bool]) -> String {
    let mut html = String::new();
    for (alt, path) in images {
        match figures.iter().position(|f| &f.file_name == path) {
            Some(i) => {
                placed[i] = true;
                html.push_str(&figure(&figures[i]));
            }
            None => html.push_str(&format!(
                "<p><img src=\"{}\" alt=\"{}\"></p>",
                markdown::escape(path),
                markdown::escape(alt)
            )),
        }
    }
    let class = if images.len() > 1 {
        "gallery two"
    } else {
        "gallery"
    };
    format!("<div class=\"{class}\">{html}</div>")
}

fn figure(figure: &Figure) -> String {
    format!(
        "<figure class=\"chart {}\" data-file=\"{}\">{}</figure>",
        crate::report::format::label(&figure.kind),
        markdown::escape(&figure.file_name),
        figure.svg.trim_end()
    )
}

/// The page's styles: screen first, then print (A4 and Letter alike: no fixed page size). Found
/// by review and checked in Chromium by tests/browser/check_report.py: on a screen narrower than
/// 40rem a chart keeps at least 34rem and scrolls sideways (at 400 px its text was 5 px high;
/// wider screens keep the gallery's columns, which may be narrower than 34rem); the page
/// widens to 80rem, so a gallery's two columns draw regression charts near their own size; a
/// code span (a file's path in a table) breaks only where it would overflow, not down to one
/// character a line; in print a gallery's charts take 70% of the text width, so two regression
/// charts share a page, and the paragraph after a table stays with it.
const STYLE: &str = r#":root { --ink: #1F2933; --muted: #52606D; --rule: #DDE2E8; --primary: #1F4E85; --accent: #B05A00; --wash: #F4F6F9; }
* { box-sizing: border-box; }
html { font-family: system-ui, -apple-system, 'Segoe UI', 'Helvetica Neue', Arial, 'Liberation Sans', sans-serif; color: var(--ink); background: #FFFFFF; font-size: 15px; line-height: 1.5; }
body { margin: 0; }
main { max-width: 80rem; margin: 0 auto; padding: 2rem 1.5rem 4rem; }
h1 { font-size: 1.75rem; line-height: 1.25; margin: 0 0 1rem; color: var(--primary); }
h2 { font-size: 1.3rem; margin: 2.5rem 0 0.75rem; padding-bottom: 0.3rem; border-bottom: 2px solid var(--rule); }
h2.contents { font-size: 1rem; border: 0; margin: 1.5rem 0 0.25rem; color: var(--muted); text-transform: uppercase; letter-spacing: 0.05em; }
h3 { font-size: 1.05rem; margin: 1.5rem 0 0.5rem; }
p, ul { margin: 0.6rem 0; max-width: 52rem; }
li { margin: 0.2rem 0; }
a { color: var(--primary); }
code { font-family: ui-monospace, 'SFMono-Regular', Menlo, Consolas, 'Liberation Mono', monospace; font-size: 0.85em; background: var(--wash); padding: 0.05em 0.3em; border-radius: 3px; overflow-wrap: break-word; }
nav ol { columns: 2; margin: 0; padding-left: 0; list-style: none; max-width: 52rem; }
.table { overflow-x: auto; margin: 0.8rem 0 1.2rem; }
table { border-collapse: collapse; font-size: 0.87rem; font-variant-numeric: tabular-nums; }
th, td { padding: 0.3rem 0.6rem; border-bottom: 1px solid var(--rule); text-align: left; vertical-align: top; }
th { background: var(--wash); font-weight: 600; border-bottom: 2px solid #C5CDD6; }
td.num, th.num { text-align: right; white-space: nowrap; }
td.keep { white-space: nowrap; }
tbody tr:nth-child(even) td { background: #FAFBFC; }
.gallery { margin: 1rem 0 1.5rem; }
.gallery.two { display: grid; grid-template-columns: repeat(auto-fit, minmax(min(30rem, 100%), 1fr)); gap: 1rem; }
figure.chart { margin: 0 0 1rem; overflow-x: auto; }
figure.chart svg { display: block; width: 100%; height: auto; max-width: 760px; border: 1px solid var(--rule); border-radius: 4px; }
@media (max-width: 40rem) { figure.chart svg { min-width: 34rem; } }
section.cautions { border-top: 3px solid var(--accent); margin-top: 2.5rem; }
section.cautions h2 { border: 0; }
@media print {
  @page { margin: 15mm 13mm 16mm; }
  html { font-size: 9.5pt; }
  main { max-width: none; padding: 0; }
  h1 { font-size: 17pt; }
  h2 { font-size: 13pt; margin-top: 0; break-after: avoid; }
  h3 { break-after: avoid; }
  section { break-before: page; }
  section:first-of-type { break-before: auto; }
  .gallery.two figure.chart svg { width: 70%; max-width: 70%; margin: 0 auto; }
  figure.chart { overflow: visible; }
  figure.chart svg { min-width: 0; }
  .table + p { break-before: avoid; }
  nav { break-inside: avoid; }
  .table { overflow: visible; }
  table { font-size: 7.5pt; width: 100%; }
  header.cover table { width: auto; font-size: 9pt; }
  th, td { padding: 0.15rem 0.3rem; }
  thead { display: table-header-group; }
  tr, figure, .gallery.two > figure { break-inside: avoid; }
  td.num, th.num { white-space: normal; }
  .gallery.two { display: block; }
  figure.chart svg { max-width: 100%; max-height: 240mm; border: 0; }
  p, li { orphans: 3; widows: 3; }
  a { color: inherit; text-decoration: none; }
  code { background: none; padding: 0; }
}
"#;

#[cfg(test)]
mod tests {
    use super::*;
    use crate::report::figures::Kind;

    fn chart(file: &str) -> Figure {
        Figure {
            kind: Kind::Betas,
            file_name: file.into(),
            title: "T".into(),
            caption: "C".into(),
            peer: None,
            svg: "<svg role=\"img\"></svg>\n".into(),
        }
    }

    // The page inlines a linked chart where the memo links it, gathers an unlinked one before
    // the cautions, loads nothing (no src or href outside the page) and runs no script.
    #[test]
    fn charts_are_inlined_and_the_cautions_come_last() {
        let memo =
            "# Memo\n\n## 1. Data\n\ntext\n\n![T](figures/a.svg)\n\n## 2. Cautions\n\n- careful\n";
        let html = page(memo, &[chart("figures/a.svg"), chart("figures/b.svg")]);
        assert_eq!(html.matches("<svg").count(), 2);
        let data = html.find("s-1-data-section").unwrap();
        let charts = html.find("s-charts-section").unwrap();
        let cautions = html.find("s-2-cautions-section").unwrap();
        assert!(data < charts && charts < cautions);
        assert!(!html.contains("<script") && !html.contains("src=") && !html.contains("http"));
        assert!(html.trim_end().ends_with("</html>"));
    }

    // A memo without cautions gets the standard ones last, listed in the contents (found by
    // review: they were missing from it).
    #[test]
    fn a_memo_without_cautions_gets_the_standard_ones() {
        let html = page("# Memo\n\n## Only\n\ntext\n", &[]);
        assert!(html.contains("A discount rate is a judgement"));
        assert!(html.rfind("Only").unwrap() < html.find("id=\"s-cautions\"").unwrap());
        assert!(
            html.contains("<li><a href=\"#s-cautions\">Cautions</a></li>"),
            "{html}"
        );
        assert!(html.contains("<section id=\"s-cautions-section\" class=\"cautions\">"));
    }

    // A template that repeats a heading (and names one "Charts", as the gathered charts'
    // section is named) gets each id once, and the contents link each section (HTML Living
    // Standard, "The id attribute": unique in the document). Found by review.
    #[test]
    fn repeated_headings_get_ids_of_their_own() {
        let memo = "# Memo\n\n## Notes\n\na\n\n## Notes\n\nb\n\n## Charts\n\nc\n";
        let html = page(memo, &[chart("figures/b.svg")]);
        let ids: Vec<&str> = html
            .split(" id=\"")
            .skip(1)
            .map(|rest| rest.split('"').next().unwrap())
            .collect();
        let unique: std::collections::HashSet<&&str> = ids.iter().collect();
        assert_eq!(unique.len(), ids.len(), "{ids:?}");
        for id in ["s-notes", "s-notes-2", "s-charts", "s-charts-2"] {
            assert!(
                html.contains(&format!("<a href=\"#{id}\">")),
                "{id}: {html}"
            );
        }
    }
}
