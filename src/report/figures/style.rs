//! hurdle's look for charts: one palette and one type scale for every figure.
//!
//! The palette is built for print and for readers with any common colour-vision deficiency: data
//! are a deep blue, emphasis (the aggregate, the point estimate) an ochre, flagged points a plum
//! ring — blue against orange-brown survives protanopia, deuteranopia and greyscale print, and no
//! meaning rests on telling red from green. Marks also differ by shape, so colour is never the
//! only cue. Text uses the reader's system sans-serif, so the SVGs carry no font files.

use plotters::style::{Color, FontDesc, FontFamily, FontStyle, RGBColor, TextStyle};

/// The system font stack every label is set in.
pub const FONT_STACK: &str =
    "system-ui, -apple-system, 'Segoe UI', 'Helvetica Neue', Arial, 'Liberation Sans', sans-serif";

/// Body text, axis lines, totals.
pub const INK: RGBColor = RGBColor(0x1F, 0x29, 0x33);
/// Tick labels, captions, secondary text.
pub const MUTED: RGBColor = RGBColor(0x52, 0x60, 0x6D);
/// Grid lines and dividers.
pub const RULE: RGBColor = RGBColor(0xDD, 0xE2, 0xE8);
/// The page.
pub const PAPER: RGBColor = RGBColor(0xFF, 0xFF, 0xFF);
/// Data: points, estimates, the fitted line.
pub const PRIMARY: RGBColor = RGBColor(0x1F, 0x4E, 0x85);
/// Confidence bands.
pub const BAND: RGBColor = RGBColor(0xC9, 0xDA, 0xEE);
/// Emphasis: the aggregate, the point estimate, increases.
pub const ACCENT: RGBColor = RGBColor(0xB0, 0x5A, 0x00);
/// Flagged observations.
pub const FLAG: RGBColor = RGBColor(0x8C, 0x2A, 0x6E);
/// Histogram bars.
pub const BARS: RGBColor = RGBColor(0x9C, 0xB8, 0xD9);
/// Reference lines and residues.
pub const NEUTRAL: RGBColor = RGBColor(0x8D, 0x99, 0xA6);

/// The heat map's single-hue scale, light to dark through a middle blue (monotone in
/// lightness, so it reads in greyscale too).
pub const HEAT: [RGBColor; 3] = [
    RGBColor(0xEE, 0xF4, 0xFB),
    RGBColor(0x7E, 0xA6, 0xD2),
    RGBColor(0x15, 0x3B, 0x68),
];

/// Type sizes in CSS pixels (not 13 or 15: plotters cannot write those exactly, see the tests).
pub const TITLE: f64 = 17.0;
pub const LABEL: f64 = 14.0;
pub const TICK: f64 = 12.0;
pub const CAPTION: f64 = 12.0;
pub const SMALL: f64 = 11.0;

/// Space around a chart, in pixels.
pub const MARGIN: i32 = 16;

/// The text style of `px` pixels in `colour`. plotters writes font-size as size / 1.24, so the
/// size handed over is the one that comes back as exactly `px` in the SVG.
pub fn text<C: Color>(px: f64, colour: &C) -> TextStyle<'static> {
    font(px, FontStyle::Normal).color(colour)
}

/// Bold text of `px` pixels.
pub fn bold<C: Color>(px: f64, colour: &C) -> TextStyle<'static> {
    font(px, FontStyle::Bold).color(colour)
}

fn font(px: f64, style: FontStyle) -> FontDesc<'static> {
    let mut size = px * 1.24;
    // Nudge by an ulp or two until size / 1.24 prints as px (no "13.000000000000002").
    for _ in 0..4 {
        let back = size / 1.24;
        if back == px {
            break;
        }
        size = if back > px {
            f64::from_bits(size.to_bits() - 1)
        } else {
            f64::from_bits(size.to_bits() + 1)
        };
    }
    FontDesc::new(FontFamily::Name(FONT_STACK), size, style)
}

/// The colour a fraction `t` (0 to 1) of the way along the heat scale.
pub fn heat(t: f64) -> RGBColor {
    let t = t.clamp(0.0, 1.0) * 2.0;
    let (from, to, f) = if t <= 1.0 {
        (HEAT[0], HEAT[1], t)
    } else {
        (HEAT[1], HEAT[2], t - 1.0)
    };
    let mix = |a: u8, b: u8| (f64::from(a) + (f64::from(b) - f64::from(a)) * f).round() as u8;
    RGBColor(mix(from.0, to.0), mix(from.1, to.1), mix(from.2, to.2))
}

/// Relative luminance of a colour (WCAG 2.1, §1.4.3's definition).
fn luminance(colour: &RGBColor) -> f64 {
    let channel = |c: u8| {
        let v = f64::from(c) / 255.0;
        if v <= 0.04045 {
            v / 12.92
        } else {
            ((v + 0.055) / 1.055).powf(2.4)
        }
    };
    0.2126 * channel(colour.0) + 0.7152 * channel(colour.1) + 0.0722 * channel(colour.2)
}

/// Whether text on `background` should be paper-white rather than ink: whichever has the
/// higher contrast ratio with it, (L₁ + 0.05) / (L₂ + 0.05) (WCAG 2.1).
pub fn needs_light_text(background: &RGBColor) -> bool {
    let ratio = |a: f64, b: f64| (a.max(b) + 0.05) / (a.min(b) + 0.05);
    let l = luminance(background);
    ratio(l, luminance(&PAPER)) > ratio(l, luminance(&INK))
}

#[cfg(test)]
mod tests {
    use super::*;

    // WCAG 2.1 contrast ratio (L1 + 0.05)/(L2 + 0.05): the data and text colours must reach
    // 4.5:1 on white (the level for normal text), so print and screen stay legible.
    #[test]
    fn text_colours_meet_the_wcag_contrast_level_on_paper() {
        let luminance = |c: &RGBColor| {
            let ch = |v: u8| {
                let v = f64::from(v) / 255.0;
                if v <= 0.04045 {
                    v / 12.92
                } else {
                    ((v + 0.055) / 1.055).powf(2.4)
                }
            };
            0.2126 * ch(c.0) + 0.7152 * ch(c.1) + 0.0722 * ch(c.2)
        };
        for colour in [INK, MUTED, PRIMARY, ACCENT, FLAG] {
            let ratio = 1.05 / (luminance(&colour) + 0.05);
            assert!(ratio >= 4.5, "{colour:?}: {ratio}");
        }
        assert!(!needs_light_text(&HEAT[0]) && needs_light_text(&HEAT[2]));
        // A mid blue of the scale (#547CA8, relative luminance about 0.19 by WCAG's formula):
        // white gives about 4.3:1, the ink about 3.4:1 (worked by hand), so white text.
        assert!(needs_light_text(&RGBColor(0x54, 0x7C, 0xA8)));
    }

    // No double s has s / 1.24 == 13 or 15 exactly, so the scale avoids those two sizes.
    #[test]
    fn sizes_come_back_exact() {
        for px in [TITLE, LABEL, TICK, CAPTION, SMALL, 16.0] {
            let style = text(px, &INK);
            assert_eq!(style.font.get_size() / 1.24, px);
        }
    }
}
