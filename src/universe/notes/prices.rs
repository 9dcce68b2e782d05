//! The notes on patterns in the securities' prices that pass every rule yet bend a beta, as a
//! case notes them for a peer (`case::sanity::prices`): a move between two rows in the window
//! by a usual split ratio (an unadjusted split inside the factor-of-3 bound), and prices
//! unchanged for more than a month to their end in the window (carried forward after trading
//! stopped).

use super::{first_ids, ids_where};
use crate::universe::securities::SecurityResult;
use crate::universe::securities_count;

/// The two notes, each naming the securities it finds.
pub(super) fn pattern_notes(securities: &[SecurityResult]) -> Vec<String> {
    let split = ids_where(securities, |s| s.price_patterns.0.is_some());
    let flat = ids_where(securities, |s| s.price_patterns.1.is_some());
    let mut notes = Vec::new();
    if !split.is_empty() {
        notes.push(format!(
            "{} with a price moving between two rows in the window by a usual split's ratio \
             (1/2, 2, 1/3, 3, 1/4 or 4 within 5%, 2/3 or 3/2 within 2%), as a split moves a \
             price not adjusted for it: betas need prices adjusted for splits (a real move of \
             that size is rare): {}",
            securities_count(split.len()),
            first_ids(&split)
        ));
    }
    if !flat.is_empty() {
        notes.push(format!(
            "{} with prices unchanged for more than a month, three rows at least, up to their \
             last in the window: carried forward after trading stopped? Their returns of zero \
             pull a beta toward zero: {}",
            securities_count(flat.len()),
            first_ids(&flat)
        ));
    }
    notes
}
