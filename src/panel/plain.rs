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

/// A price cell as the reader would parse it, when it is plain decimal digits with at most one
/// point between digits (`89.0677`, `12`) and its value lies within [`PRICE_RANGE`]; `None`
/// for anything else (a sign, an exponent, white space, a separator, a price out of range),
/// which the checked path reads or names. Both ways round correctly, as polars' reader does
/// (fast-float2), so all give the same double: digits that make an integer of at most 2^53
/// over a power of ten up to 10^22 are one exact division, which IEEE 754 rounds correctly
/// (Clinger's fast path, W. D. Clinger, "How to read floating point numbers accurately", PLDI
/// 1990); longer ones go through `str::parse`. On the fast path only a zero is out of range
/// (the assertion above), so nothing waits on the division.
fn plain_price(cell: &str) -> Option<f64> {
    let bytes = cell.as_bytes();
    let (mut mantissa, mut point) = (0_u64, None);
    for (i, &b) in bytes.iter().enumerate() {
        match b {
            b'0'..=b'9' => mantissa = mantissa.wrapping_mul(10).wrapping_add(u64::from(b - b'0')),
            b'.' if point.is_none() && i > 0 => point = Some(i),
            _ => return None,
        }
    }
    let (digits, fraction) = match point {
        None => (bytes.len(), 0),
        Some(at) if at + 1 == bytes.len() => return None,
        Some(at) => (bytes.len() - 1, bytes.len() - at - 1),
    };
    if digits == 0 {
        return None;
    }
    match digits <= 19 && mantissa <= 1 << 53 && fraction < EXACT_POWERS.len() {
        // Through i64 (exact: at most 2^53), one conversion instruction where u64 takes four.
        true => (mantissa > 0).then(|| mantissa as i64 as f64 / EXACT_POWERS[fraction]),
        false => {
            let (low, high) = PRICE_RANGE;
            cell.parse().ok().filter(|p| (low..=high).contains(p))
        }
    }
}

/// Reads one quote-free piece of whole records (no header); `None` when any record is not
/// plain (see the module's opening comment).
pub(super) fn long_piece<'a>(piece: &'a [u8], fields: LongFields) -> Option<LongRows> {
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
        cells: [""; 3],
    };
    let lines = memchr::memchr_iter(b'\n', piece).count() + 1;
    reader.rows.ids.reserve(lines);
    reader.rows.dates.reserve(lines);
    reader.rows.prices.reserve(lines);
    // The field ends (commas and line ends) found eight bytes at a time ([`bytes_in`]): a field
    // is a few bytes, too short for a vectorised search to pay for its setup (`str::split` on
    // each line took a quarter of this reader's time, a loop over the bytes a sixth).
    let (mut field, mut start) = (0, 0);
    let mut ends = |i: usize, reader: &mut PieceReader<'a>| -> Option<()> {
        reader.cell(field, &text[start..i]);
        start = i + 1;
        match piece[i] {
            b'\n' => (reader.record(field)?, field = 0).1,
            _ => field += 1,
        }
        Some(())
    };
    let mut words = piece.chunks_exact(8);
    for (k, word) in (&mut words).enumerate() {
        let word = u64::from_le_bytes(word.try_into().ok()?);
        let mut marks = bytes_in(word, b',') | bytes_in(word, b'\n');
        while marks != 0 {
            ends(8 * k + marks.trailing_zeros() as usize / 8, &mut reader)?;
            marks &= marks - 1;
        }
    }
    let rest = piece.len() - words.remainder().len();
    for (i, &b) in words.remainder().iter().enumerate() {
        if b == b',' || b == b'\n' {
            ends(rest + i, &mut reader)?;
        }
    }
    if start < piece.len() {
        reader.cell(field, &text[start..]);
        reader.record(field)?;
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
    /// The current record's date, id and price cells.
    cells: [&'a str; 3],
}

impl<'a> PieceReader<'a> {
    /// Keeps field number `field` of a record when it is one of the three read.
    fn cell(&mut self, field: usize, cell: &'a str) {
        let f = self.fields;
        if field == f.date {
            self.cells[0] = cell;
        } else if field == f.security {
            self.cells[1] = cell;
        } else if field == f.price {
            self.cells[2] = cell;
        }
    }

    /// Ends a record whose last field was number `last` (from 0), its cells kept by
    /// [`Self::cell`]; `None` when it is not plain.
    fn record(&mut self, last: usize) -> Option<()> {
        if last + 1 != self.fields.width {
            return None;
        }
        let [date, security, price] = self.cells;
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
        let price = plain_price(price)?;
        self.rows.ids.push(id);
        self.rows.dates.push(date);
        self.rows.prices.push(price);
        Some(())
    }
}

/// The high bit of each byte of `word` (little-endian) that equals `byte`, and no other: the
/// exact zero-byte test of the word XOR the byte repeated (a byte's low seven bits plus 0x7F
/// carry into its high bit unless all are zero, and no carry crosses into the next byte;
/// Hacker's Delight, section 6-1, from memory), which the byte after a match cannot fool as the
/// shorter test's borrow can.
fn bytes_in(word: u64, byte: u8) -> u64 {
    const LOW: u64 = 0x7f7f_7f7f_7f7f_7f7f;
    let x = word ^ (u64::from(byte) * 0x0101_0101_0101_0101);
    !(((x & LOW) + LOW) | x | LOW)
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
        ];
        let column = StringChunked::from_iter_values("d".into(), texts.iter().copied());
        let views = column.downcast_iter().next().unwrap().views();
        for (text, view) in texts.iter().zip(views.iter()) {
            assert_eq!(
                super::super::cells::date_view_key(text),
                view.as_u128(),
                "{text}"
            );
        }
    }

    // Every byte value in every place of a word, against a comparison byte by byte.
    #[test]
    fn commas_and_line_ends_are_found_in_every_place_of_a_word() {
        for byte in [b',', b'\n'] {
            for place in 0..8 {
                for value in 0..=255_u8 {
                    for filler in [0_u8, byte, byte + 1, byte ^ 0x80, 0xff] {
                        let mut word = [filler; 8];
                        word[place] = value;
                        let expected = (word.iter().enumerate())
                            .filter(|(_, &b)| b == byte)
                            .fold(0_u64, |m, (i, _)| m | 0x80 << (8 * i));
                        let found = bytes_in(u64::from_le_bytes(word), byte);
                        assert_eq!(found, expected, "{word:?}");
                    }
                }
            }
        }
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
        ] {
            let piece = format!("{good}{bad}");
            assert!(long_piece(piece.as_bytes(), FIELDS).is_none(), "{bad:?}");
        }
        // Out of the plausible range by the slow way too; in it, however many digits.
        let huge = format!("{good}2024-03-01,X,S1,1{}\n", "0".repeat(101));
        assert!(long_piece(huge.as_bytes(), FIELDS).is_none());
        let tiny = format!("{good}2024-03-01,X,S1,0.{}1\n", "0".repeat(30));
        let rows = long_piece(tiny.as_bytes(), FIELDS).expect("plain");
        assert_eq!(rows.prices[1], 1e-31);
    }
}
