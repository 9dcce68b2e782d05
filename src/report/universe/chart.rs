//! The chart of a universe run, `figures/industries.svg` (with many industries, parts
//! `figures/industries-2.svg`, … on one shared β axis): every industry's unlevered betas at a
//! glance, for a reader who looks before reading the table. Each row draws the median with its
//! distribution-free 95% confidence interval, the interquartile range of the industry's firms
//! and the median levered beta beside it, so the reader sees at once which industry figures are
//! firm, which rest on a wide spread of firms, and how much leverage moves them. Industries run
//! from the highest figure a case would relever down, the listed peer set on top, industries
//! without an unlevered beta last.
//!
//! Drawn from the [`UniverseResult`]'s industry rows, the figures `industries.csv` writes;
//! nothing here computes a figure. The drawing parts are the case charts' own
//! ([`crate::report::figures`]).

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::error::Result;
use crate::report::figures::axes::{extent, plot_layer, Axes, Scale};
use crate::report::figures::canvas::{distinct_middle, Canvas};
use crate::report::figures::frame::{fit, triangle, Layout, Mark};
use crate::report::figures::style::{self, ACCENT, BAND, INK, MUTED, NEUTRAL, PRIMARY, RULE};
use crate::report::format::{fixed, label};
use crate::stats::Aggregation;
use crate::universe::industries::{IndustryResult, Summary};
use crate::universe::UniverseResult;

/// The first part's file name, relative to the output folder.
pub const CHART: &str = "figures/industries.svg";
/// Later parts: `figures/industries-2.svg`, ….
const PART_PREFIX: &str = "figures/industries-";

const WIDTH: u32 = 760;
/// Pixels per row.
const ROW: f64 = 30.0;
/// The most rows one part holds: 24 rows of 30 px with the title, legend, axis and caption
/// bands make a chart of about 1,000 px, which prints on a page at the width's scale.
const ROWS_PER_PART: usize = 24;
/// Width of the band of industry labels.
const NAMES: u32 = 240;

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
struct Drawn {
    /// The betas of the operations (cash taken out) rather than the unlevered betas.
    operations: bool,
    aggregation: Aggregation,
}

impl Drawn {
    fn summary<'a>(&self, industry: &'a IndustryResult) -> Option<&'a Summary> {
        match self.operations {
            true => industry.operations.as_ref(),
            false => industry.unlevered.as_ref(),
        }
    }

    /// The drawn betas in words, plural.
    fn betas(&self) -> &'static str {
        match self.operations {
            true => "betas of the operations",
            false => "unlevered betas",
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

/// Every part of the chart, or none when no row of the industry table has a label to draw
/// (a universe whose securities all lack an industry).
pub fn draw(result: &UniverseResult) -> Result<Vec<Chart>> {
    let drawn = Drawn {
        operations: result.settings.leverage.operations_beta,
        aggregation: result.settings.leverage.aggregation,
    };
    let order = ordered(result);
    if order.is_empty() {
        return Ok(Vec::new());
    }
    // The β axis spans every row's marks, so all parts share one scale; 1 (the index) always.
    let marks = order.iter().flat_map(|(i, _)| row_values(i, drawn));
    let (low, high) = extent(marks.chain([1.0]));
    let scale = Scale::plain(low, high, 0.05, 8);
    let labels: Vec<String> = order.iter().map(|(i, p)| row_label(i, *p, drawn)).collect();
    let parts: Vec<&[(&IndustryResult, bool)]> = order.chunks(ROWS_PER_PART).collect();
    let count = parts.len();
    let all: Vec<&str> = labels.iter().map(String::as_str).collect();
    (parts.iter().enumerate())
        .map(|(k, part)| {
            let first = k * ROWS_PER_PART;
            draw_part(
                result,
                (part, first, &all),
                (k, count),
                (scale.clone(), drawn),
            )
        })
        .collect()
}

/// The rows in drawing order, each with whether it is the peer set: the peer set, then the
/// industries with a figure to relever from the highest down (ties by label), then those
/// without one, by label.
fn ordered(result: &UniverseResult) -> Vec<(&IndustryResult, bool)> {
    let mut with: Vec<&IndustryResult> = (result.industries.iter())
        .filter(|i| i.unlevered_beta.is_some())
        .collect();
    with.sort_by(|a, b| {
        let figure = |i: &IndustryResult| i.unlevered_beta.unwrap_or(f64::NEG_INFINITY);
        figure(b)
            .total_cmp(&figure(a))
            .then_with(|| a.industry.cmp(&b.industry))
    });
    let without = (result.industries.iter()).filter(|i| i.unlevered_beta.is_none());
    (result.peer_set.iter().map(|p| (&p.figures, true)))
        .chain(with.into_iter().map(|i| (i, false)))
        .chain(without.map(|i| (i, false)))
        .collect()
}

/// Every value a row draws (none for a row with no estimate).
fn row_values(industry: &IndustryResult, drawn: Drawn) -> Vec<f64> {
    let mut values = Vec::new();
    if let Some(s) = drawn.summary(industry) {
        let d = &s.dispersion;
        values.extend([d.lower_quartile, d.median, d.upper_quartile]);
        values.extend(s.median_interval.iter().flatten());
    }
    values.extend(industry.unlevered_beta);
    values.extend(industry.levered.as_ref().map(|l| l.dispersion.median));
    values.retain(|v| v.is_finite());
    values
}

/// A row's label in full: the industry (or "peer set") and, in brackets, how many securities
/// its drawn betas rest on.
fn row_label(industry: &IndustryResult, peer_set: bool, drawn: Drawn) -> String {
    let count = drawn.summary(industry).map_or(0, |s| s.dispersion.count);
    match peer_set {
        true => format!("Listed peer set ({count})"),
        false => format!("{} ({count})", industry.industry),
    }
}

/// Part `k` of `count`: its rows, the first of them the chart's row `first`, among all the
/// chart's labels.
fn draw_part(
    result: &UniverseResult,
    (part, first, all): (&[(&IndustryResult, bool)], usize, &[&str]),
    (k, count): (usize, usize),
    (scale, drawn): (Scale, Drawn),
) -> Result<Chart> {
    let (rows, dividers, bottom) = rows(part);
    let axes = Axes {
        x: scale,
        y: Scale::bare(bottom, -0.4),
        x_title: format!(
            "Beta, {} or levered (the index = 1)",
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
            " Part {} of {count}: the rows {}, on the same β axis.",
            k + 1,
            match k + 1 == count {
                true => "continue from the part before",
                false => "continue in the next part",
            }
        ));
    }
    let legend = legend(drawn);
    let plot = ((-bottom) * ROW) as u32 + 60;
    let layout = Layout::new(WIDTH, plot, &title, &legend, &caption);
    let file_name = match k {
        0 => CHART.to_string(),
        k => format!("{PART_PREFIX}{}.svg", k + 1),
    };
    let mut canvas = Canvas::new(&file_name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    axes.draw(&mut canvas, &layout)?;
    let names = &all[first..first + part.len()];
    draw_names(&mut canvas, &layout, &axes, (&rows, first, all), &dividers)?;
    draw_marks(&mut canvas, &layout, &axes, &rows, drawn)?;
    let description = format!("{caption} {}", data_summary(&rows, names, drawn));
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

/// The rows of a part with their positions, the dividers (below the peer set; above the first
/// industry without a figure) and the axis bottom.
fn rows<'a>(part: &[(&'a IndustryResult, bool)]) -> (Vec<Row<'a>>, Vec<Divider>, f64) {
    let mut rows = Vec::with_capacity(part.len());
    let mut dividers = Vec::new();
    let mut y = 0.0;
    let mut previous: Option<(bool, bool)> = None;
    for &(industry, peer_set) in part {
        let figure = industry.unlevered_beta.is_some();
        let note = match previous {
            Some((true, _)) => Some("Industries, highest first"),
            Some((false, true)) if !figure => Some("No figure to relever (levered median only)"),
            None if !peer_set && !figure => Some("No figure to relever (levered median only)"),
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

/// The legend: the band, the interval, the two medians and, when the industry figure is not
/// the median, its marker.
fn legend(drawn: Drawn) -> Vec<(Mark, String)> {
    let short = match drawn.operations {
        true => "β of the operations",
        false => "βU",
    };
    let mut items = vec![
        (Mark::Swatch(BAND), format!("{short}, interquartile range")),
        (Mark::Interval(PRIMARY), "median's 95% CI".to_string()),
        (Mark::Dot(PRIMARY), format!("median {short}")),
        (Mark::Ring(MUTED), "median levered β".to_string()),
    ];
    if drawn.aggregation != Aggregation::Median {
        items.push((
            Mark::Triangle(INK),
            format!("{} {short}, relevered by a case", drawn.aggregation.noun()),
        ));
    }
    items
}

/// The industry labels left of the plot, shortened to the band (the whole label is the
/// tooltip), and the dividers with their words.
fn draw_names(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    (rows, first, all): (&[Row], usize, &[&str]),
    dividers: &[Divider],
) -> Result<()> {
    let mut labels: Vec<(String, String)> = Vec::new();
    canvas.layer("y-axis", |root| {
        let (_, plot_area, _) = layout.split(root);
        let chart = axes.chart(&plot_area)?;
        let plain = style::text(style::LABEL, &INK).pos(Pos::new(HPos::Right, VPos::Center));
        let set = style::bold(style::LABEL, &ACCENT).pos(Pos::new(HPos::Right, VPos::Center));
        let (left, _) = chart.backend_coord(&(axes.x.range.start, 0.0));
        let x = left - 12;
        // Shortened among every row's label, so two never read alike in any part.
        let width = fit(f64::from(x - style::MARGIN), style::LABEL);
        let shown = distinct_middle(all, width);
        for (i, row) in rows.iter().enumerate() {
            let (_, y) = chart.backend_coord(&(axes.x.range.start, row.y));
            let text = &shown[first + i];
            let style = if row.peer_set { &set } else { &plain };
            root.draw_text(text, style, (x, y))?;
            labels.push((text.clone(), all[first + i].to_string()));
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
    for (shown, full) in &labels {
        canvas.tooltip(shown, full);
    }
    Ok(())
}

/// The reference line at 1 and each row's band, interval and markers.
fn draw_marks(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    rows: &[Row],
    drawn: Drawn,
) -> Result<()> {
    let (top, last) = (axes.y.range.end, axes.y.range.start);
    plot_layer(canvas, layout, axes, "reference", |chart| {
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(1.0, last), (1.0, top)],
            NEUTRAL.stroke_width(1),
        )))?;
        Ok(())
    })?;
    let summaries: Vec<(f64, &Summary)> = (rows.iter())
        .filter_map(|r| drawn.summary(r.industry).map(|s| (r.y, s)))
        .collect();
    plot_layer(canvas, layout, axes, "quartiles", |chart| {
        chart.draw_series(summaries.iter().map(|(y, s)| {
            let d = &s.dispersion;
            Rectangle::new(
                [(d.lower_quartile, y + 0.22), (d.upper_quartile, y - 0.22)],
                BAND.filled(),
            )
        }))?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "intervals", |chart| {
        let stroke = PRIMARY.stroke_width(2);
        for (y, s) in &summaries {
            let Some([low, high]) = s.median_interval else {
                continue;
            };
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(low, *y), (high, *y)],
                stroke,
            )))?;
            let cap = |x: f64| {
                EmptyElement::at((x, *y)) + PathElement::new(vec![(0, -5), (0, 5)], stroke)
            };
            chart.draw_series([cap(low), cap(high)])?;
        }
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "levered-median", |chart| {
        let ring = MUTED.stroke_width(2);
        chart.draw_series(rows.iter().filter_map(|r| {
            let median = r.industry.levered.as_ref()?.dispersion.median;
            Some(Circle::new((median, r.y), 6, ring))
        }))?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "median", |chart| {
        let dot = PRIMARY.filled();
        chart.draw_series(
            (summaries.iter()).map(|(y, s)| Circle::new((s.dispersion.median, *y), 5, dot)),
        )?;
        Ok(())
    })?;
    if drawn.aggregation != Aggregation::Median {
        plot_layer(canvas, layout, axes, "industry-figure", |chart| {
            chart.draw_series(rows.iter().filter_map(|r| {
                let figure = r.industry.unlevered_beta?;
                Some(EmptyElement::at((figure, r.y)) + triangle(INK))
            }))?;
            Ok(())
        })?;
    }
    Ok(())
}

/// The chart's caption: what each mark is and which columns of `industries.csv` it draws.
fn caption(result: &UniverseResult, drawn: Drawn) -> String {
    let betas = drawn.betas();
    let stem = drawn.stem();
    let figure = match drawn.aggregation {
        Aggregation::Median => "the median, the figure a case would relever".to_string(),
        other => format!(
            "the {} (triangle), the figure a case would relever",
            other.noun()
        ),
    };
    format!(
        "For each industry, the median of its securities' {betas} (dot) with the median's \
         distribution-free 95% confidence interval (whisker; none under six securities), the \
         interquartile range of those betas (band) and the median levered β (ring); in \
         brackets, how many securities the {betas} rest on. Unlevered by {}; the industry \
         figure is {figure}, and the rows run from the highest figure down{}. The grey line \
         marks β = 1, the index. Figures: industries.csv (median_{stem}, median_{stem}_ci_low, \
         median_{stem}_ci_high, lower_quartile_{stem}, upper_quartile_{stem}, {stem}_count, \
         median_beta, unlevered_beta{}).",
        result.formula_source,
        match result.peer_set.is_some() {
            true => ", after the listed peer set (its figures by the same rules; summary.md)",
            false => "",
        },
        match drawn.aggregation {
            Aggregation::Median => String::new(),
            other => format!("; {} of leverage.aggregation", label(&other)),
        }
    )
}

/// Every drawn row in words, for the SVG's description (a screen reader's table).
fn data_summary(rows: &[Row], names: &[&str], drawn: Drawn) -> String {
    (rows.iter().zip(names))
        .map(|(r, name)| {
            let levered = (r.industry.levered.as_ref())
                .map_or("none".to_string(), |l| fixed(l.dispersion.median, 3));
            let Some(s) = drawn.summary(r.industry) else {
                return format!("{name}: no {}; median levered β {levered}.", drawn.betas());
            };
            let d = &s.dispersion;
            let interval = s.median_interval.map_or(String::new(), |[low, high]| {
                format!(" (95% CI {} to {})", fixed(low, 3), fixed(high, 3))
            });
            let figure = r
                .industry
                .unlevered_beta
                .map_or("none".to_string(), |v| fixed(v, 3));
            format!(
                "{name}: median {}{interval}, quartiles {} to {}, median levered β {levered}, \
                 industry figure {figure}.",
                fixed(d.median, 3),
                fixed(d.lower_quartile, 3),
                fixed(d.upper_quartile, 3),
            )
        })
        .collect::<Vec<_>>()
        .join(" ")
}

#[cfg(test)]
mod tests {
    use super::*;

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
