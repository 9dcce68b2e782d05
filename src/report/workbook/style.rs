//! The workbook's look: number formats and the three kinds of cell a reader must tell apart.
//!
//! Inputs that may be changed are pale yellow with blue figures; formulas are plain; figures
//! hurdle computed that a spreadsheet function cannot reproduce are grey and italic with a note.
//! Rates show as percentages, premiums and spreads also in basis points, betas with three
//! decimals. The formats live here so every sheet shows a figure the same way.

use rust_xlsxwriter::{Color, Format, FormatAlign, FormatBorder};

/// The formats of the workbook.
pub struct Styles {
    pub title: Format,
    pub subtitle: Format,
    pub header: Format,
    pub label: Format,
    pub text: Format,
    pub wrap: Format,
    pub mono: Format,
    pub date: Format,
    pub percent: Format,
    pub percent_input: Format,
    pub return_pct: Format,
    pub basis_points: Format,
    pub beta: Format,
    pub beta_input: Format,
    pub ratio: Format,
    pub ratio_input: Format,
    pub amount_input: Format,
    pub count: Format,
    pub statistic: Format,
    pub p_value: Format,
    pub flag: Format,
    /// An Aggregated flag: an input (1 or 0), styled as one.
    pub flag_input: Format,
}

const INPUT_FILL: u32 = 0xFFF4C2;
const INPUT_FONT: u32 = 0x1F4E9B;
const COMPUTED_FILL: u32 = 0xE7E6E6;
const HEADER_FILL: u32 = 0xDCE6F0;

impl Styles {
    pub fn new() -> Styles {
        let input = |format: Format| {
            format
                .set_background_color(Color::RGB(INPUT_FILL))
                .set_font_color(Color::RGB(INPUT_FONT))
                .set_border(FormatBorder::Thin)
                .set_border_color(Color::RGB(0xBFBFBF))
        };
        let percent = Format::new().set_num_format("0.00%");
        let beta = Format::new().set_num_format("0.000");
        let ratio = Format::new().set_num_format("0.000");
        Styles {
            title: Format::new().set_bold().set_font_size(14),
            subtitle: Format::new().set_bold().set_font_size(11),
            header: Format::new()
                .set_bold()
                .set_text_wrap()
                .set_align(FormatAlign::Top)
                .set_background_color(Color::RGB(HEADER_FILL))
                .set_border_bottom(FormatBorder::Thin),
            label: Format::new(),
            text: Format::new(),
            wrap: Format::new().set_text_wrap().set_align(FormatAlign::Top),
            mono: Format::new().set_font_name("Consolas").set_font_size(9),
            date: Format::new().set_num_format("yyyy-mm-dd"),
            percent_input: input(percent.clone()),
            percent,
            return_pct: Format::new().set_num_format("0.0000%"),
            basis_points: Format::new().set_num_format("0.0\" bp\""),
            beta_input: input(beta.clone()),
            beta,
            ratio_input: input(ratio.clone()),
            ratio,
            amount_input: input(Format::new().set_num_format("#,##0.0")),
            count: Format::new().set_num_format("0"),
            statistic: Format::new().set_num_format("0.00"),
            p_value: Format::new().set_num_format("0.0000"),
            flag_input: input(
                Format::new()
                    .set_num_format("0")
                    .set_align(FormatAlign::Center),
            ),
            flag: Format::new()
                .set_num_format("0")
                .set_align(FormatAlign::Center),
        }
    }

    /// `format` marked as a figure computed by hurdle rather than by a formula.
    pub fn computed(&self, format: &Format) -> Format {
        format
            .clone()
            .set_background_color(Color::RGB(COMPUTED_FILL))
            .set_italic()
    }
}

impl Default for Styles {
    fn default() -> Self {
        Styles::new()
    }
}
