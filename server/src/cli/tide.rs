//! `tidetally tide analyze|predict` and `tidetally datums`.
//!
//! The water-level CSV (`time,level[,flag]`, plain or gzip by content) is read by a small
//! reader here until the shared ingest module offers one; levels stay in the file's units.

use std::fs::File;
use std::io::BufReader;
use std::path::Path;

use anyhow::{Context, bail};
use chrono::{DateTime, SecondsFormat, Utc};
use serde::{Deserialize, Serialize};
use tidetally_model::ingest::{self, IngestOptions};
use tidetally_model::tide::{
    AnalysisParams, ConstituentValue, Datums, DatumsParams, Epoch, TideModel,
    derived_minor_threshold,
};

use super::{DatumsArgs, TideAnalyzeArgs, TidePredictArgs, print_json};

/// One constituent on the wire (`tide analyze` output, `tide predict` input).
#[derive(Debug, Serialize, Deserialize)]
struct ConstituentJson {
    name: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    doodson_number: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    speed_deg_per_hour: Option<f64>,
    amplitude: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    amplitude_ci: Option<f64>,
    phase_deg: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    phase_ci_deg: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    snr: Option<f64>,
}

/// The record an analysis was made from.
#[derive(Debug, Serialize, Deserialize)]
struct RecordJson {
    first: String,
    last: String,
    samples: usize,
    step_seconds: i64,
}

/// `tide analyze` output.
#[derive(Debug, Serialize, Deserialize)]
struct AnalysisJson {
    constituents: Vec<ConstituentJson>,
    mean: f64,
    #[serde(default)]
    trend_per_year: Option<f64>,
    reference_time: String,
    #[serde(default)]
    latitude: Option<f64>,
    #[serde(default)]
    record: Option<RecordJson>,
    #[serde(default)]
    residual_rms: Option<f64>,
    #[serde(default)]
    variance_explained: Option<f64>,
    #[serde(default)]
    conventions: Option<String>,
    #[serde(default)]
    ci_method: Option<String>,
}

fn iso(t: i64) -> String {
    DateTime::<Utc>::from_timestamp(t, 0)
        .map(|d| d.to_rfc3339_opts(SecondsFormat::Secs, true))
        .unwrap_or_else(|| t.to_string())
}

fn parse_time(text: &str) -> anyhow::Result<i64> {
    let parsed = DateTime::parse_from_rfc3339(text.trim())
        .with_context(|| format!("{text:?} is not an ISO 8601 time with Z or an offset"))?;
    Ok(parsed.timestamp())
}

pub(super) fn analyze(args: TideAnalyzeArgs) -> anyhow::Result<()> {
    print_json(&analysis_output(&args)?)
}

fn analysis_output(args: &TideAnalyzeArgs) -> anyhow::Result<AnalysisJson> {
    if let Some(lat) = args.latitude.filter(|l| !(-90.0..=90.0).contains(l)) {
        bail!("--latitude {lat} is outside -90..90 degrees");
    }
    let (times, levels) = read_levels(&args.csv)?;
    let params = AnalysisParams {
        trend: args.trend,
        ..AnalysisParams::default()
    };
    let model = params
        .check()?
        .fit(&times, &levels)
        .with_context(|| format!("{}: harmonic analysis failed", args.csv.display()))?;
    let fit = model.fit.as_ref();
    let out = AnalysisJson {
        constituents: model
            .constituents
            .iter()
            .map(|c| ConstituentJson {
                name: c.constituent.name.to_owned(),
                doodson_number: Some(c.constituent.doodson_number()),
                speed_deg_per_hour: Some(c.constituent.speed_deg_per_hour()),
                amplitude: c.amplitude,
                amplitude_ci: c.amplitude_ci95.is_finite().then_some(c.amplitude_ci95),
                phase_deg: c.phase_deg,
                phase_ci_deg: c.phase_ci95_deg.is_finite().then_some(c.phase_ci95_deg),
                snr: (c.amplitude_ci95 > 0.0)
                    .then(|| (c.amplitude / (c.amplitude_ci95 / 1.96)).powi(2)),
            })
            .collect(),
        mean: model.mean,
        trend_per_year: model.trend_per_year,
        reference_time: iso(model.reference_time),
        latitude: args.latitude,
        record: fit.map(|f| RecordJson {
            first: iso(f.first_time),
            last: iso(f.last_time),
            samples: f.samples,
            step_seconds: f.step_seconds,
        }),
        residual_rms: fit.map(|f| f.residual_rms),
        variance_explained: fit.map(|f| f.variance_explained),
        conventions: Some(
            "amplitude in the units of the input with the nodal factor removed; phase_deg is \
             the Greenwich phase lag (UTC) in degrees; nodal corrections f, u from Schureman \
             (1958) closed forms, astronomical arguments from the Schureman/Foreman series; \
             amplitude_ci and phase_ci_deg are 95% half-widths; constituents chosen by the \
             Rayleigh criterion (factor 1) from a 67-constituent standard set; latitude is \
             recorded only (Schureman's nodal corrections do not depend on it)"
                .to_owned(),
        ),
        ci_method: fit.map(|f| f.ci_method.clone()),
    };
    Ok(out)
}

fn load_model(path: &Path) -> anyhow::Result<TideModel> {
    let text =
        std::fs::read_to_string(path).with_context(|| format!("cannot read {}", path.display()))?;
    let json: AnalysisJson = serde_json::from_str(&text)
        .with_context(|| format!("{}: not a `tide analyze` constituents file", path.display()))?;
    let reference = parse_time(&json.reference_time)
        .with_context(|| format!("{}: field reference_time", path.display()))?;
    let values: Vec<ConstituentValue<'_>> = json
        .constituents
        .iter()
        .map(|c| ConstituentValue {
            name: &c.name,
            amplitude: c.amplitude,
            phase_deg: c.phase_deg,
        })
        .collect();
    TideModel::from_values(json.mean, json.trend_per_year, reference, &values)
        .with_context(|| format!("{}: field constituents", path.display()))
}

/// `tide predict` output.
#[derive(Debug, Serialize)]
struct PredictionJson {
    start: String,
    end: String,
    step_minutes: u32,
    predictions: Vec<PredictedLevel>,
}

#[derive(Debug, Serialize)]
struct PredictedLevel {
    time: String,
    level: f64,
}

/// Most predictions one command prints (ten years at one minute).
const MAX_PREDICTIONS: i64 = 5_300_000;

pub(super) fn predict(args: TidePredictArgs) -> anyhow::Result<()> {
    let model = load_model(&args.constituents)?;
    let start = parse_time(&args.start).context("--start")?;
    let end = parse_time(&args.end).context("--end")?;
    if end < start {
        bail!("--end {} is before --start {}", args.end, args.start);
    }
    if args.step_minutes == 0 {
        bail!("--step-minutes must be at least 1");
    }
    let step = i64::from(args.step_minutes) * 60;
    let count = (end - start) / step + 1;
    if count > MAX_PREDICTIONS {
        bail!("{count} predictions requested; at most {MAX_PREDICTIONS} per run");
    }
    let levels = model.predict_regular(start, step, count as usize);
    let out = PredictionJson {
        start: iso(start),
        end: iso(end),
        step_minutes: args.step_minutes,
        predictions: levels
            .into_iter()
            .enumerate()
            .map(|(k, level)| PredictedLevel {
                time: iso(start + k as i64 * step),
                level,
            })
            .collect(),
    };
    print_json(&out)
}

/// `datums` output (and the control's datums file for `--control-datums`).
#[derive(Debug, Serialize, Deserialize)]
struct DatumsJson {
    mhhw: f64,
    mhw: f64,
    dtl: f64,
    mtl: f64,
    msl: f64,
    mlw: f64,
    mllw: f64,
    gt: f64,
    mn: f64,
    #[serde(default)]
    tidal_days: usize,
    #[serde(default)]
    highs: usize,
    #[serde(default)]
    lows: usize,
    #[serde(default)]
    epoch: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    derived_minor_threshold: Option<serde_json::Value>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    method: Option<String>,
}

impl DatumsJson {
    fn from_model(d: &Datums) -> Self {
        Self {
            mhhw: d.mhhw,
            mhw: d.mhw,
            dtl: d.dtl,
            mtl: d.mtl,
            msl: d.msl,
            mlw: d.mlw,
            mllw: d.mllw,
            gt: d.gt,
            mn: d.mn,
            tidal_days: d.tidal_days,
            highs: d.highs,
            lows: d.lows,
            epoch: d.epoch.describe(),
            derived_minor_threshold: None,
            method: None,
        }
    }

    fn to_model(&self) -> Datums {
        Datums {
            mhhw: self.mhhw,
            mhw: self.mhw,
            dtl: self.dtl,
            mtl: self.mtl,
            msl: self.msl,
            mlw: self.mlw,
            mllw: self.mllw,
            gt: self.gt,
            mn: self.mn,
            tidal_days: self.tidal_days,
            highs: self.highs,
            lows: self.lows,
            epoch: Epoch::Ntde1983To2001,
        }
    }
}

pub(super) fn datums(args: DatumsArgs) -> anyhow::Result<()> {
    let config = DatumsParams::default().check()?;
    let (times, levels) = read_levels(&args.csv)?;
    let mut datums = config
        .compute(&times, &levels)
        .with_context(|| format!("{}: datums", args.csv.display()))?;
    if let (Some(control), Some(control_datums)) = (&args.control, &args.control_datums) {
        let (ct, cl) = read_levels(control)?;
        // The control's datums over the short record's own period.
        let (first, last) = (
            times.first().copied().unwrap_or(0),
            times.last().copied().unwrap_or(0),
        );
        let lo = ct.partition_point(|&t| t < first);
        let hi = ct.partition_point(|&t| t <= last);
        let concurrent = config.compute(&ct[lo..hi], &cl[lo..hi]).with_context(|| {
            format!(
                "{}: control datums over the record's period",
                control.display()
            )
        })?;
        let text = std::fs::read_to_string(control_datums)
            .with_context(|| format!("cannot read {}", control_datums.display()))?;
        let epoch: DatumsJson = serde_json::from_str(&text)
            .with_context(|| format!("{}: not a datums JSON file", control_datums.display()))?;
        datums = datums.adjust_modified_range_ratio(&concurrent, &epoch.to_model())?;
    }
    let mut out = DatumsJson::from_model(&datums);
    out.method = Some(
        "high and low waters per tidal day (NOS CO-OPS 1, 2000; NOS CO-OPS 2, 2003); levels \
         in the units and datum of the input"
            .to_owned(),
    );
    let threshold = derived_minor_threshold(&datums)?;
    out.derived_minor_threshold = Some(serde_json::json!({
        "level_m": threshold.level_m,
        "above_mhhw_m": threshold.above_mhhw_m,
        "derived": threshold.derived,
        "method": threshold.method,
        "assumes": "levels in metres",
        "cautions": threshold.cautions,
    }));
    print_json(&out)
}

/// Reads a water-level CSV (`time,level[,flag]`, plain or gzip by content) with the model's
/// ingest parser: times as unix seconds sorted ascending, levels in the file's own units
/// (no conversion, so amplitudes come out in the units of the input) with empty or `NaN` as
/// missing. Errors name the file, line and field; duplicate times name both lines.
fn read_levels(path: &Path) -> anyhow::Result<(Vec<i64>, Vec<f64>)> {
    let file = File::open(path).with_context(|| format!("cannot open {}", path.display()))?;
    let series = ingest::read_levels(
        BufReader::new(file),
        &IngestOptions::default(),
        &path.display().to_string(),
    )?;
    if series.times.is_empty() {
        bail!("{}: no readings", path.display());
    }
    Ok((series.times, series.levels_m))
}

#[cfg(test)]
mod tests {
    use std::io::Write;
    use std::path::PathBuf;

    use super::*;

    /// A file in the system temp folder, unique to this test process and name.
    fn temp_file(name: &str, bytes: &[u8]) -> PathBuf {
        let path =
            std::env::temp_dir().join(format!("tidetally-tide-{}-{name}", std::process::id()));
        std::fs::write(&path, bytes).expect("temp folder writable");
        path
    }

    fn synthetic_csv(days: i64) -> String {
        let mut text = String::from("time,level,flag\n");
        for k in 0..days * 24 {
            let h = k as f64;
            let level = 1.0
                + 0.8 * (28.984_104_2 * h - 40.0).to_radians().cos()
                + 0.3 * (15.041_068_6 * h - 100.0).to_radians().cos();
            let t = DateTime::<Utc>::from_timestamp(1_262_304_000 + k * 3600, 0).expect("in range");
            let level = if k % 50 == 7 {
                String::new()
            } else {
                format!("{level:.4}")
            };
            text.push_str(&format!(
                "{},{level},\n",
                t.to_rfc3339_opts(SecondsFormat::Secs, true)
            ));
        }
        text
    }

    #[test]
    fn reads_plain_and_gzip_alike_and_sorts() {
        let text = "time,level\n2010-01-01T01:00:00Z,2.0\n2010-01-01T00:00:00-05:00,NaN\n2010-01-01T00:00:00Z,1.5\n";
        let plain = temp_file("plain.csv", text.as_bytes());
        let mut gz = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::fast());
        gz.write_all(text.as_bytes()).expect("in memory");
        let zipped = temp_file("zipped.csv", &gz.finish().expect("in memory"));
        let a = read_levels(&plain).expect("reads");
        let b = read_levels(&zipped).expect("reads");
        // The missing reading (NaN at 05:00 UTC) is left out; the rest come sorted.
        assert_eq!(a.0, vec![1_262_304_000, 1_262_307_600]);
        assert_eq!(a, b);
        assert_eq!(a.1, vec![1.5, 2.0]);
    }

    #[test]
    fn bad_files_name_file_line_and_field() {
        let no_header = temp_file("nohdr.csv", b"when,height\n2010-01-01T00:00:00Z,1\n");
        let err = format!("{:#}", read_levels(&no_header).expect_err("bad header"));
        assert!(err.contains("line 1") && err.contains("time"), "{err}");
        let bad_time = temp_file(
            "badtime.csv",
            b"time,level\n2010-01-01T00:00:00Z,1\n2010-13-01,2\n",
        );
        let err = format!("{:#}", read_levels(&bad_time).expect_err("bad time"));
        assert!(
            err.contains("line 3") && err.contains("field `time`"),
            "{err}"
        );
        let dup = temp_file(
            "dup.csv",
            b"time,level\n2010-01-01T00:00:00Z,1\n2010-01-01T01:00:00Z,1\n2010-01-01T00:00:00Z,2\n",
        );
        let err = format!("{:#}", read_levels(&dup).expect_err("duplicate"));
        assert!(err.contains("lines 2 and 4"), "{err}");
    }

    #[test]
    fn analysis_file_round_trips_into_the_same_prediction() {
        let csv = temp_file("record.csv", synthetic_csv(60).as_bytes());
        let args = TideAnalyzeArgs {
            csv: csv.clone(),
            latitude: Some(44.0),
            trend: false,
        };
        let out = analysis_output(&args).expect("analyses");
        let m2 = out
            .constituents
            .iter()
            .find(|c| c.name == "M2")
            .expect("M2 fitted");
        assert!(m2.amplitude_ci.is_some() && m2.phase_ci_deg.is_some());
        let file = temp_file(
            "constituents.json",
            serde_json::to_string(&out).expect("serialises").as_bytes(),
        );
        let loaded = load_model(&file).expect("loads");
        let (times, levels) = read_levels(&csv).expect("reads");
        let predicted = loaded.predict_at(&times);
        // The record is exactly two constituents and a mean: prediction matches within 1 cm
        // (nodal factors and the 60-day record leave a little leakage).
        for ((t, obs), pred) in times.iter().zip(&levels).zip(&predicted) {
            if obs.is_finite() {
                assert!((obs - pred).abs() < 0.01, "at {t}: {obs} vs {pred}");
            }
        }
        let bad = TideAnalyzeArgs {
            csv,
            latitude: Some(95.0),
            trend: false,
        };
        assert!(analysis_output(&bad).is_err());
    }
}
