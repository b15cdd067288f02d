//! Ingestion benchmark: level file -> daily maxima -> season table, on 40-year records
//! generated once into a temporary folder (hourly, about 350 000 rows; 6-minute, about
//! 3.5 million rows), plain and gzip.
//!
//! Targets: hourly under 20 ms median; 6-minute under 150 ms plain and under 500 ms gzip.
//!
//! Peak memory: run the bench binary with `--rss-probe FILE` under `/usr/bin/time -v` to
//! read one file through the same pipeline once and exit; compare the maximum resident set
//! size for the hourly and 6-minute files.

use std::fs::File;
use std::io::{BufReader, BufWriter, Write};
use std::path::{Path, PathBuf};

use chrono::DateTime;
use criterion::{Criterion, Throughput};
use tidetally_model::daily::DailyRecord;
use tidetally_model::ingest::{IngestOptions, summarize};
use tidetally_model::season::{SeasonSpec, SeasonTable, season_table};

const START: i64 = 473_385_600; // 1985-01-01T00:00:00Z
const YEARS: i64 = 40;

/// Writes a `time,level` file sampled every `step_s` seconds for 40 years.
fn write_record(path: &Path, step_s: i64, gzip: bool) {
    let file = BufWriter::with_capacity(1 << 20, File::create(path).expect("create bench file"));
    let mut out: Box<dyn Write> = if gzip {
        Box::new(flate2::write::GzEncoder::new(
            file,
            flate2::Compression::default(),
        ))
    } else {
        Box::new(file)
    };
    writeln!(out, "time,level").expect("write");
    let end = START + YEARS * 365 * 86_400 + 10 * 86_400;
    let mut t = START;
    let mut state = 0x2545_f491_4f6c_dd1du64;
    while t < end {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        let hours = (t - START) as f64 / 3600.0;
        let level = 0.6 * (std::f64::consts::TAU * hours / 12.42).sin()
            + 0.2 * (std::f64::consts::TAU * hours / 354.5).sin()
            + (state % 1000) as f64 / 5000.0;
        let time = DateTime::from_timestamp(t, 0).expect("bench times are in range");
        writeln!(out, "{},{level:.3}", time.format("%Y-%m-%dT%H:%M:%SZ")).expect("write");
        t += step_s;
    }
    out.flush().expect("flush bench file");
}

/// The pipeline under test: read, daily maxima, season table.
fn pipeline(path: &Path) -> SeasonTable {
    let options = IngestOptions {
        utc_offset: chrono::FixedOffset::west_opt(5 * 3600).expect("valid offset"),
        ..IngestOptions::default()
    };
    let reader = BufReader::with_capacity(256 * 1024, File::open(path).expect("open bench file"));
    let summary = summarize(reader, &options, "bench.csv").expect("bench file parses");
    let daily =
        DailyRecord::new(&summary.days, summary.sampling_interval_s, 0.75).expect("daily record");
    season_table(&daily, &SeasonSpec::meteorological(), 0.7, 0.8).expect("season table")
}

struct Files {
    dir: PathBuf,
}

impl Files {
    fn path(&self, name: &str) -> PathBuf {
        self.dir.join(name)
    }

    fn create() -> Self {
        let dir =
            std::env::temp_dir().join(format!("tidetally-bench-ingest-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("bench temp dir");
        let files = Files { dir };
        write_record(&files.path("hourly.csv"), 3600, false);
        write_record(&files.path("hourly.csv.gz"), 3600, true);
        write_record(&files.path("sixmin.csv"), 360, false);
        write_record(&files.path("sixmin.csv.gz"), 360, true);
        files
    }
}

impl Drop for Files {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

fn bench(c: &mut Criterion, files: &Files) {
    let mut group = c.benchmark_group("ingest_daily_season_table");
    group.sample_size(10);
    for (name, rows) in [
        ("hourly.csv", YEARS * 365 * 24),
        ("hourly.csv.gz", YEARS * 365 * 24),
        ("sixmin.csv", YEARS * 365 * 240),
        ("sixmin.csv.gz", YEARS * 365 * 240),
    ] {
        let path = files.path(name);
        let bytes = std::fs::metadata(&path).expect("bench file").len();
        println!("{name}: {bytes} bytes on disk, about {rows} rows");
        group.throughput(Throughput::Bytes(bytes));
        group.bench_function(name, |b| b.iter(|| pipeline(&path)));
    }
    group.finish();
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if let Some(i) = args.iter().position(|a| a == "--rss-probe") {
        match args.get(i + 1).map(String::as_str) {
            Some("generate") => {
                // Leave the files in place for the probe runs and print where they are.
                let files = Files::create();
                println!("{}", files.dir.display());
                std::mem::forget(files);
            }
            Some(path) => {
                let table = pipeline(Path::new(path));
                println!("{} seasons", table.rows.len());
            }
            None => eprintln!("--rss-probe FILE | --rss-probe generate"),
        }
        return;
    }
    let files = Files::create();
    let mut criterion = Criterion::default().configure_from_args();
    bench(&mut criterion, &files);
    criterion.final_summary();
}
