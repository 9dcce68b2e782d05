#!/usr/bin/env python3
"""Opens a hurdle report.html in headless Chromium and checks what a reader would see.

Usage: check_report.py OUTPUT_DIR ARTIFACT_DIR

OUTPUT_DIR holds a `hurdle run`'s report.html, result.json and figures/. The script drives
Debian's chromium over the DevTools protocol on a pipe (--remote-debugging-pipe: commands on fd 3,
replies on fd 4, NUL-separated JSON; Python's standard library only), with a fresh profile, and
checks:

  - the page loads with no console error, no uncaught exception and no request other than the
    file itself (self-contained: nothing fetched);
  - it holds one inline chart per file in figures/, each with a non-empty <title> and <desc>;
  - every regression chart's plotted line has the slope of its peer's beta (result.json), read
    back from the rendered DOM: the line's end points and two axis tick labels per axis, mapped
    to screen pixels through the SVG's current transform; the tolerance is what one SVG pixel of
    rounding at each end point can do to the slope (plotters draws on whole pixels);
  - printed to PDF on A4 and on Letter paper, the cautions are on the last page (pdftotext), and
    with print styles at either paper's text width no table is wider than the page and two
    charts of a gallery (the regressions) fit one page's text height with their margins;
  - on a 400 px screen every chart is drawn at least 500 px wide (the page scrolls sideways
    there), so its 11 px legend reads at 8 px or more, not half its size;

and saves a full-page screenshot and both PDFs in ARTIFACT_DIR (kept as CI artifacts, never in
the repository). Prints one line per failure and a closing "N passed, M failed" line; exits 1 on
any failure.
"""
import base64
import fcntl
import json
import os
import re
import select
import shutil
import subprocess
import sys
import tempfile
import time

CHROMIUM_FLAGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
    "--hide-scrollbars", "--remote-debugging-pipe",
]
# Paper widths and the report's print margins (13 mm left and right, see report.rs) in CSS
# pixels at 96 per inch: A4 210 mm, Letter 8.5 in.
PAPERS = {"a4": (8.27, 11.69), "letter": (8.5, 11.0)}
MARGIN_MM = 13.0
TIMEOUT = 60.0

passed = 0
failures = []


def check(label, ok, detail=""):
    global passed
    if ok:
        passed += 1
    else:
        failures.append(f"{label}: {detail}")


class Browser:
    """Chromium on a DevTools pipe: send a command, wait for its reply, keep the events."""

    def __init__(self, executable, profile):
        to_child_r, self.to_child = os.pipe()
        self.from_child, from_child_w = os.pipe()
        # Move the child's ends above 9 first so that placing them on 3 and 4 clobbers nothing.
        a, b = fcntl_dup(to_child_r), fcntl_dup(from_child_w)
        os.close(to_child_r)
        os.close(from_child_w)

        def place():
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.process = subprocess.Popen(
            [executable, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", "about:blank"],
            pass_fds=(3, 4, a, b), preexec_fn=place,
            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
        )
        os.close(a)
        os.close(b)
        self.buffer = b""
        self.next_id = 0
        self.events = []

    def send(self, method, params=None, session=None):
        self.next_id += 1
        message = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        os.write(self.to_child, json.dumps(message).encode() + b"\0")
        wanted = self.next_id
        deadline = time.monotonic() + TIMEOUT
        while True:
            for reply in self._read(deadline):
                if reply.get("id") == wanted:
                    if "error" in reply:
                        raise RuntimeError(f"{method}: {reply['error']}")
                    return reply.get("result", {})
                self.events.append(reply)

    def wait_for(self, method, deadline_seconds=TIMEOUT):
        deadline = time.monotonic() + deadline_seconds
        while True:
            for event in list(self.events):
                if event.get("method") == method:
                    return event
            self.events.extend(self._read(deadline))

    def _read(self, deadline):
        while b"\0" not in self.buffer:
            left = deadline - time.monotonic()
            if left <= 0:
                raise TimeoutError("no reply from chromium")
            ready, _, _ = select.select([self.from_child], [], [], left)
            if ready:
                chunk = os.read(self.from_child, 1 << 20)
                if not chunk:
                    raise RuntimeError("chromium closed the pipe: " + self.process.stderr.read().decode(errors="replace")[-2000:])
                self.buffer += chunk
        *messages, self.buffer = self.buffer.split(b"\0")
        return [json.loads(m) for m in messages if m]

    def close(self):
        try:
            self.send("Browser.close")
        except Exception:
            pass
        try:
            self.process.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.process.kill()


def fcntl_dup(fd):
    """A duplicate of fd numbered 10 or above."""
    return fcntl.fcntl(fd, fcntl.F_DUPFD, 10)


# Reads, for every chart, its kind and, for regression charts, the fitted line's end points and
# the tick labels of both axes in screen pixels (the SVG's getScreenCTM maps its coordinates).
PROBE = r"""
(() => {
  const screen = (svg, x, y) => { const p = svg.createSVGPoint(); p.x = x; p.y = y;
    const q = p.matrixTransform(svg.getScreenCTM()); return [q.x, q.y]; };
  const out = [];
  for (const fig of document.querySelectorAll('figure.chart')) {
    const svg = fig.querySelector('svg');
    const item = { file: fig.dataset.file, kind: fig.className,
      title: (svg.querySelector('title') || {}).textContent || '',
      desc: (svg.querySelector('desc') || {}).textContent || '',
      scale: svg.getScreenCTM().a };
    const line = svg.querySelector('g.fitted-line polyline');
    if (line) {
      const pts = line.getAttribute('points').trim().split(/\s+/).map(p => p.split(',').map(Number));
      item.line = [screen(svg, ...pts[0]), screen(svg, ...pts[pts.length - 1])];
      item.xticks = [...svg.querySelectorAll('g.x-axis text')].map(t =>
        [t.textContent.trim(), screen(svg, +t.getAttribute('x'), +t.getAttribute('y'))]);
      item.yticks = [...svg.querySelectorAll('g.y-axis text')].map(t =>
        [t.textContent.trim(), screen(svg, +t.getAttribute('x'), +t.getAttribute('y'))]);
    }
    out.push(item);
  }
  return JSON.stringify({ charts: out, svgs: document.querySelectorAll('svg').length,
    scripts: document.scripts.length });
})()
"""

# The rendered width of every chart, and the height of every chart in a two-chart gallery.
CHART_SIZES = r"""
JSON.stringify({
  widths: [...document.querySelectorAll('figure.chart svg')].map(s => s.getBoundingClientRect().width),
  gallery: [...document.querySelectorAll('.gallery.two figure.chart')].map(f => {
    const style = getComputedStyle(f);
    return f.getBoundingClientRect().height + parseFloat(style.marginTop) + parseFloat(style.marginBottom);
  })
})
"""
# The report's print margins top and bottom (15 mm and 16 mm, report.rs).
VERTICAL_MARGINS_MM = 31.0

# With print styles at the paper's text width: the widest table against its container.
OVERFLOW = r"""
JSON.stringify([...document.querySelectorAll('table')].map(t =>
  [t.scrollWidth, document.querySelector('main').clientWidth]))
"""


def tick_value(text):
    """A tick label as a number: "−7.5%" is -0.075, "1.20" is 1.2; None for axis titles."""
    text = text.replace("\u2212", "-")
    percent = text.endswith("%")
    try:
        value = float(text.rstrip("%"))
    except ValueError:
        return None
    return value / 100 if percent else value


def axis_map(ticks, coordinate):
    """Data value as a linear function of a screen coordinate, from the outermost two ticks."""
    points = sorted((pos[coordinate], v) for t, pos in ticks if (v := tick_value(t)) is not None)
    (p0, v0), (p1, v1) = points[0], points[-1]
    per_pixel = (v1 - v0) / (p1 - p0)
    return (lambda p: v0 + (p - p0) * per_pixel), abs(per_pixel)


def check_slopes(charts, result):
    peers = {p["name"]: p for p in result["peers"]}
    regressions = [c for c in charts if "regression" in c["kind"]]
    check("one regression chart per peer", len(regressions) == len(peers), f"{len(regressions)} for {len(peers)}")
    for chart in regressions:
        name = next((n for n in peers if chart["title"].startswith(n + ":")), None)
        check(f"{chart['file']} names its peer", name is not None, chart["title"])
        if name is None:
            continue
        x_of, x_unit = axis_map(chart["xticks"], 0)
        y_of, y_unit = axis_map(chart["yticks"], 1)
        (sx0, sy0), (sx1, sy1) = chart["line"]
        x0, x1, y0, y1 = x_of(sx0), x_of(sx1), y_of(sy0), y_of(sy1)
        slope = (y1 - y0) / (x1 - x0)
        beta = peers[name]["beta"]
        # One SVG pixel (chart["scale"] screen pixels) of rounding at each end, in x and in y.
        px = chart["scale"]
        tolerance = (2 * px * y_unit + abs(beta) * 2 * px * x_unit) / abs(x1 - x0)
        check(f"{name} line slope {slope:.4f} vs beta {beta:.4f} (tolerance {tolerance:.4f})",
              abs(slope - beta) <= tolerance, "slope differs")


def last_page_text(pdf):
    info = subprocess.run(["pdfinfo", pdf], capture_output=True, text=True, check=True).stdout
    pages = int(re.search(r"Pages:\s+(\d+)", info).group(1))
    text = subprocess.run(["pdftotext", "-f", str(pages), "-l", str(pages), "-layout", pdf, "-"],
                          capture_output=True, text=True, check=True).stdout
    before = subprocess.run(["pdftotext", "-f", str(max(1, pages - 1)), "-l", str(max(1, pages - 1)), pdf, "-"],
                            capture_output=True, text=True, check=True).stdout if pages > 1 else ""
    return pages, text, before


def main(out_dir, artifacts):
    os.makedirs(artifacts, exist_ok=True)
    report = os.path.abspath(os.path.join(out_dir, "report.html"))
    with open(os.path.join(out_dir, "result.json")) as f:
        result = json.load(f)
    figure_files = sorted(os.listdir(os.path.join(out_dir, "figures")))
    executable = os.environ.get("CHROMIUM") or shutil.which("chromium") or shutil.which("chromium-browser")
    if not executable:
        print("chromium not found: apt-get install -y chromium poppler-utils")
        return 2
    profile = tempfile.mkdtemp(prefix="hurdle-chromium-")
    browser = Browser(executable, profile)
    try:
        target = browser.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = browser.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        for domain in ("Page", "Runtime", "Log", "Network"):
            browser.send(f"{domain}.enable", session=session)
        browser.send("Emulation.setDeviceMetricsOverride",
                     {"width": 1280, "height": 900, "deviceScaleFactor": 1, "mobile": False}, session=session)
        url = "file://" + report
        browser.send("Page.navigate", {"url": url}, session=session)
        browser.wait_for("Page.loadEventFired")
        # Let late console messages arrive before counting them.
        time.sleep(0.5)
        browser.send("Runtime.evaluate", {"expression": "1"}, session=session)

        errors = [e for e in browser.events if
                  (e.get("method") == "Runtime.consoleAPICalled" and e["params"]["type"] in ("error", "assert"))
                  or e.get("method") == "Runtime.exceptionThrown"
                  or (e.get("method") == "Log.entryAdded" and e["params"]["entry"]["level"] == "error")]
        check("no console errors or exceptions", not errors, json.dumps(errors)[:2000])
        requests = [e["params"]["request"]["url"] for e in browser.events if e.get("method") == "Network.requestWillBeSent"]
        check("nothing fetched but the page itself", all(u == url for u in requests), str(requests))

        probe = json.loads(browser.send("Runtime.evaluate", {"expression": PROBE, "returnByValue": True},
                                        session=session)["result"]["value"])
        charts = probe["charts"]
        check("one chart per figures/*.svg", len(charts) == len(figure_files) == probe["svgs"],
              f"{len(charts)} charts, {probe['svgs']} svg elements, {len(figure_files)} files")
        check("no script in the page", probe["scripts"] == 0, f"{probe['scripts']} scripts")
        check("every chart inlines a figures/ file",
              sorted(os.path.basename(c["file"]) for c in charts) == figure_files, "files differ")
        # More than 40 characters: longer than any chart's bare title, so a description that only
        # repeats the title fails; tests/figures.rs checks what each description says.
        for c in charts:
            check(f"{c['file']} has a title and a description", c["title"].strip() and len(c["desc"]) > 40, c["title"])
        check_slopes(charts, result)

        metrics = browser.send("Page.getLayoutMetrics", session=session)["cssContentSize"]
        shot = browser.send("Page.captureScreenshot", {
            "format": "png", "captureBeyondViewport": True,
            "clip": {"x": 0, "y": 0, "width": 1280, "height": metrics["height"], "scale": 1}}, session=session)
        with open(os.path.join(artifacts, "report.png"), "wb") as f:
            f.write(base64.b64decode(shot["data"]))

        browser.send("Emulation.setEmulatedMedia", {"media": "print"}, session=session)
        for paper, (width, height) in PAPERS.items():
            text_width = round((width * 25.4 - 2 * MARGIN_MM) / 25.4 * 96)
            browser.send("Emulation.setDeviceMetricsOverride",
                         {"width": text_width, "height": 1000, "deviceScaleFactor": 1, "mobile": False}, session=session)
            widths = json.loads(browser.send("Runtime.evaluate", {"expression": OVERFLOW, "returnByValue": True},
                                             session=session)["result"]["value"])
            # One pixel of slack: scrollWidth and clientWidth are integers rounded from fractional
            # layout widths, so a table that fits exactly can report one pixel more.
            wide = [w for w in widths if w[0] > w[1] + 1]
            check(f"{paper}: every table fits the text width ({text_width} px)", not wide, str(wide))
            sizes = json.loads(browser.send("Runtime.evaluate", {"expression": CHART_SIZES, "returnByValue": True},
                                            session=session)["result"]["value"])
            text_height = (height * 25.4 - VERTICAL_MARGINS_MM) / 25.4 * 96
            tallest = max(sizes["gallery"], default=0.0)
            check(f"{paper}: two gallery charts share a page ({tallest:.0f} px each, page {text_height:.0f} px)",
                  2 * tallest <= text_height, str(sizes["gallery"][:4]))
        browser.send("Emulation.setEmulatedMedia", {"media": ""}, session=session)
        browser.send("Emulation.setDeviceMetricsOverride",
                     {"width": 400, "height": 900, "deviceScaleFactor": 1, "mobile": False}, session=session)
        narrow = json.loads(browser.send("Runtime.evaluate", {"expression": CHART_SIZES, "returnByValue": True},
                                         session=session)["result"]["value"])["widths"]
        check("400 px screen: every chart at least 500 px wide", min(narrow, default=0) >= 500,
              str(sorted(narrow)[:4]))
        browser.send("Emulation.clearDeviceMetricsOverride", session=session)
        for paper, (width, height) in PAPERS.items():
            pdf = browser.send("Page.printToPDF", {
                "paperWidth": width, "paperHeight": height, "printBackground": True,
                "preferCSSPageSize": False}, session=session)
            path = os.path.join(artifacts, f"report-{paper}.pdf")
            with open(path, "wb") as f:
                f.write(base64.b64decode(pdf["data"]))
            pages, last, before = last_page_text(path)
            # The demo's report (a memo of a dozen sections, its tables and every chart) runs to
            # well over three pages on either paper; three or fewer means the print stylesheet
            # hid content.
            check(f"{paper}: PDF has several pages", pages > 3, f"{pages} pages")
            check(f"{paper}: the cautions are on the last page",
                  "Cautions" in last and "Not advice" in last and "Statistical error" in last, last[:400])
            check(f"{paper}: the cautions start on the last page", "Cautions" not in before, before[-300:])
    finally:
        browser.close()
        shutil.rmtree(profile, ignore_errors=True)

    for line in failures:
        print("FAIL", line)
    print(f"browser: {passed} passed, {len(failures)} failed")
    print(f"artifacts: {artifacts}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1], sys.argv[2]))
