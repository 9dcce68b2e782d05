//! Chart 5: the Monte Carlo WACC draws as a histogram, with the 5th, 50th and 95th percentiles
//! and the point estimate marked.
//!
//! The bins and counts are the library's ([`crate::audit::histogram`]), so the bars are the
//! stored counts; the percentiles are the same figures the memo's table prints, with more
//! decimals only where two would read alike. Each line's label stands beside it in a row of
//! its own when lines lie close (`uncertainty/labels.rs`).

mod labels;

use plotters::coord::CoordTranslate;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes::{plot_layer, Axes, Scale};
use super::canvas::Canvas;
use super::frame::{text_width, Layout, Mark};
use super::style::{self, ACCENT, BARS, INK, PAPER};
use super::{Figure, Kind};
use crate::audit::uncertainty::Uncertainty;
use crate::error::Result;
use crate::report::format::{basis_points, percent};
use labels::{Side, Wanted};

/// A bin width in basis points when it is a whole number of them, else in percent with the
/// decimals that write it exactly (0.25 bp as 0.0025%, the narrowest bin, 0.01 bp, as 0.0001%).
fn bin_width(width: f64) -> String {
    let bp = width * 1e4;
    if bp >= 1.0 && (bp - bp.round()).abs() < 1e-9 {
        basis_points(width)
    } else {
        percent(width, edge_decimals(width))
    }
}

/// Decimals of a bin edge in percent: the fewest, at least two, that write every edge exactly
/// (bins 0.025% wide need three), so adjacent bins read alike wide.
fn edge_decimals(width: f64) -> usize {
    (2..=6)
        .find(|&d| {
            let scaled = width * 100.0 * 10f64.powi(d as i32);
            (scaled - scaled.round()).abs() < 1e-6
        })
        .unwrap_or(6)
}

const WIDTH: u32 = 720;
const PLOT: u32 = 330;

/// The histogram chart.
pub fn draw(u: &Uncertainty) -> Result<Figure> {
    let h = &u.histogram;
    let (first, last) = (h.edges[0], h.edges[h.edges.len() - 1]);
    let most = h.counts.iter().copied().max().unwrap_or(1).max(1);
    let axes = Axes {
        x: Scale::percent(
            first.min(u.point_estimate),
            last.max(u.point_estimate),
            0.03,
            8,
        ),
        y: Scale::plain(0.0, f64::from(most) * 1.45, 0.0, 5),
        x_title: "WACC (%)".to_string(),
        y_title: format!("Draws per {} bin", bin_width(h.bin_width)),
        left: 70,
        bottom: 50,
        y_ticks: true,
    };
    let title = format!("Monte Carlo distribution of the WACC ({} draws)", u.draws);
    let caption = caption(u);
    let legend = vec![
        (Mark::Swatch(BARS), "draws per bin".to_string()),
        (Mark::Dashed(INK), "5th and 95th percentiles".to_string()),
        (Mark::Line(INK), "median".to_string()),
        (Mark::Line(ACCENT), "point estimate".to_string()),
    ];
    let layout = Layout::new(WIDTH, PLOT, &title, &legend, &caption);
    let name = super::UNCERTAINTY.to_string();
    let mut canvas = Canvas::new(&name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    axes.draw(&mut canvas, &layout)?;
    plot(&mut canvas, &layout, &axes, u)?;
    let description = format!("{caption} {}", data_summary(u));
    Ok(Figure {
        kind: Kind::Uncertainty,
        svg: canvas.finish("uncertainty", &title, &description),
        file_name: name,
        title,
        caption,
        peer: None,
    })
}

/// The bars, the percentile lines and the point estimate, each line labelled.
fn plot(canvas: &mut Canvas, layout: &Layout, axes: &Axes, u: &Uncertainty) -> Result<()> {
    let h = &u.histogram;
    // A bin of a few draws is drawn at least LEAST_BAR of the axis high, about 3 pixels, and
    // only bars of several times that get the white hairline, which would cover a shorter one
    // (found by review: bins of one to eight draws in the tails were 0 or 1 pixel high and
    // hidden under their outline, so the spread looked narrower than the counts say).
    let least = LEAST_BAR * axes.y.range.end;
    let height = |count: u32| match count {
        0 => 0.0,
        _ => f64::from(count).max(least),
    };
    plot_layer(canvas, layout, axes, "bars", |chart| {
        chart.draw_series(h.counts.iter().enumerate().map(|(i, &count)| {
            Rectangle::new(
                [(h.edges[i], 0.0), (h.edges[i + 1], height(count))],
                BARS.filled(),
            )
        }))?;
        // White hairlines between neighbouring bars.
        let outlined = |count: u32| f64::from(count) >= 3.0 * least;
        chart.draw_series(
            h.counts
                .iter()
                .enumerate()
                .filter(|(_, &c)| outlined(c))
                .map(|(i, &count)| {
                    Rectangle::new(
                        [(h.edges[i], 0.0), (h.edges[i + 1], f64::from(count))],
                        PAPER.stroke_width(1),
                    )
                }),
        )?;
        Ok(())
    })?;
    lines(canvas, layout, axes, u)
}

/// The least height of a bar holding a draw, as a share of the y axis: about 3 pixels of the
/// plot's height.
const LEAST_BAR: f64 = 0.012;

/// The heights of the label rows, top down, as shares of the y axis: the bars reach 1/1.45 of
/// it (about 0.69), so the lowest row's text clears the tallest bar by some 8 px.
const LABEL_ROWS: [f64; 4] = [0.95, 0.88, 0.81, 0.74];

/// One labelled line: its layer's class, where it stands, its label, and the row and side the
/// chart would choose for the label.
struct Marked {
    class: &'static str,
    x: f64,
    text: String,
    row: usize,
    side: Side,
}

/// The percentile and point-estimate lines, in the order their labels are placed. The point
/// estimate is labelled in the top row with the percentiles, whose labels lie outside the
/// interval, on the side with the more room up to the interval's nearer end (or away from the
/// interval when the point lies outside it): no line reaches that row, so none strikes
/// through it. The median's label, a row lower, goes the other way, away from the point's
/// taller line. Labels too close for that take other places ([`labels::place`]).
fn marked(u: &Uncertainty) -> [Marked; 4] {
    let room_left = u.point_estimate - u.p05;
    let room_right = u.p95 - u.point_estimate;
    let point_side = match (room_left < 0.0, room_right < 0.0) {
        (true, _) => Side::Left,
        (_, true) => Side::Right,
        _ if room_right >= room_left => Side::Right,
        _ => Side::Left,
    };
    let median_side = match u.p50 < u.point_estimate {
        true => Side::Left,
        false => Side::Right,
    };
    let decimals = label_decimals(&[u.p05, u.p50, u.p95, u.point_estimate]);
    let mark = |class, x, name: &str, row, side| Marked {
        class,
        x,
        text: format!("{name} {}", percent(x, decimals)),
        row,
        side,
    };
    [
        mark("percentile-05", u.p05, "5th", 0, Side::Left),
        mark("percentile-95", u.p95, "95th", 0, Side::Right),
        mark(
            "point-estimate",
            u.point_estimate,
            "point estimate",
            0,
            point_side,
        ),
        mark("median", u.p50, "median", 1, median_side),
    ]
}

/// Decimals of the lines' labels in percent: two, or up to four when fewer would print alike
/// two figures that four tell apart (percentiles a hair apart under a narrow distribution).
fn label_decimals(values: &[f64]) -> usize {
    let apart = |a: f64, b: f64, d: usize| percent(a, d) != percent(b, d);
    (2..=4)
        .find(|&d| {
            values.iter().enumerate().all(|(i, &a)| {
                values[..i]
                    .iter()
                    .all(|&b| !apart(a, b, 4) || apart(a, b, d))
            })
        })
        .unwrap_or(4)
}

/// The percentile and point-estimate lines, each labelled in its row beside it.
fn lines(canvas: &mut Canvas, layout: &Layout, axes: &Axes, u: &Uncertainty) -> Result<()> {
    let top = axes.y.range.end;
    let marks = marked(u);
    // The lines' pixels and the plot's, as the layers below will draw them.
    let coordinates = canvas.measure("labels", |root| {
        let (_, plot_area, _) = layout.split(root);
        let chart = axes.chart(&plot_area)?;
        Ok(chart.as_coord_spec().clone())
    })?;
    let wanted: Vec<Wanted> = (marks.iter())
        .map(|m| Wanted {
            x: coordinates.translate(&(m.x, 0.0)).0,
            width: text_width(&m.text, style::SMALL),
            row: m.row,
            side: m.side,
        })
        .collect();
    let bounds = coordinates.get_x_axis_pixel_range();
    let places = labels::place(&wanted, LABEL_ROWS.len(), (bounds.start, bounds.end));
    for (m, place) in marks.iter().zip(places) {
        let height = LABEL_ROWS[place.row];
        plot_layer(canvas, layout, axes, m.class, |chart| {
            let (colour, width) = match m.class {
                "point-estimate" => (ACCENT, 3),
                _ => (INK, 2),
            };
            let line = vec![(m.x, 0.0), (m.x, top * (height - 0.02))];
            if m.class.starts_with("percentile") {
                chart.draw_series(std::iter::once(DashedPathElement::new(
                    line,
                    6,
                    4,
                    colour.stroke_width(width),
                )))?;
            } else {
                chart.draw_series(std::iter::once(PathElement::new(
                    line,
                    colour.stroke_width(width),
                )))?;
            }
            // An anchor of Right puts the text to the left of its line.
            let (anchor, offset) = match place.side {
                Side::Left => (HPos::Right, -labels::OFFSET),
                Side::Right => (HPos::Left, labels::OFFSET),
            };
            let label = style::text(style::SMALL, &colour).pos(Pos::new(anchor, VPos::Center));
            chart.draw_series(std::iter::once(
                EmptyElement::at((m.x, top * height))
                    + Text::new(m.text.clone(), (offset, 0), label),
            ))?;
            Ok(())
        })?;
    }
    Ok(())
}

fn caption(u: &Uncertainty) -> String {
    let mut drawn = format!("betas drawn from {}", u.beta_distribution);
    if let Some([a, b]) = u.equity_risk_premium_range {
        drawn.push_str(&format!(
            ", the equity risk premium uniformly from {} to {}",
            percent(a, 2),
            percent(b, 2)
        ));
    }
    if let Some([a, b]) = u.risk_free_rate_range {
        drawn.push_str(&format!(
            ", the risk-free rate uniformly from {} to {}",
            percent(a, 2),
            percent(b, 2)
        ));
    }
    let ranges = u.equity_risk_premium_range.is_some() || u.risk_free_rate_range.is_some();
    format!(
        "{} draws of the WACC (seed {}; {drawn}), counted in bins {} wide. 90% of the draws lie \
         between the 5th percentile, {}, and the 95th, {}; the median is {} and the point \
         estimate {}. The spread reflects the betas' estimation error{} only, not the choice of \
         peers, index, window or method. Figures: result.json uncertainty (histogram, p05, p50, \
         p95, point_estimate).",
        u.draws,
        u.seed,
        bin_width(u.histogram.bin_width),
        percent(u.p05, 2),
        percent(u.p95, 2),
        percent(u.p50, 2),
        percent(u.point_estimate, 2),
        if ranges { " and the stated ranges" } else { "" },
    )
}

fn data_summary(u: &Uncertainty) -> String {
    let h = &u.histogram;
    let decimals = edge_decimals(h.bin_width);
    let bins: Vec<String> = h
        .counts
        .iter()
        .enumerate()
        .filter(|(_, &c)| c > 0)
        .map(|(i, c)| {
            format!(
                "{} to {}: {c}",
                percent(h.edges[i], decimals),
                percent(h.edges[i + 1], decimals)
            )
        })
        .collect();
    format!("Draws per bin: {}.", bins.join("; "))
}
