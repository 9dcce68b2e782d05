//! A long panel's plain blocks read straight into rows, without polars' general CSV reader.
//!
//! Most exported long panels are plain: no quotes, no carriage returns, every record with the
//! header's number of fields, ISO dates, tidy ids and prices written as decimal digits. Such a
//! block is read here, in pieces on the cores, straight into ids, dates and prices (no frame of
//! text cells to move afterwards); about three times less work than polars' reader on the
//! universe benchmark, where the parse was half of a run. Anything else in a piece (a quote, a
//! `\r`, an empty or short record, a date, id or price the checked path must name or read
//! differently) makes the piece `None`, and the block goes to polars' reader and the checked
//! path exactly as before, so every message and every figure stays as it was. The unit tests
//! check the rows against polars' reader on the same text.

use std::collections::HashMap;

use chrono::NaiveDate;

use super::cells::{date_view_key, id_needs_checking, DateCache};
use super::rows::Rows;
use crate::io::sanity::PRICE_RANGE;

/// Where a long panel's three read columns sit among a record's fields.
#[derive(Debug, Clone, Copy)]
pub(super) struct LongFields {
    pub date: usize,
    pub security: usize,
    pub price: usize,
    /// Fields per record (the header's).
    pub width: usize,
}

/// The rows of one piece, ids numbered within the piece in order of first appearance.
#[derive(Debug, Default)]
pub(super) struct LongRows {
    names: Vec<String>,
    ids: Vec<u32>,
    dates: Vec<NaiveDate>,
    prices: Vec<f64>,
}

impl LongRows {
    pub(super) fn len(&self) -> usize {
        self.prices.len()
    }

    /// Appends the rows to `rows`, giving each name its panel-wide id in the order the names
    /// first appear (as the frame path does row by row).
    pub(super) fn push_into(&self, rows: &mut Rows) {
        let ids: Vec<u32> = self.names.iter().map(|n| rows.dictionary.id(n)).collect();
        rows.reserve(self.len());
        // Run by run of one id: its first row as the frame path pushes it, the others at once.
        let mut start = 0;
        for run in self.ids.chunk_by(|a, b| a == b) {
            let id = ids[run[0] as usize];
            rows.push_id_and_date(id, self.dates[start]);
            rows.extend_same_id(id, &self.dates[start + 1..start + run.len()]);
            start += run.len();
        }
        rows.prices.extend_from_slice(&self.prices);
    }
}

/// Powers of ten a double holds exactly.
const EXACT_POWERS: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

// Clinger's fast path gives prices from 10^-22 to 2^53, all within the plausible range.
const _: () = assert!(PRICE_RANGE.0 <= 1e-22 && PRICE_RANGE.1 >= 9_007_199_254_740_992.0);

/// The price cell at the start of `bytes` as the reader would parse it, and where it ends: its
/// digits and point are read up to the first other byte, which must then end the field. The
/// price is `None` unless the cell is plain decimal digits with at most one point between
/// digits (`89.0677`, `12`) and its value lies within [`PRICE_RANGE`]: anything else (a sign,
/// an exponent, white space, a separator, a price out of range) is left to the checked path,
/// which reads or names it. Both ways round correctly, as polars' reader does (fast-float2),
/// so all give the same double: digits that make an integer of at most 2^53 over a power of
/// ten up to 10^22 are one exact division, which IEEE 754 rounds correctly (Clinger's fast
/// path, W. D. Clinger, "How to read floating point numbers accurately", PLDI 1990); longer
/// ones go through `str::parse`. On the fast path only a zero is out of range (the assertion
/// above), so no branch waits on the division.
fn plain_price(bytes: &[u8]) -> (Option<f64>, usize) {
    let (mut mantissa, mut point, mut end) = (0_u64, None, bytes.len());
    for (i, &b) in bytes.iter().enumerate() {
        match b {
            b'0'..=b'9' => mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(b - b'0')),
            b'.' if point.is_none() => point = Some(i),
            _ => {
                end = i;
                break;
            }
        }
    }
    let fraction = match point {
        None => 0,
        Some(at) if at == 0 || at + 1 == end => return (None, end),
        Some(at) => end - at - 1,
    };
    let digits = end - usize::from(point.is_some());
    if digits == 0 {
        return (None, end);
    }
    let price = match digits <= 19 && mantissa <= 1 << 53 && fraction < EXACT_POWERS.len() {
        // Through i64 (exact: at most 2^53), one conversion instruction where u64 takes four.
        true => (mantissa > 0).then(|| mantissa as i64 as f64 / EXACT_POWERS[fraction]),
        false => {
            let (low, high) = PRICE_RANGE;
            let cell = std::str::from_utf8(&bytes[..end]).ok();
            cell.and_then(|c| c.parse().ok())
                .filter(|p| (low..=high).contains(p))
        }
    };
    (price, end)
}

/// Reads one quote-free piece of whole records (no header); `None` when any record is not
/// plain (see the module's opening comment).
pub(super) fn long_piece(piece: &[u8], fields: LongFields) -> Option<LongRows> {
    let text = std::str::from_utf8(piece).ok()?;
    if memchr::memchr2(b'\r', b'"', piece).is_some() {
        return None;
    }
    let mut reader = PieceReader {
        rows: LongRows::default(),
        fields,
        dates: DateCache::default(),
        local: HashMap::new(),
        previous: None,
    };
    let lines = memchr::memchr_iter(b'\n', piece).count() + 1;
    reader.rows.ids.reserve(lines);
    reader.rows.dates.reserve(lines);
    reader.rows.prices.reserve(lines);
    let mut at = 0;
    while at < piece.len() {
        at = reader.record(text, at)?;
    }
    Some(reader.rows)
}

/// The state of [`long_piece`] while it walks a piece.
struct PieceReader<'a> {
    rows: LongRows,
    fields: LongFields,
    dates: DateCache,
    /// Each id's number within the piece.
    local: HashMap<&'a str, u32>,
    /// The previous row's id and number (rows grouped by security repeat it).
    previous: Option<(&'a str, u32)>,
}

/// Whether a field ending at `i` ends as it must: a comma after a field before the last, the
/// line's end (or the piece's) after the last.
fn ends_field(bytes: &[u8], i: usize, last: bool) -> bool {
    match bytes.get(i) {
        Some(b',') => !last,
        Some(b'\n') | None => last,
        Some(_) => false,
    }
}

/// Where the field starting at `at` ends: the next comma or line end (or the piece's end).
fn field_end(bytes: &[u8], at: usize) -> usize {
    memchr::memchr2(b',', b'\n', &bytes[at..]).map_or(bytes.len(), |k| at + k)
}

impl<'a> PieceReader<'a> {
    /// Reads the record starting at `at`, field by field, each found where it most often ends
    /// before it is searched for: an ISO date ten bytes on (such a date holds no comma, and any
    /// other text there fails as a date), the previous row's id again (it was found whole), a
    /// price where its digits stop (read while they are found). Returns where the next record
    /// starts; `None` when the record is not plain. One pass over each byte or two: searching
    /// for every comma first, then reading the cells, cost twice the instructions.
    fn record(&mut self, text: &'a str, mut at: usize) -> Option<usize> {
        let (bytes, f) = (text.as_bytes(), self.fields);
        let (mut date, mut security, mut price) = ("", "", None);
        for field in 0..f.width {
            let last = field + 1 == f.width;
            let end = if field == f.price {
                let (value, end) = plain_price(&bytes[at..]);
                price = value;
                at + end
            } else if field == f.date && at + 10 <= bytes.len() && ends_field(bytes, at + 10, last)
            {
                at + 10
            } else if field == f.security {
                match self.previous {
                    Some((name, _))
                        if bytes[at..].starts_with(name.as_bytes())
                            && ends_field(bytes, at + name.len(), last) =>
                    {
                        at + name.len()
                    }
                    _ => field_end(bytes, at),
                }
            } else {
                field_end(bytes, at)
            };
            if !ends_field(bytes, end, last) {
                return None;
            }
            if field == f.date {
                date = text.get(at..end)?;
            } else if field == f.security {
                security = text.get(at..end)?;
            }
            at = end + 1;
        }
        self.push(date, security, price?)?;
        Some(at)
    }

    /// Adds one record's row; `None` when its date or id is not one the frame path takes as it
    /// is.
    fn push(&mut self, date: &'a str, security: &'a str, price: f64) -> Option<()> {
        let date = match date.len() <= 12 {
            true => (self.dates).date_of_view(date_view_key(date), || date)?,
            false => super::parse_iso_date(date)?,
        };
        let id = match self.previous {
            Some((name, id)) if name == security => id,
            _ => {
                let id = match self.local.get(security) {
                    Some(&id) => id,
                    None => {
                        if id_needs_checking(security) {
                            return None;
                        }
                        let id = self.rows.names.len() as u32;
                        self.rows.names.push(security.to_string());
                        self.local.insert(security, id);
                        id
                    }
                };
                self.previous = Some((security, id));
                id
            }
        };
        self.rows.ids.push(id);
        self.rows.dates.push(date);
        self.rows.prices.push(price);
        Some(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use polars::prelude::*;

    const FIELDS: LongFields = LongFields {
        date: 0,
        security: 2,
        price: 3,
        width: 4,
    };

    /// The same text through polars' CSV reader (the reference): dates and ids as text, the
    /// prices as doubles.
    fn by_polars(piece: &str) -> (Vec<String>, Vec<String>, Vec<f64>) {
        let schema: Schema = [
            ("date", DataType::String),
            ("sector", DataType::String),
            ("security", DataType::String),
            ("close", DataType::Float64),
        ]
        .into_iter()
        .map(|(name, dtype)| Field::new(name.into(), dtype))
        .collect();
        let frame = CsvReadOptions::default()
            .with_has_header(false)
            .with_schema(Some(Arc::new(schema)))
            .into_reader_with_file_handle(std::io::Cursor::new(piece.as_bytes().to_vec()))
            .finish()
            .expect("polars reads the piece");
        let text = |name: &str| -> Vec<String> {
            let column = frame.column(name).unwrap().str().unwrap();
            column.iter().map(|c| c.unwrap().to_string()).collect()
        };
        let prices = frame.column("close").unwrap().f64().unwrap();
        let prices = prices.iter().map(Option::unwrap).collect();
        (text("date"), text("security"), prices)
    }

    // polars' CSV reader as the reference: every date, id and price of a plain piece read here
    // equals what polars reads from the same text (prices bit for bit: both round correctly).
    #[test]
    fn plain_pieces_read_as_polars_reads_them() {
        let mut state = 0x2545_f491_4f6c_dd1d_u64;
        let mut next = move || {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            state
        };
        let mut piece = String::new();
        for row in 0..3000 {
            let security = format!("S{:03}", row / 40 + (next() % 3) as usize);
            let day = 1 + (next() % 28);
            // Up to 30 decimals and integers past 2^53, so that both ways of
            // `plain_price` are taken.
            let whole = match row % 7 {
                0 => 9_007_199_254_740_000 + next() % 10_000,
                _ => next() % 100_000,
            };
            let decimals = (next() % 30) as usize;
            let fraction: String = (0..decimals)
                .map(|_| char::from(b'0' + (next() % 10) as u8))
                .collect();
            let price = match decimals {
                0 => format!("{}", whole + 1),
                _ => format!("{whole}.{fraction}1"),
            };
            piece.push_str(&format!("2024-03-{day:02},X,{security},{price}\n"));
        }
        let rows = long_piece(piece.as_bytes(), FIELDS).expect("a plain piece");
        let (dates, ids, prices) = by_polars(&piece);
        assert_eq!(rows.len(), 3000);
        for k in 0..rows.len() {
            assert_eq!(rows.dates[k].to_string(), dates[k]);
            assert_eq!(rows.names[rows.ids[k] as usize], ids[k]);
            assert_eq!(
                rows.prices[k].to_bits(),
                prices[k].to_bits(),
                "{}",
                prices[k]
            );
        }
        // The last record may lack its line end.
        let cut = long_piece(piece.trim_end().as_bytes(), FIELDS).expect("plain");
        assert_eq!(cut.prices, rows.prices);
    }

    // polars' own string views as the reference: the date cache's key of a text is the view
    // polars keeps for it (the frame path looks dates up by the view), for the ten bytes of an
    // ISO date and every other length a view holds inline.
    #[test]
    fn date_keys_are_polars_inline_views() {
        let texts = [
            "",
            "1",
            "2024-03-01",
            "2024-3-1",
            "20240301",
            "2024-03-01T",
            "31/12/2024Z",
            "2024-03-01T1",
        ];
        let column = StringChunked::from_iter_values("d".into(), texts.iter().copied());
        let views = column.downcast_iter().next().unwrap().views();
        for (text, view) in texts.iter().zip(views.iter()) {
            assert_eq!(date_view_key(text), view.as_u128(), "{text}");
        }
    }

    // A field is looked for where it most often ends (`PieceReader::record`): the same rows
    // whatever the columns' order, when an id extends the previous one, when a date is not ten
    // bytes long and when the last record has no line end.
    #[test]
    fn fields_are_found_wherever_they_end() {
        let rows = [
            ("2024-03-01", "S1", "10.5"),
            ("2024-03-04", "S1", "10.25"),
            ("2024-03-04", "S12", "7"),
            ("2024-03-05", "S12", "7.125"),
            ("2024-03-05", "S1", "10"),
            ("2024-03-06 ", "S1", "10.5"),
            ("2024-03-07T16:30", "S1", "11.5"),
            ("2024-03-08", "S", "3.5"),
        ];
        let first: String = rows
            .iter()
            .map(|(d, s, p)| format!("{d},X,{s},{p}\n"))
            .collect();
        let read = long_piece(first.as_bytes(), FIELDS).expect("plain");
        let (dates, ids, prices) = by_polars(&first);
        let names: Vec<&str> = read
            .ids
            .iter()
            .map(|&i| read.names[i as usize].as_str())
            .collect();
        assert_eq!(names, ids);
        assert_eq!(read.prices, prices);
        // polars keeps the text; the date is its first ten bytes (a time or a space after it).
        for (date, text) in read.dates.iter().zip(&dates) {
            assert_eq!(date.to_string(), text[..10]);
        }
        // The price first, the date last, an unread column between, no final line end.
        let fields = LongFields {
            date: 3,
            security: 1,
            price: 0,
            width: 4,
        };
        let other: Vec<String> = rows
            .iter()
            .map(|(d, s, p)| format!("{p},{s},Y,{d}"))
            .collect();
        let again = long_piece(other.join("\n").as_bytes(), fields).expect("plain");
        assert_eq!((again.ids, again.names), (read.ids, read.names));
        assert_eq!((again.dates, again.prices), (read.dates, read.prices));
    }

    // Rows pushed one by one through `Rows::push_id_and_date`, as the frame path pushes them,
    // as the reference: pieces pushed run by run leave the same ids, dates, prices, order flags
    // and hand-out runs, and the same dictionary (a piece continuing the last security, an empty
    // piece, dates falling inside a run, a security coming back).
    #[test]
    fn pieces_push_as_rows_pushed_one_by_one() {
        let day = |d: u64| NaiveDate::from_ymd_opt(2024, 1, 1).unwrap() + chrono::Days::new(d);
        let pieces: [&[(&str, u64)]; 4] = [
            &[("A", 1), ("A", 2), ("A", 3), ("B", 1), ("B", 2)],
            &[("B", 3), ("B", 4), ("C", 1), ("C", 3), ("C", 2)],
            &[],
            &[("C", 4), ("A", 4), ("A", 5), ("D", 1)],
        ];
        let (mut by_piece, mut by_row) = (Rows::default(), Rows::default());
        let mut seen: Vec<&str> = Vec::new();
        by_piece.runs.watching = true;
        by_row.runs.watching = true;
        for piece in pieces {
            let mut rows = LongRows::default();
            for &(name, d) in piece {
                let local = match rows.names.iter().position(|n| n == name) {
                    Some(k) => k,
                    None => (rows.names.push(name.into()), rows.names.len() - 1).1,
                };
                rows.ids.push(local as u32);
                rows.dates.push(day(d));
                rows.prices.push(d as f64);
                let id = by_row.dictionary.id(name);
                by_row.push(id, day(d), d as f64);
                seen.push(name);
            }
            rows.push_into(&mut by_piece);
            // The dictionaries' hash maps may print in any order: compared by their answers.
            let (mut a, mut b) = (
                std::mem::take(&mut by_piece.dictionary),
                std::mem::take(&mut by_row.dictionary),
            );
            assert_eq!(format!("{by_piece:?}"), format!("{by_row:?}"));
            for &name in &seen {
                assert_eq!(a.id(name), b.id(name), "{name}");
            }
            (by_piece.dictionary, by_row.dictionary) = (a, b);
        }
        assert_eq!(by_piece.ids, [0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2, 0, 0, 3]);
    }

    // Whatever the checked path must read or name is left to it (module comment).
    #[test]
    fn anything_not_plain_goes_to_the_checked_path() {
        let good = "2024-03-01,X,S1,10.5\n";
        assert!(long_piece(good.as_bytes(), FIELDS).is_some());
        for bad in [
            "2024-03-01,X,S1,10.5\r\n",
            "2024-03-01,X,\"S1\",10.5\n",
            "2024-03-01,X,S1\n",
            "2024-03-01,X,S1,10.5,\n",
            "\n2024-03-01,X,S1,10.5\n",
            "2024-3-1,X,S1,10.5\n",
            "date,sector,security,close\n",
            "2024-03-01,X, S1,10.5\n",
            "2024-03-01,X,,10.5\n",
            "2024-03-01,X,-S1,10.5\n",
            "2024-03-01,X,S1,\n",
            "2024-03-01,X,S1,-10.5\n",
            "2024-03-01,X,S1,1e3\n",
            "2024-03-01,X,S1,10.\n",
            "2024-03-01,X,S1,.5\n",
            "2024-03-01,X,S1, 10.5\n",
            "2024-03-01,X,S1,10.5 \n",
            "2024-03-01,X,S1,0\n",
            "2024-03-01,X,S1,1,000\n",
            "2024-03-01,X,S1,0.000\n",
            "2024-03-01,X,S1,10.5.5\n",
            "2024-03-01,X,S1,10..5\n",
            "2024-03-01,X,S1,.\n",
            "2024-03-01x,X,S1,10.5\n",
            "2024-03-01,X,S1,10.5\n\n",
            "2024-03-01,X,S1,10.5é\n",
        ] {
            let piece = format!("{good}{bad}");
            assert!(long_piece(piece.as_bytes(), FIELDS).is_none(), "{bad:?}");
        }
        // Out of the plausible range by the slow way too; in it, however many digits.
        let huge = format!("{good}2024-03-01,X,S1,1{}\n", "0".repeat(101));
        assert!(long_piece(huge.as_bytes(), FIELDS).is_none());
        let tiny = format!("{good}2024-03-01,X,S1,0.{}1\n", "0".repeat(30));
        let rows = long_piece(tiny.as_bytes(), FIELDS).expect("plain");
        assert_eq!(rows.prices[1].to_bits(), by_polars(&tiny).2[1].to_bits());
    }
}
