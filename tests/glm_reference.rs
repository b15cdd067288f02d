//! Count models checked against outside numbers: a textbook table of Poisson regression with a
//! person-years offset, and R's `stats::glm` / `MASS::glm.nb` fits of several published
//! tables (fixtures made by `tests/reference/glm_reference.R`; versions inside each fixture).
//!
//! Tolerances (from the issue): coefficients and standard errors 1e-6 relative, theta and its
//! standard error 1e-4 relative. The fixtures were made with convergence tightened to 1e-12, so
//! both programs sit at the same maximum; what remains is floating-point noise.
//! We match `MASS::glm.nb`'s standard errors: the expected information with theta held fixed.
//! (statsmodels' `NegativeBinomial` estimates theta jointly and reports a joint observed
//! information; its standard errors differ slightly and are not the reference here.)

use linfa::prelude::*;
use linfa_linear::LinearRegression;
use ndarray::{Array1, Array2};
use serde_json::Value;
use tidetally_model::glm::{
    ColumnSpec, Family, FamilyRequest, FittedGlm, OffsetColumn, fit, read_table,
};

const COEFFICIENT_RTOL: f64 = 1e-6;
const THETA_RTOL: f64 = 1e-4;

fn fixture_dir() -> std::path::PathBuf {
    std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/glm")
}

/// Reads fixture `name` (.csv + .json) and fits it with the requested family.
fn fit_fixture(name: &str, request: FamilyRequest) -> (FittedGlm, Value) {
    let dir = fixture_dir();
    let reference: Value = serde_json::from_str(
        &std::fs::read_to_string(dir.join(format!("{name}.json"))).expect("fixture json"),
    )
    .expect("valid json");
    let columns = ColumnSpec {
        response: "y".into(),
        predictors: reference["predictors"]
            .as_array()
            .expect("predictors")
            .iter()
            .map(|p| p.as_str().expect("name").to_string())
            .collect(),
        offset: reference["log_offset"]
            .as_str()
            .map(|c| OffsetColumn::Log(c.to_string())),
    };
    let path = dir.join(format!("{name}.csv"));
    let file = std::fs::File::open(&path).expect("fixture csv");
    let spec = read_table(file, &path.display().to_string(), &columns).expect("readable table");
    let data = spec.check().expect("valid model data");
    (fit(&data, request).expect("fit converges"), reference)
}

fn assert_rel(what: &str, ours: f64, theirs: f64, rtol: f64) {
    let rel = (ours - theirs).abs() / theirs.abs().max(1e-300);
    assert!(
        rel <= rtol,
        "{what}: ours {ours:.12e}, reference {theirs:.12e}, relative difference {rel:.2e} > {rtol:.0e}"
    );
}

fn numbers(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

/// The one check helper: every reported quantity of our fit against R's.
fn check_against_r(name: &str, ours: &FittedGlm, r: &Value) {
    let names: Vec<&str> = r["names"]
        .as_array()
        .expect("names")
        .iter()
        .map(|n| n.as_str().expect("str"))
        .collect();
    let estimate = numbers(&r["estimate"]);
    let std_error = numbers(&r["std_error"]);
    assert_eq!(
        ours.coefficients.len(),
        names.len(),
        "{name}: coefficient count"
    );
    for (j, c) in ours.coefficients.iter().enumerate() {
        assert_eq!(c.name, names[j]);
        assert_rel(
            &format!("{name} {} estimate", c.name),
            c.estimate,
            estimate[j],
            COEFFICIENT_RTOL,
        );
        assert_rel(
            &format!("{name} {} std_error", c.name),
            c.std_error,
            std_error[j],
            COEFFICIENT_RTOL,
        );
    }
    for (what, ours, theirs) in [
        ("deviance", ours.deviance, &r["deviance"]),
        ("null_deviance", ours.null_deviance, &r["null_deviance"]),
        ("log_likelihood", ours.log_likelihood, &r["log_likelihood"]),
        ("aic", ours.aic, &r["aic"]),
        ("bic", ours.bic, &r["bic"]),
        ("pearson_chi2", ours.pearson_chi2, &r["pearson_chi2"]),
    ] {
        assert_rel(
            &format!("{name} {what}"),
            ours,
            theirs.as_f64().expect("number"),
            COEFFICIENT_RTOL,
        );
    }
    assert_eq!(
        ours.df_residual as f64,
        r["df_residual"].as_f64().expect("df")
    );
    if let Some(theta) = r["theta"].as_f64() {
        let t = ours.theta.expect("negbin fit has theta");
        assert_rel(&format!("{name} theta"), t.estimate, theta, THETA_RTOL);
        let se = r["theta_std_error"].as_f64().expect("theta se");
        assert_rel(
            &format!("{name} theta_std_error"),
            t.std_error,
            se,
            THETA_RTOL,
        );
    }
}

/// Dobson & Barnett, *An Introduction to Generalized Linear Models*, 3rd ed. 2008, Tables 9.1
/// and 9.2: coronary deaths of British male doctors, Poisson regression with a log
/// person-years offset, `agecat + agesq + smoke + smkage`. The published estimates and
/// standard errors (4 decimals) are recalled from memory; they agree with R's fit in the
/// fixture to the printed precision. Tolerance: half a unit in the fourth decimal.
#[test]
fn dobson_barnett_british_doctors_table_9_2() {
    let (ours, r) = fit_fixture("doctors", FamilyRequest::Poisson);
    let published = [
        ("intercept", -10.7918, 0.4501),
        ("agecat", 2.3765, 0.2079),
        ("agesq", -0.1977, 0.0274),
        ("smoke", 1.4410, 0.3722),
        ("smkage", -0.3075, 0.0970),
    ];
    for (c, (name, estimate, se)) in ours.coefficients.iter().zip(published) {
        assert_eq!(c.name, name);
        assert!(
            (c.estimate - estimate).abs() <= 5e-5 + 1e-12,
            "{name}: {}",
            c.estimate
        );
        assert!(
            (c.std_error - se).abs() <= 5e-5 + 1e-12,
            "{name} se: {}",
            c.std_error
        );
    }
    assert_eq!(ours.df_residual, 5);
    check_against_r("doctors", &ours, &r["poisson"]);
}

/// Venables & Ripley, *Modern Applied Statistics with S*, 4th ed. 2002, section 7.4: the quine
/// absence data, `glm.nb(Days ~ Sex/(Age + Eth*Lrn))`. The book prints theta = 1.6 (to the
/// precision recalled from memory); the full comparison is against MASS 7.3 in the fixture.
#[test]
fn venables_ripley_quine_negative_binomial() {
    let (ours, r) = fit_fixture("quine", FamilyRequest::Negbin);
    assert_eq!(ours.family, Family::Negbin);
    let theta = ours.theta.expect("theta").estimate;
    assert!((theta - 1.6).abs() < 0.05, "theta {theta}");
    check_against_r("quine", &ours, &r["negbin"]);
}

/// Both families on every fixture table, against R.
#[test]
fn poisson_fits_match_r_on_every_table() {
    for name in [
        "doctors",
        "quine",
        "quine_additive",
        "insurance",
        "warpbreaks",
        "bench_45x6",
    ] {
        let (ours, r) = fit_fixture(name, FamilyRequest::Poisson);
        assert_eq!(ours.family, Family::Poisson);
        check_against_r(name, &ours, &r["poisson"]);
    }
}

#[test]
fn negbin_fits_match_mass_glm_nb() {
    for name in ["quine", "quine_additive", "warpbreaks", "bench_45x6"] {
        let (ours, r) = fit_fixture(name, FamilyRequest::Negbin);
        assert_eq!(ours.family, Family::Negbin, "{name}");
        check_against_r(name, &ours, &r["negbin"]);
    }
}

/// MASS::Insurance shows no overdispersion: glm.nb's theta runs off to ~1e12 (fixture). Ours
/// stops at the infinite-theta limit, says so, and reports the Poisson fit, which matches R's.
#[test]
fn insurance_theta_to_infinity_falls_back_to_poisson() {
    let (ours, r) = fit_fixture("insurance", FamilyRequest::Negbin);
    assert!(r["negbin"]["theta"].as_f64().expect("theta") > 1e6);
    assert_eq!(ours.family, Family::Poisson);
    assert!(
        ours.notes.iter().any(|n| n.contains("infinity")),
        "{:?}",
        ours.notes
    );
    check_against_r("insurance", &ours, &r["poisson"]);
    let (auto, _) = fit_fixture("insurance", FamilyRequest::Auto);
    let choice = auto.family_choice.expect("auto reports its choice");
    assert_eq!(choice.chosen, Family::Poisson);
}

/// The boundary-corrected likelihood-ratio test on quine: the statistic is twice the
/// log-likelihood gain of R's NB fit over R's Poisson fit.
#[test]
fn auto_prefers_negbin_on_overdispersed_quine() {
    let (ours, r) = fit_fixture("quine", FamilyRequest::Auto);
    let choice = ours.family_choice.clone().expect("auto reports its choice");
    assert_eq!(choice.chosen, Family::Negbin);
    let lr = 2.0
        * (r["negbin"]["log_likelihood"].as_f64().expect("ll")
            - r["poisson"]["log_likelihood"].as_f64().expect("ll"));
    assert_rel(
        "quine LR statistic",
        choice.lr_statistic,
        lr,
        COEFFICIENT_RTOL,
    );
    assert!(choice.p_value < 1e-10 && choice.reason.contains("negative binomial"));
    assert_rel(
        "quine aic_poisson",
        choice.aic_poisson,
        r["poisson"]["aic"].as_f64().expect("aic"),
        COEFFICIENT_RTOL,
    );
}

/// Independent cross-check with linfa-linear: at the converged Poisson fit, the IRLS working
/// response z = eta - offset + (y - mu)/mu regressed on the design with weights mu (ordinary
/// least squares on sqrt(mu)-scaled rows, no extra intercept) must return the coefficients
/// themselves — the fixed point of IRLS, i.e. the Poisson score equations X'(y - mu) = 0.
#[test]
fn poisson_fixed_point_reproduced_by_linfa_linear() {
    for name in ["doctors", "warpbreaks", "bench_45x6"] {
        let (ours, reference) = fit_fixture(name, FamilyRequest::Poisson);
        let text = std::fs::read_to_string(fixture_dir().join(format!("{name}.csv"))).expect("csv");
        let mut lines = text.lines();
        let header: Vec<&str> = lines.next().expect("header").split(',').collect();
        let rows: Vec<Vec<f64>> = lines
            .map(|l| l.split(',').map(|c| c.parse().expect("number")).collect())
            .collect();
        let col = |name: &str| header.iter().position(|h| *h == name).expect("column");
        let predictors: Vec<usize> = ours.coefficients[1..]
            .iter()
            .map(|c| col(&c.name))
            .collect();
        let offset_col = reference["log_offset"].as_str().map(col);
        let q = ours.coefficients.len();
        let mut x = Array2::<f64>::zeros((rows.len(), q));
        let mut z = Array1::<f64>::zeros(rows.len());
        for (i, row) in rows.iter().enumerate() {
            let mu = ours.fitted_means[i];
            let offset = offset_col.map_or(0.0, |c| row[c].ln());
            let w = mu.sqrt();
            x[(i, 0)] = w;
            for (j, &c) in predictors.iter().enumerate() {
                x[(i, j + 1)] = w * row[c];
            }
            z[i] = w * (mu.ln() - offset + (row[col("y")] - mu) / mu);
        }
        let ols = LinearRegression::new()
            .with_intercept(false)
            .fit(&Dataset::new(x, z))
            .expect("least squares");
        for (c, b) in ours.coefficients.iter().zip(ols.params()) {
            let scale = c.std_error;
            assert!(
                (c.estimate - b).abs() <= 1e-6 * scale,
                "{name} {}: IRLS {} vs linfa WLS {b}",
                c.name,
                c.estimate
            );
        }
    }
}
