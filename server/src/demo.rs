//! The demo coastline carried in the binary: every file of `demo-data/gauges` and
//! `demo-data/drivers`, compiled in (about 9 MB, most of it gzip level files), so an installed
//! `tidetally serve` run outside the checkout still serves the invented Vennick Bay gauges.
//! When the checkout's `demo-data/gauges` folder is present it is used instead; `serve`'s first
//! log line says which.

use std::path::{Path, PathBuf};

/// One file of the demo, by its path under `demo-data/`.
#[derive(Debug, Clone, Copy)]
pub struct DemoFile {
    /// Path under `demo-data/`, e.g. `gauges/port-tamsin.toml`.
    pub path: &'static str,
    /// The file's bytes, as built.
    pub bytes: &'static [u8],
}

macro_rules! demo_file {
    ($path:literal) => {
        DemoFile {
            path: $path,
            bytes: include_bytes!(concat!("../../demo-data/", $path)),
        }
    };
}

/// Every file the demo gauges' TOMLs name, with the TOMLs themselves.
pub const FILES: &[DemoFile] = &[
    demo_file!("drivers/enso-forecast-2026-DJF.json"),
    demo_file!("drivers/enso-monthly.csv"),
    demo_file!("drivers/rmm-daily.csv"),
    demo_file!("gauges/corrin-quay.toml"),
    demo_file!("gauges/corrin-quay-levels.csv.gz"),
    demo_file!("gauges/corrin-quay-wind.csv"),
    demo_file!("gauges/port-tamsin.toml"),
    demo_file!("gauges/port-tamsin-levels.csv.gz"),
    demo_file!("gauges/port-tamsin-wind.csv"),
    demo_file!("gauges/saltlow-sound.toml"),
    demo_file!("gauges/saltlow-sound-levels.csv.gz"),
    demo_file!("gauges/saltlow-sound-wind.csv"),
    demo_file!("gauges/wrenmouth-inlet.toml"),
    demo_file!("gauges/wrenmouth-inlet-levels.csv.gz"),
    demo_file!("gauges/wrenmouth-inlet-wind.csv"),
];

/// Writes the carried demo under `dir` (as `dir/gauges/...` and `dir/drivers/...`, the layout
/// the TOMLs' relative paths expect) and returns the gauges folder to seed from.
pub fn unpack(dir: &Path) -> std::io::Result<PathBuf> {
    for file in FILES {
        let path = dir.join(file.path);
        if let Some(parent) = path.parent() {
            std::fs::create_dir_all(parent)?;
        }
        std::fs::write(&path, file.bytes)?;
    }
    Ok(dir.join("gauges"))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn checkout() -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR")).join("../demo-data")
    }

    /// The carried list is the checkout's demo folders, file for file and byte for byte, so
    /// a regenerated or added demo file cannot be left out of the binary.
    #[test]
    fn the_carried_demo_is_the_checkouts() {
        let mut on_disk: Vec<String> = ["gauges", "drivers"]
            .iter()
            .flat_map(|d| {
                std::fs::read_dir(checkout().join(d))
                    .expect("demo folder")
                    .map(move |e| {
                        format!("{d}/{}", e.expect("entry").file_name().to_string_lossy())
                    })
            })
            .collect();
        on_disk.sort();
        let mut carried: Vec<String> = FILES.iter().map(|f| f.path.to_owned()).collect();
        carried.sort();
        assert_eq!(carried, on_disk);
        for file in FILES {
            let disk = std::fs::read(checkout().join(file.path)).expect("demo file");
            assert!(
                disk == file.bytes,
                "{} differs from the checkout",
                file.path
            );
        }
    }
}
