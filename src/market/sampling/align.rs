//! Aligning one security's returns with the index's (and the rate's): the periods where every
//! series has a value, the index's returns at the estimator's lags and leads, and the periods
//! dropped, counted by reason. Apart from `sampling.rs`, which samples the returns aligned here.

use std::borrow::Cow;

use chrono::NaiveDate;
use serde::Serialize;

/// Counts of periods left out of a regression, by reason. A period missing several series
/// counts under each of them, so the reasons can sum to more than `total`.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq, Serialize)]
pub struct DroppedPeriods {
    pub total: usize,
    pub asset_missing: usize,
    pub market_missing: usize,
    pub risk_free_missing: usize,
    /// The peer's price at either end of the period was older than `beta.max_stale_days`
    /// (these periods are also counted in `asset_missing`).
    pub asset_stale: usize,
    /// The same for the index (also counted in `market_missing`).
    pub market_stale: usize,
    /// A lagged or led market return that a Dimson or Scholes–Williams regression needs is
    /// missing (its period has no index or risk-free value, or a lead would fall after the
    /// window end: later data are never used).
    pub shifted_market_missing: usize,
}

/// The market's (excess) return `offset` periods from each aligned period: −1 is the previous
/// period (a lag), +1 the next (a lead).
#[derive(Debug, Clone, PartialEq)]
pub struct ShiftedMarket {
    pub offset: i32,
    pub returns: Vec<f64>,
}

/// Returns of one asset and the market on the periods where every series has a value.
#[derive(Debug, Clone, PartialEq)]
pub struct AlignedReturns {
    pub period_ends: Vec<NaiveDate>,
    pub asset: Vec<f64>,
    pub market: Vec<f64>,
    /// Per-period risk-free rate when excess returns are used.
    pub risk_free: Option<Vec<f64>>,
    pub dropped: DroppedPeriods,
    /// Lagged and led market excess returns, one entry per requested offset (empty for OLS).
    pub market_shifted: Vec<ShiftedMarket>,
}

/// Whether returns all lie within 64 ε·(1 + |r|) of one another, the rounding of prices written to
/// 15 digits (found by review: measured from the first return, ±2e-15 got a beta of 2e11).
pub fn constant_up_to_rounding(returns: &[f64]) -> bool {
    let widen = |(l, h): (f64, f64), &r: &f64| {
        let (l, h) = (l.min(r), h.max(r));
        (h - l <= 64.0 * f64::EPSILON * (1.0 + l.abs().max(h.abs()))).then_some((l, h))
    };
    matches!(returns.first(), Some(&f) if returns.iter().try_fold((f, f), widen).is_some())
}

impl AlignedReturns {
    /// Whether the asset's returns (before any risk-free rate) are all the same to rounding
    /// ([`constant_up_to_rounding`]; found by review: 20·1.001ⁿ was estimated, its beta −2e-16).
    pub fn asset_is_constant(&self) -> bool {
        constant_up_to_rounding(&self.asset)
    }

    /// Asset returns less the risk-free rate (or the raw returns, borrowed, when there is none).
    pub fn asset_excess(&self) -> Cow<'_, [f64]> {
        subtract(&self.asset, self.risk_free.as_deref())
    }

    /// Market returns less the risk-free rate (or the raw returns, borrowed, when there is none).
    pub fn market_excess(&self) -> Cow<'_, [f64]> {
        subtract(&self.market, self.risk_free.as_deref())
    }
}

fn subtract<'a>(returns: &'a [f64], risk_free: Option<&[f64]>) -> Cow<'a, [f64]> {
    match risk_free {
        Some(rf) => Cow::Owned(returns.iter().zip(rf).map(|(r, f)| r - f).collect()),
        None => Cow::Borrowed(returns),
    }
}

/// Keeps the periods where the asset, the market and (when given) the risk-free rate all have
/// a value. All slices are per return period, in the order of `period_ends`.
pub fn align(
    period_ends: &[NaiveDate],
    asset: &[Option<f64>],
    market: &[Option<f64>],
    risk_free: Option<&[Option<f64>]>,
) -> AlignedReturns {
    let stale = StalePeriods::default();
    align_with_shifts(period_ends, asset, market, risk_free, stale, &[], 0)
}

/// Which periods of the asset's and the market's sampled returns had a price older than the
/// staleness limit at either end (as [`super::sampled_returns`] marks them); empty when none are known.
#[derive(Debug, Clone, Copy, Default)]
pub struct StalePeriods<'a> {
    pub asset: &'a [bool],
    pub market: &'a [bool],
}

impl StalePeriods<'_> {
    /// The stale periods from index `first` on, of the asset and of the market.
    fn counts_from(&self, first: usize) -> (usize, usize) {
        let count = |marks: &[bool]| {
            marks
                .get(first..)
                .map_or(0, |m| m.iter().filter(|&&s| s).count())
        };
        (count(self.asset), count(self.market))
    }
}

/// As [`align`], over the periods from index `first` on, additionally requiring the market's
/// excess return at each of `offsets` (−l a lag, +l a lead) relative to the period. The slices
/// may start before `first` so that the first window periods have their lags; a shift outside
/// the slices (a lead after the window end) counts as missing. The stale periods of `stale`
/// from `first` on are counted in the dropped periods.
pub fn align_with_shifts(
    period_ends: &[NaiveDate],
    asset: &[Option<f64>],
    market: &[Option<f64>],
    risk_free: Option<&[Option<f64>]>,
    stale: StalePeriods<'_>,
    offsets: &[i32],
    first: usize,
) -> AlignedReturns {
    let capacity = period_ends.len().saturating_sub(first);
    let (asset_stale, market_stale) = stale.counts_from(first);
    let mut aligned = AlignedReturns {
        period_ends: Vec::with_capacity(capacity),
        asset: Vec::with_capacity(capacity),
        market: Vec::with_capacity(capacity),
        risk_free: risk_free.map(|_| Vec::with_capacity(capacity)),
        dropped: DroppedPeriods {
            asset_stale,
            market_stale,
            ..DroppedPeriods::default()
        },
        market_shifted: offsets
            .iter()
            .map(|&offset| ShiftedMarket {
                offset,
                returns: Vec::with_capacity(capacity),
            })
            .collect(),
    };
    if offsets.is_empty() {
        align_unshifted(&mut aligned, period_ends, asset, market, risk_free, first);
        return aligned;
    }
    let market_excess_at = |j: usize| -> Option<f64> {
        let m = market[j]?;
        match risk_free {
            Some(rf) => rf[j].map(|f| m - f),
            None => Some(m),
        }
    };
    let shifted_at = |j: usize, o: i32| -> Option<f64> {
        let at = j as i64 + i64::from(o);
        if at < 0 || at >= period_ends.len() as i64 {
            None
        } else {
            market_excess_at(at as usize)
        }
    };
    for (j, &end) in period_ends.iter().enumerate().skip(first) {
        let rf = risk_free.map(|rf| rf[j]);
        // Checked first and read again when pushed: no vector per period (a universe aligns
        // millions of periods).
        let shifted = offsets.iter().all(|&o| shifted_at(j, o).is_some());
        let dropped = &mut aligned.dropped;
        dropped.asset_missing += usize::from(asset[j].is_none());
        dropped.market_missing += usize::from(market[j].is_none());
        dropped.risk_free_missing += usize::from(matches!(rf, Some(None)));
        dropped.shifted_market_missing += usize::from(!shifted);
        if !shifted {
            aligned.dropped.total += 1;
            continue;
        }
        match (asset[j], market[j], rf) {
            (Some(a), Some(m), None) => aligned.push(end, a, m, None),
            (Some(a), Some(m), Some(Some(f))) => aligned.push(end, a, m, Some(f)),
            _ => {
                aligned.dropped.total += 1;
                continue;
            }
        }
        for (series, &o) in aligned.market_shifted.iter_mut().zip(offsets) {
            series
                .returns
                .push(shifted_at(j, o).expect("checked above"));
        }
    }
    aligned
}

/// [`align_with_shifts`] without shifted index columns (OLS): the same rule and counts, into
/// local vectors and counters the compiler keeps in registers (a whole market aligns millions of
/// periods).
fn align_unshifted(
    aligned: &mut AlignedReturns,
    period_ends: &[NaiveDate],
    asset: &[Option<f64>],
    market: &[Option<f64>],
    risk_free: Option<&[Option<f64>]>,
    first: usize,
) {
    let capacity = period_ends.len().saturating_sub(first);
    let mut ends = std::mem::take(&mut aligned.period_ends);
    let mut asset_kept = std::mem::take(&mut aligned.asset);
    let mut market_kept = std::mem::take(&mut aligned.market);
    let mut risk_free_kept = aligned.risk_free.take().unwrap_or_default();
    let (mut asset_missing, mut market_missing, mut risk_free_missing) = (0, 0, 0);
    let periods = period_ends[first..]
        .iter()
        .zip(&asset[first..])
        .zip(&market[first..]);
    let mut count = |a: Option<f64>, m: Option<f64>| {
        asset_missing += usize::from(a.is_none());
        market_missing += usize::from(m.is_none());
        a.zip(m)
    };
    match risk_free {
        None => {
            for ((&end, &a), &m) in periods {
                if let Some((a, m)) = count(a, m) {
                    ends.push(end);
                    asset_kept.push(a);
                    market_kept.push(m);
                }
            }
        }
        Some(rf) => {
            for (((&end, &a), &m), &f) in periods.zip(&rf[first..]) {
                let both = count(a, m);
                match (both, f) {
                    (_, None) => risk_free_missing += 1,
                    (Some((a, m)), Some(f)) => {
                        ends.push(end);
                        asset_kept.push(a);
                        market_kept.push(m);
                        risk_free_kept.push(f);
                    }
                    (None, Some(_)) => {}
                }
            }
        }
    }
    let dropped = &mut aligned.dropped;
    dropped.asset_missing += asset_missing;
    dropped.market_missing += market_missing;
    dropped.risk_free_missing += risk_free_missing;
    dropped.total += capacity - ends.len();
    aligned.period_ends = ends;
    aligned.asset = asset_kept;
    aligned.market = market_kept;
    aligned.risk_free = risk_free.map(|_| risk_free_kept);
}

impl AlignedReturns {
    fn push(&mut self, end: NaiveDate, asset: f64, market: f64, risk_free: Option<f64>) {
        self.period_ends.push(end);
        self.asset.push(asset);
        self.market.push(market);
        if let (Some(list), Some(rf)) = (self.risk_free.as_mut(), risk_free) {
            list.push(rf);
        }
    }
}
