//! The universe's chart against its table: every mark `figures/industries.svg` draws — each
//! industry's median unlevered beta, the median's 95% interval, the quartiles and the median
//! levered beta — is read back through the chart's own axis labels and compared with
//! `industries.csv`, whose figures `tests/reference/check_universe.py` recomputes with
//! numpy/scipy (tests/universe.rs). Also: the rows' order, the labels' counts, the parts of a
//! table of many industries, `summary.md`'s links, and the parts a later run no longer draws
//! taken away (by this run, or by a case run into the same folder).
//!
//! Tolerances: two pixels' worth of the axis (`common::svg`), as for the case's charts.

use std::collections::HashMap;
use std::fs;
use std::path::{Path, PathBuf};

mod common;
mod universe_data;

use common::hurdle;
use common::svg::{close, in_group, parse, Axis, Element};

/// Runs `hurdle universe` on `dir`'s universe file into `out` with `--set` values.
fn run_universe(dir: &Path, out: &Path, sets: &[&str]) {
    let file = dir.join("universe.toml");
    let mut args = vec![
        "universe",
        file.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--quiet",
    ];
    for s in sets {
        args.extend(["--set", s]);
    }
    let output = hurdle(&args);
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
}

/// `industries.csv` as rows of named cells (empty cells absent).
fn table(out: &Path) -> Vec<HashMap<String, String>> {
    let text = fs::read_to_string(out.join("industries.csv")).unwrap();
    let mut lines = text.lines();
    let header: Vec<String> = lines.next().unwrap().split(',').map(String::from).collect();
    lines
        .map(|line| {
            // The test universe's labels hold no comma or quote.
            (header.iter().cloned())
                .zip(line.split(','))
                .filter(|(_, v)| !v.is_empty())
                .map(|(k, v)| (k, v.to_string()))
                .collect()
        })
        .collect()
}

fn number(row: &HashMap<String, String>, column: &str) -> Option<f64> {
    row.get(column).map(|v| v.parse().unwrap())
}

/// The chart parts in `out/figures`, sorted by part number.
fn parts(out: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(out.join("figures"))
        .map(|entries| {
            (entries.flatten())
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .collect()
        })
        .unwrap_or_default();
    names.sort_by_key(|n| {
        (n.trim_start_matches("industries")
            .trim_start_matches('-')
            .trim_end_matches(".svg"))
        .parse::<usize>()
        .unwrap_or(1)
    });
    names
}

/// The row labels of a part, top to bottom, each as its full text (a label of two lines
/// joined; a cut one's tooltip), with its pixel row (the middle of its lines).
fn labels(svg: &[Element]) -> Vec<(String, f64)> {
    // Labels are set right of their text; the dividers' words left.
    let mut lines: Vec<&Element> = in_group(svg, "y-axis")
        .into_iter()
        .filter(|e| e.tag == "text" && e.attributes["text-anchor"] == "end")
        .collect();
    lines.sort_by(|a, b| a.number("y").total_cmp(&b.number("y")));
    // A label's two lines are 16 px apart; two rows' lines at least 18 (34 px rows).
    let mut rows: Vec<(Vec<&Element>, f64)> = Vec::new();
    for line in lines {
        let y = line.number("y");
        match rows.last_mut() {
            Some((group, last)) if y - *last <= 17.0 => {
                group.push(line);
                *last = y;
            }
            _ => rows.push((vec![line], y)),
        }
    }
    rows.into_iter()
        .map(|(group, _)| {
            let full = (group[0].tooltip.clone()).unwrap_or_else(|| {
                let texts: Vec<&str> = group.iter().map(|e| e.text.as_str()).collect();
                texts.join(" ")
            });
            let middle = group.iter().map(|e| e.number("y")).sum::<f64>() / group.len() as f64;
            (full, middle)
        })
        .collect()
}

/// Checks every mark of every row of the chart in `out` against `industries.csv`: each part
/// opens with the peer set (when the universe lists one), then the table's industries from the
/// highest `unlevered_beta` down (those without one last), each labelled with how many of its
/// securities the unlevered betas rest on.
fn check_chart(out: &Path) {
    let table = table(out);
    let mut expected: Vec<&HashMap<String, String>> = table.iter().collect();
    expected.sort_by(|a, b| {
        let key = |r: &HashMap<String, String>| number(r, "unlevered_beta").unwrap_or(f64::MIN);
        key(b)
            .total_cmp(&key(a))
            .then(a["industry"].cmp(&b["industry"]))
    });
    let peer_set = peer_set_row(out);
    // The ring is the median of the betas unlevered: the adjusted ones when there are any.
    let adjusted = table.iter().any(|r| r.contains_key("median_shrunk_beta"));
    let ring_column = if adjusted {
        "median_shrunk_beta"
    } else {
        "median_beta"
    };
    let mut k = 0;
    for part in parts(out) {
        let svg = parse(&fs::read_to_string(out.join("figures").join(&part)).unwrap());
        let x = Axis::read(&svg, "x-axis", "x");
        let dots = in_group(&svg, "median");
        let rings = in_group(&svg, "levered-median");
        let bands = in_group(&svg, "quartiles");
        let whiskers: Vec<Vec<(f64, f64)>> = (in_group(&svg, "intervals").iter())
            .map(|e| e.points())
            .filter(|p| p.len() == 2 && p[0].1 == p[1].1)
            .collect();
        // Marks by their pixel row: a row's marks sit on its label's middle (±1 px).
        let on_row = |y: f64, cy: f64| (y - cy).abs() <= 1.0;
        for (i, (label, y)) in labels(&svg).iter().enumerate() {
            let row = match (&peer_set, i) {
                (Some(set), 0) => set,
                _ => {
                    k += 1;
                    expected[k - 1]
                }
            };
            let count = row
                .get("unlevered_beta_count")
                .map_or("0".to_string(), |c| c.clone());
            let name = &row["industry"];
            let securities = &row["securities"];
            assert_eq!(
                label,
                &format!("{name} ({count} of {securities})"),
                "{part}"
            );
            let dot = dots.iter().find(|d| on_row(*y, d.number("cy")));
            match number(row, "median_unlevered_beta") {
                Some(median) => {
                    let dot = dot.unwrap_or_else(|| panic!("{name}: no median drawn"));
                    close(name, x.value(dot.number("cx")), median, x.tolerance());
                }
                None => assert!(dot.is_none(), "{name}: a median drawn without one"),
            }
            let ring = rings.iter().find(|r| on_row(*y, r.number("cy")));
            if let Some(levered) = number(row, ring_column) {
                let ring = ring.unwrap_or_else(|| panic!("{name}: no levered median"));
                close(name, x.value(ring.number("cx")), levered, x.tolerance());
            }
            let band = bands.iter().find(|b| {
                let middle = b.number("y") + b.number("height") / 2.0;
                on_row(*y, middle)
            });
            // Quartiles are drawn from four betas (chart.rs's BAND_FROM).
            let banded = count.parse::<usize>().unwrap() >= 4;
            match (
                number(row, "lower_quartile_unlevered_beta"),
                number(row, "upper_quartile_unlevered_beta"),
            ) {
                (Some(low), Some(high)) if banded => {
                    let band = band.unwrap_or_else(|| panic!("{name}: no quartile band"));
                    close(name, x.value(band.number("x")), low, x.tolerance());
                    let right = band.number("x") + band.number("width");
                    close(name, x.value(right), high, x.tolerance());
                }
                _ => assert!(band.is_none(), "{name}: a band drawn under four betas"),
            }
            let whisker = whiskers.iter().find(|w| on_row(*y, w[0].1));
            match (
                number(row, "median_unlevered_beta_ci_low"),
                number(row, "median_unlevered_beta_ci_high"),
            ) {
                (Some(low), Some(high)) => {
                    let w = whisker.unwrap_or_else(|| panic!("{name}: no interval drawn"));
                    close(name, x.value(w[0].0), low, x.tolerance());
                    close(name, x.value(w[1].0), high, x.tolerance());
                }
                _ => assert!(whisker.is_none(), "{name}: an interval drawn without one"),
            }
        }
    }
    assert_eq!(k, table.len(), "every industry is drawn once");
}

/// The listed peer set's figures from `result.json` under industries.csv's column names (the
/// peer set has no row there), labelled as the chart labels it.
fn peer_set_row(out: &Path) -> Option<HashMap<String, String>> {
    let text = fs::read_to_string(out.join("result.json")).unwrap();
    let result: serde_json::Value = serde_json::from_str(&text).unwrap();
    let figures = result.get("peer_set")?.get("figures")?;
    let unlevered = &figures["unlevered"];
    let d = &unlevered["dispersion"];
    let mut row = HashMap::from([("industry".to_string(), "Listed peer set".to_string())]);
    let mut put = |column: &str, value: &serde_json::Value| {
        if !value.is_null() {
            row.insert(column.to_string(), value.to_string());
        }
    };
    put("unlevered_beta_count", &d["count"]);
    put("median_unlevered_beta", &d["median"]);
    put("lower_quartile_unlevered_beta", &d["lower_quartile"]);
    put("upper_quartile_unlevered_beta", &d["upper_quartile"]);
    put(
        "median_unlevered_beta_ci_low",
        &unlevered["median_interval"][0],
    );
    put(
        "median_unlevered_beta_ci_high",
        &unlevered["median_interval"][1],
    );
    put("securities", &figures["securities"]);
    put("median_beta", &figures["levered"]["dispersion"]["median"]);
    put(
        "median_shrunk_beta",
        &figures["shrunk"]["dispersion"]["median"],
    );
    put("unlevered_beta", &figures["unlevered_beta"]);
    Some(row)
}

fn generated() -> (tempfile::TempDir, PathBuf) {
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("u");
    universe_data::generate(&dir, 20_260_930);
    (root, dir)
}

#[test]
fn the_chart_draws_the_industry_table() {
    let (root, dir) = generated();
    let out = root.path().join("out");
    run_universe(&dir, &out, &[]);
    assert_eq!(parts(&out), vec!["industries.svg"]);
    check_chart(&out);
    // One industry of the test universe has six securities or more, so one interval is drawn.
    let svg = parse(&fs::read_to_string(out.join("figures/industries.svg")).unwrap());
    assert!(!in_group(&svg, "intervals").is_empty());
    let summary = fs::read_to_string(out.join("summary.md")).unwrap();
    assert!(
        summary.contains("](figures/industries.svg)"),
        "summary.md shows the chart"
    );
    // The mean as the industry figure: its marker is drawn, and the rows follow it (the test
    // universe lists no peer set, so the triangles run in the rows' order).
    let mean = root.path().join("mean");
    run_universe(&dir, &mean, &["leverage.aggregation=mean"]);
    check_chart(&mean);
    let svg = parse(&fs::read_to_string(mean.join("figures/industries.svg")).unwrap());
    let x = Axis::read(&svg, "x-axis", "x");
    let triangles = in_group(&svg, "industry-figure");
    let drawn: Vec<f64> = (triangles.iter())
        .map(|t| {
            let p = t.points();
            // The closed triangle repeats its apex: its x is the mean of the first three.
            x.value(p[..3].iter().map(|q| q.0).sum::<f64>() / 3.0)
        })
        .collect();
    let mut means: Vec<f64> = (table(&mean).iter())
        .filter_map(|r| number(r, "unlevered_beta"))
        .collect();
    means.sort_by(|a, b| b.total_cmp(a));
    assert_eq!(drawn.len(), means.len());
    for (d, m) in drawn.iter().zip(&means) {
        close("mean", *d, *m, x.tolerance() * 1.25);
    }
}

#[test]
fn many_industries_are_drawn_in_parts_and_fewer_take_the_extra_parts_away() {
    // The demo market (48 securities, a listed peer set), each security its own industry: more
    // rows than one part holds.
    let root = tempfile::tempdir().unwrap();
    let dir = root.path().join("market");
    for (relative, bytes) in hurdle::demo_market::generate_market(hurdle::demo::SEED) {
        let path = dir.join(relative);
        fs::create_dir_all(path.parent().unwrap()).unwrap();
        fs::write(path, bytes).unwrap();
    }
    let path = dir.join("data/attributes.csv");
    let text = fs::read_to_string(&path).unwrap();
    let mut lines = text.lines();
    let mut own = format!("{}\n", lines.next().unwrap());
    for (i, line) in lines.enumerate() {
        let cells: Vec<&str> = line.split(',').collect();
        own.push_str(&format!(
            "{},Industry {i:02},{}\n",
            cells[0],
            cells[2..].join(",")
        ));
    }
    let original = text.clone();
    fs::write(&path, own).unwrap();
    let out = root.path().join("out");
    run_universe(&dir, &out, &[]);
    let many = parts(&out);
    check_chart(&out);
    // 24 rows a part (chart.rs's ROWS_PER_PART), the peer set's row opening each.
    let industries = table(&out).len();
    assert!(industries > 23, "{industries}");
    assert_eq!(many.len(), industries.div_ceil(23), "{many:?}");
    // The original labels again: one part, and the earlier run's later parts are gone.
    fs::write(&path, original).unwrap();
    run_universe(&dir, &out, &[]);
    assert_eq!(parts(&out), vec!["industries.svg"]);
    // A case run into the same folder takes the universe's chart away with its tables.
    let case = root.path().join("case");
    common::copy_demo_case(&case);
    let ran = hurdle(&[
        "run",
        case.join("case.toml").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(ran.status.success(), "{ran:?}");
    assert!(!out.join("figures/industries.svg").exists());
    assert!(!out.join("industries.csv").exists());
}
