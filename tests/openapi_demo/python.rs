//! The Python tools the document's checks call, found or skipped like the browser test
//! (`tests/page_browser.rs`): missing tools print a skip message, or fail when `CI` is set.

use std::path::PathBuf;
use std::process::{Command, Output};

/// The pinned tools' list, installed by `pip install -r tests/python/requirements.txt`.
pub const REQUIREMENTS: &str = "tests/python/requirements.txt";

/// The Python interpreter: `PYTHON`, else `python3` on the `PATH`.
pub fn interpreter() -> PathBuf {
    std::env::var_os("PYTHON").map_or_else(|| PathBuf::from("python3"), PathBuf::from)
}

/// Whether the interpreter imports `module` at exactly `version` (the pinned one); a skip
/// message (or, when `CI` is set, a panic) when it does not.
pub fn has_pinned(test: &str, module: &str, distribution: &str, version: &str) -> bool {
    let script =
        format!("import {module}, importlib.metadata as m; print(m.version('{distribution}'))");
    let found = Command::new(interpreter())
        .args(["-c", &script])
        .output()
        .ok()
        .filter(|o| o.status.success())
        .map(|o| String::from_utf8_lossy(&o.stdout).trim().to_owned());
    let why = match found {
        Some(v) if v == version => return true,
        Some(v) => format!("{distribution} {v} is installed, the tests pin {version}"),
        None => format!("{distribution} is not installed"),
    };
    assert!(
        std::env::var_os("CI").is_none(),
        "CI is set but {why} (pip install -r {REQUIREMENTS})"
    );
    eprintln!("SKIPPED {test}: {why} (pip install -r {REQUIREMENTS}, or set PYTHON)");
    false
}

/// The output of a finished command, which must have succeeded.
pub fn succeeded(what: &str, output: std::io::Result<Output>) -> Output {
    let output = output.unwrap_or_else(|e| panic!("{what} did not start: {e}"));
    assert!(
        output.status.success(),
        "{what} failed ({}):\n{}\n{}",
        output.status,
        String::from_utf8_lossy(&output.stdout),
        String::from_utf8_lossy(&output.stderr)
    );
    output
}

/// A fresh temporary directory for this test process.
pub fn fresh_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("tidetally-openapi-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}
