//! The command line's errors for a gauge whose files are missing: each names the file and
//! the TOML key that names it, and states its cause once.
#![allow(clippy::unwrap_used)]

mod support;

use std::path::Path;
use std::process::Command;

fn run(args: &[&str], toml: &Path) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_tidetally"))
        .args(args)
        .arg("--gauge")
        .arg(toml)
        .output()
        .expect("binary runs");
    assert_eq!(out.status.code(), Some(2), "{out:?}");
    String::from_utf8(out.stderr).unwrap()
}

#[test]
fn a_missing_file_names_its_toml_key_and_states_its_cause_once() {
    let dir = support::temp_dir("cli-missing");
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("../demo-data/gauges");
    let toml = dir.join("port-tamsin.toml");
    std::fs::copy(demo.join("port-tamsin.toml"), &toml).unwrap();
    let err = run(&["counts"], &toml);
    assert!(err.contains("port-tamsin-levels.csv.gz"), "{err}");
    assert!(err.contains("TOML key levels.file"), "{err}");
    assert_eq!(err.matches("No such file").count(), 1, "{err}");

    std::fs::copy(
        demo.join("port-tamsin-levels.csv.gz"),
        dir.join("port-tamsin-levels.csv.gz"),
    )
    .unwrap();
    let err = run(&["fit"], &toml);
    assert!(err.contains("enso-monthly.csv"), "{err}");
    assert!(err.contains("TOML key drivers.enso"), "{err}");
    assert_eq!(err.matches("No such file").count(), 1, "{err}");
    let _ = std::fs::remove_dir_all(&dir);
}
