//! Converting a nominal discount rate between currencies, and between nominal and real, by the
//! Fisher relation.
//!
//! A discount rate is tied to the currency of the cash flows it discounts. When the case's rates
//! are in one currency and the cash flows in another, the rate is carried across by the two
//! currencies' expected inflation: the real rate is the same in both. Pure functions; the case's
//! `[conversion]` table says what to convert.

/// Fisher (1930), *The Theory of Interest*, Macmillan: (1 + r_B) = (1 + r_A)·(1 + π_B)/(1 + π_A),
/// the nominal rate in currency B from the nominal rate in A and the two expected inflation rates
/// (relative purchasing-power parity with the same real rate in both; common practice).
pub fn convert_nominal(rate_a: f64, inflation_a: f64, inflation_b: f64) -> f64 {
    (1.0 + rate_a) * (1.0 + inflation_b) / (1.0 + inflation_a) - 1.0
}

/// Real rate from a nominal one: (1 + r_real) = (1 + r_nominal)/(1 + π) (Fisher 1930).
pub fn nominal_to_real(nominal: f64, inflation: f64) -> f64 {
    (1.0 + nominal) / (1.0 + inflation) - 1.0
}

/// Nominal rate from a real one: (1 + r_nominal) = (1 + r_real)·(1 + π) (Fisher 1930).
pub fn real_to_nominal(real: f64, inflation: f64) -> f64 {
    (1.0 + real) * (1.0 + inflation) - 1.0
}

#[cfg(test)]
mod tests {
    use super::*;

    // Hand-worked: 8% nominal in A, inflation 2% in A and 5% in B:
    // 1.08 × 1.05 / 1.02 − 1 = 1.134 / 1.02 − 1 = 0.111764705882… (= 19/170).
    // Real: 1.08 / 1.02 − 1 = 0.0588235… (= 1/17); 1.111764… / 1.05 − 1 is the same 1/17.
    #[test]
    fn fisher_hand_example() {
        // 1e-15: three or four roundings of numbers of order 1.
        assert!((convert_nominal(0.08, 0.02, 0.05) - 19.0 / 170.0).abs() < 1e-15);
        assert!((nominal_to_real(0.08, 0.02) - 1.0 / 17.0).abs() < 1e-15);
        assert!((nominal_to_real(19.0 / 170.0, 0.05) - 1.0 / 17.0).abs() < 1e-15);
    }

    // Round trips: A → B → A and nominal → real → nominal return the rate.
    #[test]
    fn fisher_round_trips() {
        for (rate, pa, pb) in [(0.0868, 0.02, 0.035), (0.12, 0.25, -0.01), (0.05, 0.0, 0.0)] {
            let back = convert_nominal(convert_nominal(rate, pa, pb), pb, pa);
            // 1e-15: a multiply and a divide by the same factors, twice.
            assert!((back - rate).abs() < 1e-15, "{rate} {pa} {pb}");
            let nominal = real_to_nominal(nominal_to_real(rate, pa), pa);
            assert!((nominal - rate).abs() < 1e-15, "{rate} {pa}");
        }
    }

    // Same inflation in both currencies: the rate does not change.
    #[test]
    fn equal_inflation_leaves_the_rate() {
        // 4.5e-16: (1 + r) rounds once on the way in and once on the way out, each at most half
        // an ulp of numbers below 2 (ulp 2.2e-16), so two ulps of 1 bound the error.
        assert!((convert_nominal(0.0868, 0.03, 0.03) - 0.0868).abs() < 4.5e-16);
    }
}
