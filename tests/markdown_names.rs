//! Names, titles and labels as a Markdown viewer and a browser read them. A run of the demo case
//! with names that hold every mark Markdown gives a meaning to (emphasis, strikethrough, a pipe,
//! a backslash, character references, a heading's `#`, a block quote's `>`, a list's `1.` and
//! `12)`, an unclosed `<img` and `<script`, an HTML comment's `<!--`) is read by markdown-it-py
//! (CommonMark 0.31 with GFM tables and strikethrough, raw HTML allowed, as a viewer renders
//! memo.md) and its report.html by Python's html.parser, beside a run with the demo's own names
//! and the same number of overrides (`tests/reference/check_markdown.py`). The two memos must
//! have the same token structure (no emphasis, heading, list, quote, table cell or raw HTML that
//! the demo's memo lacks), every name must read verbatim, and every chart must parse as XML.
//! Found by review: a subject `<!-- hidden` hid all but one section of memo.md from a viewer;
//! two names joined in a sentence made one `<img … onerror=…>` tag; `*`, `_` and `~` formatted
//! names; a `|` split a table row; a backslash before a `|` was lost.

mod common;

use common::{hurdle, DEMO_CASE};

/// The demo's own values of the keys the hostile run sets, so both memos list as many overrides.
const DEMO: [&str; 11] = [
    "peer.0.name=\"Brenvale Fluid Systems\"",
    "peer.1.name=\"Corrowick Valves\"",
    "peer.2.name=\"Dunmere Hydraulics\"",
    "peer.3.name=\"Estwold Flow Controls\"",
    "peer.4.name=\"Fenhallow Seals\"",
    "case.title=\"Quillmarsh Pumps: cost of capital for a fair-value measurement (demo)\"",
    "case.subject=\"Quillmarsh Pumps (fictional)\"",
    "market.index.name=\"Demo broad market index (fictional)\"",
    "case.peer_selection=\"Illustrative: listed makers of industrial pumps, valves and seals with \
     at least three years of prices (invented demo peers).\"",
    "market.risk_free_rate_justification=\"Illustrative: the last value of the demo's invented \
     yield series, at the valuation date.\"",
    // Every peer listed as influential, so the sentence that joins their names is written.
    "uncertainty.influence_threshold=0.000001",
];

/// The texts the hostile run gives those keys, in the same order, and how each must read in
/// the rendered memo and report: as written, or for free text over several lines, on one line
/// (a line of its own could open a heading or a list; found by review), without the white space
/// around it.
const HOSTILE: [(&str, &str); 10] = [
    (
        "*Brenvale* _Fluid_ ~~Systems~~ A|B",
        "*Brenvale* _Fluid_ ~~Systems~~ A|B",
    ),
    (
        "# 1. Corrowick <img src=x onerror=alert(1) title=",
        "# 1. Corrowick <img src=x onerror=alert(1) title=",
    ),
    ("z> R&amp;D \\ Dunmere", "z> R&amp;D \\ Dunmere"),
    ("1. Estwold", "1. Estwold"),
    (
        "12) Fenhallow &#60;b&#62; a\\|b",
        "12) Fenhallow &#60;b&#62; a\\|b",
    ),
    ("    Case *draft* #", "Case *draft* #"),
    ("<!-- hidden", "<!-- hidden"),
    ("> Index_ <script src=x.js", "> Index_ <script src=x.js"),
    (
        "Peers:\n# Injected heading\n\n- item *x* Foo&amp",
        "Peers: # Injected heading - item *x* Foo&amp",
    ),
    ("x\n# H | y\n    code", "x # H | y code"),
];

fn run(out: &std::path::Path, sets: &[String]) {
    let mut args = vec![
        "run".to_string(),
        DEMO_CASE.to_string(),
        "--out".to_string(),
        out.to_str().unwrap().to_string(),
    ];
    for set in sets {
        args.extend(["--set".to_string(), set.clone()]);
    }
    let args: Vec<&str> = args.iter().map(String::as_str).collect();
    let output = hurdle(&args);
    assert!(output.status.success(), "{sets:?}: {output:?}");
}

#[test]
fn names_with_markdown_marks_read_as_written_in_the_memo_the_report_and_the_charts() {
    let root = tempfile::tempdir().unwrap();
    let (base, hostile) = (root.path().join("base"), root.path().join("hostile"));
    run(&base, &DEMO.map(String::from));
    let hostile_sets: Vec<String> = DEMO
        .iter()
        .zip(HOSTILE.iter().map(Some).chain([None]))
        .map(|(demo, text)| match text {
            // TOML's basic string: a backslash doubled.
            Some((text, _)) => {
                let key = demo.split_once('=').unwrap().0;
                let toml = text.replace('\\', "\\\\").replace('\n', "\\n");
                format!("{key}=\"{toml}\"")
            }
            None => demo.to_string(),
        })
        .collect();
    run(&hostile, &hostile_sets);
    let shown: Vec<&str> = HOSTILE.iter().map(|(_, shown)| *shown).collect();
    let names = serde_json::to_string(&shown).unwrap();
    let found: serde_json::Value = common::python_json(
        include_str!("reference/check_markdown.py"),
        &[base.to_str().unwrap(), hostile.to_str().unwrap(), &names],
    );
    // Each list empty and each difference null: exact checks, no tolerance.
    for key in ["memo_difference", "report_difference"] {
        assert!(found[key].is_null(), "{key}: {}", found[key]);
    }
    for key in [
        "memo_raw_html",
        "memo_missing",
        "report_missing",
        "svg_unreadable",
    ] {
        assert_eq!(found[key], serde_json::json!([]), "{key}");
    }
}
