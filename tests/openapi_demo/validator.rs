//! The served document validated as OpenAPI 3.1 by a general-purpose validator:
//! `openapi-spec-validator` 0.9.0 (PyPI), which checks a document against the OpenAPI
//! Initiative's published JSON Schema of the 3.1 specification and resolves every `$ref`.

use std::process::Command;

use crate::demo::get;
use crate::python::{fresh_dir, has_pinned, interpreter, succeeded};

#[test]
fn the_document_is_valid_openapi_3_1() {
    let test = "the_document_is_valid_openapi_3_1";
    if !has_pinned(
        test,
        "openapi_spec_validator",
        "openapi-spec-validator",
        "0.9.0",
    ) {
        return;
    }
    let answer = get("/api/v1/openapi.json");
    assert_eq!(answer.status, 200, "{}", answer.text());
    let dir = fresh_dir("validator");
    let file = dir.join("openapi.json");
    std::fs::write(&file, &answer.body).expect("document written");
    let output = succeeded(
        "openapi-spec-validator",
        Command::new(interpreter())
            .args([
                "-m",
                "openapi_spec_validator",
                "--schema",
                "3.1",
                "--validation-errors",
                "all",
            ])
            .arg(&file)
            .output(),
    );
    let said = String::from_utf8_lossy(&output.stdout);
    assert!(said.contains("OK"), "the validator did not say OK: {said}");
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn the_validator_rejects_a_broken_document() {
    // The validator must be able to fail: a document whose path answers with a schema of an
    // unknown type is not OpenAPI 3.1.
    let test = "the_validator_rejects_a_broken_document";
    if !has_pinned(
        test,
        "openapi_spec_validator",
        "openapi-spec-validator",
        "0.9.0",
    ) {
        return;
    }
    let mut doc = tidetally_server::openapi::document();
    doc["components"]["schemas"]["Problem"]["type"] = serde_json::json!("record");
    let dir = fresh_dir("validator-broken");
    let file = dir.join("openapi.json");
    std::fs::write(&file, doc.to_string()).expect("document written");
    let output = Command::new(interpreter())
        .args(["-m", "openapi_spec_validator", "--schema", "3.1"])
        .arg(&file)
        .output()
        .expect("the validator runs");
    assert!(
        !output.status.success(),
        "a schema of type \"record\" passed: {}",
        String::from_utf8_lossy(&output.stdout)
    );
    let _ = std::fs::remove_dir_all(&dir);
}
