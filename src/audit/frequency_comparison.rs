//! The same case's betas at every sampling frequency, side by side (`hurdle betas
//! --compare-frequencies`).
//!
//! Each frequency re-estimates the peers (no WACC is computed) on the same data and the same calendar window — the
//! case's own window start and end, as dates — so the rows differ only by sampling. The minimum
//! observations scale with the number of periods: ceil(min_observations · periods at this
//! frequency / periods at the case's frequency), and at least 3. A frequency whose settings or
//! data cannot support an estimate reports the reason instead of failing the comparison.

use crate::case::{validate, CaseDate};
use crate::error::Result;
use crate::market::sampling::Frequency;
use crate::valuation::{estimate_peers, Inputs, PeerEstimates};

/// Every frequency, fastest first.
pub const FREQUENCIES: [Frequency; 4] = [
    Frequency::Daily,
    Frequency::Weekly,
    Frequency::Monthly,
    Frequency::Quarterly,
];

/// One frequency's valuation, or the reason there is none.
pub struct FrequencyRun {
    pub frequency: Frequency,
    pub estimates: std::result::Result<PeerEstimates, String>,
}

/// Runs the case at every frequency over the window of `base` (the case's own valuation).
pub fn compare_frequencies(inputs: &Inputs, base: &PeerEstimates) -> Result<Vec<FrequencyRun>> {
    let base_settings = &inputs.case.settings.beta;
    let base_periods = f64::from(base.spec.lookback);
    Ok(FREQUENCIES
        .iter()
        .map(|&frequency| {
            let mut variant = inputs.clone();
            let beta = &mut variant.case.settings.beta;
            beta.frequency = frequency;
            beta.window_start = Some(CaseDate(base.window_start));
            beta.window_end = Some(CaseDate(base.window_end));
            let valuation_date = variant.case.settings.case.valuation_date.0;
            let periods = f64::from(beta.lookback_periods(valuation_date));
            let scaled = |count: u32| (f64::from(count) * periods / base_periods).ceil() as u32;
            beta.min_observations = scaled(base_settings.min_observations).max(3);
            // Rolling windows the case sets are scaled the same way (their defaults follow the
            // window by themselves), so that a quarterly run is not refused for a monthly one.
            beta.rolling_window = base_settings.rolling_window.map(|w| scaled(w).max(3));
            beta.rolling_min_observations = base_settings.rolling_min_observations.map(|m| {
                scaled(m)
                    .max(3)
                    .min(beta.rolling_window.unwrap_or(u32::MAX))
            });
            let estimates = validate(&variant.case.settings)
                .and_then(|()| estimate_peers(&variant.case, &variant).map_err(|e| e.to_string()));
            FrequencyRun {
                frequency,
                estimates,
            }
        })
        .collect())
}
