//! Writing the demo files in the formats of DEVELOPERS.md "File formats": gauge TOML,
//! water-level CSV (gzip), driver CSVs, the ENSO forecast JSON, and the checksum manifest.

use std::fmt::Write as _;
use std::fs;
use std::io::{self, Write};
use std::path::Path;

use flate2::Compression;
use flate2::write::GzEncoder;

use crate::calendar::{MINUTES_PER_DAY, date_of};
use crate::drivers::{Rmm, WindFormat};
use crate::gauges::{GaugeSpec, MissingStyle, TimeStyle};
use crate::levels::{Presence, Record};
use crate::seed::fnv1a64;

/// `+HH:MM` / `-HH:MM` for an offset in minutes.
pub fn offset_text(minutes: i64) -> String {
    let sign = if minutes < 0 { '-' } else { '+' };
    let m = minutes.abs();
    format!("{sign}{:02}:{:02}", m / 60, m % 60)
}

/// A thousandths value as a decimal with three places, e.g. `-0.045`.
pub fn milli_text(milli: i64) -> String {
    let sign = if milli < 0 { "-" } else { "" };
    let m = milli.abs();
    format!("{sign}{}.{:03}", m / 1000, m % 1000)
}

/// The gzip-compressed levels CSV of a gauge (`time,level`).
pub fn levels_csv_gz(gauge: &GaugeSpec, record: &Record) -> io::Result<Vec<u8>> {
    let mut text = String::with_capacity(record.deterministic.len() * 32);
    text.push_str("time,level\n");
    let offset = match gauge.time_style {
        TimeStyle::Utc => 0,
        TimeStyle::LocalOffset => gauge.utc_offset_minutes,
    };
    let suffix = match gauge.time_style {
        TimeStyle::Utc => "Z".to_owned(),
        TimeStyle::LocalOffset => offset_text(gauge.utc_offset_minutes),
    };
    let missing = match gauge.missing {
        MissingStyle::Empty => "",
        MissingStyle::NaN => "NaN",
        MissingStyle::Sentinel => "-99999",
    };
    let mut current_day = i64::MIN;
    let mut date_text = String::new();
    for (i, presence) in record.presence.iter().enumerate() {
        if *presence == Presence::Omitted {
            continue;
        }
        let shown = record.minute(i) + offset;
        let day = shown.div_euclid(MINUTES_PER_DAY);
        if day != current_day {
            current_day = day;
            date_text = date_of(day).format("%Y-%m-%d").to_string();
        }
        let minute_of_day = shown.rem_euclid(MINUTES_PER_DAY);
        let value = match presence {
            Presence::Present => milli_text(record.written_milli[i]),
            _ => missing.to_owned(),
        };
        writeln!(
            text,
            "{date_text}T{:02}:{:02}:00{suffix},{value}",
            minute_of_day / 60,
            minute_of_day % 60
        )
        .expect("writing to a String cannot fail");
    }
    let mut encoder = GzEncoder::new(Vec::new(), Compression::default());
    encoder.write_all(text.as_bytes())?;
    encoder.finish()
}

/// The daily wind CSV of a gauge.
pub fn wind_csv(first_day: i64, format: WindFormat, written: &[[f64; 2]]) -> String {
    let mut text = String::with_capacity(written.len() * 28);
    text.push_str(match format {
        WindFormat::Components => "time,u,v\n",
        WindFormat::SpeedFrom => "time,speed,from_deg\n",
    });
    for (k, [a, b]) in written.iter().enumerate() {
        let date = date_of(first_day + k as i64).format("%Y-%m-%d");
        match format {
            WindFormat::Components => writeln!(text, "{date},{a:.2},{b:.2}"),
            WindFormat::SpeedFrom => writeln!(text, "{date},{a:.2},{b:.1}"),
        }
        .expect("writing to a String cannot fail");
    }
    text
}

/// The monthly ENSO CSV for the first `months` months from January 1979.
pub fn enso_csv(enso: &[f64], months: usize) -> String {
    let mut text = String::from("month,anomaly\n");
    for (k, value) in enso.iter().take(months).enumerate() {
        let year = 1979 + k / 12;
        let month = k % 12 + 1;
        writeln!(text, "{year}-{month:02},{value:.2}").expect("writing to a String cannot fail");
    }
    text
}

/// The daily RMM CSV.
pub fn rmm_csv(first_day: i64, rmm: &[Rmm]) -> String {
    let mut text = String::with_capacity(rmm.len() * 30);
    text.push_str("date,rmm1,rmm2\n");
    for (k, r) in rmm.iter().enumerate() {
        let date = date_of(first_day + k as i64).format("%Y-%m-%d");
        writeln!(text, "{date},{:.4},{:.4}", r.rmm1, r.rmm2)
            .expect("writing to a String cannot fail");
    }
    text
}

/// A gauge's TOML description (DEVELOPERS.md "Gauge TOML").
pub fn gauge_toml(gauge: &GaugeSpec) -> String {
    let quoted = |items: &[&str]| {
        items
            .iter()
            .map(|s| format!("\"{s}\""))
            .collect::<Vec<_>>()
            .join(", ")
    };
    let numbers = |items: &[u32]| {
        items
            .iter()
            .map(u32::to_string)
            .collect::<Vec<_>>()
            .join(", ")
    };
    let phases: Vec<u32> = gauge.mjo.phases.iter().map(|&p| u32::from(p)).collect();
    let sentinel = match gauge.missing {
        MissingStyle::Sentinel => "missing_sentinel = -99999.0\n",
        _ => "",
    };
    let mjo_line = if phases.is_empty() {
        String::new()
    } else {
        format!("mjo_phases = [{}]\n", numbers(&phases))
    };
    format!(
        "# Invented demo gauge: every number in this file is made up (see ../README.md).\n\
         # {character}.\n\
         id = \"{id}\"\n\
         name = \"{name}\"\n\
         latitude = {lat:.2}\n\
         longitude = {lon:.2}\n\
         datum = \"VBZ\"\n\
         flood_threshold_m = {thr:.2}\n\
         utc_offset = \"{offset}\"\n\
         coast_orientation_deg = {orient:.1}\n\
         \n\
         [levels]\n\
         file = \"{id}-levels.csv.gz\"\n\
         units = \"{units}\"\n\
         {sentinel}\
         min_day_completeness = 0.75\n\
         \n\
         [seasons]\n\
         min_completeness = 0.8\n\
         \n\
         [drivers]\n\
         enso = \"../drivers/enso-monthly.csv\"\n\
         rmm = \"../drivers/rmm-daily.csv\"\n\
         wind = \"{id}-wind.csv\"\n\
         enso_forecast = \"../drivers/enso-forecast-2026-DJF.json\"\n\
         \n\
         [model]\n\
         family = \"auto\"\n\
         predictors = [{predictors}]\n\
         enso_timing = \"concurrent\"\n\
         {mjo_line}\
         wind_statistic = \"{wind_statistic}\"\n\
         exceed_days = [{exceed}]\n",
        character = gauge.character,
        id = gauge.id,
        name = gauge.name,
        lat = gauge.latitude,
        lon = gauge.longitude,
        thr = gauge.flood_threshold_m,
        offset = offset_text(gauge.utc_offset_minutes),
        orient = gauge.coast_orientation_deg,
        units = gauge.units.toml_name(),
        predictors = quoted(gauge.predictors),
        wind_statistic = gauge.wind_statistic,
        exceed = numbers(gauge.exceed_days),
    )
}

/// Write `bytes` to `out/relative`, creating folders.
pub fn write_file(out: &Path, relative: &str, bytes: &[u8]) -> io::Result<()> {
    let path = out.join(relative);
    if let Some(parent) = path.parent() {
        fs::create_dir_all(parent)?;
    }
    fs::write(path, bytes)
}

/// The manifest text: one `<fnv1a64 hex>  <path>` line per file, sorted by path.
pub fn manifest(files: &[(String, u64)]) -> String {
    let mut sorted: Vec<&(String, u64)> = files.iter().collect();
    sorted.sort_by(|a, b| a.0.cmp(&b.0));
    let mut text = String::from(
        "# FNV-1a 64-bit checksums (not cryptographic) of the generated demo files.\n",
    );
    for (path, hash) in sorted {
        writeln!(text, "{hash:016x}  {path}").expect("writing to a String cannot fail");
    }
    text
}

/// Checksum of a file's bytes for the manifest.
pub fn checksum(bytes: &[u8]) -> u64 {
    fnv1a64(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_written_exactly() {
        assert_eq!(milli_text(-45), "-0.045");
        assert_eq!(milli_text(4460), "4.460");
        assert_eq!(milli_text(0), "0.000");
        assert_eq!(offset_text(-180), "-03:00");
        assert_eq!(offset_text(330), "+05:30");
    }
}
