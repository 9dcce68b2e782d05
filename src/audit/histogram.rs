//! Histogram of simulated figures (the Monte Carlo WACC draws), stored in the result so a chart
//! draws counts it does not compute.
//!
//! The bin width starts from the Freedman–Diaconis rule, 2·IQR·n^(−1/3) (Freedman and Diaconis
//! 1981, "On the histogram as a density estimator: L2 theory", Z. Wahrscheinlichkeitstheorie
//! 57), and is rounded up to a round step (1, 2, 2.5 or 5 × 10^k) so the edges fall on rates a
//! reader can name; the edges are multiples of that step. Bins are [e_i, e_{i+1}), the last one
//! closed, as `numpy.histogram` counts them.

use crate::stats::quantile_sorted;
pub use crate::valuation::analyses::Histogram;

/// The most bins the width rule may give (a wider round step is taken instead); widening for an
/// end value that falls a hair outside adds at most two.
pub const MAX_BINS: usize = 60;

/// The histogram of `sorted` (ascending, finite, at least one value).
pub fn histogram(sorted: &[f64]) -> Histogram {
    let (low, high) = (sorted[0], sorted[sorted.len() - 1]);
    let n = sorted.len() as f64;
    let iqr = quantile_sorted(sorted, 0.75) - quantile_sorted(sorted, 0.25);
    let rule = 2.0 * iqr * n.powf(-1.0 / 3.0);
    // Without spread (a single value, or half the draws on one value) fall back to a tenth of
    // the range, and to one basis point when every value is the same.
    let raw = if rule > 0.0 {
        rule
    } else if high > low {
        (high - low) / 10.0
    } else {
        1e-4
    };
    let mut step = round_step(raw);
    while (high / step).floor() - (low / step).floor() >= MAX_BINS as f64 {
        step = round_step(step * 1.01);
    }
    // Rounded to 12 decimals so that an edge prints as the rate it stands for.
    let edge = |k: f64| (k * step * 1e12).round() / 1e12;
    let (mut first, mut last) = ((low / step).floor(), (high / step).floor() + 1.0);
    // Division and rounding may leave an end value a hair outside; widen by a bin then.
    if edge(first) > low {
        first -= 1.0;
    }
    if edge(last) < high {
        last += 1.0;
    }
    let bins = (last - first) as usize;
    let edges: Vec<f64> = (0..=bins).map(|i| edge(first + i as f64)).collect();
    let below = |edge: f64| sorted.partition_point(|&v| v < edge);
    let counts = (0..bins)
        .map(|i| {
            let upper = if i + 1 == bins {
                sorted.len()
            } else {
                below(edges[i + 1])
            };
            (upper - below(edges[i])) as u32
        })
        .collect();
    Histogram {
        edges,
        counts,
        bin_width: step,
    }
}

/// The smallest of 1, 2, 2.5 and 5 × 10^k at or above `raw` (positive).
fn round_step(raw: f64) -> f64 {
    let power = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 2.5, 5.0, 10.0]
        .iter()
        .map(|m| m * power)
        .find(|&s| s >= raw * (1.0 - 1e-12))
        .unwrap_or(10.0 * power)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::stats::random::Rng;

    // Counting by brute force, one value at a time against the stored edges, must give the
    // same counts (numpy.histogram's convention: half-open bins, the last closed); the counts
    // sum to the number of values and the edges cover them.
    #[test]
    fn counts_match_a_brute_force_count() {
        let mut rng = Rng::seeded(3);
        let mut values: Vec<f64> = (0..5000).map(|_| 0.085 + 0.004 * rng.normal()).collect();
        values.sort_by(f64::total_cmp);
        let h = histogram(&values);
        assert_eq!(h.edges.len(), h.counts.len() + 1);
        assert!(h.edges[0] <= values[0] && values[values.len() - 1] <= h.edges[h.counts.len()]);
        for (i, &count) in h.counts.iter().enumerate() {
            let last = i + 1 == h.counts.len();
            let brute = values
                .iter()
                .filter(|&&v| {
                    v >= h.edges[i] && (v < h.edges[i + 1] || last && v <= h.edges[i + 1])
                })
                .count();
            assert_eq!(count as usize, brute, "bin {i}");
        }
        assert_eq!(h.counts.iter().sum::<u32>(), 5000);
        // Freedman–Diaconis for a normal sample: IQR ≈ 1.349σ, so 2·1.349·0.004·5000^(−1/3)
        // ≈ 0.000631, rounded up to the step 0.001 (1, 2, 2.5, 5 × 10^k).
        assert!((h.bin_width - 0.001).abs() < 1e-18, "{}", h.bin_width);
    }

    #[test]
    fn a_single_value_gets_one_bin_around_it() {
        let h = histogram(&[0.08; 10]);
        assert_eq!(h.counts, vec![10]);
        assert!(h.edges[0] <= 0.08 && 0.08 <= h.edges[1]);
    }

    #[test]
    fn round_steps() {
        // 1e-18: the steps are products of a power of ten and 1, 2, 2.5 or 5 (last-bit rounding).
        for (raw, step) in [
            (0.00063, 0.001),
            (0.0003, 0.0005),
            (0.00021, 0.00025),
            (0.002, 0.002),
        ] {
            assert!((round_step(raw) - step).abs() < 1e-18, "{raw}");
        }
    }
}
