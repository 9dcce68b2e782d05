//! The `Betas` sheet: each peer's regression as spreadsheet functions over the `Returns` sheet.
//!
//! OLS is `SLOPE`, `INTERCEPT`, `RSQ` and `STEYX`, with the classical standard errors from
//! them; Dimson (1979) is the sum of `LINEST` slopes on the index returns of several periods;
//! Scholes and Williams (1977) is three `SLOPE`s and a `CORREL`. The t statistics, p-values and
//! 95% intervals are `T.DIST.2T` and `T.INV.2T` on the regression's degrees of freedom. A
//! standard error no spreadsheet function gives (robust, Newey–West, or of a sum of slopes) is
//! written as hurdle's figure, marked, with a note saying so.

use crate::case::BetaMethod;
use crate::error::Result;
use crate::regression::StdErrors;

use super::returns::ReturnsLayout;
use super::{relative, xlsx_error, Book, Expect, Sheet};

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
    let mut c = Columns { names: Vec::new() };
    let peer = c.add("Peer");
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
        alpha: c.add("Alpha α"),
        beta: c.add("Raw beta β"),
        se: c.add("SE(β)"),
        t: c.add("t(β)"),
        p: c.add("p-value"),
        ci_low: c.add("95% CI low"),
        ci_high: c.add("95% CI high"),
        alpha_se: c.add("SE(α)"),
        alpha_t: c.add("t(α)"),
        alpha_p: c.add("p-value (α)"),
        r2: c.add("R²"),
        adj_r2: c.add("Adjusted R²"),
        resid_se: c.add("Residual SE"),
        rho,
    };
    let header = book.styles.header.clone();
    for (col, name) in c.names.iter().enumerate() {
        book.text(&mut sheet, (0, col as u16), name, &header)?;
    }
    let mut rows = Vec::with_capacity(v.peers.len());
    for i in 0..v.peers.len() {
        let row = 1 + i as u32;
        book.text(
            &mut sheet,
            (row, peer),
            &v.peers[i].name,
            &book.styles.text.clone(),
        )?;
        peer_row(book, &mut sheet, returns, &cols, &slopes, i, row)?;
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
    sheet.ws.set_column_width(0, 26).map_err(xlsx_error)?;
    for col in 1..c.names.len() as u16 {
        sheet.ws.set_column_width(col, 11).map_err(xlsx_error)?;
    }
    Ok(BetasLayout {
        sheet,
        rows,
        beta: cols.beta,
        std_error: cols.se,
    })
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
}

/// One peer's regression row.
fn peer_row(
    book: &mut Book,
    sheet: &mut Sheet,
    returns: &ReturnsLayout,
    cols: &Cols,
    slopes: &[(i32, u16)],
    i: usize,
    row: u32,
) -> Result<()> {
    let v = book.v;
    let method = v.estimator.method;
    let estimate = &v.peers[i].estimate;
    let at = |col: u16| relative(row, col);
    let p = |field: &str| Expect::Json(format!("/peers/{i}/{field}"));
    let y = returns.range(i, returns.asset);
    let x = returns.range(i, returns.market_column(0));
    let (lowest, highest) = (
        returns.market.first().map_or(0, |m| m.0),
        returns.market.last().map_or(0, |m| m.0),
    );
    let block = returns.market_range(i, lowest, highest);
    let k = slopes.len().max(1);
    let s = &book.styles;
    let (count, beta, stat, pv, pct) = (
        s.count.clone(),
        s.beta.clone(),
        s.statistic.clone(),
        s.p_value.clone(),
        s.return_pct.clone(),
    );
    book.formula(
        sheet,
        (row, cols.n),
        &format!("=COUNT({y})"),
        p("observations"),
        &count,
    )?;
    let parameters = if method == BetaMethod::ScholesWilliams {
        4
    } else {
        k + 1
    };
    book.formula(
        sheet,
        (row, cols.df),
        &format!("={}-{parameters}", at(cols.n)),
        p("degrees_of_freedom"),
        &count,
    )?;
    for (m, &(offset, col)) in slopes.iter().enumerate() {
        let formula = match method {
            // LINEST lists the slopes of its columns in reverse order, the intercept last.
            BetaMethod::Dimson => format!("=INDEX(LINEST({y},{block}),1,{})", k - m),
            _ => format!(
                "=SLOPE({y},{})",
                returns.range(i, returns.market_column(offset))
            ),
        };
        book.formula(
            sheet,
            (row, col),
            &formula,
            p(&format!("market_coefficients/{m}/estimate")),
            &beta,
        )?;
    }
    let slope_sum = || {
        slopes
            .iter()
            .map(|&(_, col)| at(col))
            .collect::<Vec<_>>()
            .join("+")
    };
    let (beta_formula, alpha_formula) = match method {
        BetaMethod::Ols => (format!("=SLOPE({y},{x})"), format!("=INTERCEPT({y},{x})")),
        BetaMethod::Dimson => (
            format!("={}", slope_sum()),
            format!("=INDEX(LINEST({y},{block}),1,{})", k + 1),
        ),
        BetaMethod::ScholesWilliams => {
            let rho = cols.rho.expect("Scholes-Williams has a ρ column");
            let lag = returns.range(i, returns.market_column(-1));
            book.formula(
                sheet,
                (row, rho),
                &format!("=CORREL({x},{lag})"),
                p("market_autocorrelation"),
                &beta,
            )?;
            (
                format!("=({})/(1+2*{})", slope_sum(), at(rho)),
                format!("=AVERAGE({y})-{}*AVERAGE({x})", at(cols.beta)),
            )
        }
    };
    book.formula(sheet, (row, cols.beta), &beta_formula, p("beta"), &beta)?;
    book.formula(sheet, (row, cols.alpha), &alpha_formula, p("alpha"), &pct)?;
    let (r2, resid) = match method {
        BetaMethod::Ols => (format!("=RSQ({y},{x})"), format!("=STEYX({y},{x})")),
        _ => (
            format!("=INDEX(LINEST({y},{block},TRUE,TRUE),3,1)"),
            format!("=INDEX(LINEST({y},{block},TRUE,TRUE),3,2)"),
        ),
    };
    book.formula(sheet, (row, cols.r2), &r2, p("r_squared"), &beta)?;
    book.formula(
        sheet,
        (row, cols.resid_se),
        &resid,
        p("residual_std_error"),
        &pct,
    )?;
    let adjusted = format!("=1-(1-{})*({}-1)/{}", at(cols.r2), at(cols.n), at(cols.df));
    book.formula(
        sheet,
        (row, cols.adj_r2),
        &adjusted,
        p("adjusted_r_squared"),
        &beta,
    )?;
    std_errors(book, sheet, (i, row), cols, (&y, &x, &block, k))?;
    let t_test = |value: u16, se: u16, t: u16, pcol: u16, name: &str| {
        [
            (
                t,
                format!("={}/{}", at(value), at(se)),
                format!("{name}_t_stat"),
            ),
            (
                pcol,
                format!("=T.DIST.2T(ABS({}),{})", at(t), at(cols.df)),
                format!("{name}_p_value"),
            ),
        ]
    };
    for (col, formula, field) in t_test(cols.beta, cols.se, cols.t, cols.p, "beta")
        .into_iter()
        .chain(t_test(
            cols.alpha,
            cols.alpha_se,
            cols.alpha_t,
            cols.alpha_p,
            "alpha",
        ))
    {
        let format = if field.ends_with("p_value") {
            &pv
        } else {
            &stat
        };
        book.formula(sheet, (row, col), &formula, p(&field), format)?;
    }
    let quantile = format!("T.INV.2T(0.05,{})", at(cols.df));
    let (b, se) = (at(cols.beta), at(cols.se));
    book.formula(
        sheet,
        (row, cols.ci_low),
        &format!("={b}-{quantile}*{se}"),
        p("beta_ci_low"),
        &beta,
    )?;
    book.formula(
        sheet,
        (row, cols.ci_high),
        &format!("={b}+{quantile}*{se}"),
        p("beta_ci_high"),
        &beta,
    )?;
    let _ = estimate;
    Ok(())
}

/// SE(β) and SE(α): formulas for classical OLS (and Dimson's α), hurdle's figures otherwise.
fn std_errors(
    book: &mut Book,
    sheet: &mut Sheet,
    (i, row): (usize, u32),
    cols: &Cols,
    (y, x, block, k): (&str, &str, &str, usize),
) -> Result<()> {
    let v = book.v;
    let estimate = &v.peers[i].estimate;
    let method = v.estimator.method;
    let classical = estimate.std_errors == StdErrors::Classical;
    let at = |col: u16| relative(row, col);
    let p = |field: &str| Expect::Json(format!("/peers/{i}/{field}"));
    let (beta, pct) = (book.styles.beta.clone(), book.styles.return_pct.clone());
    let kind = crate::format::label(&estimate.std_errors);
    let why_beta = match (method, classical) {
        (BetaMethod::Ols, _) => format!("{kind} standard errors need the residuals' sandwich, which no spreadsheet function gives."),
        (BetaMethod::Dimson, _) => format!("the SE of a sum of slopes needs their covariance matrix ({kind} standard errors), which LINEST does not return."),
        (BetaMethod::ScholesWilliams, _) => format!("the Scholes–Williams SE is a linear-estimator variance ({kind}) over the residuals of the three-slope regression (see README)."),
    };
    if method == BetaMethod::Ols && classical {
        let formula = format!("={}/SQRT(DEVSQ({x}))", at(cols.resid_se));
        book.formula(sheet, (row, cols.se), &formula, p("beta_std_error"), &beta)?;
        let formula = format!(
            "={}*SQRT(1/{}+AVERAGE({x})^2/DEVSQ({x}))",
            at(cols.resid_se),
            at(cols.n)
        );
        book.formula(
            sheet,
            (row, cols.alpha_se),
            &formula,
            p("alpha_std_error"),
            &pct,
        )?;
        let _ = y;
        return Ok(());
    }
    book.computed(
        sheet,
        (row, cols.se),
        estimate.beta_std_error,
        &why_beta,
        &beta,
    )?;
    if method == BetaMethod::Dimson && classical {
        let formula = format!("=INDEX(LINEST({y},{block},TRUE,TRUE),2,{})", k + 1);
        book.formula(
            sheet,
            (row, cols.alpha_se),
            &formula,
            p("alpha_std_error"),
            &pct,
        )?;
    } else {
        let why =
            format!("{kind} standard error of alpha, computed with the regression's residuals.");
        book.computed(
            sheet,
            (row, cols.alpha_se),
            estimate.alpha_std_error,
            &why,
            &pct,
        )?;
    }
    Ok(())
}
