//! The charts against the numbers: every SVG that `hurdle run` writes is parsed (a small tag
//! scanner below; plotters writes plain SVG, one element a line) and what it draws — points,
//! line and band ends, interval ends, heat-map values, histogram bars, waterfall bars — is read
//! back through the chart's own axis labels and compared with result.json, returns.csv and
//! rolling.csv, recomputed here from the textbook formulas where a figure is derived. So a chart
//! can never drift from the numbers. Also: the demo's charts are byte-identical across runs, the
//! memo links every chart, and `--no-figures` writes none.
//!
//! Tolerances: plotters places every mark on a whole pixel (rounding down), and the scale is read
//! from tick labels that are placed the same way, so a drawn value is within two pixels' worth of
//! the figure; [`Axis::tolerance`] is that, in data units.

use std::collections::HashMap;
use std::path::Path;

mod common;

use common::svg::{close, in_group, parse, tick_value, unescape, Axis, Element};
use common::{hurdle, DEMO_CASE};

/// Student's t quantile t(0.975, df) from scipy (`scipy.stats.t.ppf(0.975, df)`), not from
/// statrs, on which hurdle's own quantile is built: one python3 call tabulates df = 1 … 20 000
/// (the demo's daily window has about 1 300 returns), and the table is kept for the run.
fn scipy_t975(df: u64) -> f64 {
    static TABLE: std::sync::OnceLock<Vec<f64>> = std::sync::OnceLock::new();
    let table = TABLE.get_or_init(|| {
        common::python_json(
            "import json, numpy as np; from scipy import stats; \
             print(json.dumps([float(v) for v in stats.t.ppf(0.975, np.arange(1, 20001))]))",
            &[],
        )
    });
    assert!(
        (1..=20_000).contains(&df),
        "df {df} outside the scipy table"
    );
    table[df as usize - 1]
}

struct Run {
    dir: tempfile::TempDir,
    result: serde_json::Value,
}

impl Run {
    fn new(extra: &[&str]) -> Run {
        let dir = tempfile::tempdir().unwrap();
        let out = dir.path().to_str().unwrap().to_string();
        let mut args = vec!["run", DEMO_CASE, "--out", out.as_str()];
        args.extend_from_slice(extra);
        let output = hurdle(&args);
        assert!(
            output.status.success(),
            "{}",
            String::from_utf8_lossy(&output.stderr)
        );
        let result =
            serde_json::from_str(&std::fs::read_to_string(dir.path().join("result.json")).unwrap())
                .unwrap();
        Run { dir, result }
    }

    fn svg(&self, file: &str) -> Vec<Element> {
        parse(&std::fs::read_to_string(self.dir.path().join("figures").join(file)).unwrap())
    }

    fn files(&self) -> Vec<String> {
        let mut names: Vec<String> = std::fs::read_dir(self.dir.path().join("figures"))
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        names.sort();
        names
    }

    /// Each peer's (index excess, peer excess) returns from returns.csv, in row order.
    fn returns(&self) -> HashMap<String, Vec<(f64, f64)>> {
        let text = std::fs::read_to_string(self.dir.path().join("returns.csv")).unwrap();
        let mut lines = text.lines();
        let header: Vec<&str> = lines.next().unwrap().split(',').collect();
        let column = |name: &str| header.iter().position(|h| *h == name);
        let (asset, market, rf) = (
            column("asset_return").unwrap(),
            column("market_return").unwrap(),
            column("risk_free"),
        );
        let mut out: HashMap<String, Vec<(f64, f64)>> = HashMap::new();
        for line in lines {
            let cells: Vec<&str> = line.split(',').collect();
            let value = |i: usize| cells[i].parse::<f64>().unwrap();
            let r = rf.map_or(0.0, value);
            out.entry(cells[0].to_string())
                .or_default()
                .push((value(market) - r, value(asset) - r));
        }
        out
    }
}

fn f(v: &serde_json::Value) -> f64 {
    v.as_f64().unwrap()
}

/// The regression chart of every peer: points, flagged points, line ends and band ends.
fn check_regressions(run: &Run) {
    let returns = run.returns();
    let files = run.files();
    for (i, peer) in run.result["peers"].as_array().unwrap().iter().enumerate() {
        let name = peer["name"].as_str().unwrap();
        let file = files
            .iter()
            .find(|f| f.starts_with(&format!("regression-{:02}-", i + 1)))
            .unwrap();
        let svg = run.svg(file);
        let (x, y) = (
            Axis::read(&svg, "x-axis", "x"),
            Axis::read(&svg, "y-axis", "y"),
        );
        let data = &returns[name];
        let points = in_group(&svg, "points");
        assert_eq!(points.len(), data.len(), "{name}: one point per return");
        for (p, (mx, ay)) in points.iter().zip(data) {
            close(name, x.value(p.number("cx")), *mx, x.tolerance());
            close(name, y.value(p.number("cy")), *ay, y.tolerance());
        }
        let rows: Vec<usize> = peer["large_studentised_residual_rows"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| r.as_u64().unwrap() as usize)
            .collect();
        assert_eq!(
            rows.len() as u64,
            peer["large_studentised_residuals"].as_u64().unwrap()
        );
        let rings = in_group(&svg, "flagged");
        assert_eq!(rings.len(), rows.len(), "{name}: one ring per flagged row");
        for (ring, &row) in rings.iter().zip(&rows) {
            close(name, x.value(ring.number("cx")), data[row].0, x.tolerance());
            close(name, y.value(ring.number("cy")), data[row].1, y.tolerance());
        }
        // The line α + β·x from the lowest to the highest index return used.
        let (alpha, beta) = (f(&peer["alpha"]), f(&peer["beta"]));
        let x_min = data.iter().map(|d| d.0).fold(f64::INFINITY, f64::min);
        let x_max = data.iter().map(|d| d.0).fold(f64::NEG_INFINITY, f64::max);
        let line = in_group(&svg, "fitted-line")[0].points();
        for ((px, py), at) in [(line[0], x_min), (line[line.len() - 1], x_max)] {
            close(name, x.value(px), at, x.tolerance());
            close(name, y.value(py), alpha + beta * at, y.tolerance());
        }
        // The mean-response band, textbook form: ŷ ± t(0.975, df)·√(Var α + 2x·Cov + x²·Var β),
        // t from scipy (`scipy_t975`), not from the statrs library hurdle's quantile rests on.
        let t = scipy_t975(peer["degrees_of_freedom"].as_u64().unwrap());
        let (sa, sb, cov) = (
            f(&peer["alpha_std_error"]),
            f(&peer["beta_std_error"]),
            f(&peer["alpha_beta_covariance"]),
        );
        let half = |at: f64| t * (sa * sa + 2.0 * at * cov + at * at * sb * sb).sqrt();
        let band = in_group(&svg, "band")[0].points();
        let n = band.len() / 2;
        for (point, at, sign) in [
            (band[0], x_min, -1.0),
            (band[n - 1], x_max, -1.0),
            (band[n], x_max, 1.0),
            (band[2 * n - 1], x_min, 1.0),
        ] {
            close(name, x.value(point.0), at, x.tolerance());
            close(
                name,
                y.value(point.1),
                alpha + beta * at + sign * half(at),
                y.tolerance(),
            );
        }
    }
}

/// The peers' betas: raw β, CI ends, β used, unlevered β and the aggregate line.
fn check_betas(run: &Run) {
    let svg = run.svg("betas.svg");
    let x = Axis::read(&svg, "x-axis", "x");
    let peers = run.result["peers"].as_array().unwrap();
    // Rows: included peers in case order, then the excluded ones.
    let order: Vec<&serde_json::Value> = peers
        .iter()
        .filter(|p| p["excluded_reason"].is_null())
        .chain(peers.iter().filter(|p| !p["excluded_reason"].is_null()))
        .collect();
    let dots = in_group(&svg, "raw-beta");
    let intervals: Vec<Vec<(f64, f64)>> = in_group(&svg, "intervals")
        .iter()
        .map(|e| e.points())
        .filter(|p| p.len() == 2 && p[0].1 == p[1].1)
        .collect();
    let used = in_group(&svg, "beta-used");
    let unlevered = in_group(&svg, "unlevered-beta");
    assert_eq!(dots.len(), peers.len());
    assert_eq!(
        (intervals.len(), used.len(), unlevered.len()),
        (peers.len(), peers.len(), peers.len())
    );
    let cash = run.result["beta"]["uses_operations_beta"]
        .as_bool()
        .unwrap();
    for (k, peer) in order.iter().enumerate() {
        let name = peer["name"].as_str().unwrap();
        close(
            name,
            x.value(dots[k].number("cx")),
            f(&peer["beta"]),
            x.tolerance(),
        );
        close(
            name,
            x.value(intervals[k][0].0),
            f(&peer["beta_ci_low"]),
            x.tolerance(),
        );
        close(
            name,
            x.value(intervals[k][1].0),
            f(&peer["beta_ci_high"]),
            x.tolerance(),
        );
        let triangle = used[k].points();
        let centre = triangle.iter().map(|p| p.0).sum::<f64>() / triangle.len() as f64;
        // The closed triangle repeats its apex: centre = apex x within half a pixel.
        close(
            name,
            x.value(centre),
            f(&peer["beta_used"]),
            x.tolerance() * 1.25,
        );
        let square = unlevered[k];
        let middle = square.number("x") + square.number("width") / 2.0;
        let expected = if cash {
            f(&peer["operations_beta"])
        } else {
            f(&peer["unlevered_beta"])
        };
        close(name, x.value(middle), expected, x.tolerance());
    }
    let aggregate = in_group(&svg, "aggregate")[0].points()[0].0;
    close(
        "aggregate",
        x.value(aggregate),
        f(&run.result["beta"]["unlevered"]),
        x.tolerance(),
    );
}

/// The rolling betas of every panel against rolling.csv (written by `hurdle rolling`).
fn check_stability(run: &Run, extra: &[&str]) {
    let out = run.dir.path().to_str().unwrap();
    let mut args = vec!["rolling", DEMO_CASE, "--out", out];
    args.extend_from_slice(extra);
    assert!(hurdle(&args).status.success());
    let csv = std::fs::read_to_string(run.dir.path().join("rolling.csv")).unwrap();
    let svg = run.svg("stability.svg");
    for (i, peer) in run.result["peers"].as_array().unwrap().iter().enumerate() {
        let name = peer["name"].as_str().unwrap();
        let panel = format!("panel-{}", i + 1);
        let y = Axis::read(&svg, &format!("y-axis {panel}"), "y");
        // The estimator's coefficient count, from the whole-window regression: N − df.
        let coefficients =
            peer["observations"].as_u64().unwrap() - peer["degrees_of_freedom"].as_u64().unwrap();
        // (β, half-width): t(0.975, N − k)·SE, t from scipy (`scipy_t975`), not from the
        // statrs library hurdle's own quantile rests on.
        let rows: Vec<(f64, f64)> = csv
            .lines()
            .filter(|l| l.starts_with(&format!("{name},")))
            .map(|l| {
                let c: Vec<&str> = l.split(',').collect();
                let (se, n): (f64, u64) = (c[3].parse().unwrap(), c[4].parse().unwrap());
                (c[2].parse().unwrap(), scipy_t975(n - coefficients) * se)
            })
            .collect();
        let line = in_group(&svg, &format!("rolling-beta {panel}"))[0].points();
        assert_eq!(line.len(), rows.len(), "{name}: one vertex per window");
        for (p, (beta, _)) in line.iter().zip(&rows) {
            close(name, y.value(p.1), *beta, y.tolerance());
        }
        // Band ends: β ∓ t·SE of the first and last window.
        let band = in_group(&svg, &format!("band {panel}"))[0].points();
        let (first, last) = (rows[0], rows[rows.len() - 1]);
        let n = band.len() / 2;
        close(name, y.value(band[0].1), first.0 - first.1, y.tolerance());
        close(name, y.value(band[n - 1].1), last.0 - last.1, y.tolerance());
        close(name, y.value(band[n].1), last.0 + last.1, y.tolerance());
        close(
            name,
            y.value(band[2 * n - 1].1),
            first.0 + first.1,
            y.tolerance(),
        );
    }
}

/// The heat map: each cell's printed value, darker shades for higher values, the case's cell.
fn check_sensitivity(run: &Run) {
    let svg = run.svg("sensitivity.svg");
    let grid = &run.result["sensitivity"];
    let cells: Vec<f64> = grid["cells"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|r| r.as_array().unwrap().iter().map(f))
        .collect();
    let texts: Vec<String> = in_group(&svg, "values")
        .iter()
        .map(|e| e.text.clone())
        .collect();
    let expected: Vec<String> = cells.iter().map(|v| format!("{:.2}%", v * 100.0)).collect();
    assert_eq!(texts, expected, "printed cell values");
    // Relative luminance (WCAG 2.1) of each cell's fill: a higher value is never lighter.
    let fills: Vec<f64> = in_group(&svg, "cells")
        .iter()
        .filter(|e| e.attributes["fill"] != "none")
        .map(|e| {
            let hex = &e.attributes["fill"][1..];
            let channel = |i: usize| {
                let v = u8::from_str_radix(&hex[i..i + 2], 16).unwrap() as f64 / 255.0;
                if v <= 0.04045 {
                    v / 12.92
                } else {
                    ((v + 0.055) / 1.055).powf(2.4)
                }
            };
            0.2126 * channel(0) + 0.7152 * channel(2) + 0.0722 * channel(4)
        })
        .collect();
    assert_eq!(fills.len(), cells.len());
    for i in 0..cells.len() {
        for j in 0..cells.len() {
            // Cells within 1e-12 of each other count as equal: two grid cells of the same WACC
            // reached by different inputs may differ by a few ulps (about 1e-17 here) and be
            // shaded either way; 1e-12 is far below the 0.01% the map prints.
            if cells[i] > cells[j] + 1e-12 {
                assert!(
                    fills[i] <= fills[j],
                    "cell {i} is higher but lighter than cell {j}"
                );
            }
        }
    }
    let [r, c] = [0, 1].map(|k| grid["base_cell"][k].as_u64().unwrap() as usize);
    let columns = grid["columns"]["values"].as_array().unwrap().len();
    let outline = in_group(&svg, "base-cell")[0];
    let cell = in_group(&svg, "cells")[r * columns + c];
    let inside = |e: &Element, o: &Element| {
        o.number("x") >= e.number("x")
            && o.number("x") + o.number("width") <= e.number("x") + e.number("width")
            && o.number("y") >= e.number("y")
            && o.number("y") + o.number("height") <= e.number("y") + e.number("height")
    };
    assert!(inside(cell, outline), "the outline sits in cell [{r}, {c}]");
}

/// The histogram: bar edges and counts, the percentile and point-estimate lines.
fn check_uncertainty(run: &Run) {
    let svg = run.svg("uncertainty.svg");
    let u = &run.result["uncertainty"];
    let (x, y) = (
        Axis::read(&svg, "x-axis", "x"),
        Axis::read(&svg, "y-axis", "y"),
    );
    let edges: Vec<f64> = u["histogram"]["edges"]
        .as_array()
        .unwrap()
        .iter()
        .map(f)
        .collect();
    let counts: Vec<f64> = u["histogram"]["counts"]
        .as_array()
        .unwrap()
        .iter()
        .map(f)
        .collect();
    assert_eq!(
        counts.iter().sum::<f64>(),
        f(&u["draws"]),
        "every draw is counted"
    );
    let bars: Vec<&Element> = in_group(&svg, "bars")
        .into_iter()
        .filter(|e| e.attributes["stroke"] == "none")
        .collect();
    assert_eq!(bars.len(), counts.len());
    // A bin holding a draw is drawn at least about 3 pixels high (found by review: bins of one
    // to eight draws were 0 or 1 pixel high): its height is its count, or, for a count under
    // 3 pixels' worth, 2 to 4 pixels.
    let pixels_per_draw = 1.0 / (y.value(0.0) - y.value(1.0));
    for (i, bar) in bars.iter().enumerate() {
        let (left, right) = (bar.number("x"), bar.number("x") + bar.number("width"));
        close("bin start", x.value(left), edges[i], x.tolerance());
        close("bin end", x.value(right), edges[i + 1], x.tolerance());
        let pixels = bar.number("height");
        if counts[i] > 0.0 && counts[i] * pixels_per_draw < 3.0 {
            assert!(
                (2.0..=4.0).contains(&pixels),
                "bin {i} of {} draws: {pixels} px",
                counts[i]
            );
            continue;
        }
        let height = y.value(bar.number("y")) - y.value(bar.number("y") + bar.number("height"));
        close(&format!("bin {i} count"), height, counts[i], y.tolerance());
    }
    for (class, key) in [
        ("percentile-05", "p05"),
        ("median", "p50"),
        ("percentile-95", "p95"),
        ("point-estimate", "point_estimate"),
    ] {
        let line = in_group(&svg, class)
            .into_iter()
            .find(|e| e.tag == "polyline")
            .unwrap()
            .points();
        close(class, x.value(line[0].0), f(&u[key]), x.tolerance());
    }
}

/// The waterfall: each group's bar is its Shapley value, the residue last, the totals' ends.
fn check_reconciliation(run: &Run) {
    let svg = run.svg("reconciliation.svg");
    let b = &run.result["reconciliation"];
    let x = Axis::read(&svg, "x-axis", "x");
    let bars = in_group(&svg, "bars");
    let steps = b["steps"].as_array().unwrap();
    // Bars top to bottom: this case, one per group (Shapley), the residue, the claim.
    let first_group = if b["unexplained_from"].as_f64().unwrap_or(0.0) != 0.0 {
        2
    } else {
        1
    };
    assert_eq!(
        bars.len(),
        first_group + steps.len() + 1 + usize::from(!b["unexplained"].is_null())
    );
    let length = |e: &Element| x.value(e.number("x") + e.number("width")) - x.value(e.number("x"));
    for (k, step) in steps.iter().enumerate() {
        let bar = bars[first_group + k];
        close(
            step["group"].as_str().unwrap(),
            length(bar),
            f(&step["shapley"]).abs(),
            x.tolerance(),
        );
    }
    if !b["unexplained"].is_null() {
        let residue = bars[first_group + steps.len()];
        close(
            "unexplained",
            length(residue),
            f(&b["unexplained"]).abs(),
            x.tolerance(),
        );
    }
    let right_end = |e: &Element| x.value(e.number("x") + e.number("width"));
    let from = b["from"]["stated_wacc"]
        .as_f64()
        .unwrap_or(f(&b["from"]["wacc"]));
    let to = b["to"]["stated_wacc"]
        .as_f64()
        .unwrap_or(f(&b["to"]["wacc"]));
    close("this case's WACC", right_end(bars[0]), from, x.tolerance());
    close(
        "claimed WACC",
        right_end(bars[bars.len() - 1]),
        to,
        x.tolerance(),
    );
    assert_eq!(
        from,
        f(&run.result["wacc"]),
        "this case's WACC is the result's"
    );
}

/// Every chart has a title and a description for screen readers, and they are linked.
fn check_accessibility(run: &Run) {
    for file in run.files() {
        let svg = run.svg(&file);
        let root = svg.iter().find(|e| e.tag == "svg").unwrap();
        assert_eq!(root.attributes["role"], "img", "{file}");
        let title = svg.iter().find(|e| e.tag == "title").unwrap();
        let desc = svg.iter().find(|e| e.tag == "desc").unwrap();
        assert!(!title.text.is_empty() && desc.text.len() > 80, "{file}");
        assert_eq!(
            root.attributes["aria-labelledby"],
            format!("{} {}", title.attributes["id"], desc.attributes["id"])
        );
    }
}

#[test]
fn demo_charts_draw_the_result_figures() {
    let run = Run::new(&[]);
    let peers = run.result["peers"].as_array().unwrap().len();
    // Betas, one regression per peer, stability, sensitivity, uncertainty, reconciliation.
    assert_eq!(run.files().len(), peers + 5, "{:?}", run.files());
    check_regressions(&run);
    check_betas(&run);
    check_stability(&run, &[]);
    check_sensitivity(&run);
    check_uncertainty(&run);
    check_reconciliation(&run);
    check_accessibility(&run);
    // The memo links every chart with a relative path that exists.
    let memo = std::fs::read_to_string(run.dir.path().join("memo.md")).unwrap();
    for file in run.files() {
        assert!(
            memo.contains(&format!("](figures/{file})")),
            "memo.md does not link {file}"
        );
    }
}

// Dimson with Newey–West errors, a peer excluded by hand: the summed beta's line, the rolling
// Dimson betas, and the excluded peer's row below the divider.
#[test]
fn dimson_charts_draw_the_result_figures() {
    let extra = [
        "--set",
        "beta.method=dimson",
        "--set",
        "beta.std_errors=newey-west",
        "--set",
        "peer.1.exclude=\"illustration: shown apart\"",
    ];
    let run = Run::new(&extra);
    check_regressions(&run);
    check_betas(&run);
    check_stability(&run, &extra);
    let svg = std::fs::read_to_string(run.dir.path().join("figures/betas.svg")).unwrap();
    assert!(svg.contains("Left out of the aggregate") && svg.contains("illustration: shown apart"));
    let regression = std::fs::read_dir(run.dir.path().join("figures"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .find(|p| p.to_string_lossy().contains("regression-01"))
        .unwrap();
    assert!(std::fs::read_to_string(regression)
        .unwrap()
        .contains("Dimson (1979) sum"));
}

#[test]
fn charts_are_byte_identical_across_runs_and_no_figures_writes_none() {
    let (a, b) = (Run::new(&[]), Run::new(&[]));
    assert_eq!(a.files(), b.files());
    for file in a.files() {
        let read = |run: &Run| std::fs::read(run.dir.path().join("figures").join(&file)).unwrap();
        assert!(read(&a) == read(&b), "{file} differs between two runs");
    }
    // The report differs only by the run's timestamp, which the memo prints.
    let report = |run: &Run| {
        let stamp = run.result["generated_at"].as_str().unwrap().to_string();
        std::fs::read_to_string(run.dir.path().join("report.html"))
            .unwrap()
            .replace(&stamp, "")
    };
    assert!(
        report(&a) == report(&b),
        "report.html differs beyond the timestamp"
    );

    let text_only = Run::new(&["--no-figures"]);
    assert!(!text_only.dir.path().join("figures").exists());
    assert!(!text_only.dir.path().join("report.html").exists());
    let memo = std::fs::read_to_string(text_only.dir.path().join("memo.md")).unwrap();
    assert!(
        !memo.contains("figures/"),
        "a text-only memo links no chart"
    );
    assert!(Path::new(&text_only.dir.path().join("memo.md")).is_file());
}

// A run without charts into the folder of a run with them takes the charts away and, when
// nothing else is in it, the `figures/` folder too (found by review: an empty folder was left).
#[test]
fn a_run_without_charts_leaves_no_empty_figures_folder() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    for extra in [&[][..], &["--no-figures"][..]] {
        let mut args = vec!["run", DEMO_CASE, "--out", out.to_str().unwrap()];
        args.extend_from_slice(extra);
        let output = hurdle(&args);
        assert!(
            output.status.success(),
            "{}",
            String::from_utf8_lossy(&output.stderr)
        );
    }
    assert!(out.join("memo.md").is_file());
    assert!(
        !out.join("figures").exists(),
        "an empty figures/ folder is left"
    );
}

/// The horizontal extent of a label, estimated as the charts lay text out: 0.6 em a character
/// (DejaVu Sans, the widest common system sans-serif, averages about that; frame.rs), 4% more
/// for bold (as the chart titles are fitted), placed by its `text-anchor`. A rotated label
/// (the y axis titles) has no horizontal extent to speak of and is skipped.
fn text_extent(e: &Element) -> Option<(f64, f64)> {
    if e.tag != "text" || e.attributes.contains_key("transform") {
        return None;
    }
    let size = e.number("font-size");
    let bold = e.attributes.get("font-weight").is_some_and(|w| w == "bold");
    let width = e.text.chars().count() as f64 * size * 0.6 * if bold { 1.04 } else { 1.0 };
    let x = e.number("x");
    Some(match e.attributes.get("text-anchor").map(String::as_str) {
        Some("end") => (x - width, x),
        Some("middle") => (x - width / 2.0, x + width / 2.0),
        _ => (x, x + width),
    })
}

/// No label of the chart `file` runs past its left or right edge (the SVG's own width), by the
/// estimate above; no tolerance: a chart that fits its text by the estimate never needs one.
fn check_text_fits(file: &str, svg: &[Element]) {
    let width = svg.iter().find(|e| e.tag == "svg").unwrap().number("width");
    for e in svg {
        if let Some((left, right)) = text_extent(e) {
            assert!(
                left >= 0.0 && right <= width,
                "{file}: \"{}\" spans {left:.0} to {right:.0} px of {width}",
                e.text
            );
        }
    }
}

/// Two invented names sharing their first 42 characters, and one of 108.
const NORTH: &str = "Caddlewick Precision Flow Control Holdings North America";
const EUROPE: &str = "Caddlewick Precision Flow Control Holdings Europe";
const VERY_LONG: &str = "Fallowmoor Very Long Name Engineering Consolidated Worldwide Limited \
                         Partnership (Registered Holding Company) Ltd";
/// Two invented names that differ only in their middle: cut in the middle alone, they read
/// the same.
const CLASS_A: &str = "Tarnwell Pump and Valve Holdings Class A Voting Ordinary Shares";
const CLASS_B: &str = "Tarnwell Pump and Valve Holdings Class B Voting Ordinary Shares";
const CLAIM: &str = "Invented adviser build-up for the large review case";
const REASON: &str = "Invented: a pending merger distorts its prices since 2025; left out on \
                      judgement.";

/// The demo case copied into `root/case` with 22 more invented peers (30 in all), each on a
/// demo peer's prices scaled and varied (a file of its own, `common::varied_prices`), two of them `NORTH` and
/// `EUROPE`, two `CLASS_A` and `CLASS_B`, the last excluded by hand for `REASON`; and the
/// claim labelled `CLAIM`.
fn thirty_peer_case(root: &Path) -> std::path::PathBuf {
    let case = root.join("case");
    common::copy_demo_case(&case);
    let mut toml = std::fs::read_to_string(case.join("case.toml")).unwrap();
    let files: Vec<String> = toml
        .lines()
        .filter_map(|l| l.strip_prefix("prices = \"data/peers/"))
        .map(|l| format!("data/peers/{}", l.trim_end_matches('"')))
        .collect();
    assert_eq!(files.len(), 8, "the demo has eight peers");
    let mut names = vec![NORTH.to_string(), EUROPE.to_string()];
    names.extend([CLASS_A.to_string(), CLASS_B.to_string()]);
    names.extend((5..=22).map(|k| format!("Invented Added Peer {k:02}")));
    for (k, name) in names.iter().enumerate() {
        let source = &files[k % files.len()];
        let text = std::fs::read_to_string(case.join(source)).unwrap();
        let file = format!("data/peers/added-{k:02}.csv");
        let factor = 1.0 + 0.5 * (k + 1) as f64;
        std::fs::write(case.join(&file), common::varied_prices(&text, factor, k)).unwrap();
        toml.push_str(&format!(
            "\n[[peer]]\nname = \"{name}\"\nprices = \"{file}\"\nequity_value = 1000.0\n\
             debt = 300.0\ncash = 50.0\ntax_rate = 0.25\n"
        ));
        if k == names.len() - 1 {
            toml.push_str(&format!("exclude = \"{REASON}\"\n"));
        }
    }
    std::fs::write(case.join("case.toml"), toml).unwrap();
    let claimed = std::fs::read_to_string(case.join("claimed.toml")).unwrap();
    let claimed = claimed.replace(
        "label = \"Adviser's build-up (fictional)\"",
        &format!("label = \"{CLAIM}\""),
    );
    assert!(claimed.contains(CLAIM));
    std::fs::write(case.join("claimed.toml"), claimed).unwrap();
    case.join("case.toml")
}

/// The drawn labels of `svg` that carry a tooltip, as (drawn, tooltip).
fn tooltips(svg: &[Element]) -> Vec<(String, String)> {
    svg.iter()
        .filter_map(|e| Some((e.text.clone(), e.tooltip.clone()?)))
        .collect()
}

// Thirty peers of which twenty are left out: the aggregate's line is drawn beside the peers it
// aggregates, so a betas part holding only peers left out has none (it once drew a stub of it
// above the divider).
#[test]
fn a_betas_part_of_peers_left_out_draws_no_aggregate_line() {
    let root = tempfile::tempdir().unwrap();
    let case = thirty_peer_case(root.path());
    let mut toml = std::fs::read_to_string(&case).unwrap();
    for k in 5..22 {
        let name = format!("name = \"Invented Added Peer {k:02}\"\n");
        assert!(toml.contains(&name));
        toml = toml.replace(
            &name,
            &format!("{name}exclude = \"Left out for this test\"\n"),
        );
    }
    std::fs::write(&case, toml).unwrap();
    let out = root.path().join("out");
    let result = common::run_case_with(&case, &out, &[]);
    let peers = result["peers"].as_array().unwrap();
    let included = peers
        .iter()
        .filter(|p| p["excluded_reason"].is_null())
        .count();
    assert_eq!((peers.len(), included), (30, 12));
    // Rows run included first, then the excluded; a part holds an included peer when the
    // rows before it are fewer than the included ones.
    let (mut before, mut parts_without) = (0, 0);
    for k in 1.. {
        let file = match k {
            1 => "betas.svg".to_string(),
            k => format!("betas-{k}.svg"),
        };
        let Ok(text) = std::fs::read_to_string(out.join("figures").join(&file)) else {
            break;
        };
        let svg = parse(&text);
        let rows = in_group(&svg, "raw-beta").len();
        let lines = in_group(&svg, "aggregate").len();
        // The legend keys the line only where it is drawn (found by review: it keyed a line
        // the part did not draw).
        let key = svg
            .iter()
            .any(|e| e.tag == "text" && e.text.contains("of the peers included"));
        if before < included {
            assert!(
                lines > 0,
                "{file}: holds included peers, so the aggregate's line"
            );
            assert!(key, "{file}: the line's key");
        } else {
            assert_eq!(
                lines, 0,
                "{file}: only peers left out, so no aggregate line"
            );
            assert!(!key, "{file}: a key for a line not drawn");
            assert!(text.contains("The peers here are all left out"), "{file}");
            parts_without += 1;
        }
        before += rows;
    }
    assert_eq!(before, 30);
    assert!(
        parts_without > 0,
        "the case puts a part of excluded peers alone"
    );
}

// Thirty peers: the betas and the rolling betas come in parts small enough to print legibly,
// every part linked from the memo and inlined in the report, every peer drawn exactly once;
// names shortened in the middle stay apart and keep the whole name as a tooltip; the claim's
// label and the exclusion reason fit; no label runs off any chart. A smaller run into the
// same folder then takes the extra parts away.
#[test]
fn a_large_peer_set_is_drawn_in_legible_parts_with_distinct_labels() {
    let root = tempfile::tempdir().unwrap();
    let case = thirty_peer_case(root.path());
    let out = root.path().join("out");
    let run = |case: &str| {
        let output = hurdle(&["run", case, "--out", out.to_str().unwrap()]);
        assert!(
            output.status.success(),
            "{}",
            String::from_utf8_lossy(&output.stderr)
        );
    };
    run(case.to_str().unwrap());
    let figures = out.join("figures");
    let read = |file: &str| parse(&std::fs::read_to_string(figures.join(file)).unwrap());
    let mut files: Vec<String> = std::fs::read_dir(&figures)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    files.sort();
    let memo = std::fs::read_to_string(out.join("memo.md")).unwrap();
    let report = std::fs::read_to_string(out.join("report.html")).unwrap();
    for file in &files {
        assert!(memo.contains(&format!("](figures/{file})")), "memo: {file}");
        assert!(
            report.contains(&format!("data-file=\"figures/{file}\"")),
            "report: {file}"
        );
        check_text_fits(file, &read(file));
    }

    // Parts: stability.svg first, then stability-2.svg, … numbered without gaps; each peer's
    // panel (class panel-N, N its place in the case) in exactly one part.
    let parts = |stem: &str| -> Vec<String> {
        let mut parts = vec![format!("{stem}.svg")];
        while files.contains(&format!("{stem}-{}.svg", parts.len() + 1)) {
            parts.push(format!("{stem}-{}.svg", parts.len() + 1));
        }
        let all = files.iter().filter(|f| f.starts_with(stem)).count();
        assert_eq!(
            all,
            parts.len(),
            "{stem}: parts numbered 2, 3, … without gaps"
        );
        parts
    };
    let stability = parts("stability");
    assert!(stability.len() > 1, "30 panels do not fit one printed page");
    let mut panels = Vec::new();
    for part in &stability {
        let svg = read(part);
        let titles: Vec<&Element> = svg
            .iter()
            .filter(|e| e.tag == "text" && e.group.starts_with("panel-title "))
            .collect();
        // Four rows of two 190-px panels (with the bands, about 1,000 px) still print at about
        // nine tenths of the page width; more would shrink the text below legibility.
        assert!(titles.len() <= 8, "{part}: {} panels", titles.len());
        panels.extend(titles.iter().map(|e| e.group.clone()));
    }
    let expected: Vec<String> = (1..=30).map(|n| format!("panel-title panel-{n}")).collect();
    assert_eq!(panels, expected, "each peer's panel once, in case order");

    // Betas: every peer's row once across the parts (the same order as on one chart), each part
    // short enough to print on a page (the print styles cap a chart at 240 mm, 938 px at the
    // page's 720-px width): no part may be taller than that.
    let betas = parts("betas");
    assert!(betas.len() > 1);
    let mut dots = 0;
    for part in &betas {
        let svg = read(part);
        dots += in_group(&svg, "raw-beta").len();
        let height = svg
            .iter()
            .find(|e| e.tag == "svg")
            .unwrap()
            .number("height");
        assert!(height <= 938.0, "{part}: {height} px high");
    }
    assert_eq!(dots, 30);

    // Names sharing their first 42 characters are drawn differently, each with its whole name
    // as the tooltip, in the betas chart, the rolling-beta panels and the regression titles.
    let labelled = |files: &[String]| -> Vec<(String, String)> {
        files.iter().flat_map(|f| tooltips(&read(f))).collect()
    };
    let regressions: Vec<String> = files
        .iter()
        .filter(|f| f.starts_with("regression-"))
        .cloned()
        .collect();
    for (chart, labels) in [
        ("betas", labelled(&betas)),
        ("stability", labelled(&stability)),
        ("regression", labelled(&regressions)),
    ] {
        let drawn = |full: &str| -> String {
            let hits: Vec<&(String, String)> =
                labels.iter().filter(|(_, t)| t.contains(full)).collect();
            assert_eq!(hits.len(), 1, "{chart}: one label with the tooltip {full}");
            hits[0].0.clone()
        };
        let (north, europe) = (drawn(NORTH), drawn(EUROPE));
        assert_ne!(north, europe, "{chart}");
        // Names that differ only in their middle are drawn apart too.
        assert_ne!(drawn(CLASS_A), drawn(CLASS_B), "{chart}");
        for (shown, full) in [(&north, NORTH), (&europe, EUROPE)] {
            assert!(shown.contains('…'), "{chart}: {shown}");
            // The drawn start and end are the name's own.
            let name_part = shown.split(": regression").next().unwrap();
            let (start, end) = name_part.split_once('…').unwrap();
            assert!(
                full.starts_with(start) && full.ends_with(end),
                "{chart}: {shown}"
            );
        }
    }

    // The claim's label: cut with an ellipsis, ": WACC" kept, the whole label the tooltip.
    let bridge = read("reconciliation.svg");
    let claim = tooltips(&bridge)
        .into_iter()
        .find(|(_, t)| t == &format!("{CLAIM}: WACC"))
        .expect("the claim's label has its tooltip");
    assert!(claim.0.ends_with("…: WACC") && CLAIM.starts_with(claim.0.split('…').next().unwrap()));

    // The exclusion reason, wrapped under the name: every word of it drawn (it fits three lines),
    // and whole in the tooltip.
    let last = read(betas.last().unwrap());
    let reason: Vec<&Element> = in_group(&last, "y-axis")
        .into_iter()
        // The reason's small text, not the divider's bold note.
        .filter(|e| e.tag == "text" && e.attributes["font-size"] == "11")
        .filter(|e| !e.attributes.contains_key("font-weight"))
        .collect();
    assert_eq!(reason[0].tooltip.as_deref(), Some(REASON));
    let drawn: Vec<&str> = reason.iter().map(|e| e.text.as_str()).collect();
    assert_eq!(drawn.join(" "), REASON);

    // A run of the eight-peer demo into the same folder leaves one betas and one stability
    // chart: the earlier run's extra parts are taken away.
    run(DEMO_CASE);
    for stem in ["betas", "stability"] {
        let left: Vec<String> = std::fs::read_dir(&figures)
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .filter(|f| f.starts_with(stem))
            .collect();
        assert_eq!(left, [format!("{stem}.svg")]);
    }
}

// One peer with a 108-character name: its rolling-beta panel title (the panel is the chart's
// full width) and the other charts' labels stay inside the chart, and the demo's own charts do.
#[test]
fn long_names_and_the_demo_labels_stay_inside_their_charts() {
    let name = format!("peer.0.name=\"{VERY_LONG}\"");
    for run in [Run::new(&[]), Run::new(&["--set", &name])] {
        for file in run.files() {
            check_text_fits(&file, &run.svg(&file));
        }
    }
    let run = Run::new(&["--set", &name]);
    let stability = run.svg("stability.svg");
    let title = stability
        .iter()
        .find(|e| e.tooltip.as_deref() == Some(VERY_LONG))
        .expect("the panel title's tooltip holds the whole name");
    assert!(title.text.contains('…'));
}

// One peer's returns multiplied by 15 before 2024 (its betas and their errors with them, by
// the scaling of OLS: β and SE scale with the dependent variable) give it by far the widest
// rolling band, so the panels take scales of their own and the caption names that peer (found
// by review: it said "one peer" without naming it).
#[test]
fn the_peer_that_unshares_the_stability_scale_is_named() {
    let dir = tempfile::tempdir().unwrap();
    let case_dir = dir.path().join("case");
    common::copy_demo_case(&case_dir);
    let file = case_dir.join("data/peers/dunmere.csv");
    let text = std::fs::read_to_string(&file).unwrap();
    let mut lines = text.lines();
    let mut out = vec![lines.next().unwrap().to_string()];
    let (mut previous, mut level) = (None::<f64>, 0.0);
    for line in lines {
        let (date, price) = line.split_once(',').unwrap();
        let price: f64 = price.parse().unwrap();
        level = match previous {
            None => price,
            Some(before) => {
                let factor = if date < "2024-01-01" { 15.0 } else { 1.0 };
                level * (factor * (price / before).ln()).exp()
            }
        };
        previous = Some(price);
        out.push(format!("{date},{level:.8}"));
    }
    std::fs::write(&file, out.join("\n") + "\n").unwrap();
    let run_dir = dir.path().join("out");
    common::run_case_with(&case_dir.join("case.toml"), &run_dir, &[]);
    let svg = std::fs::read_to_string(run_dir.join("figures/stability.svg")).unwrap();
    assert!(
        unescape(&svg).contains(
            "each panel has a β scale of its own, since the band of Dunmere Hydraulics ("
        ),
        "{svg}"
    );
}

/// The stability chart's tick labels of panel `panel` as (x, label), left to right.
fn time_ticks(svg: &[Element], panel: usize) -> Vec<(f64, String)> {
    let mut ticks: Vec<(f64, String)> = in_group(svg, &format!("x-axis panel-{panel}"))
        .into_iter()
        .filter(|e| e.tag == "text")
        .map(|e| (e.number("x"), e.text.clone()))
        .collect();
    ticks.sort_by(|a, b| a.0.total_cmp(&b.0));
    ticks
}

// A rolling window of 60 months in the demo's window of 60 monthly returns (README: lookback
// 60, rolling_window "3 to the window's periods") fits one window a peer: no rolling β over
// time to draw. No stability chart then (the one an earlier run left is taken away), nothing
// links one, the memo's stability section says why for each peer, and no caption ever reads
// "windows of ? months" (found by review: an empty chart with that caption). With 59 months,
// two windows a peer: the chart, its caption naming the window the case sets.
#[test]
fn one_rolling_window_a_peer_draws_no_stability_chart() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    common::run_case_with(Path::new(DEMO_CASE), &out, &[]);
    assert!(out.join("figures/stability.svg").is_file());
    common::run_case_with(Path::new(DEMO_CASE), &out, &["beta.rolling_window=60"]);
    assert!(
        !out.join("figures/stability.svg").exists(),
        "an empty chart"
    );
    let memo = std::fs::read_to_string(out.join("memo.md")).unwrap();
    let report = std::fs::read_to_string(out.join("report.html")).unwrap();
    assert!(!memo.contains("stability.svg") && !report.contains("stability.svg"));
    assert_eq!(
        memo.matches("one rolling window only: beta.rolling_window = 60 periods fills")
            .count(),
        8,
        "each of the demo's eight peers says why"
    );
    for entry in std::fs::read_dir(out.join("figures")).unwrap() {
        let text = std::fs::read_to_string(entry.unwrap().path()).unwrap();
        assert!(!text.contains("windows of ?"));
    }
    let run = Run::new(&["--set", "beta.rolling_window=59"]);
    let svg = run.svg("stability.svg");
    let desc = svg.iter().find(|e| e.tag == "desc").unwrap();
    assert!(
        desc.text.contains("over windows of 59 months"),
        "{}",
        desc.text
    );
    for i in 1..=8 {
        let line = in_group(&svg, &format!("rolling-beta panel-{i}"))[0].points();
        assert_eq!(line.len(), 2, "two windows of 59 in 60 returns");
    }
}

// The ticks of the rolling betas' time axis stand where the windows end: the demo's monthly
// windows end on the last day of a month (rolling.csv's window_end), so the tick labelled with
// a month stands on the point of the window ending in that month (found by review: ticks at
// the months' starts stood beside the month before's window). 55-month windows in 60 returns
// end in the last six months, so the axis is marked monthly.
#[test]
fn time_ticks_stand_on_the_windows_of_their_month() {
    let set = ["--set", "beta.rolling_window=55"];
    let run = Run::new(&set);
    let out = run.dir.path().to_str().unwrap();
    assert!(
        hurdle(&["rolling", DEMO_CASE, "--out", out, set[0], set[1]])
            .status
            .success()
    );
    let csv = std::fs::read_to_string(run.dir.path().join("rolling.csv")).unwrap();
    let svg = run.svg("stability.svg");
    for (i, peer) in run.result["peers"].as_array().unwrap().iter().enumerate() {
        let name = peer["name"].as_str().unwrap();
        let ends: Vec<String> = (csv.lines())
            .filter(|l| l.starts_with(&format!("{name},")))
            .map(|l| l.split(',').nth(1).unwrap().to_string())
            .collect();
        let line = in_group(&svg, &format!("rolling-beta panel-{}", i + 1))[0].points();
        assert_eq!(line.len(), ends.len());
        let ticks = time_ticks(&svg, i + 1);
        assert!(ticks.len() >= 2, "{name}: {ticks:?}");
        for (x, label) in &ticks {
            let window = ends.iter().position(|end| end.starts_with(label.as_str()));
            let window = window.unwrap_or_else(|| panic!("{name}: no window ends in {label}"));
            // Both the tick and the vertex are the same date's pixel, rounded down alike.
            close(&format!("{name} {label}"), *x, line[window].0, 0.0);
        }
    }
}

// Weekly and daily windows span a few months: the month labels of a half-width panel once
// stood 37 px apart while each is about 46 px wide (found by review). Now neighbouring labels,
// centred on their ticks, are at least half of each one's width apart, by the 0.6 em estimate
// of the labels' width (check_text_fits; README: "an estimated advance of 0.6 em").
#[test]
fn time_labels_never_overlap_at_any_frequency() {
    for sets in [
        &[][..],
        &["--set", "beta.frequency=\"weekly\""][..],
        &["--set", "beta.frequency=\"daily\""][..],
        &[
            "--set",
            "beta.frequency=\"daily\"",
            "--set",
            "beta.lookback=250",
        ][..],
    ] {
        let run = Run::new(sets);
        let svg = run.svg("stability.svg");
        for panel in 1..=8 {
            let ticks = time_ticks(&svg, panel);
            assert!(!ticks.is_empty(), "{sets:?}: panel {panel} has no tick");
            let width = |label: &str| label.chars().count() as f64 * 11.0 * 0.6;
            for pair in ticks.windows(2) {
                let room = pair[1].0 - pair[0].0;
                let needed = (width(&pair[0].1) + width(&pair[1].1)) / 2.0;
                assert!(room >= needed, "{sets:?}: panel {panel}: {ticks:?}");
            }
        }
    }
}

/// The boxes of the Monte Carlo chart's line labels: (class, text, left, right, top, bottom),
/// by the 0.6 em estimate across and the font size up and down from the centre line.
fn line_labels(svg: &[Element]) -> Vec<(String, String, f64, f64, f64, f64)> {
    let classes = ["percentile-05", "median", "percentile-95", "point-estimate"];
    classes
        .iter()
        .map(|class| {
            let text = (in_group(svg, class).into_iter())
                .find(|e| e.tag == "text")
                .unwrap_or_else(|| panic!("{class}: no label"));
            let (left, right) = text_extent(text).unwrap();
            let (y, half) = (text.number("y"), text.number("font-size") / 2.0);
            (
                class.to_string(),
                text.text.clone(),
                left,
                right,
                y - half,
                y + half,
            )
        })
        .collect()
}

// Percentiles close together: a Vasicek prior of variance 1e-4 pulls every beta to 1 (the
// median and the point estimate then a hair apart), and with a prior of 1e-6 and the
// risk-free rate drawn from a range 1.3 points above the case's, the draws sit within a basis
// point, far from the point estimate. The labels once overlapped or ran off the chart (found
// by review). Now no two label boxes meet, every label is inside the chart, and each states
// its figure from result.json to the decimals it prints, apart from the others.
#[test]
fn monte_carlo_labels_stand_apart_when_the_percentiles_are_close() {
    let vasicek = |variance: &str| {
        vec![
            "--set".to_string(),
            "beta.adjustment=\"vasicek\"".to_string(),
            "--set".to_string(),
            "beta.vasicek_prior_mean=1.0".to_string(),
            "--set".to_string(),
            format!("beta.vasicek_prior_variance={variance}"),
        ]
    };
    let mut shifted = vasicek("0.000001");
    shifted.extend([
        "--set".into(),
        "uncertainty.risk_free_rate=[0.04,0.0401]".into(),
    ]);
    for sets in [vec![], vasicek("0.0001"), shifted] {
        let sets: Vec<&str> = sets.iter().map(String::as_str).collect();
        let run = Run::new(&sets);
        let u = &run.result["uncertainty"];
        let svg = run.svg("uncertainty.svg");
        check_text_fits("uncertainty.svg", &svg);
        let labels = line_labels(&svg);
        for (i, a) in labels.iter().enumerate() {
            for b in &labels[..i] {
                let apart = a.3 <= b.2 || b.3 <= a.2 || a.5 <= b.4 || b.5 <= a.4;
                assert!(apart, "{sets:?}: {a:?} meets {b:?}");
            }
        }
        for ((class, text, ..), key) in labels.iter().zip(["p05", "p50", "p95", "point_estimate"]) {
            let printed = text.rsplit(' ').next().unwrap().trim_end_matches('%');
            let decimals = printed.split('.').nth(1).map_or(0, str::len) as i32;
            let value: f64 = printed.parse::<f64>().unwrap() / 100.0;
            // Half a unit of the last printed decimal, in rate terms, plus a hair for binary.
            let half_unit = 0.5 * 10f64.powi(-decimals - 2) * (1.0 + 1e-9);
            close(class, value, f(&u[key]), half_unit);
        }
        let printed: Vec<&str> = labels
            .iter()
            .map(|l| l.1.rsplit(' ').next().unwrap())
            .collect();
        let values: Vec<f64> = ["p05", "p50", "p95"].iter().map(|k| f(&u[k])).collect();
        if values[2] - values[0] >= 2e-6 {
            // Percentiles two hundredths of a basis point apart print differently.
            assert_ne!(printed[0], printed[2], "{sets:?}");
        }
    }
}

// Draws all but equal (a Vasicek prior of variance 1e-12 holds every beta at the prior mean,
// so each draw's WACC is the same to about 1e-12): every draw counted (it was 9,574 of
// 10,000), edges strictly increasing, and the chart's bin width a width, not "0 bp" (found by
// review). The width printed is the one result.json records.
#[test]
fn nearly_constant_draws_are_all_counted_in_a_readable_bin() {
    let run = Run::new(&[
        "--set",
        "beta.adjustment=\"vasicek\"",
        "--set",
        "beta.vasicek_prior_mean=1.0",
        "--set",
        "beta.vasicek_prior_variance=1e-12",
    ]);
    let u = &run.result["uncertainty"];
    let h = &u["histogram"];
    let edges: Vec<f64> = h["edges"].as_array().unwrap().iter().map(f).collect();
    let counts: Vec<u64> = (h["counts"].as_array().unwrap().iter())
        .map(|c| c.as_u64().unwrap())
        .collect();
    assert_eq!(counts.iter().sum::<u64>(), u["draws"].as_u64().unwrap());
    assert!(edges.windows(2).all(|e| e[0] < e[1]), "{edges:?}");
    for key in ["p05", "p95"] {
        assert!(edges[0] <= f(&u[key]) && f(&u[key]) <= edges[edges.len() - 1]);
    }
    let svg = run.svg("uncertainty.svg");
    let title = (in_group(&svg, "y-axis").into_iter())
        .find(|e| e.tag == "text" && e.text.starts_with("Draws per "))
        .unwrap();
    let width = title.text["Draws per ".len()..].trim_end_matches(" bin");
    assert!(!width.contains("0 bp"), "{width}");
    // The memo states the prior variance the case gives, not its rounding to 0.0000 (found by
    // review).
    let memo = std::fs::read_to_string(run.dir.path().join("memo.md")).unwrap();
    assert!(memo.contains("prior variance\n1e-12 (stated)"), "{memo}");
    // 1e-15: the width printed in percent with as many decimals as it needs, read back.
    close(
        "bin width",
        tick_value(width).unwrap(),
        f(&h["bin_width"]),
        1e-15,
    );
    check_uncertainty(&run);
}

// numpy.histogram counts a sample's values into the edges hurdle stores, half-open bins and
// the last closed, the convention hurdle's module documents; its counts must be hurdle's. The
// width is Freedman and Diaconis's 2·IQR·n^(−1/3) with numpy's quartiles (linear
// interpolation, as hurdle's), rounded up to 1, 2, 2.5 or 5 × 10^k, written out in Python.
#[test]
fn histogram_counts_agree_with_numpy() {
    let mut rng = hurdle::stats::random::Rng::seeded(11);
    let mut values: Vec<f64> = (0..10_000)
        .map(|_| 0.0812 + 0.0031 * rng.normal())
        .collect();
    values.sort_by(f64::total_cmp);
    let h = hurdle::audit::histogram::histogram(&values);
    let dir = tempfile::tempdir().unwrap();
    let input = dir.path().join("histogram.json");
    let data = serde_json::json!({"values": values, "edges": h.edges});
    std::fs::write(&input, data.to_string()).unwrap();
    let script = r#"
import json, math, sys
import numpy as np
d = json.load(open(sys.argv[1]))
v, edges = np.array(d["values"]), np.array(d["edges"])
counts, _ = np.histogram(v, bins=edges)
q1, q3 = np.percentile(v, [25, 75])
raw = 2 * (q3 - q1) * len(v) ** (-1 / 3)
power = 10 ** math.floor(math.log10(raw))
width = min(m * power for m in (1, 2, 2.5, 5, 10) if m * power >= raw)
print(json.dumps({"counts": counts.tolist(), "width": width}))
"#;
    let output = std::process::Command::new("python3")
        .args(["-c", script, input.to_str().unwrap()])
        .output()
        .expect("python3 with numpy must be installed (python3 -m pip install numpy scipy)");
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
    let numpy: serde_json::Value = serde_json::from_slice(&output.stdout).unwrap();
    let counts: Vec<u32> = (numpy["counts"].as_array().unwrap().iter())
        .map(|c| c.as_u64().unwrap() as u32)
        .collect();
    assert_eq!(h.counts, counts);
    // 1e-18: both widths are a power of ten times 1, 2, 2.5 or 5, computed alike.
    close("bin width", h.bin_width, f(&numpy["width"]), 1e-18);
}

// Thirty peers, the last left out: the betas come in parts and only the last draws the divider
// above the peer left out. Each part's caption speaks of the divider only where it is drawn;
// a part without it says which part shows the peer left out (found by review: the first part's
// caption spoke of a divider drawn only in the second).
#[test]
fn each_betas_part_is_captioned_for_what_it_draws() {
    let root = tempfile::tempdir().unwrap();
    let case = thirty_peer_case(root.path());
    let out = root.path().join("out");
    common::run_case_with(&case, &out, &[]);
    let mut parts = vec!["betas.svg".to_string()];
    while out
        .join("figures")
        .join(format!("betas-{}.svg", parts.len() + 1))
        .is_file()
    {
        parts.push(format!("betas-{}.svg", parts.len() + 1));
    }
    assert!(parts.len() >= 2, "30 rows do not fit one part");
    let svgs: Vec<Vec<Element>> = (parts.iter())
        .map(|p| parse(&std::fs::read_to_string(out.join("figures").join(p)).unwrap()))
        .collect();
    let divider = |svg: &[Element]| {
        svg.iter()
            .any(|e| e.tag == "text" && e.text == "Left out of the aggregate")
    };
    let with_divider: Vec<usize> = (0..parts.len()).filter(|&k| divider(&svgs[k])).collect();
    assert_eq!(
        with_divider,
        [parts.len() - 1],
        "one peer left out, in the last part"
    );
    for (k, svg) in svgs.iter().enumerate() {
        let caption = &svg.iter().find(|e| e.tag == "desc").unwrap().text;
        let speaks = caption.contains("below the divider");
        assert_eq!(speaks, divider(svg), "{}: {caption}", parts[k]);
        if !divider(svg) {
            let pointer = format!(
                "The 1 peer left out of the aggregate is drawn in part {}",
                parts.len()
            );
            assert!(caption.contains(&pointer), "{}: {caption}", parts[k]);
        }
    }
}

// README: a regression chart is `regression-NN-<peer>.svg`, NN the peer's place in the case
// and <peer> its name in lower-case ASCII. Names in Greek or CJK letters have no such letters:
// their charts are `regression-NN.svg`, not `regression-NN-.svg` (found by review), one file
// a peer, each linked from the memo and placed in the report.
#[test]
fn peers_named_without_latin_letters_get_charts_by_their_place() {
    let run = Run::new(&[
        "--set",
        "peer.1.name=\"Ωμέγα Δέλτα\"",
        "--set",
        "peer.2.name=\"霧港測器計装\"",
    ]);
    let files = run.files();
    let regressions: Vec<&String> = files
        .iter()
        .filter(|f| f.starts_with("regression-"))
        .collect();
    assert_eq!(regressions.len(), 8, "{files:?}");
    assert!(
        files.contains(&"regression-02.svg".to_string()),
        "{files:?}"
    );
    assert!(
        files.contains(&"regression-03.svg".to_string()),
        "{files:?}"
    );
    assert!(files.iter().all(|f| !f.ends_with("-.svg")), "{files:?}");
    let memo = std::fs::read_to_string(run.dir.path().join("memo.md")).unwrap();
    let report = std::fs::read_to_string(run.dir.path().join("report.html")).unwrap();
    for file in regressions {
        assert!(memo.contains(&format!("](figures/{file})")), "memo: {file}");
        assert!(
            report.contains(&format!("data-file=\"figures/{file}\"")),
            "{file}"
        );
    }
    let title = run.svg("regression-02.svg");
    assert!(title
        .iter()
        .any(|e| e.tag == "title" && e.text.starts_with("Ωμέγα Δέλτα")));
}

// A dense sensitivity grid (21 × 21) prints no figure that overruns its cell and no column
// label over its neighbour, by the width estimate of `text_extent` (found by review: the cells'
// figures and the tick labels ran together); the caption says where the figures are.
#[test]
fn a_dense_sensitivity_grid_keeps_its_text_apart() {
    let run = Run::new(&[
        "--set",
        "sensitivity.columns=\"target.debt_to_equity=0..2:0.1\"",
        "--set",
        "sensitivity.rows=\"market.equity_risk_premium=0.03..0.08:0.0025\"",
    ]);
    let svg = run.svg("sensitivity.svg");
    let cells = in_group(&svg, "cells");
    assert_eq!(cells.len(), 21 * 21 * 2, "a fill and a hairline per cell");
    let cell_width = cells[0].number("width");
    for value in in_group(&svg, "values") {
        let (left, right) = text_extent(value).unwrap();
        assert!(
            right - left <= cell_width,
            "\"{}\" overruns its cell",
            value.text
        );
    }
    // The tick labels stand in one row, above the axis title.
    let texts: Vec<&Element> = in_group(&svg, "x-axis")
        .into_iter()
        .filter(|e| e.tag == "text" && !e.text.trim().is_empty())
        .collect();
    let row = texts
        .iter()
        .map(|e| e.number("y"))
        .fold(f64::INFINITY, f64::min);
    let mut labels: Vec<(f64, f64)> = (texts.iter())
        .filter(|e| e.number("y") == row)
        .filter_map(|e| text_extent(e))
        .collect();
    labels.sort_by(|a, b| a.0.total_cmp(&b.0));
    assert!(
        labels.len() >= 5,
        "some column labels are written: {labels:?}"
    );
    for pair in labels.windows(2) {
        assert!(pair[0].1 <= pair[1].0, "column labels overlap: {pair:?}");
    }
    let caption = svg.iter().find(|e| e.tag == "desc").unwrap().text.clone();
    assert!(
        in_group(&svg, "values").is_empty() == caption.contains("too narrow to print"),
        "{caption}"
    );
    // Thirteen columns: the figures are printed smaller than the 14 px of a 5 × 5 grid, each
    // inside its cell.
    let run = Run::new(&[
        "--set",
        "sensitivity.columns=\"target.debt_to_equity=0..1.2:0.1\"",
    ]);
    let svg = run.svg("sensitivity.svg");
    let cell_width = in_group(&svg, "cells")[0].number("width");
    let values = in_group(&svg, "values");
    assert_eq!(values.len(), 5 * 13, "every figure printed");
    for value in values {
        assert!(value.number("font-size") < 14.0, "a smaller size");
        let (left, right) = text_extent(value).unwrap();
        assert!(
            right - left <= cell_width,
            "\"{}\" overruns its cell",
            value.text
        );
    }
    // Twenty-one columns from 0.05: the case's own column (D/E 0.40, the eighth) keeps its
    // label among the thinned ones.
    let run = Run::new(&[
        "--set",
        "sensitivity.columns=\"target.debt_to_equity=0.05..1.05:0.05\"",
    ]);
    let svg = run.svg("sensitivity.svg");
    assert!(
        in_group(&svg, "x-axis")
            .iter()
            .any(|e| e.tag == "text" && e.text == "0.40"),
        "the case's column is labelled"
    );
}

// A peer name of 26 characters, ordinary for a listed firm, is written whole in the betas chart
// (found by review: the name band cut names at 23 characters while the plot had room).
#[test]
fn ordinary_long_peer_names_are_written_whole_in_the_betas_chart() {
    let name = "Elderholm Fluid Handling Co";
    let run = Run::new(&["--set", &format!("peer.0.name=\"{name}\"")]);
    let svg = run.svg("betas.svg");
    assert!(
        svg.iter()
            .any(|e| e.tag == "text" && unescape(&e.text) == name),
        "{name} is shortened"
    );
    check_text_fits("betas.svg", &svg);
}

// A peer's rolling line breaks where windows were skipped: one drawn piece (a line, or a dot
// for a window alone) per run of windows between skipped ones, the runs counted here from
// result.json's window ends (rolling.csv) and skipped ends (found by review: the line and band
// ran straight across 13 skipped windows).
#[test]
fn the_stability_chart_breaks_its_line_at_skipped_windows() {
    let run = Run::new(&[
        "--set",
        "beta.rolling_window=12",
        "--set",
        "beta.rolling_min_observations=12",
    ]);
    let rolling = std::fs::read_to_string(run.dir.path().join("rolling.csv")).unwrap();
    let svg = run.svg("stability.svg");
    let mut broken = 0;
    for (i, peer) in run.result["peers"].as_array().unwrap().iter().enumerate() {
        let name = peer["name"].as_str().unwrap();
        let ends: Vec<String> = (rolling.lines())
            .filter(|l| l.starts_with(&format!("{name},")))
            .map(|l| l.split(',').nth(1).unwrap().to_string())
            .collect();
        let skipped: Vec<&str> = (peer["stability"]["skipped_window_ends"].as_array().unwrap())
            .iter()
            .map(|d| d.as_str().unwrap())
            .collect();
        let breaks = (ends.windows(2))
            .filter(|w| {
                skipped
                    .iter()
                    .any(|s| w[0].as_str() < *s && *s < w[1].as_str())
            })
            .count();
        let pieces = in_group(&svg, &format!("rolling-beta panel-{}", i + 1))
            .into_iter()
            .filter(|e| e.tag == "polyline" || e.tag == "circle")
            .count();
        assert_eq!(pieces, breaks + 1, "{name}");
        broken += usize::from(breaks > 0);
    }
    assert!(broken > 0, "a peer with a skipped window inside its line");
}
