"""How an independent CommonMark engine reads two memos that differ only in the text the user
typed (names, title, subject, index name): markdown-it-py, CommonMark 0.31 with GFM tables and
strikethrough and raw HTML allowed, as a Markdown viewer would render memo.md. Python's own
html.parser reads the two report.html pages the same way.

Usage: check_markdown.py BASELINE_DIR HOSTILE_DIR NAMES_JSON

Prints JSON:
- memo_difference: the first place the two memos' token structures differ (every token's type,
  tag and nesting, inline tokens' children included, text tokens left out), or null;
- memo_raw_html: raw HTML tokens in the hostile memo (html_block, html_inline);
- memo_missing: the names that no inline text of the hostile memo holds verbatim;
- report_difference: the first place the two pages' start tags (tag and attribute names) differ;
- report_missing: the names the hostile page's text does not hold verbatim;
- svg_unreadable: the hostile run's charts that Python's XML parser refuses, with its reason.
"""

import json
import sys
from html.parser import HTMLParser
from pathlib import Path
from xml.dom import minidom
from xml.parsers.expat import ExpatError

from markdown_it import MarkdownIt

TEXT_TOKENS = {"text", "text_special", "softbreak", "hardbreak"}


def structure(tokens):
    out = []
    for token in tokens:
        if token.type in TEXT_TOKENS:
            continue
        out.append((token.type, token.tag, token.nesting))
        if token.children:
            out.extend(structure(token.children))
    return out


def text_of(children):
    """The text a reader sees in inline tokens: text and code as written, an image's alt text
    (its own children) apart."""
    parts, alts = [], []
    for child in children:
        if child.type in ("text", "text_special", "code_inline"):
            parts.append(child.content)
        elif child.type in ("softbreak", "hardbreak"):
            parts.append("\n")
        elif child.type == "image":
            alt, inner = text_of(child.children or [])
            alts.append(alt)
            alts.extend(inner)
    return "".join(parts), alts


def inline_texts(tokens):
    """The text of each inline token (a paragraph, a heading, a table cell) and of each image's
    alt text."""
    texts = []
    for token in tokens:
        if token.type == "inline" and token.children is not None:
            text, alts = text_of(token.children)
            texts.append(text)
            texts.extend(alts)
    return texts


def first_difference(a, b):
    for i, (x, y) in enumerate(zip(a, b)):
        if x != y:
            return {"at": i, "baseline": list(x), "hostile": list(y)}
    if len(a) != len(b):
        return {"at": min(len(a), len(b)), "baseline_len": len(a), "hostile_len": len(b)}
    return None


class Page(HTMLParser):
    """The page's start tags outside its charts (a chart's layout follows the lengths of the
    names it shows) and its text, charts included."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.tags = []
        self.text = []
        self.in_svg = 0

    def handle_starttag(self, tag, attrs):
        if tag == "svg":
            self.in_svg += 1
        if not self.in_svg or tag == "svg":
            self.tags.append((tag, tuple(sorted(name for name, _ in attrs))))
        for name, value in attrs:
            if name in ("alt", "title", "aria-label") and value:
                self.text.append(value)

    def handle_endtag(self, tag):
        if tag == "svg":
            self.in_svg -= 1

    def handle_data(self, data):
        self.text.append(data)


def page(path):
    parser = Page()
    parser.feed(Path(path).read_text(encoding="utf-8"))
    return parser


def main():
    baseline, hostile, names = Path(sys.argv[1]), Path(sys.argv[2]), json.loads(sys.argv[3])
    md = MarkdownIt("commonmark", {"html": True}).enable("table").enable("strikethrough")
    base_tokens = md.parse((baseline / "memo.md").read_text(encoding="utf-8"))
    tokens = md.parse((hostile / "memo.md").read_text(encoding="utf-8"))
    raw = []

    def walk(ts):
        for t in ts:
            if t.type in ("html_block", "html_inline"):
                raw.append(t.content)
            if t.children:
                walk(t.children)

    walk(tokens)
    texts = inline_texts(tokens)
    base_page, hostile_page = page(baseline / "report.html"), page(hostile / "report.html")
    page_text = "".join(hostile_page.text)
    # A run with charts writes them (README "Charts and the report"); none found would pass the
    # parse below unseen, so it counts as a failure of its own.
    svgs = sorted((hostile / "figures").glob("*.svg"))
    unreadable = [] if svgs else ["no charts in figures/"]
    for svg in svgs:
        try:
            minidom.parse(str(svg))
        except ExpatError as error:
            unreadable.append(f"{svg.name}: {error}")
    print(
        json.dumps(
            {
                "memo_difference": first_difference(structure(base_tokens), structure(tokens)),
                "memo_raw_html": raw,
                "memo_missing": [n for n in names if not any(n in t for t in texts)],
                "report_difference": first_difference(base_page.tags, hostile_page.tags),
                "report_missing": [n for n in names if n not in page_text],
                "svg_unreadable": unreadable,
            }
        )
    )


main()
