//! The `Betas` sheet: each peer's regression as spreadsheet functions over the `Returns` sheet.
//!
//! OLS is `SLOPE`, `INTERCEPT`, `RSQ` and `STEYX`, with the classical standard errors from
//! them; Dimson (1979) is the sum of `LINEST` slopes on the index returns of several periods;
//! Scholes and Williams (1977) is three `SLOPE`s and a `CORREL`. The t statistics, p-values and
//! 95% intervals are `T.DIST.2T` and `T.INV.2T` on the regression's degrees of freedom. A
//! standard error no spreadsheet function gives (robust, Newey–West, or of a sum of slopes) is
//! written as hurdle's figure, marked, with a note saying so.

use crate::beta::BetaMethod;
use crate::error::Result;
use crate::stats::least_squares::StdErrors;

use super::returns::ReturnsLayout;
use super::{relative, xlsx_error, Book, Expect, Format, Sheet};

/// Where each peer's raw beta and its standard error are.
pub(crate) struct BetasLayout {
    pub sheet: Sheet,
    /// The 0-based row of each peer, in peer order.
    pub rows: Vec<u32>,
    pub beta: u16,
    pub std_error: u16,
}

/// The columns of the sheet, in order, so formulas can name each by its role.
struct Columns {
    names: Vec<String>,
}

impl Columns {
    fn add(&mut self, name: impl Into<String>) -> u16 {
        self.names.push(name.into());
        (self.names.len() - 1) as u16
    }
}

pub(crate) fn sheet(book: &mut Book, returns: &ReturnsLayout) -> Result<BetasLayout> {
    let v = book.v;
    let mut sheet = Sheet::new("Betas")?;
    let method = v.estimator.method;
    let offsets: Vec<i32> = returns.market.iter().map(|(o, _)| *o).collect();
    let period = crate::report::format::label(&v.sampling.frequency);
    let per = match period.as_str() {
        "daily" => "day",
        "weekly" => "week",
        "quarterly" => "quarter",
        _ => "month",
    };
    let (c, cols, slopes) = columns(method, &offsets, per);
    let header = book.styles.header.clone();
    for (col, name) in c.names.iter().enumerate() {
        book.text(&mut sheet, (0, col as u16), name, &header)?;
    }
    let s = &book.styles;
    let formats = Formats {
        count: s.count.clone(),
        beta: s.beta.clone(),
        statistic: s.statistic.clone(),
        p_value: s.p_value.clone(),
        percent: s.return_pct.clone(),
    };
    // The run's flags last, as text: what the memo's diagnostics table says of each peer.
    let flags_col = c.names.len() as u16;
    book.text(&mut sheet, (0, flags_col), "Flags", &header)?;
    let mut rows = Vec::with_capacity(v.peers.len());
    for i in 0..v.peers.len() {
        let row = 1 + i as u32;
        let text = book.styles.text.clone();
        book.text(&mut sheet, (row, 0), &v.peers[i].name, &text)?;
        let flags: Vec<&str> = v.peers[i].flags.iter().map(|f| f.name()).collect();
        let flags = if flags.is_empty() {
            "none".to_string()
        } else {
            flags.join(", ")
        };
        book.text(&mut sheet, (row, flags_col), &flags, &text)?;
        peer_row(
            book,
            &mut sheet,
            returns,
            (&cols, &formats),
            &slopes,
            (i, row),
        )?;
        rows.push(row);
    }
    let last = 2 + v.peers.len() as u32;
    let note = format!(
        "Method: {}. Standard errors: {}.",
        v.estimator.method_description, v.estimator.std_errors_description
    );
    book.text(&mut sheet, (last, 0), &note, &book.styles.text.clone())?;
    sheet.ws.set_freeze_panes(1, 1).map_err(xlsx_error)?;
    sheet.ws.set_row_height(0, 32).map_err(xlsx_error)?;
    (sheet.ws)
        .set_column_width(0, super::name_column_width(book.v))
        .map_err(xlsx_error)?;
    for col in 1..c.names.len() as u16 {
        sheet.ws.set_column_width(col, 11).map_err(xlsx_error)?;
    }
    sheet
        .ws
        .set_column_width(flags_col, 28)
        .map_err(xlsx_error)?;
    Ok(BetasLayout {
        sheet,
        rows,
        beta: cols.beta,
        std_error: cols.se,
    })
}

/// The sheet's columns for `method`: their names, the column of each figure, and the slope
/// column of each index offset (Dimson and Scholes–Williams).
/// Alpha, its SE and the residual SE are rates of one return period (`per`: a month, a week…),
/// and their headers say so.
fn columns(method: BetaMethod, offsets: &[i32], per: &str) -> (Columns, Cols, Vec<(i32, u16)>) {
    let mut c = Columns { names: Vec::new() };
    c.add("Peer");
    let n = c.add("Observations N");
    let df = c.add("Degrees of freedom");
    let slopes: Vec<(i32, u16)> = match method {
        BetaMethod::Ols => Vec::new(),
        _ => offsets
            .iter()
            .map(|&o| (o, c.add(format!("Slope on index, {}", offset_label(o)))))
            .collect(),
    };
    let rho = (method == BetaMethod::ScholesWilliams).then(|| c.add("Index autocorrelation ρ"));
    let cols = Cols {
        n,
        df,
        alpha: c.add(format!("Alpha α (per {per})")),
        beta: c.add("Raw beta β"),
        se: c.add("SE(β)"),
        t: c.add("t(β)"),
        p: c.add("p-value"),
        ci_low: c.add("95% CI low"),
        ci_high: c.add("95% CI high"),
        alpha_se: c.add(format!("SE(α) (per {per})")),
        alpha_t: c.add("t(α)"),
        alpha_p: c.add("p-value (α)"),
        r2: c.add("R²"),
        adj_r2: c.add("Adjusted R²"),
        resid_se: c.add(format!("Residual SE (per {per})")),
        rho,
        lag: (method == BetaMethod::Ols).then(|| {
            (
                c.add("Slope on the previous period's index return"),
                c.add("p-value (previous-period slope)"),
            )
        }),
    };
    (c, cols, slopes)
}

fn offset_label(offset: i32) -> String {
    match offset {
        0 => "t".into(),
        o if o < 0 => format!("t{o}"),
        o => format!("t+{o}"),
    }
}

/// The column of each figure of a peer's row.
struct Cols {
    n: u16,
    df: u16,
    alpha: u16,
    beta: u16,
    se: u16,
    t: u16,
    p: u16,
    ci_low: u16,
    ci_high: u16,
    alpha_se: u16,
    alpha_t: u16,
    alpha_p: u16,
    r2: u16,
    adj_r2: u16,
    resid_se: u16,
    rho: Option<u16>,
    /// OLS only: the slope on the previous period's index return and its p-value (the
    /// `lagged_response` flag's regression), as hurdle's figures.
    lag: Option<(u16, u16)>,
}

/// The formats of the sheet, cloned once.
struct Formats {
    count: Format,
    beta: Format,
    statistic: Format,
    p_value: Format,
    percent: Format,
}

/// One peer's row: where its returns are and where its figures go.
struct PeerRow<'a> {
    i: usize,
    row: u32,
    cols: &'a Cols,
    /// The peer's (excess) returns, the index return of the same period, and every index
    /// column of the method side by side (for `LINEST`).
    y: String,
    x: String,
    block: String,
    /// The number of index columns the regression has.
    k: usize,
    formats: &'a Formats,
}

impl PeerRow<'_> {
    fn at(&self, col: u16) -> String {
        relative(self.row, col)
    }

    /// A formula in column `col` equal to the peer's `result.json` field `field`.
    fn put(
        &self,
        book: &mut Book,
        sheet: &mut Sheet,
        col: u16,
        formula: &str,
        field: &str,
        format: &Format,
    ) -> Result<()> {
        let expect = Expect::Json(format!("/peers/{}/{field}", self.i));
        book.formula(sheet, (self.row, col), formula, expect, format)
    }
}

/// One peer's regression row.
fn peer_row(
    book: &mut Book,
    sheet: &mut Sheet,
    returns: &ReturnsLayout,
    (cols, formats): (&Cols, &Formats),
    slopes: &[(i32, u16)],
    (i, row): (usize, u32),
) -> Result<()> {
    let (lowest, highest) = (
        returns.market.first().map_or(0, |m| m.0),
        returns.market.last().map_or(0, |m| m.0),
    );
    let peer = PeerRow {
        i,
        row,
        cols,
        y: returns.range(i, returns.asset),
        x: returns.range(i, returns.market_column(0)),
        block: returns.market_range(i, lowest, highest),
        k: slopes.len().max(1),
        formats,
    };
    let f = formats;
    peer.put(
        book,
        sheet,
        cols.n,
        &format!("=COUNT({})", peer.y),
        "observations",
        &f.count,
    )?;
    // Every method's regression has an intercept and one slope per index column.
    let df = format!("={}-{}", peer.at(cols.n), peer.k + 1);
    peer.put(book, sheet, cols.df, &df, "degrees_of_freedom", &f.count)?;
    coefficients(book, sheet, returns, &peer, slopes)?;
    fit(book, sheet, &peer)?;
    lag_response(book, sheet, &peer)?;
    std_errors(book, sheet, &peer)?;
    tests(book, sheet, &peer)
}

/// The slopes on each index column, beta and alpha, by the method's definition.
fn coefficients(
    book: &mut Book,
    sheet: &mut Sheet,
    returns: &ReturnsLayout,
    peer: &PeerRow,
    slopes: &[(i32, u16)],
) -> Result<()> {
    let method = book.v.estimator.method;
    let (cols, f) = (peer.cols, peer.formats);
    let (y, x, block, k) = (&peer.y, &peer.x, &peer.block, peer.k);
    for (m, &(offset, col)) in slopes.iter().enumerate() {
        let formula = match method {
            // LINEST lists the slopes of its columns in reverse order, the intercept last.
            BetaMethod::Dimson => format!("=INDEX(LINEST({y},{block}),1,{})", k - m),
            _ => {
                let market = returns.range(peer.i, returns.market_column(offset));
                format!("=SLOPE({y},{market})")
            }
        };
        let field = format!("market_coefficients/{m}/estimate");
        peer.put(book, sheet, col, &formula, &field, &f.beta)?;
    }
    let slope_sum = slopes
        .iter()
        .map(|&(_, col)| peer.at(col))
        .collect::<Vec<_>>()
        .join("+");
    let (beta, alpha) = match method {
        BetaMethod::Ols => (format!("=SLOPE({y},{x})"), format!("=INTERCEPT({y},{x})")),
        BetaMethod::Dimson => (
            format!("={slope_sum}"),
            format!("=INDEX(LINEST({y},{block}),1,{})", k + 1),
        ),
        BetaMethod::ScholesWilliams => {
            let rho = cols.rho.expect("Scholes-Williams has a ρ column");
            let lag = returns.range(peer.i, returns.market_column(-1));
            let correl = format!("=CORREL({x},{lag})");
            peer.put(book, sheet, rho, &correl, "market_autocorrelation", &f.beta)?;
            (
                format!("=({slope_sum})/(1+2*{})", peer.at(rho)),
                format!("=AVERAGE({y})-{}*AVERAGE({x})", peer.at(cols.beta)),
            )
        }
    };
    peer.put(book, sheet, cols.beta, &beta, "beta", &f.beta)?;
    peer.put(book, sheet, cols.alpha, &alpha, "alpha", &f.percent)
}

/// R², adjusted R² and the residual standard error of the method's regression.
fn fit(book: &mut Book, sheet: &mut Sheet, peer: &PeerRow) -> Result<()> {
    let (cols, f) = (peer.cols, peer.formats);
    let (y, x, block) = (&peer.y, &peer.x, &peer.block);
    let (r2, resid) = match book.v.estimator.method {
        BetaMethod::Ols => (format!("=RSQ({y},{x})"), format!("=STEYX({y},{x})")),
        _ => (
            format!("=INDEX(LINEST({y},{block},TRUE,TRUE),3,1)"),
            format!("=INDEX(LINEST({y},{block},TRUE,TRUE),3,2)"),
        ),
    };
    peer.put(book, sheet, cols.r2, &r2, "r_squared", &f.beta)?;
    peer.put(
        book,
        sheet,
        cols.resid_se,
        &resid,
        "residual_std_error",
        &f.percent,
    )?;
    let (r2, n, df) = (peer.at(cols.r2), peer.at(cols.n), peer.at(cols.df));
    let adjusted = format!("=1-(1-{r2})*({n}-1)/{df}");
    peer.put(
        book,
        sheet,
        cols.adj_r2,
        &adjusted,
        "adjusted_r_squared",
        &f.beta,
    )
}

/// The t statistics and two-sided p-values of beta and alpha, and beta's 95% interval, with
/// Student t on the regression's degrees of freedom.
fn tests(book: &mut Book, sheet: &mut Sheet, peer: &PeerRow) -> Result<()> {
    let (cols, f) = (peer.cols, peer.formats);
    let df = peer.at(cols.df);
    for (value, se, t, p, name) in [
        (cols.beta, cols.se, cols.t, cols.p, "beta"),
        (
            cols.alpha,
            cols.alpha_se,
            cols.alpha_t,
            cols.alpha_p,
            "alpha",
        ),
    ] {
        let ratio = format!("={}/{}", peer.at(value), peer.at(se));
        peer.put(
            book,
            sheet,
            t,
            &ratio,
            &format!("{name}_t_stat"),
            &f.statistic,
        )?;
        let p_value = format!("=T.DIST.2T(ABS({}),{df})", peer.at(t));
        peer.put(
            book,
            sheet,
            p,
            &p_value,
            &format!("{name}_p_value"),
            &f.p_value,
        )?;
    }
    let quantile = format!("T.INV.2T(0.05,{df})");
    let (b, se) = (peer.at(cols.beta), peer.at(cols.se));
    let low = format!("={b}-{quantile}*{se}");
    peer.put(book, sheet, cols.ci_low, &low, "beta_ci_low", &f.beta)?;
    let high = format!("={b}+{quantile}*{se}");
    peer.put(book, sheet, cols.ci_high, &high, "beta_ci_high", &f.beta)
}

/// The slope on the previous period's index return and its p-value (OLS), as hurdle's figures:
/// the regression runs over its own periods (those whose previous index return is in the
/// window), which the Returns sheet's rows do not lay out. Empty where there is none.
fn lag_response(book: &mut Book, sheet: &mut Sheet, peer: &PeerRow) -> Result<()> {
    let (Some((slope_col, p_col)), Some(lag)) = (peer.cols.lag, book.v.peers[peer.i].lag_response)
    else {
        return Ok(());
    };
    let why = "the regression of the peer's return on the index's current and previous-period \
               returns (Dimson 1979 with one lag; README, \"Prices that react late\") runs over \
               the periods whose previous index return is in the window, which this sheet's \
               rows do not lay out; the flag lagged_response reads it.";
    let at = |col| (peer.row, col);
    book.computed(sheet, at(slope_col), lag.slope, why, &peer.formats.beta)?;
    book.computed(sheet, at(p_col), lag.p_value, why, &peer.formats.p_value)
}

/// SE(β) and SE(α): formulas for classical OLS (and Dimson's α), hurdle's figures otherwise.
fn std_errors(book: &mut Book, sheet: &mut Sheet, peer: &PeerRow) -> Result<()> {
    let v = book.v;
    let estimate = &v.peers[peer.i].estimate;
    let method = v.estimator.method;
    let classical = estimate.std_errors == StdErrors::Classical;
    let (cols, f) = (peer.cols, peer.formats);
    let (y, x, block, k) = (&peer.y, &peer.x, &peer.block, peer.k);
    if method == BetaMethod::Ols && classical {
        let s = peer.at(cols.resid_se);
        let se = format!("={s}/SQRT(DEVSQ({x}))");
        peer.put(book, sheet, cols.se, &se, "beta_std_error", &f.beta)?;
        let n = peer.at(cols.n);
        let alpha_se = format!("={s}*SQRT(1/{n}+AVERAGE({x})^2/DEVSQ({x}))");
        return peer.put(
            book,
            sheet,
            cols.alpha_se,
            &alpha_se,
            "alpha_std_error",
            &f.percent,
        );
    }
    let kind = crate::report::format::label(&estimate.std_errors);
    let why = match method {
        BetaMethod::Ols => format!(
            "{kind} standard errors need the residuals' sandwich, which no spreadsheet function \
             gives."
        ),
        BetaMethod::Dimson => format!(
            "the SE of a sum of slopes needs their covariance matrix ({kind} standard errors), \
             which LINEST does not return."
        ),
        BetaMethod::ScholesWilliams => format!(
            "the Scholes–Williams SE is a linear-estimator variance ({kind}) over the residuals \
             of the three-slope regression (see README)."
        ),
    };
    book.computed(
        sheet,
        (peer.row, cols.se),
        estimate.beta_std_error,
        &why,
        &f.beta,
    )?;
    if method == BetaMethod::Dimson && classical {
        let alpha_se = format!("=INDEX(LINEST({y},{block},TRUE,TRUE),2,{})", k + 1);
        peer.put(
            book,
            sheet,
            cols.alpha_se,
            &alpha_se,
            "alpha_std_error",
            &f.percent,
        )
    } else {
        let why =
            format!("{kind} standard error of alpha, computed with the regression's residuals.");
        book.computed(
            sheet,
            (peer.row, cols.alpha_se),
            estimate.alpha_std_error,
            &why,
            &f.percent,
        )
    }
}
