#![allow(missing_docs, clippy::unwrap_used)]
use std::path::Path;
use tidetally_model::fit::{self, FilesNeeded, GaugeSources, TideAnalysis};
use tidetally_model::water::GaugeWater;
#[test]
fn decades() {
    for id in [
        "saltlow-sound",
        "wrenmouth-inlet",
        "port-tamsin",
        "corrin-quay",
    ] {
        let path = Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("../demo-data/gauges")
            .join(format!("{id}.toml"));
        let p = fit::prepare(
            &GaugeSources::read(&path, FilesNeeded::All).unwrap(),
            TideAnalysis::AsConfigured,
        )
        .unwrap();
        let w = GaugeWater::for_gauge(&p, "DJF").unwrap();
        let f = w.fit_before(None).unwrap();
        let b = f.enso_effect().map_or(0.0, |x| x.0);
        let mut out = String::new();
        for dec in [1980, 1990, 2000, 2010, 2020] {
            let zs: Vec<f64> = w
                .seasons
                .iter()
                .filter(|s| s.season.year() / 10 * 10 == dec)
                .flat_map(|s| {
                    s.days.iter().filter_map(|d| {
                        d.residual.map(|r| {
                            r - (f.sea_level.level_at(d.year).unwrap().value - f.tide_mean)
                                - b * d.enso.unwrap_or(0.0)
                        })
                    })
                })
                .collect();
            if zs.is_empty() {
                continue;
            }
            out += &format!(
                " {dec}s: {:+.4} (n {})",
                zs.iter().sum::<f64>() / zs.len() as f64,
                zs.len()
            );
        }
        eprintln!("{id}:{out}");
    }
}
