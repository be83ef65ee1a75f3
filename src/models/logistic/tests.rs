use super::*;
use crate::progress::NoProgress;

/// Challenger O-ring data, Dalal, Fowlkes & Hoadley (1989), JASA 84:945-957, as listed in
/// CHECK_VALUES.md: launch temperature (°F) and O-rings with distress.
const TEMPERATURES: [f32; 23] = [
    53.0, 57.0, 58.0, 63.0, 66.0, 67.0, 67.0, 67.0, 68.0, 69.0, 70.0, 70.0, 70.0, 70.0, 72.0, 73.0,
    75.0, 75.0, 76.0, 76.0, 78.0, 79.0, 81.0,
];
const DISTRESSED: [u8; 23] = [
    2, 1, 1, 1, 0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 0, 0, 0, 2, 0, 0, 0, 0, 0,
];

fn challenger() -> (Matrix, Vec<f32>) {
    let x = Matrix::new(23, 1, TEMPERATURES.to_vec()).unwrap();
    let y = DISTRESSED.iter().map(|&d| f32::from(d > 0)).collect();
    (x, y)
}

fn unpenalised() -> LogisticParams {
    LogisticParams {
        l2: 0.0,
        ..LogisticParams::default()
    }
}

fn close(actual: f64, expected: f64, rel: f64) -> bool {
    ((actual - expected) / expected).abs() <= rel
}

#[test]
fn challenger_fit_matches_published_coefficients_and_log_likelihood() {
    // Check values: CHECK_VALUES.md, Challenger (recomputed with a general-purpose statistics
    // library; also in Agresti, from memory): intercept 15.0429, slope −0.2322,
    // log-likelihood −10.1576.
    let (x, y) = challenger();
    let model = unpenalised()
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    assert!(model.converged);
    assert!(
        close(model.raw_intercept(), 15.0429, 1e-3),
        "{}",
        model.raw_intercept()
    );
    assert!(close(model.raw_coefficients()[0], -0.2322, 1e-3));
    let ll = model.log_likelihood(&x, &y, None).unwrap();
    assert!(close(ll, -10.1576, 1e-3), "{ll}");
    // Residual deviance 20.315 on 21 df (same source).
    assert!(close(-2.0 * ll, 20.315, 1e-3));
}

#[test]
fn challenger_standard_errors_match_published_values() {
    // Check values: CHECK_VALUES.md, Challenger: SE 7.3786 (intercept), 0.1082 (slope).
    let (x, y) = challenger();
    let model = unpenalised()
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    let se = model.standard_errors(&x, &y, None).unwrap();
    assert!(close(se[0], 7.3786, 1e-3), "{se:?}");
    assert!(close(se[1], 0.1082, 1e-3), "{se:?}");
}

#[test]
fn challenger_fit_without_standardising_gives_the_same_answer() {
    // Same published check values; the unstandardised path must agree.
    let (x, y) = challenger();
    let params = LogisticParams {
        standardize: false,
        ..unpenalised()
    };
    let model = params
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    assert!(close(model.raw_intercept(), 15.0429, 1e-3));
    assert!(close(model.raw_coefficients()[0], -0.2322, 1e-3));
}

#[test]
fn frequency_weights_equal_repeated_rows() {
    // Grouped form of the Challenger data: a weight of 2 on a row must give the same fit as
    // the row twice (a property of the likelihood, checked against the published slope).
    let (x, y) = challenger();
    let mut rows = Vec::new();
    let mut doubled_y = Vec::new();
    for (i, &label) in y.iter().enumerate() {
        rows.extend([i, i]);
        doubled_y.extend([label, label]);
    }
    let doubled = x.select_rows(&rows);
    let weights = vec![2.0f32; 23];
    let a = unpenalised()
        .fit(&x, &y, Some(&weights), &NoProgress, &Cancel::new())
        .unwrap();
    let b = unpenalised()
        .fit(&doubled, &doubled_y, None, &NoProgress, &Cancel::new())
        .unwrap();
    assert!(close(a.raw_coefficients()[0], -0.2322, 1e-3));
    assert!((a.raw_coefficients()[0] - b.raw_coefficients()[0]).abs() < 1e-6);
    // Doubling the data halves the variance: SE shrinks by √2 (CHECK_VALUES slope SE 0.1082).
    let se = a.standard_errors(&x, &y, Some(&weights)).unwrap();
    assert!(close(se[1], 0.1082 / 2f64.sqrt(), 1e-3), "{se:?}");
}

#[test]
fn constant_columns_get_unit_scale_and_zero_coefficient() {
    // Published Challenger values again, with a constant and an all-NaN column added: they
    // must neither break the fit nor change it.
    let (x, y) = challenger();
    let mut values = Vec::new();
    for i in 0..23 {
        values.extend([7.0, x.get(i, 0), f32::NAN]);
    }
    let wide = Matrix::new(23, 3, values).unwrap();
    let model = unpenalised()
        .fit(&wide, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    assert_eq!(model.scales[0], 1.0);
    assert_eq!(model.coefficients[0], 0.0);
    assert_eq!(model.coefficients[2], 0.0);
    assert!(close(model.raw_coefficients()[1], -0.2322, 1e-3));
    let se = model.standard_errors(&wide, &y, None).unwrap();
    assert!(se[1].is_nan() && se[3].is_nan());
    assert!(close(se[2], 0.1082, 1e-3));
}

#[test]
fn penalty_shrinks_the_standardised_slope() {
    // Common practice: a ridge penalty pulls the coefficient toward 0 monotonically.
    let (x, y) = challenger();
    let slope = |l2: f64| {
        LogisticParams {
            l2,
            ..LogisticParams::default()
        }
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap()
        .coefficients[0]
    };
    let (a, b, c) = (slope(0.0), slope(0.1), slope(1.0));
    assert!(a < b && b < c && c < 0.0, "{a} {b} {c}");
}

#[test]
fn invalid_params_and_bad_data_are_rejected() {
    let (x, y) = challenger();
    let fit = |p: LogisticParams, y: &[f32]| p.fit(&x, y, None, &NoProgress, &Cancel::new());
    for bad in [
        LogisticParams {
            l2: -1.0,
            ..Default::default()
        },
        LogisticParams {
            l2: f64::NAN,
            ..Default::default()
        },
        LogisticParams {
            max_iter: 0,
            ..Default::default()
        },
        LogisticParams {
            tol: 0.0,
            ..Default::default()
        },
    ] {
        assert!(matches!(fit(bad, &y), Err(FitError::InvalidParams(_))));
    }
    let mut nan_y = y.clone();
    nan_y[4] = f32::NAN;
    assert_eq!(
        fit(LogisticParams::default(), &nan_y),
        Err(FitError::NanLabel { row: 4 })
    );
    assert!(matches!(
        fit(LogisticParams::default(), &y[..5]),
        Err(FitError::LengthMismatch { .. })
    ));
    let mut big_y = y.clone();
    big_y[0] = 2.0;
    assert!(matches!(
        fit(LogisticParams::default(), &big_y),
        Err(FitError::LabelOutOfRange { row: 0, .. })
    ));
    let empty = Matrix::new(0, 1, vec![]).unwrap();
    assert!(matches!(
        LogisticParams::default().fit(&empty, &[], None, &NoProgress, &Cancel::new()),
        Err(FitError::Empty(_))
    ));
    let mut infinite = x.clone();
    infinite.set(3, 0, f32::INFINITY);
    assert_eq!(
        LogisticParams::default().fit(&infinite, &y, None, &NoProgress, &Cancel::new()),
        Err(FitError::InfiniteFeature { row: 3, col: 0 })
    );
    let w = vec![-1.0f32; 23];
    assert!(matches!(
        LogisticParams::default().fit(&x, &y, Some(&w), &NoProgress, &Cancel::new()),
        Err(FitError::BadWeight { .. })
    ));
}

#[test]
fn a_cancelled_fit_returns_cancelled() {
    let (x, y) = challenger();
    let cancel = Cancel::new();
    cancel.cancel();
    assert_eq!(
        unpenalised().fit(&x, &y, None, &NoProgress, &cancel),
        Err(FitError::Cancelled)
    );
}

fn breast_cancer() -> (Matrix, Vec<f32>) {
    // Breast Cancer Wisconsin (Diagnostic), bundled with smartcore 0.4 (an open dataset).
    let data = smartcore::dataset::breast_cancer::load_dataset();
    let x = Matrix::new(data.num_samples, data.num_features, data.data).unwrap();
    let y = data.target.iter().map(|&t| t as f32).collect();
    (x, y)
}

/// Fixed split: every fourth row is held out.
fn split(n: usize) -> (Vec<usize>, Vec<usize>) {
    (0..n).partition(|i| i % 4 != 0)
}

#[test]
fn breast_cancer_fit_agrees_with_smartcore_and_predicts_well() {
    use smartcore::linalg::basic::matrix::DenseMatrix;
    use smartcore::linear::logistic_regression::{
        LogisticRegression, LogisticRegressionParameters,
    };
    let (x, y) = breast_cancer();
    let (train, test) = split(x.n_rows());
    let (x_train, x_test) = (x.select_rows(&train), x.select_rows(&test));
    let y_train: Vec<f32> = train.iter().map(|&i| y[i]).collect();
    let y_test: Vec<f32> = test.iter().map(|&i| y[i]).collect();
    let l2 = 0.01;
    let params = LogisticParams {
        l2,
        tol: 1e-10,
        ..LogisticParams::default()
    };
    let ours = params
        .fit(&x_train, &y_train, None, &NoProgress, &Cancel::new())
        .unwrap();
    assert!(ours.converged);
    // Reference: smartcore's LogisticRegression (a general-purpose library) on the same
    // standardised data; its objective is the summed loss + α/2‖β‖², so α = n·λ.
    let n = x_train.n_rows();
    let p = x_train.n_cols();
    let standardised: Vec<f64> = (0..n)
        .flat_map(|i| {
            let row = x_train.row(i).to_vec();
            let (m, s) = (&ours.means, &ours.scales);
            (0..p).map(move |j| (f64::from(row[j]) - m[j]) / s[j])
        })
        .collect();
    let xs = DenseMatrix::new(n, p, standardised, false).unwrap();
    let ys: Vec<u32> = y_train.iter().map(|&v| v as u32).collect();
    let reference = LogisticRegression::fit(
        &xs,
        &ys,
        LogisticRegressionParameters::default().with_alpha(n as f64 * l2),
    )
    .unwrap();
    use smartcore::linalg::basic::arrays::Array;
    let ref_coef: Vec<f64> = (0..p)
        .map(|j| *reference.coefficients().get((0, j)))
        .collect();
    let ref_intercept = *reference.intercept().get((0, 0));
    let scale = ref_coef.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    for (j, (ours_j, ref_j)) in ours.coefficients.iter().zip(&ref_coef).enumerate() {
        assert!(
            (ours_j - ref_j).abs() <= 1e-3 * scale,
            "coef {j}: ours {ours_j} smartcore {ref_j}"
        );
    }
    assert!((ours.intercept - ref_intercept).abs() <= 1e-3 * scale.max(1.0));
    // Held-out accuracy: well above 0.9 is what linear models reach on this set (common
    // practice; the literature reports about 0.95-0.97).
    let proba = ours.predict_proba(&x_test);
    let correct = proba
        .iter()
        .zip(&y_test)
        .filter(|(p, y)| (**p > 0.5) == (**y > 0.5))
        .count();
    let accuracy = correct as f64 / y_test.len() as f64;
    eprintln!("breast cancer logistic held-out accuracy {accuracy:.4}");
    assert!(accuracy > 0.9, "{accuracy}");
    assert!(proba.iter().all(|p| (0.0..=1.0).contains(p)));
}

#[test]
fn fit_is_bit_identical_at_one_and_two_threads() {
    let (x, y) = breast_cancer();
    // Repeat the rows so several row chunks exist.
    let rows: Vec<usize> = (0..4).flat_map(|_| 0..x.n_rows()).collect();
    let big = x.select_rows(&rows);
    let big_y: Vec<f32> = rows.iter().map(|&i| y[i]).collect();
    let fit_with = |threads: usize| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .unwrap()
            .install(|| {
                let m = LogisticParams::default()
                    .fit(&big, &big_y, None, &NoProgress, &Cancel::new())
                    .unwrap();
                serde_json::to_string(&m).unwrap()
            })
    };
    assert_eq!(fit_with(1), fit_with(2));
}

#[test]
fn predict_on_wrong_width_gives_nan_not_panic() {
    let (x, y) = challenger();
    let model = unpenalised()
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    let wide = Matrix::zeros(2, 3);
    assert!(model.predict_margin(&wide).iter().all(|v| v.is_nan()));
    assert!(matches!(
        model.standard_errors(&wide, &[0.0, 1.0], None),
        Err(FitError::ColumnMismatch { .. })
    ));
}

#[test]
fn a_warm_start_reaches_the_cold_start_minimum() {
    // The penalised objective is strictly convex, so the minimum does not depend on where the
    // search starts (convex optimisation, textbook fact): starting from the fit with a
    // neighbouring penalty must land on the cold-start coefficients, in no more iterations.
    let (x, y) = breast_cancer();
    let params = |l2: f64| LogisticParams {
        l2,
        ..LogisticParams::default()
    };
    let strong = params(0.1)
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    let cold = params(0.01)
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    let warm = params(0.01)
        .fit_from(&x, &y, None, Some(&strong), &NoProgress, &Cancel::new())
        .unwrap();
    assert!(cold.converged && warm.converged);
    for (a, b) in cold.coefficients.iter().zip(&warm.coefficients) {
        assert!((a - b).abs() < 1e-4, "{a} vs {b}");
    }
    assert!((cold.intercept - warm.intercept).abs() < 1e-4);
    assert!(
        warm.iterations <= cold.iterations,
        "warm {} cold {}",
        warm.iterations,
        cold.iterations
    );
    // A start with another column count is ignored: same as cold.
    let (cx, cy) = challenger();
    let other = params(0.1)
        .fit(&cx, &cy, None, &NoProgress, &Cancel::new())
        .unwrap();
    let ignored = params(0.01)
        .fit_from(&x, &y, None, Some(&other), &NoProgress, &Cancel::new())
        .unwrap();
    assert_eq!(ignored, cold);
}

#[test]
fn a_start_fitted_on_some_of_the_rows_is_carried_to_the_new_scale() {
    // A fit on the first 400 rows has other column means and scales. Carried over, it must
    // give the same margins on every row (the same linear predictor, recomputed here on the
    // raw scale), and the full fit started from it must land on the cold-start minimum
    // (strict convexity, as above).
    let (x, y) = breast_cancer();
    let first: Vec<usize> = (0..400).collect();
    let part = x.select_rows(&first);
    let params = LogisticParams {
        l2: 0.01,
        ..LogisticParams::default()
    };
    let sub = params
        .fit(&part, &y[..400], None, &NoProgress, &Cancel::new())
        .unwrap();
    let scaling = scaling::column_scaling(&x, true);
    assert_ne!(scaling.means, sub.means);
    let theta = start_on_scale(&sub, &scaling.means, &scaling.scales, &scaling.free);
    let raw = sub.raw_coefficients();
    let raw_c = sub.raw_intercept();
    for i in 0..x.n_rows() {
        let row = x.row(i);
        let expected: f64 = raw_c
            + row
                .iter()
                .zip(&raw)
                .map(|(&v, &u)| f64::from(v) * u)
                .sum::<f64>();
        let carried: f64 = theta[row.len()]
            + row
                .iter()
                .enumerate()
                .map(|(j, &v)| (f64::from(v) - scaling.means[j]) / scaling.scales[j] * theta[j])
                .sum::<f64>();
        assert!(
            (expected - carried).abs() < 1e-9 * (1.0 + expected.abs()),
            "row {i}"
        );
    }
    let cold = params
        .fit(&x, &y, None, &NoProgress, &Cancel::new())
        .unwrap();
    let warm = params
        .fit_from(&x, &y, None, Some(&sub), &NoProgress, &Cancel::new())
        .unwrap();
    assert!(cold.converged && warm.converged);
    for (a, b) in cold.coefficients.iter().zip(&warm.coefficients) {
        assert!((a - b).abs() < 1e-4, "{a} vs {b}");
    }
    assert!((cold.intercept - warm.intercept).abs() < 1e-4);
}
