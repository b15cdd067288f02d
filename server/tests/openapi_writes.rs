//! The write operations' shared access answers (`openapi::WriteAccessProblems`) against the
//! router, driven by the document so that writes added later are covered: every operation
//! that is not a read names the bearer scheme and documents 401 and 403 as problem+json
//! bodies of the `Problem` schema, and really answers them (RFC 9110 sections 15.5.2 and
//! 15.5.4: 401 for missing or wrong credentials, 403 for a refusal credentials cannot
//! change) with the problem types the document lists.
#![allow(clippy::unwrap_used)]

mod support;

use serde_json::Value;
use support::*;

const PROBLEM: &str = "#/components/schemas/Problem";

/// The write operations of the document: (method, path, operation).
fn writes(doc: &Value) -> Vec<(String, String, Value)> {
    let mut out = Vec::new();
    for (path, item) in doc["paths"].as_object().unwrap() {
        for (method, op) in item.as_object().unwrap() {
            if ["put", "post", "delete", "patch"].contains(&method.as_str()) {
                out.push((method.clone(), path.clone(), op.clone()));
            }
        }
    }
    out
}

/// `path` with each path parameter at its documented example.
fn concrete(path: &str, op: &Value) -> String {
    let mut out = path.to_owned();
    for p in op["parameters"].as_array().into_iter().flatten() {
        if p["in"] == "path" {
            let name = p["name"].as_str().unwrap();
            let example = match &p["example"] {
                Value::String(s) => s.clone(),
                Value::Number(n) => n.to_string(),
                other => panic!("{path}: parameter {name} has example {other}"),
            };
            out = out.replace(&format!("{{{name}}}"), &example);
        }
    }
    out
}

#[tokio::test]
async fn every_write_documents_and_answers_401_and_403() {
    let with_token = tidetally_server::app(state(true));
    let without_token = tidetally_server::app(state(false));
    let doc = get(&with_token, "/api/v1/openapi.json").await.json();
    let writes = writes(&doc);
    assert!(
        writes.len() >= 9,
        "the document lists {} writes",
        writes.len()
    );
    for (method, path, op) in &writes {
        let what = format!("{method} {path}");
        assert_eq!(op["security"][0]["bearer"], serde_json::json!([]), "{what}");
        for status in ["401", "403"] {
            let response = &op["responses"][status];
            assert!(
                response["description"]
                    .as_str()
                    .is_some_and(|d| !d.is_empty()),
                "{what}: {status} has no description"
            );
            assert_eq!(
                response["content"]["application/problem+json"]["schema"]["$ref"], PROBLEM,
                "{what}: {status}"
            );
        }
        let uri = concrete(path, op);
        let method = method.to_uppercase();
        send(&with_token, &method, &uri, &[], vec![])
            .await
            .assert_problem(401, "unauthorized");
        send(
            &with_token,
            &method,
            &uri,
            &[("authorization", "Bearer not-the-token")],
            vec![],
        )
        .await
        .assert_problem(401, "unauthorized");
        let auth = format!("Bearer {TOKEN}");
        send(
            &without_token,
            &method,
            &uri,
            &[("authorization", &auth)],
            vec![],
        )
        .await
        .assert_problem(403, "writes-disabled");
    }
    let types = &doc["components"]["schemas"]["ProblemType"]["enum"];
    for slug in ["/problems/unauthorized", "/problems/writes-disabled"] {
        assert!(
            types.as_array().unwrap().iter().any(|t| t == slug),
            "{slug} not in {types}"
        );
    }
}
