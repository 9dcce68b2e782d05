//! From dated prices to the returns a regression takes: sampling frequencies and calendars,
//! the return window, period returns, the risk-free rate per period, and the alignment of an
//! asset's returns with the index's (with the lagged and led index columns some estimators
//! need). Works on borrowed series views so a panel of thousands of securities is never copied.

pub mod sampling;
