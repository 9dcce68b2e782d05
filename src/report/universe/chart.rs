//! The chart of a universe run, `figures/industries.svg` (with many industries, parts
//! `figures/industries-2.svg`, … on one shared β axis): every industry's unlevered betas at a
//! glance, for a reader who looks before reading the table. Each row draws the median with its
//! distribution-free 95% confidence interval, the interquartile range of the industry's firms
//! and the median levered beta beside it, so the reader sees at once which industry figures are
//! firm, which rest on a wide spread of firms, and how much leverage moves them. Industries run
//! from the highest figure a case would relever down, the listed peer set on top, industries
//! without an unlevered beta last.
//!
//! A median resting on fewer than six betas (no interval) is drawn lighter and one on fewer
//! than four has no band, so a small industry does not look the most precise; the ring is the
//! median levered beta of the industry's estimated securities, the adjusted betas when an
//! adjustment is set (those unlevered; the median may rest on more securities than the
//! unlevered figures, which need a D/E); a
//! value beyond the axis's limits is drawn at its edge with its value; a long label takes two
//! lines and keeps its count; every part opens with the peer set, for comparison.
//!
//! Drawn from the [`UniverseResult`]'s industry rows, the figures `industries.csv` writes;
//! nothing here computes a figure. The drawing parts are the case charts' own
//! ([`crate::report::figures`]).

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::beta::Adjustment;
use crate::error::Result;
use crate::report::figures::axes::{
    extent, interval_layer, plot_layer, reference_line, Axes, Scale,
};
use crate::report::figures::canvas::Canvas;
use crate::report::figures::frame::{triangle, Layout, CHAR_EM};
use crate::report::figures::style::{self, ACCENT, BAND, INK, MUTED, NEUTRAL, PRIMARY, RULE};
use crate::report::format::fixed;
use crate::stats::Aggregation;
use crate::universe::industries::{IndustryResult, Summary};
use crate::universe::UniverseResult;

mod words;
use words::{caption, data_summary, label_lines, legend};

/// The first part's file name, relative to the output folder.
pub const CHART: &str = "figures/industries.svg";
/// Later parts: `figures/industries-2.svg`, ….
const PART_PREFIX: &str = "figures/industries-";

const WIDTH: u32 = 760;
/// Pixels per row: room for a label of two lines.
const ROW: f64 = 34.0;
/// The most rows one part holds: 24 rows of 34 px with the title, legend, axis and caption
/// bands make a chart of about 1,100 px, which prints on a page at the width's scale. A table
/// of more rows is cut into parts of about equal length, each opening with the peer set.
const ROWS_PER_PART: usize = 24;
/// Width of the band of industry labels.
const NAMES: u32 = 300;
/// Fewer drawn betas than this give no interval (`stats::median_interval`): their median is
/// drawn lighter, as less certain.
const INTERVAL_FROM: usize = 6;
/// Fewer drawn betas than this give no quartile band (quartiles of two or three values say
/// little).
const BAND_FROM: usize = 4;
/// The β axis spans the marks but no more than this: an industry far outside (a shell company's
/// beta of the operations at 40, say) would squeeze every other row into a few pixels. A mark
/// beyond is drawn at the edge, with its value.
const AXIS_LIMITS: (f64, f64) = (-1.0, 4.0);

/// One drawn part.
#[derive(Debug, Clone)]
pub struct Chart {
    /// Path relative to the output folder.
    pub file_name: String,
    pub title: String,
    /// The SVG document.
    pub svg: String,
}

/// Whether `name` (relative to the output folder) is a part of this chart as a run names it:
/// `figures/industries.svg`, or `figures/industries-N.svg` for N ≥ 2 written without a leading
/// zero. A run takes away such a file of an earlier run that it does not draw again.
pub fn is_chart_name(name: &str) -> bool {
    if name == CHART {
        return true;
    }
    (name.strip_prefix(PART_PREFIX))
        .and_then(|rest| rest.strip_suffix(".svg"))
        .is_some_and(|n| {
            n.bytes().all(|b| b.is_ascii_digit())
                && !n.starts_with('0')
                && n.parse::<usize>().is_ok_and(|n| n >= 2)
        })
}

/// One row: an industry (or the listed peer set) and its marker line (row units, downward
/// negative).
struct Row<'a> {
    industry: &'a IndustryResult,
    peer_set: bool,
    y: f64,
}

/// What the chart draws of a universe's settings.
#[derive(Clone, Copy)]
pub(super) struct Drawn {
    /// The betas of the operations (cash taken out) rather than the unlevered betas.
    pub(super) operations: bool,
    pub(super) aggregation: Aggregation,
    /// The adjustment applied before unlevering, if any: the ring is then the median of the
    /// adjusted levered betas (those unlevered), over every estimated security of the industry.
    adjustment: Option<&'static str>,
}

impl Drawn {
    pub(super) fn of(result: &UniverseResult) -> Drawn {
        Drawn {
            operations: result.settings.leverage.operations_beta,
            aggregation: result.settings.leverage.aggregation,
            adjustment: match result.settings.beta.adjustment {
                Adjustment::None => None,
                Adjustment::Blume => Some("Blume"),
                Adjustment::Vasicek => Some("Vasicek"),
            },
        }
    }

    fn summary<'a>(&self, industry: &'a IndustryResult) -> Option<&'a Summary> {
        match self.operations {
            true => industry.operations.as_ref(),
            false => industry.unlevered.as_ref(),
        }
    }

    /// How many betas the drawn figures of `industry` rest on.
    fn count(&self, industry: &IndustryResult) -> usize {
        self.summary(industry).map_or(0, |s| s.dispersion.count)
    }

    /// The ring in words, for summary.md's sentence under the table: of the adjusted betas when
    /// an adjustment is set, which the table's raw median is not (found by review: the sentence
    /// called both "the median levered β").
    pub(super) fn ring_words(&self) -> String {
        match self.adjustment {
            None => "the median levered β of its estimated securities (ring)".into(),
            Some(name) => format!(
                "the median of its estimated securities' {name}-adjusted levered betas (ring; \
                 the table's Median β is of the raw estimates)"
            ),
        }
    }

    /// The median levered beta the ring draws: of the adjusted betas when an adjustment is set
    /// (the betas that were unlevered), else of the raw ones.
    fn levered_median(&self, industry: &IndustryResult) -> Option<f64> {
        let levered = match self.adjustment {
            Some(_) => industry.shrunk.as_ref(),
            None => industry.levered.as_ref(),
        };
        levered.map(|l| l.dispersion.median)
    }

    /// The drawn betas in words, plural.
    pub(super) fn betas(&self) -> &'static str {
        match self.operations {
            true => "betas of the operations",
            false => "unlevered betas",
        }
    }

    /// The drawn beta's short name.
    fn short(&self) -> &'static str {
        match self.operations {
            true => "β of the operations",
            false => "βU",
        }
    }

    /// The ring's words.
    fn ring(&self) -> String {
        match self.adjustment {
            Some(name) => format!("median levered β, {name}-adjusted"),
            None => "median levered β".to_string(),
        }
    }

    /// The industries.csv columns of the drawn betas (`median_{stem}`, …).
    fn stem(&self) -> &'static str {
        match self.operations {
            true => "operations_beta",
            false => "unlevered_beta",
        }
    }
}

/// Every part of the chart, or none when the table has no industry (a universe whose
/// securities all lack an industry label).
pub fn draw(result: &UniverseResult) -> Result<Vec<Chart>> {
    if result.industries.is_empty() {
        return Ok(Vec::new());
    }
    let drawn = Drawn::of(result);
    let industries = ordered(result);
    let peer_set = result.peer_set.as_ref().map(|p| &p.figures);
    // The β axis spans every row's marks, within AXIS_LIMITS, so all parts share one scale;
    // 1 (the index) always.
    let rows = industries.iter().copied().chain(peer_set);
    let marks = rows.flat_map(|i| row_values(i, drawn));
    let (low, high) = extent(marks.chain([1.0]));
    let scale = Scale::plain(low.max(AXIS_LIMITS.0), high.min(AXIS_LIMITS.1), 0.05, 8);
    // Parts of about equal length, each opening with the peer set.
    let room = ROWS_PER_PART - usize::from(peer_set.is_some());
    let count = industries.len().div_ceil(room);
    let per_part = industries.len().div_ceil(count);
    (industries.chunks(per_part).enumerate())
        .map(|(k, chunk)| {
            let part: Vec<(&IndustryResult, bool)> = (peer_set.map(|p| (p, true)))
                .into_iter()
                .chain(chunk.iter().map(|&i| (i, false)))
                .collect();
            draw_part(result, &part, (k, count), (scale.clone(), drawn))
        })
        .collect()
}

/// The industries in drawing order: those with a figure to relever from the highest down (ties
/// by label), then those without one, by label.
fn ordered(result: &UniverseResult) -> Vec<&IndustryResult> {
    let figure = |i: &IndustryResult| i.unlevered_beta.unwrap_or(f64::NEG_INFINITY);
    let mut industries: Vec<&IndustryResult> = result.industries.iter().collect();
    industries.sort_by(|a, b| {
        (figure(b).total_cmp(&figure(a))).then_with(|| a.industry.cmp(&b.industry))
    });
    industries
}

/// Every value a row draws (none for a row with no estimate), and its industry figure.
fn row_values(industry: &IndustryResult, drawn: Drawn) -> Vec<f64> {
    let marks = row_marks(industry, drawn);
    let mut values: Vec<f64> = marks.points.iter().map(|(_, v)| *v).collect();
    values.extend(marks.ranges.iter().flat_map(|(_, ends)| *ends));
    values.extend(industry.unlevered_beta);
    values.retain(|v| v.is_finite());
    values
}

/// A row's label in full: the industry (or "Listed peer set") and, in brackets, how many of its
/// securities the drawn betas rest on.
fn row_label(industry: &IndustryResult, peer_set: bool, drawn: Drawn) -> String {
    let name = match peer_set {
        true => "Listed peer set",
        false => industry.industry.as_str(),
    };
    format!(
        "{name} ({} of {})",
        drawn.count(industry),
        industry.securities
    )
}

/// Part `k` of `count`, of the rows `part` (the peer set first when there is one).
fn draw_part(
    result: &UniverseResult,
    part: &[(&IndustryResult, bool)],
    (k, count): (usize, usize),
    (scale, drawn): (Scale, Drawn),
) -> Result<Chart> {
    let (rows, dividers, bottom) = rows(part);
    let axes = Axes {
        x: scale,
        y: Scale::bare(bottom, -0.4),
        x_title: format!(
            "Beta: {}, or levered (the index = 1)",
            match drawn.operations {
                true => "of the operations",
                false => "unlevered",
            }
        ),
        y_title: String::new(),
        left: NAMES,
        bottom: 50,
        y_ticks: false,
    };
    let mut title = match drawn.operations {
        true => "Betas of the operations by industry",
        false => "Unlevered betas by industry",
    }
    .to_string();
    let mut caption = caption(result, drawn);
    if count > 1 {
        title.push_str(&format!(" (part {} of {count})", k + 1));
        caption.push_str(&format!(
            " Part {} of {count}: the rows {}, on the same β axis{}.",
            k + 1,
            match k + 1 == count {
                true => "continue from the part before",
                false => "continue in the next part",
            },
            match result.peer_set.is_some() {
                true => ", the peer set repeated at the top",
                false => "",
            }
        ));
    }
    let legend = legend(&rows, drawn);
    let plot = ((-bottom) * ROW) as u32 + 60;
    let layout = Layout::new(WIDTH, plot, &title, &legend, &caption);
    let file_name = match k {
        0 => CHART.to_string(),
        k => format!("{PART_PREFIX}{}.svg", k + 1),
    };
    let mut canvas = Canvas::new(&file_name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    axes.draw(&mut canvas, &layout)?;
    let labels: Vec<String> = (rows.iter())
        .map(|r| row_label(r.industry, r.peer_set, drawn))
        .collect();
    draw_names(&mut canvas, &layout, &axes, (&rows, &labels), &dividers)?;
    draw_marks(&mut canvas, &layout, &axes, &rows, drawn)?;
    let description = format!("{caption} {}", data_summary(&rows, &labels, drawn));
    let id = match k {
        0 => "industries".to_string(),
        k => format!("industries-{}", k + 1),
    };
    Ok(Chart {
        svg: canvas.finish(&id, &title, &description),
        file_name,
        title,
    })
}

/// A divider above a row: its position and the words under it.
struct Divider {
    y: f64,
    note: &'static str,
}

const HIGHEST_FIRST: &str = "Industries, highest first";
const NO_FIGURE: &str = "No figure to relever (levered median only)";

/// The rows of a part with their positions, the dividers (below the peer set, above the first
/// industry without a figure) and the axis bottom.
fn rows<'a>(part: &[(&'a IndustryResult, bool)]) -> (Vec<Row<'a>>, Vec<Divider>, f64) {
    let mut rows = Vec::with_capacity(part.len());
    let mut dividers = Vec::new();
    let mut y = 0.0;
    // The previous row: whether it was the peer set, and whether it had a figure.
    let mut previous: Option<(bool, bool)> = None;
    for &(industry, peer_set) in part {
        let figure = industry.unlevered_beta.is_some();
        let note = match (previous, peer_set, figure) {
            (_, true, _) => None,
            (Some((true, _)), false, true) => Some(HIGHEST_FIRST),
            (Some((true, _)) | Some((false, true)) | None, false, false) => Some(NO_FIGURE),
            _ => None,
        };
        if let Some(note) = note {
            dividers.push(Divider { y: y - 0.6, note });
            y -= 0.6;
        }
        y -= 1.0;
        rows.push(Row {
            industry,
            peer_set,
            y,
        });
        previous = Some((peer_set, figure));
    }
    (rows, dividers, y - 0.6)
}

/// The industry labels left of the plot, in one or two lines (the whole label is the tooltip
/// of one cut short), and the dividers with their words.
fn draw_names(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    (rows, labels): (&[Row], &[String]),
    dividers: &[Divider],
) -> Result<()> {
    let mut cut: Vec<(String, String)> = Vec::new();
    canvas.layer("y-axis", |root| {
        let (_, plot_area, _) = layout.split(root);
        let chart = axes.chart(&plot_area)?;
        let plain = style::text(style::LABEL, &INK).pos(Pos::new(HPos::Right, VPos::Center));
        let set = style::bold(style::LABEL, &ACCENT).pos(Pos::new(HPos::Right, VPos::Center));
        let (left, _) = chart.backend_coord(&(axes.x.range.start, 0.0));
        let x = left - 12;
        // In units of the average character, less a bold label's extra 4%.
        let width = f64::from(x - style::MARGIN) / (style::LABEL * CHAR_EM) / 1.04;
        for (row, label) in rows.iter().zip(labels) {
            let (_, y) = chart.backend_coord(&(axes.x.range.start, row.y));
            let style = if row.peer_set { &set } else { &plain };
            let (lines, shortened) = label_lines(label, width);
            let first = y - 8 * (lines.len() as i32 - 1);
            for (i, line) in lines.iter().enumerate() {
                root.draw_text(line, style, (x, first + 16 * i as i32))?;
            }
            if shortened {
                cut.push((lines[0].clone(), label.clone()));
            }
        }
        let (right, _) = chart.backend_coord(&(axes.x.range.end, 0.0));
        let note = style::bold(style::SMALL, &MUTED).pos(Pos::new(HPos::Left, VPos::Top));
        for divider in dividers {
            let (_, y) = chart.backend_coord(&(axes.x.range.start, divider.y));
            root.draw(&PathElement::new(
                vec![(style::MARGIN, y), (right, y)],
                RULE.stroke_width(2),
            ))?;
            root.draw_text(divider.note, &note, (left + 6, y + 3))?;
        }
        Ok(())
    })?;
    for (shown, full) in &cut {
        canvas.tooltip(shown, full);
    }
    Ok(())
}

/// `value` kept inside the axis (a mark beyond it is drawn at its edge).
fn inside(axes: &Axes, value: f64) -> f64 {
    value.clamp(axes.x.range.start, axes.x.range.end)
}

/// The reference line at 1 and each row's band, interval and markers; a value beyond the axis
/// at its edge, with the value written beside it.
fn draw_marks(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    rows: &[Row],
    drawn: Drawn,
) -> Result<()> {
    reference_line(canvas, layout, axes, 1.0)?;
    let summaries: Vec<(f64, &Summary)> = (rows.iter())
        .filter_map(|r| drawn.summary(r.industry).map(|s| (r.y, s)))
        .collect();
    plot_layer(canvas, layout, axes, "quartiles", |chart| {
        let banded = summaries
            .iter()
            .filter(|(_, s)| s.dispersion.count >= BAND_FROM);
        chart.draw_series(banded.map(|(y, s)| {
            let d = &s.dispersion;
            Rectangle::new(
                [
                    (inside(axes, d.lower_quartile), y + 0.22),
                    (inside(axes, d.upper_quartile), y - 0.22),
                ],
                BAND.filled(),
            )
        }))?;
        Ok(())
    })?;
    let intervals: Vec<(f64, f64, f64)> = (summaries.iter())
        .filter_map(|(y, s)| {
            let [low, high] = s.median_interval?;
            Some((inside(axes, low), inside(axes, high), *y))
        })
        .collect();
    interval_layer(canvas, layout, axes, &intervals, PRIMARY)?;
    plot_layer(canvas, layout, axes, "levered-median", |chart| {
        let ring = MUTED.stroke_width(2);
        chart.draw_series(rows.iter().filter_map(|r| {
            let median = drawn.levered_median(r.industry)?;
            Some(Circle::new((inside(axes, median), r.y), 6, ring))
        }))?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "median", |chart| {
        chart.draw_series(summaries.iter().map(|(y, s)| {
            let colour = match s.dispersion.count >= INTERVAL_FROM {
                true => PRIMARY,
                false => NEUTRAL,
            };
            Circle::new((inside(axes, s.dispersion.median), *y), 5, colour.filled())
        }))?;
        Ok(())
    })?;
    if drawn.aggregation != Aggregation::Median {
        plot_layer(canvas, layout, axes, "industry-figure", |chart| {
            chart.draw_series(rows.iter().filter_map(|r| {
                let figure = r.industry.unlevered_beta?;
                Some(EmptyElement::at((inside(axes, figure), r.y)) + triangle(INK))
            }))?;
            Ok(())
        })?;
    }
    beyond_the_axis(canvas, layout, axes, rows, drawn)
}

/// A row's marks, for the values written at an edge: each point mark by its symbol (● the
/// median, ○ the levered median, ▲ the industry figure when drawn), each range by its name
/// (the whisker, the band) and ends.
struct RowMarks {
    points: Vec<(&'static str, f64)>,
    ranges: Vec<(&'static str, [f64; 2])>,
}

fn row_marks(industry: &IndustryResult, drawn: Drawn) -> RowMarks {
    let summary = drawn.summary(industry);
    let mut points: Vec<(&'static str, f64)> = Vec::new();
    points.extend(summary.map(|s| ("●", s.dispersion.median)));
    points.extend(drawn.levered_median(industry).map(|m| ("○", m)));
    if drawn.aggregation != Aggregation::Median {
        points.extend(industry.unlevered_beta.map(|f| ("▲", f)));
    }
    let mut ranges = Vec::new();
    if let Some(s) = summary {
        ranges.extend(s.median_interval.map(|i| ("whisker", i)));
        if s.dispersion.count >= BAND_FROM {
            let d = &s.dispersion;
            ranges.push(("band", [d.lower_quartile, d.upper_quartile]));
        }
    }
    RowMarks { points, ranges }
}

/// What an edge writes of a row's marks beyond it (`past` says whether a value lies beyond;
/// `left` picks the edge): each point mark's symbol and value, then each range's name and its
/// end beyond the edge; `None` when no mark lies beyond (found by review: only the farthest
/// value was written, beside marks it did not belong to).
fn edge_text(marks: &RowMarks, past: impl Fn(f64) -> bool, left: bool) -> Option<String> {
    let shown = |v: f64| fixed(v, 2).replace('-', "\u{2212}");
    let mut items: Vec<String> = (marks.points.iter())
        .filter(|(_, v)| v.is_finite() && past(*v))
        .map(|(symbol, v)| format!("{symbol} {}", shown(*v)))
        .collect();
    items.extend(marks.ranges.iter().filter_map(|(name, [low, high])| {
        let end = if left { *low } else { *high };
        (end.is_finite() && past(end)).then(|| format!("{name} {}", shown(end)))
    }));
    match (items.is_empty(), left) {
        (true, _) => None,
        (false, true) => Some(format!("◂ {}", items.join(" · "))),
        (false, false) => Some(format!("{} ▸", items.join(" · "))),
    }
}

/// Each row's marks that lie beyond the axis, written at its edge with their values
/// ([`edge_text`]).
fn beyond_the_axis(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    rows: &[Row],
    drawn: Drawn,
) -> Result<()> {
    let (start, end) = (axes.x.range.start, axes.x.range.end);
    let outside: Vec<(f64, Option<String>, Option<String>)> = (rows.iter())
        .map(|r| {
            let marks = row_marks(r.industry, drawn);
            let low = edge_text(&marks, |v| v < start, true);
            let high = edge_text(&marks, |v| v > end, false);
            (r.y, low, high)
        })
        .filter(|(_, low, high)| low.is_some() || high.is_some())
        .collect();
    if outside.is_empty() {
        return Ok(());
    }
    plot_layer(canvas, layout, axes, "beyond-axis", |chart| {
        let left = style::text(style::SMALL, &INK).pos(Pos::new(HPos::Left, VPos::Bottom));
        let right = style::text(style::SMALL, &INK).pos(Pos::new(HPos::Right, VPos::Bottom));
        for (y, low, high) in &outside {
            if let Some(text) = low {
                let text = text.clone();
                chart.draw_series(std::iter::once(Text::new(text, (start, y + 0.45), &left)))?;
            }
            if let Some(text) = high {
                let text = text.clone();
                chart.draw_series(std::iter::once(Text::new(text, (end, y + 0.45), &right)))?;
            }
        }
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // By hand, the chart's own rule on a row whose median (−1.269) and interval's low end
    // (−3.010) both lie left of an axis starting at −1: each is written with its own symbol or
    // name, the ring (−0.5, inside) is not, nothing is written at the right edge.
    #[test]
    fn each_mark_beyond_an_edge_is_written_with_its_value() {
        let marks = RowMarks {
            points: vec![("●", -1.269), ("○", -0.5), ("▲", -1.269)],
            ranges: vec![("whisker", [-3.010, 0.2]), ("band", [-1.8, -0.9])],
        };
        assert_eq!(
            edge_text(&marks, |v| v < -1.0, true).as_deref(),
            Some("◂ ● \u{2212}1.27 · ▲ \u{2212}1.27 · whisker \u{2212}3.01 · band \u{2212}1.80")
        );
        assert_eq!(edge_text(&marks, |v| v > 4.0, false), None);
        let high = RowMarks {
            points: vec![("●", 6.265), ("○", 7.071)],
            ranges: vec![],
        };
        assert_eq!(
            edge_text(&high, |v| v > 4.0, false).as_deref(),
            Some("● 6.27 · ○ 7.07 ▸")
        );
    }

    #[test]
    fn chart_names_are_the_parts_a_run_writes() {
        assert!(is_chart_name("figures/industries.svg"));
        assert!(is_chart_name("figures/industries-2.svg"));
        assert!(is_chart_name("figures/industries-12.svg"));
        for other in [
            "figures/industries-1.svg",
            "figures/industries-02.svg",
            "figures/industries-x.svg",
            "figures/industries-2.png",
            "figures/betas.svg",
            "industries.svg",
        ] {
            assert!(!is_chart_name(other), "{other}");
        }
    }
}
