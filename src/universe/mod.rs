//! Industry beta tables from a whole market: every security of a price panel estimated as a
//! case would estimate a peer, unlevered with its own capital structure, and aggregated by
//! industry.
//!
//! [`settings`] reads the universe file; the panel and attributes tables come from
//! [`crate::panel`].

pub mod settings;
