//! Chart 4: the sensitivity grid as a heat map — one cell per pair of values, shaded by the
//! figure (darker is higher) with the figure printed in it, and the case's own cell outlined.
//!
//! Shading runs along one hue from light to dark, so the map reads in greyscale print and for
//! colour-blind readers; the printed values carry the exact figures.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes::{plot_layer, Axes, Scale};
use super::canvas::Canvas;
use super::frame::Layout;
use super::style::{self, INK, PAPER};
use super::{Figure, Kind};
use crate::audit::grid::{Axis, Grid};
use crate::case::Metric;
use crate::error::Result;
use crate::report::format::{fixed, key_is_count_or_amount, key_is_rate, percent};
use crate::valuation::Valuation;

const WIDTH: u32 = 720;
const CELL_HEIGHT: u32 = 46;

/// The axis's values as written: rates as percentages, counts and amounts as whole numbers
/// when they are whole, ratios and betas as decimals (at least two), with the fewest decimals
/// that write every value exactly.
fn value_labels(axis: &Axis) -> Vec<String> {
    let rate = key_is_rate(&axis.key);
    let scale = if rate { 100.0 } else { 1.0 };
    let decimals = (0..=6)
        .find(|&d| {
            let p = 10f64.powi(d) * scale;
            axis.values
                .iter()
                .all(|v| ((v * p).round() - v * p).abs() < 1e-6)
        })
        .unwrap_or(6) as usize;
    let least = if key_is_count_or_amount(&axis.key) {
        0
    } else {
        2
    };
    axis.values
        .iter()
        .map(|&v| {
            if rate {
                percent(v, decimals.max(1))
            } else {
                fixed(v, decimals.max(least))
            }
        })
        .collect()
}

/// An axis title: the setting in words for the usual keys (the caption names the key path),
/// else the key path itself.
fn key_title(key: &str) -> String {
    let words = match key {
        "market.equity_risk_premium" => "Equity risk premium",
        "market.risk_free_rate" => "Risk-free rate",
        "target.debt_to_equity" => "Target debt-to-equity",
        "target.debt_to_capital" => "Target debt-to-capital",
        "target.tax_rate" => "Target tax rate",
        "debt.cost_pre_tax" => "Pre-tax cost of debt",
        "premiums.size" => "Size premium",
        "premiums.country" => "Country risk premium",
        "premiums.country_exposure" => "Exposure to the country's risk",
        "premiums.company_specific" => "Company-specific premium",
        _ => return key.to_string(),
    };
    words.to_string()
}

/// The heat map of `grid`.
pub fn draw(valuation: &Valuation, grid: &Grid) -> Result<Figure> {
    let rows = grid.rows.values.len();
    let metric = match grid.metric {
        Metric::Wacc => "WACC",
        Metric::CostOfEquity => "Cost of equity",
    };
    let (low, high) = grid
        .computed()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        });
    // A cell the case refuses is left in the divider grey, with `n/a` in it.
    let shade = |v: Option<f64>| match v {
        Some(v) => style::heat(if high > low {
            (v - low) / (high - low)
        } else {
            0.5
        }),
        None => style::RULE,
    };
    // The first row on top: y category i (from the bottom) is row rows − 1 − i.
    let mut row_names = value_labels(&grid.rows);
    row_names.reverse();
    let fit = Fit::of(grid);
    let axes = Axes {
        x: Scale::categories(fit.column_labels(value_labels(&grid.columns))),
        y: Scale::categories(row_names),
        x_title: key_title(&grid.columns.key),
        y_title: key_title(&grid.rows.key),
        left: LEFT,
        bottom: 50,
        y_ticks: true,
    };
    let title = format!("{metric} sensitivity: the case's figure as two inputs vary");
    let mut caption = caption(valuation, grid, metric);
    if fit.value_px.is_none() {
        caption.push_str(
            " The cells are too narrow to print their figures: the memo's sensitivity table \
             gives each.",
        );
    }
    let layout = Layout::new(WIDTH, CELL_HEIGHT * rows as u32 + 70, &title, &[], &caption);
    let name = super::SENSITIVITY.to_string();
    let mut canvas = Canvas::new(&name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &[]))?;
    axes.draw(&mut canvas, &layout)?;
    plot(&mut canvas, (&layout, &axes), grid, &shade, fit.value_px)?;
    let description = format!("{caption} {}", data_summary(grid));
    Ok(Figure {
        kind: Kind::Sensitivity,
        svg: canvas.finish("sensitivity", &title, &description),
        file_name: name,
        title,
        caption,
        peer: None,
    })
}

/// What a dense grid leaves room for (found by review: a 21 × 21 grid printed its figures over
/// each other and ran its column labels together): the size of the figures in the cells, from
/// [`style::LABEL`] down to [`SMALLEST_VALUE`], or none when even that overruns a cell, and
/// every how many columns a label is written.
struct Fit {
    value_px: Option<f64>,
    label_every: usize,
    /// The case's own column, always labelled.
    base_column: Option<usize>,
}

/// The smallest size the cells' figures are printed at.
const SMALLEST_VALUE: f64 = 9.0;
/// The y labels' band.
const LEFT: u32 = 92;

impl Fit {
    fn of(grid: &Grid) -> Fit {
        let columns = grid.columns.values.len().max(1);
        let cell = f64::from(super::axes::plot_width(WIDTH, LEFT)) / columns as f64;
        // Room each side of a figure or a label, in pixels.
        let room = cell - 6.0;
        let widest = |texts: &[String]| texts.iter().map(|t| t.chars().count()).max().unwrap_or(1);
        let figures: Vec<String> = (grid.cells.iter().flatten())
            .map(|v| v.map_or_else(|| "n/a".to_string(), |v| percent(v, 2)))
            .collect();
        let chars = widest(&figures) as f64;
        let value_px = [style::LABEL, 13.0, 12.0, 11.0, 10.0, SMALLEST_VALUE]
            .into_iter()
            .find(|px| chars * px * super::frame::CHAR_EM <= room);
        let label =
            widest(&value_labels(&grid.columns)) as f64 * style::TICK * super::frame::CHAR_EM;
        let label_every = ((label + 6.0) / cell).ceil().max(1.0) as usize;
        Fit {
            value_px,
            label_every,
            base_column: grid.base_cell.map(|[_, c]| c),
        }
    }

    /// The column labels: the case's own column's, and every `label_every`-th from the first
    /// that keeps that far from it; the others empty (found by review: the case's column could
    /// fall between the labels written).
    fn column_labels(&self, labels: Vec<String>) -> Vec<String> {
        let k = self.label_every;
        let base = self.base_column;
        let kept = |i: usize| {
            base == Some(i) || (i.is_multiple_of(k) && base.is_none_or(|b| i.abs_diff(b) >= k))
        };
        labels
            .into_iter()
            .enumerate()
            .map(|(i, label)| match kept(i) {
                true => label,
                false => String::new(),
            })
            .collect()
    }
}

/// The shaded cells, their printed values (at `value_px`, none without it) and the outline of
/// the case's own cell.
fn plot(
    canvas: &mut Canvas,
    (layout, axes): (&Layout, &Axes),
    grid: &Grid,
    shade: &dyn Fn(Option<f64>) -> RGBColor,
    value_px: Option<f64>,
) -> Result<()> {
    let rows = grid.rows.values.len();
    let cell = |r: usize, c: usize| {
        let bottom = (rows - 1 - r) as f64;
        [(c as f64, bottom), (c as f64 + 1.0, bottom + 1.0)]
    };
    let cells = || {
        grid.cells
            .iter()
            .enumerate()
            .flat_map(|(r, line)| line.iter().enumerate().map(move |(c, &v)| (r, c, v)))
    };
    plot_layer(canvas, layout, axes, "cells", |chart| {
        chart
            .draw_series(cells().map(|(r, c, v)| Rectangle::new(cell(r, c), shade(v).filled())))?;
        // White hairlines between the cells.
        chart.draw_series(
            cells().map(|(r, c, _)| Rectangle::new(cell(r, c), PAPER.stroke_width(2))),
        )?;
        Ok(())
    })?;
    if let Some(px) = value_px {
        plot_layer(canvas, layout, axes, "values", |chart| {
            chart.draw_series(cells().map(|(r, c, v)| {
                let background = shade(v);
                let colour = if style::needs_light_text(&background) {
                    PAPER
                } else {
                    INK
                };
                let bold = grid.base_cell == Some([r, c]);
                let font = if bold {
                    style::bold(px, &colour)
                } else {
                    style::text(px, &colour)
                };
                let [(x0, y0), _] = cell(r, c);
                Text::new(
                    v.map_or_else(|| "n/a".to_string(), |v| percent(v, 2)),
                    (x0 + 0.5, y0 + 0.5),
                    font.pos(Pos::new(HPos::Center, VPos::Center)),
                )
            }))?;
            Ok(())
        })?;
    }
    if let Some([r, c]) = grid.base_cell {
        plot_layer(canvas, layout, axes, "base-cell", |chart| {
            let [(x0, y0), (x1, y1)] = cell(r, c);
            // Inset a little so the outline sits inside the white hairlines.
            let inset = [(x0 + 0.03, y0 + 0.06), (x1 - 0.03, y1 - 0.06)];
            chart.draw_series(std::iter::once(Rectangle::new(
                inset,
                style::ACCENT.stroke_width(4),
            )))?;
            Ok(())
        })?;
    }
    Ok(())
}

fn caption(valuation: &Valuation, grid: &Grid, metric: &str) -> String {
    let refused = match grid.refused.len() {
        0 => String::new(),
        n => format!(
            "{n} cell{} marked n/a hold values the case refuses (the memo and result.json \
             sensitivity.refused say why). ",
            if n == 1 { "" } else { "s" }
        ),
    };
    let own = match grid.base_cell {
        Some([r, c]) => format!(
            "The outlined cell is the case itself ({}). ",
            grid.cells[r][c].map_or_else(|| "n/a".to_string(), |v| percent(v, 2))
        ),
        None => format!(
            "The case's own values are not on these axes (its {} is {}). ",
            metric,
            percent(
                match grid.metric {
                    Metric::Wacc => valuation.cost.wacc,
                    Metric::CostOfEquity => valuation.cost.cost_of_equity,
                },
                2
            )
        ),
    };
    // The memo's caution, where the chart is seen alone (found by review: a heat map of WACC
    // falling with debt went without it).
    // The WACC's: a cost of equity rises with debt whatever the cost of debt (found by review:
    // a cost-of-equity map was told of "a lower WACC").
    let debt_axis = match grid.metric == Metric::Wacc
        && [&grid.rows.key, &grid.columns.key]
            .iter()
            .any(|k| k.contains("debt_to"))
    {
        true => {
            "Along the debt axis the pre-tax cost of debt stays as the case sets it and does \
             not rise with leverage, so cells with more debt show a lower WACC than lenders \
             repricing the debt would give. "
        }
        false => "",
    };
    format!(
        "{metric} when {} (rows) and {} (columns) take the values shown, everything else as in \
         the case; each cell is a full rerun, as a run of the case with those two values would compute it. Darker \
         cells are higher. {debt_axis}{own}{refused}Figures: result.json sensitivity (rows, \
         columns, cells, base_cell{}).",
        grid.rows.key,
        grid.columns.key,
        if grid.refused.is_empty() {
            ""
        } else {
            ", refused"
        }
    )
}

fn data_summary(grid: &Grid) -> String {
    let rows = value_labels(&grid.rows);
    let columns = value_labels(&grid.columns);
    grid.cells
        .iter()
        .zip(&rows)
        .map(|(line, row)| {
            let cells: Vec<String> = line
                .iter()
                .zip(&columns)
                .map(|(v, c)| {
                    let v = v.map_or_else(|| "n/a".to_string(), |v| percent(v, 2));
                    format!("{c}: {v}")
                })
                .collect();
            format!("{} {row}: {}.", grid.rows.key, cells.join(", "))
        })
        .collect::<Vec<_>>()
        .join(" ")
}
