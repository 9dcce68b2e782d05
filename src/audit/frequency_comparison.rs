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
            beta.min_observations = ((f64::from(base_settings.min_observations) * periods
                / base_periods)
                .ceil() as u32)
                .max(3);
            let estimates = validate(&variant.case.settings)
                .and_then(|()| estimate_peers(&variant.case, &variant).map_err(|e| e.to_string()));
            FrequencyRun {
                frequency,
                estimates,
            }
        })
        .collect())
}
