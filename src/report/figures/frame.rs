//! What every chart shares around its plot: the title, a legend row, the caption, and the
//! split of the canvas into those bands.
//!
//! Legends are drawn as plain marks and words above the plot rather than as a box over it, so
//! they never hide a point; captions are wrapped to the chart's width, so the SVG file read on
//! its own says what it shows and where its numbers come from.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::canvas::{wrap, Area, Drawn};
use super::style::{self, INK, MUTED};

/// Vertical space of a title line, a legend line and a caption line, in pixels.
pub const TITLE_LINE: u32 = 22;
pub const LEGEND_BAND: u32 = 22;
pub const CAPTION_LINE: u32 = 16;

/// The bands of a chart, top to bottom: header (title and legend), plot, caption.
#[derive(Debug, Clone)]
pub struct Layout {
    pub width: u32,
    pub header: u32,
    pub plot: u32,
    pub title: Vec<String>,
    /// The legend items of each legend line (indices into the items given).
    pub legend: Vec<Vec<usize>>,
    pub caption: Vec<String>,
}

/// Estimated advance of one character, in em: wide enough for the common system sans-serifs
/// (DejaVu Sans, the widest of them, averages about 0.6 em), so wrapped text never overruns.
pub const CHAR_EM: f64 = 0.6;

/// How many characters of `px` text fit in `pixels` (bold text: `px` × 1.04, see the title).
pub fn fit(pixels: f64, px: f64) -> usize {
    (pixels / (px * CHAR_EM)).floor().max(1.0) as usize
}

/// The estimated width in pixels of `text` at `px`.
pub fn text_width(text: &str, px: f64) -> i32 {
    (text.chars().count() as f64 * px * CHAR_EM).ceil() as i32
}

/// Width of a legend entry: the mark, a gap, the label, and the space before the next.
fn entry_width(label: &str) -> i32 {
    14 + text_width(label, style::SMALL) + 22
}

impl Layout {
    /// A layout of `width` with a plot band of `plot` pixels, the title and `legend` wrapped
    /// to the width above it and the caption wrapped below.
    pub fn new(
        width: u32,
        plot: u32,
        title: &str,
        legend: &[(Mark, String)],
        caption: &str,
    ) -> Layout {
        let inner = f64::from(width) - 2.0 * f64::from(style::MARGIN);
        let title = wrap(title, fit(inner, style::TITLE * 1.04));
        let mut rows: Vec<Vec<usize>> = Vec::new();
        let mut used = inner as i32;
        for (i, (_, label)) in legend.iter().enumerate() {
            let w = entry_width(label);
            if used + w > inner as i32 {
                rows.push(Vec::new());
                used = 0;
            }
            used += w;
            rows.last_mut().expect("a row was pushed").push(i);
        }
        Layout {
            width,
            header: 10 + TITLE_LINE * title.len() as u32 + LEGEND_BAND * rows.len() as u32 + 8,
            plot,
            title,
            legend: rows,
            caption: wrap(caption, fit(inner, style::CAPTION)),
        }
    }

    /// The total height.
    pub fn height(&self) -> u32 {
        self.header + self.plot + self.caption_height()
    }

    fn caption_height(&self) -> u32 {
        12 + CAPTION_LINE * self.caption.len() as u32 + 10
    }

    /// The header, plot and caption areas of `root`.
    pub fn split<'a>(&self, root: &Area<'a>) -> (Area<'a>, Area<'a>, Area<'a>) {
        let (header, rest) = root.split_vertically(self.header);
        let (plot, caption) = rest.split_vertically(self.plot);
        (header, plot, caption)
    }

    /// Draws the title lines and the legend `items` (the ones given to [`Layout::new`]).
    pub fn header(&self, area: &Area, items: &[(Mark, String)]) -> Drawn {
        let margin = style::MARGIN;
        let top = style::bold(style::TITLE, &INK).pos(Pos::new(HPos::Left, VPos::Top));
        for (i, line) in self.title.iter().enumerate() {
            area.draw_text(line, &top, (margin, 10 + TITLE_LINE as i32 * i as i32))?;
        }
        let label = style::text(style::SMALL, &MUTED).pos(Pos::new(HPos::Left, VPos::Center));
        let first = 10 + TITLE_LINE as i32 * self.title.len() as i32 + 4;
        for (row, entries) in self.legend.iter().enumerate() {
            let y = first + LEGEND_BAND as i32 * row as i32 + LEGEND_BAND as i32 / 2;
            let mut x = margin + 9;
            for &i in entries {
                let (mark, text) = &items[i];
                draw_mark(area, *mark, (x, y))?;
                area.draw_text(text, &label, (x + 14, y))?;
                x += entry_width(text);
            }
        }
        Ok(())
    }

    /// Draws the chart's frame: paper, header, and the caption under a hairline.
    pub fn frame(&self, root: &Area, items: &[(Mark, String)]) -> Drawn {
        root.fill(&style::PAPER)?;
        let (header, _, footer) = self.split(root);
        self.header(&header, items)?;
        footer.draw(&PathElement::new(
            vec![(style::MARGIN, 4), (self.width as i32 - style::MARGIN, 4)],
            style::RULE.stroke_width(1),
        ))?;
        let line_style = style::text(style::CAPTION, &MUTED).pos(Pos::new(HPos::Left, VPos::Top));
        for (i, line) in self.caption.iter().enumerate() {
            footer.draw_text(
                line,
                &line_style,
                (style::MARGIN, 12 + CAPTION_LINE as i32 * i as i32),
            )?;
        }
        Ok(())
    }
}

/// A legend mark.
#[derive(Debug, Clone, Copy)]
pub enum Mark {
    Dot(RGBColor),
    Ring(RGBColor),
    Line(RGBColor),
    Dashed(RGBColor),
    Swatch(RGBColor),
    Triangle(RGBColor),
    Square(RGBColor),
    Interval(RGBColor),
}

/// Draws `mark` centred at `(x, y)`.
pub fn draw_mark(area: &Area, mark: Mark, (x, y): (i32, i32)) -> Drawn {
    match mark {
        Mark::Dot(c) => area.draw(&Circle::new((x, y), 4, c.filled())),
        Mark::Ring(c) => area.draw(&Circle::new((x, y), 6, c.stroke_width(2))),
        Mark::Line(c) => area.draw(&PathElement::new(
            vec![(x - 9, y), (x + 9, y)],
            c.stroke_width(2),
        )),
        Mark::Dashed(c) => {
            for (a, b) in [(-9, -4), (-1, 3), (6, 9)] {
                area.draw(&PathElement::new(
                    vec![(x + a, y), (x + b, y)],
                    c.stroke_width(2),
                ))?;
            }
            Ok(())
        }
        Mark::Swatch(c) => area.draw(&Rectangle::new(
            [(x - 9, y - 6), (x + 9, y + 6)],
            c.filled(),
        )),
        Mark::Triangle(c) => area.draw(&(EmptyElement::at((x, y)) + triangle(c))),
        Mark::Square(c) => area.draw(&(EmptyElement::at((x, y)) + square(c))),
        Mark::Interval(c) => {
            area.draw(&PathElement::new(
                vec![(x - 9, y), (x + 9, y)],
                c.stroke_width(2),
            ))?;
            for end in [x - 9, x + 9] {
                area.draw(&PathElement::new(
                    vec![(end, y - 4), (end, y + 4)],
                    c.stroke_width(2),
                ))?;
            }
            Ok(())
        }
    }
}

/// A hollow triangle about a point, in pixel offsets (the marker of the beta used).
pub fn triangle(colour: RGBColor) -> PathElement<(i32, i32)> {
    PathElement::new(
        vec![(0, -7), (6, 4), (-6, 4), (0, -7)],
        colour.stroke_width(2),
    )
}

/// A hollow square about a point, in pixel offsets (the marker of the unlevered beta).
pub fn square(colour: RGBColor) -> Rectangle<(i32, i32)> {
    Rectangle::new([(-5, -5), (5, 5)], colour.stroke_width(2))
}
