//! Distribution functions and summary statistics shared by the estimators, the capital chain
//! (the aggregations, `location_in`), the valuation's notes (Holm's adjustment) and the
//! universe's industry table (dispersion, weighted and trimmed means).
//!
//! Student t comes from statrs. Its quantile is polished with Newton steps on statrs' CDF,
//! which is computed from the regularised incomplete beta function, so confidence intervals
//! agree with scipy to about 1e-14 relative up to a few hundred degrees of freedom and 3e-13
//! at a few thousand (the incomplete beta loses digits as df grows), rather than the accuracy
//! of the inverse-beta routine alone. Above 1e5 degrees of freedom the quantile is the
//! Cornish–Fisher expansion about the normal quantile, accurate there to rounding (statrs'
//! inverse does not return for df of about 1.5e7 and more).

pub mod least_squares;
pub mod random;

use serde::{Deserialize, Serialize};
use statrs::distribution::{Continuous, ContinuousCDF, StudentsT};

/// The 95% confidence interval estimate ± t(0.975, df)·SE, the textbook interval of a
/// regression coefficient: the one place a beta's interval is computed (a whole window's and
/// each rolling window's).
pub fn interval_95(estimate: f64, std_error: f64, degrees_of_freedom: f64) -> (f64, f64) {
    let half = student_t_quantile(0.975, degrees_of_freedom) * std_error;
    (estimate - half, estimate + half)
}

/// Quantile of Student's t with `df` degrees of freedom at probability `p` in (0, 1).
///
/// Remembered per thread for the last few (p, df) pairs: a universe of thousands of securities
/// asks for the same 97.5% quantile at the same handful of degrees of freedom, and each fresh
/// quantile costs an inverse incomplete beta and Newton steps.
pub fn student_t_quantile(p: f64, df: f64) -> f64 {
    thread_local! {
        static KNOWN: std::cell::RefCell<[(u64, u64, f64); 64]> =
            const { std::cell::RefCell::new([(u64::MAX, u64::MAX, 0.0); 64]) };
    }
    let key = (p.to_bits(), df.to_bits());
    let slot = (df as usize) % 64;
    if let Some(x) = KNOWN.with(|k| {
        let (a, b, x) = k.borrow()[slot];
        ((a, b) == key).then_some(x)
    }) {
        return x;
    }
    let x = computed_t_quantile(p, df);
    KNOWN.with(|k| k.borrow_mut()[slot] = (key.0, key.1, x));
    x
}

/// Above this many degrees of freedom the t quantile is [`cornish_fisher_t`].
const CORNISH_FISHER_DF: f64 = 1e5;

/// The t quantile as the normal quantile z plus the Cornish–Fisher terms in 1/ν to the fourth
/// (Abramowitz and Stegun 1964, 26.7.5); at ν above 1e5 the next term is below 1e-20.
fn cornish_fisher_t(p: f64, df: f64) -> f64 {
    let z = statrs::distribution::Normal::standard().inverse_cdf(p);
    let z2 = z * z;
    let g1 = (z2 + 1.0) * z / 4.0;
    let g2 = ((5.0 * z2 + 16.0) * z2 + 3.0) * z / 96.0;
    let g3 = (((3.0 * z2 + 19.0) * z2 + 17.0) * z2 - 15.0) * z / 384.0;
    let g4 = ((((79.0 * z2 + 776.0) * z2 + 1482.0) * z2 - 1920.0) * z2 - 945.0) * z / 92160.0;
    z + (g1 + (g2 + (g3 + g4 / df) / df) / df) / df
}

fn computed_t_quantile(p: f64, df: f64) -> f64 {
    if df > CORNISH_FISHER_DF {
        return cornish_fisher_t(p, df);
    }
    let dist = StudentsT::new(0.0, 1.0, df).expect("degrees of freedom are positive");
    let mut x = dist.inverse_cdf(p);
    for _ in 0..3 {
        let density = dist.pdf(x);
        if !(density.is_finite() && density > 0.0) {
            break;
        }
        let step = (dist.cdf(x) - p) / density;
        x -= step;
        if step.abs() <= 1e-15 * x.abs().max(1.0) {
            break;
        }
    }
    x
}

/// Two-sided p-value of a t-statistic: 2·P(T > |t|).
pub fn student_t_two_sided_p(t: f64, df: f64) -> f64 {
    // statrs panics on a NaN argument; an infinite t lies beyond every quantile.
    if t.is_nan() {
        return f64::NAN;
    }
    if t.is_infinite() {
        return 0.0;
    }
    let dist = StudentsT::new(0.0, 1.0, df).expect("degrees of freedom are positive");
    let p = (2.0 * dist.sf(t.abs())).min(1.0);
    // A p-value below the smallest normal double is written as 0: a subnormal carries almost no
    // precision, and spreadsheets read one as text (found by review: a universe's p-values of
    // 7.9e-320 opened as text beside numbers).
    if p < f64::MIN_POSITIVE {
        0.0
    } else {
        p
    }
}

/// Holm's step-down adjustment of p-values for testing them together (Holm 1979, Scand. J.
/// Statistics 6(2)): sorted ascending, the k-th smallest (from 0) is multiplied by m − k, the
/// running maximum taken so the order is kept, and capped at 1; returned in the input's order.
/// A family's error rate stays below α when the adjusted values are compared with α.
pub fn holm_adjusted(p: &[f64]) -> Vec<f64> {
    let m = p.len();
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by(|&a, &b| p[a].total_cmp(&p[b]));
    let mut adjusted = vec![0.0; m];
    let mut running = 0.0_f64;
    for (k, &i) in order.iter().enumerate() {
        running = running.max(((m - k) as f64 * p[i]).min(1.0));
        adjusted[i] = running;
    }
    adjusted
}

/// The statistic of a set of values that a step carries forward.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum Aggregation {
    Median,
    Mean,
    /// Mean weighted by each peer's market value of equity.
    MarketCapWeighted,
    /// Mean after cutting `leverage.trim_fraction` of the values from each end.
    TrimmedMean,
}

impl Aggregation {
    /// The statistic in words, as a noun ("market-cap-weighted mean").
    pub fn noun(self) -> &'static str {
        match self {
            Aggregation::Median => "median",
            Aggregation::Mean => "mean",
            Aggregation::MarketCapWeighted => "market-cap-weighted mean",
            Aggregation::TrimmedMean => "trimmed mean",
        }
    }

    /// This statistic out of all of them.
    pub fn select(self, statistics: &Locations) -> f64 {
        match self {
            Aggregation::Median => statistics.median,
            Aggregation::Mean => statistics.mean,
            Aggregation::MarketCapWeighted => statistics.market_cap_weighted_mean,
            Aggregation::TrimmedMean => statistics.trimmed_mean,
        }
    }
}

/// Every location statistic an aggregation can pick, computed together so each is reported.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Locations {
    pub median: f64,
    pub mean: f64,
    pub market_cap_weighted_mean: f64,
    pub trimmed_mean: f64,
    /// Fraction cut from each end for `trimmed_mean`.
    pub trim_fraction: f64,
    /// How many values the trimmed mean cut from each end.
    pub trimmed_each_end: usize,
}

/// The median, mean, weighted mean (weights: market value of equity) and trimmed mean of
/// `values`.
pub fn locations(values: &[f64], market_caps: &[f64], trim_fraction: f64) -> Locations {
    let summary = dispersion(values);
    let (trimmed_mean, trimmed_each_end) = trimmed_mean(values, trim_fraction);
    Locations {
        median: summary.median,
        mean: summary.mean,
        market_cap_weighted_mean: weighted_mean(values, market_caps),
        trimmed_mean,
        trim_fraction,
        trimmed_each_end,
    }
}

/// The one statistic `aggregation` picks, computed alone with the same arithmetic as
/// [`locations`] (a Monte Carlo draw needs no other), with the sorted copy in `sorted`, a
/// buffer the caller reuses.
pub fn location_in(
    aggregation: Aggregation,
    values: &[f64],
    market_caps: &[f64],
    trim_fraction: f64,
    sorted: &mut Vec<f64>,
) -> f64 {
    match aggregation {
        Aggregation::Median | Aggregation::Mean => {
            sort_into(values, sorted);
            if aggregation == Aggregation::Median {
                quantile_sorted(sorted, 0.5)
            } else {
                sorted.iter().sum::<f64>() / sorted.len() as f64
            }
        }
        Aggregation::MarketCapWeighted => weighted_mean(values, market_caps),
        Aggregation::TrimmedMean => trimmed_mean_in(values, trim_fraction, sorted).0,
    }
}

/// `values` ascending into `sorted` (cleared first).
fn sort_into(values: &[f64], sorted: &mut Vec<f64>) {
    sorted.clear();
    sorted.extend_from_slice(values);
    sorted.sort_by(f64::total_cmp);
}

/// Σ wᵢxᵢ / Σ wᵢ (the textbook weighted arithmetic mean). Weights so large that a sum
/// overflows (market values near f64's limit) are taken relative to the largest, which leaves
/// the mean as it is.
pub fn weighted_mean(values: &[f64], weights: &[f64]) -> f64 {
    assert_eq!(values.len(), weights.len(), "one weight per value");
    let sums = |scale: f64| {
        let total: f64 = weights.iter().map(|w| w / scale).sum();
        let sum: f64 = values
            .iter()
            .zip(weights)
            .map(|(v, w)| v * (w / scale))
            .sum();
        (sum, total)
    };
    // Both sums finite, not only their ratio: a finite sum over an overflowed total is 0
    // (found by review: two market values of 1e308 made every weighted mean 0).
    let (sum, total) = sums(1.0);
    if sum.is_finite() && total.is_finite() {
        return sum / total;
    }
    let largest = weights.iter().fold(0.0_f64, |m, w| m.max(w.abs()));
    match largest.is_finite() && largest > 0.0 {
        true => {
            let (sum, total) = sums(largest);
            sum / total
        }
        false => sum / total,
    }
}

/// (Σ wᵢ)² / Σ wᵢ²: the number of equal weights that would give a weighted mean the same
/// variance as these (Kish's effective sample size, Survey Sampling, 1965, section 11.7; from
/// memory). Between 1 (one weight holds everything) and the count (all equal). The weights are
/// taken relative to the largest first, which leaves the ratio as it is and keeps market values
/// near f64's limit from overflowing. `None` for no positive weight.
pub fn effective_count(weights: &[f64]) -> Option<f64> {
    let largest = weights.iter().fold(0.0_f64, |m, w| m.max(w.abs()));
    if !(largest.is_finite() && largest > 0.0) {
        return None;
    }
    let (sum, squares) = weights.iter().fold((0.0, 0.0), |(s, q), w| {
        let w = w / largest;
        (s + w, q + w * w)
    });
    Some(sum * sum / squares)
}

/// Mean after removing ⌊n·α⌋ of the sorted values from each end, and that count: the trimmed
/// mean of Tukey (1962, Ann. Math. Statistics 33(1)), with the cut rounded down as in
/// `scipy.stats.trim_mean`. α in [0, 0.5).
pub fn trimmed_mean(values: &[f64], fraction: f64) -> (f64, usize) {
    trimmed_mean_in(values, fraction, &mut Vec::new())
}

/// [`trimmed_mean`] with the sorted copy in `sorted`, a buffer the caller reuses.
fn trimmed_mean_in(values: &[f64], fraction: f64, sorted: &mut Vec<f64>) -> (f64, usize) {
    sort_into(values, sorted);
    let cut = (sorted.len() as f64 * fraction).floor() as usize;
    let kept = &sorted[cut..sorted.len() - cut];
    (kept.iter().sum::<f64>() / kept.len() as f64, cut)
}

/// The distribution-free confidence interval for a median at `level` (0.95 for 95%): the order
/// statistics X(r) and X(n − r + 1) of the sorted values, r the largest with
/// P(B ≤ r − 1) ≤ (1 − level) / 2 for B ~ Binomial(n, ½), so that the interval covers the
/// population median with probability at least `level` whatever the values' distribution
/// (Conover, *Practical Nonparametric Statistics*, 3rd ed., 1999, section 3.2; the interval
/// `scipy.stats.quantile_test(...).confidence_interval` gives for p = ½). `None` when no pair of
/// order statistics reaches `level` (fewer than six values at 95%).
pub fn median_interval(sorted: &[f64], level: f64) -> Option<[f64; 2]> {
    use statrs::distribution::{Binomial, DiscreteCDF};
    let n = sorted.len();
    let binomial = Binomial::new(0.5, n as u64).ok()?;
    let tail = (1.0 - level) / 2.0;
    // The smallest k with P(B ≤ k) ≥ tail (the binomial's tail quantile), by bisection.
    let (mut low, mut high) = (0_u64, n as u64);
    while low < high {
        let middle = low + (high - low) / 2;
        match binomial.cdf(middle) >= tail {
            true => high = middle,
            false => low = middle + 1,
        }
    }
    // X(k) in 1-based order; the upper bound mirrors it (Binomial(n, ½) is symmetric).
    let lower = (low as usize).checked_sub(1)?;
    Some([sorted[lower], sorted[n - 1 - lower]])
}

/// P(X ≥ k) for X ~ Binomial(n, p): how often chance alone gives `k` or more successes in `n`
/// independent trials (statrs's binomial survival function, P(X > k − 1)); 1 for k = 0, and for a
/// `p` outside [0, 1] (which the settings' validation refuses), so that no note can hold NaN.
pub fn binomial_at_least(k: u64, n: u64, p: f64) -> f64 {
    use statrs::distribution::{Binomial, DiscreteCDF};
    match (k, Binomial::new(p, n)) {
        (0, _) | (_, Err(_)) => 1.0,
        (_, Ok(binomial)) => binomial.sf(k - 1),
    }
}

/// Location and spread of a set of values.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Dispersion {
    pub count: usize,
    pub min: f64,
    /// First quartile, linear interpolation between order statistics (Hyndman and Fan 1996,
    /// definition 7; numpy's default).
    pub lower_quartile: f64,
    pub median: f64,
    pub upper_quartile: f64,
    pub max: f64,
    pub mean: f64,
    /// Sample standard deviation (n − 1 denominator); `None` (null) for a single value, which
    /// has no spread to estimate (0 would read as a spread measured to be nil).
    pub std_dev: Option<f64>,
}

/// Summarises a non-empty set of finite values.
pub fn dispersion(values: &[f64]) -> Dispersion {
    assert!(!values.is_empty(), "dispersion of an empty set");
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let n = sorted.len();
    let mean = sorted.iter().sum::<f64>() / n as f64;
    let std_dev = (n > 1).then(|| {
        (sorted.iter().map(|v| (v - mean) * (v - mean)).sum::<f64>() / (n - 1) as f64).sqrt()
    });
    Dispersion {
        count: n,
        min: sorted[0],
        lower_quartile: quantile_sorted(&sorted, 0.25),
        median: quantile_sorted(&sorted, 0.5),
        upper_quartile: quantile_sorted(&sorted, 0.75),
        max: sorted[n - 1],
        mean,
        std_dev,
    }
}

/// Quantile of sorted values by linear interpolation at position q·(n − 1).
pub fn quantile_sorted(sorted: &[f64], q: f64) -> f64 {
    let position = q * (sorted.len() - 1) as f64;
    let below = position.floor() as usize;
    let above = position.ceil() as usize;
    let weight = position - below as f64;
    sorted[below] + weight * (sorted[above] - sorted[below])
}

#[cfg(test)]
mod tests {
    use super::*;

    // IEEE 754 doubles: below f64::MIN_POSITIVE (2.2e-308) lie the subnormals. Far in the
    // tail of a t with many degrees of freedom the raw two-sided tail passes through them; the
    // p-value is then 0, and otherwise the raw figure, untouched.
    #[test]
    fn a_p_value_is_never_subnormal() {
        let dist = StudentsT::new(0.0, 1.0, 2500.0).unwrap();
        let ts: Vec<f64> = (0..400).map(|i| 30.0 + i as f64 * 0.05).collect();
        let raw = |t: f64| 2.0 * dist.sf(t);
        assert!(ts
            .iter()
            .any(|&t| raw(t) > 0.0 && raw(t) < f64::MIN_POSITIVE));
        for &t in &ts {
            let p = student_t_two_sided_p(t, 2500.0);
            match raw(t) < f64::MIN_POSITIVE {
                true => assert_eq!(p, 0.0),
                false => assert_eq!(p, raw(t)),
            }
        }
    }

    // Student t critical values from standard printed tables (e.g. any statistics textbook's
    // appendix; values recalled from memory, to the 3 decimals tables print): t(0.975, 10) =
    // 2.228, t(0.975, 30) = 2.042, t(0.975, 1) = 12.706.
    #[test]
    fn t_quantiles_match_printed_tables() {
        // 5e-4: tables round to three decimals.
        assert!((student_t_quantile(0.975, 10.0) - 2.228).abs() < 5e-4);
        assert!((student_t_quantile(0.975, 30.0) - 2.042).abs() < 5e-4);
        assert!((student_t_quantile(0.975, 1.0) - 12.706).abs() < 5e-4);
        // t(1) is Cauchy: its quantile is tan(π(p − 1/2)) exactly (textbook identity).
        let exact = (std::f64::consts::PI * 0.475).tan();
        // 1e-12 relative: the Newton polish leaves only CDF rounding.
        assert!((student_t_quantile(0.975, 1.0) / exact - 1.0).abs() < 1e-12);
    }

    #[test]
    fn binomial_tail_matches_scipy() {
        // scipy.stats.binom.sf(k - 1, n, p) (scipy 1.x): 3 or more of 47 at 2.5%, 133 or more
        // of 4,990 at 2.5%, and 10 of 10 at one half, which is 2⁻¹⁰ exactly. 1e-10 relative:
        // statrs and scipy evaluate the regularised incomplete beta function by different
        // continued fractions, which agree here to 8e-14, 4e-13 and 2e-15 (measured).
        for (k, n, p, expected) in [
            (3, 47, 0.025, 0.11288208866840779),
            (133, 4990, 0.025, 0.23884559893250623),
            (10, 10, 0.5, 0.0009765625),
        ] {
            let got = binomial_at_least(k, n, p);
            assert!(
                (got - expected).abs() <= 1e-10 * expected,
                "{k} of {n}: {got}"
            );
        }
        assert_eq!(binomial_at_least(0, 47, 0.025), 1.0);
    }

    // The median's interval against scipy 1.17.1: `stats.quantile_test(np.arange(n), q=0,
    // p=0.5).confidence_interval(level)` on 0, 1, …, n − 1, so each bound is the 0-based index
    // of the order statistic scipy picks (NaN, here `None`, where none reaches the level).
    // Exact: both sides pick an order statistic, so any difference is a whole index.
    #[test]
    fn median_interval_matches_scipy() {
        let at_95: [(usize, Option<(usize, usize)>); 19] = [
            (5, None),
            (6, Some((0, 5))),
            (8, Some((0, 7))),
            (9, Some((1, 7))),
            (12, Some((2, 9))),
            (17, Some((4, 12))),
            (20, Some((5, 14))),
            (25, Some((7, 17))),
            (31, Some((9, 21))),
            (37, Some((12, 24))),
            (40, Some((13, 26))),
            (50, Some((17, 32))),
            (99, Some((39, 59))),
            (100, Some((39, 60))),
            (250, Some((109, 140))),
            (1000, Some((468, 531))),
            (2520, Some((1210, 1309))),
            (5000, Some((2430, 2569))),
            (1, None),
        ];
        let others = [
            (0.9, 10, (1, 8)),
            (0.9, 57, (21, 35)),
            (0.9, 300, (135, 164)),
            (0.99, 10, (0, 9)),
            (0.99, 20, (3, 16)),
            (0.99, 300, (127, 172)),
        ];
        let cases = (at_95.iter().map(|&(n, i)| (0.95, n, i)))
            .chain(others.iter().map(|&(level, n, i)| (level, n, Some(i))));
        for (level, n, expected) in cases {
            let values: Vec<f64> = (0..n).map(|i| i as f64).collect();
            let got = median_interval(&values, level).map(|[a, b]| (a as usize, b as usize));
            assert_eq!(got, expected, "n = {n}, level {level}");
        }
        assert_eq!(median_interval(&[], 0.95), None);
    }

    // The same quantiles to full precision, from scipy.stats.t.ppf (scipy 1.x, printed with
    // repr on 2026-12-04), across the degrees of freedom a case or a universe meets, a
    // fractional one included, and two far beyond.
    #[test]
    fn t_quantiles_match_scipy() {
        let scipy = [
            (0.975, 1.0, 12.706204736174694),
            (0.975, 2.0, 4.302652729749462),
            (0.975, 3.0, 3.1824463052837078),
            (0.975, 10.0, 2.228138851986274),
            (0.975, 30.0, 2.0422724563012378),
            (0.95, 5.0, 2.0150483733330233),
            (0.995, 60.0, 2.6602830288550368),
            (0.999, 4.0, 7.173182219782307),
            (0.975, 117.5, 1.9803595471058881),
            (0.975, 58.0, 2.0017174841452356),
            (0.975, 250.0, 1.9694983934211532),
            (0.975, 2516.0, 1.9609073046727843),
            (0.975, 20000.0, 1.9600826051581348),
            (0.975, 1e5, 1.9599877075346095),
            (0.975, 100001.0, 1.9599877072973786),
            (0.975, 2e5, 1.959975845966768),
            (0.975, 1e6, 1.959966356814107),
            (0.975, 1e7, 1.959964221767205),
            (0.995, 1e7, 2.5758297952037488),
            (0.975, 1e9, 1.959963986912325),
        ];
        for (p, df, expected) in scipy {
            // 1e-12 relative up to 20,000 degrees of freedom (daily returns over 80 years): the
            // Newton polish stops at statrs' CDF, whose incomplete beta carries about 1e-14
            // absolute error at df in the thousands, 2e-13 relative in t; up to 1e5, 1e-10 (its
            // CDF is 2e-12 off there). Above 1e5 the Cornish–Fisher expansion is exact to the
            // normal quantile's rounding: 1e-14.
            let bound = match df {
                d if d <= 20000.0 => 1e-12,
                d if d <= 1e5 => 1e-10,
                _ => 1e-14,
            };
            let got = student_t_quantile(p, df);
            assert!(
                (got / expected - 1.0).abs() < bound,
                "t({p}, {df}) {got} against {expected}"
            );
        }
    }

    // Holm's procedure worked by hand from its definition (Holm 1979): p = (0.01, 0.04, 0.03,
    // 0.005), m = 4; sorted 0.005·4 = 0.02, 0.01·3 = 0.03, 0.03·2 = 0.06, 0.04·1 = 0.04 raised to
    // the running maximum 0.06; in the input's order (0.03, 0.06, 0.06, 0.02). One test is its own
    // p; a product above 1 is capped.
    #[test]
    fn holm_adjusts_step_down() {
        let adjusted = holm_adjusted(&[0.01, 0.04, 0.03, 0.005]);
        let expected = [0.03, 0.06, 0.06, 0.02];
        for (a, e) in adjusted.iter().zip(expected) {
            // 1e-15: one product of two decimals.
            assert!((a - e).abs() < 1e-15, "{adjusted:?}");
        }
        assert_eq!(holm_adjusted(&[0.2]), vec![0.2]);
        assert_eq!(holm_adjusted(&[0.6, 0.7]), vec![1.0, 1.0]);
    }

    // p-value of t = 0 is 1; the Cauchy (df = 1) tail is 1/2 − atan(t)/π (textbook identity).
    #[test]
    fn two_sided_p_values() {
        assert!((student_t_two_sided_p(0.0, 12.0) - 1.0).abs() < 1e-15);
        let t = 3.0_f64;
        let exact = 2.0 * (0.5 - t.atan() / std::f64::consts::PI);
        // 1e-13: one incomplete-beta evaluation.
        assert!((student_t_two_sided_p(t, 1.0) - exact).abs() < 1e-13);
    }

    // A zero standard error gives t = ±inf (p = 0: the limit of 2·P(T > |t|)) or, with a zero
    // estimate, t = NaN, for which there is no p-value (statrs' incomplete beta panics on NaN).
    #[test]
    fn non_finite_t_statistics_do_not_panic() {
        assert_eq!(student_t_two_sided_p(f64::INFINITY, 10.0), 0.0);
        assert_eq!(student_t_two_sided_p(f64::NEG_INFINITY, 10.0), 0.0);
        assert!(student_t_two_sided_p(f64::NAN, 10.0).is_nan());
    }

    // numpy.percentile's default ("linear") on [1, 2, 3, 4]: 25% → 1.75, 50% → 2.5, 75% → 3.25
    // (from the definition q·(n−1) = 0.75, 1.5, 2.25, worked by hand).
    #[test]
    fn quartiles_interpolate_linearly() {
        let d = dispersion(&[4.0, 1.0, 3.0, 2.0]);
        assert_eq!(
            (d.lower_quartile, d.median, d.upper_quartile),
            (1.75, 2.5, 3.25)
        );
        assert_eq!((d.min, d.max, d.mean), (1.0, 4.0, 2.5));
        // Sample SD of 1..4: √(5/3) (sum of squared deviations 5, n − 1 = 3).
        assert!((d.std_dev.unwrap() - (5.0_f64 / 3.0).sqrt()).abs() < 1e-15);
        // One value: no spread to estimate (numpy.std(ddof=1) of one value is nan with a
        // warning), so none, not 0.
        assert_eq!(dispersion(&[0.8]).std_dev, None);
    }

    // Kish's effective sample size by hand, (Σw)²/Σw²: four equal weights are worth 4; one
    // weight among zeros 1; weights 3 and 1 give 16/10. Two market values near f64's limit,
    // whose squares overflow, are still worth 2. Exact in binary but for 1.6: the weights
    // divided by the largest (1/3) and the sums of them round, a few units in the last place.
    #[test]
    fn effective_count_by_hand() {
        assert_eq!(effective_count(&[5.0; 4]), Some(4.0));
        assert_eq!(effective_count(&[7.0, 0.0, 0.0]), Some(1.0));
        let kish = effective_count(&[3.0, 1.0]).unwrap();
        assert!((kish - 1.6).abs() < 4.0 * f64::EPSILON * 1.6, "{kish}");
        assert_eq!(effective_count(&[1e308, 1e308]), Some(2.0));
        assert_eq!(effective_count(&[]), None);
        assert_eq!(effective_count(&[0.0, 0.0]), None);
    }

    // Weighted mean by hand: values 1, 2, 4 with weights 1, 1, 2: (1 + 2 + 8) / 4 = 2.75.
    #[test]
    fn weighted_mean_by_hand() {
        assert_eq!(weighted_mean(&[1.0, 2.0, 4.0], &[1.0, 1.0, 2.0]), 2.75);
        // Equal weights whose sum overflows f64 (1e308 + 1e308): the plain mean of 1 and 3 by
        // hand, 2, exactly (each weight is 1 relative to the largest).
        assert_eq!(weighted_mean(&[1.0, 3.0], &[1e308, 1e308]), 2.0);
        // Values below 1, whose weighted sum (0.5·1e308 twice) stays finite while the total
        // of the weights overflows: the mean is 0.5 by hand, not 1e308 / inf = 0 (found by
        // review).
        assert_eq!(weighted_mean(&[0.5, 0.5], &[1e308, 1e308]), 0.5);
    }

    // Trimmed mean by hand, 10 values 1..=9 and 100, α = 0.1: cut ⌊1.0⌋ = 1 from each end,
    // mean of 2..=9 = 44 / 8 = 5.5; α = 0.15 still cuts ⌊1.5⌋ = 1; α = 0 is the mean 145/10.
    #[test]
    fn trimmed_mean_by_hand() {
        let values = [100.0, 1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0];
        assert_eq!(trimmed_mean(&values, 0.1), (5.5, 1));
        assert_eq!(trimmed_mean(&values, 0.15), (5.5, 1));
        assert_eq!(trimmed_mean(&values, 0.0), (14.5, 0));
    }
}
