//! `tidetally-demo --out DIR`: regenerate the invented demo coastline into DIR.

use std::path::PathBuf;
use std::process::ExitCode;

fn main() -> ExitCode {
    let mut args = std::env::args().skip(1);
    let mut out: Option<PathBuf> = None;
    while let Some(arg) = args.next() {
        match arg.as_str() {
            "--out" => out = args.next().map(PathBuf::from),
            "--help" | "-h" => {
                println!(
                    "usage: tidetally-demo --out DIR   (regenerates the demo coastline into DIR)"
                );
                return ExitCode::SUCCESS;
            }
            other => {
                eprintln!("tidetally-demo: unknown argument {other:?} (try --help)");
                return ExitCode::from(2);
            }
        }
    }
    let Some(out) = out else {
        eprintln!("tidetally-demo: --out DIR is required");
        return ExitCode::from(2);
    };
    match tidetally_demo::generate(&out) {
        Ok(summary) => {
            println!(
                "wrote {} files into {}",
                summary.files.len() + 1,
                out.display()
            );
            println!("gauge              season years      n  flood_days  expected");
            for s in &summary.mean_counts {
                println!(
                    "{:<18} {} {}-{} {:>3} {:>11.2} {:>9.2}",
                    s.gauge,
                    s.season,
                    s.label_years[0],
                    s.label_years[1],
                    s.seasons,
                    s.mean_flood_days,
                    s.mean_expected_flood_days
                );
            }
            ExitCode::SUCCESS
        }
        Err(err) => {
            eprintln!("tidetally-demo: cannot write into {}: {err}", out.display());
            ExitCode::FAILURE
        }
    }
}
