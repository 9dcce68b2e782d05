//! Chart 1, one per peer: the peer's return against the index's for every period used, the
//! fitted line α + β·x and the 95% confidence band of its mean response, with the observations
//! the diagnostics flag (|studentised residual| > 3) ringed.
//!
//! The line and band are the points the library tabulated ([`crate::beta::fitted_line`]); the
//! points are the returns the regression used; the caption quotes the estimate, its SE, N and
//! R² from the result. For Dimson and Scholes–Williams the line is the summed beta's, against
//! the same-period index return, and the caption says so.

use plotters::prelude::*;

use super::axes::{extent, plot_layer, Axes, Scale};
use super::canvas::{distinct_middle, Canvas};
use super::frame::{Layout, Mark};
use super::style::{ACCENT, BAND, FLAG, NEUTRAL, PRIMARY};
use super::{per_period, Figure, Kind};
use crate::beta::fitted_line::LinePoint;
use crate::beta::BetaMethod;
use crate::error::Result;
use crate::report::format::{self, fixed, percent};
use crate::stats::least_squares::StdErrors;
use crate::valuation::{PeerResult, Valuation};

/// More points than this (a year of daily returns) are drawn lighter and smaller.
const DENSE_POINTS: usize = 250;

const WIDTH: u32 = 640;
const PLOT: u32 = 320;

/// Every peer's name as its regression chart's title draws it: at most 40 characters, no two
/// alike ([`distinct_middle`]), computed once for all the charts.
pub fn drawn_names(valuation: &Valuation) -> Vec<String> {
    let names: Vec<&str> = valuation.peers.iter().map(|p| p.name.as_str()).collect();
    distinct_middle(&names, 40)
}

/// The regression chart of peer `index`, whose title draws its name as `drawn_name` (from
/// [`drawn_names`]).
pub fn draw(valuation: &Valuation, (index, drawn_name): (usize, &str)) -> Result<Figure> {
    let peer = &valuation.peers[index];
    let returns = &valuation.returns[index];
    let (x, y) = (returns.market_excess(), returns.asset_excess());
    let line = &peer.fitted_line.points;
    let flagged = &peer.estimate.large_studentised_residual_rows;
    let (x_low, x_high) = extent(x.iter().copied());
    let (y_low, y_high) = extent(
        y.iter()
            .copied()
            .chain(line.iter().flat_map(|p| [p.low, p.high])),
    );
    let excess = if valuation.sampling.excess_returns {
        "excess return"
    } else {
        "return"
    };
    let axes = Axes {
        x: Scale::percent(x_low, x_high, 0.06, 7),
        y: Scale::percent(y_low, y_high, 0.06, 7),
        x_title: format!("Index {excess} {} (%)", per_period(valuation)),
        y_title: format!("Peer {excess} {} (%)", per_period(valuation)),
        left: 70,
        bottom: 50,
        y_ticks: true,
    };
    let name = super::regression_file_name(index, &peer.name);
    let title = format!("{}: regression on the index", peer.name);
    let caption = caption(valuation, peer, index);
    // Under Dimson or Scholes–Williams the line draws the summed β, which is not the fit to
    // these same-period points (found by review: it was called the fitted line).
    let line_label = match peer.estimate.method {
        BetaMethod::Ols => "fitted line α + β·x",
        BetaMethod::Dimson => "α + β·x, β the Dimson sum",
        BetaMethod::ScholesWilliams => "α + β·x, β of Scholes–Williams",
    };
    let mut legend = vec![
        (Mark::Dot(PRIMARY), format!("period used (N = {})", x.len())),
        (Mark::Line(ACCENT), line_label.to_string()),
        (Mark::Swatch(BAND), "95% band of the line".to_string()),
    ];
    // Always listed, so every peer's chart has the same legend and plot height.
    legend.push((
        Mark::Ring(FLAG),
        format!("|studentised residual| > 3 ({})", flagged.len()),
    ));
    // The drawn title fits the chart's width (a name cut with an ellipsis); the SVG's own
    // title and the report keep it whole.
    // Shortened in the middle, so peers whose names share a long start stay apart; the whole
    // name is the first title line's tooltip.
    let drawn = format!("{drawn_name}: regression on the index");
    let layout = Layout::new(WIDTH, PLOT, &drawn, &legend, &caption);
    let mut canvas = Canvas::new(&name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    if drawn != title {
        canvas.tooltip(&layout.title[0], &title);
    }
    axes.draw(&mut canvas, &layout)?;
    plot(&mut canvas, &layout, &axes, (&x, &y), line, flagged)?;
    let id = format!("regression-{:02}", index + 1);
    let description = format!("{caption} {}", data_summary(peer));
    Ok(Figure {
        kind: Kind::Regression,
        svg: canvas.finish(&id, &title, &description),
        file_name: name,
        title,
        caption,
        peer: Some(peer.name.clone()),
    })
}

/// The plot's layers: band, reference lines through zero, points, flagged rings, fitted line.
fn plot(
    canvas: &mut Canvas,
    layout: &Layout,
    axes: &Axes,
    (x, y): (&[f64], &[f64]),
    line: &[LinePoint],
    flagged: &[usize],
) -> Result<()> {
    plot_layer(canvas, layout, axes, "band", |chart| {
        let outline: Vec<(f64, f64)> = line
            .iter()
            .map(|p| (p.x, p.low))
            .chain(line.iter().rev().map(|p| (p.x, p.high)))
            .collect();
        chart.draw_series(std::iter::once(Polygon::new(outline, BAND.filled())))?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "reference", |chart| {
        // The axes through zero, where they fall inside the plot.
        let (xr, yr) = (&axes.x.range, &axes.y.range);
        let mut lines = Vec::new();
        if xr.contains(&0.0) {
            lines.push(vec![(0.0, yr.start), (0.0, yr.end)]);
        }
        if yr.contains(&0.0) {
            lines.push(vec![(xr.start, 0.0), (xr.end, 0.0)]);
        }
        chart.draw_series(
            lines
                .into_iter()
                .map(|l| PathElement::new(l, NEUTRAL.stroke_width(1))),
        )?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "points", |chart| {
        // Hundreds of daily returns overplot into one blot at full strength: lighter, smaller
        // dots let their density show.
        let (opacity, radius) = match x.len() > DENSE_POINTS {
            true => (0.35, 2),
            false => (0.8, 3),
        };
        let dot = PRIMARY.mix(opacity).filled();
        chart.draw_series(
            x.iter()
                .zip(y)
                .map(|(&a, &b)| Circle::new((a, b), radius, dot)),
        )?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "flagged", |chart| {
        let ring = FLAG.stroke_width(2);
        chart.draw_series(
            flagged
                .iter()
                .map(|&row| Circle::new((x[row], y[row]), 7, ring)),
        )?;
        Ok(())
    })?;
    plot_layer(canvas, layout, axes, "fitted-line", |chart| {
        chart.draw_series(std::iter::once(PathElement::new(
            line.iter().map(|p| (p.x, p.fitted)).collect::<Vec<_>>(),
            ACCENT.stroke_width(3),
        )))?;
        Ok(())
    })?;
    Ok(())
}

/// What the chart shows and where its numbers come from.
fn caption(valuation: &Valuation, peer: &PeerResult, index: usize) -> String {
    let e = &peer.estimate;
    let period = per_period(valuation).trim_start_matches("per ");
    let method = match e.method {
        BetaMethod::Ols => String::new(),
        BetaMethod::Dimson => {
            let offsets: Vec<String> = e
                .market_coefficients
                .iter()
                .map(|c| c.offset.to_string().replace('-', "\u{2212}"))
                .collect();
            format!(
                "β is the Dimson (1979) sum of the slopes on the index return at offsets {} \
                 ({period}s); the line draws that summed β against the same-period index return, \
                 so the points need not scatter evenly around it. ",
                offsets.join(", ")
            )
        }
        BetaMethod::ScholesWilliams => format!(
            "β is the Scholes–Williams (1977) estimate (b₋₁ + b₀ + b₊₁)/(1 + 2ρ), ρ = {}; the \
             line draws that summed β against the same-period index return. ",
            fixed(e.market_autocorrelation.unwrap_or(f64::NAN), 3)
        ),
    };
    let se = match e.std_errors {
        StdErrors::Classical => "classical".to_string(),
        StdErrors::Hc1 => "HC1 robust".to_string(),
        StdErrors::NeweyWest => {
            format!("Newey–West, {} lags", e.newey_west_lags.unwrap_or_default())
        }
    };
    let flagged = match e.large_studentised_residual_rows.len() {
        0 => "No point has an absolute studentised residual above 3. ".to_string(),
        1 => "The ringed point has an absolute studentised residual above 3. ".to_string(),
        k => format!("The {k} ringed points have absolute studentised residuals above 3. "),
    };
    format!(
        "One point per {period}: the peer's against the index's {}return (returns.csv). \
         {method}Line α + β·x with α = {}, β = {} (SE {}, {}), N = {}, R² = {}. The band is the 95% \
         confidence band of the fitted line (the mean response), from the covariance of α and β \
         with Student t on {} degrees of freedom, not a range for single {period}s. {flagged}\
         Figures: result.json peers[{index}].",
        if valuation.sampling.excess_returns {
            "excess "
        } else {
            ""
        },
        format::percent(e.alpha, 2),
        fixed(e.beta, 3),
        fixed(e.beta_std_error, 3),
        se,
        e.observations,
        fixed(e.r_squared, 2),
        e.degrees_of_freedom,
    )
}

/// A sentence a screen reader can use in place of the picture.
fn data_summary(peer: &PeerResult) -> String {
    let line = &peer.fitted_line.points;
    let (first, last) = (&line[0], &line[line.len() - 1]);
    format!(
        "The fitted line runs from {} at an index return of {} to {} at {}; the band there \
         spans {} to {} and {} to {}.",
        percent(first.fitted, 2),
        percent(first.x, 2),
        percent(last.fitted, 2),
        percent(last.x, 2),
        percent(first.low, 2),
        percent(first.high, 2),
        percent(last.low, 2),
        percent(last.high, 2),
    )
}
