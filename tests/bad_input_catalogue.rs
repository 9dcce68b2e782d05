//! The catalogue of bad inputs: price files, yield files, spread tables, case and claimed files,
//! `--set`, every command's arguments and the output folder. Each entry copies the demo case,
//! breaks one thing, runs the built binary once, and asserts what README promises for every bad
//! input: exit status 2 (not a panic), a message naming the file and line or the key, and the
//! value, and a folder tree identical before and after the run (SHA-256 of every file, and every
//! folder), so no input was changed and no output, partial output or temporary folder was left.
//! What each message must contain is written beside the entry; the values are the ones the entry
//! plants, so the expectation comes from the entry, not from hurdle's output. Where it depends on
//! the demo data (a neighbouring price, the line of a table row or case key), the entry's setup
//! reads it from the demo files and notes it for a `{name}` in the expectation.

mod common;

use std::process::Command;

use common::{tree_hashes, Sandbox};

const PEER: &str = "data/peers/corrowick.csv";
const INDEX: &str = "data/index.csv";
const RISK_FREE: &str = "data/risk_free.csv";
const RATING: &str = "data/rating_spreads_invented.csv";
const COVERAGE: &str = "data/coverage_grid_invented.csv";
/// Line 848 of the index, risk-free and Corrowick files is 2023-03-31, inside the window
/// (`the_planted_line_is_the_one_the_entries_name` checks it against the demo files).
const LINE: usize = 848;
/// The date on [`LINE`] in each of those files.
const LINE_DATE: &str = "2023-03-31";

/// One bad input: what to break, how to run, and what the message must name.
struct Bad {
    name: &'static str,
    setup: fn(&Sandbox),
    /// Arguments; `{case}`, `{dir}` (the case folder), `{out}` and `{root}` are filled in.
    args: &'static [&'static str],
    expect: &'static [&'static str],
}

macro_rules! bad {
    ($name:expr, $setup:expr, [$($arg:expr),* $(,)?], [$($needle:expr),* $(,)?] $(,)?) => {
        Bad { name: $name, setup: $setup, args: &[$($arg),*], expect: &[$($needle),*] }
    };
}

fn nothing(_: &Sandbox) {}

thread_local! {
    /// What an entry's setup read from the demo files for its expectations (a line number, a
    /// value): `{name}` in an expectation is replaced by the text noted under `name`. Cleared
    /// before each entry, so the expectation follows the demo files instead of copying them.
    static NOTES: std::cell::RefCell<Vec<(String, String)>> =
        const { std::cell::RefCell::new(Vec::new()) };
}

/// Notes `text` under `name` for the running entry's expectations.
fn note(name: &str, text: impl ToString) {
    NOTES.with(|n| {
        n.borrow_mut()
            .push((format!("{{{name}}}"), text.to_string()))
    });
}

/// `Sandbox::edit`, noting the line where `from` starts as `{line}` and the line after it as
/// `{next}` (where a line inserted after it lands).
fn edit_at(s: &Sandbox, relative: &str, from: &str, to: &str) {
    let text = s.read(relative);
    let at = text
        .find(from)
        .unwrap_or_else(|| panic!("`{from}` is not in {relative}"));
    let line = 1 + text[..at].matches('\n').count();
    note("line", format!("line {line}"));
    note("next", format!("line {}", line + 1));
    s.edit(relative, from, to);
}

/// Replaces the date (first field) on line `line`, keeping the rest of the row.
fn set_date(s: &Sandbox, relative: &str, line: usize, date: &str) {
    let row = line_text(s, relative, line);
    let (_, rest) = row.split_once(',').expect("a row with a date and a value");
    s.set_line(relative, line, &format!("{date},{rest}"));
}

/// The 1-based number of the one line of a case-folder file that starts with `prefix`.
fn line_starting(s: &Sandbox, relative: &str, prefix: &str) -> usize {
    let text = s.read(relative);
    let found: Vec<usize> = text
        .lines()
        .enumerate()
        .filter(|(_, l)| l.starts_with(prefix))
        .map(|(i, _)| i + 1)
        .collect();
    assert_eq!(
        found.len(),
        1,
        "one line of {relative} must start with `{prefix}`"
    );
    found[0]
}

/// Line `line` (1-based) of a case-folder file.
fn line_text(s: &Sandbox, relative: &str, line: usize) -> String {
    s.read(relative)
        .lines()
        .nth(line - 1)
        .unwrap_or_else(|| panic!("{relative} has no line {line}"))
        .to_string()
}

/// The number in field `field` (0-based) of line `line` of a CSV file, as hurdle shows a
/// number in a message (Rust's shortest round-trip form: `45.2560` is shown as `45.256`).
fn number_at(s: &Sandbox, relative: &str, line: usize, field: usize) -> String {
    let text = line_text(s, relative, line);
    let cell = text
        .split(',')
        .nth(field)
        .unwrap_or_else(|| panic!("{relative} line {line} has no field {field}: {text}"));
    let value: f64 = cell
        .parse()
        .unwrap_or_else(|_| panic!("{relative} line {line}: {cell}"));
    value.to_string()
}

/// The one `key = value` line of case.toml (its number, and the value without a comment).
fn case_key(s: &Sandbox, key: &str) -> (usize, String) {
    let line = line_starting(s, "case.toml", &format!("{key} = "));
    let text = line_text(s, "case.toml", line);
    let value = text[key.len() + 3..].split('#').next().unwrap().trim();
    (line, value.to_string())
}

/// Sets `key` in case.toml to `value` (dropping the line's comment), and notes the line as
/// `{line}` and the demo's value as `{was}`.
fn set_case_key(s: &Sandbox, key: &str, value: &str) {
    let (line, was) = case_key(s, key);
    note("line", format!("line {line}"));
    note("was", was);
    s.set_line("case.toml", line, &format!("{key} = {value}"));
}

/// The binary under test: this build's, or another one named by `HURDLE_BIN` (to see which
/// entries an earlier build fails; DEVELOPERS.md).
fn binary() -> String {
    std::env::var("HURDLE_BIN").unwrap_or_else(|_| env!("CARGO_BIN_EXE_hurdle").to_string())
}

/// Runs one entry; `Err` describes every way it fell short.
fn check(entry: &Bad) -> Result<(), String> {
    let sandbox = Sandbox::new();
    NOTES.with(|n| n.borrow_mut().clear());
    (entry.setup)(&sandbox);
    let notes = NOTES.with(|n| n.borrow().clone());
    let root = sandbox.root.path();
    let before = tree_hashes(root);
    let fill = |text: &str| {
        let text = text
            .replace("{case}", &sandbox.path("case.toml").display().to_string())
            .replace("{dir}", &sandbox.path("").display().to_string())
            .replace("{out}", &root.join("out").display().to_string())
            .replace("{root}", &root.display().to_string());
        notes
            .iter()
            .fold(text, |text, (name, value)| text.replace(name, value))
    };
    let args: Vec<String> = entry.args.iter().map(|a| fill(a)).collect();
    let output = Command::new(binary())
        .args(&args)
        .current_dir(root)
        .output()
        .expect("run hurdle");
    let stderr = String::from_utf8_lossy(&output.stderr);
    let mut faults = Vec::new();
    if output.status.code() != Some(2) {
        faults.push(format!(
            "exit status {:?}, expected 2",
            output.status.code()
        ));
    }
    if stderr.contains("panicked") {
        faults.push("panicked".into());
    }
    for needle in entry.expect {
        let needle = fill(needle);
        if needle.contains('{') {
            faults.push(format!("nothing noted for `{needle}`"));
        } else if !stderr.contains(&needle) {
            faults.push(format!("message lacks `{needle}`"));
        }
    }
    let after = tree_hashes(root);
    for (path, hash) in &after {
        match before.get(path) {
            None => faults.push(format!("left {} behind", path.display())),
            Some(old) if old != hash => faults.push(format!("changed {}", path.display())),
            _ => {}
        }
    }
    for path in before.keys().filter(|p| !after.contains_key(*p)) {
        faults.push(format!("removed {}", path.display()));
    }
    if faults.is_empty() {
        // Shown with `-- --nocapture`, for reading every message in one place.
        println!("{}: {}", entry.name, stderr.trim());
        Ok(())
    } else {
        Err(format!(
            "{}: {}\n  hurdle {}\n  stderr: {}",
            entry.name,
            faults.join("; "),
            args.join(" "),
            stderr.trim()
        ))
    }
}

/// Runs a whole category and reports every failing entry at once.
fn run_all(entries: &[Bad]) {
    let failures: Vec<String> = entries.iter().filter_map(|e| check(e).err()).collect();
    assert!(
        failures.is_empty(),
        "{} of {} entries failed:\n{}",
        failures.len(),
        entries.len(),
        failures.join("\n")
    );
}

/// A copy of `from` under a new name, both in the case folder.
fn copy(s: &Sandbox, from: &str, to: &str) {
    s.write(to, std::fs::read(s.path(from)).unwrap());
}

/// Keeps the header and the rows of a file for which `keep(line)` holds.
fn keep_lines(s: &Sandbox, relative: &str, keep: fn(usize) -> bool) {
    let text = s.read(relative);
    let kept: Vec<&str> = text
        .lines()
        .enumerate()
        .filter(|(i, _)| *i == 0 || keep(i + 1))
        .map(|(_, l)| l)
        .collect();
    s.write(relative, kept.join("\n") + "\n");
}

fn price_files() -> Vec<Bad> {
    vec![
        // Found by review: the message quoted the rest of the file, 35 kB, as the cell.
        bad!(
            "a quote never closed",
            |s| s.set_line(PEER, LINE, &format!("{LINE_DATE},\"45.1")),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "is never closed"]
        ),
        bad!(
            "missing price file",
            |s| s.edit_case("data/peers/dunmere.csv", "data/peers/gone.csv"),
            ["run", "{case}", "--out", "{out}"],
            [
                "data/peers/gone.csv",
                "price file of peer \"Dunmere Hydraulics\"",
                "No such file"
            ]
        ),
        // Found by review: a name typed with other capitals than the file's.
        bad!(
            "price file named with other capitals",
            |s| s.edit_case("data/peers/dunmere.csv", "data/peers/Dunmere.csv"),
            ["run", "{case}", "--out", "{out}"],
            [
                "Dunmere.csv",
                "the folder has `dunmere.csv`, which differs only in capitals"
            ]
        ),
        bad!(
            "empty price path",
            |s| s.edit_case("data/peers/dunmere.csv", ""),
            ["run", "{case}", "--out", "{out}"],
            ["peer.2.prices", "= \"\" (missing or empty)"]
        ),
        bad!(
            "price path is a folder",
            |s| s.edit_case("data/peers/dunmere.csv", "data/peers"),
            ["run", "{case}", "--out", "{out}"],
            ["data/peers", "directory"]
        ),
        bad!(
            "empty price file",
            |s| s.write(PEER, ""),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "the file is empty"]
        ),
        bad!(
            "header only",
            |s| s.write(PEER, "date,price\n"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "no data rows"]
        ),
        bad!(
            "no date column",
            |s| s.set_line(PEER, 1, "day,price"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "`date`", "day, price"]
        ),
        bad!(
            "no price column",
            |s| s.set_line(PEER, 1, "date,close"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "`price`", "date, close"]
        ),
        bad!(
            "price column named twice in the header",
            |s| s.set_line(PEER, 1, "date,price,price"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "the header names `price` in columns 2 and 3"]
        ),
        bad!(
            "price column named in the case is absent",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "peer.1.price_column=adj_close"
            ],
            [PEER, "`adj_close`"]
        ),
        bad!(
            "semicolon separators",
            |s| s.map_lines(PEER, |_, l| l.replace(',', ";")),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 1", "date;price", "semicolons"]
        ),
        bad!(
            "tab separators",
            |s| s.map_lines(PEER, |_, l| l.replace(',', "\t")),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 1", "tabs"]
        ),
        bad!(
            "decimal commas",
            |s| {
                note("row", line_text(s, PEER, 2).replace('.', ","));
                s.map_lines(
                    PEER,
                    |n, l| if n > 1 { l.replace('.', ",") } else { l.into() },
                )
            },
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 2", "`{row}`", "3 fields"]
        ),
        // Found by review: with the header ending in a comma, a decimal comma's digits fell
        // into the unnamed column and the price was read as its whole part, without a word.
        bad!(
            "decimal commas under a header ending in a comma",
            |s| {
                s.map_lines(PEER, |n, l| match n {
                    1 => format!("{l},"),
                    _ => l.replace('.', ","),
                })
            },
            ["run", "{case}", "--out", "{out}"],
            [
                PEER,
                "line 2",
                "column 3 has no name in the header",
                "a number written with a decimal comma"
            ]
        ),
        // Found by review: the advice on decimal commas fitted no cell of such rows.
        bad!(
            "rows ending in a comma the header lacks",
            |s| s.map_lines(PEER, |n, l| match n {
                1 => l.into(),
                _ => format!("{l},"),
            }),
            ["run", "{case}", "--out", "{out}"],
            [
                PEER,
                "line 2",
                "ends in a comma (an empty last field) the header lacks",
                "end the header with a comma too"
            ]
        ),
        bad!(
            "a spreadsheet's separator line above the header",
            |s| s.map_lines(PEER, |n, l| match n {
                1 => format!("sep=,\n{l}"),
                _ => l.into(),
            }),
            ["run", "{case}", "--out", "{out}"],
            [
                PEER,
                "no column named `date`",
                "`sep=…`",
                "delete that line"
            ]
        ),
        // Found by review: the file was named, not the key that asked for the column.
        bad!(
            "the index's price column not in its file",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.index.price_column=close"
            ],
            [
                "index.csv",
                "no column named `close`",
                "asked for by market.index.price_column"
            ]
        ),
        bad!(
            "a peer's price column not in its file",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "peer.0.price_column=px"
            ],
            [
                "brenvale.csv",
                "no column named `px`",
                "asked for by peer.0.price_column (peer \"Brenvale Fluid Systems\")"
            ]
        ),
        bad!(
            "verify: a receipt naming itself as its case",
            |s| s.write(
                "r.json",
                format!(
                    "{{\"schema_version\": {}, \"case\": {{\"file\": \"r.json\"}}}}",
                    hurdle::valuation::records::SCHEMA_VERSION
                )
            ),
            ["verify", "{dir}/r.json"],
            [
                "r.json",
                "the receipt names itself as its case file (case.file)",
                "give that file with --case"
            ]
        ),
        bad!(
            "ragged row",
            |s| {
                let row = format!("{},1200", line_text(s, PEER, LINE));
                note("row", &row);
                s.set_line(PEER, LINE, &row)
            },
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "{row}", "3 fields"]
        ),
        bad!(
            "invalid UTF-8 byte",
            |s| {
                let mut bytes = std::fs::read(s.path(PEER)).unwrap();
                let at = s
                    .read(PEER)
                    .lines()
                    .take(LINE - 1)
                    .map(|l| l.len() + 1)
                    .sum::<usize>()
                    + 11;
                bytes[at] = 0xFF;
                s.write(PEER, bytes);
            },
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "0xFF"]
        ),
        bad!(
            "UTF-16 file",
            |s| s.write(PEER, utf16(&s.read(PEER))),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "UTF-16", "not CSV text", "UTF-8"]
        ),
        bad!(
            "a workbook given as a price file",
            // An .xlsx is a ZIP archive: its first bytes are the ZIP signature.
            |s| s.write(PEER, b"PK\x03\x04\x14\x00\x06\x00rest of a workbook"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "workbook", "not CSV text"]
        ),
        bad!(
            "compressed file",
            |s| s.write(
                PEER,
                [0x1F, 0x8B, 0x08, 0x00, 0x00, 0x00, 0x00, 0x00, 0x00, 0x03]
            ),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 1", "0x8B"]
        ),
        bad!(
            "impossible date",
            |s| set_date(s, PEER, LINE, "2024-13-45"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "2024-13-45"]
        ),
        bad!(
            "day-first date",
            |s| set_date(s, PEER, LINE, "31/03/2023"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "31/03/2023"]
        ),
        bad!(
            // ISO 8601 date-times are read by their date (README, "Price files"); a time that
            // is not one (an hour alone) is refused with the hint to keep the date alone.
            "date with a malformed time",
            |s| set_date(s, PEER, LINE, "2023-03-31T16"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "2023-03-31T16", "time of day"]
        ),
        bad!(
            "a header in capitals",
            |s| s.edit(PEER, "date,price", "Date,Price"),
            ["run", "{case}", "--out", "{out}"],
            [
                PEER,
                "no column named `date`",
                "Date, Price",
                "capitals too"
            ]
        ),
        bad!(
            "a day-first date in a price file",
            |s| set_date(s, PEER, LINE, "31/03/2023"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "31/03/2023", "year first"]
        ),
        bad!(
            "a spreadsheet error in a price cell",
            |s| s.set_value(PEER, LINE, "#N/A"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "#N/A", "delete the row"]
        ),
        bad!(
            "empty date cell",
            |s| set_date(s, PEER, LINE, ""),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "`date` = \"\""]
        ),
        bad!(
            "blank line",
            |s| s.set_line(PEER, LINE, ""),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "`date` = \"\""]
        ),
        bad!(
            "lines ended by a carriage return alone",
            |s| {
                let text = s.read(PEER).replace('\n', "\r");
                s.write(PEER, text);
            },
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 1", "carriage return", "LF or CRLF"]
        ),
        bad!(
            "price is text",
            |s| s.set_value(PEER, LINE, "abc"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "\"abc\""]
        ),
        bad!(
            "empty price cell",
            |s| s.set_value(PEER, LINE, ""),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "`price` = \"\""]
        ),
        bad!(
            "zero price",
            |s| s.set_value(PEER, LINE, "0"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "`price` = 0 ", "positive"]
        ),
        bad!(
            "negative price",
            |s| s.set_value(PEER, LINE, "-43.8"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "-43.8", "positive"]
        ),
        bad!(
            "NaN price",
            |s| s.set_value(PEER, LINE, "NaN"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "NaN"]
        ),
        bad!(
            "infinite price",
            |s| s.set_value(PEER, LINE, "inf"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "inf"]
        ),
        bad!(
            "price overflowing a double",
            |s| s.set_value(PEER, LINE, "1e400"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "1e400"]
        ),
        bad!(
            "currency symbol",
            |s| s.set_value(PEER, LINE, "$43.83"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "$43.83"]
        ),
        bad!(
            "thousands separator",
            |s| s.set_value(PEER, LINE, "\"1,043.83\""),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "1,043.83"]
        ),
        bad!(
            "price 1e200",
            |s| s.set_value(PEER, LINE, "1e200"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "1e200", "between 1e-100 and 1e100"]
        ),
        bad!(
            "price 1e-200",
            |s| s.set_value(PEER, LINE, "1e-200"),
            ["run", "{case}", "--out", "{out}"],
            [
                PEER,
                "line 848",
                "1e-200",
                "2023-03-31",
                "between 1e-100 and 1e100"
            ]
        ),
        bad!(
            "price 1e100",
            |s| s.set_value(PEER, LINE, "1e100"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "1e100"]
        ),
        bad!(
            "subnormal price",
            |s| s.set_value(PEER, LINE, "5e-324"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "5e-324"]
        ),
        bad!(
            "price typed ten times too large",
            |s| {
                let price: f64 = number_at(s, PEER, LINE, 1).parse().unwrap();
                // Four decimals, as the demo writes prices; the message shows the number parsed.
                let typed = format!("{:.4}", price * 10.0);
                note("typed", typed.parse::<f64>().unwrap());
                s.set_value(PEER, LINE, &typed)
            },
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "{typed}", "2023-03-30"]
        ),
        bad!(
            "duplicate date",
            |s| set_date(s, PEER, LINE + 1, LINE_DATE),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "line 849", "2023-03-31"]
        ),
        bad!(
            "unsorted dates",
            |s| set_date(s, PEER, LINE, "2023-04-04"),
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 849", "2023-04-03", "sorted"]
        ),
        bad!(
            "price that never moves",
            |s| s.map_values(PEER, |_| 50.0),
            ["run", "{case}", "--out", "{out}"],
            ["Corrowick Valves", "all 0", "zero variance"]
        ),
        bad!(
            "price that never moves, raw returns",
            |s| {
                s.map_values(PEER, |_| 50.0);
                s.edit_case(
                    "[market.risk_free_series]\nyields = \"data/risk_free.csv\"\n",
                    "",
                );
            },
            ["run", "{case}", "--out", "{out}"],
            ["Corrowick Valves", "all 0", "zero variance"]
        ),
        bad!(
            "peer file is a copy of the index",
            |s| copy(s, INDEX, PEER),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.prices", PEER, "data/index.csv"]
        ),
        // Found by review: another peer's prices times a constant (a listing at a fixed
        // rate, pence for pounds) gave that peer's beta twice, without a word.
        bad!(
            "peer file is another peer's rescaled",
            |s| {
                copy(s, "data/peers/brenvale.csv", PEER);
                s.map_lines(PEER, |n, l| match (n, l.split_once(',')) {
                    (1, _) | (_, None) => l.into(),
                    (_, Some((date, price))) => {
                        format!("{date},{:.4}", price.parse::<f64>().unwrap() * 1.37)
                    }
                })
            },
            ["run", "{case}", "--out", "{out}"],
            [
                PEER,
                "peer.0's prices",
                "times 1.37",
                "the same firm counted twice"
            ]
        ),
        // Found by review: a plain copy with rows left out escaped both checks.
        bad!(
            "peer file is another peer's with rows left out",
            |s| {
                copy(s, "data/peers/brenvale.csv", PEER);
                keep_lines(s, PEER, |n| n % 7 != 3)
            },
            ["run", "{case}", "--out", "{out}"],
            [PEER, "peer.0's prices", "the same firm counted twice"]
        ),
        // Found by review: after CRLF line ends the line named was one short.
        bad!(
            "a bad price in a file with CRLF line ends",
            |s| {
                s.map_lines(PEER, |n, l| match n {
                    n if n == LINE => format!("{LINE_DATE},abc\r"),
                    _ => format!("{l}\r"),
                })
            },
            ["run", "{case}", "--out", "{out}"],
            [PEER, "line 848", "\"abc\""]
        ),
        bad!(
            "peer file is the index file",
            |s| s.edit_case(PEER, INDEX),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.prices", "data/index.csv", "same dates and prices"]
        ),
        // The risk-free series is named by its own key, `yields` (found by review: it was
        // named `market.risk_free_series.prices`, a key that does not exist).
        bad!(
            "peer file is the risk-free file",
            |s| s.edit_case(
                "prices = \"data/peers/corrowick.csv\"",
                "prices = \"data/risk_free.csv\"\nprice_column = \"yield\""
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "peer.1.prices = \"data/risk_free.csv\"",
                "the risk-free series' (market.risk_free_series.yields = \"data/risk_free.csv\")"
            ]
        ),
        bad!(
            "peer file is the index with rows left out",
            |s| {
                copy(s, INDEX, PEER);
                keep_lines(s, PEER, |n| n % 5 != 3)
            },
            ["run", "{case}", "--out", "{out}"],
            [
                "Corrowick Valves",
                "prices equal the index's",
                "data/index.csv"
            ]
        ),
        bad!(
            "peer file is the index scaled",
            |s| {
                copy(s, INDEX, PEER);
                s.map_values(PEER, |p| p / 20.0)
            },
            ["run", "{case}", "--out", "{out}"],
            ["Corrowick Valves", "R²", "data/index.csv"]
        ),
        bad!(
            "two peers read the same file",
            |s| s.edit_case("data/peers/dunmere.csv", PEER),
            ["run", "{case}", "--out", "{out}"],
            ["peer.2.prices", "peer.1", PEER]
        ),
        bad!(
            "peer history too short",
            |s| keep_lines(s, PEER, |n| n < 900),
            ["run", "{case}", "--out", "{out}"],
            [
                "Corrowick Valves",
                "usable returns",
                "beta.min_observations = 36"
            ]
        ),
        bad!(
            "index file missing",
            |s| s.edit_case("data/index.csv", "data/gone_index.csv"),
            ["run", "{case}", "--out", "{out}"],
            ["data/gone_index.csv", "No such file"]
        ),
        bad!(
            "index never moves",
            |s| s.map_values(INDEX, |_| 1000.0),
            ["run", "{case}", "--out", "{out}"],
            [INDEX, "all 0", "zero variance"]
        ),
        bad!(
            "index price 1e100",
            |s| s.set_value(INDEX, LINE, "1e100"),
            ["run", "{case}", "--out", "{out}"],
            [INDEX, "line 848", "1e100", "market.index.accept_jumps"]
        ),
        bad!(
            "index price is text",
            |s| s.set_value(INDEX, LINE, "n/a"),
            ["run", "{case}", "--out", "{out}"],
            [INDEX, "line 848", "n/a"]
        ),
        bad!(
            "index history ends before the window",
            |s| {
                note("last", &line_text(s, INDEX, 299)[..10]);
                keep_lines(s, INDEX, |n| n < 300)
            },
            ["run", "{case}", "--out", "{out}"],
            [
                INDEX,
                "index return",
                "beta.min_observations = 36",
                "to {last}"
            ]
        ),
        bad!(
            "accepted jump date is not a date",
            |s| s.edit_case(
                "prices = \"data/peers/corrowick.csv\"",
                "prices = \"data/peers/corrowick.csv\"\naccept_jumps = [\"2023-02-30\"]"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "2023-02-30"]
        ),
    ]
}

fn yield_files() -> Vec<Bad> {
    vec![
        bad!(
            "yields in percent",
            |s| {
                s.map_values(RISK_FREE, |y| y * 100.0);
                // README: a yield of 1 (100% a year) or more is a percentage; the first such row
                // of the planted file is the one the message must name.
                let text = s.read(RISK_FREE);
                let line = 1 + text
                    .lines()
                    .position(|l| {
                        l.split(',').nth(1).and_then(|y| y.parse::<f64>().ok()) >= Some(1.0)
                    })
                    .expect("a yield of 1 or more");
                note("line", format!("line {line}"));
                note("yield", number_at(s, RISK_FREE, line, 1));
            },
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "{line}", "`yield` = {yield} ", "percentage"]
        ),
        bad!(
            "one yield in percent",
            |s| s.set_value(RISK_FREE, LINE, "3.8"),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 848", "3.8", "percentage"]
        ),
        bad!(
            // A series that goes on in percentages below 1 partway (0.52 for 0.52%, twenty
            // times the demo's yields) passes the 100% bound and the median check; the first
            // switched row (the demo's line 848, 2023-03-31) is named. README, "Sanity rules".
            "yields switching to percent partway, all below 1",
            |s| s.map_lines(RISK_FREE, |n, l| match l.split_once(',') {
                Some((date, y)) if n >= LINE => {
                    format!("{date},{}", y.parse::<f64>().unwrap() * 20.0)
                }
                _ => l.into(),
            }),
            ["run", "{case}", "--out", "{out}"],
            [
                RISK_FREE,
                "line 848",
                "on 2023-03-31 after 0.02591",
                "decimals and percentages mixed"
            ]
        ),
        bad!(
            "yields in percent, all below 1",
            |s| {
                let rate: f64 = case_key(s, "risk_free_rate").1.parse().unwrap();
                note("rate", rate);
                s.map_values(RISK_FREE, |y| y * 20.0)
            },
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "median yield", "market.risk_free_rate = {rate}"]
        ),
        bad!(
            "yield below -100%",
            |s| s.set_value(RISK_FREE, LINE, "-1.5"),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 848", "-1.5"]
        ),
        bad!(
            "yield is text",
            |s| s.set_value(RISK_FREE, LINE, "x"),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 848", "\"x\""]
        ),
        bad!(
            "NaN yield",
            |s| s.set_value(RISK_FREE, LINE, "nan"),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 848", "nan"]
        ),
        bad!(
            "infinite yield",
            |s| s.set_value(RISK_FREE, LINE, "-inf"),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 848", "-inf"]
        ),
        bad!(
            "no yield column",
            |s| s.set_line(RISK_FREE, 1, "date,rate"),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "`yield`", "date, rate"]
        ),
        bad!(
            "yield file missing",
            |s| s.edit_case(RISK_FREE, "data/gone_rf.csv"),
            ["run", "{case}", "--out", "{out}"],
            ["data/gone_rf.csv", "No such file"]
        ),
        bad!(
            "empty yield path",
            |s| s.edit_case(RISK_FREE, ""),
            ["run", "{case}", "--out", "{out}"],
            ["market.risk_free_series.yields", "\"\""]
        ),
        bad!(
            "duplicate yield date",
            |s| set_date(s, RISK_FREE, LINE + 1, LINE_DATE),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 849", "2023-03-31"]
        ),
        bad!(
            "unsorted yields",
            |s| set_date(s, RISK_FREE, LINE, "2023-04-05"),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 849", "sorted"]
        ),
        bad!(
            "semicolon yields",
            |s| s.map_lines(RISK_FREE, |_, l| l.replace(',', ";")),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 1", "semicolons"]
        ),
        bad!(
            "index prices as yields",
            |s| {
                // Every index level is far above 1, so the first row is the one named.
                note("first", number_at(s, INDEX, 2, 1));
                s.edit_case(
                    "yields = \"data/risk_free.csv\"",
                    "yields = \"data/index.csv\"\nyield_column = \"price\"",
                )
            },
            ["run", "{case}", "--out", "{out}"],
            [INDEX, "line 2", "`price` = {first} ", "not a yield series"]
        ),
        bad!(
            "yield file ragged",
            |s| s.set_line(
                RISK_FREE,
                LINE,
                &line_text(s, RISK_FREE, LINE).replacen('.', ",", 1)
            ),
            ["run", "{case}", "--out", "{out}"],
            [RISK_FREE, "line 848", "3 fields"]
        ),
    ]
}

/// `text` as a spreadsheet's "Unicode text" saves it: UTF-16 LE with a byte-order mark.
fn utf16(text: &str) -> Vec<u8> {
    [0xFF, 0xFE]
        .into_iter()
        .chain(text.encode_utf16().flat_map(u16::to_le_bytes))
        .collect()
}

fn spread_tables() -> Vec<Bad> {
    vec![
        // Found by review: a row without its rating was shown as a blank cell.
        bad!(
            "coverage row without a rating",
            |s| edit_at(s, COVERAGE, "4.20,BBB,0.0184", "4.20,,0.0184"),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=coverage"
            ],
            [COVERAGE, "{line}", "the rating is empty"]
        ),
        // Found by review: the message read as if the case file itself were broken.
        bad!(
            "the case file given as the rating table",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating",
                "--set",
                "debt.rating_table=case.toml"
            ],
            ["case.toml", "read as the spread table of debt.rating_table"]
        ),
        bad!(
            "rating table missing",
            |s| s.edit_case(RATING, "data/gone_spreads.csv"),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            ["data/gone_spreads.csv", "No such file"]
        ),
        bad!(
            "rating not in the table",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating",
                "--set",
                "debt.rating=ZZZ"
            ],
            ["debt.rating", "ZZZ", "AAA"]
        ),
        bad!(
            "spread is text",
            |s| {
                let line = line_starting(s, RATING, "BBB,");
                note("line", format!("line {line}"));
                s.set_line(RATING, line, "BBB,abc")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "{line}", "abc"]
        ),
        // Found by review: both were "line 1: not UTF-8 text" alone.
        bad!(
            "spread table saved as UTF-16",
            |s| s.write(RATING, utf16(&s.read(RATING))),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "UTF-16", "not CSV text"]
        ),
        bad!(
            "spread table that is a workbook",
            |s| s.write(RATING, b"PK\x03\x04 the rest of a workbook's package"),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "a workbook", "not CSV text"]
        ),
        bad!(
            "spread table separated by semicolons",
            |s| { s.map_lines(RATING, |_, l| l.replace(',', ";")) },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "no `rating` column", "separated by semicolons"]
        ),
        // Found by review: a table in basis points was advised to read 45 as 0.45.
        bad!(
            "spreads in basis points",
            |s| {
                let line = line_starting(s, RATING, "AAA,");
                s.set_line(RATING, line, "AAA,45")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "spread = 45", "0.0045 for 45 basis points"]
        ),
        // A decimal comma splits the spread in two cells; it used to be read as a spread of 0.
        bad!(
            "spread with a decimal comma",
            |s| {
                let line = line_starting(s, RATING, "BBB,");
                note("line", format!("line {line}"));
                s.set_line(RATING, line, "BBB,0,0184")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [
                RATING,
                "{line}",
                "`BBB,0,0184` has 3 fields but the header has 2"
            ]
        ),
        // A quote inside an unquoted cell of a column hurdle does not read is text to the CSV
        // reader; a later decimal comma must still be caught as an extra field.
        bad!(
            "price after a stray quote, with a decimal comma",
            |s| {
                s.map_lines(PEER, |n, l| match n {
                    1 => format!("{l},note"),
                    n if n == LINE - 1 => format!("{l},said 5\" pipe"),
                    n if n == LINE => format!("{},ok", l.replacen('.', ",", 1)),
                    _ => format!("{l},ok"),
                })
            },
            ["betas", "{case}"],
            [PEER, "line 848", "has 4 fields but the header has 3"]
        ),
        bad!(
            "spread column named twice",
            |s| {
                let line = line_starting(s, RATING, "rating,");
                note("line", format!("line {line}"));
                s.set_line(RATING, line, "rating,spread,spread")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [
                RATING,
                "{line}",
                "the header names `spread` in columns 2 and 3"
            ]
        ),
        bad!(
            "spread NaN",
            |s| {
                let line = line_starting(s, RATING, "BBB,");
                note("line", format!("line {line}"));
                s.set_line(RATING, line, "BBB,NaN")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "{line}", "NaN"]
        ),
        bad!(
            "spread in percent",
            |s| {
                // The BBB spread typed as a percentage: 100 times the table's decimal.
                let line = line_starting(s, RATING, "BBB,");
                let spread: f64 = number_at(s, RATING, line, 1).parse().unwrap();
                let typed = format!("{:.2}", spread * 100.0);
                note("line", format!("line {line}"));
                note("typed", typed.parse::<f64>().unwrap());
                s.set_line(RATING, line, &format!("BBB,{typed}"))
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [
                RATING,
                "{line}",
                "{typed}",
                "spreads are decimals over the risk-free rate"
            ]
        ),
        bad!(
            "rating repeated",
            |s| {
                // The BB row relabelled BBB, so BBB appears on the row above and on this one.
                let bbb = line_starting(s, RATING, "BBB,");
                let bb = line_starting(s, RATING, "BB,");
                assert_eq!(bb, bbb + 1, "BB follows BBB in {RATING}");
                note("first", format!("line {bbb}"));
                note("second", format!("line {bb}"));
                s.set_line(
                    RATING,
                    bb,
                    &line_text(s, RATING, bb).replacen("BB,", "BBB,", 1),
                )
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "{second}", "{first}", "BBB"]
        ),
        bad!(
            "no spread column",
            |s| {
                let line = line_starting(s, RATING, "rating,spread");
                note("line", format!("line {line}"));
                s.set_line(RATING, line, "rating,margin")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "{line}", "`spread`", "margin"]
        ),
        bad!(
            "row with too few cells",
            |s| {
                let line = line_starting(s, RATING, "BBB,");
                note("line", format!("line {line}"));
                s.set_line(RATING, line, "BBB")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "{line}", "1 cells"]
        ),
        bad!(
            "table without rows",
            |s| s.write(RATING, "rating,spread\n"),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "no rows"]
        ),
        bad!(
            "table not UTF-8",
            |s| s.write(RATING, b"rating,spread\nBBB,0.0160\nA\xff,0.01\n"),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            [RATING, "line 3", "UTF-8"]
        ),
        bad!(
            "empty rating table path",
            |s| s.edit_case(RATING, ""),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            ["debt.rating_table", "\"\""]
        ),
        bad!(
            "coverage rows not ascending",
            |s| {
                // The BB row's threshold set below the B row's above it.
                let text = s.read(COVERAGE);
                let line = 1 + text.lines().position(|l| l.contains(",BB,")).unwrap();
                note("line", format!("line {line}"));
                note("above", number_at(s, COVERAGE, line - 1, 0));
                let row = line_text(s, COVERAGE, line);
                let (_, rest) = row.split_once(',').unwrap();
                s.set_line(COVERAGE, line, &format!("1.0,{rest}"))
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=coverage"
            ],
            [COVERAGE, "{line}", "{above}", "ascending"]
        ),
        bad!(
            "coverage column missing",
            |s| {
                let line = line_starting(s, COVERAGE, "min_coverage,");
                note("line", format!("line {line}"));
                s.set_line(COVERAGE, line, "coverage,rating,spread")
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=coverage"
            ],
            [COVERAGE, "{line}", "`min_coverage`"]
        ),
        bad!(
            "coverage threshold NaN",
            |s| {
                // The first row's threshold (the C row) made NaN.
                let line = 1 + line_starting(s, COVERAGE, "min_coverage,");
                note("line", format!("line {line}"));
                let row = line_text(s, COVERAGE, line);
                let (_, rest) = row.split_once(',').unwrap();
                s.set_line(COVERAGE, line, &format!("nan,{rest}"))
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=coverage"
            ],
            [COVERAGE, "{line}", "NaN"]
        ),
        bad!(
            "TOML table with an unknown key",
            |s| {
                s.write(
                    "data/spreads.toml",
                    "[[row]]\nrating = \"BBB\"\nspread = 0.016\nmargin = 1\n",
                );
                s.edit_case(RATING, "data/spreads.toml");
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            ["data/spreads.toml", "margin", "line 4"]
        ),
        bad!(
            "TOML table broken",
            |s| {
                s.write("data/spreads.toml", "[[row]\nrating = \"BBB\"\n");
                s.edit_case(RATING, "data/spreads.toml");
            },
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=rating"
            ],
            ["data/spreads.toml", "line 1"]
        ),
    ]
}

fn case_files() -> Vec<Bad> {
    vec![
        // Found by review: a value ending in a character of several bytes, unquoted, panicked
        // in the hint for a rate typed with a % sign (a byte cut inside the `€`).
        bad!(
            "case currency unquoted, a symbol of three bytes",
            |s| s.edit_case("currency = \"EUR\"", "currency = €"),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "line 8", "currency = €", "must be quoted"]
        ),
        // Found by review: an empty currency was shown as an empty cell in the memo.
        bad!(
            "empty currency",
            |s| set_case_key(s, "currency", "\"\""),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "case.currency is empty"]
        ),
        // Found by review: the TOML reader kept the first two values of three unsaid.
        bad!(
            "a range of three values",
            |s| edit_at(
                s,
                "case.toml",
                "[uncertainty]\n",
                "[uncertainty]\nequity_risk_premium = [0.04, 0.05, 0.06]\n"
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "case.toml",
                "{next}",
                "a range is two numbers [low, high]; found a list of 3"
            ]
        ),
        // Found by review: "the table [claimed] is missing" for the key of [reconcile].
        bad!(
            "[reconcile] without its claim",
            |s| s.edit_case("claimed = \"claimed.toml\"", ""),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "`claimed` is missing here", "[reconcile]"]
        ),
        bad!(
            "TOML syntax error",
            |s| edit_at(s, "case.toml", "currency = \"EUR\"", "currency = \"EUR"),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "{line}"]
        ),
        bad!(
            "[peer] for [[peer]]",
            |s| edit_at(
                s,
                "case.toml",
                "[[peer]]\nname = \"Brenvale",
                "[peer]\nname = \"Brenvale"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "{line}", "[peer]", "[[peer]]"]
        ),
        bad!(
            "unknown key",
            |s| edit_at(
                s,
                "case.toml",
                "lookback = 60\n",
                "lookback = 60\nlookbak = 60\n"
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "case.toml",
                "{next}, column 1 (`lookbak = 60`): unknown key `lookbak`: did you mean `lookback`?"
            ]
        ),
        bad!(
            "missing required key",
            |s| {
                let line = line_starting(s, "case.toml", "risk_free_rate = ");
                s.edit_case(&format!("{}\n", line_text(s, "case.toml", line)), "")
            },
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "risk_free_rate"]
        ),
        bad!(
            "Vasicek prior mean beyond any industry's beta",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "beta.adjustment=vasicek",
                "--set",
                "beta.vasicek_prior_mean=1e10",
                "--set",
                "beta.vasicek_prior_variance=0.1"
            ],
            ["beta.vasicek_prior_mean", "10000000000", "[-1, 5)"]
        ),
        bad!(
            "rate as text",
            |s| {
                let (_, rate) = case_key(s, "risk_free_rate");
                set_case_key(s, "risk_free_rate", &format!("\"{rate}\""))
            },
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "{line}", "\"{was}\""]
        ),
        bad!(
            "rate in percent",
            |s| set_case_key(s, "risk_free_rate", "3.8"),
            ["run", "{case}", "--out", "{out}"],
            ["market.risk_free_rate", "3.8", "0.038 for 3.8%"]
        ),
        bad!(
            "rate with a percent sign",
            |s| set_case_key(s, "risk_free_rate", "2.67%"),
            ["run", "{case}", "--out", "{out}"],
            ["line 12", "2.67% is not a number", "0.0267 for 2.67%"]
        ),
        bad!(
            "rate with a decimal comma",
            |s| set_case_key(s, "risk_free_rate", "0,0267"),
            ["run", "{case}", "--out", "{out}"],
            ["line 12", "0,0267 is not a number", "decimal point"]
        ),
        bad!(
            "typographic quotes",
            |s| s.edit_case("currency = \"EUR\"", "currency = “EUR”"),
            ["run", "{case}", "--out", "{out}"],
            ["line 8", "“EUR”", "straight quotes"]
        ),
        bad!(
            "a day-first date in the case",
            |s| s.edit_case("valuation_date = 2026-09-30", "valuation_date = 30/09/2026"),
            ["run", "{case}", "--out", "{out}"],
            ["line 7", "30/09/2026", "YYYY-MM-DD"]
        ),
        bad!(
            "NaN rate",
            |s| set_case_key(s, "risk_free_rate", "nan"),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "market.risk_free_rate", "nan"]
        ),
        bad!(
            "infinite premium",
            |s| set_case_key(s, "equity_risk_premium", "+inf"),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "market.equity_risk_premium", "+inf"]
        ),
        // Found by review: a premium in basis points was advised to be 5.17, itself out of
        // range.
        bad!(
            "premium in basis points",
            |s| set_case_key(s, "equity_risk_premium", "517"),
            ["run", "{case}", "--out", "{out}"],
            [
                "market.equity_risk_premium = 517",
                "0.0517 for 517 basis points, 5.17%"
            ]
        ),
        // Found by review: an inflation typed as a percentage (2 for 2%) was within the old
        // bound of 1,000% and turned the converted WACC to −63% without a word.
        bad!(
            "inflation as a percentage",
            |s| {
                s.edit_case(
                "[market]",
                "[conversion]\ncurrency = \"USD\"\ninflation_case = 2\ninflation_output = 0.025\n\n[market]"
            )
            },
            ["run", "{case}", "--out", "{out}"],
            ["conversion.inflation_case = 2", "0.02 for 2%"]
        ),
        bad!(
            "overflowing number",
            |s| set_case_key(s, "equity_risk_premium", "1e999"),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "market.equity_risk_premium", "1e999"]
        ),
        bad!(
            "interest expense too small for a coverage ratio",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "debt.source=coverage",
                "--set",
                "debt.interest_expense=1e-320"
            ],
            ["debt.interest_expense", "1e-320", "too small"]
        ),
        // Found by `fuzz/run.sh` (the overrides target): (Kd − rf) / 1e-320 overflowed to an
        // infinite debt beta, which only the last guard caught.
        bad!(
            "subnormal ERP under a credit-spread debt beta",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "leverage.debt_beta_source=credit-spread",
                "--set",
                "market.equity_risk_premium=1e-320"
            ],
            ["market.equity_risk_premium", "1e-320", "credit-spread"]
        ),
        bad!(
            "ERP draws from zero under a credit-spread debt beta",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "leverage.debt_beta_source=credit-spread",
                "--set",
                "uncertainty.equity_risk_premium=[0.0, 0.06]"
            ],
            [
                "uncertainty.equity_risk_premium",
                "[0, 0.06]",
                "credit-spread"
            ]
        ),
        bad!(
            "NaN in an unused key",
            |s| edit_at(s, "case.toml", "ebit = 210.0", "ebit = nan"),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "debt.ebit", "nan"]
        ),
        bad!(
            "infinity in an unused key",
            |s| edit_at(
                s,
                "case.toml",
                "subject_equity_value = 1500.0",
                "subject_equity_value = inf"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "target.subject_equity_value", "inf"]
        ),
        bad!(
            "negative subject debt under an explicit target",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "target.subject_debt=-1"
            ],
            [
                "after applying --set target.subject_debt=-1",
                "target.subject_debt = -1 is negative"
            ]
        ),
        bad!(
            "zero subject equity under an explicit target",
            |s| s.edit_case(
                "subject_equity_value = 1500.0",
                "subject_equity_value = 0.0"
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "case.toml",
                "target.subject_equity_value = 0 must be positive"
            ]
        ),
        bad!(
            "NaN in a peer",
            |s| s.edit_case("debt = 520.0", "debt = -nan"),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.debt", "-nan"]
        ),
        bad!(
            "NaN in a range",
            |s| s.edit_case("seed = 1", "seed = 1\nequity_risk_premium = [0.04, nan]"),
            ["run", "{case}", "--out", "{out}"],
            ["uncertainty.equity_risk_premium[1]", "nan"]
        ),
        bad!(
            "tax rate above 1",
            |s| s.edit_case("tax_rate = 0.25\n# For", "tax_rate = 1.5\n# For"),
            ["run", "{case}", "--out", "{out}"],
            ["target.tax_rate", "1.5"]
        ),
        bad!(
            "negative target D/E",
            |s| s.edit_case("debt_to_equity = 0.40", "debt_to_equity = -0.1"),
            ["run", "{case}", "--out", "{out}"],
            ["target.debt_to_equity", "-0.1"]
        ),
        bad!(
            "target D/E beyond the bound",
            |s| s.edit_case("debt_to_equity = 0.40", "debt_to_equity = 25"),
            ["run", "{case}", "--out", "{out}"],
            ["target.debt_to_equity = 25", "above 10"]
        ),
        bad!(
            "target debt-to-capital beyond the bound",
            |s| s.edit_case("debt_to_equity = 0.40", "debt_to_capital = 0.95"),
            ["run", "{case}", "--out", "{out}"],
            ["target.debt_to_capital = 0.95", "above 10"]
        ),
        bad!(
            "both target ratios",
            |s| s.edit_case(
                "debt_to_equity = 0.40",
                "debt_to_equity = 0.40\ndebt_to_capital = 0.3"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["target.debt_to_equity", "target.debt_to_capital"]
        ),
        bad!(
            "no target ratio",
            |s| s.edit_case("debt_to_equity = 0.40\n", ""),
            ["run", "{case}", "--out", "{out}"],
            ["[target]", "debt_to_equity"]
        ),
        bad!(
            "zero equity value",
            |s| s.edit_case("equity_value = 1150.0", "equity_value = 0.0"),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.equity_value", "= 0 "]
        ),
        bad!(
            "tiny equity value",
            |s| s.edit_case("equity_value = 1150.0", "equity_value = 1e-320"),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1", "1e-320", "D/E"]
        ),
        bad!(
            "negative debt",
            |s| s.edit_case("debt = 520.0", "debt = -520.0"),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.debt", "-520"]
        ),
        bad!(
            "peer D/E beyond the bound",
            |s| s.edit_case("debt = 610.0", "debt = 61000.0"),
            ["run", "{case}", "--out", "{out}"],
            ["peer.3", "61000", "above 10"]
        ),
        bad!(
            "peer cash above its capital",
            |s| s.edit_case("cash = 60.0", "cash = 6000.0"),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.cash", "6000"]
        ),
        bad!(
            "duplicate peer names",
            |s| s.edit_case(
                "name = \"Dunmere Hydraulics\"",
                "name = \"Corrowick Valves\""
            ),
            ["run", "{case}", "--out", "{out}"],
            ["peer.2.name", "Corrowick Valves", "peer.1.name"]
        ),
        // Found by review: names a reader, or `--set peer.NAME`, cannot tell apart.
        bad!(
            "peer names differing only in capitals",
            |s| s.edit_case(
                "name = \"Dunmere Hydraulics\"",
                "name = \"CORROWICK VALVES\""
            ),
            ["run", "{case}", "--out", "{out}"],
            ["peer.2.name", "repeats peer.1.name", "capitals are ignored"]
        ),
        bad!(
            "a peer name with a trailing space",
            |s| s.edit_case(
                "name = \"Dunmere Hydraulics\"",
                "name = \"Dunmere Hydraulics \""
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "peer.2.name",
                "\"Dunmere Hydraulics \"",
                "white space around it"
            ]
        ),
        bad!(
            "no peers",
            |s| {
                let t = s.read("case.toml");
                s.write("case.toml", &t[..t.find("[[peer]]").unwrap()])
            },
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "[[peer]]"]
        ),
        bad!(
            "empty title",
            |s| s.edit_case(
                "title = \"Quillmarsh Pumps: cost of capital for a fair-value measurement (demo)\"",
                "title = \" \""
            ),
            ["run", "{case}", "--out", "{out}"],
            ["case.title", "empty"]
        ),
        bad!(
            // Markdown's link syntax (CommonMark 0.31, "Links"): a name that is one would put a
            // link into the memo and the report; found by review.
            "peer name holding a Markdown link",
            |s| s.edit_case(
                "name = \"Brenvale Fluid Systems\"",
                "name = \"[Brenvale](http://example.invalid/x)\""
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "peer.0.name",
                "[Brenvale](http://example.invalid/x)",
                "holds `[`",
                "square brackets"
            ]
        ),
        bad!(
            "title with a line break",
            |s| s.edit_case(
                "title = \"Quillmarsh Pumps: cost of capital for a fair-value measurement (demo)\"",
                "title = \"Quillmarsh Pumps:\\ncost of capital\""
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "case.title",
                "\"Quillmarsh Pumps:\\ncost of capital\"",
                "one line"
            ]
        ),
        bad!(
            "peer name with a tab",
            |s| s.edit_case(
                "name = \"Corrowick Valves\"",
                "name = \"Corrowick\\tValves\""
            ),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.name", "\"Corrowick\\tValves\"", "one line"]
        ),
        bad!(
            "impossible valuation date",
            |s| edit_at(
                s,
                "case.toml",
                "valuation_date = 2026-09-30",
                "valuation_date = 2026-02-30"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "{line}"]
        ),
        bad!(
            "valuation date centuries ago",
            |s| s.edit_case("valuation_date = 2026-09-30", "valuation_date = 1066-10-14"),
            ["run", "{case}", "--out", "{out}"],
            ["case.valuation_date", "1066-10-14"]
        ),
        bad!(
            "lookback of zero",
            |s| s.edit_case("lookback = 60", "lookback = 0"),
            ["run", "{case}", "--out", "{out}"],
            ["beta.lookback", "0"]
        ),
        bad!(
            "lookback span unit unknown",
            |s| s.edit_case("lookback = 60", "lookback = \"5x\""),
            ["run", "{case}", "--out", "{out}"],
            ["beta.lookback", "5x"]
        ),
        bad!(
            "lookback beyond any history",
            |s| s.edit_case("lookback = 60", "lookback = 4000000"),
            ["run", "{case}", "--out", "{out}"],
            ["beta.lookback", "4000000", "at most 2400 monthly periods"]
        ),
        bad!(
            "lookback beyond 32 bits",
            |s| edit_at(s, "case.toml", "lookback = 60", "lookback = 5000000000"),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "beta.lookback = 5000000000", "at most 200 years"]
        ),
        bad!(
            "a debt wider than 64 bits",
            |s| edit_at(
                s,
                "case.toml",
                "debt = 520.0",
                "debt = 99999999999999999999"
            ),
            ["run", "{case}", "--out", "{out}"],
            [
                "{line}",
                "99999999999999999999 has more digits",
                "decimal point"
            ]
        ),
        bad!(
            "a backtick in a peer name",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "peer.1.name=\"Corrowick `V`\""
            ],
            ["peer.1.name", "holds a backtick"]
        ),
        bad!(
            "window_start with lookback",
            |s| edit_at(
                s,
                "case.toml",
                "lookback = 60",
                "lookback = 60\nwindow_start = 2022-01-01"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["{next}", "beta.window_start", "{line}", "beta.lookback"]
        ),
        bad!(
            "window end after the valuation date",
            |s| s.edit_case("lookback = 60", "lookback = 60\nwindow_end = 2027-01-31"),
            ["run", "{case}", "--out", "{out}"],
            ["beta.window_end", "2027-01-31"]
        ),
        bad!(
            "two billion draws",
            |s| s.edit_case("draws = 10000", "draws = 2000000000"),
            ["run", "{case}", "--out", "{out}"],
            ["uncertainty.draws", "2000000000", "1000000"]
        ),
        bad!(
            "too few draws",
            |s| s.edit_case("draws = 10000", "draws = 10"),
            ["run", "{case}", "--out", "{out}"],
            ["uncertainty.draws", "10"]
        ),
        bad!(
            "draws beyond a 32-bit count",
            |s| edit_at(s, "case.toml", "draws = 10000", "draws = 5000000000"),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "{line}", "5000000000"]
        ),
        bad!(
            "unknown frequency",
            |s| edit_at(
                s,
                "case.toml",
                "frequency = \"monthly\"",
                "frequency = \"hourly\""
            ),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "hourly"]
        ),
        bad!(
            "unknown method",
            |s| edit_at(s, "case.toml", "method = \"ols\"", "method = \"magic\""),
            ["run", "{case}", "--out", "{out}"],
            ["{line}", "magic"]
        ),
        bad!(
            "preferred weight beyond the bound",
            |s| s.edit_case(
                "[uncertainty]",
                "[preferred]\nweight = 0.7\ncost = 0.07\n\n[uncertainty]"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["preferred.weight", "0.7"]
        ),
        bad!(
            "NaN lease weight",
            |s| s.edit_case("[uncertainty]", "[leases]\nweight = nan\n\n[uncertainty]"),
            ["run", "{case}", "--out", "{out}"],
            ["leases.weight", "nan"]
        ),
        bad!(
            "case file not UTF-8",
            |s| {
                // The byte goes on a new last line.
                note(
                    "line",
                    format!("line {}", s.read("case.toml").lines().count() + 1),
                );
                let mut b = std::fs::read(s.path("case.toml")).unwrap();
                b.extend_from_slice(b"# \xff\n");
                s.write("case.toml", b)
            },
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "{line}", "UTF-8"]
        ),
        bad!(
            "case file missing",
            nothing,
            ["run", "{dir}/nowhere.toml", "--out", "{out}"],
            ["nowhere.toml", "No such file"]
        ),
        bad!(
            "a price file given as the case",
            nothing,
            ["run", "{dir}/data/index.csv", "--out", "{out}"],
            ["index.csv", "CSV table", "date,price"]
        ),
        bad!(
            "a claimed build-up given as the case",
            nothing,
            ["run", "{dir}/claimed.toml", "--out", "{out}"],
            ["claimed.toml", "claimed build-up", "hurdle compare"]
        ),
        bad!(
            "case file is a folder",
            nothing,
            ["run", "{dir}/data", "--out", "{out}"],
            ["data", "directory"]
        ),
        bad!(
            "empty case file",
            |s| s.write("case.toml", ""),
            ["run", "{case}", "--out", "{out}"],
            ["case.toml", "the file is empty"]
        ),
        bad!(
            "uncertainty range reversed",
            |s| s.edit_case("seed = 1", "seed = 1\nequity_risk_premium = [0.07, 0.04]"),
            ["run", "{case}", "--out", "{out}"],
            ["uncertainty.equity_risk_premium", "0.07"]
        ),
        // Each end of a range is a rate the ERP itself may take, [−0.5, 1): 4.5 is a
        // percentage typed for 0.045.
        bad!(
            "uncertainty range in percent",
            |s| s.edit_case("seed = 1", "seed = 1\nequity_risk_premium = [4.5, 6.0]"),
            ["run", "{case}", "--out", "{out}"],
            [
                "uncertainty.equity_risk_premium = 4.5",
                "[-0.5, 1)",
                "0.045 for 4.5%",
                "low end"
            ]
        ),
        bad!(
            "uncertainty risk-free range below the bound",
            |s| s.edit_case("seed = 1", "seed = 1\nrisk_free_rate = [-0.6, 0.05]"),
            ["run", "{case}", "--out", "{out}"],
            ["uncertainty.risk_free_rate = -0.6", "[-0.5, 1)"]
        ),
        bad!(
            "too few minimum observations",
            |s| s.edit_case("min_observations = 36", "min_observations = 2"),
            ["run", "{case}", "--out", "{out}"],
            ["beta.min_observations", "2"]
        ),
        bad!(
            "rolling window of one",
            |s| s.edit_case(
                "adjustment = \"blume\"",
                "adjustment = \"blume\"\nrolling_window = 1"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["beta.rolling_window", "1"]
        ),
        bad!(
            "Dimson lags beyond a 32-bit product",
            |s| s.edit_case(
                "method = \"ols\"",
                "method = \"dimson\"\ndimson_lags = 4000000000"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["beta.dimson_lags", "4000000000"]
        ),
        bad!(
            "Newey-West lags beyond any history",
            |s| s.edit_case(
                "adjustment = \"blume\"",
                "adjustment = \"blume\"\nstd_errors = \"newey-west\"\nnewey_west_lags = 3000000000"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["beta.newey_west_lags", "3000000000"]
        ),
        bad!(
            "every peer excluded",
            |s| {
                // Every tax_rate line after the first [[peer]] is a peer's.
                let first = 1 + s
                    .read("case.toml")
                    .lines()
                    .position(|l| l == "[[peer]]")
                    .unwrap();
                s.map_lines("case.toml", |n, l| {
                    if n > first && l.starts_with("tax_rate") {
                        format!("{l}\nexclude = \"test\"")
                    } else {
                        l.into()
                    }
                })
            },
            ["run", "{case}", "--out", "{out}"],
            ["every [[peer]]", "exclude"]
        ),
        bad!(
            "inflation of -100%",
            |s| {
                s.edit_case("[uncertainty]", "[conversion]\ncurrency = \"USD\"\ninflation_case = -1.0\ninflation_output = 0.02\n\n[uncertainty]")
            },
            ["run", "{case}", "--out", "{out}"],
            ["conversion.inflation_case", "-1"]
        ),
        bad!(
            // Fisher (1930): one currency's nominal rate has one expected inflation behind it;
            // the demo case is in EUR, so "converting" to EUR at another inflation is refused.
            "conversion to the case's own currency at another inflation",
            |s| {
                s.edit_case("[uncertainty]", "[conversion]\ncurrency = \"eur\"\ninflation_case = 0.02\ninflation_output = 0.03\n\n[uncertainty]")
            },
            ["run", "{case}", "--out", "{out}"],
            [
                "conversion.currency",
                "eur",
                "case's own currency",
                "0.02",
                "0.03"
            ]
        ),
        bad!(
            "sensitivity axis malformed",
            |s| s.edit_case(
                "[uncertainty]",
                "[sensitivity]\nrows = \"market.equity_risk_premium=0.04-0.07\"\n\n[uncertainty]"
            ),
            ["run", "{case}", "--out", "{out}"],
            ["sensitivity.rows", "0.04-0.07"]
        ),
        bad!(
            "reconcile file missing",
            |s| s.edit_case("claimed = \"claimed.toml\"", "claimed = \"gone.toml\""),
            ["run", "{case}", "--out", "{out}"],
            [
                "gone.toml",
                "the claimed build-up that the case's reconcile.claimed names",
                "No such file"
            ]
        ),
        bad!(
            "empty exclusion reason",
            |s| s.edit_case(
                "equity_value = 1150.0",
                "equity_value = 1150.0\nexclude = \"\""
            ),
            ["run", "{case}", "--out", "{out}"],
            ["peer.1.exclude", "empty"]
        ),
        bad!(
            "cost of debt in percent",
            |s| set_case_key(s, "cost_pre_tax", "5.8"),
            ["run", "{case}", "--out", "{out}"],
            ["debt.cost_pre_tax", "5.8", "0.058 for 5.8%"]
        ),
        bad!(
            "NaN tax rate of a peer",
            |s| s.edit_case("tax_rate = 0.28", "tax_rate = nan"),
            ["run", "{case}", "--out", "{out}"],
            ["peer.2.tax_rate", "nan"]
        ),
        bad!(
            "window_start before 1800",
            |s| s.edit_case("lookback = 60", "window_start = 1500-01-01"),
            ["run", "{case}", "--out", "{out}"],
            ["beta.window_start", "1500-01-01"]
        ),
    ]
}

/// A claimed build-up in `<case>/bad_claim.toml` with `line` replaced by `with` (its line noted
/// as `{line}`, the one after as `{next}`).
fn claim(s: &Sandbox, line: &str, with: &str) {
    copy(s, "claimed.toml", "bad_claim.toml");
    edit_at(s, "bad_claim.toml", line, with);
}

fn claimed_files() -> Vec<Bad> {
    vec![
        // Found by review: a one-page claim of a WACC and a beta was told of one missing key
        // per run, under the case file's section of README.
        bad!(
            "claimed build-up without most components",
            |s| {
                claim(s, "risk_free_rate = 0.040", "");
                edit_at(s, "bad_claim.toml", "tax_rate = 0.25", "");
            },
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "[claimed] lacks risk_free_rate, tax_rate:",
                "README, Claimed build-up files"
            ]
        ),
        bad!(
            "claimed beta NaN",
            |s| claim(s, "beta = 1.10", "beta = nan"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "{line}", "claimed.beta", "nan"]
        ),
        bad!(
            "claimed beta 1e308",
            |s| claim(s, "beta = 1.10", "beta = 1e308"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "{line}",
                "claimed.beta",
                "1e308",
                "[-5, 10]: a figure"
            ]
        ),
        bad!(
            "claimed WACC infinite",
            |s| claim(s, "wacc = 0.0935", "wacc = inf"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "{line}", "claimed.wacc", "inf"]
        ),
        bad!(
            "claimed rate in percent",
            |s| claim(s, "risk_free_rate = 0.040", "risk_free_rate = 4.0"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "{line}", "claimed.risk_free_rate", "4.0"]
        ),
        bad!(
            "claimed tax rate above 1",
            |s| claim(s, "tax_rate = 0.25", "tax_rate = 1.5"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "{line}",
                "claimed.tax_rate",
                "1.5",
                "rates are decimals"
            ]
        ),
        // Found by review: a claim whose [claimed] header was lost read as a case.
        bad!(
            "claimed file without its [claimed] header",
            |s| claim(s, "[claimed]", ""),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "neither a case file",
                "no [claimed] table",
                "wacc"
            ]
        ),
        bad!(
            "claimed negative D/E",
            |s| claim(s, "debt_to_equity = 0.50", "debt_to_equity = -0.5"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "claimed.debt_to_equity", "-0.5"]
        ),
        bad!(
            "claimed D/E beyond the bound",
            |s| claim(s, "debt_to_equity = 0.50", "debt_to_equity = 1e6"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "{line}", "claimed.debt_to_equity", "1e6"]
        ),
        bad!(
            "claimed both ratios",
            |s| claim(
                s,
                "debt_to_equity = 0.50",
                "debt_to_equity = 0.50\ndebt_to_capital = 0.3"
            ),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "debt_to_equity", "debt_to_capital"]
        ),
        bad!(
            "claimed preferred weight without its cost",
            |s| claim(s, "beta = 1.10", "beta = 1.10\npreferred_weight = 0.05"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "claimed.preferred_weight = 0.05",
                "needs claimed.preferred_cost"
            ]
        ),
        bad!(
            "claimed lease cost without a lease weight",
            |s| claim(s, "beta = 1.10", "beta = 1.10\nlease_cost_pre_tax = 0.05"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "claimed.lease_cost_pre_tax is given",
                "claimed.lease_weight is 0"
            ]
        ),
        bad!(
            "claimed preferred and lease weights summing to 1",
            |s| claim(
                s,
                "beta = 1.10",
                "beta = 1.10\npreferred_weight = 0.5\npreferred_cost = 0.07\nlease_weight = 0.5"
            ),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "0.5 + 0.5", "sum below 1"]
        ),
        bad!(
            // The bound of a case's [leases] weight (README, "Sanity rules"), found by review
            // to be missing for a claim.
            "claimed lease weight above half of capital",
            |s| claim(s, "beta = 1.10", "beta = 1.10\nlease_weight = 0.6"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "claimed.lease_weight = 0.6", "above 0.5"]
        ),
        bad!(
            "claimed lease weight in percent",
            |s| claim(s, "beta = 1.10", "beta = 1.10\nlease_weight = 10"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "{next}",
                "claimed.lease_weight",
                "10",
                "weights are decimals"
            ]
        ),
        bad!(
            "claimed preferred weight of all capital",
            |s| claim(s, "beta = 1.10", "beta = 1.10\npreferred_weight = 1.0"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "{next}",
                "claimed.preferred_weight = 1.0",
                "a share of total capital below 1"
            ]
        ),
        bad!(
            "claimed as_of not a date",
            |s| claim(s, "beta = 1.10", "beta = 1.10\nas_of = \"last quarter\""),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "{next}", "last quarter"]
        ),
        bad!(
            "claimed beta missing",
            |s| claim(s, "beta = 1.10\n", ""),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "beta"]
        ),
        bad!(
            "claimed unknown key",
            |s| claim(s, "beta = 1.10", "beta = 1.10\nbeta_unlevered = 0.8"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "beta_unlevered", "{next}"]
        ),
        bad!(
            "claimed not TOML",
            |s| claim(s, "beta = 1.10", "beta = 1,10"),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "{line}"]
        ),
        bad!(
            "claimed cost of debt in percent",
            |s| claim(
                s,
                "cost_of_debt_pre_tax = 0.062",
                "cost_of_debt_pre_tax = 6.2"
            ),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            [
                "bad_claim.toml",
                "{line}",
                "claimed.cost_of_debt_pre_tax",
                "6.2"
            ]
        ),
        bad!(
            "claimed file missing",
            nothing,
            ["compare", "{case}", "{dir}/gone_claim.toml"],
            ["gone_claim.toml", "No such file"]
        ),
        bad!(
            "claimed as_of outside the years a case holds",
            |s| edit_at(
                s,
                "claimed.toml",
                "[claimed]\n",
                "[claimed]\nas_of = 9999-12-31\n"
            ),
            ["compare", "{case}", "{dir}/claimed.toml"],
            ["claimed.toml", "claimed.as_of = 9999-12-31", "1800 to 2199"]
        ),
        bad!(
            "reconciled claim with NaN",
            |s| edit_at(s, "claimed.toml", "beta = 1.10", "beta = nan"),
            ["run", "{case}", "--out", "{out}"],
            ["claimed.toml", "{line}", "claimed.beta", "nan"]
        ),
        bad!(
            "claimed premiums NaN written as text",
            |s| claim(s, "premiums = 0.010", "premiums = \"nan\""),
            ["compare", "{case}", "{dir}/bad_claim.toml"],
            ["bad_claim.toml", "{line}", "premiums"]
        ),
    ]
}

fn overrides() -> Vec<Bad> {
    vec![
        // Found by review: the ratio was written "D/E = inf".
        bad!(
            "--set subject structure beyond any D/E",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "target.source=subject",
                "--set",
                "target.subject_debt=1e100",
                "--set",
                "target.subject_equity_value=1e-100"
            ],
            [
                "target.subject_debt = 1e100",
                "gives D/E = 1.000e200, above 10"
            ]
        ),
        // Found by review: amounts near the largest double were accepted and overflowed in the
        // workbook's recalculation (#NUM!).
        bad!(
            "--set a peer's equity value beyond any amount",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "peer.0.equity_value=1.7e308"
            ],
            [
                "--set peer.0.equity_value=1.7e308",
                "peer.0.equity_value (peer \"Brenvale Fluid Systems\") = 1.7e308 lies outside \
                 1e-100 to 1e100"
            ]
        ),
        // Found by review: `.5` and `1e400`, typed without quotes, were told to drop them.
        bad!(
            "--set a number without a digit before its point",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.equity_risk_premium=.5"
            ],
            ["\".5\" is not a number: write a digit on both sides of the decimal point"]
        ),
        bad!(
            "--set a number beyond a double",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.equity_risk_premium=1e400"
            ],
            ["\"1e400\" is not a number: beyond the largest number a file holds"]
        ),
        // Found by review: the memo said "a change larger than inf bp".
        bad!(
            "--set influence threshold beyond 1",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "uncertainty.influence_threshold=1e308"
            ],
            ["uncertainty.influence_threshold = 1e308", "at most 1"]
        ),
        // Found by review: a date before the years a case may hold was accepted here.
        bad!(
            "--set accepted jump before 1800",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.index.accept_jumps=[1700-01-03]"
            ],
            [
                "market.index.accept_jumps = 1700-01-03",
                "outside the years 1800 to 2199"
            ]
        ),
        // Found by review: the value was written out to 309 digits, with "inf" basis points.
        bad!(
            "--set rate of 1e308",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.equity_risk_premium=1e308"
            ],
            ["market.equity_risk_premium = 1e308 is outside [-0.5, 1)"]
        ),
        // Found by review: a value out of range is blamed on the --set that gave it.
        bad!(
            "--set rate in percent",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.equity_risk_premium=5.5"
            ],
            [
                "after applying --set market.equity_risk_premium=5.5",
                "rates are decimals"
            ]
        ),
        // Found by review: the message named no peer and no reason.
        bad!(
            "--set exclusion rule that leaves no peer",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "beta.flag_r_squared_floor=1",
                "--set",
                "beta.exclude_flags=[\"low_r_squared\"]"
            ],
            [
                "case.toml",
                "after applying --set beta.flag_r_squared_floor=1, --set beta.exclude_flags",
                "every peer is excluded",
                "Brenvale Fluid Systems, Corrowick Valves, Dunmere Hydraulics, Estwold Flow \
                 Controls, Fenhallow Seals, Glimmerby Pumpworks, Hollinsedge Industrial, \
                 Ivelbrook Instruments (flag-based rule beta.exclude_flags: low_r_squared)"
            ]
        ),
        bad!(
            "--set lagged-response threshold above 1",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "beta.flag_lag_p_value=5"
            ],
            [
                "case.toml",
                "after applying --set beta.flag_lag_p_value=5",
                "beta.flag_lag_p_value = 5 is outside [0, 1]"
            ]
        ),
        bad!(
            "--set without =",
            nothing,
            ["run", "{case}", "--out", "{out}", "--set", "beta.lookback"],
            ["--set beta.lookback", "KEY=VALUE"]
        ),
        bad!(
            "--set empty key",
            nothing,
            ["run", "{case}", "--out", "{out}", "--set", "=5"],
            ["--set =5", "dotted key"]
        ),
        bad!(
            "--set empty segment",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "beta..lookback=3"
            ],
            ["beta..lookback", "dotted key"]
        ),
        bad!(
            "--set unknown key",
            nothing,
            ["run", "{case}", "--out", "{out}", "--set", "beta.lookbak=3"],
            ["beta.lookbak", "lookbak"]
        ),
        bad!(
            "--set peer index out of range",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "peer.99.tax_rate=0.3"
            ],
            ["peer.99.tax_rate", "no entry 99"]
        ),
        bad!(
            "--set unknown peer name",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "peer.Nobody Ltd.tax_rate=0.3"
            ],
            ["Nobody Ltd"]
        ),
        bad!(
            "--set NaN",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.risk_free_rate=nan"
            ],
            ["market.risk_free_rate", "NaN"]
        ),
        bad!(
            "--set infinity",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.risk_free_rate=-inf"
            ],
            ["market.risk_free_rate", "-inf"]
        ),
        bad!(
            "--set text for a number",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "market.equity_risk_premium=abc"
            ],
            ["market.equity_risk_premium=abc", "abc"]
        ),
        bad!(
            "--set a peer to a number",
            nothing,
            ["run", "{case}", "--out", "{out}", "--set", "peer.0=5"],
            ["peer.0=5"]
        ),
        bad!(
            "--set a table to a number",
            nothing,
            ["run", "{case}", "--out", "{out}", "--set", "market.index=5"],
            ["market.index=5"]
        ),
        bad!(
            "--set two values, one of the wrong type",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "beta.frequency=3",
                "--set",
                "market.equity_risk_premium=0.05"
            ],
            ["case.toml: after applying --set beta.frequency=3, --set \
                 market.equity_risk_premium=0.05: `frequency = 3`"]
        ),
        bad!(
            "--set two billion draws",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "uncertainty.draws=2000000000"
            ],
            ["uncertainty.draws", "2000000000"]
        ),
        bad!(
            "--set negative lookback",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "beta.lookback=-5"
            ],
            ["beta.lookback", "-5"]
        ),
        bad!(
            "--set D/E 1e308",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "target.debt_to_equity=1e308"
            ],
            ["target.debt_to_equity", "1e308"]
        ),
        bad!(
            "--set impossible date",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "case.valuation_date=2027-13-01"
            ],
            ["valuation_date", "2027-13-01"]
        ),
        bad!(
            "--set NaN in an unused key",
            nothing,
            ["run", "{case}", "--out", "{out}", "--set", "debt.ebit=nan"],
            ["debt.ebit", "NaN"]
        ),
        bad!(
            "--set peer with a tiny equity",
            nothing,
            ["betas", "{case}", "--set", "peer.1.equity_value=1e-320"],
            ["peer.1", "1e-320"]
        ),
    ]
}

fn command_arguments() -> Vec<Bad> {
    vec![
        bad!(
            "run: template missing",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--template",
                "{root}/gone.j2"
            ],
            ["gone.j2", "No such file"]
        ),
        bad!(
            "run: template is a folder",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--template",
                "{dir}/data"
            ],
            ["data", "directory"]
        ),
        bad!(
            "run: template not UTF-8",
            |s| s.write("memo.j2", b"# Memo \xff\n"),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--template",
                "{dir}/memo.j2"
            ],
            ["memo.j2", "UTF-8"]
        ),
        bad!(
            "run: template with an unknown filter",
            |s| s.write("memo.j2", "# Memo\n\n{{ v.wacc | nofilter }}\n"),
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--template",
                "{dir}/memo.j2"
            ],
            ["memo.j2", "line 3", "nofilter"]
        ),
        bad!(
            "run: unknown option",
            nothing,
            ["run", "{case}", "--out", "{out}", "--frobnicate"],
            ["--frobnicate"]
        ),
        bad!(
            "betas: unknown format",
            nothing,
            ["betas", "{case}", "--format", "xml"],
            ["--format", "xml"]
        ),
        bad!(
            "verify: tolerance NaN",
            nothing,
            ["verify", "{root}/r.json", "--tolerance", "NaN"],
            ["--tolerance", "NaN"]
        ),
        bad!(
            "verify: negative tolerance",
            nothing,
            ["verify", "{root}/r.json", "--tolerance=-1"],
            ["--tolerance", "-1"]
        ),
        bad!(
            "verify: infinite tolerance",
            nothing,
            ["verify", "{root}/r.json", "--tolerance", "inf"],
            ["--tolerance", "inf"]
        ),
        bad!(
            "verify: tolerance of a half",
            nothing,
            ["verify", "{root}/r.json", "--tolerance", "0.5"],
            ["--tolerance", "0.5"]
        ),
        bad!(
            "verify: receipt missing",
            nothing,
            ["verify", "{root}/gone.json"],
            ["gone.json", "No such file"]
        ),
        bad!(
            "verify: receipt not JSON",
            |s| s.write("r.json", "not json"),
            ["verify", "{dir}/r.json"],
            ["r.json", "not JSON", "line 1"]
        ),
        bad!(
            "Scholes–Williams on a window too short for its shifted columns",
            nothing,
            [
                "betas",
                "{case}",
                "--set",
                "beta.method=scholes-williams",
                "--set",
                "beta.lookback=8",
                "--set",
                "beta.min_observations=3"
            ],
            [
                "beta.method = \"scholes-williams\" uses one lagged and one led",
                "lengthen the window"
            ]
        ),
        bad!(
            "Newey–West lags by the rule too many for the window",
            nothing,
            [
                "betas",
                "{case}",
                "--set",
                "beta.std_errors=newey-west",
                "--set",
                "beta.lookback=8",
                "--set",
                "beta.min_observations=6"
            ],
            [
                "Newey–West lags 2",
                "rule floor(4·(N/100)^(2/9)) chose 2",
                "lengthen the window"
            ]
        ),
        bad!(
            "both target ratios by --set",
            nothing,
            [
                "run",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "target.debt_to_equity=0.3",
                "--set",
                "target.debt_to_capital=0.2"
            ],
            [
                "--set target.debt_to_capital=0.2",
                "another override sets target.debt_to_equity",
                "keep one"
            ]
        ),
        bad!(
            "a universe file given as a case",
            |s| s.write(
                "universe.toml",
                "[universe]\nvaluation_date = 2026-09-30\n\n[panel]\nprices = \"p.csv\"\n"
            ),
            ["run", "{dir}/universe.toml", "--out", "{out}"],
            [
                "universe.toml",
                "this is a universe file ([universe], [panel]), not a case",
                "hurdle universe"
            ]
        ),
        bad!(
            "a case given as a universe file",
            nothing,
            ["universe", "{case}", "--out", "{out}"],
            [
                "case.toml",
                "this is a case file ([case]), not a universe file",
                "hurdle run"
            ]
        ),
        bad!(
            "verify: a case given as the receipt",
            nothing,
            ["verify", "{case}"],
            [
                "case.toml",
                "a TOML file (a case, universe or claimed build-up file?), not a receipt",
                "output/result.json"
            ]
        ),
        bad!(
            "verify: a workbook given as the receipt",
            |s| s.write("r.json", "PK\u{3}\u{4} a zip archive's first bytes"),
            ["verify", "{dir}/r.json"],
            [
                "r.json",
                "a workbook or another ZIP archive",
                "not a receipt"
            ]
        ),
        bad!(
            "verify: a CSV table given as the receipt",
            |s| s.write("r.json", "date,close\n2026-01-02,100\n"),
            ["verify", "{dir}/r.json"],
            ["r.json", "a CSV table, not JSON, not a receipt"]
        ),
        bad!(
            "compare: a receipt given as a case",
            |s| s.write("result.json", "{\"schema_version\": 2}"),
            ["compare", "{dir}/result.json", "{case}"],
            [
                "result.json",
                "this is a JSON file (a result.json receipt?), not a case or claim",
                "hurdle verify"
            ]
        ),
        bad!(
            "run: a case's receipt given as the case",
            |s| s.write(
                "result.json",
                "{\"schema_version\": 2, \"case\": {\"file\": \"deals/q3/case.toml\"}}"
            ),
            ["run", "{dir}/result.json"],
            [
                "result.json",
                "the receipt (result.json) of the case file `deals/q3/case.toml`",
                "hurdle verify"
            ]
        ),
        bad!(
            "betas: a universe's receipt given as the case",
            |s| s.write(
                "result.json",
                "{\"kind\": \"universe\", \"universe\": {\"file\": \"market.toml\"}}"
            ),
            ["betas", "{dir}/result.json"],
            [
                "result.json",
                "the receipt (result.json) of the universe file `market.toml`",
                "hurdle universe"
            ]
        ),
        bad!(
            "verify: receipt of another program",
            |s| s.write("r.json", "{\"wacc\": 0.09}"),
            ["verify", "{dir}/r.json"],
            ["r.json", "schema_version"]
        ),
        bad!(
            "verify: receipt from a newer schema",
            |s| s.write("r.json", "{\"schema_version\": 99}"),
            ["verify", "{dir}/r.json"],
            ["r.json", "schema_version 99"]
        ),
        // Edited shapes, each named by its key and value (found by review: a number for the
        // kind became a mismatch with exit 1, "2" was said to be missing, "banana" passed as
        // another version, and `files[0] = 5` printed a line naming no file).
        bad!(
            "verify: receipt's kind a number",
            |s| {
                s.write(
                "r.json",
                "{\"schema_version\": 2, \"tool\": {\"name\": \"hurdle\"}, \"kind\": 3, \"case\": {}}"
            )
            },
            ["verify", "{dir}/r.json"],
            ["r.json", "kind = 3 is not text"]
        ),
        // Another program's JSON is not called edited (found by review).
        bad!(
            "verify: another program's JSON with a version of its own",
            |s| s.write(
                "r.json",
                "{\"tool\": {\"name\": \"other\", \"version\": \"1.2\"}, \"kind\": 1}"
            ),
            ["verify", "{dir}/r.json"],
            [
                "r.json",
                "has no schema_version; is it a hurdle result.json?"
            ]
        ),
        bad!(
            "verify: receipt's schema version as text",
            |s| s.write("r.json", "{\"schema_version\": \"2\", \"case\": {}}"),
            ["verify", "{dir}/r.json"],
            ["r.json", "schema_version = \"2\" is not a whole number"]
        ),
        bad!(
            "verify: receipt's tool version not a version",
            |s| {
                s.write(
                "r.json",
                "{\"schema_version\": 2, \"tool\": {\"name\": \"hurdle\", \"version\": \"banana\"}}"
            )
            },
            ["verify", "{dir}/r.json"],
            ["r.json", "tool.version = \"banana\" is no version"]
        ),
        // A key its claimed version never wrote (ADDED_IN: 0.17.0 began to write it).
        bad!(
            "verify: receipt's version older than a key it holds",
            |s| {
                s.write(
                "r.json",
                "{\"schema_version\": 2, \"tool\": {\"name\": \"hurdle\", \"version\": \"0.16.0\"}, \"cautions\": {\"riskless_debt_above_risk_free\": true}}"
            )
            },
            ["verify", "{dir}/r.json"],
            [
                "r.json",
                "tool.version = \"0.16.0\"",
                "`cautions.riskless_debt_above_risk_free`, which hurdle first wrote in 0.17.0"
            ]
        ),
        bad!(
            "verify: receipt's file entry a number",
            |s| {
                s.write(
                "r.json",
                format!(
                    "{{\"schema_version\": {}, \"files\": [5], \"case\": {{\"file\": \"case.toml\"}}}}",
                    hurdle::valuation::records::SCHEMA_VERSION
                )
            )
            },
            ["verify", "{dir}/r.json"],
            ["r.json", "files[0] = 5 is no file entry"]
        ),
        bad!(
            "verify: the receipt given as its own case",
            |s| s.write(
                "r.json",
                format!(
                    "{{\"schema_version\": {}, \"case\": {{\"file\": \"case.toml\"}}}}",
                    hurdle::valuation::records::SCHEMA_VERSION
                )
            ),
            ["verify", "{dir}/r.json", "--case", "{dir}/r.json"],
            [
                "r.json",
                "the case file given is the receipt itself",
                "give that file with --case"
            ]
        ),
        bad!(
            "verify: receipt's case missing",
            |s| s.write(
                "r.json",
                // This build's schema, so that the receipt's case is what is wrong with it.
                format!(
                    "{{\"schema_version\": {}, \"case\": {{\"file\": \"gone.toml\"}}}}",
                    hurdle::valuation::records::SCHEMA_VERSION
                )
            ),
            ["verify", "{dir}/r.json"],
            ["r.json", "gone.toml", "--case"]
        ),
        bad!(
            "implied: claimed WACC NaN",
            nothing,
            ["implied", "{case}", "--wacc", "nan", "--solve", "erp"],
            ["--wacc", "nan"]
        ),
        bad!(
            "implied: claimed WACC infinite",
            nothing,
            ["implied", "{case}", "--wacc", "inf", "--solve", "erp"],
            ["--wacc", "inf"]
        ),
        bad!(
            "implied: claimed WACC in percent",
            nothing,
            ["implied", "{case}", "--wacc", "9.1", "--solve", "erp"],
            ["--wacc", "9.1", "0.091"]
        ),
        bad!(
            "implied: unknown target",
            nothing,
            ["implied", "{case}", "--wacc", "0.09", "--solve", "gamma"],
            ["--solve", "gamma"]
        ),
        bad!(
            "implied: range to 1e308",
            nothing,
            ["implied", "{case}", "--wacc", "0.09", "--solve", "beta", "--range", "0..1e308"],
            ["--range 0..1e308", "[-5, 10]"]
        ),
        bad!(
            "implied: range reversed",
            nothing,
            [
                "implied",
                "{case}",
                "--wacc",
                "0.09",
                "--solve",
                "erp",
                "--range",
                "0.1..0.05"
            ],
            ["--range 0.1..0.05", "LOW < HIGH"]
        ),
        bad!(
            "implied: a range with every input",
            nothing,
            ["implied", "{case}", "--wacc", "0.09", "--solve", "all", "--range", "0..1"],
            ["--range 0..1", "not with all"]
        ),
        bad!(
            "implied: range not numbers",
            nothing,
            ["implied", "{case}", "--wacc", "0.09", "--solve", "erp", "--range", "a..b"],
            ["--range", "a..b"]
        ),
        bad!(
            "implied: D/E range beyond the bound",
            nothing,
            [
                "implied",
                "{case}",
                "--wacc",
                "0.09",
                "--solve",
                "debt_to_equity",
                "--range",
                "0..20"
            ],
            ["--range 0..20", "target.debt_to_equity"]
        ),
        // One key spelled two ways (the first peer by index and by name) on both axes: the
        // column value would replace the row value in every cell.
        bad!(
            "grid: one key by index and by name",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "peer.0.debt=100..900:400",
                "--cols",
                "peer.Brenvale Fluid Systems.debt=100..900:400"
            ],
            [
                "peer.0.debt",
                "peer.Brenvale Fluid Systems.debt",
                "two keys for one setting on both axes"
            ]
        ),
        // An ERP of 1 (100%) is outside the case's [−0.5, 1): a range reaching it is refused
        // rather than searched with one value the case refuses.
        bad!(
            "implied: ERP range reaching 1",
            nothing,
            ["implied", "{case}", "--wacc", "0.09", "--solve", "erp", "--range", "0..1"],
            ["--range 0..1", "market.equity_risk_premium", "[-0.5, 1)"]
        ),
        bad!(
            "implied: cost of debt from a table",
            nothing,
            [
                "implied",
                "{case}",
                "--wacc",
                "0.09",
                "--solve",
                "cost_of_debt",
                "--set",
                "debt.source=rating"
            ],
            ["debt.source", "spread table", "set debt.source = \"given\""]
        ),
        bad!(
            "grid: step 1e-300",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:1e-300",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{out}/g.csv"
            ],
            [
                "--rows market.equity_risk_premium=0.04..0.07:1e-300",
                "at most 101"
            ]
        ),
        bad!(
            "grid: every cell refused by the case",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.01..0.02:0.01",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{out}/g.csv",
                "--set",
                "leverage.debt_beta_source=credit-spread",
                "--set",
                "leverage.formula=harris-pringle"
            ],
            [
                "grid cell market.equity_risk_premium=0.01, target.debt_to_equity=0",
                "debt beta 1.9600"
            ]
        ),
        bad!(
            "grid: same key on both axes",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "market.equity_risk_premium=0..0.1:0.05",
                "--csv",
                "{out}/g.csv"
            ],
            ["market.equity_risk_premium", "both axes"]
        ),
        // The demo's cost of debt is given, so its rating table is not read by this run; it
        // is still the case's file, and no output may replace it.
        bad!(
            "grid: --csv over a spread table the run does not read",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{dir}/data/rating_spreads_invented.csv"
            ],
            ["rating_spreads_invented.csv", "debt.rating_table"]
        ),
        // Found by review: `out/grid/` wrote the file `out/grid`.
        bad!(
            "grid: --csv ending in a folder separator",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{out}/grid/"
            ],
            ["--csv", "grid/", "names no file"]
        ),
        bad!(
            "grid: zero step",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{out}/g.csv"
            ],
            ["--rows", "step 0"]
        ),
        bad!(
            "grid: high below low",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.07..0.04:0.01",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{out}/g.csv"
            ],
            ["--rows", "below low"]
        ),
        bad!(
            "grid: unknown axis key",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "beta.nothing=0..1:0.5",
                "--csv",
                "{out}/g.csv"
            ],
            ["grid cell", "beta.nothing=0", "nothing"]
        ),
        bad!(
            "grid: unknown metric",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--metric",
                "irr"
            ],
            ["--metric", "irr"]
        ),
        bad!(
            "grid: axis key is a table",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "market=0..1:0.5",
                "--csv",
                "{out}/g.csv"
            ],
            ["grid cell", "market=0", "market"]
        ),
        bad!(
            "grid: too many points",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0..0.2:0.001",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{out}/g.csv"
            ],
            ["--rows", "201 points", "at most 101"]
        ),
        bad!(
            "grid: --csv names no file",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "."
            ],
            ["--csv .", "names no file"]
        ),
        bad!(
            "grid: D/E axis beyond the bound",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "target.debt_to_equity=0..40:10",
                "--csv",
                "{out}/g.csv"
            ],
            ["grid cell", "target.debt_to_equity=20", "above 10"]
        ),
        // Found by review: read with replacement characters, the label reached the memo.
        bad!(
            "compare: a claimed build-up in Latin-1",
            |s| {
                let claim = s.read("claimed.toml").replacen("[claimed]\n", "", 1);
                let mut bytes = b"[claimed]\nlabel = \"Adv\xe9r\"\n".to_vec();
                bytes.extend(
                    claim
                        .lines()
                        .filter(|l| !l.starts_with("label"))
                        .flat_map(|l| l.bytes().chain(std::iter::once(b'\n'))),
                );
                s.write("claimed.toml", bytes);
            },
            ["compare", "{case}", "{dir}/claimed.toml"],
            ["claimed.toml", "line 2", "byte 13 (0xE9) is not UTF-8 text"]
        ),
        bad!(
            "compare: a claimed build-up saved as UTF-16",
            |s| {
                let claim = s.read("claimed.toml");
                let mut bytes = vec![0xFF, 0xFE];
                bytes.extend(claim.encode_utf16().flat_map(u16::to_le_bytes));
                s.write("claimed.toml", bytes);
            },
            ["compare", "{case}", "{dir}/claimed.toml"],
            ["claimed.toml", "text saved as UTF-16", "not TOML text"]
        ),
        bad!(
            "compare: side missing",
            nothing,
            ["compare", "{case}", "{dir}/gone.toml"],
            ["gone.toml", "No such file"]
        ),
        bad!(
            "compare: broken case side",
            |s| set_case_key(s, "risk_free_rate", "nan"),
            ["compare", "{case}", "{dir}/claimed.toml"],
            ["case.toml", "{line}", "nan"]
        ),
        bad!(
            "rolling: window longer than the lookback",
            nothing,
            [
                "rolling",
                "{case}",
                "--out",
                "{out}",
                "--set",
                "beta.rolling_window=100"
            ],
            ["beta.rolling_window", "100", "60"]
        ),
        bad!(
            "rolling: unknown option",
            nothing,
            ["rolling", "{case}", "--window", "12"],
            ["--window"]
        ),
        bad!("no command", nothing, ["{case}"], ["case.toml"]),
    ]
}

/// A receipt of the demo case, made by running it, renamed to `name` inside `<root>/out`.
fn receipt_named(s: &Sandbox, name: &str) {
    let out = s.root.path().join("out");
    let status = Command::new(env!("CARGO_BIN_EXE_hurdle"))
        .args([
            "run",
            s.path("case.toml").to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .output()
        .unwrap();
    assert!(
        status.status.success(),
        "{}",
        String::from_utf8_lossy(&status.stderr)
    );
    std::fs::rename(out.join("result.json"), out.join(name)).unwrap();
}

fn output_folders() -> Vec<Bad> {
    vec![
        bad!(
            "run: a price file named returns.csv in the output folder",
            |s| {
                copy(s, PEER, "returns.csv");
                s.edit_case(PEER, "returns.csv")
            },
            ["run", "{case}", "--out", "{dir}"],
            ["returns.csv", "peer.1.prices", "overwrite"]
        ),
        bad!(
            "run: the template named memo.md in the output folder",
            |s| s.write("memo.md", "# {{ v.case.title }}\n"),
            [
                "run",
                "{case}",
                "--out",
                "{dir}",
                "--template",
                "{dir}/memo.md"
            ],
            ["memo.md", "--template", "overwrite"]
        ),
        bad!(
            "run: the case named result.json in the output folder",
            |s| copy(s, "case.toml", "result.json"),
            ["run", "{dir}/result.json", "--out", "{dir}"],
            // Refused before anything is read further or written: the case is an input.
            [
                "would overwrite {dir}result.json",
                "which this run reads (the case file)"
            ]
        ),
        bad!(
            "run: a rating table named peers.csv in the output folder",
            |s| {
                copy(s, RATING, "peers.csv");
                s.edit_case(RATING, "peers.csv")
            },
            [
                "run",
                "{case}",
                "--out",
                "{dir}",
                "--set",
                "debt.source=rating"
            ],
            ["peers.csv", "debt.rating_table", "overwrite"]
        ),
        bad!(
            "run: the claimed build-up named memo.md in the output folder",
            |s| {
                copy(s, "claimed.toml", "memo.md");
                s.edit_case("claimed = \"claimed.toml\"", "claimed = \"memo.md\"")
            },
            ["run", "{case}", "--out", "{dir}"],
            ["memo.md", "reconcile.claimed", "overwrite"]
        ),
        bad!(
            "run: the yields named peers.csv in the output folder",
            |s| {
                copy(s, RISK_FREE, "peers.csv");
                s.edit_case(RISK_FREE, "peers.csv")
            },
            ["run", "{case}", "--out", "{dir}"],
            ["peers.csv", "market.risk_free_series.yields", "overwrite"]
        ),
        bad!(
            "run: the output folder is a file",
            |s| s.write("out.txt", "x"),
            ["run", "{case}", "--out", "{dir}/out.txt"],
            ["out.txt", "is a file"]
        ),
        bad!(
            "run: the default output folder is a file",
            |s| s.write("output", "x"),
            ["run", "{case}"],
            ["output", "is a file"]
        ),
        bad!(
            "run: a folder in the way of result.json",
            |s| std::fs::create_dir_all(s.root.path().join("out/result.json")).unwrap(),
            ["run", "{case}", "--out", "{out}"],
            ["result.json", "is a folder"]
        ),
        bad!(
            "run: an output folder inside a file",
            |s| s.write("blocker", "x"),
            ["run", "{case}", "--out", "{dir}/blocker/out"],
            ["blocker"]
        ),
        bad!(
            "rolling: a price file named rolling.csv in the output folder",
            |s| {
                copy(s, PEER, "rolling.csv");
                s.edit_case(PEER, "rolling.csv")
            },
            ["rolling", "{case}", "--out", "{dir}"],
            ["rolling.csv", "peer.1.prices", "overwrite"]
        ),
        bad!(
            "rolling: a folder in the way of rolling.csv",
            |s| std::fs::create_dir_all(s.root.path().join("out/rolling.csv")).unwrap(),
            ["rolling", "{case}", "--out", "{out}"],
            ["rolling.csv", "is a folder"]
        ),
        bad!(
            "grid: --csv is the index file",
            nothing,
            [
                "grid",
                "{case}",
                "--rows",
                "market.equity_risk_premium=0.04..0.07:0.01",
                "--cols",
                "target.debt_to_equity=0..1:0.5",
                "--csv",
                "{dir}/data/index.csv"
            ],
            ["index.csv", "market.index.prices", "overwrite"]
        ),
        bad!(
            "verify: the receipt named verification.json in the output folder",
            |s| receipt_named(s, "verification.json"),
            [
                "verify",
                "{out}/verification.json",
                "--case",
                "{case}",
                "--out",
                "{out}"
            ],
            ["verification.json", "the receipt", "overwrite"]
        ),
        bad!(
            "compare: a claimed build-up named bridge.csv in the output folder",
            |s| copy(s, "claimed.toml", "bridge.csv"),
            ["compare", "{case}", "{dir}/bridge.csv", "--out", "{dir}"],
            ["bridge.csv", "overwrite"]
        ),
    ]
}

fn catalogue() -> Vec<(&'static str, Vec<Bad>)> {
    vec![
        ("price files", price_files()),
        ("yield files", yield_files()),
        ("spread tables", spread_tables()),
        ("case files", case_files()),
        ("claimed files", claimed_files()),
        ("--set", overrides()),
        ("command arguments", command_arguments()),
        ("output folders", output_folders()),
    ]
}

// The issue asks for at least 120 distinct bad inputs; README quotes the count this prints.
#[test]
fn the_catalogue_holds_at_least_120_distinct_inputs() {
    let all: Vec<(&str, Vec<Bad>)> = catalogue();
    let mut names: Vec<&str> = all
        .iter()
        .flat_map(|(_, e)| e.iter().map(|b| b.name))
        .collect();
    let count = names.len();
    names.sort();
    names.dedup();
    assert_eq!(names.len(), count, "entry names must be unique");
    for (category, entries) in &all {
        println!("{category}: {}", entries.len());
    }
    println!("catalogue: {count} bad inputs");
    assert!(count >= 120, "{count} entries");
}

/// The price, index and yield entries plant their cells on [`LINE`] and name the dates around
/// it (the previous row's 2023-03-30, the next row's 2023-04-03); a regenerated demo must keep
/// them there, or those entries would test another row than they say.
#[test]
fn the_planted_line_is_the_one_the_entries_name() {
    let s = Sandbox::new();
    for file in [PEER, INDEX, RISK_FREE] {
        for (line, date) in [
            (LINE - 1, "2023-03-30"),
            (LINE, LINE_DATE),
            (LINE + 1, "2023-04-03"),
        ] {
            let row = line_text(&s, file, line);
            assert!(
                row.starts_with(&format!("{date},")),
                "{file} line {line} is `{row}`, expected {date}"
            );
        }
    }
}

#[test]
fn price_file_entries() {
    run_all(&price_files());
}

#[test]
fn yield_file_entries() {
    run_all(&yield_files());
}

#[test]
fn spread_table_entries() {
    run_all(&spread_tables());
}

#[test]
fn case_file_entries() {
    run_all(&case_files());
}

#[test]
fn claimed_file_entries() {
    run_all(&claimed_files());
}

#[test]
fn override_entries() {
    run_all(&overrides());
}

#[test]
fn command_argument_entries() {
    run_all(&command_arguments());
}

#[test]
fn output_folder_entries() {
    run_all(&output_folders());
}
