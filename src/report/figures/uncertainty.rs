//! Chart 5: the Monte Carlo WACC draws as a histogram, with the 5th, 50th and 95th percentiles
//! and the point estimate marked.
//!
//! The bins and counts are the library's ([`crate::audit::histogram`]), so the bars are the
//! stored counts; the percentiles are the same figures the memo's table prints.

use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes::{plot_layer, Axes, Scale};
use super::canvas::Canvas;
use super::frame::{Layout, Mark};
use super::style::{self, ACCENT, BARS, INK, PAPER};
use super::{Figure, Kind};
use crate::audit::uncertainty::Uncertainty;
use crate::error::Result;
use crate::report::format::{basis_points, percent};

/// A bin width in basis points when it is a whole number of them, else in percent.
fn bin_width(width: f64) -> String {
    let bp = width * 1e4;
    if (bp - bp.round()).abs() < 1e-9 {
        basis_points(width)
    } else {
        percent(width, 4)
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
    plot_layer(canvas, layout, axes, "bars", |chart| {
        chart.draw_series(h.counts.iter().enumerate().map(|(i, &count)| {
            Rectangle::new(
                [(h.edges[i], 0.0), (h.edges[i + 1], f64::from(count))],
                BARS.filled(),
            )
        }))?;
        // White hairlines between neighbouring bars.
        chart.draw_series(h.counts.iter().enumerate().filter(|(_, &c)| c > 0).map(
            |(i, &count)| {
                Rectangle::new(
                    [(h.edges[i], 0.0), (h.edges[i + 1], f64::from(count))],
                    PAPER.stroke_width(1),
                )
            },
        ))?;
        Ok(())
    })?;
    lines(canvas, layout, axes, u)
}

/// The percentile and point-estimate lines, each labelled at its own height.
fn lines(canvas: &mut Canvas, layout: &Layout, axes: &Axes, u: &Uncertainty) -> Result<()> {
    let top = axes.y.range.end;
    // The point estimate is labelled in the top row with the percentiles, whose labels lie
    // outside the interval, on the side with the more room up to the interval's nearer end (or
    // away from the interval when the point lies outside it): no line reaches that row, so none
    // strikes through it. The median's label, a row lower, goes the other way, away from the
    // point's taller line. (An anchor of Right puts the text to the left of its line.)
    let room_left = u.point_estimate - u.p05;
    let room_right = u.p95 - u.point_estimate;
    let point_side = match (room_left < 0.0, room_right < 0.0) {
        (true, _) => HPos::Right,
        (_, true) => HPos::Left,
        _ if room_right >= room_left => HPos::Left,
        _ => HPos::Right,
    };
    let median_side = match u.p50 < u.point_estimate {
        true => HPos::Right,
        false => HPos::Left,
    };
    // Label rows from the top of the plot, as fractions of its height.
    let marks = [
        (
            "percentile-05",
            u.p05,
            format!("5th {}", percent(u.p05, 2)),
            0.95,
            HPos::Right,
        ),
        (
            "percentile-95",
            u.p95,
            format!("95th {}", percent(u.p95, 2)),
            0.95,
            HPos::Left,
        ),
        (
            "median",
            u.p50,
            format!("median {}", percent(u.p50, 2)),
            0.87,
            median_side,
        ),
        (
            "point-estimate",
            u.point_estimate,
            format!("point estimate {}", percent(u.point_estimate, 2)),
            0.95,
            point_side,
        ),
    ];
    for (class, x, text, height, side) in marks {
        plot_layer(canvas, layout, axes, class, |chart| {
            let (colour, width) = if class == "point-estimate" {
                (ACCENT, 3)
            } else {
                (INK, 2)
            };
            let line = vec![(x, 0.0), (x, top * (height - 0.02))];
            if class.starts_with("percentile") {
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
            let offset = if matches!(side, HPos::Right) { -5 } else { 5 };
            let label = style::text(style::SMALL, &colour).pos(Pos::new(side, VPos::Center));
            chart.draw_series(std::iter::once(
                EmptyElement::at((x, top * height)) + Text::new(text.clone(), (offset, 0), label),
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
