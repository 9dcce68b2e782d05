//! Chart 3: each peer's rolling beta through the estimation window with its 95% band, one
//! small panel per peer on a shared beta scale, and the peer's whole-window beta as a dashed
//! line for reference.
//!
//! The rolling betas are the library's ([`crate::beta::rolling`]): the case's own estimator and
//! standard errors in every window, so a thinly traded peer's panel is not biased low. Each
//! panel's layers carry the class `panel-N` (N from 1, in peer order).

mod time_axis;

use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use plotters::style::FontTransform;

use super::axes::{Axes, Chart, Scale};
use super::canvas::{distinct_middle, Area, Canvas, Drawn};
use super::frame::{fit, Layout, Mark};
use super::style::{self, ACCENT, BAND, INK, MUTED, PRIMARY};
use super::{Figure, Kind};
use crate::beta::rolling::RollingPoint;
use crate::error::Result;
use crate::report::format::fixed;
use crate::valuation::Valuation;
use chrono::NaiveDate;
use time_axis::year;

const WIDTH: u32 = 720;
const PANEL_HEIGHT: u32 = 190;
/// Room for the shared axis titles: below the panels, and left of them.
const X_TITLE: u32 = 26;
const Y_TITLE: u32 = 22;

/// A shared scale wider than this many times the median peer's own range would squash most
/// panels into a sliver to show one peer's extremes: each panel then gets its own scale.
const SHARED_SCALE_LIMIT: f64 = 4.0;

/// The band of a panel's y labels, in pixels, and the padding of its time axis (a share of the
/// span on each side).
const PANEL_LEFT: u32 = 44;
const TIME_PAD: f64 = 0.02;

/// Panels side by side: two, or one for a single peer.
fn columns(valuation: &Valuation) -> usize {
    if valuation.peers.len() > 1 {
        2
    } else {
        1
    }
}

/// Whether the chart has a line to draw: a peer with two rolling windows at least. A rolling
/// window as long as the estimation window leaves one window a peer, and nothing to draw.
pub fn has_lines(valuation: &Valuation) -> bool {
    valuation.rolling.iter().any(|points| points.len() >= 2)
}

/// The β range of one peer's panel: its bands and its whole-window β.
fn beta_range(points: &[RollingPoint], whole: f64) -> (f64, f64) {
    (points.iter().flat_map(|p| [p.band_low, p.band_high]))
        .chain(std::iter::once(whole))
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), v| {
            (lo.min(v), hi.max(v))
        })
}

/// Each panel's scale, and whether they are one shared scale: the years of the window ends, and
/// the bands and whole-window βs of every peer, unless one peer's range would make the shared
/// scale more than [`SHARED_SCALE_LIMIT`] times the median peer's range (then each its own).
fn panel_axes(valuation: &Valuation) -> (Vec<Axes>, bool) {
    let peers = &valuation.peers;
    let (first, last) = valuation.rolling.iter().flatten().fold(
        (f64::INFINITY, f64::NEG_INFINITY),
        |(lo, hi), p| {
            let x = year(p.window_end);
            (lo.min(x), hi.max(x))
        },
    );
    let ranges: Vec<(f64, f64)> = (peers.iter().zip(&valuation.rolling))
        .map(|(peer, points)| beta_range(points, peer.estimate.beta))
        .collect();
    let (low, high) = ranges
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), r| {
            (lo.min(r.0), hi.max(r.1))
        });
    let mut spans: Vec<f64> = ranges.iter().map(|(lo, hi)| hi - lo).collect();
    spans.sort_by(f64::total_cmp);
    let median_span = spans.get(spans.len() / 2).copied().unwrap_or(0.0);
    let shared = !(median_span > 0.0 && high - low > SHARED_SCALE_LIMIT * median_span);
    // The time labels fit the width of one panel's plot (the grid right of the y axis title,
    // split into the columns).
    let panel = (WIDTH - Y_TITLE) / columns(valuation) as u32;
    let pixels = f64::from(super::axes::plot_width(panel, PANEL_LEFT));
    let pixels_per_year = pixels / ((last - first) * (1.0 + 2.0 * TIME_PAD));
    let ticks = time_axis::ticks(first, last, pixels_per_year);
    let axes = |(low, high): (f64, f64)| Axes {
        x: Scale::labelled(first, last, TIME_PAD, ticks.clone()),
        y: Scale::plain(low, high, 0.05, 6),
        x_title: String::new(),
        y_title: String::new(),
        left: PANEL_LEFT,
        bottom: 24,
        y_ticks: true,
    };
    let each = match shared {
        true => ranges.iter().map(|_| axes((low, high))).collect(),
        false => ranges.into_iter().map(axes).collect(),
    };
    (each, shared)
}

/// The most panels one chart holds: more peers go on in `stability-2.svg`, … (four rows of two
/// panels of 190 px, with the title, legend and caption bands, make a chart of about 1,000 px by
/// 720 that prints at about nine tenths of the page width under the print styles' 240 mm cap;
/// a larger set, squeezed onto one page, printed at a quarter of that).
const PANELS_PER_PART: usize = 8;

/// The rolling-beta chart: one figure, or with more than [`PANELS_PER_PART`] peers several
/// parts (`stability.svg`, `stability-2.svg`, …) on the same scales.
pub fn draw(valuation: &Valuation) -> Result<Vec<Figure>> {
    let count = valuation.peers.len().div_ceil(PANELS_PER_PART).max(1);
    let (axes, shared) = panel_axes(valuation);
    (0..count)
        .map(|k| draw_part(valuation, (&axes, shared), (k, count)))
        .collect()
}

/// The file name of part `k` (from 0): `stability.svg`, then `stability-2.svg`, ….
pub fn part_name(k: usize) -> String {
    match k {
        0 => super::STABILITY.to_string(),
        k => format!("{}{}.svg", super::STABILITY_PART_PREFIX, k + 1),
    }
}

/// A part's title and caption: the chart's, with the part's place among the parts when there
/// are several.
fn part_words(
    valuation: &Valuation,
    shared: bool,
    (k, count): (usize, usize),
    (first, last): (usize, usize),
) -> (String, String) {
    let peers = &valuation.peers;
    let window = valuation.sampling.rolling_window;
    let mut title = format!(
        "Rolling {} betas through the window",
        super::method_name(valuation.estimator.method)
    );
    let step = valuation.settings.beta.rolling_step;
    let mut caption = caption(valuation, window, step, shared);
    if count > 1 {
        title.push_str(&format!(" (part {} of {count})", k + 1));
        caption.push_str(&format!(
            " Part {} of {count}: peers {} to {} of {}{}.",
            k + 1,
            first + 1,
            last,
            peers.len(),
            match shared {
                true => ", on the same scales as the other parts",
                false => "",
            }
        ));
    }
    (title, caption)
}

/// The titles of the time axis and the beta axis, shared by every panel.
fn axis_titles(valuation: &Valuation, layout: &Layout, root: &Area) -> Drawn {
    let (_, plot, _) = layout.split(root);
    let (width, height) = plot.dim_in_pixel();
    let title = style::text(style::LABEL, &INK);
    plot.draw_text(
        &format!(
            "End of the window (year and month), {} returns",
            crate::report::format::label(&valuation.sampling.frequency)
        ),
        &title.pos(Pos::new(HPos::Center, VPos::Bottom)),
        (width as i32 / 2, height as i32 - 4),
    )?;
    plot.draw_text(
        "Equity beta",
        &title
            .transform(FontTransform::Rotate270)
            .pos(Pos::new(HPos::Center, VPos::Top)),
        (4, (height - X_TITLE) as i32 / 2),
    )
}

/// Part `k` of `count`: the panels of peers `k · PANELS_PER_PART` onward.
fn draw_part(
    valuation: &Valuation,
    (axes, shared): (&[Axes], bool),
    (k, count): (usize, usize),
) -> Result<Figure> {
    let peers = &valuation.peers;
    let first = k * PANELS_PER_PART;
    let last = (first + PANELS_PER_PART).min(peers.len());
    let columns = columns(valuation);
    let panel_rows = (last - first).div_ceil(columns);
    let (title, caption) = part_words(valuation, shared, (k, count), (first, last));
    let legend = vec![
        (Mark::Line(PRIMARY), "rolling β".to_string()),
        (Mark::Swatch(BAND), "95% interval, β ± t·SE".to_string()),
        (Mark::Dashed(ACCENT), "β over the whole window".to_string()),
    ];
    let layout = Layout::new(
        WIDTH,
        PANEL_HEIGHT * panel_rows as u32 + X_TITLE + 8,
        &title,
        &legend,
        &caption,
    );
    let name = part_name(k);
    let mut canvas = Canvas::new(&name, WIDTH, layout.height());
    canvas.layer("frame", |root| layout.frame(root, &legend))?;
    canvas.layer("axis-titles", |root| axis_titles(valuation, &layout, root))?;
    let names: Vec<&str> = peers.iter().map(|p| p.name.as_str()).collect();
    let grid = Panels {
        layout: &layout,
        axes,
        rows: panel_rows,
        columns,
        first,
        names: &names,
        titles: std::cell::OnceCell::new(),
    };
    let panels = peers.iter().zip(&valuation.rolling).enumerate();
    for (i, (peer, points)) in panels.take(last).skip(first) {
        grid.frame(&mut canvas, i, &peer.name, points.len())?;
        let skipped = (peer.stability.as_ref()).map_or(&[][..], |s| &s.skipped_window_ends[..]);
        grid.data(&mut canvas, i, peer.estimate.beta, &runs(points, skipped))?;
    }
    let description = format!("{caption} {}", data_summary(&peers[first..last]));
    let id = match k {
        0 => "stability".to_string(),
        k => format!("stability-{}", k + 1),
    };
    Ok(Figure {
        kind: Kind::Stability,
        svg: canvas.finish(&id, &title, &description),
        file_name: name,
        title,
        caption,
        peer: None,
    })
}

/// The grid of small panels in the plot band, one per peer in peer order, from peer `first`.
struct Panels<'a> {
    layout: &'a Layout,
    /// Peer i's scale (every peer's, not only this part's).
    axes: &'a [Axes],
    rows: usize,
    columns: usize,
    first: usize,
    /// Every peer's name, in case order, so no two panel titles read alike.
    names: &'a [&'a str],
    /// The titles as drawn, told apart once (every panel has the same width).
    titles: std::cell::OnceCell<Vec<String>>,
}

impl Panels<'_> {
    /// Draws one layer (class `{class} panel-{i + 1}`) of panel `i`: `draw` gets the panel's
    /// title band and its plot.
    fn layer(
        &self,
        canvas: &mut Canvas,
        i: usize,
        class: &str,
        draw: &dyn Fn(&Area, &mut Chart) -> Drawn,
    ) -> Result<()> {
        canvas.layer(&format!("{class} panel-{}", i + 1), |root| {
            let (_, plot, _) = self.layout.split(root);
            let (height, width) = (plot.dim_in_pixel().1, plot.dim_in_pixel().0);
            let (grid, _) = plot.split_vertically(height - X_TITLE);
            let (_, grid) = grid.split_horizontally(Y_TITLE.min(width));
            let panels = grid.split_evenly((self.rows, self.columns));
            let (title_band, body) = panels[i - self.first].split_vertically(22);
            let mut chart = self.axes[i].chart(&body)?;
            draw(&title_band, &mut chart)
        })
    }

    /// Panel `i`'s title, grid and axes, and why it draws no line when it has fewer than two
    /// of the `windows`.
    fn frame(&self, canvas: &mut Canvas, i: usize, name: &str, windows: usize) -> Result<()> {
        let shown = std::cell::RefCell::new(String::new());
        self.layer(canvas, i, "panel-title", &|band, _| {
            let name_style = style::bold(style::LABEL, &INK).pos(Pos::new(HPos::Left, VPos::Top));
            // A longer name is shortened in the middle to the panel's width by the estimated
            // advance of bold characters (frame.rs, as for the chart's title), whole in the
            // tooltip and the description.
            let room = f64::from(band.dim_in_pixel().0) - 2.0 * f64::from(style::MARGIN);
            let width = fit(room, style::LABEL * 1.04);
            let text = self
                .titles
                .get_or_init(|| distinct_middle(self.names, width))[i]
                .clone();
            band.draw_text(&text, &name_style, (style::MARGIN, 4))?;
            *shown.borrow_mut() = text;
            let why = match windows {
                0 => "no window with enough observations",
                1 => "one window only: no line over time",
                _ => "",
            };
            if !why.is_empty() {
                // Inside the plot, right of the y axis's labels.
                let note = style::text(style::SMALL, &MUTED).pos(Pos::new(HPos::Left, VPos::Top));
                band.draw_text(
                    why,
                    &note,
                    (style::MARGIN + self.axes[i].left as i32 + 8, 60),
                )?;
            }
            Ok(())
        })?;
        canvas.tooltip(&shown.into_inner(), name);
        self.layer(canvas, i, "grid", &|_, chart| {
            chart
                .configure_mesh()
                .disable_axes()
                .bold_line_style(style::RULE.stroke_width(1))
                .light_line_style(TRANSPARENT)
                .label_style(style::text(style::TICK, &RGBAColor(0, 0, 0, 0.0)))
                .draw()
        })?;
        let x_format = |v: &f64| self.axes[i].x.label(*v);
        self.layer(canvas, i, "x-axis", &|_, chart| {
            chart
                .configure_mesh()
                .disable_mesh()
                .disable_y_axis()
                .y_labels(0)
                .axis_style(MUTED.stroke_width(1))
                .label_style(style::text(style::SMALL, &MUTED))
                .x_label_formatter(&x_format)
                .draw()
        })?;
        let y_format = |v: &f64| self.axes[i].y.label(*v);
        self.layer(canvas, i, "y-axis", &|_, chart| {
            chart
                .configure_mesh()
                .disable_mesh()
                .disable_x_axis()
                .x_labels(0)
                .axis_style(MUTED.stroke_width(1))
                .label_style(style::text(style::SMALL, &MUTED))
                .y_label_formatter(&y_format)
                .draw()
        })
    }

    /// Panel `i`'s band, whole-window beta and rolling betas, each run of windows without a
    /// skipped one between them drawn apart.
    fn data(
        &self,
        canvas: &mut Canvas,
        i: usize,
        beta: f64,
        runs: &[&[RollingPoint]],
    ) -> Result<()> {
        // One window is a point, not a line over time: the panel says so instead (`frame`).
        let windows: usize = runs.iter().map(|r| r.len()).sum();
        let runs = if windows >= 2 { runs } else { &[] };
        self.layer(canvas, i, "band", &|_, chart| {
            runs.iter().try_for_each(|run| match run {
                // A window alone: its interval as a bar (a band of one point has no width).
                [only] => {
                    let x = year(only.window_end);
                    chart.draw_series(std::iter::once(PathElement::new(
                        vec![(x, only.band_low), (x, only.band_high)],
                        BAND.stroke_width(6),
                    )))?;
                    Ok(())
                }
                _ => draw_band(chart, run),
            })
        })?;
        let (x0, x1) = (self.axes[i].x.range.start, self.axes[i].x.range.end);
        self.layer(canvas, i, "full-window-beta", &|_, chart| {
            chart.draw_series(std::iter::once(DashedPathElement::new(
                vec![(x0, beta), (x1, beta)],
                6,
                4,
                ACCENT.stroke_width(2),
            )))?;
            Ok(())
        })?;
        self.layer(canvas, i, "rolling-beta", &|_, chart| {
            for run in runs {
                // A window alone between skipped ones is a dot: a line needs two.
                if let [only] = run {
                    chart.draw_series(std::iter::once(Circle::new(
                        (year(only.window_end), only.beta),
                        2,
                        PRIMARY.filled(),
                    )))?;
                    continue;
                }
                chart.draw_series(std::iter::once(PathElement::new(
                    run.iter()
                        .map(|p| (year(p.window_end), p.beta))
                        .collect::<Vec<_>>(),
                    PRIMARY.stroke_width(2),
                )))?;
            }
            Ok(())
        })
    }
}

/// `points` cut where a skipped window's end lies between two of them (found by review: the
/// line and band were drawn straight across 13 skipped windows, hiding the gap).
fn runs<'a>(points: &'a [RollingPoint], skipped: &[NaiveDate]) -> Vec<&'a [RollingPoint]> {
    let mut runs = Vec::new();
    let mut start = 0;
    for k in 1..points.len() {
        let (before, after) = (points[k - 1].window_end, points[k].window_end);
        if skipped.iter().any(|&s| before < s && s < after) {
            runs.push(&points[start..k]);
            start = k;
        }
    }
    if start < points.len() {
        runs.push(&points[start..]);
    }
    runs
}

fn draw_band(chart: &mut Chart, points: &[RollingPoint]) -> Drawn {
    if points.is_empty() {
        return Ok(());
    }
    let outline: Vec<(f64, f64)> = points
        .iter()
        .map(|p| (year(p.window_end), p.band_low))
        .chain(
            points
                .iter()
                .rev()
                .map(|p| (year(p.window_end), p.band_high)),
        )
        .collect();
    chart.draw_series(std::iter::once(Polygon::new(outline, BAND.filled())))?;
    Ok(())
}

/// The peers whose rolling bands reach the two ends of the shared range (what would squash a
/// shared scale), each with its end, and whether it is left out of the aggregate.
fn widest(valuation: &Valuation) -> String {
    let ranges: Vec<_> = (valuation.peers.iter().zip(&valuation.rolling))
        .map(|(peer, points)| (peer, beta_range(points, peer.estimate.beta)))
        .collect();
    let lowest = ranges.iter().min_by(|a, b| a.1 .0.total_cmp(&b.1 .0));
    let highest = ranges.iter().max_by(|a, b| a.1 .1.total_cmp(&b.1 .1));
    let (Some((low_peer, (low, _))), Some((high_peer, (_, high)))) = (lowest, highest) else {
        return "one peer".to_string();
    };
    let left_out = |peer: &crate::valuation::PeerResult| match peer.excluded_reason {
        Some(_) => ", left out of the aggregate",
        None => "",
    };
    if low_peer.name == high_peer.name {
        return format!(
            "the band of {} ({} to {}{})",
            low_peer.name,
            fixed(*low, 2),
            fixed(*high, 2),
            left_out(low_peer)
        );
    }
    format!(
        "the bands of {} (down to {}{}) and {} (up to {}{})",
        low_peer.name,
        fixed(*low, 2),
        left_out(low_peer),
        high_peer.name,
        fixed(*high, 2),
        left_out(high_peer)
    )
}

fn caption(valuation: &Valuation, window: u32, step: u32, shared: bool) -> String {
    // Said when a line has a gap (found by review: breaks and lone dots went unexplained).
    let skipped = (valuation.peers.iter())
        .filter_map(|p| p.stability.as_ref())
        .any(|s| !s.skipped_window_ends.is_empty());
    let gaps = match skipped {
        true => {
            " A line breaks where windows were skipped (too few returns, or an index or a peer \
             that does not move in them; peers[].stability.skipped_window_ends); a window alone \
             between skipped ones is a dot, its interval a bar."
        }
        false => "",
    };
    let scale = match shared {
        true => "all panels share one β scale".to_string(),
        false => format!(
            "each panel has a β scale of its own, since {} would squash the others on a \
             shared one: compare panels by their axes",
            widest(valuation)
        ),
    };
    let period = super::per_period(valuation).trim_start_matches("per ");
    format!(
        "Each panel: the peer's rolling β ({} estimator with {} standard errors, as for the \
         whole window) over windows of {} {period}s ending every {}, with each window's 95% \
         interval β ± t(0.975, N − k)·SE as the band; the dashed line is the peer's β over the whole window. The x axis is \
         the window's last {period}, marked at the ends of months, quarters or half-years, each \
         tick labelled with the month it ends, or at the starts of years (every 2, 5, 10 or more \
         years on a long span), each labelled with the year it begins, as finely as the labels \
         fit; {scale}.{gaps} Figures: the rolling \
         betas (hurdle run and hurdle rolling write every window to rolling.csv) and result.json peers[].beta \
         and peers[].stability.",
        super::method_name(valuation.estimator.method),
        super::std_errors_name(valuation.estimator.std_errors),
        window,
        if step == 1 {
            period.to_string()
        } else {
            format!("{step} {period}s")
        },
    )
}

fn data_summary(peers: &[crate::valuation::PeerResult]) -> String {
    peers
        .iter()
        .map(|p| match &p.stability {
            Some(s) => format!(
                "{}: {} of {} windows, rolling β from {} to {}, first {}, last {}.",
                p.name,
                s.windows,
                s.windows_laid,
                fixed(s.min, 3),
                fixed(s.max, 3),
                fixed(s.first, 3),
                fixed(s.last, 3)
            ),
            None => format!("{}: fewer than two windows.", p.name),
        })
        .collect::<Vec<_>>()
        .join(" ")
}
