//! Chart 2: every peer's beta side by side — the raw estimate with its 95% confidence interval,
//! the beta used after adjustment and the unlevered beta — with the aggregate as a line and the
//! excluded peers set apart below a divider, each with its reason.
//!
//! One row per peer in the case's order; a reader sees at a glance how far the intervals
//! overlap, how much the adjustment and unlevering move each beta, and where the aggregate sits.

use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes::{interval_layer, plot_layer, reference_line, Axes, Scale};
use super::canvas::{distinct_middle, shorten, shorten_middle, wrap, Canvas};
use super::frame::{fit, square, triangle, Layout, Mark};
use super::style::{self, ACCENT, INK, MUTED, PRIMARY, RULE};
use super::{Figure, Kind};
use crate::case::Adjustment;
use crate::error::Result;
use crate::report::format::fixed;
use crate::valuation::{PeerResult, Valuation};

const WIDTH: u32 = 720;
/// Pixels per row unit.
const ROW: f64 = 40.0;
/// Row units of an excluded peer (its reason takes a second line).
const EXCLUDED_ROW: f64 = 1.5;
/// The least and the most width of the band of peer names: it widens with the longest name
/// between them (found by review: at 210 pixels, ordinary names of 24 characters were cut
/// while the plot had room to spare; the bridge chart's label band does the same).
const NAMES: (u32, u32) = (210, 330);

/// The band of peer names for `names` (every peer's, so all parts share it): the longest
/// name's estimated width (frame.rs) with the gap to the plot and the margin, within
/// [`NAMES`].
fn names_band(names: &[&str]) -> u32 {
    let longest = names.iter().map(|n| n.chars().count()).max().unwrap_or(0);
    let text = (longest as f64 * style::LABEL * super::frame::CHAR_EM).ceil() as u32;
    (text + 12 + style::MARGIN as u32).clamp(NAMES.0, NAMES.1)
}
/// The most row units (a peer 1, an excluded one [`EXCLUDED_ROW`], the divider half a unit) one
/// chart holds: a longer list goes on in `betas-2.svg`, … so each part prints on a page at a
/// legible size (the print styles cap a chart at 240 mm: with the title, legend, axis and caption
/// bands, about 15 rows of 40 px make a chart of some 900 px, 720 wide, which fills the page
/// width at that height).
const ROWS_PER_PART: f64 = 15.0;
/// The most lines an exclusion reason takes under the peer's name (a row and a half holds three
/// lines of small text).
const REASON_LINES: usize = 3;

/// One peer's row: its position on the y axis (row units, downward negative).
struct Row<'a> {
    peer: &'a PeerResult,
    y: f64,
}

/// The peers' betas chart: one figure, or with many peers several parts (`betas.svg`,
/// `betas-2.svg`, …) of consecutive rows on one shared β axis.
pub fn draw(valuation: &Valuation) -> Result<Vec<Figure>> {
    let parts = parts(&valuation.peers);
    let count = parts.len();
    (0..count)
        .map(|k| draw_part(valuation, &parts[k], (k, count), &left_out_words(&parts, k)))
        .collect()
}

/// What part `k`'s caption says of the peers left out of the aggregate: those below its divider
/// when it draws one, else the parts that hold them (a large set's first parts hold included
/// peers only, and no divider); nothing when no peer is left out.
fn left_out_words(parts: &[Vec<&PeerResult>], k: usize) -> String {
    let left_out = |part: &Vec<&PeerResult>| part.iter().any(|p| p.excluded_reason.is_some());
    if left_out(&parts[k]) {
        return "Peers below the divider are estimated and shown but left out of the aggregate, \
                for the reason given. "
            .to_string();
    }
    let holding: Vec<usize> = (0..parts.len()).filter(|&j| left_out(&parts[j])).collect();
    let count: usize = (parts.iter().flatten())
        .filter(|p| p.excluded_reason.is_some())
        .count();
    let (peers, are) = if count == 1 {
        ("peer", "is")
    } else {
        ("peers", "are")
    };
    let lead = format!("The {count} {peers} left out of the aggregate {are} drawn in");
    match holding.as_slice() {
        [] => String::new(),
        [one] => format!(
            "{lead} part {}, below a divider, with the reason. ",
            one + 1
        ),
        [first, .., last] => format!(
            "{lead} parts {} to {}, below a divider, with the reasons. ",
            first + 1,
            last + 1
        ),
    }
}

/// The peers in row order (included in case order, then the excluded), cut into parts of at
/// most [`ROWS_PER_PART`] row units.
fn parts(peers: &[PeerResult]) -> Vec<Vec<&PeerResult>> {
    let order = (peers.iter().filter(|p| p.excluded_reason.is_none()))
        .chain(peers.iter().filter(|p| p.excluded_reason.is_some()));
    let mut parts: Vec<Vec<&PeerResult>> = vec![Vec::new()];
    let mut used = 0.0;
    for peer in order {
        let units = |part: &[&PeerResult]| match peer.excluded_reason {
            None => 1.0,
            // The first excluded row of a part comes under the divider.
            Some(_) if part.iter().all(|p| p.excluded_reason.is_none()) => EXCLUDED_ROW + 0.5,
            Some(_) => EXCLUDED_ROW,
        };
        let last = parts.last().expect("one part at least");
        if !last.is_empty() && used + units(last) > ROWS_PER_PART {
            parts.push(Vec::new());
            used = 0.0;
        }
        let last = parts.last_mut().expect("one part at least");
        used += units(last);
        last.push(peer);
    }
    parts
}

/// The file name of part `k` (from 0): `betas.svg`, then `betas-2.svg`, ….
pub fn part_name(k: usize) -> String {
    match k {
        0 => super::BETAS.to_string(),
        k => format!("{}{}.svg", super::BETAS_PART_PREFIX, k + 1),
    }
}

/// Part `k` of `count` of the chart, with the rows of `peers`.
fn draw_part(
    valuation: &Valuation,
    peers: &[&PeerResult],
    (k, count): (usize, usize),
    left_out: &str,
) -> Result<Figure> {
    let all: Vec<&str> = valuation.peers.iter().map(|p| p.name.as_str()).collect();
    let (rows, divider, bottom) = rows(peers);
    let cash = valuation.cost.beta.uses_operations_beta;
    // The β axis spans every peer's marks, so all parts share one scale.
    let values = valuation.peers.iter().flat_map(|p| {
        [
            p.estimate.beta_ci_low,
            p.estimate.beta_ci_high,
            p.beta_used,
            unlevered(p, cash),
        ]
    });
    let (low, high) = values.fold((1.0_f64, 1.0_f64), |(lo, hi), v| (lo.min(v), hi.max(v)));
    let aggregate = valuation.cost.beta.unlevered;
    let axes = Axes {
        x: Scale::plain(low.min(aggregate), high.max(aggregate), 0.05, 8),
        y: Scale::bare(bottom, -0.35),
        x_title: x_title(cash),
        y_title: String::new(),
        left: names_band(&all),
        bottom: 50,
        y_ticks: false,
    };
    let mut title = "Peer betas with their 95% confidence intervals".to_string();
    // A part of peers all left out draws no aggregate line (`marks`), so its key goes too.
    let line_here = peers.iter().any(|p| p.excluded_reason.is_none());
    let mut caption = caption(valuation, line_here, left_out);
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
    let plot = ((-bottom) * ROW) as u32 + 60;
    let mut legend = legend(valuation, cash, aggregate);
    if !line_here {
        legend.retain(|(mark, _)| !matches!(mark, Mark::Dashed(_)));
    }
    let layout = Layout::new(WIDTH, plot, &title, &legend, &caption);
    let name = part_name(k);
    let mut canvas = Canvas::new(&name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    axes.draw(&mut canvas, &layout)?;
    names(&mut canvas, &layout, &axes, (&rows, &all), divider)?;
    marks(
        &mut canvas,
        &layout,
        &axes,
        &rows,
        divider,
        (aggregate, cash),
    )?;
    let description = format!(
        "{caption} {}",
        data_summary(&rows, |p| unlevered(p, cash), cash)
    );
    let id = match k {
        0 => "betas".to_string(),
        k => format!("betas-{}", k + 1),
    };
    Ok(Figure {
        kind: Kind::Betas,
        svg: canvas.finish(&id, &title, &description),
        file_name: name,
        title,
        caption,
        peer: None,
    })
}

/// The β axis's title, naming the betas of the operations when they are drawn (found by review:
/// under them the title still said "unlevered").
fn x_title(operations: bool) -> String {
    match operations {
        true => "Beta, equity or of the operations (the index = 1)",
        false => "Beta, equity or unlevered (the index = 1)",
    }
    .to_string()
}

/// The chart's legend: the three marks and the aggregate's line, with its statistic and value.
fn legend(valuation: &Valuation, cash: bool, aggregate: f64) -> Vec<(Mark, String)> {
    let summary = &valuation.cost.beta;
    vec![
        (Mark::Interval(PRIMARY), "raw β, 95% CI".to_string()),
        (
            Mark::Triangle(INK),
            format!("β used ({})", used_label(valuation)),
        ),
        (
            Mark::Square(ACCENT),
            if cash {
                "β of the operations (cash at β 0)"
            } else {
                "unlevered β"
            }
            .to_string(),
        ),
        (
            Mark::Dashed(ACCENT),
            format!(
                "{} {} of the peers included, {}",
                summary.aggregation.noun(),
                if cash {
                    "β of the operations"
                } else {
                    "unlevered β"
                },
                fixed(aggregate, 3)
            ),
        ),
    ]
}

/// The peers' names (and reasons for the excluded) left of the plot, and the divider.
fn names(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    (rows, all): (&[Row], &[&str]),
    divider: Option<f64>,
) -> Result<()> {
    // Each label drawn shorter than its text, with the whole text, for its tooltip.
    let mut labels: Vec<(String, String)> = Vec::new();
    let apart = std::cell::OnceCell::new();
    canvas.layer("y-axis", |root| {
        let (_, plot_area, _) = layout.split(root);
        let chart = axes.chart(&plot_area)?;
        let name_style = style::text(style::LABEL, &INK).pos(Pos::new(HPos::Right, VPos::Center));
        let reason_style = style::text(style::SMALL, &MUTED).pos(Pos::new(HPos::Right, VPos::Top));
        for row in rows {
            let (left, y) = chart.backend_coord(&(axes.x.range.start, row.y));
            let x = left - 12;
            // The band left of the plot, by the estimated advance of the characters (frame.rs).
            let room = f64::from(x - style::MARGIN);
            // Shortened among every peer's name, so two never read alike (in any part); every
            // row has the same room, so the labels are told apart once.
            let width = fit(room, style::LABEL);
            let drawn = apart.get_or_init(|| distinct_middle(all, width));
            let name = match all.iter().position(|n| *n == row.peer.name) {
                Some(place) => drawn[place].clone(),
                None => shorten_middle(&row.peer.name, width),
            };
            root.draw_text(&name, &name_style, (x, y))?;
            labels.push((name, row.peer.name.clone()));
            if let Some(reason) = &row.peer.excluded_reason {
                let lines = reason_lines(reason, fit(room, style::SMALL));
                for (i, line) in lines.iter().enumerate() {
                    root.draw_text(line, &reason_style, (x, y + 10 + 13 * i as i32))?;
                }
                if let Some(first) = lines.first() {
                    labels.push((first.clone(), reason.clone()));
                }
            }
        }
        if let Some(divider) = divider {
            let (left, y) = chart.backend_coord(&(axes.x.range.start, divider));
            let (right, _) = chart.backend_coord(&(axes.x.range.end, divider));
            root.draw(&PathElement::new(
                vec![(style::MARGIN, y), (right, y)],
                RULE.stroke_width(2),
            ))?;
            let note = style::bold(style::SMALL, &MUTED).pos(Pos::new(HPos::Left, VPos::Top));
            root.draw_text("Left out of the aggregate", &note, (left + 6, y + 4))?;
        }
        Ok(())
    })?;
    for (shown, full) in &labels {
        canvas.tooltip(shown, full);
    }
    Ok(())
}

/// The lines of an exclusion reason under the name, at most [`REASON_LINES`] of `width`
/// characters; the library's wording of a flag rule ("flag-based rule beta.exclude_flags:
/// too_few_observations") is written "flag: too_few_observations", since the flags are what
/// the lines are for (the whole reason is their tooltip and in the description).
fn reason_lines(reason: &str, width: usize) -> Vec<String> {
    let text = match reason.strip_prefix("flag-based rule beta.exclude_flags: ") {
        Some(flags) => format!("flag: {flags}"),
        None => reason.to_string(),
    };
    let mut lines = wrap(&text, width);
    if lines.len() > REASON_LINES {
        let rest = lines[REASON_LINES - 1..].join(" ");
        lines.truncate(REASON_LINES - 1);
        lines.push(shorten(&rest, width));
    }
    // A word longer than the line is cut too.
    lines.iter().map(|line| shorten(line, width)).collect()
}

/// The reference line at 1, the aggregate line, and each row's interval and markers.
fn marks(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    rows: &[Row],
    divider: Option<f64>,
    (aggregate, cash): (f64, bool),
) -> Result<()> {
    let (top, last) = (axes.y.range.end, axes.y.range.start);
    reference_line(canvas, layout, axes, 1.0)?;
    // The aggregate's line runs beside the peers it aggregates: none in a part that holds only
    // peers left out of it (a large set's last part).
    if rows.iter().any(|r| r.peer.excluded_reason.is_none()) {
        plot_layer(canvas, layout, axes, "aggregate", |chart| {
            let end = divider.unwrap_or(last);
            chart.draw_series(std::iter::once(DashedPathElement::new(
                vec![(aggregate, end), (aggregate, top)],
                6,
                4,
                ACCENT.stroke_width(2),
            )))?;
            Ok(())
        })?;
    }
    let intervals: Vec<(f64, f64, f64)> = (rows.iter())
        .map(|r| {
            (
                r.peer.estimate.beta_ci_low,
                r.peer.estimate.beta_ci_high,
                r.y,
            )
        })
        .collect();
    interval_layer(canvas, layout, axes, &intervals, PRIMARY)?;
    plot_layer(canvas, layout, axes, "raw-beta", |chart| {
        let dot = PRIMARY.filled();
        chart.draw_series(
            rows.iter()
                .map(|r| Circle::new((r.peer.estimate.beta, r.y), 5, dot)),
        )?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "beta-used", |chart| {
        chart.draw_series(
            rows.iter()
                .map(|r| EmptyElement::at((r.peer.beta_used, r.y)) + triangle(INK)),
        )?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "unlevered-beta", |chart| {
        chart.draw_series(
            rows.iter()
                .map(|r| EmptyElement::at((unlevered(r.peer, cash), r.y)) + square(ACCENT)),
        )?;
        Ok(())
    })?;
    Ok(())
}

/// The beta the case aggregates: of the operations (cash taken out) or unlevered.
fn unlevered(peer: &PeerResult, cash: bool) -> f64 {
    if cash {
        peer.operations_beta
    } else {
        peer.unlevered_beta
    }
}

/// The rows of `peers` (given in row order: included, then excluded), with the divider's
/// position (above the first excluded peer, if any) and the axis bottom.
fn rows<'a>(peers: &[&'a PeerResult]) -> (Vec<Row<'a>>, Option<f64>, f64) {
    let mut rows = Vec::with_capacity(peers.len());
    // `y` is the marker line of the last row placed; a row's slot is ±0.5 around it.
    let mut y = 0.0;
    let mut divider = None;
    let mut reason_below = 0.0;
    for &peer in peers {
        if peer.excluded_reason.is_some() && divider.is_none() {
            divider = Some(y - 0.75);
            y -= 0.5;
        }
        y -= 1.0;
        rows.push(Row { peer, y });
        reason_below = 0.0;
        if peer.excluded_reason.is_some() {
            // Room below the name for the reason.
            y -= EXCLUDED_ROW - 1.0;
            reason_below = 0.35;
        }
    }
    // The last row's reason, three lines of small text (47 px, 1.2 units), needs more room
    // above the axis than a row's half unit: only when the last row is an excluded peer.
    (rows, divider, y - 0.6 - reason_below)
}

fn used_label(valuation: &Valuation) -> &'static str {
    match valuation.settings.beta.adjustment {
        Adjustment::Blume => "shrunk, Blume",
        Adjustment::Vasicek => "shrunk, Vasicek",
        Adjustment::None => "raw, no shrinkage",
    }
}

/// The chart's caption; `line_here` is false for a part that holds only peers left out of the
/// aggregate, which does not draw its line; `left_out` says where the peers left out are drawn
/// ([`left_out_words`]).
fn caption(valuation: &Valuation, line_here: bool, left_out: &str) -> String {
    let summary = &valuation.cost.beta;
    format!(
        "For each peer: the raw β (dot) with its 95% confidence interval ({} standard errors, \
         Student t), the β used ({}; triangle) and {} (square). {} the {} \
         of the {} included {}, {} = {}, relevered to {} at the \
         target D/E of {}. {}The grey line marks β = 1, the index. Figures: result.json peers[] \
         (beta, beta_ci_low, beta_ci_high, beta_used, {}) and beta.unlevered.",
        super::std_errors_name(valuation.estimator.std_errors),
        used_label(valuation),
        // Found by review: the square was called both the unlevered β and the β of the
        // operations, and the aggregate βU under the operations.
        match summary.uses_operations_beta {
            true => format!(
                "the β of the operations (cash at a beta of zero), from the unlevered β by {}",
                summary.formula_source
            ),
            false => format!("the unlevered β by {}", summary.formula_source),
        },
        match line_here {
            true => "The dashed line is",
            false =>
                "The peers here are all left out; the dashed line, drawn beside the \
                      included peers, is",
        },
        summary.aggregation.noun(),
        summary.peers_included,
        match (summary.uses_operations_beta, summary.peers_included == 1) {
            (true, false) => "betas of the operations",
            (true, true) => "beta of the operations",
            (false, false) => "unlevered betas",
            (false, true) => "unlevered beta",
        },
        match summary.uses_operations_beta {
            true => "β_ops",
            false => "βU",
        },
        fixed(summary.unlevered, 3),
        fixed(summary.relevered, 3),
        fixed(valuation.cost.target.debt_to_equity, 3),
        left_out,
        if summary.uses_operations_beta {
            "operations_beta"
        } else {
            "unlevered_beta"
        },
    )
}

fn data_summary(rows: &[Row], unlevered: impl Fn(&PeerResult) -> f64, operations: bool) -> String {
    rows.iter()
        .map(|r| {
            let e = &r.peer.estimate;
            format!(
                "{}: raw β {} (95% CI {} to {}), used {}, {} {}{}.",
                r.peer.name,
                fixed(e.beta, 3),
                fixed(e.beta_ci_low, 3),
                fixed(e.beta_ci_high, 3),
                fixed(r.peer.beta_used, 3),
                if operations {
                    "operations"
                } else {
                    "unlevered"
                },
                fixed(unlevered(r.peer), 3),
                match &r.peer.excluded_reason {
                    Some(reason) => format!(", excluded ({reason})"),
                    None => String::new(),
                }
            )
        })
        .collect::<Vec<_>>()
        .join(" ")
}
