//! Histogram of simulated figures (the Monte Carlo WACC draws), stored in the result so a chart
//! draws counts it does not compute.
//!
//! The bin width starts from the Freedman–Diaconis rule, 2·IQR·n^(−1/3) (Freedman and Diaconis
//! 1981, "On the histogram as a density estimator: L2 theory", Z. Wahrscheinlichkeitstheorie
//! 57), and is rounded up to a round step (1, 2, 2.5 or 5 × 10^k) so the edges fall on rates a
//! reader can name; the edges are multiples of that step, and no bin is narrower than a
//! hundredth of a basis point (draws that are all but equal get one or two such bins). Bins are
//! [e_i, e_{i+1}), the last one closed, as `numpy.histogram` counts them.

use crate::stats::quantile_sorted;
pub use crate::valuation::analyses::Histogram;

/// The most bins the width rule may give (a wider round step is taken instead); widening for an
/// end value that falls a hair outside adds at most two.
pub const MAX_BINS: usize = 60;

/// The narrowest bin: a hundredth of a basis point, the finest step a rate printed with four
/// decimals of a percent shows. Draws that are all (nearly) equal, as under a Vasicek prior of
/// negligible variance, would otherwise get bins of about 1e-14 whose edges, rounded to 12
/// decimals, fell onto one another and lost draws from the counts.
pub const MIN_BIN_WIDTH: f64 = 1e-6;

/// The histogram of `sorted` (ascending, finite, at least one value): edges strictly increasing,
/// the first at or below the smallest value and the last at or above the largest, and counts
/// that add up to the number of values.
pub fn histogram(sorted: &[f64]) -> Histogram {
    let (low, high) = (sorted[0], sorted[sorted.len() - 1]);
    let step = bin_width(sorted);
    let (mut first, mut last) = ((low / step).floor(), (high / step).floor() + 1.0);
    // Division and rounding may leave an end value a hair outside; widen by a bin then.
    if edge(first, step) > low {
        first -= 1.0;
    }
    if edge(last, step) < high {
        last += 1.0;
    }
    let bins = (last - first) as usize;
    let edges = edges(first, bins, step);
    // The values below each edge; the first bin starts at the first value and the last one
    // (closed) ends at the last, so the counts telescope to the number of values.
    let below = |i: usize| match i {
        0 => 0,
        i if i == bins => sorted.len(),
        i => sorted.partition_point(|&v| v < edges[i]),
    };
    let counts = (0..bins)
        .map(|i| (below(i + 1) - below(i)) as u32)
        .collect();
    Histogram {
        edges,
        counts,
        bin_width: step,
    }
}

/// The bin width: Freedman–Diaconis rounded up to a round step, at least [`MIN_BIN_WIDTH`], and
/// wide enough for at most [`MAX_BINS`] bins.
fn bin_width(sorted: &[f64]) -> f64 {
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
    let mut step = round_step(raw).max(MIN_BIN_WIDTH);
    while (high / step).floor() - (low / step).floor() >= MAX_BINS as f64 {
        step = round_step(step * 1.01);
    }
    step
}

/// Edge `k` of bins `step` wide, rounded to 12 decimals so that it prints as the rate it stands
/// for (k · step in binary is a hair off the decimal).
fn edge(k: f64, step: f64) -> f64 {
    (k * step * 1e12).round() / 1e12
}

/// The `bins + 1` edges from edge `first` on, rounded ([`edge`]) unless rounding would make two
/// of them meet: bins of at least [`MIN_BIN_WIDTH`] never meet at rates of any size a case
/// accepts, but the edges must increase whatever the values.
fn edges(first: f64, bins: usize, step: f64) -> Vec<f64> {
    let rounded: Vec<f64> = (0..=bins).map(|i| edge(first + i as f64, step)).collect();
    match rounded.windows(2).all(|pair| pair[0] < pair[1]) {
        true => rounded,
        false => (0..=bins).map(|i| (first + i as f64) * step).collect(),
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

    // Draws all but equal (a Vasicek prior of variance 1e-12 gave WACC draws within about 1e-12
    // of 7.53%, found by review: 9,574 of 10,000 draws counted, under "0 bp" bins): every
    // value counted once, edges strictly increasing and covering the values, bins no narrower
    // than a hundredth of a basis point.
    #[test]
    fn nearly_equal_values_are_all_counted_in_distinct_bins() {
        let mut rng = Rng::seeded(7);
        for (centre, spread) in [(0.075298477121, 5e-13), (0.0912, 3e-15), (-0.0004, 1e-9)] {
            let mut values: Vec<f64> = (0..10_000)
                .map(|_| centre + spread * rng.normal())
                .collect();
            values.sort_by(f64::total_cmp);
            let h = histogram(&values);
            assert_eq!(h.counts.iter().sum::<u32>(), 10_000, "{centre}");
            assert_eq!(h.edges.len(), h.counts.len() + 1);
            assert!(h.edges.windows(2).all(|e| e[0] < e[1]), "{:?}", h.edges);
            assert!(h.edges[0] <= values[0] && values[9_999] <= h.edges[h.counts.len()]);
            assert!(h.bin_width >= MIN_BIN_WIDTH, "{}", h.bin_width);
            // A spread of a few 1e-9 at most fits in one bin of 1e-6, or two when it straddles
            // an edge.
            assert!(h.counts.len() <= 2, "{centre}: {:?}", h.counts);
        }
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
