//! `tidetally glm`: fit a Poisson or negative-binomial GLM to any CSV table and print the
//! coefficient table and fit summaries as JSON (schema fixed in DESIGN.md).

use std::path::Path;
use std::str::FromStr;

use anyhow::Context;
use serde::Serialize;
use tidetally_model::glm::{
    self, ColumnSpec, Family, FamilyChoice, FamilyRequest, FittedGlm, OffsetColumn,
};

use super::GlmArgs;

/// The JSON printed by `tidetally glm`.
#[derive(Debug, Serialize)]
pub(crate) struct GlmReport {
    family: Family,
    coefficients: Vec<CoefficientRow>,
    #[serde(skip_serializing_if = "Option::is_none")]
    theta: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    theta_std_error: Option<f64>,
    deviance: f64,
    null_deviance: f64,
    df_residual: usize,
    log_likelihood: f64,
    aic: f64,
    bic: f64,
    pearson_chi2: f64,
    dispersion: f64,
    iterations: usize,
    converged: bool,
    rows: usize,
    #[serde(skip_serializing_if = "Option::is_none")]
    family_choice: Option<FamilyChoiceReport>,
    notes: Vec<String>,
}

#[derive(Debug, Serialize)]
struct CoefficientRow {
    name: String,
    estimate: f64,
    std_error: f64,
    z: f64,
    p_value: f64,
    ci_low: f64,
    ci_high: f64,
}

#[derive(Debug, Serialize)]
struct FamilyChoiceReport {
    chosen: Family,
    lr_statistic: f64,
    p_value: f64,
    aic_poisson: f64,
    aic_negbin: Option<f64>,
    reason: String,
}

impl From<FamilyChoice> for FamilyChoiceReport {
    fn from(c: FamilyChoice) -> Self {
        FamilyChoiceReport {
            chosen: c.chosen,
            lr_statistic: c.lr_statistic,
            p_value: c.p_value,
            aic_poisson: c.aic_poisson,
            aic_negbin: c.aic_negbin,
            reason: c.reason,
        }
    }
}

impl From<FittedGlm> for GlmReport {
    fn from(f: FittedGlm) -> Self {
        GlmReport {
            family: f.family,
            coefficients: f
                .coefficients
                .into_iter()
                .map(|c| CoefficientRow {
                    name: c.name,
                    estimate: c.estimate,
                    std_error: c.std_error,
                    z: c.z,
                    p_value: c.p_value,
                    ci_low: c.ci_low,
                    ci_high: c.ci_high,
                })
                .collect(),
            theta: f.theta.map(|t| t.estimate),
            theta_std_error: f.theta.map(|t| t.std_error),
            deviance: f.deviance,
            null_deviance: f.null_deviance,
            df_residual: f.df_residual,
            log_likelihood: f.log_likelihood,
            aic: f.aic,
            bic: f.bic,
            pearson_chi2: f.pearson_chi2,
            dispersion: f.dispersion,
            iterations: f.iterations,
            // A fit that does not converge is an error, never a report.
            converged: true,
            rows: f.rows,
            family_choice: f.family_choice.map(Into::into),
            notes: f.notes,
        }
    }
}

pub(super) fn run(args: GlmArgs) -> anyhow::Result<()> {
    super::print_json(&report(&args)?)
}

/// Reads the table, fits the model and builds the JSON report.
pub(crate) fn report(args: &GlmArgs) -> anyhow::Result<GlmReport> {
    let request = FamilyRequest::from_str(&args.family)?;
    if args.predictors.iter().any(|p| p.is_empty()) {
        anyhow::bail!("--predictors has an empty column name");
    }
    let columns = ColumnSpec {
        response: args.response.clone(),
        predictors: args.predictors.clone(),
        offset: args.offset.clone().map(|name| {
            if args.log_offset {
                OffsetColumn::Log(name)
            } else {
                OffsetColumn::AsIs(name)
            }
        }),
    };
    let spec = read(&args.csv, &columns)?;
    let data = spec
        .check()
        .with_context(|| format!("{}: cannot fit", args.csv.display()))?;
    let fitted = glm::fit(&data, request).with_context(|| format!("{}", args.csv.display()))?;
    Ok(fitted.into())
}

fn read(path: &Path, columns: &ColumnSpec) -> anyhow::Result<glm::GlmSpec> {
    let file =
        std::fs::File::open(path).with_context(|| format!("cannot open {}", path.display()))?;
    Ok(glm::read_table(
        std::io::BufReader::new(file),
        &path.display().to_string(),
        columns,
    )?)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn args(path: &Path, family: &str, offset: Option<&str>, log_offset: bool) -> GlmArgs {
        GlmArgs {
            csv: path.to_path_buf(),
            response: "n".into(),
            predictors: vec!["x".into()],
            offset: offset.map(Into::into),
            log_offset,
            family: family.into(),
        }
    }

    fn write(name: &str, text: &str) -> std::path::PathBuf {
        let dir = std::env::temp_dir().join(format!("tidetally-cli-glm-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        let path = dir.join(name);
        std::fs::write(&path, text).expect("write table");
        path
    }

    /// Poisson regression through the origin-free closed form: with one binary predictor and a
    /// log-exposure offset the MLE is the log ratio of the group rates (common practice:
    /// the saturated two-group Poisson model reproduces each group's rate).
    #[test]
    fn report_has_the_stable_fields_and_the_closed_form_estimates() {
        let path = write(
            "two-groups.csv",
            "n,x,days\n3,0,90\n5,0,90\n12,1,80\n9,1,85\n",
        );
        let report = report(&args(&path, "poisson", Some("days"), true)).expect("fits");
        let json = serde_json::to_value(&report).expect("serialises");
        for key in [
            "family",
            "coefficients",
            "deviance",
            "null_deviance",
            "df_residual",
            "log_likelihood",
            "aic",
            "iterations",
        ] {
            assert!(json.get(key).is_some(), "missing {key}");
        }
        assert_eq!(json["family"], "poisson");
        assert_eq!(json["coefficients"][0]["name"], "intercept");
        let rate0 = 8.0_f64 / 180.0;
        let rate1 = 21.0_f64 / 165.0;
        let b0 = json["coefficients"][0]["estimate"]
            .as_f64()
            .expect("number");
        let b1 = json["coefficients"][1]["estimate"]
            .as_f64()
            .expect("number");
        assert!((b0 - rate0.ln()).abs() < 1e-9);
        assert!((b1 - (rate1 / rate0).ln()).abs() < 1e-9);
        // SE of a log rate ratio: sqrt(1/8 + 1/21) (common practice).
        let se1 = json["coefficients"][1]["std_error"]
            .as_f64()
            .expect("number");
        assert!((se1 - (1.0 / 8.0 + 1.0 / 21.0_f64).sqrt()).abs() < 1e-9);
        assert!(json.get("theta").is_none());
    }

    #[test]
    fn bad_input_gives_one_clear_error() {
        let path = write("bad.csv", "n,x\n3,0\n4,oops\n");
        let err = report(&args(&path, "poisson", None, false)).expect_err("bad cell");
        let text = format!("{err:#}");
        assert!(text.contains("bad.csv: line 3: column \"x\""), "{text}");
        let err = report(&args(&path, "gamma", None, false)).expect_err("bad family");
        assert!(format!("{err:#}").contains("gamma"));
        let path = write("zeros.csv", "n,x\n0,1\n0,2\n0,3\n");
        let err = report(&args(&path, "negbin", None, false)).expect_err("all zero");
        assert!(format!("{err:#}").contains("every response is zero"));
    }
}
