//! The `Returns` sheet: every return each regression uses, one block of rows per peer.
//!
//! The rows are those of `returns.csv`: the periods where the peer, the index (and the risk-free
//! rate, when excess returns are used) all have a return. Excess returns are formulas over the
//! raw ones; the index columns a regression uses sit side by side (earlier periods, the same
//! period, later periods) so `LINEST` can take them as one range.

use crate::error::Result;

use super::{xlsx_error, Book, Expect, Note, Sheet};

/// Where each peer's returns are, for the regression formulas.
pub(crate) struct ReturnsLayout {
    pub sheet: Sheet,
    /// First and last 0-based row of each peer's block, in peer order.
    pub blocks: Vec<(u32, u32)>,
    /// The column of the peer's (excess) return, the regression's left-hand side.
    pub asset: u16,
    /// The index (excess) return columns, by ascending offset (−1 is the period before).
    pub market: Vec<(i32, u16)>,
}

impl ReturnsLayout {
    /// The range of column `col` in peer `i`'s block.
    pub fn range(&self, i: usize, col: u16) -> String {
        let (first, last) = self.blocks[i];
        self.sheet.range(first, last, col)
    }

    /// The range of the index columns from offset `from` to offset `to`, in peer `i`'s block.
    pub fn market_range(&self, i: usize, from: i32, to: i32) -> String {
        let (first, last) = self.blocks[i];
        let col = |offset: i32| {
            self.market
                .iter()
                .find(|(o, _)| *o == offset)
                .map(|(_, c)| *c)
                .expect("the layout has every offset of the method")
        };
        format!(
            "{}!{}:{}",
            self.sheet.prefix(),
            super::absolute(first, col(from)),
            super::absolute(last, col(to))
        )
    }

    /// The column of the index return at `offset`.
    pub fn market_column(&self, offset: i32) -> u16 {
        self.market
            .iter()
            .find(|(o, _)| *o == offset)
            .map(|(_, c)| *c)
            .expect("the layout has every offset of the method")
    }
}

pub(crate) fn sheet(book: &mut Book) -> Result<ReturnsLayout> {
    let v = book.v;
    let mut sheet = Sheet::new("Returns")?;
    let with_rf = v.sampling.excess_returns;
    let mut offsets: Vec<i32> = v
        .returns
        .first()
        .map(|r| r.market_shifted.iter().map(|s| s.offset).collect())
        .unwrap_or_default();
    offsets.push(0);
    offsets.sort_unstable();
    // Without a risk-free series the raw return is the regression's left-hand side.
    let (asset, first_market): (u16, u16) = if with_rf { (5, 6) } else { (2, 4) };
    let market: Vec<(i32, u16)> = offsets
        .iter()
        .enumerate()
        .map(|(k, &o)| (o, first_market + k as u16))
        .collect();
    headers(book, &mut sheet, &market, with_rf)?;
    let mut blocks = Vec::with_capacity(v.peers.len());
    let mut row = 1u32;
    let last_col = market.last().map_or(3, |(_, c)| *c);
    column_formats(book, &mut sheet, last_col)?;
    for (i, returns) in v.returns.iter().enumerate() {
        let first = row;
        let (asset_excess, market_excess) = (returns.asset_excess(), returns.market_excess());
        for j in 0..returns.period_ends.len() {
            peer_row(&mut sheet, row, &v.peers[i].name, returns, j)?;
            let here = |col: u16| super::relative(row, col);
            if with_rf {
                let formula = format!("={}-{}", here(2), here(4));
                let expect = Expect::Value(asset_excess[j]);
                book.column_formula(&mut sheet, (row, asset), &formula, expect)?;
            }
            for &(offset, col) in &market {
                if offset == 0 {
                    let formula = match with_rf {
                        true => format!("={}-{}", here(3), here(4)),
                        false => format!("={}", here(3)),
                    };
                    let expect = Expect::Value(market_excess[j]);
                    book.column_formula(&mut sheet, (row, col), &formula, expect)?;
                } else if let Some(shifted) =
                    returns.market_shifted.iter().find(|s| s.offset == offset)
                {
                    sheet
                        .ws
                        .write_number(row, col, shifted.returns[j])
                        .map_err(xlsx_error)?;
                }
            }
            row += 1;
        }
        blocks.push((first, row - 1));
    }
    sheet.ws.set_freeze_panes(1, 2).map_err(xlsx_error)?;
    let last_row = row.saturating_sub(1).max(1);
    sheet
        .ws
        .autofilter(0, 0, last_row, last_col)
        .map_err(xlsx_error)?;
    (sheet.ws)
        .set_column_width(0, super::name_column_width(v))
        .map_err(xlsx_error)?;
    sheet.ws.set_column_width(1, 11).map_err(xlsx_error)?;
    for col in 2..=last_col {
        sheet.ws.set_column_width(col, 14).map_err(xlsx_error)?;
    }
    Ok(ReturnsLayout {
        sheet,
        blocks,
        asset,
        market,
    })
}

/// Every row has the same formats, so they are set per column and the cells written without
/// one (a format per cell is looked up by hashing it, the larger part of a cell's cost on a
/// sheet of thousands of cells).
fn column_formats(book: &Book, sheet: &mut Sheet, last_col: u16) -> Result<()> {
    let (styles, ws) = (&book.styles, &mut sheet.ws);
    ws.set_column_format(0, &styles.text).map_err(xlsx_error)?;
    ws.set_column_format(1, &styles.date).map_err(xlsx_error)?;
    for col in 2..=last_col {
        ws.set_column_format(col, &styles.return_pct)
            .map_err(xlsx_error)?;
    }
    Ok(())
}

/// The header row, with a note on each lagged or led index column.
fn headers(book: &Book, sheet: &mut Sheet, market: &[(i32, u16)], with_rf: bool) -> Result<()> {
    let mut titles = vec!["Peer", "Period end", "Peer return", "Index return"];
    if with_rf {
        titles.extend(["Risk-free (per period)", "Peer excess return"]);
    }
    let header = book.styles.header.clone();
    for (col, text) in titles.iter().enumerate() {
        book.text(sheet, (0, col as u16), text, &header)?;
    }
    let kind = if with_rf { "excess " } else { "" };
    for &(offset, col) in market {
        let title = match offset {
            0 => format!("Index {kind}return (regressor, t)"),
            o if o < 0 => format!("Index {kind}return, t{o}"),
            o => format!("Index {kind}return, t+{o}"),
        };
        book.text(sheet, (0, col), &title, &header)?;
        if offset != 0 {
            let note = Note::new(format!(
                "The index {kind}return of the period {} periods {} each row's, as hurdle aligned \
                 it (a value, not a formula: it may come from a period outside this peer's rows).",
                offset.abs(),
                if offset < 0 { "before" } else { "after" }
            ))
            .set_author("hurdle")
            .add_author_prefix(false);
            sheet.ws.insert_note(0, col, &note).map_err(xlsx_error)?;
        }
    }
    Ok(())
}

/// The peer, the period end and the raw returns of one row (the risk-free rate too), in the
/// columns' own formats.
fn peer_row(
    sheet: &mut Sheet,
    row: u32,
    name: &str,
    returns: &crate::market::sampling::AlignedReturns,
    j: usize,
) -> Result<()> {
    let ws = &mut sheet.ws;
    ws.write_string(row, 0, super::within_a_cell(name).as_ref())
        .map_err(xlsx_error)?;
    super::write_date(ws, (row, 1), returns.period_ends[j], None)?;
    ws.write_number(row, 2, returns.asset[j])
        .map_err(xlsx_error)?;
    ws.write_number(row, 3, returns.market[j])
        .map_err(xlsx_error)?;
    if let Some(rf) = &returns.risk_free {
        ws.write_number(row, 4, rf[j]).map_err(xlsx_error)?;
    }
    Ok(())
}
