//! `memo.md`: the reviewer's memo, rendered by minijinja from a template.
//!
//! The template sees the [`Valuation`] as `v` and the charts of the run as `figures` (see
//! [`crate::report::figures::Index`]), and may only format them: its filters (`pct`, `bp`,
//! `num`, `exact`, `exact_pct`, `cell`, `group`, `axis`, `plain`, `prose`, `code`, `weights`) call
//! [`crate::report::format`], and undefined names are errors (strict mode), so a typo in a
//! user's template fails loudly instead of printing an empty cell.

use std::path::Path;

use minijinja::value::Serde;
use minijinja::{Environment, UndefinedBehavior, Value};

use super::Render;
use crate::error::{Error, Result};
use crate::report::format;
use crate::valuation::Valuation;

/// The memo template shipped with the tool (`templates/memo.md.j2`).
pub const DEFAULT_TEMPLATE: &str = include_str!("../../templates/memo.md.j2");

/// A memo renderer holding its template's name and text, and the charts it may link.
pub struct Memo {
    name: String,
    source: String,
    figures: crate::report::figures::Index,
}

impl Memo {
    /// The shipped template.
    pub fn shipped() -> Memo {
        Memo {
            name: "templates/memo.md.j2".to_string(),
            source: DEFAULT_TEMPLATE.to_string(),
            figures: crate::report::figures::Index::default(),
        }
    }

    /// A user's template file.
    pub fn from_file(path: &Path) -> Result<Memo> {
        let source = std::fs::read_to_string(path).map_err(|source| Error::Io {
            path: path.to_path_buf(),
            action: "cannot read the memo template",
            source,
        })?;
        Ok(Memo {
            name: path.display().to_string(),
            source,
            figures: crate::report::figures::Index::default(),
        })
    }

    /// The same memo, with the charts the template sees as `figures` (paths relative to the
    /// output folder; by default none).
    pub fn with_figures(self, figures: crate::report::figures::Index) -> Memo {
        Memo { figures, ..self }
    }

    fn template_error(&self, e: &minijinja::Error) -> Error {
        let mut message = e.kind().to_string();
        if let Some(detail) = e.detail() {
            message.push_str(": ");
            message.push_str(detail);
        }
        let line = e.line().unwrap_or(0);
        // Quote the template's own line, so an undefined name is shown, not only "undefined".
        if let Some(text) = line.checked_sub(1).and_then(|i| self.source.lines().nth(i)) {
            message.push_str(&format!(" in `{}`", text.trim()));
        }
        Error::Template {
            name: self.name.clone(),
            line,
            message,
        }
    }
}

/// A bridge side's build-up (`b.from.build_up`) as its capital weights
/// ([`format::capital_weights`]). Its equity and debt weights must be there (anything else
/// given is an error, as strict mode makes an undefined name; found by review: `v.wacc |
/// weights` printed zero weights); preferred equity and leases, which a build-up writes only
/// when it holds them, are 0 when absent.
fn weights(build_up: Value) -> Filtered {
    let weight = |key: &str, required: bool| -> std::result::Result<f64, minijinja::Error> {
        let value = build_up.get_attr(key).unwrap_or(Value::UNDEFINED);
        match (value.is_undefined() || value.is_none(), required) {
            (true, false) => Ok(0.0),
            (true, true) => Err(minijinja::Error::new(
                minijinja::ErrorKind::InvalidOperation,
                format!("`weights` takes a bridge side's build_up, which has `{key}`"),
            )),
            (false, _) => finite(f64::try_from(value)?),
        }
    };
    Ok(format::capital_weights(
        weight("equity_weight", true)?,
        weight("debt_weight", true)?,
        weight("preferred_weight", false)?,
        weight("lease_weight", false)?,
    ))
}

/// A figure a template writes, refused when it is not finite: the outputs never hold `inf` or
/// `NaN` (found by review: a template could compute one, `{{ v.wacc * 1e308 * 100 }}`).
fn finite(value: f64) -> std::result::Result<f64, minijinja::Error> {
    match value.is_finite() {
        true => Ok(value),
        false => Err(minijinja::Error::new(
            minijinja::ErrorKind::InvalidOperation,
            format!("the template computes {value}, not a finite figure, which a memo cannot hold"),
        )),
    }
}

/// Decimals a number filter takes: up to 40, hurdle's bound (a count of 4294967296 overflowed
/// the formatting; found by review), which leaves a figure of 1e-20 twenty significant digits.
fn decimals(given: Option<usize>, default: usize) -> std::result::Result<usize, minijinja::Error> {
    match given.unwrap_or(default) {
        d if d <= 40 => Ok(d),
        d => Err(minijinja::Error::new(
            minijinja::ErrorKind::InvalidOperation,
            format!("{d} decimals asked of a number filter; at most 40"),
        )),
    }
}

type Filtered = std::result::Result<String, minijinja::Error>;

fn pct(value: f64, places: Option<usize>) -> Filtered {
    finite(value * 100.0)?;
    Ok(format::percent(finite(value)?, decimals(places, 2)?))
}

fn bp(value: f64) -> Filtered {
    finite(value * 1e4)?;
    Ok(format::basis_points(finite(value)?))
}

fn num(value: f64, places: Option<usize>) -> Filtered {
    Ok(format::fixed(finite(value)?, decimals(places, 3)?))
}

fn exact(value: f64) -> Filtered {
    Ok(format::exact(finite(value)?))
}

fn exact_pct(value: f64) -> Filtered {
    finite(value * 100.0)?;
    Ok(format::exact_percent(finite(value)?))
}

/// minijinja's own output of a value, refusing a number that is not finite.
fn finite_output(
    out: &mut minijinja::Output,
    state: &mut minijinja::State,
    value: &Value,
) -> std::result::Result<(), minijinja::Error> {
    if let Ok(number) = f64::try_from(value.clone()) {
        finite(number)?;
    }
    minijinja::escape_formatter(out, state, value)
}

impl Render for Memo {
    fn file_name(&self) -> &str {
        "memo.md"
    }

    fn render(&self, valuation: &Valuation) -> Result<Vec<u8>> {
        let mut env = Environment::new();
        env.set_undefined_behavior(UndefinedBehavior::Strict);
        env.set_formatter(finite_output);
        env.add_filter("pct", pct);
        env.add_filter("bp", bp);
        env.add_filter("num", num);
        env.add_filter("exact", exact);
        env.add_filter("exact_pct", exact_pct);
        env.add_filter("cell", format::table_cell);
        env.add_filter("group", format::group_title);
        env.add_filter("axis", format::axis_value);
        env.add_filter("plain", format::plain_text);
        env.add_filter("prose", format::prose);
        env.add_filter("code", format::code_span);
        env.add_filter("weights", weights);
        env.add_template_owned(self.name.clone(), self.source.clone())
            .map_err(|e| self.template_error(&e))?;
        let template = env
            .get_template(&self.name)
            .map_err(|e| self.template_error(&e))?;
        let context = minijinja::context! {
            v => Value::from(Serde(valuation)),
            figures => Value::from(Serde(&self.figures)),
        };
        let mut text = template
            .render(context)
            .map_err(|e| self.template_error(&e))?;
        if !text.ends_with('\n') {
            text.push('\n');
        }
        Ok(text.into_bytes())
    }
}
