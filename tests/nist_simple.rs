//! Least squares against more NIST Statistical Reference Datasets (StRD) than Longley
//! (tests/longley.rs): "Norris", the lower-difficulty straight line y = B0 + B1·x, which is the
//! very regression behind a beta (the peer's return on the index's), run through both the
//! regression (`ols`) and the beta estimator (`estimate_with`, OLS with classical errors); and
//! "Wampler1" and "Wampler2", degree-5 polynomials fitted exactly, whose designs are badly
//! conditioned (the case least squares by QR exists for, and the normal equations fail).
//! Norris: `tests/data/norris.csv` and `tests/data/norris-certified.toml` (public-domain NIST
//! StRD, see the comments in both). Wampler1 and Wampler2 are generated from their published
//! definitions: x = 0, 1, …, 20 and y = Σ Bk·x^k with B = (1, 1, 1, 1, 1, 1) and
//! (1, 0.1, 0.01, 0.001, 0.0001, 0.00001); NIST certifies exactly those B, standard errors of 0,
//! a residual standard deviation of 0 and R² = 1 (from memory, and a second published listing
//! of the StRD fits gives the same coefficients).

use std::collections::BTreeMap;

use hurdle::beta::{estimate_with, BetaMethod, EstimatorSpec};
use hurdle::stats::least_squares::{design_with_intercept, ols, StdErrors};

fn data_path(name: &str) -> String {
    format!("{}/tests/data/{name}", env!("CARGO_MANIFEST_DIR"))
}

#[derive(serde::Deserialize)]
struct Certified {
    estimates: BTreeMap<String, f64>,
    standard_errors: BTreeMap<String, f64>,
    fit: BTreeMap<String, f64>,
}

fn read_norris() -> (Vec<f64>, Vec<f64>, Certified) {
    let text = std::fs::read_to_string(data_path("norris.csv")).unwrap();
    let (mut y, mut x) = (Vec::new(), Vec::new());
    for line in text.lines().filter(|l| !l.starts_with('#')).skip(1) {
        let (a, b) = line.split_once(',').unwrap();
        y.push(a.parse().unwrap());
        x.push(b.parse().unwrap());
    }
    let certified =
        toml::from_str(&std::fs::read_to_string(data_path("norris-certified.toml")).unwrap())
            .unwrap();
    (y, x, certified)
}

/// The log relative error NIST's users report (McCullough 1998, "Assessing the reliability of
/// statistical software: Part I", The American Statistician 52(4)): the number of significant
/// digits that agree with the certified value.
fn correct_digits(value: f64, certified: f64) -> f64 {
    if value == certified {
        return 16.0;
    }
    -((value - certified) / certified).abs().log10()
}

// Norris is of lower difficulty: the certified values carry 15 digits, and the QR fit in doubles
// reaches 12.6 of them at worst (the test prints it). 11 digits is the bar: a margin of
// two for other platforms' last bits, and far above what a broken formula would give (a wrong
// degrees-of-freedom count or a standard error from the wrong diagonal differs in the first few).
const NORRIS_DIGITS: f64 = 11.0;

#[test]
fn norris_matches_nist_certified_values_in_the_regression_and_the_beta() {
    let (y, x, certified) = read_norris();
    assert_eq!(y.len(), 36);
    let fit = ols(&design_with_intercept(&[&x]), &y, true).unwrap();
    let spec = EstimatorSpec {
        method: BetaMethod::Ols,
        std_errors: StdErrors::Classical,
        newey_west_lags: None,
        dimson_lags: 0,
        dimson_leads: 0,
    };
    // The beta estimator takes the asset's returns and the index's: here y on x.
    let beta = estimate_with(&spec, &y, &x, &[]).unwrap();
    let b = &certified.estimates;
    let se = &certified.standard_errors;
    let f = &certified.fit;
    let checks = [
        ("B0", fit.coefficients[0], b["B0"]),
        ("B1", fit.coefficients[1], b["B1"]),
        ("SE B0", fit.std_errors[0], se["B0"]),
        ("SE B1", fit.std_errors[1], se["B1"]),
        (
            "residual SD",
            fit.residual_std_error,
            f["residual_standard_deviation"],
        ),
        ("R²", fit.r_squared, f["r_squared"]),
        ("alpha", beta.alpha, b["B0"]),
        ("beta", beta.beta, b["B1"]),
        ("alpha SE", beta.alpha_std_error, se["B0"]),
        ("beta SE", beta.beta_std_error, se["B1"]),
        (
            "beta residual SD",
            beta.residual_std_error,
            f["residual_standard_deviation"],
        ),
        ("beta R²", beta.r_squared, f["r_squared"]),
    ];
    let worst = checks
        .iter()
        .map(|(_, v, c)| correct_digits(*v, *c))
        .fold(f64::INFINITY, f64::min);
    println!("Norris: {worst:.1} correct digits at worst");
    for (what, value, certified) in checks {
        let digits = correct_digits(value, certified);
        assert!(
            digits >= NORRIS_DIGITS,
            "{what}: {value} against certified {certified}, {digits:.1} digits"
        );
    }
    assert_eq!(fit.degrees_of_freedom as f64, f["degrees_of_freedom"]);
    assert_eq!(beta.degrees_of_freedom as f64, f["degrees_of_freedom"]);
    // The residual sum of squares: (N − 2)·s².
    let rss = beta.residual_std_error.powi(2) * 34.0;
    assert!(correct_digits(rss, f["residual_sum_of_squares"]) >= NORRIS_DIGITS);
}

/// The Wampler design: columns x, x², …, x⁵ for x = 0..20, and y from the coefficients.
fn wampler(coefficients: [f64; 6]) -> (Vec<f64>, Vec<Vec<f64>>) {
    let x: Vec<f64> = (0..=20).map(f64::from).collect();
    let powers: Vec<Vec<f64>> = (1..=5)
        .map(|k| x.iter().map(|v| v.powi(k)).collect())
        .collect();
    let y = x
        .iter()
        .map(|v| (0..6).map(|k| coefficients[k] * v.powi(k as i32)).sum())
        .collect();
    (y, powers)
}

// Wampler1 and Wampler2 fit exactly, so the certified standard errors and residual SD are 0 and
// R² is 1; the coefficients are what the design's conditioning lets a solver recover. The
// design's condition number is 6.4·10⁶ (numpy.linalg.cond), 2.2·10³ after the column scaling
// `ols` applies, so a backward-stable QR keeps about 10 of a double's 16 digits (10.3 and 12.5
// here); the normal equations square the unscaled condition number and keep about 6.4 digits on
// Wampler1 (numpy's solve of XᵀX·b = Xᵀy gives B0 = 1.00000023), though about 10 on Wampler2,
// whose small high-order coefficients suffer less. 8 digits is the bar: it passes the QR on
// both with a margin of two and fails the normal equations on Wampler1. The standard errors and the
// residual SD must be zero to within the rounding of y itself: y reaches 3.4·10⁶ (Wampler1),
// so a residual of a few ulps of y is about 1e-9, far below the 1e-6 allowed.
#[test]
fn wampler_polynomials_are_recovered_by_the_qr_fit() {
    for (name, coefficients) in [
        ("Wampler1", [1.0, 1.0, 1.0, 1.0, 1.0, 1.0]),
        ("Wampler2", [1.0, 0.1, 0.01, 0.001, 0.0001, 0.00001]),
    ] {
        let (y, powers) = wampler(coefficients);
        let columns: Vec<&[f64]> = powers.iter().map(Vec::as_slice).collect();
        let fit = ols(&design_with_intercept(&columns), &y, true).unwrap();
        for (k, (&value, &certified)) in fit.coefficients.iter().zip(&coefficients).enumerate() {
            let digits = correct_digits(value, certified);
            assert!(digits >= 8.0, "{name} B{k}: {value}, {digits:.1} digits");
        }
        for (k, se) in fit.std_errors.iter().enumerate() {
            assert!(se.abs() < 1e-6, "{name} SE B{k}: {se}");
        }
        assert!(
            fit.residual_std_error < 1e-6,
            "{name}: {}",
            fit.residual_std_error
        );
        assert!(
            (fit.r_squared - 1.0).abs() < 1e-12,
            "{name}: {}",
            fit.r_squared
        );
        println!(
            "{name}: {:.1} correct digits at worst",
            fit.coefficients
                .iter()
                .zip(&coefficients)
                .map(|(v, c)| correct_digits(*v, *c))
                .fold(f64::INFINITY, f64::min)
        );
    }
}
