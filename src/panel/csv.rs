//! CSV panels, read block by block through polars' CSV reader.
//!
//! The file is read in blocks of whole records (a few megabytes each, cut at a line end outside
//! quotes) and each block is parsed by polars with a fixed schema: dates and ids as text, prices
//! as doubles. Three stages overlap — one thread reads and hashes the bytes
//! ([`super::blocks`]), polars parses a block on the cores, another thread moves the parsed
//! cells into the panel's columns — so memory holds a few blocks beside the prices already
//! kept. When polars refuses a block, it is read again as text
//! ([`super::refused`]) to find the cell and line to name; a duplicate row is located by a
//! second pass over the file, so the fast path carries no row numbers.

use std::io::Cursor;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::sync::mpsc::{sync_channel, Receiver};
use std::sync::Arc;

use polars::prelude::*;

use super::blocks::{line_count, scan_blocks, split_at_line_ends};
use super::cells::{block_dates, push_long, push_wide, BlockStart, DateCells, WrittenPrice};
use super::checks::{
    check_records, check_unnamed, check_wide_fields, has_empty_cells, spaced_quote, unnamed,
    unnamed_columns,
};
use super::header::{check_repeated_names, header};
use super::refused::{diagnose, trimmed_prices, written_prices};
use super::{
    layout_hint, wide_ids, Duplicate, PanelColumns, PanelLayout, Rows, SecurityHook, Source,
};
use crate::error::{Error, Result};

/// Bytes per block: large enough that polars' per-call setup is negligible, small enough to
/// stay in cache between the stages (measured best among 4, 16 and 64 MiB on the benchmark).
const BLOCK_BYTES: usize = 4 << 20;

/// Rows per block at the least: polars sets up every column for each block, so a wide file's
/// blocks hold at least this many rows whatever their width.
const BLOCK_ROWS: usize = 2048;

/// How the blocks of one file are parsed, fixed by its header.
pub(super) struct Plan {
    pub(super) header: Vec<String>,
    pub(super) schema: SchemaRef,
    projection: Arc<Vec<usize>>,
    /// Wide layout: each security column's name and dictionary id.
    pub(super) wide: WideIds,
    /// The columns the header leaves unnamed, by number (from 1) and schema name; read only to
    /// check that they hold nothing (a long panel's as text).
    pub(super) unnamed: Vec<(usize, String)>,
}

/// Reads a CSV panel into rows; returns them with the SHA-256 of the file's bytes. Securities
/// whose rows are complete go to `hook` as each block is pushed (long layout).
pub(super) fn read(
    source: &Source,
    columns: &PanelColumns,
    hook: Option<SecurityHook<'_>>,
) -> Result<(Rows, String)> {
    std::thread::scope(|scope| {
        let (parsed, parsed_in) = sync_channel::<Parsed>(1);
        let mut parsed_in = Some(parsed_in);
        let mut pusher = None;
        let mut plan: Option<Plan> = None;
        let mut next_row = 0;
        let block_bytes = AtomicUsize::new(BLOCK_BYTES);
        let finished = hook.map(|h| h.finished);
        let scanned = scan_blocks(source, (&block_bytes, finished), |block, first, quoted| {
            if first {
                let mut rows = Rows::default();
                rows.runs.watching = hook.is_some() && columns.layout == PanelLayout::Long;
                // Room for every row at once, estimated from the first block's line ends, so
                // the columns never grow by copying.
                let lines = block.iter().filter(|&&b| b == b'\n').count();
                let file_bytes = std::fs::metadata(&source.file).map_or(0, |m| m.len()) as f64;
                rows.reserve((file_bytes * lines as f64 / block.len() as f64 * 1.02) as usize);
                let made = plan_for(source, columns, header(source, block)?, &mut rows)?;
                let line: usize = made.header.iter().map(|n| n.len() + 1).sum();
                block_bytes.store(BLOCK_BYTES.max(BLOCK_ROWS * line), Ordering::Relaxed);
                let (receiver, wide) = (parsed_in.take().expect("once"), made.wide.clone());
                pusher = Some(source.spawn(scope, move || {
                    push_blocks(rows, receiver, &wide, source, columns, hook)
                })?);
                plan = Some(made);
            }
            let plan = plan.as_ref().expect("set by the first block");
            let frame = parse_or_trimmed(block, plan, first, quoted)
                .map_err(|e| diagnose(source, block, first, next_row, plan, columns, &e))?;
            check_unnamed(source, plan, &frame, next_row)?;
            let height = frame.height();
            if columns.layout == PanelLayout::Wide {
                let rows = (next_row, height);
                check_wide_fields(source, block, (first, quoted), rows, &plan.header)?;
            } else if spaced_quote(block, quoted) || has_empty_cells(&frame, columns) {
                // A row cut short leaves its last cells empty, which would be reported as a
                // missing price of the wrong security, and a quote after a space becomes part
                // of an id (found by reviews): such blocks' records are read one by one, on
                // this rare path only.
                check_records(source, block, (first, next_row), &plan.header)?;
            }
            let written = written_prices(block, first, plan, columns, &frame);
            // A closed channel means the pusher stopped at a bad row; its error is returned below.
            parsed
                .send((frame, next_row, written))
                .map_err(|_| source.file_error("stopped".into()))?;
            next_row += height;
            Ok(())
        });
        drop(parsed);
        let pushed = pusher.map(|p| p.join().expect("the row pusher does not panic"));
        match (scanned, pushed) {
            // The pusher's error concerns rows before any block the parser refused.
            (_, Some(Err(e))) | (Err(e), _) => Err(e),
            (Ok(sha256), Some(Ok(rows))) => Ok((rows, sha256)),
            (Ok(_), None) => unreachable!("the first block starts the pusher"),
        }
    })
}

/// A parsed block, its first row, and its bad price cells as written.
type Parsed = (DataFrame, usize, Vec<WrittenPrice>);

/// The pusher stage: moves each parsed block into `rows`, in file order.
fn push_blocks(
    mut rows: Rows,
    blocks: Receiver<Parsed>,
    wide: &[(String, u32)],
    source: &Source,
    columns: &PanelColumns,
    hook: Option<SecurityHook<'_>>,
) -> Result<Rows> {
    for (frame, first_row, written) in blocks {
        push_frame(
            &mut rows,
            &frame,
            wide,
            (first_row, &written),
            source,
            columns,
        )?;
        rows.hand_out(hook);
    }
    Ok(rows)
}

/// The header's names made unique for the parsing schema: an empty name (a column the header
/// does not name), and a name given again to a column the layout does not read (the columns it
/// reads are refused when named twice, `header::check_repeated_names`), get a placeholder no
/// header name can equal (found by review: `x,x` beside a long panel's columns stopped the run
/// with the reader's schema error).
pub(super) fn schema_names(header: &[String]) -> Vec<String> {
    let mut seen = std::collections::HashSet::new();
    header
        .iter()
        .enumerate()
        .map(|(i, name)| match unnamed(name) {
            true => format!("\u{0}unnamed column {}", i + 1),
            false if !seen.insert(name.as_str()) => format!("\u{0}repeated column {}", i + 1),
            false => name.clone(),
        })
        .collect()
}

/// Checks the header against the layout and fixes the schema every block is parsed with.
fn plan_for(
    source: &Source,
    columns: &PanelColumns,
    header: Vec<String>,
    rows: &mut Rows,
) -> Result<Plan> {
    let position = |name: &str, key: &str| {
        header.iter().position(|n| n == name).ok_or_else(|| {
            let other = match columns.layout {
                PanelLayout::Long => PanelLayout::Wide,
                PanelLayout::Wide => PanelLayout::Long,
            };
            let names = header.iter().map(String::as_str);
            let padded = crate::io::sanity::column_name_hint(names, name);
            let hint = match padded.is_empty() {
                true => layout_hint(&header, columns, other)
                    .map_or_else(String::new, |h| format!("; {h}")),
                false => padded,
            };
            source.file_error(format!(
                "no column named `{name}` ({key}); the header has: {}{hint}",
                shortened(&header)
            ))
        })
    };
    // A long file's other columns are not read, so only a repeated date, security or price
    // name is ambiguous there; in a wide file every column is a security.
    let read: Vec<&str> = match columns.layout {
        PanelLayout::Long => vec![
            &columns.date_column,
            &columns.security_column,
            &columns.price_column,
        ],
        PanelLayout::Wide => Vec::new(),
    };
    check_repeated_names(source, &header, &read)?;
    let date = position(&columns.date_column, "panel.date_column")?;
    let mut dtypes = vec![DataType::String; header.len()];
    let (projection, wide) = match columns.layout {
        PanelLayout::Long => {
            let security = position(&columns.security_column, "panel.security_column")?;
            let price = position(&columns.price_column, "panel.price_column")?;
            dtypes[price] = DataType::Float64;
            let mut projection = vec![date, security, price];
            // A column the header does not name is read, as text, only to check that it is
            // empty (found by review: a decimal comma's digits sat there unread).
            projection.extend(
                unnamed_columns(&header)
                    .iter()
                    .map(|(number, _)| number - 1),
            );
            projection.sort_unstable();
            (projection, Vec::new())
        }
        PanelLayout::Wide => wide_plan(source, columns, (&header, date), (&mut dtypes, rows))?,
    };
    let schema = schema_names(&header)
        .iter()
        .zip(dtypes)
        .map(|(name, dtype)| Field::new(name.as_str().into(), dtype))
        .collect::<Schema>();
    let unnamed = unnamed_columns(&header);
    Ok(Plan {
        header,
        schema: Arc::new(schema),
        projection: Arc::new(projection),
        wide,
        unnamed,
    })
}

/// Each security column's name and dictionary id.
type WideIds = Vec<(String, u32)>;

/// A wide header's projection (every column) and securities (each named column but the
/// date's, read as numbers; a column the header does not name is read, as text so that a
/// message quotes it as written, only to check that it is empty).
fn wide_plan(
    source: &Source,
    columns: &PanelColumns,
    (header, date): (&[String], usize),
    (dtypes, rows): (&mut [DataType], &mut Rows),
) -> Result<(Vec<usize>, WideIds)> {
    if let Some(hint) = layout_hint(header, columns, PanelLayout::Long) {
        return Err(source.file_error(format!("read as a wide panel, but {hint}")));
    }
    let named = (header.iter().enumerate()).filter(|&(i, n)| i != date && !unnamed(n));
    for (_, dtype) in
        (dtypes.iter_mut().enumerate()).filter(|&(i, _)| i != date && !unnamed(&header[i]))
    {
        *dtype = DataType::Float64;
    }
    let wide =
        wide_ids(named, &mut rows.dictionary).map_err(|message| source.file_error(message))?;
    if wide.is_empty() {
        return Err(source.file_error(format!(
            "has only the date column `{}`: a wide panel needs one column per security",
            columns.date_column
        )));
    }
    Ok(((0..header.len()).collect(), wide))
}

/// The first names of a long header, for messages.
fn shortened(names: &[String]) -> String {
    if names.len() <= 8 {
        names.join(", ")
    } else {
        format!("{}, … ({} columns)", names[..6].join(", "), names.len())
    }
}

/// Parses one block with the plan's schema. A block without a double quote (`quoted` false)
/// cannot have a quoted field, so polars is told there is no quote character: its splitter then
/// skips the quote tracking (about 15% of the parse on the benchmark), and every cell reads the
/// same. Such a block after the header goes through [`parse_unquoted`]; anything it does not take
/// (and the header's block, and quoted blocks) through polars' CSV reader.
fn parse(block: &[u8], plan: &Plan, has_header: bool, quoted: bool) -> PolarsResult<DataFrame> {
    if !has_header && !quoted {
        if let Some(frame) = parse_unquoted(block, plan) {
            return Ok(frame);
        }
    }
    read_block(block, plan, has_header, quoted)
}

/// A quote-free block without the header, cut at line ends into one piece per core, each piece
/// parsed on its own thread by polars' chunk parser (`read_chunk`: the function polars' CSV
/// reader and its streaming engine run on every chunk), given its count of lines. polars' reader
/// would first count each chunk's lines itself with a byte-at-a-time loop (its vectorised count
/// needs a nightly compiler), about a tenth of a long panel's CPU time, and cut a 4 MiB block
/// into 32 chunks (a wide panel's 5,000 column builders each). `None` (the reader then parses
/// the block, and reports what it refuses) when a piece is not UTF-8, does not parse, or parses
/// to another number of rows than it has lines (an empty line, a short record).
fn parse_unquoted(block: &[u8], plan: &Plan) -> Option<DataFrame> {
    let parse_options = CsvParseOptions::default().with_quote_char(None);
    let piece = |bytes: &[u8]| -> Option<DataFrame> {
        if !_csv_read_internal::validate_utf8(bytes) {
            return None;
        }
        let lines = line_count(bytes);
        let frame = _csv_read_internal::read_chunk(
            bytes,
            &parse_options,
            &plan.schema,
            false,
            &plan.projection,
            0,
            lines,
            None,
            usize::MAX,
            bytes.len(),
            Some(0),
        )
        .ok()?;
        (frame.height() == lines).then_some(frame)
    };
    let mut frames = on_cores(block, piece)?.into_iter();
    let mut whole = frames.next()?;
    for frame in frames {
        whole.vstack_mut_owned(frame).ok()?;
    }
    Some(whole)
}

/// A quote-free block of records cut at line ends into one piece per core (none under 64 kB:
/// a thread's start would outweigh its share), each read by `read` on its own thread; `None`
/// when any piece is.
fn on_cores<T: Send>(block: &[u8], read: impl Fn(&[u8]) -> Option<T> + Sync) -> Option<Vec<T>> {
    let parts = rayon::current_num_threads()
        .min(block.len() / (64 << 10))
        .max(1);
    let pieces = split_at_line_ends(block, parts);
    let read = &read;
    std::thread::scope(|scope| {
        // A piece whose thread the system will not start is read here, after the first.
        let others: Vec<_> = pieces[1..]
            .iter()
            .map(|&bytes| {
                let thread = std::thread::Builder::new();
                thread
                    .spawn_scoped(scope, move || read(bytes))
                    .map_err(|_| bytes)
            })
            .collect();
        let first = read(pieces[0]);
        let rest = others.into_iter().map(|other| match other {
            Ok(thread) => thread.join().unwrap_or(None),
            Err(bytes) => read(bytes),
        });
        std::iter::once(first).chain(rest).collect()
    })
}

/// [`parse`], or when polars refuses the block, [`trimmed_prices`]; polars' error otherwise.
fn parse_or_trimmed(
    block: &[u8],
    plan: &Plan,
    has_header: bool,
    quoted: bool,
) -> PolarsResult<DataFrame> {
    parse(block, plan, has_header, quoted)
        .or_else(|e| trimmed_prices(block, plan, has_header).ok_or(e))
}

/// Parses one block through polars' CSV reader.
fn read_block(
    block: &[u8],
    plan: &Plan,
    has_header: bool,
    quoted: bool,
) -> PolarsResult<DataFrame> {
    CsvReadOptions::default()
        .with_has_header(has_header)
        .with_schema(Some(plan.schema.clone()))
        .with_projection(Some(plan.projection.clone()))
        .with_rechunk(false)
        .map_parse_options(|options| match quoted {
            true => options,
            false => options.with_quote_char(None),
        })
        .into_reader_with_file_handle(Cursor::new(block))
        .finish()
}

/// Moves a parsed block into `rows`.
fn push_frame(
    rows: &mut Rows,
    frame: &DataFrame,
    wide: &[(String, u32)],
    start: BlockStart<'_>,
    source: &Source,
    columns: &PanelColumns,
) -> Result<()> {
    let column = |name: &str| {
        frame
            .column(name)
            .map_err(|e| source.file_error(format!("column `{name}`: {e}")))
    };
    let typed = |e: PolarsError| source.file_error(e.to_string());
    let dates = DateCells::Text(column(&columns.date_column)?.str().map_err(typed)?);
    match columns.layout {
        PanelLayout::Long => push_long(
            rows,
            &dates,
            column(&columns.security_column)?.str().map_err(typed)?,
            column(&columns.price_column)?.f64().map_err(typed)?,
            start,
            source,
            columns,
        ),
        PanelLayout::Wide => {
            let dates = block_dates(&dates, start.0, source, &columns.date_column)?;
            let securities = wide
                .iter()
                .map(|(name, id)| Ok((*id, column(name)?.f64().map_err(typed)?, name.as_str())))
                .collect::<Result<Vec<_>>>()?;
            push_wide(rows, &dates, &securities, start, source)
        }
    }
}

/// The error for a repeated (date, security): a second pass finds the lines that hold it.
pub(super) fn duplicate_error(
    source: &Source,
    columns: &PanelColumns,
    duplicate: &Duplicate,
) -> Error {
    let rows = match find_rows(source, columns, duplicate) {
        Ok(rows) => rows,
        Err(e) => return e,
    };
    let lines = (rows.iter())
        .map(|(r, _)| (r + 2).to_string())
        .collect::<Vec<_>>()
        .join(" and ");
    let written: Vec<&str> = rows.iter().map(|(_, d)| d.as_str()).collect();
    let at = (lines.as_str(), "lines");
    source.file_error(super::duplicate_message(
        columns.layout,
        duplicate,
        &written,
        at,
    ))
}

/// The data rows (0-based) holding `duplicate` (long) or its date (wide), each with its date as
/// written.
fn find_rows(
    source: &Source,
    columns: &PanelColumns,
    duplicate: &Duplicate,
) -> Result<Vec<(usize, String)>> {
    let mut found = Vec::new();
    let mut next_row = 0;
    let mut scratch = Rows::default();
    let mut plan: Option<Plan> = None;
    scan_blocks(
        source,
        (&AtomicUsize::new(BLOCK_BYTES), None),
        |block, first, quoted| {
            if first {
                plan = Some(plan_for(
                    source,
                    columns,
                    header(source, block)?,
                    &mut scratch,
                )?);
            }
            let plan = plan.as_ref().expect("set by the first block");
            let frame = parse_or_trimmed(block, plan, first, quoted)
                .map_err(|e| source.file_error(e.to_string()))?;
            let text = |name: &str| {
                frame
                    .column(name)
                    .and_then(|c| c.str().cloned())
                    .map_err(|e| source.file_error(e.to_string()))
            };
            let dates = text(&columns.date_column)?;
            let securities = match columns.layout {
                PanelLayout::Long => Some(text(&columns.security_column)?),
                PanelLayout::Wide => None,
            };
            for (k, date) in dates.iter().enumerate() {
                let same_date = date.and_then(super::parse_iso_date) == Some(duplicate.date);
                let same_security = securities
                    .as_ref()
                    .is_none_or(|s| s.get(k).map(str::trim) == Some(duplicate.security.as_str()));
                if same_date && same_security {
                    found.push((next_row + k, date.unwrap_or_default().trim().to_string()));
                }
            }
            next_row += frame.height();
            Ok(())
        },
    )?;
    Ok(found)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn long_plan() -> Plan {
        let columns = PanelColumns {
            layout: PanelLayout::Long,
            date_column: "date".into(),
            security_column: "security".into(),
            price_column: "close".into(),
        };
        let source = Source {
            file: "prices.csv".into(),
            format: super::super::TableFormat::Csv,
        };
        let header = ["date", "security", "close"].map(String::from).to_vec();
        plan_for(&source, &columns, header, &mut Rows::default()).unwrap()
    }

    // Reference: polars' own CSV reader (`CsvReader::finish`) on the same bytes. The direct
    // chunk parse must give the same cells, or step aside for the reader.
    #[test]
    fn chunk_parse_reads_as_polars_reader() {
        let plan = long_plan();
        let many: String = (0..6000)
            .map(|i| format!("2026-01-{:02},S{:04},{}.25\n", 1 + i % 28, i / 3, 10 + i))
            .collect();
        assert!(
            many.len() > 2 * (64 << 10),
            "large enough to be cut into pieces"
        );
        for block in [
            "2026-01-02,A,1.5\n2026-01-05,B,2\n",
            "2026-01-02,A,1.5\r\n2026-01-05,B,2\r\n",
            "2026-01-02,A,1.5\n2026-01-05,B,2",
            "2026-01-02,A,\n2026-01-05,,2\n",
            many.as_str(),
        ] {
            let direct =
                parse_unquoted(block.as_bytes(), &plan).expect("taken by the direct parse");
            let reader = read_block(block.as_bytes(), &plan, false, false).unwrap();
            assert!(direct.equals_missing(&reader), "{block:?}");
        }
        // Odd blocks (an empty line, a short record, a long one, text for a price, bytes that
        // are not UTF-8, which the direct parse declines): the same answer as the reader's.
        assert!(parse_unquoted(b"2026-01-02,\xff,1\n", &plan).is_none());
        for block in [
            &b"2026-01-02,A,1.5\n\n2026-01-05,B,2\n"[..],
            b"2026-01-02,A\n2026-01-05,B,2\n",
            b"2026-01-02,A,1,9\n",
            b"2026-01-02,A,x\n",
            b"2026-01-02,\xff,1\n",
        ] {
            let parsed = parse(block, &plan, false, false);
            let reader = read_block(block, &plan, false, false);
            match (parsed, reader) {
                (Ok(a), Ok(b)) => assert!(a.equals_missing(&b)),
                (Err(a), Err(b)) => assert_eq!(a.to_string(), b.to_string()),
                (a, b) => panic!("{a:?} against {b:?}"),
            }
        }
    }

    // RFC 4180: quotes only enclose a field; a block parsed without quote tracking (it has no
    // quote) must read as the same cells quoted, and a quoted separator stays in its field.
    #[test]
    fn blocks_without_quotes_read_as_the_same_cells_quoted() {
        let plan = long_plan();
        let plain = parse(b"2026-01-02,A,1.5\n2026-01-05,B C,2\n", &plan, false, false).unwrap();
        let quoted = parse(
            b"\"2026-01-02\",\"A\",1.5\n2026-01-05,\"B C\",\"2\"\n",
            &plan,
            false,
            true,
        )
        .unwrap();
        assert!(plain.equals_missing(&quoted));
        let comma = parse(b"2026-01-02,\"A,1\",1.5\n", &plan, false, true).unwrap();
        let ids = comma.column("security").unwrap().str().unwrap().clone();
        assert_eq!(ids.get(0), Some("A,1"));
    }
}
