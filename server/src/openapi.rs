//! The OpenAPI 3.1 document of the service, listing every path and the shape of each
//! answer. Tests check it against the router and against real responses.

use serde_json::{Value, json};

/// Every documented operation: method, path, summary, success schema.
pub const OPERATIONS: &[(&str, &str, &str, &str)] = &[
    ("get", "/healthz", "The process is up", "Health"),
    (
        "get",
        "/readyz",
        "The store is open and the models are loaded",
        "Ready",
    ),
    ("get", "/api/v1/openapi.json", "This document", "OpenApi"),
    ("get", "/api/v1/gauges", "All gauges", "GaugeList"),
    (
        "get",
        "/api/v1/gauges.geojson",
        "All gauges as a GeoJSON FeatureCollection (RFC 7946)",
        "FeatureCollection",
    ),
    ("get", "/api/v1/gauges/{id}", "One gauge", "Gauge"),
    (
        "get",
        "/api/v1/gauges/{id}/seasons",
        "The gauge's season table (JSON, or CSV by Accept: text/csv or ?format=csv)",
        "SeasonHistory",
    ),
    (
        "get",
        "/api/v1/gauges/{id}/outlook",
        "The gauge's outlook of minor flood days for a season",
        "Outlook",
    ),
    (
        "get",
        "/api/v1/gauges/{id}/hindcast",
        "Out-of-sample skill of the gauge's model",
        "Hindcast",
    ),
    (
        "get",
        "/api/v1/outlooks",
        "Every gauge's outlook for a season",
        "OutlookSet",
    ),
    (
        "get",
        "/api/v1/outlooks/issued",
        "Outlooks as issued, with their verification once the season is in",
        "IssuedOutlookList",
    ),
    (
        "put",
        "/api/v1/gauges/{id}",
        "Create or replace a gauge from its TOML",
        "UploadReceipt",
    ),
    (
        "delete",
        "/api/v1/gauges/{id}",
        "Retire a gauge: hidden from the lists, its data kept",
        "Retired",
    ),
    (
        "put",
        "/api/v1/gauges/{id}/levels",
        "Merge water levels (CSV, plain or gzip) into the gauge's record, or replace it",
        "UploadReceipt",
    ),
    (
        "get",
        "/api/v1/gauges/{id}/versions",
        "Every stored version of the gauge's inputs",
        "VersionList",
    ),
    (
        "post",
        "/api/v1/gauges/{id}/versions/{input}/{version}/restore",
        "Store an earlier version of the gauge's TOML or levels as its newest",
        "UploadReceipt",
    ),
    (
        "post",
        "/api/v1/gauges/{id}/versions/prune",
        "Delete all but the newest versions of the gauge's TOML and levels",
        "Pruned",
    ),
    (
        "get",
        "/api/v1/drivers",
        "Every stored driver series, its versions and the gauges choosing it",
        "SeriesList",
    ),
    (
        "put",
        "/api/v1/drivers/{kind}/{name}",
        "Store a new version of a named driver series (kind: enso, rmm or wind)",
        "UploadReceipt",
    ),
    (
        "post",
        "/api/v1/drivers/{kind}/{name}/versions/{version}/restore",
        "Store an earlier version of a named series (kind also enso_forecast) as its newest",
        "UploadReceipt",
    ),
    (
        "put",
        "/api/v1/forecasts/enso/{name}",
        "Store an ENSO forecast for a target season as a new version of a named forecast series",
        "UploadReceipt",
    ),
    (
        "post",
        "/api/v1/gauges/{id}/refit",
        "Refit the gauge's model; the old one keeps serving if this fails",
        "Gauge",
    ),
];

/// Required top-level fields of each schema, with their JSON types.
pub const SCHEMAS: &[(&str, &[(&str, &str)])] = &[
    ("Health", &[("status", "string")]),
    (
        "Ready",
        &[
            ("status", "string"),
            ("gauges", "integer"),
            ("models", "integer"),
        ],
    ),
    (
        "OpenApi",
        &[
            ("openapi", "string"),
            ("info", "object"),
            ("paths", "object"),
        ],
    ),
    ("GaugeList", &[("gauges", "array")]),
    (
        "Gauge",
        &[
            ("id", "string"),
            ("name", "string"),
            ("latitude", "number"),
            ("longitude", "number"),
            ("datum", "string"),
            ("flood_threshold_m", "number"),
            ("utc_offset", "string"),
            ("seasons", "array"),
            ("record", "object|null"),
            ("model_ready", "boolean"),
            ("model_status", "string|null"),
        ],
    ),
    (
        "FeatureCollection",
        &[("type", "string"), ("features", "array")],
    ),
    (
        "SeasonHistory",
        &[
            ("gauge", "string"),
            ("datum", "string"),
            ("flood_threshold_m", "number"),
            ("seasons", "array"),
        ],
    ),
    (
        "Outlook",
        &[
            ("gauge", "string"),
            ("season", "string"),
            ("season_days", "integer"),
            ("pmf", "array"),
            ("mean", "number"),
            ("median", "integer"),
            ("p10", "integer"),
            ("p90", "integer"),
            ("exceedance", "array"),
            ("terciles", "array"),
            ("climatological_mean", "number"),
            ("last_season_observed", "object|null"),
            ("drivers", "array"),
            ("skill", "object"),
            ("cautions", "array"),
            ("issued_at", "string"),
            ("model_version", "string"),
            ("explanation", "array"),
            ("trend_only_mean", "number|null"),
            ("family", "string"),
            ("fit_period", "object"),
            ("notes", "array"),
            ("engine", "string"),
            ("engine_reason", "string"),
            ("other_engine", "object|null"),
            ("days", "array"),
            ("water_effects", "array"),
        ],
    ),
    (
        "Hindcast",
        &[
            ("gauge", "string"),
            ("model_version", "string"),
            ("method", "string"),
            ("skill", "object"),
            ("cases", "array"),
            ("engines", "array"),
        ],
    ),
    (
        "OutlookSet",
        &[
            ("season", "string"),
            ("outlooks", "array"),
            ("unavailable", "array"),
        ],
    ),
    ("IssuedOutlookList", &[("issued", "array")]),
    (
        "UploadReceipt",
        &[
            ("stored", "string"),
            ("gauge", "string|null"),
            ("rows", "integer"),
            ("bytes", "integer"),
            ("content_hash", "string"),
            ("note", "string"),
            ("version", "integer|null"),
            ("added", "integer|null"),
            ("changed", "integer|null"),
            ("unchanged", "integer|null"),
        ],
    ),
    ("Retired", &[("retired", "string"), ("note", "string")]),
    (
        "Pruned",
        &[
            ("gauge", "string"),
            ("deleted", "integer"),
            ("kept_newest", "integer"),
        ],
    ),
    (
        "VersionList",
        &[
            ("gauge", "string"),
            ("retired", "boolean"),
            ("toml", "array"),
            ("levels", "array"),
            ("series", "array"),
        ],
    ),
    ("SeriesList", &[("series", "array")]),
    (
        "Problem",
        &[
            ("type", "string"),
            ("title", "string"),
            ("status", "integer"),
            ("detail", "string"),
            ("instance", "string"),
        ],
    ),
];

fn schema(fields: &[(&str, &str)]) -> Value {
    let properties: serde_json::Map<String, Value> = fields
        .iter()
        .map(|(name, kind)| {
            let types: Vec<&str> = kind.split('|').collect();
            let ty = if types.len() == 1 {
                json!(types[0])
            } else {
                json!(types)
            };
            ((*name).to_owned(), json!({ "type": ty }))
        })
        .collect();
    let required: Vec<&str> = fields.iter().map(|(name, _)| *name).collect();
    json!({ "type": "object", "required": required, "properties": properties })
}

fn parameters(path: &str, method: &str) -> Vec<Value> {
    let mut params: Vec<Value> = path
        .split('/')
        .filter_map(|seg| seg.strip_prefix('{').and_then(|s| s.strip_suffix('}')))
        .map(|name| json!({"name": name, "in": "path", "required": true, "schema": {"type": "string"}}))
        .collect();
    let query = |name: &str, required: bool, description: &str| json!({"name": name, "in": "query", "required": required, "schema": {"type": "string"}, "description": description});
    match (method, path) {
        ("get", "/api/v1/gauges/{id}/outlook") => {
            params.push(query(
                "season",
                false,
                "Season label, e.g. 2026-DJF; default: the earliest season served",
            ));
            params.push(query(
                "k",
                false,
                "Comma-separated days k for P(N >= k), e.g. 5,10",
            ));
        }
        ("get", "/api/v1/gauges/{id}/seasons") => {
            params.push(query("format", false, "json (default) or csv"))
        }
        ("put", "/api/v1/gauges/{id}/levels") => {
            params.push(query(
                "mode",
                false,
                "merge (default: new readings added, changed ones replaced) or replace",
            ));
            params.push(query(
                "confirm",
                false,
                "shrink: needed by a replace that keeps less than half of the record's days",
            ));
        }
        ("post", "/api/v1/gauges/{id}/versions/prune") => params.push(query(
            "keep",
            false,
            "How many newest versions to keep (default 1)",
        )),
        ("get", "/api/v1/outlooks") => {
            params.push(query("season", true, "Season label, e.g. 2026-DJF"))
        }
        ("get", "/api/v1/outlooks/issued") => {
            params.push(query("gauge", false, "Only this gauge"));
            params.push(query("season", false, "Only this season label"));
            params.push(query(
                "limit",
                false,
                "At most this many, newest first (1 to 500, default 100)",
            ));
        }
        _ => {}
    }
    params
}

/// The OpenAPI 3.1 document.
pub fn document() -> Value {
    let mut paths = serde_json::Map::new();
    for (method, path, summary, schema_name) in OPERATIONS {
        let problem = json!({"description": "Problem (RFC 9457)", "content": {"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}}});
        let mut operation = json!({
            "summary": summary,
            "parameters": parameters(path, method),
            "responses": {
                "200": {"description": "Success", "content": {"application/json": {"schema": {"$ref": format!("#/components/schemas/{schema_name}")}}}},
                "default": problem,
            }
        });
        if *method != "get" {
            operation["security"] = json!([{"bearer": []}]);
            if *method == "put" {
                operation["requestBody"] = json!({"required": true, "content": {
                    "application/octet-stream": {"schema": {"type": "string", "contentMediaType": "application/octet-stream"}}
                }});
            }
        } else if !path.starts_with("/healthz") && !path.starts_with("/readyz") {
            operation["responses"]["304"] =
                json!({"description": "Not modified (If-None-Match matched the ETag)"});
        }
        let entry = paths.entry((*path).to_owned()).or_insert_with(|| json!({}));
        entry[*method] = operation;
    }
    let schemas: serde_json::Map<String, Value> = SCHEMAS
        .iter()
        .map(|(name, fields)| ((*name).to_owned(), schema(fields)))
        .collect();
    json!({
        "openapi": "3.1.0",
        "info": {
            "title": "tidetally",
            "version": env!("CARGO_PKG_VERSION"),
            "description": "Seasonal outlooks of minor coastal flood days at tide gauges. An outlook is a seasonal probability, not a warning: follow local emergency managers and official forecasts."
        },
        "paths": paths,
        "components": {
            "schemas": schemas,
            "securitySchemes": {"bearer": {"type": "http", "scheme": "bearer"}}
        }
    })
}
