//! A small walker over an OpenAPI 3.1 document's JSON Schemas: checks a real JSON value
//! against a schema (types, enums, required and undocumented fields), recording which
//! documented fields it saw, and lists the fields a schema documents. Both follow `$ref`,
//! `allOf`, `oneOf`, `anyOf`, `items`, `prefixItems` and `additionalProperties` the same way,
//! so a field is named by the same key on both sides: the JSON pointer of the object schema
//! that declares it, and its name.
//!
//! The keywords' meanings are those of JSON Schema 2020-12 (the schema dialect of OpenAPI
//! 3.1, OpenAPI Specification 3.1.0 section 4.8.24): `type` may be a string or an array of
//! them, `integer` values are also `number`s, `oneOf` needs exactly one match.

use std::collections::{BTreeMap, BTreeSet};

use serde_json::Value;

/// A documented field: the pointer of the object schema declaring it, and its name.
pub type Field = (String, String);

/// The document being walked.
pub struct Doc<'a> {
    root: &'a Value,
}

/// What checking one value found.
#[derive(Default, Clone)]
pub struct Findings {
    /// Documented fields present in the value.
    pub seen: BTreeSet<Field>,
    /// Mismatches, each naming where in the value and the schema.
    pub errors: Vec<String>,
    /// How many object values each object schema (by pointer) was checked against.
    pub objects: BTreeMap<String, usize>,
    /// How many of those carried each field their schema does not require.
    pub optional: BTreeMap<Field, usize>,
}

impl Findings {
    /// Adds what another check found.
    pub fn merge(&mut self, other: Findings) {
        self.seen.extend(other.seen);
        self.errors.extend(other.errors);
        for (k, n) in other.objects {
            *self.objects.entry(k).or_default() += n;
        }
        for (k, n) in other.optional {
            *self.optional.entry(k).or_default() += n;
        }
    }

    /// Fields served in every object value of their schema that the schema does not
    /// require (a client must then treat an always-present field as maybe absent).
    pub fn always_served_but_optional(&self) -> Vec<&Field> {
        self.optional
            .iter()
            .filter(|((owner, _), n)| self.objects.get(owner) == Some(n))
            .map(|(field, _)| field)
            .collect()
    }
}

/// The JSON Schema type name of a value.
pub fn type_of(value: &Value) -> &'static str {
    match value {
        Value::Null => "null",
        Value::Bool(_) => "boolean",
        Value::Number(n) if n.is_i64() || n.is_u64() => "integer",
        Value::Number(_) => "number",
        Value::String(_) => "string",
        Value::Array(_) => "array",
        Value::Object(_) => "object",
    }
}

/// The type names a schema's `type` allows (empty when it has none).
pub fn types(schema: &Value) -> Vec<&str> {
    match &schema["type"] {
        Value::String(t) => vec![t.as_str()],
        Value::Array(ts) => ts.iter().filter_map(Value::as_str).collect(),
        _ => Vec::new(),
    }
}

impl<'a> Doc<'a> {
    /// A walker over `root`, an OpenAPI document.
    pub fn new(root: &'a Value) -> Self {
        Self { root }
    }

    /// The schema a local `$ref` names, and its pointer.
    fn resolve(&self, reference: &str) -> Result<(&'a Value, String), String> {
        let pointer = reference
            .strip_prefix('#')
            .ok_or_else(|| format!("non-local $ref {reference}"))?;
        self.root
            .pointer(pointer)
            .map(|s| (s, reference.to_owned()))
            .ok_or_else(|| format!("$ref {reference} names nothing"))
    }

    /// Checks `value` (at `place` in a response) against `schema` (at pointer `at`).
    pub fn check(&self, value: &Value, schema: &'a Value, at: &str, place: &str) -> Findings {
        let mut found = Findings::default();
        self.check_into(value, schema, at, place, &mut found);
        found
    }

    fn check_into(
        &self,
        value: &Value,
        schema: &'a Value,
        at: &str,
        place: &str,
        found: &mut Findings,
    ) {
        if let Some(reference) = schema["$ref"].as_str() {
            match self.resolve(reference) {
                Ok((target, pointer)) => self.check_into(value, target, &pointer, place, found),
                Err(why) => found.errors.push(format!("{place}: {why}")),
            }
            return;
        }
        if let Some(parts) = schema["allOf"].as_array() {
            for (i, part) in parts.iter().enumerate() {
                self.check_into(value, part, &format!("{at}/allOf/{i}"), place, found);
            }
        }
        for (key, exactly_one) in [("oneOf", true), ("anyOf", false)] {
            if let Some(alternatives) = schema[key].as_array() {
                let matches: Vec<Findings> = alternatives
                    .iter()
                    .enumerate()
                    .map(|(i, alt)| self.check(value, alt, &format!("{at}/{key}/{i}"), place))
                    .filter(|f| f.errors.is_empty())
                    .collect();
                let ok = if exactly_one {
                    matches.len() == 1
                } else {
                    !matches.is_empty()
                };
                if ok {
                    for m in matches {
                        found.merge(m);
                    }
                } else {
                    found.errors.push(format!(
                        "{place}: {} of the {} alternatives of {at}/{key} match {}",
                        matches.len(),
                        alternatives.len(),
                        short(value)
                    ));
                }
            }
        }
        let allowed = types(schema);
        let actual = type_of(value);
        let allows = allowed.is_empty()
            || allowed.contains(&actual)
            || (actual == "integer" && allowed.contains(&"number"));
        if !allows {
            found.errors.push(format!(
                "{place}: {actual} {} where {at} documents {allowed:?}",
                short(value)
            ));
            return;
        }
        if let Some(options) = schema["enum"].as_array()
            && !options.contains(value)
        {
            found.errors.push(format!(
                "{place}: {} is not among {at}'s enum {options:?}",
                short(value)
            ));
        }
        if let Some(constant) = schema.get("const")
            && constant != value
        {
            found.errors.push(format!(
                "{place}: {} is not {at}'s const {constant}",
                short(value)
            ));
        }
        match value {
            Value::Array(elements) => self.check_array(elements, schema, at, place, found),
            Value::Object(fields) => self.check_object(fields, schema, at, place, found),
            _ => {}
        }
    }

    fn check_array(
        &self,
        elements: &[Value],
        schema: &'a Value,
        at: &str,
        place: &str,
        found: &mut Findings,
    ) {
        let prefix = schema["prefixItems"]
            .as_array()
            .map_or(&[][..], Vec::as_slice);
        for (i, element) in elements.iter().enumerate() {
            let place = format!("{place}[{i}]");
            if let Some(first) = prefix.get(i) {
                self.check_into(
                    element,
                    first,
                    &format!("{at}/prefixItems/{i}"),
                    &place,
                    found,
                );
            } else if schema["items"].is_object() {
                self.check_into(
                    element,
                    &schema["items"],
                    &format!("{at}/items"),
                    &place,
                    found,
                );
            }
        }
        if let Some(min) = schema["minItems"].as_u64()
            && (elements.len() as u64) < min
        {
            found
                .errors
                .push(format!("{place}: fewer than {min} items ({at})"));
        }
        if let Some(max) = schema["maxItems"].as_u64()
            && (elements.len() as u64) > max
        {
            found
                .errors
                .push(format!("{place}: more than {max} items ({at})"));
        }
    }

    fn check_object(
        &self,
        fields: &serde_json::Map<String, Value>,
        schema: &'a Value,
        at: &str,
        place: &str,
        found: &mut Findings,
    ) {
        // An object schema that is only a composition (`oneOf`, `allOf`...) declares no
        // fields itself: its parts did the checking.
        let declares = schema.get("properties").is_some()
            || schema.get("additionalProperties").is_some()
            || types(schema).contains(&"object");
        if !declares {
            return;
        }
        let properties = &schema["properties"];
        let composed = schema["allOf"].is_array();
        let required: Vec<&str> = schema["required"]
            .as_array()
            .into_iter()
            .flatten()
            .filter_map(Value::as_str)
            .collect();
        if properties.is_object() {
            *found.objects.entry(at.to_owned()).or_default() += 1;
        }
        for (name, field) in fields {
            let place = format!("{place}.{name}");
            if let Some(property) = properties.get(name) {
                found.seen.insert((at.to_owned(), name.clone()));
                if !required.contains(&name.as_str()) {
                    *found
                        .optional
                        .entry((at.to_owned(), name.clone()))
                        .or_default() += 1;
                }
                self.check_into(
                    field,
                    property,
                    &format!("{at}/properties/{name}"),
                    &place,
                    found,
                );
            } else if schema["additionalProperties"].is_object() {
                self.check_into(
                    field,
                    &schema["additionalProperties"],
                    &format!("{at}/additionalProperties"),
                    &place,
                    found,
                );
            } else if schema["additionalProperties"] != Value::Bool(true) && !composed {
                found
                    .errors
                    .push(format!("{place}: field not documented in {at}"));
            }
        }
        for name in required {
            if !fields.contains_key(name) {
                found
                    .errors
                    .push(format!("{place}: required field {name} of {at} missing"));
            }
        }
    }

    /// Every field `schema` (at pointer `at`) documents, through every composition.
    pub fn documented(&self, schema: &'a Value, at: &str, out: &mut BTreeSet<Field>) {
        let mut visited = BTreeSet::new();
        self.documented_into(schema, at, out, &mut visited);
    }

    fn documented_into(
        &self,
        schema: &'a Value,
        at: &str,
        out: &mut BTreeSet<Field>,
        visited: &mut BTreeSet<String>,
    ) {
        if let Some(reference) = schema["$ref"].as_str() {
            if visited.insert(reference.to_owned())
                && let Ok((target, pointer)) = self.resolve(reference)
            {
                self.documented_into(target, &pointer, out, visited);
            }
            return;
        }
        for key in ["allOf", "oneOf", "anyOf", "prefixItems"] {
            for (i, part) in schema[key].as_array().into_iter().flatten().enumerate() {
                self.documented_into(part, &format!("{at}/{key}/{i}"), out, visited);
            }
        }
        for key in ["items", "additionalProperties"] {
            if schema[key].is_object() {
                self.documented_into(&schema[key], &format!("{at}/{key}"), out, visited);
            }
        }
        if let Some(properties) = schema["properties"].as_object() {
            for (name, property) in properties {
                out.insert((at.to_owned(), name.clone()));
                self.documented_into(property, &format!("{at}/properties/{name}"), out, visited);
            }
        }
    }
}

/// A value shortened for a message.
fn short(value: &Value) -> String {
    let text = value.to_string();
    if text.chars().count() > 80 {
        format!("{}...", text.chars().take(80).collect::<String>())
    } else {
        text
    }
}
