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
    let started = std::time::Instant::now();
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
            let f = &summary.forward;
            println!(
                "{} true distribution ({} replicates): mean [p10, p90] share",
                f.season, f.replicates
            );
            for g in &f.gauges {
                let (m, x) = (&g.scenarios.members, &g.scenarios.enso_fixed);
                println!(
                    "{:<18} members {:>6.2} [{}, {}] {:.3}   enso_fixed {:>6.2} [{}, {}] {:.3}",
                    g.id,
                    m.mean,
                    m.p10,
                    m.p90,
                    m.share_within_p10_p90,
                    x.mean,
                    x.p10,
                    x.p90,
                    x.share_within_p10_p90
                );
            }
            println!("took {:.1} s", started.elapsed().as_secs_f64());
            ExitCode::SUCCESS
        }
        Err(err) => {
            eprintln!("tidetally-demo: cannot write into {}: {err}", out.display());
            ExitCode::FAILURE
        }
    }
}
