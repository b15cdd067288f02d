//! Both ways between the document and the demo service's real answers: for every GET
//! operation the document lists (so paths added later are covered too), each real answer's
//! status and media type are documented, every field it carries is documented with the
//! right type (and enum value), every required field is present, a field present in every
//! answer is required, and every field the documented answers declare appears in at least
//! one real answer.

use std::collections::BTreeSet;

use serde_json::Value;

use crate::demo::{get, get_json};
use crate::schema::{Doc, Field, Findings};
use crate::structure;

/// A gauge id the demo does not have, for the documented 404 of every `{id}` path.
const NO_SUCH_GAUGE: &str = "no-such-gauge";

/// The demo gauge whose past season the demo service issued (see `demo`).
const PAST_GAUGE: &str = "port-tamsin";

/// A season no demo gauge has an outlook of, so an outlook set lists every gauge as
/// unavailable.
const UNSERVED_SEASON: &str = "2099-DJF";

/// A parameter example as it goes in a URL.
fn example_text(param: &Value) -> Option<String> {
    let example = param
        .get("example")
        .or_else(|| param["schema"].get("example"))?;
    match example {
        Value::String(s) => Some(s.clone()),
        Value::Number(n) => Some(n.to_string()),
        Value::Bool(b) => Some(b.to_string()),
        _ => None,
    }
}

/// The URLs one GET operation is tried with: every demo gauge (and one unknown gauge) for
/// `{id}`, the documented example for any other path parameter; no query, then each query
/// parameter alone at its example, and a `season` also at a past and an unserved season.
fn urls(path: &str, op: &Value, gauges: &[String], past: &str) -> Result<Vec<String>, String> {
    let params: Vec<&Value> = op["parameters"].as_array().into_iter().flatten().collect();
    let mut bases = vec![(path.to_owned(), true)];
    for p in params.iter().filter(|p| p["in"] == "path") {
        let name = p["name"].as_str().unwrap_or_default();
        let hole = format!("{{{name}}}");
        let values: Vec<(String, bool)> = if name == "id" {
            gauges
                .iter()
                .map(|g| (g.clone(), true))
                .chain([(NO_SUCH_GAUGE.to_owned(), false)])
                .collect()
        } else {
            let example = example_text(p)
                .ok_or_else(|| format!("GET {path}: path parameter {name} has no example"))?;
            vec![(example, true)]
        };
        let mut next = Vec::new();
        for (base, real) in &bases {
            for (v, known) in &values {
                next.push((base.replace(&hole, v), *real && *known));
            }
        }
        bases = next;
    }
    let mut queries = vec![String::new()];
    for p in params.iter().filter(|p| p["in"] == "query") {
        let name = p["name"].as_str().unwrap_or_default();
        if let Some(example) = example_text(p) {
            queries.push(format!("?{name}={example}"));
        }
        if name == "season" {
            queries.push(format!("?season={past}"));
            queries.push(format!("?season={UNSERVED_SEASON}"));
        }
    }
    let mut out = Vec::new();
    for (base, real) in bases {
        if real {
            out.extend(queries.iter().map(|q| format!("{base}{q}")));
        } else {
            out.push(base);
        }
    }
    Ok(out)
}

/// The media type of a `Content-Type` value, without parameters.
fn media_of(content_type: &str) -> String {
    content_type
        .split(';')
        .next()
        .unwrap_or_default()
        .trim()
        .to_ascii_lowercase()
}

fn is_json(media: &str) -> bool {
    media == "application/json" || media.ends_with("+json")
}

/// The errors with repeats of one gap (other array elements, other queries of the same path)
/// left out.
fn distinct(errors: Vec<String>) -> Vec<String> {
    let mut keys = BTreeSet::new();
    errors
        .into_iter()
        .filter(|e| {
            let mut key = String::new();
            let mut in_index = false;
            let mut in_query = false;
            for c in e.chars() {
                match c {
                    '[' => in_index = true,
                    ']' => in_index = false,
                    '?' => in_query = true,
                    '.' | ':' if in_query => in_query = false,
                    _ => {}
                }
                if !in_index && !in_query {
                    key.push(c);
                }
            }
            keys.insert(key)
        })
        .collect()
}

#[test]
fn every_served_field_is_documented_and_every_documented_field_is_served() {
    let doc = get_json("/api/v1/openapi.json");
    let walker = Doc::new(&doc);
    let mut errors = structure::problems(&doc);

    let gauges: Vec<String> = get_json("/api/v1/gauges")["gauges"]
        .as_array()
        .expect("a gauges array")
        .iter()
        .map(|g| g["id"].as_str().expect("a gauge id").to_owned())
        .collect();
    assert_eq!(gauges.len(), crate::demo::DEMO_GAUGES);
    let next = get_json(&format!("/api/v1/gauges/{PAST_GAUGE}/outlook"));
    let past = next["last_season_observed"]["season"]
        .as_str()
        .expect("a last observed season")
        .to_owned();

    let mut documented: BTreeSet<Field> = BTreeSet::new();
    let mut served = Findings::default();
    let mut answers = 0;
    for (path, item) in doc["paths"].as_object().expect("paths") {
        let Some(op) = item.get("get") else {
            continue;
        };
        let at = format!("#/paths/{}/get", path.replace('~', "~0").replace('/', "~1"));
        let responses = &op["responses"];
        for (status, response) in responses.as_object().into_iter().flatten() {
            for (media, content) in response["content"].as_object().into_iter().flatten() {
                if is_json(media) {
                    let schema_at = format!("{at}/responses/{status}/content/{media}/schema");
                    walker.documented(&content["schema"], &schema_at, &mut documented);
                }
            }
        }
        let urls = match urls(path, op, &gauges, &past) {
            Ok(urls) => urls,
            Err(why) => {
                errors.push(why);
                continue;
            }
        };
        for url in urls {
            let answer = get(&url);
            answers += 1;
            let status = answer.status.to_string();
            let Some(response) = responses.get(&status).or_else(|| responses.get("default")) else {
                errors.push(format!("GET {url}: answered {status}, not documented"));
                continue;
            };
            let Some(content_type) = answer.header("content-type") else {
                if response["content"].is_object() && !answer.body.is_empty() {
                    errors.push(format!("GET {url}: {status} without a content type"));
                }
                continue;
            };
            let media = media_of(&content_type);
            let Some(content) = response["content"].get(&media) else {
                errors.push(format!(
                    "GET {url}: {status} served as {media}, documented as {:?}",
                    response["content"]
                        .as_object()
                        .map(|c| c.keys().collect::<Vec<_>>())
                ));
                continue;
            };
            if !is_json(&media) {
                continue;
            }
            let value: Value = match serde_json::from_slice(&answer.body) {
                Ok(v) => v,
                Err(e) => {
                    errors.push(format!("GET {url}: {media} that is not JSON ({e})"));
                    continue;
                }
            };
            let schema_at = format!("{at}/responses/{status}/content/{media}/schema");
            let findings = walker.check(
                &value,
                &content["schema"],
                &schema_at,
                &format!("GET {url}"),
            );
            served.merge(findings);
        }
    }
    errors.append(&mut served.errors);
    for (owner, name) in served.always_served_but_optional() {
        errors.push(format!(
            "field {name} of {owner} is in every real answer but not required"
        ));
    }
    let seen = &served.seen;
    for (owner, name) in documented.difference(seen) {
        errors.push(format!(
            "field {name} of {owner} is documented but in no real answer"
        ));
    }
    eprintln!(
        "{answers} answers; {} documented fields, {} of them seen",
        documented.len(),
        documented.intersection(seen).count()
    );
    let errors = distinct(errors);
    assert!(
        errors.is_empty(),
        "{} gaps between the document and the service:\n{}",
        errors.len(),
        errors.join("\n")
    );
}

#[test]
fn the_walker_finds_undocumented_and_unserved_fields() {
    // The check itself, on a hand-made document: an extra field, a missing required one, a
    // wrong type and an enum value outside the set are all reported, a field no value
    // carries is left unseen, and an optional field every value carries is named.
    let doc = serde_json::json!({
        "components": {"schemas": {
            "Thing": {
                "type": "object",
                "required": ["n", "kind"],
                "properties": {
                    "n": {"type": "integer", "description": "a count"},
                    "kind": {"type": "string", "enum": ["a", "b"], "description": "a kind"},
                    "inner": {"oneOf": [{"type": "null"}, {"$ref": "#/components/schemas/Inner"}], "description": "maybe"},
                    "never": {"type": "string", "description": "never sent"}
                }
            },
            "Inner": {"type": "object", "properties": {"x": {"type": "number", "description": "x"}}}
        }}
    });
    let walker = Doc::new(&doc);
    let schema = serde_json::json!({"$ref": "#/components/schemas/Thing"});
    let good = walker.check(
        &serde_json::json!({"n": 1, "kind": "a", "inner": {"x": 2}}),
        &schema,
        "top",
        "good",
    );
    assert!(good.errors.is_empty(), "{:?}", good.errors);
    let mut documented = BTreeSet::new();
    walker.documented(&schema, "top", &mut documented);
    let unseen: Vec<&Field> = documented.difference(&good.seen).collect();
    assert_eq!(
        unseen,
        vec![&("#/components/schemas/Thing".to_owned(), "never".to_owned())]
    );
    assert_eq!(
        good.always_served_but_optional(),
        vec![
            &("#/components/schemas/Inner".to_owned(), "x".to_owned()),
            &("#/components/schemas/Thing".to_owned(), "inner".to_owned())
        ]
    );
    let bad = walker.check(
        &serde_json::json!({"n": 1.5, "kind": "c", "inner": {"x": 2, "y": 3}, "extra": true}),
        &schema,
        "top",
        "bad",
    );
    let text = bad.errors.join("\n");
    for expected in [
        "bad.n: number",
        "\"c\" is not among",
        "bad.extra: field not documented",
        "alternatives",
    ] {
        assert!(text.contains(expected), "{expected} not in:\n{text}");
    }
    let missing = walker.check(&serde_json::json!({"kind": "a"}), &schema, "top", "missing");
    assert!(
        missing
            .errors
            .iter()
            .any(|e| e.contains("required field n")),
        "{:?}",
        missing.errors
    );
}
