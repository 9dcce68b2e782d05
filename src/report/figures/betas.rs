//! Chart 2: every peer's beta side by side — the raw estimate with its 95% confidence interval,
//! the beta used after adjustment and the unlevered beta — with the aggregate as a line and the
//! excluded peers set apart below a divider, each with its reason.
//!
//! One row per peer in the case's order; a reader sees at a glance how far the intervals
//! overlap, how much the adjustment and unlevering move each beta, and where the aggregate sits.

use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes::{plot_layer, Axes, Scale};
use super::canvas::{shorten, wrap, Canvas};
use super::frame::{square, triangle, Layout, Mark};
use super::style::{self, ACCENT, INK, MUTED, NEUTRAL, PRIMARY, RULE};
use super::{Figure, Kind};
use crate::case::Adjustment;
use crate::error::Result;
use crate::report::format::{fixed, label};
use crate::valuation::{PeerResult, Valuation};

const WIDTH: u32 = 720;
/// Pixels per row unit.
const ROW: f64 = 40.0;
/// Row units of an excluded peer (its reason takes a second line).
const EXCLUDED_ROW: f64 = 1.5;
/// Width of the band of peer names.
const NAMES: u32 = 210;
/// The characters of a name that fit the band (up to about 8.5 px each at the label size, for
/// capitals); a longer name is cut with an ellipsis, whole in the description.
const NAME_CHARS: usize = 24;

/// One peer's row: its position on the y axis (row units, downward negative).
struct Row<'a> {
    peer: &'a PeerResult,
    y: f64,
}

/// The peers' betas chart.
pub fn draw(valuation: &Valuation) -> Result<Figure> {
    let (rows, divider, bottom) = rows(&valuation.peers);
    let cash = valuation.cost.beta.uses_operations_beta;
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
        x_title: "Beta, equity or unlevered (the index = 1)".to_string(),
        y_title: String::new(),
        left: NAMES,
        bottom: 50,
        y_ticks: false,
    };
    let title = "Peer betas with their 95% confidence intervals".to_string();
    let caption = caption(valuation);
    let plot = ((-bottom) * ROW) as u32 + 60;
    let legend = legend(valuation, cash, aggregate);
    let layout = Layout::new(WIDTH, plot, &title, &legend, &caption);
    let name = super::BETAS.to_string();
    let mut canvas = Canvas::new(&name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    axes.draw(&mut canvas, &layout)?;
    names(&mut canvas, &layout, &axes, &rows, divider)?;
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
    Ok(Figure {
        kind: Kind::Betas,
        svg: canvas.finish("betas", &title, &description),
        file_name: name,
        title,
        caption,
        peer: None,
    })
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
    rows: &[Row],
    divider: Option<f64>,
) -> Result<()> {
    canvas.layer("y-axis", |root| {
        let (_, plot_area, _) = layout.split(root);
        let chart = axes.chart(&plot_area)?;
        let name_style = style::text(style::LABEL, &INK).pos(Pos::new(HPos::Right, VPos::Center));
        let reason_style = style::text(style::SMALL, &MUTED).pos(Pos::new(HPos::Right, VPos::Top));
        for row in rows {
            let (left, y) = chart.backend_coord(&(axes.x.range.start, row.y));
            let x = left - 12;
            root.draw_text(&shorten(&row.peer.name, NAME_CHARS), &name_style, (x, y))?;
            if let Some(reason) = &row.peer.excluded_reason {
                let lines = wrap(reason, 34);
                for (i, line) in lines.iter().take(2).enumerate() {
                    // A reason longer than two lines ends in an ellipsis (whole in the
                    // description).
                    let line = match i == 1 && lines.len() > 2 {
                        true => shorten(&format!("{line} {}", lines[2]), 34),
                        false => line.clone(),
                    };
                    root.draw_text(&line, &reason_style, (x, y + 10 + 13 * i as i32))?;
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
    Ok(())
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
    plot_layer(canvas, layout, axes, "reference", |chart| {
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(1.0, last), (1.0, top)],
            NEUTRAL.stroke_width(1),
        )))?;
        Ok(())
    })?;
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
    plot_layer(canvas, layout, axes, "intervals", |chart| {
        let stroke = PRIMARY.stroke_width(2);
        for row in rows {
            let e = &row.peer.estimate;
            chart.draw_series(std::iter::once(PathElement::new(
                vec![(e.beta_ci_low, row.y), (e.beta_ci_high, row.y)],
                stroke,
            )))?;
            let cap = |x: f64| {
                EmptyElement::at((x, row.y)) + PathElement::new(vec![(0, -5), (0, 5)], stroke)
            };
            chart.draw_series([cap(e.beta_ci_low), cap(e.beta_ci_high)])?;
        }
        Ok(())
    })?;
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

/// The rows, included peers first in case order, then the excluded ones below a divider; with
/// the divider's position (when any peer is excluded) and the axis bottom.
fn rows(peers: &[PeerResult]) -> (Vec<Row<'_>>, Option<f64>, f64) {
    let mut rows = Vec::with_capacity(peers.len());
    // `y` is the marker line of the last row placed; a row's slot is ±0.5 around it.
    let mut y = 0.0;
    for peer in peers.iter().filter(|p| p.excluded_reason.is_none()) {
        y -= 1.0;
        rows.push(Row { peer, y });
    }
    let mut divider = None;
    for peer in peers.iter().filter(|p| p.excluded_reason.is_some()) {
        if divider.is_none() {
            divider = Some(y - 0.75);
            y -= 0.5;
        }
        y -= 1.0;
        rows.push(Row { peer, y });
        // Room below the name for the reason.
        y -= EXCLUDED_ROW - 1.0;
    }
    (rows, divider, y - 0.6)
}

fn used_label(valuation: &Valuation) -> &'static str {
    match valuation.settings.beta.adjustment {
        Adjustment::Blume => "shrunk, Blume",
        Adjustment::Vasicek => "shrunk, Vasicek",
        Adjustment::None => "raw, no shrinkage",
    }
}

fn caption(valuation: &Valuation) -> String {
    let summary = &valuation.cost.beta;
    let excluded = valuation.peers.len() - summary.peers_included;
    format!(
        "For each peer: the raw β (dot) with its 95% confidence interval ({} standard errors, \
         Student t), the β used ({}; triangle) and the unlevered β by {} (square{}). The dashed \
         line is the {} of the {} included {}, βU = {}, relevered to {} at the \
         target D/E of {}. {}The grey line marks β = 1, the index. Figures: result.json peers[] \
         (beta, beta_ci_low, beta_ci_high, beta_used, {}) and beta.unlevered.",
        super::std_errors_name(valuation.estimator.std_errors),
        used_label(valuation),
        summary.formula_source,
        if summary.uses_operations_beta {
            "; the beta of the operations, cash at beta zero"
        } else {
            ""
        },
        label(&summary.aggregation),
        summary.peers_included,
        if summary.uses_operations_beta {
            "betas of the operations"
        } else {
            "unlevered betas"
        },
        fixed(summary.unlevered, 3),
        fixed(summary.relevered, 3),
        fixed(valuation.cost.target.debt_to_equity, 3),
        if excluded > 0 {
            "Peers below the divider are estimated and shown but left out of the aggregate, for \
             the reason given. "
        } else {
            ""
        },
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
