//! Rules every schema of the document keeps so that a client can be generated from it
//! (common practice for typed clients, no single standard states them): every array names
//! its `items`, every object its `properties` or `additionalProperties`, every property has a
//! description, every operation a unique `operationId` (OpenAPI Specification 3.1.0 section
//! 4.8.10: "The id MUST be unique among all operations described in the API").

use std::collections::BTreeSet;

use serde_json::Value;

use crate::schema::types;

/// The HTTP methods an OpenAPI path item may hold (OpenAPI Specification 3.1.0, 4.8.9).
pub const METHODS: &[&str] = &[
    "get", "put", "post", "delete", "options", "head", "patch", "trace",
];

/// Every rule broken anywhere in `doc`, each naming where.
pub fn problems(doc: &Value) -> Vec<String> {
    let mut out = Vec::new();
    for (name, schema) in doc["components"]["schemas"]
        .as_object()
        .into_iter()
        .flatten()
    {
        walk(schema, &format!("#/components/schemas/{name}"), &mut out);
    }
    let mut ids = BTreeSet::new();
    for (path, item) in doc["paths"].as_object().into_iter().flatten() {
        for method in METHODS {
            let Some(op) = item.get(*method) else {
                continue;
            };
            let at = format!(
                "#/paths/{}/{method}",
                path.replace('~', "~0").replace('/', "~1")
            );
            match op["operationId"].as_str() {
                Some(id) if !id.is_empty() => {
                    if !ids.insert(id.to_owned()) {
                        out.push(format!("{method} {path}: operationId {id} is not unique"));
                    }
                }
                _ => out.push(format!("{method} {path}: no operationId")),
            }
            for (i, p) in op["parameters"]
                .as_array()
                .into_iter()
                .flatten()
                .enumerate()
            {
                if !has_description(p) {
                    out.push(format!(
                        "{method} {path}: parameter {} has no description",
                        p["name"]
                    ));
                }
                walk(
                    &p["schema"],
                    &format!("{at}/parameters/{i}/schema"),
                    &mut out,
                );
            }
            for (media, content) in op["requestBody"]["content"]
                .as_object()
                .into_iter()
                .flatten()
            {
                walk(
                    &content["schema"],
                    &format!("{at}/requestBody/{media}"),
                    &mut out,
                );
            }
            for (status, response) in op["responses"].as_object().into_iter().flatten() {
                for (media, content) in response["content"].as_object().into_iter().flatten() {
                    walk(
                        &content["schema"],
                        &format!("{at}/responses/{status}/{media}"),
                        &mut out,
                    );
                }
            }
        }
    }
    out
}

fn has_description(v: &Value) -> bool {
    v["description"]
        .as_str()
        .is_some_and(|d| !d.trim().is_empty())
}

fn walk(schema: &Value, at: &str, out: &mut Vec<String>) {
    let kinds = types(schema);
    if kinds.contains(&"array") && !schema["items"].is_object() && !schema["prefixItems"].is_array()
    {
        out.push(format!("{at}: an array without items"));
    }
    if kinds.contains(&"object")
        && schema.get("properties").is_none()
        && schema.get("additionalProperties").is_none()
    {
        out.push(format!(
            "{at}: an object without properties or additionalProperties"
        ));
    }
    for key in ["allOf", "oneOf", "anyOf", "prefixItems"] {
        for (i, part) in schema[key].as_array().into_iter().flatten().enumerate() {
            walk(part, &format!("{at}/{key}/{i}"), out);
        }
    }
    for key in ["items", "additionalProperties"] {
        if schema[key].is_object() {
            walk(&schema[key], &format!("{at}/{key}"), out);
        }
    }
    for (name, property) in schema["properties"].as_object().into_iter().flatten() {
        if !has_description(property) {
            out.push(format!("{at}/properties/{name}: no description"));
        }
        walk(property, &format!("{at}/properties/{name}"), out);
    }
}
