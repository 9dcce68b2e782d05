//! The one error type of the library.
//!
//! Every variant names the place the problem was found (a file and row, a case key, a peer, a
//! template line) and the offending value, because the person reading the message is usually an
//! analyst fixing an input file, not a programmer reading a stack trace.

mod plain;

use std::path::PathBuf;

/// Everything that can go wrong between a case file and a finished valuation.
#[derive(Debug, thiserror::Error)]
pub enum Error {
    /// A file could not be opened, read or written.
    #[error("{}: {action}: {source}", path.display())]
    Io {
        path: PathBuf,
        action: &'static str,
        #[source]
        source: std::io::Error,
    },
    /// The case file (or an override) is malformed or holds a value out of range.
    #[error("{}: {message}", file.display())]
    Case { file: PathBuf, message: String },
    /// Placeholders (`"<FILL IN: …>"`) left in a case, each as `line N: key = "text"`; shown
    /// one per line by a front end that can, joined by `; ` here.
    #[error("{}: {}{}", file.display(), placeholders_heading(items.len()), items.join("; "))]
    Placeholders { file: PathBuf, items: Vec<String> },
    /// An override (a `KEY=VALUE` assignment laid over a case or universe file) could not be
    /// applied. The library never names a command-line flag; a front end words the assignment
    /// as its users gave it (the command line: `--set`).
    #[error("override {assignment}: {message}")]
    Override { assignment: String, message: String },
    /// The file with its overrides applied is not a valid file of its kind.
    #[error(
        "{}: after applying the overrides {}: {message}",
        file.display(),
        overrides.join(", ")
    )]
    AfterOverrides {
        file: PathBuf,
        overrides: Vec<String>,
        message: String,
    },
    /// A receipt's input file (the case or universe file it records) is at none of the places
    /// tried; a front end says how to give its place.
    #[error(
        "{}: the {section} file it names is not at {}{}",
        receipt.display(),
        tried.iter().map(|p| p.display().to_string()).collect::<Vec<_>>().join(" nor at "),
        match above {
            0 => String::new(),
            n => format!(
                " nor, with the recorded SHA-256, at its recorded path from the receipt's folder \
                 or any folder above it ({n} places)"
            ),
        }
    )]
    InputNotFound {
        receipt: PathBuf,
        /// `case` or `universe`.
        section: String,
        tried: Vec<PathBuf>,
        /// How many folders above the receipt's were tried with the recorded path besides.
        above: usize,
    },
    /// Two files could be the one a receipt reruns: the one beside the receipt changed since
    /// the receipt, while the recorded path finds an unchanged copy; a front end says how to
    /// choose.
    #[error(
        "{}: two {section} files could be this receipt's: {} beside it, with the receipt's \
         title but changed since the receipt (its SHA-256 differs), and {}, unchanged (the \
         recorded SHA-256); say which one to verify",
        receipt.display(),
        beside.display(),
        recorded.display()
    )]
    AmbiguousInput {
        receipt: PathBuf,
        /// `case` or `universe`.
        section: String,
        beside: PathBuf,
        recorded: PathBuf,
    },
    /// The file a receipt would rerun is the receipt itself (recorded so, or given so); a front
    /// end says how to give the right one.
    #[error(
        "{}: {}: verify reruns the {section} file the receipt was written from",
        receipt.display(),
        match given {
            true => format!("the {section} file given is the receipt itself"),
            false => format!("the receipt names itself as its {section} file ({section}.file)"),
        }
    )]
    ReceiptAsInput {
        receipt: PathBuf,
        /// `case` or `universe`.
        section: String,
        /// Whether the command line gave it (else the receipt records it).
        given: bool,
    },
    /// A command-line option or a value outside the override syntax is malformed.
    #[error("{option}: {message}")]
    Argument { option: String, message: String },
    /// A series file has no column of the name asked for: `column` is that name, so that the
    /// layer that asked can name the key that gave it.
    #[error("{}: {message}", file.display())]
    MissingColumn {
        file: PathBuf,
        column: String,
        message: String,
    },
    /// A data file is malformed as a whole (missing column, not CSV, no rows).
    #[error("{}: {message}", file.display())]
    DataFile { file: PathBuf, message: String },
    /// One row of a data file holds a bad value. `line` is the 1-based line number in the file,
    /// counting the header as line 1, so it matches what an editor shows.
    #[error("{}, line {line}: {message}", file.display())]
    DataRow {
        file: PathBuf,
        line: usize,
        message: String,
    },
    /// A peer's (or the index's) data cannot support an estimate.
    #[error("peer \"{peer}\": {message}")]
    Estimation { peer: String, message: String },
    /// A regression could not be solved (rank-deficient design, too few observations).
    #[error("regression: {0}")]
    Regression(String),
    /// An estimator's settings that the observations cannot carry, in figures; a case or a
    /// universe adds the setting to change (`case::wording::estimator_problem`).
    #[error("regression: {0}")]
    Estimator(EstimatorProblem),
    /// A chart could not be drawn (`name` is its file name).
    #[error("figure {name}: {message}")]
    Figure { name: String, message: String },
    /// An output file could not be laid out (a spreadsheet limit, a missing figure).
    #[error("{file}: {message}")]
    Render { file: String, message: String },
    /// The memo template failed to parse or render.
    #[error("template {name}, line {line}: {message}")]
    Template {
        name: String,
        line: usize,
        message: String,
    },
    /// The run was stopped (Ctrl-C) before its outputs were moved into place.
    #[error("interrupted: stopped before any output was written")]
    Interrupted,
    /// A figure of the result is NaN or infinite; the last guard before any output.
    #[error(
        "the result would hold {value} at `{path}`; nothing is written: an input is outside \
         any meaningful range (check the case and its data files)"
    )]
    NonFinite { path: String, value: f64 },
}

/// Shorthand used throughout the library.
pub type Result<T, E = Error> = std::result::Result<T, E>;

/// The sentence before the list of placeholders left in a case.
pub fn placeholders_heading(count: usize) -> String {
    format!(
        "{count} placeholder{} still to fill in; nothing is estimated from a figure nobody \
         entered. Replace each with the figure from its source: ",
        if count == 1 { " is" } else { "s are" },
    )
}

/// A reader's own error message as hurdle quotes it: its first paragraph (polars follows it
/// with advice in terms of its Python options), cut to 240 characters (found by review: an
/// unclosed quote in a large panel made polars quote the rest of the file, 800 MB of error).
pub fn reader_message(error: &dyn std::fmt::Display) -> String {
    let text = error.to_string();
    let first = text.split("\n\n").next().unwrap_or("").trim();
    match first.chars().count() > 240 {
        true => format!("{}…", first.chars().take(240).collect::<String>()),
        false => first.to_string(),
    }
}

/// A number as a message quotes it: in full, but in exponent form when that would run to many
/// digits (`1e308` rather than 309 of them); NaN and infinity as Rust writes them.
pub fn compact(value: f64) -> String {
    let magnitude = value.abs();
    if magnitude != 0.0 && magnitude.is_finite() && !(1e-6..1e15).contains(&magnitude) {
        format!("{value:e}")
    } else {
        value.to_string()
    }
}

/// The example a message gives of a rate written as a decimal, from the figure typed: `0.089
/// for 8.9%` for a typed 8.9 (or `8.9%`), the rate read as percent; a general example for a
/// figure that cannot be a percent rate (found by review: a typed 8.9 was told `0.091 for 9.1%`).
pub fn decimal_example(typed: f64) -> String {
    decimal_example_in(typed, (f64::NEG_INFINITY, f64::INFINITY))
}

/// [`decimal_example`] for a key that accepts `[low, high)`: the general example when the
/// figure typed, read as percent, is out of that range too (found by review: `--wacc 100` was
/// told `1 for 100%`, itself refused).
pub fn decimal_example_in(typed: f64, (low, high): (f64, f64)) -> String {
    let decimal = typed / 100.0;
    if !(low..high).contains(&decimal) {
        return "0.091 for 9.1%".to_string();
    }
    match typed.is_finite() && typed != 0.0 && typed.abs() <= 100.0 {
        // Rounded to 12 decimals, so 8.9 / 100 shows as 0.089, not 0.08900000000000001.
        true => format!(
            "{} for {}%",
            compact((typed / 100.0 * 1e12).round() / 1e12),
            compact(typed)
        ),
        false => "0.091 for 9.1%".to_string(),
    }
}

/// `value` to `decimals` places as Excel shows a cell (its display works on 15 significant
/// digits; from memory, not checked here), so the memo, the charts, the terminal and the run's
/// notes agree with the workbook's cells to the last digit shown: the value first taken to 15
/// significant digits (which removes the noise of `x·100`: 0.07075·100 is 7.07499…9), then
/// rounded half away from zero on those digits (0.04625 is 4.63%, 0.07075 is 7.08%, where
/// Rust's own formatting, exact on the binary value, gives 4.62% and 7.07%). LibreOffice Calc
/// rounds the shortest decimal of the binary value instead, so at such a tie it can show one
/// less in the last digit (7.07%). A result of zero has no sign. It lives with the messages'
/// other number formats because notes below the outputs' layer write rates too.
pub fn rounded(value: f64, decimals: usize) -> String {
    if !value.is_finite() {
        return value.to_string();
    }
    // Away from a tie the 15-digit step cannot change the result (it moves the value by at
    // most 5e-16 of itself), so Rust's own formatting, exact on the binary value, gives the same
    // digits far more cheaply; a memo and its charts write thousands of figures.
    let scaled = value.abs() * 10f64.powi(decimals as i32);
    if scaled < 1e9 && (scaled.fract() - 0.5).abs() > 1e-6 {
        let text = format!("{:.*}", decimals, value);
        return match text.strip_prefix('-') {
            Some(rest) if rest.bytes().all(|b| b == b'0' || b == b'.') => rest.to_string(),
            _ => text,
        };
    }
    on_fifteen_digits(value, decimals)
}

/// [`rounded`] the long way, for any finite value: the value's 15 significant digits rounded
/// half away from zero as decimal text.
fn on_fifteen_digits(value: f64, decimals: usize) -> String {
    let text = format!("{:.14e}", value.abs());
    let (mantissa, exponent) = text.split_once('e').unwrap_or((&text, "0"));
    let exponent: i64 = exponent.parse().unwrap_or(0);
    let digits: Vec<u8> = mantissa.bytes().filter(u8::is_ascii_digit).collect();
    // The 15 digits d₁…d₁₅ are |value| = 0.d₁…d₁₅ · 10^(exponent + 1); the leading `keep` of
    // them are the integer |value| · 10^decimals, the next one decides the rounding.
    let keep = exponent + 1 + decimals as i64;
    let mut kept: Vec<u8> = (0..keep.max(0))
        .map(|i| *digits.get(i as usize).unwrap_or(&b'0'))
        .collect();
    let next = usize::try_from(keep).ok().and_then(|k| digits.get(k));
    if next.is_some_and(|&d| d >= b'5') {
        let mut carry = true;
        for digit in kept.iter_mut().rev() {
            if *digit == b'9' {
                *digit = b'0';
            } else {
                *digit += 1;
                carry = false;
                break;
            }
        }
        if carry {
            kept.insert(0, b'1');
        }
    }
    // At least one digit before the point.
    while kept.len() <= decimals {
        kept.insert(0, b'0');
    }
    let point = kept.len() - decimals;
    let whole = std::str::from_utf8(&kept[..point]).unwrap_or("0");
    let fraction = std::str::from_utf8(&kept[point..]).unwrap_or("");
    let zero = kept.iter().all(|&d| d == b'0');
    let sign = if value < 0.0 && !zero { "-" } else { "" };
    if decimals == 0 {
        format!("{sign}{whole}")
    } else {
        format!("{sign}{whole}.{fraction}")
    }
}

/// `text` on one line, for a terminal or a log: a message may quote a value read from a file,
/// and a quoted CSV cell or a damaged workbook's XML can hold a line break or another control
/// character; each is written as its escape (`\n`, `\t`, `\u{7f}`).
pub fn one_line(text: &str) -> String {
    let mut line = String::with_capacity(text.len());
    for c in text.chars() {
        if c.is_control() {
            line.extend(c.escape_default());
        } else {
            line.push(c);
        }
    }
    shorten_long_numbers(&line)
}

/// `text` with each number written out to more than [`LONG_NUMBER`] digits, of which a run of
/// at least 16 zeros, in exponent form (`1e308`, `1e-300`): how Rust writes a very large or
/// very small f64, which a message showed as 300 digits (found by review). A number read as
/// text keeps its digits otherwise, and the value shown is the same number.
pub fn shorten_long_numbers(text: &str) -> String {
    let bytes = text.as_bytes();
    let mut out = String::with_capacity(text.len());
    let (mut copied, mut i) = (0, 0);
    while i < bytes.len() {
        if !bytes[i].is_ascii_digit() || (i > 0 && bytes[i - 1].is_ascii_digit()) {
            i += 1;
            continue;
        }
        let mut end = i;
        while end < bytes.len() && bytes[end].is_ascii_digit() {
            end += 1;
        }
        if end + 1 < bytes.len() && bytes[end] == b'.' && bytes[end + 1].is_ascii_digit() {
            end += 1;
            while end < bytes.len() && bytes[end].is_ascii_digit() {
                end += 1;
            }
        }
        let number = &text[i..end];
        let digits = number.bytes().filter(u8::is_ascii_digit).count();
        let zeros = "0".repeat(16);
        // Only digits exactly as Rust writes that f64 (with serde's ".0" after a whole one):
        // text quoted from a file keeps its own digits (found by review).
        let as_written = |value: f64| {
            let plain = format!("{value}");
            number == plain || number == format!("{plain}.0")
        };
        if digits > LONG_NUMBER && number.replace('.', "").contains(&zeros) {
            if let Some(value) = number.parse::<f64>().ok().filter(|&v| as_written(v)) {
                out.push_str(&text[copied..i]);
                out.push_str(&format!("{value:e}"));
                copied = end;
            }
        }
        i = end;
    }
    out.push_str(&text[copied..]);
    out
}

/// More digits than this make a number long for [`shorten_long_numbers`].
const LONG_NUMBER: usize = 24;

/// A TOML parse or type error of `source` as one line: `line L, column C (`the line`): what is
/// wrong`, instead of the parser's multi-line drawing of the line with a caret. The line is
/// counted from 1 as an editor shows it; the column in characters, from 1.
pub fn toml_error(error: &toml::de::Error, source: &str) -> String {
    let place = place_of(error, source);
    let message = &plain::plain_message(error.message().trim_end(), place.as_ref().map(|p| p.text));
    let Some(place) = place else {
        return message.to_string();
    };
    // Long lines (a list of peers' names, a long title) are shortened to their start.
    const SHOWN: usize = 60;
    let shown: String = if place.text.chars().count() > SHOWN {
        place.text.chars().take(SHOWN).chain(['…']).collect()
    } else {
        place.text.to_string()
    };
    let (line, column) = (place.line, place.column);
    if shown.is_empty() {
        format!("line {line}, column {column}: {message}")
    } else {
        format!("line {line}, column {column} (`{shown}`): {message}")
    }
}

/// Where a TOML error points in `source`: line and column (from 1, the column in characters)
/// and the trimmed text of that line; `None` without a span or off a character boundary.
struct Place<'a> {
    line: usize,
    column: usize,
    text: &'a str,
}

fn place_of<'a>(error: &toml::de::Error, source: &'a str) -> Option<Place<'a>> {
    let before = source.get(..error.span()?.start)?;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    Some(Place {
        line: before.matches('\n').count() + 1,
        column: before[line_start..].chars().count() + 1,
        text: source[line_start..]
            .lines()
            .next()
            .unwrap_or_default()
            .trim(),
    })
}

/// Why `table` (a file with overrides applied) does not deserialise as `T`, naming the line of
/// the table at fault (`frequency = 3`) when the parser can point at one: the table is written
/// out as TOML and read again, so the error has a place; that text is not the user's file, so
/// only the line is quoted, not its number. `fallback` is the message without a place.
pub fn toml_error_in_table<T: serde::de::DeserializeOwned>(
    table: &toml::Table,
    fallback: String,
) -> String {
    let Ok(text) = toml::to_string(table) else {
        return fallback;
    };
    let Err(error) = toml::from_str::<T>(&text) else {
        return fallback;
    };
    match place_of(&error, &text).filter(|place| !place.text.is_empty()) {
        Some(place) => format!(
            "`{}`: {}",
            place.text,
            plain::plain_message(error.message().trim_end(), Some(place.text))
        ),
        None => fallback,
    }
}

#[cfg(test)]
mod tests {

    // The hint from the figure typed, as percent: 8.9 → 0.089 (not 0.08900000000000001),
    // 0.5% → 0.005; a figure no percent rate is gets the general example (worked by hand).
    #[test]
    fn a_rate_typed_as_percent_is_shown_as_its_decimal() {
        assert_eq!(super::decimal_example(8.9), "0.089 for 8.9%");
        assert_eq!(super::decimal_example(0.5), "0.005 for 0.5%");
        assert_eq!(super::decimal_example(5.8), "0.058 for 5.8%");
        assert_eq!(super::decimal_example(250.0), "0.091 for 9.1%");
        assert_eq!(super::decimal_example(0.0), "0.091 for 9.1%");
        // A key that takes [-0.5, 1): 100 read as percent is 1, refused too.
        assert_eq!(
            super::decimal_example_in(100.0, (-0.5, 1.0)),
            "0.091 for 9.1%"
        );
        assert_eq!(
            super::decimal_example_in(8.9, (-0.5, 1.0)),
            "0.089 for 8.9%"
        );
    }
    // Rust's `Display` of an f64 never uses an exponent (std's fmt documentation): 1e308 is a 1
    // and 308 zeros, 1e-300 a point, 299 zeros and a 1; `{:e}` writes them back as typed.
    #[test]
    fn very_large_and_very_small_numbers_read_in_exponent_form() {
        let shown = |x: f64| super::one_line(&format!("debt = {x} is outside (0, 1e15)"));
        assert_eq!(shown(1e308), "debt = 1e308 is outside (0, 1e15)");
        assert_eq!(shown(-1e-300), "debt = -1e-300 is outside (0, 1e15)");
        assert_eq!(shown(2.5e-40), "debt = 2.5e-40 is outside (0, 1e15)");
        // Ordinary figures, and long digit strings without a run of zeros (an id), stay.
        assert_eq!(shown(0.0325), "debt = 0.0325 is outside (0, 1e15)");
        let id = "security 123456789012345678901234567890 at line 3";
        assert_eq!(super::shorten_long_numbers(id), id);
        // Digits quoted from a file that are not how Rust writes their value stay as written.
        let cell = "\"12.5 ref 20000000000000000000000000007\" is not a number";
        assert_eq!(super::shorten_long_numbers(cell), cell);
        // serde writes a whole float with ".0".
        let serde = format!("{}.0 is not a whole number", 1e30);
        assert_eq!(
            super::shorten_long_numbers(&serde),
            "1e30 is not a whole number"
        );
    }

    // The position follows the TOML 1.0 grammar's own error: an unknown key on line 3, column 1;
    // a value of the wrong type on line 2, at its first character.
    #[test]
    fn toml_errors_name_the_line_and_column_on_one_line() {
        #[derive(Debug, serde::Deserialize)]
        #[serde(deny_unknown_fields)]
        struct Shape {
            rate: f64,
        }
        assert_eq!(toml::from_str::<Shape>("rate = 0.05").unwrap().rate, 0.05);
        let text = "# comment\nrate = \"0.05\"\n";
        let error = toml::from_str::<Shape>(text).unwrap_err();
        assert_eq!(
            super::toml_error(&error, text),
            "line 2, column 8 (`rate = \"0.05\"`): \"0.05\" is not a number: a number is \
             written without quotes (0.0324, not \"0.0324\")"
        );
        let text = "rate = 0.05\n\nratee = 1\n";
        let error = toml::from_str::<Shape>(text).unwrap_err();
        let message = super::toml_error(&error, text);
        assert!(
            message.starts_with(
                "line 3, column 1 (`ratee = 1`): unknown key `ratee`: did you mean `rate`?"
            ),
            "{message}"
        );
    }

    // The quick path of `rounded` (Rust's own formatting away from a tie) writes what the
    // 15-digit path writes: 300,000 values over twenty decades, every decimal count to 6, and
    // values built to sit on or next to a tie.
    #[test]
    fn the_quick_rounding_agrees_with_the_fifteen_digit_rounding() {
        let mut rng = crate::stats::random::Rng::seeded(7);
        for k in 0..300_000 {
            let decimals = k % 7;
            let value = match k % 3 {
                0 => (rng.uniform() - 0.5) * 10f64.powi((k % 20) as i32 - 10),
                // A tie of `decimals` places, give or take an ulp or a few.
                1 => {
                    let base = (rng.uniform() * 1e4).floor() + 0.5;
                    let tie = base / 10f64.powi(decimals as i32);
                    let ulps = (k % 5) as i64 - 2;
                    f64::from_bits((tie.to_bits() as i64 + ulps) as u64)
                }
                _ => (rng.uniform() * 100.0).round() / 1e4,
            };
            assert_eq!(
                super::rounded(value, decimals),
                super::on_fifteen_digits(value, decimals),
                "{value:e} to {decimals}"
            );
        }
    }

    #[test]
    fn control_characters_become_their_escapes() {
        assert_eq!(
            super::one_line("`close` = \"12\n3\"\tend\u{7f}é"),
            "`close` = \"12\\n3\"\\tend\\u{7f}é"
        );
    }
}

/// An estimator's settings that the observations cannot carry, in figures. The estimators do
/// not know what their callers call the settings (a case's and a universe's `[beta]` keys), so
/// the problem states itself here and the caller adds the setting to change
/// (`case::wording::estimator_problem`), as it words the layers' other errors.
#[derive(Debug, Clone, PartialEq)]
pub enum EstimatorProblem {
    /// Newey–West lags at least N/4; `given` when the caller set them, else the rule chose them.
    NeweyWestLags {
        lags: usize,
        observations: usize,
        given: bool,
    },
    /// Lagged and led index columns (Dimson, or Scholes–Williams' one lag and one lead) at
    /// least N/4.
    ShiftedColumns {
        columns: usize,
        observations: usize,
        scholes_williams: bool,
    },
    /// Scholes–Williams' divisor 1 + 2ρ below its `floor`.
    ScholesWilliamsDivisor {
        rho: f64,
        divisor: f64,
        floor: f64,
        observations: usize,
    },
}

impl std::fmt::Display for EstimatorProblem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let quarter = |n: usize| n as f64 / 4.0;
        match *self {
            EstimatorProblem::NeweyWestLags {
                lags, observations, ..
            } => write!(
                f,
                "Newey–West lags {lags} are at least N/4 = {} for N = {observations} observations",
                quarter(observations)
            ),
            EstimatorProblem::ShiftedColumns {
                columns,
                observations,
                ..
            } => write!(
                f,
                "{columns} lagged and led index columns are at least N/4 = {} for N = \
                 {observations} observations",
                quarter(observations)
            ),
            EstimatorProblem::ScholesWilliamsDivisor {
                rho,
                divisor,
                floor,
                observations,
            } => write!(
                f,
                "the index's first-order autocorrelation over these {observations} returns is \
                 {}, so the Scholes-Williams divisor 1 + 2ρ is {}, below {floor}: the beta \
                 divides the slopes by it and would be unbounded (an index return that moves \
                 against its own last one this strongly is not the non-synchronous trading the \
                 method corrects)",
                rounded(rho, 3),
                rounded(divisor, 3)
            ),
        }
    }
}
