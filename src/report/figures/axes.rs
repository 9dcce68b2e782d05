//! Axes: round tick values, their labels, and the plot of a chart in named layers.
//!
//! The ticks are chosen here (steps of 1, 2, 2.5 or 5 × 10^k), not by plotters, so every label
//! on an axis has the same number of decimals and states its value exactly; a reader (or a
//! test) can recover the scale from any two labels and their positions. Percent axes print
//! rates through [`crate::report::format`], the one home of number formatting.

use std::ops::Range;

use plotters::coord::ranged1d::{DefaultFormatting, KeyPointHint, Ranged};
use plotters::prelude::*;

use super::canvas::{Area, Canvas, Drawn};
use super::frame::Layout;
use super::style::{self, INK, MUTED, NEUTRAL, RULE};
use crate::error::Result;
use crate::report::format;

/// The coordinate system of every chart.
pub type Coordinates = Cartesian2d<Ticked, Ticked>;

/// A continuous axis whose ticks are the given values (plotters' own f64 axis picks its own).
#[derive(Debug, Clone)]
pub struct Ticked {
    range: Range<f64>,
    ticks: Vec<f64>,
}

impl Ranged for Ticked {
    type FormatOption = DefaultFormatting;
    type ValueType = f64;

    /// Linear, as plotters maps its own f64 axes (pixels rounded down, less a thousandth).
    fn map(&self, value: &f64, limit: (i32, i32)) -> i32 {
        let span = self.range.end - self.range.start;
        let length = limit.1 - limit.0;
        if span == 0.0 || length == 0 {
            return limit.0 + length / 2;
        }
        let logic = (value - self.range.start) / span;
        if length > 0 {
            limit.0 + (f64::from(length) * logic + 1e-3).floor() as i32
        } else {
            limit.0 + (f64::from(length) * logic - 1e-3).ceil() as i32
        }
    }

    fn key_points<Hint: KeyPointHint>(&self, hint: Hint) -> Vec<f64> {
        // No light (minor) grid lines, and none at all when no labels are asked for.
        if hint.weight().allow_light_points() || hint.max_num_points() == 0 {
            Vec::new()
        } else {
            self.ticks.clone()
        }
    }

    fn range(&self) -> Range<f64> {
        self.range.clone()
    }
}

/// A chart's plot on one layer.
pub type Chart<'a, 'b> = ChartContext<'a, SVGBackend<'b>, Coordinates>;

/// One axis: its range, tick values and how they are written.
#[derive(Debug, Clone)]
pub struct Scale {
    pub range: Range<f64>,
    pub ticks: Vec<f64>,
    decimals: usize,
    percent: bool,
    /// For a category axis, the name at each tick (in tick order).
    names: Vec<String>,
    /// For an axis of given ticks (dates), each tick's label (in tick order).
    tick_labels: Vec<String>,
}

impl Scale {
    /// A rate axis over `[low, high]` padded by `pad` of the span on each side, with about
    /// `ticks` labels written as percentages.
    pub fn percent(low: f64, high: f64, pad: f64, ticks: usize) -> Scale {
        Scale::new(low, high, pad, ticks, true)
    }

    /// A plain-number axis (betas, counts).
    pub fn plain(low: f64, high: f64, pad: f64, ticks: usize) -> Scale {
        Scale::new(low, high, pad, ticks, false)
    }

    fn new(low: f64, high: f64, pad: f64, ticks: usize, percent: bool) -> Scale {
        let (low, high) = if high > low {
            (low, high)
        } else {
            // A degenerate extent (one value) gets a small window around it.
            let half = if low == 0.0 { 1e-3 } else { low.abs() * 0.05 };
            (low - half, high + half)
        };
        let span = high - low;
        let range = (low - pad * span)..(high + pad * span);
        let step = nice_step((range.end - range.start) / ticks.max(2) as f64);
        let first = (range.start / step).ceil() as i64;
        let last = (range.end / step).floor() as i64;
        let tick_values = (first..=last).map(|k| round12(k as f64 * step)).collect();
        let scaled = if percent { step * 100.0 } else { step };
        // Enough decimals to write the step exactly (2.5 needs one).
        let decimals = (0..6)
            .find(|&d| {
                let p = 10f64.powi(d as i32);
                ((scaled * p).round() - scaled * p).abs() < 1e-6
            })
            .unwrap_or(6);
        Scale {
            range,
            ticks: tick_values,
            decimals,
            percent,
            names: Vec::new(),
            tick_labels: Vec::new(),
        }
    }

    /// An axis over `[low, high]` padded by `pad` of the span on each side, whose ticks and
    /// their labels the chart gives (dates at the ends of months, say); the ticks outside the
    /// padded range are left out.
    pub fn labelled(low: f64, high: f64, pad: f64, ticks: Vec<(f64, String)>) -> Scale {
        let span = (high - low).max(0.0);
        let range = (low - pad * span)..(high + pad * span);
        let (ticks, tick_labels) = ticks.into_iter().filter(|(x, _)| range.contains(x)).unzip();
        Scale {
            range,
            ticks,
            decimals: 0,
            percent: false,
            names: Vec::new(),
            tick_labels,
        }
    }

    /// An axis without ticks over `[low, high]` (rows laid out by the chart itself).
    pub fn bare(low: f64, high: f64) -> Scale {
        Scale {
            range: low..high,
            ticks: Vec::new(),
            decimals: 0,
            percent: false,
            names: Vec::new(),
            tick_labels: Vec::new(),
        }
    }

    /// A category axis: category i spans [i, i + 1] and is labelled `names[i]` at its centre.
    pub fn categories(names: Vec<String>) -> Scale {
        Scale {
            range: 0.0..names.len() as f64,
            ticks: (0..names.len()).map(|i| i as f64 + 0.5).collect(),
            decimals: 0,
            percent: false,
            names,
            tick_labels: Vec::new(),
        }
    }

    /// The same axis with its range widened to hold `value`.
    pub fn including(mut self, value: f64) -> Scale {
        self.range.start = self.range.start.min(value);
        self.range.end = self.range.end.max(value);
        self
    }

    /// A tick label: "4.5%" or "1.20"; a minus sign, not a hyphen, for negatives.
    pub fn label(&self, value: f64) -> String {
        if !self.names.is_empty() {
            let i = (value.floor().max(0.0) as usize).min(self.names.len() - 1);
            return self.names[i].clone();
        }
        if let Some(i) = self.ticks.iter().position(|t| *t == value) {
            if let Some(text) = self.tick_labels.get(i) {
                return text.clone();
            }
        }
        let text = if self.percent {
            format::percent(value, self.decimals)
        } else {
            format::fixed(value, self.decimals)
        };
        match text.strip_prefix('-') {
            Some(rest) => format!("\u{2212}{rest}"),
            None => text,
        }
    }

    fn coordinate(&self) -> Ticked {
        Ticked {
            range: self.range.clone(),
            ticks: self.ticks.clone(),
        }
    }
}

/// The smallest of 1, 2, 2.5 and 5 × 10^k at or above `raw`.
fn nice_step(raw: f64) -> f64 {
    let raw = if raw > 0.0 && raw.is_finite() {
        raw
    } else {
        1.0
    };
    let power = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * power)
        .find(|&s| s >= raw * (1.0 - 1e-9))
        .unwrap_or(10.0 * power)
}

/// Rounds to 12 decimals, so 3 × 0.1 is written 0.3.
fn round12(v: f64) -> f64 {
    (v * 1e12).round() / 1e12
}

/// The smallest and largest of `values` (infinite when there are none).
pub fn extent(values: impl Iterator<Item = f64>) -> (f64, f64) {
    values.fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
        (lo.min(v), hi.max(v))
    })
}

/// A chart's two axes, their titles and the room their labels take.
pub struct Axes {
    pub x: Scale,
    pub y: Scale,
    pub x_title: String,
    pub y_title: String,
    /// Width of the y labels' band and height of the x labels' band, in pixels.
    pub left: u32,
    pub bottom: u32,
    /// Whether plotters writes the y tick labels (a category axis writes its own).
    pub y_ticks: bool,
}

/// Room [`Axes::chart`] leaves right of the plot, in pixels (for the last x label's half).
const RIGHT_MARGIN: u32 = style::MARGIN as u32 + 8;

/// The width in pixels of the plot [`Axes::chart`] lays out in an area `area` pixels wide, with
/// a band of `left` pixels for the y labels.
pub fn plot_width(area: u32, left: u32) -> u32 {
    area.saturating_sub(style::MARGIN as u32 + left + RIGHT_MARGIN)
}

impl Axes {
    /// The plot of `plot_area` in these axes' coordinates.
    pub fn chart<'a, 'b>(
        &self,
        plot_area: &'a Area<'b>,
    ) -> std::result::Result<Chart<'a, 'b>, DrawingAreaErrorKind<std::io::Error>> {
        ChartBuilder::on(plot_area)
            .margin_left(style::MARGIN as u32)
            .margin_right(RIGHT_MARGIN)
            .margin_top(6)
            .x_label_area_size(self.bottom)
            .y_label_area_size(self.left)
            .build_cartesian_2d(self.x.coordinate(), self.y.coordinate())
    }

    /// Draws the grid, the x axis and (unless it is a category axis) the y axis, each in its
    /// own layer (`grid`, `x-axis`, `y-axis`).
    pub fn draw(&self, canvas: &mut Canvas, layout: &Layout) -> Result<()> {
        plot_layer(canvas, layout, self, "grid", |chart| {
            chart
                .configure_mesh()
                .disable_axes()
                .bold_line_style(RULE.stroke_width(1))
                .light_line_style(TRANSPARENT)
                .label_style(style::text(style::TICK, &TRANSPARENT_TEXT))
                .y_labels(if self.y_ticks { self.y.ticks.len() } else { 0 })
                .draw()
        })?;
        let x_format = |v: &f64| self.x.label(*v);
        plot_layer(canvas, layout, self, "x-axis", |chart| {
            chart
                .configure_mesh()
                .disable_mesh()
                .disable_y_axis()
                .y_labels(0)
                .axis_style(MUTED.stroke_width(1))
                .label_style(style::text(style::TICK, &MUTED))
                .axis_desc_style(style::text(style::LABEL, &INK))
                .x_label_formatter(&x_format)
                .x_desc(self.x_title.clone())
                .draw()
        })?;
        if self.y_ticks {
            let y_format = |v: &f64| self.y.label(*v);
            plot_layer(canvas, layout, self, "y-axis", |chart| {
                chart
                    .configure_mesh()
                    .disable_mesh()
                    .disable_x_axis()
                    .x_labels(0)
                    .axis_style(MUTED.stroke_width(1))
                    .label_style(style::text(style::TICK, &MUTED))
                    .axis_desc_style(style::text(style::LABEL, &INK))
                    .y_label_formatter(&y_format)
                    .y_desc(self.y_title.clone())
                    .draw()
            })?;
        }
        Ok(())
    }
}

/// Fully transparent: plotters skips drawing it.
const TRANSPARENT_TEXT: RGBAColor = RGBAColor(0, 0, 0, 0.0);

/// Draws one layer of the plot band of `layout` in the coordinates of `axes`.
pub fn plot_layer(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    class: &str,
    draw: impl FnOnce(&mut Chart) -> Drawn,
) -> Result<()> {
    canvas.layer(class, |root| {
        let (_, plot_area, _) = layout.split(root);
        let mut chart = axes.chart(&plot_area)?;
        draw(&mut chart)
    })
}

/// The grey vertical line at `x` across the whole plot, in its own layer `reference` (β = 1,
/// the index, on the betas charts).
pub fn reference_line(canvas: &mut Canvas, layout: &Layout, axes: &Axes, x: f64) -> Result<()> {
    let (top, last) = (axes.y.range.end, axes.y.range.start);
    plot_layer(canvas, layout, axes, "reference", |chart| {
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(x, last), (x, top)],
            NEUTRAL.stroke_width(1),
        )))?;
        Ok(())
    })
}

/// Horizontal intervals `(low, high, y)` with end caps, in `colour`, in the layer `intervals`.
pub fn interval_layer(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    intervals: &[(f64, f64, f64)],
    colour: RGBColor,
) -> Result<()> {
    plot_layer(canvas, layout, axes, "intervals", |chart| {
        let stroke = colour.stroke_width(2);
        for &(low, high, y) in intervals {
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(low, y), (high, y)],
                stroke,
            )))?;
            let cap =
                |x: f64| EmptyElement::at((x, y)) + PathElement::new(vec![(0, -5), (0, 5)], stroke);
            chart.draw_series([cap(low), cap(high)])?;
        }
        Ok(())
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_are_round_and_labels_share_their_decimals() {
        let s = Scale::percent(-0.081, 0.064, 0.0, 6);
        // Span 14.5 points over 6 ticks: 2.4 a tick, rounded up to 2.5 points.
        assert_eq!(s.ticks.first().copied(), Some(-0.075));
        assert_eq!(s.label(-0.075), "\u{2212}7.5%");
        assert_eq!(s.label(0.05), "5.0%");
        let b = Scale::plain(0.2, 1.9, 0.05, 5);
        assert!(
            b.ticks.iter().all(|t| (t * 2.0).fract() == 0.0),
            "{:?}",
            b.ticks
        );
        assert_eq!(b.label(1.0), "1.0");
        assert_eq!(nice_step(0.3), 0.5);
        assert_eq!(nice_step(1.0), 1.0);
    }
}
