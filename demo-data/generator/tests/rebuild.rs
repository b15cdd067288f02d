//! The committed demo files are exactly what the generator writes: regenerate everything into
//! a fresh temporary folder and compare every checksum with the committed manifest, and the
//! manifest with the committed files themselves.

use std::collections::BTreeMap;
use std::fs;
use std::path::{Path, PathBuf};

/// The committed demo-data folder (the generator crate lives in `demo-data/generator`).
fn committed_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the generator crate sits inside demo-data")
        .to_path_buf()
}

/// `path -> checksum` from a manifest's text.
fn parse_manifest(text: &str) -> BTreeMap<String, String> {
    text.lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
        .map(|l| {
            let (hash, path) = l
                .split_once("  ")
                .expect("manifest lines are `<hash>  <path>`");
            (path.to_owned(), hash.to_owned())
        })
        .collect()
}

#[test]
fn regenerating_reproduces_the_committed_files_byte_for_byte() {
    let out = std::env::temp_dir().join(format!("tidetally-demo-rebuild-{}", std::process::id()));
    let _ = fs::remove_dir_all(&out);
    let summary = tidetally_demo::generate(&out).expect("the generator writes into a temp folder");

    let committed_text = fs::read_to_string(committed_dir().join("MANIFEST.fnv1a64"))
        .expect("demo-data/MANIFEST.fnv1a64 is committed");
    let committed = parse_manifest(&committed_text);
    let fresh_text =
        fs::read_to_string(out.join("MANIFEST.fnv1a64")).expect("the generator writes a manifest");
    assert_eq!(
        parse_manifest(&fresh_text),
        committed,
        "regenerated manifest differs"
    );
    assert_eq!(summary.files.len(), committed.len());

    // The committed files match their manifest (nobody edited a generated file by hand).
    for (path, hash) in &committed {
        let bytes = fs::read(committed_dir().join(path)).expect("every manifest file is committed");
        let got = format!("{:016x}", tidetally_demo::seed::fnv1a64(&bytes));
        assert_eq!(&got, hash, "committed {path} does not match the manifest");
    }
    let _ = fs::remove_dir_all(&out);
}
