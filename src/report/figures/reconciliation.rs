//! Chart 6: the bridge from this case's WACC to a claimed one as a waterfall — one bar per input
//! group, each the group's Shapley value, the unexplained residue last.
//!
//! The bars are the library's ([`crate::audit::waterfall`]); bars run left to right along the
//! WACC axis, one row each, so long group names stay readable. The axis does not start at zero
//! (a few basis points would vanish beside a WACC of several percent), so the two total bars are
//! cut at the left edge, marked by a break; when the running level falls to zero or below, the
//! axis takes in zero and the totals are drawn whole from it.

use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes::{plot_layer, Axes, Scale};
use super::canvas::{shorten, Canvas};
use super::frame::{fit, text_width, Layout, Mark};
use super::style::{self, ACCENT, INK, NEUTRAL, PAPER, PRIMARY};
use super::{Figure, Kind};
use crate::audit::bridge::Bridge;
use crate::audit::waterfall::{BarKind, WaterfallBar};
use crate::error::Result;
use crate::report::format::{basis_points, percent};

const WIDTH: u32 = 720;

/// Where bar i goes: its two corners in data coordinates.
type Placement<'a> = dyn Fn(usize, &WaterfallBar) -> [(f64, f64); 2] + 'a;
const ROW: u32 = 34;

/// A bar's colour. The totals are ink-dark, apart in greyscale from both directions' colours
/// (the ochre of a rise and a mid grey are about equally light).
fn colour(bar: &WaterfallBar) -> RGBColor {
    match bar.kind {
        BarKind::Total => INK,
        BarKind::Residue => NEUTRAL,
        BarKind::Group if bar.end >= bar.start => ACCENT,
        BarKind::Group => PRIMARY,
    }
}

fn name(bar: &WaterfallBar) -> String {
    let mut chars = bar.label.chars();
    let mut text: String = chars
        .next()
        .map(|c| c.to_uppercase().chain(chars).collect())
        .unwrap_or_default();
    if bar.kind == BarKind::Total {
        text.push_str(": WACC");
    }
    text
}

/// The label band's width: at least [`GUTTER`], wider for a longer label up to [`MAX_GUTTER`].
/// plotters ends a label [`LABEL_GAP`] px left of the plot, which starts a margin right of the
/// band; the label's left end is kept a margin inside the chart.
fn gutter(names: &[String]) -> u32 {
    let widest = names
        .iter()
        .map(|n| text_width(n, style::TICK))
        .max()
        .unwrap_or(0);
    (widest + LABEL_GAP).clamp(GUTTER as i32, MAX_GUTTER as i32) as u32
}

const GUTTER: u32 = 250;
const MAX_GUTTER: u32 = 330;
const LABEL_GAP: i32 = 10;

/// A bar's label as drawn: whole when it fits the widest band, else cut with an ellipsis (a
/// total keeps its ": WACC"); whole in the tooltip and the description.
fn fitted(label: &str) -> String {
    let room = fit(f64::from(MAX_GUTTER) - f64::from(LABEL_GAP), style::TICK);
    match label.strip_suffix(": WACC") {
        Some(total) if label.chars().count() > room => {
            format!("{}: WACC", shorten(total, room.saturating_sub(6)))
        }
        _ => shorten(label, room),
    }
}

/// The value written at a bar's end: a total's level, a step's size.
fn value(bar: &WaterfallBar) -> String {
    match (bar.kind, bar.change) {
        (BarKind::Total, _) | (_, None) => percent(bar.end, 2),
        (_, Some(change)) => {
            // Below half a basis point the step rounds to nothing: no sign then.
            if (change * 1e4).abs() < 0.5 {
                "0 bp".to_string()
            } else if change > 0.0 {
                format!("+{}", basis_points(change))
            } else {
                basis_points(change).replacen('-', "\u{2212}", 1)
            }
        }
    }
}

/// The waterfall chart of `bridge`.
pub fn draw(bridge: &Bridge) -> Result<Figure> {
    let bars = &bridge.waterfall;
    let ends = bars.iter().flat_map(|b| match b.kind {
        BarKind::Total => vec![b.end],
        _ => vec![b.start, b.end],
    });
    let (low, high) = ends.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
        (lo.min(v), hi.max(v))
    });
    let full: Vec<String> = bars.iter().rev().map(name).collect();
    let names: Vec<String> = full.iter().map(|n| fitted(n)).collect();
    let axes = Axes {
        x: Scale::percent(low, high, 0.25, 7),
        y: Scale::categories(names.clone()),
        x_title: "WACC (%)".to_string(),
        y_title: String::new(),
        left: gutter(&names),
        bottom: 50,
        y_ticks: true,
    };
    let rows = bars.len();
    // The totals are cut at the axis's start only when it lies above zero.
    let cut = axes.x.range.start > 0.0;
    // Bar i sits in category rows − 1 − i (the first bar on top), 70% of the row high.
    let span = |i: usize, bar: &WaterfallBar| {
        let y = (rows - 1 - i) as f64;
        let start = match (bar.kind == BarKind::Total, cut) {
            (true, true) => axes.x.range.start,
            (true, false) => 0.0,
            (false, _) => bar.start,
        };
        [(start, y + 0.15), (bar.end, y + 0.85)]
    };
    // The bars are the Shapley values, not the table's steps (found by review: the two read
    // as one under the same labels).
    let title = "Bridge to the claimed WACC: each input group's Shapley value".to_string();
    let caption = caption(bridge, axes.x.range.start, cut, low);
    let legend = vec![
        (Mark::Swatch(ACCENT), "raises the WACC".to_string()),
        (Mark::Swatch(PRIMARY), "lowers it".to_string()),
        (
            Mark::Swatch(NEUTRAL),
            "not explained by an input group".to_string(),
        ),
        (Mark::Swatch(INK), "WACC".to_string()),
    ];
    let layout = Layout::new(WIDTH, ROW * rows as u32 + 60, &title, &legend, &caption);
    let name = super::RECONCILIATION.to_string();
    let mut canvas = Canvas::new(&name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    axes.draw(&mut canvas, &layout)?;
    for (shown, full) in names.iter().zip(&full) {
        canvas.tooltip(shown, full);
    }
    plot(&mut canvas, &layout, &axes, bars, (&span, cut))?;
    let description = format!("{caption} {}", data_summary(bridge));
    Ok(Figure {
        kind: Kind::Reconciliation,
        svg: canvas.finish("reconciliation", &title, &description),
        file_name: name,
        title,
        caption,
        peer: None,
    })
}

/// The connectors, bars, break marks and values; `span` places bar i.
fn plot(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    bars: &[WaterfallBar],
    (span, cut): (&Placement<'_>, bool),
) -> Result<()> {
    let rows = bars.len();
    plot_layer(canvas, layout, axes, "connectors", |chart| {
        // A dotted rule from each bar's end down to the next bar's start.
        for (i, bar) in bars.iter().enumerate().take(rows.saturating_sub(1)) {
            let at = bar.end;
            let (upper, lower) = ((rows - 1 - i) as f64 + 0.15, (rows - 2 - i) as f64 + 0.85);
            chart.draw_series(std::iter::once(DashedPathElement::new(
                vec![(at, upper), (at, lower)],
                2,
                2,
                NEUTRAL.stroke_width(1),
            )))?;
        }
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "bars", |chart| {
        chart.draw_series(
            bars.iter()
                .enumerate()
                .map(|(i, bar)| Rectangle::new(span(i, bar), colour(bar).filled())),
        )?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "breaks", |chart| {
        // Two white slashes across each total bar near the axis: the bar is cut there.
        for (i, bar) in bars
            .iter()
            .enumerate()
            .filter(|(_, b)| cut && b.kind == BarKind::Total)
        {
            let [(x0, y0), (_, y1)] = span(i, bar);
            for dx in [10, 16] {
                chart.draw_series(std::iter::once(
                    EmptyElement::at((x0, (y0 + y1) / 2.0))
                        + PathElement::new(
                            vec![(dx - 3, 10), (dx + 3, -10)],
                            PAPER.stroke_width(2),
                        ),
                ))?;
            }
        }
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "values", |chart| {
        chart.draw_series(bars.iter().enumerate().map(|(i, bar)| {
            let [(_, y0), (x1, y1)] = span(i, bar);
            let rightward = bar.kind == BarKind::Total || bar.end >= bar.start;
            let (side, offset) = if rightward {
                (HPos::Left, 6)
            } else {
                (HPos::Right, -6)
            };
            let style = style::text(style::SMALL, &INK).pos(Pos::new(side, VPos::Center));
            EmptyElement::at((x1, (y0 + y1) / 2.0)) + Text::new(value(bar), (offset, 0), style)
        }))?;
        Ok(())
    })?;
    Ok(())
}

fn caption(bridge: &Bridge, axis_start: f64, cut: bool, lowest: f64) -> String {
    let axis = match (cut, lowest < 0.0) {
        (true, _) => format!(
            "The axis starts at {}, so the two WACC bars are cut at the left (the break marks). ",
            percent(axis_start, 2)
        ),
        (false, false) => "The WACC bars are drawn from zero. ".to_string(),
        (false, true) => "The WACC bars are drawn from zero. The levels between them are running \
                          sums of the Shapley values, not WACCs of any case, and fall below zero \
                          here. "
            .to_string(),
    };
    let residue = match bridge.unexplained {
        Some(u) => format!(
            "The last step, {}, is what the claim's stated WACC holds beyond its own components. ",
            basis_points(u)
        ),
        None => String::new(),
    };
    format!(
        "From this case's WACC ({}) to \"{}\" ({}): each bar moves the WACC by one input group's \
         Shapley value, its share of the {} gap between the WACCs the two sides' components give, averaged over every order of replacing the \
         groups, so the picture does not depend on the order drawn. {residue}{axis}Figures: \
         result.json reconciliation.waterfall (start, end, change; from steps[].shapley, unexplained).",
        percent(bridge.from.headline_wacc(), 2),
        bridge.to.label,
        percent(bridge.to.headline_wacc(), 2),
        basis_points(bridge.difference),
    )
}

fn data_summary(bridge: &Bridge) -> String {
    bridge
        .waterfall
        .iter()
        .map(|b| format!("{}: {}", name(b), value(b)))
        .collect::<Vec<_>>()
        .join("; ")
        + "."
}
