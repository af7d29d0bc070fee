//! The OpenAPI 3.1 document: base information, the bearer scheme, and the
//! problem+json responses every operation can give, added in one place.

use serde_json::Value;
use utoipa::openapi::path::Operation;
use utoipa::openapi::security::{Http, HttpAuthScheme, SecurityScheme};
use utoipa::openapi::{ContentBuilder, OpenApi as OpenApiDoc, Ref, ResponseBuilder};
use utoipa::{Modify, OpenApi};

use crate::error::Problem;

#[derive(OpenApi)]
#[openapi(
    info(
        title = "glycoweek",
        description = "Carbohydrate periodization for a squad's planned week. \
            Every figure the planning endpoints return is an estimate for healthy adult athletes, \
            to be applied by a qualified practitioner; it defers to a registered dietitian, a physician \
            and local rules. Errors are RFC 9457 problem+json.",
        license(name = "Apache-2.0")
    ),
    components(schemas(Problem)),
    modifiers(&Security, &Problems),
    security(("bearer" = [])),
    tags(
        (name = "service", description = "Health and documentation"),
        (name = "teams", description = "Squads"),
        (name = "athletes", description = "Athletes and body-mass readings"),
        (name = "sessions", description = "The planned week and participation"),
        (name = "tokens", description = "API tokens"),
        (name = "plans", description = "Week plans, summaries, changes and feeds (estimates)"),
        (name = "targets", description = "Pinned targets, sweat tests and plan settings"),
        (name = "engine", description = "Energy and fuel estimates (estimates, not prescriptions)")
    )
)]
struct BaseDoc;

pub fn base() -> OpenApiDoc {
    BaseDoc::openapi()
}

struct Security;

impl Modify for Security {
    fn modify(&self, doc: &mut OpenApiDoc) {
        let components = doc.components.get_or_insert_with(Default::default);
        components.add_security_scheme(
            "bearer",
            SecurityScheme::Http(Http::new(HttpAuthScheme::Bearer)),
        );
    }
}

/// Adds the error responses of the shared machinery (auth, extractors,
/// limits, storage) to every operation, so the document lists every status
/// the service really gives.
struct Problems;

fn problem(description: &str) -> utoipa::openapi::Response {
    ResponseBuilder::new()
        .description(description)
        .content(
            "application/problem+json",
            ContentBuilder::new()
                .schema(Some(Ref::from_schema_name("Problem")))
                .build(),
        )
        .build()
}

impl Modify for Problems {
    fn modify(&self, doc: &mut OpenApiDoc) {
        // Operations added later (after split_for_parts) go through `finish`.
        for (path, item) in doc.paths.paths.iter_mut() {
            let public = !path.starts_with("/v1/") || path.starts_with("/v1/calendar/");
            let has_params = path.contains('{');
            let ops: [(&str, &mut Option<Operation>); 5] = [
                ("get", &mut item.get),
                ("post", &mut item.post),
                ("put", &mut item.put),
                ("patch", &mut item.patch),
                ("delete", &mut item.delete),
            ];
            for (method, op) in ops {
                let Some(op) = op.as_mut() else { continue };
                let mut add = |code: &str, text: &str| {
                    op.responses
                        .responses
                        .entry(code.to_owned())
                        .or_insert_with(|| problem(text).into());
                };
                add("408", "The request took too long");
                add("500", "Internal error (logged; no details are sent)");
                add(
                    "503",
                    "Storage busy or unavailable; retry after `Retry-After` seconds",
                );
                if path.starts_with("/v1/calendar/") {
                    add("422", "Invalid query parameters; `errors` names them");
                }
                if public {
                    continue;
                }
                add("400", "Malformed request (e.g. invalid JSON)");
                add("401", "Missing, unknown or revoked token");
                add("422", "Invalid input; `errors` lists every field at fault");
                if has_params {
                    add("404", "Not found, or not visible to this token");
                }
                if method != "get" {
                    add("403", "This token may not do this (e.g. read-only)");
                    add("409", "Conflicts with stored data");
                    add("413", "Request body too large");
                    add("415", "Body is not JSON");
                }
                if matches!(method, "patch" | "put" | "delete") && has_params {
                    add(
                        "412",
                        "`If-Match` names a version that is no longer current",
                    );
                }
            }
        }
    }
}

/// Applies the shared responses to the final document, then states in the
/// schema what the Rust types cannot say by themselves.
pub fn finish(mut doc: OpenApiDoc) -> OpenApiDoc {
    Problems.modify(&mut doc);
    let Ok(mut value) = serde_json::to_value(&doc) else {
        return doc;
    };
    refine(&mut value);
    // Refinements only ever produce valid OpenAPI; the API tests compare the
    // result with the committed document, so a slip fails there at once.
    match serde_json::from_value(value) {
        Ok(refined) => refined,
        Err(e) => {
            debug_assert!(false, "the refined OpenAPI document does not parse: {e}");
            tracing::error!(error = %e, "the refined OpenAPI document does not parse; serving the unrefined one");
            doc
        }
    }
}

const LOCAL_TIME: &str = "^([01][0-9]|2[0-3]):[0-5][0-9](:[0-5][0-9])?$";
const LOCAL_DATE_TIME: &str =
    "^[0-9]{4}-[0-9]{2}-[0-9]{2}T([01][0-9]|2[0-3]):[0-5][0-9](:[0-5][0-9](\\.[0-9]+)?)?$";
/// One-line text: no control characters (Unicode Cc) and no bidirectional
/// formatting characters (UAX #9).
const ONE_LINE_TEXT: &str =
    "^[^\\u0000-\\u001F\\u007F-\\u009F\\u061C\\u200E\\u200F\\u202A-\\u202E\\u2066-\\u2069]*$";

/// In responses: a local date-time, with the RFC 3339 offset of the team's
/// zone when the response belongs to a team (plans), without one otherwise
/// (stateless estimates).
const PLACED_DATE_TIME: &str = "^[0-9]{4}-[0-9]{2}-[0-9]{2}T([01][0-9]|2[0-3]):[0-5][0-9](:[0-5][0-9](\\.[0-9]+)?)?([+-][0-9]{2}:[0-9]{2})?$";

fn refine(doc: &mut Value) {
    let sent = request_schemas(doc);
    let schemas = &mut doc["components"]["schemas"];
    // Time zones are IANA names, checked against the zone database bundled
    // with this build. A string, not a 600-value enum: client generators
    // cannot turn names such as `Etc/GMT+0` and `Etc/GMT-0` into distinct
    // identifiers.
    schemas["TeamInput"]["properties"]["time_zone"] = serde_json::json!({
        "type": "string",
        "minLength": 1,
        "maxLength": 64,
        "description": "IANA time zone name (tz database), e.g. `Europe/London`; checked against the zone database of this build (422 if unknown). Dates and session start times of the team are local to it.",
        "example": "Europe/London"
    });
    // One-line text refuses control and bidirectional formatting characters
    // (domain::check_text).
    for (schema, field) in [
        ("TeamInput", "name"),
        ("AthleteInput", "display_name"),
        ("AthleteInput", "position_group"),
        ("SessionInput", "title"),
        ("Segment", "label"),
        ("TokenInput", "label"),
    ] {
        if let Some(prop) = schemas
            .get_mut(schema)
            .and_then(|s| s.get_mut("properties"))
            .and_then(|p| p.get_mut(field))
            .and_then(Value::as_object_mut)
        {
            prop.insert("pattern".into(), ONE_LINE_TEXT.into());
        }
    }
    // Local wall-clock times and local date-times carry no offset.
    schemas["SessionInput"]["properties"]["start_time"]["pattern"] = LOCAL_TIME.into();
    if let Some(props) = schemas["MealTimes"]["properties"].as_object_mut() {
        for p in props.values_mut() {
            p["pattern"] = LOCAL_TIME.into();
        }
    }
    let start = &mut schemas["SessionWork"]["properties"]["start"];
    if let Some(obj) = start.as_object_mut() {
        obj.remove("format");
        obj.insert("pattern".into(), LOCAL_DATE_TIME.into());
    }
    // Creating an athlete needs a first body-mass reading; patching must not carry one.
    let mut create = schemas["AthleteInput"].clone();
    if let Some(required) = create["required"].as_array_mut() {
        required.push("initial_body_mass".into());
    }
    if let Some(props) = create["properties"].as_object_mut()
        && let Some(first) = props.get_mut("initial_body_mass")
    {
        *first = serde_json::json!({"$ref": "#/components/schemas/InitialBodyMass"});
    }
    schemas["AthleteCreate"] = create;
    for (input, patch) in [
        ("TeamInput", "TeamPatch"),
        ("AthleteInput", "AthletePatch"),
        ("SessionInput", "SessionPatch"),
    ] {
        let patch_schema = merge_patch_schema(&schemas[input]);
        schemas[patch] = patch_schema;
    }
    // Activities are the catalogue's keys.
    let keys: Vec<Value> = crate::engine::physiology::catalogue::ACTIVITIES
        .iter()
        .map(|a| Value::from(a.key))
        .collect();
    if let Some(forms) = schemas["Intensity"]["oneOf"].as_array_mut() {
        for form in forms {
            if form["properties"].get("activity").is_some() {
                form["properties"]["activity"]["enum"] = Value::Array(keys.clone());
            }
        }
    }
    // Local date-times: every date-time except the `..._at` instants. What
    // clients send is local (no offset); what plans return carries the
    // offset of the team's zone (http/output.rs).
    if let Some(all) = schemas.as_object_mut() {
        for (name, schema) in all.iter_mut() {
            let pattern = if sent.contains(name) {
                LOCAL_DATE_TIME
            } else {
                PLACED_DATE_TIME
            };
            mark_local_date_times(schema, pattern);
        }
    }
    // Admin tokens have no team; planner and reader tokens need one.
    let token = schemas["TokenInput"].clone();
    let mut admin = token.clone();
    admin["properties"]["role"] = serde_json::json!({"type": "string", "enum": ["admin"]});
    admin["properties"]["team_id"] = serde_json::json!({"type": "null"});
    let mut scoped = token;
    scoped["properties"]["role"] =
        serde_json::json!({"type": "string", "enum": ["planner", "reader"]});
    scoped["properties"]["team_id"] = serde_json::json!({"type": "string", "format": "uuid"});
    if let Some(required) = scoped["required"].as_array_mut() {
        required.push("team_id".into());
    }
    let description = schemas["TokenInput"]["description"].clone();
    schemas["TokenInput"] =
        serde_json::json!({"oneOf": [admin, scoped], "description": description});

    let paths = &mut doc["paths"];
    if let Some(all) = paths.as_object_mut() {
        for item in all.values_mut() {
            let Some(operations) = item.as_object_mut() else {
                continue;
            };
            for operation in operations.values_mut() {
                let Some(parameters) = operation["parameters"].as_array_mut() else {
                    continue;
                };
                for parameter in parameters {
                    match parameter["name"].as_str() {
                        Some("if-match") | Some("if-none-match") => {
                            parameter["schema"] =
                                serde_json::json!({"type": "string", "pattern": ENTITY_TAGS});
                        }
                        Some("cursor") => {
                            parameter["schema"] = serde_json::json!({"type": ["string", "null"], "pattern": "^[A-Za-z0-9_-]+$"});
                        }
                        _ => {}
                    }
                }
            }
        }
    }
    set_body_schema(
        &mut paths["/v1/teams/{team_id}/athletes"]["post"],
        "application/json",
        "AthleteCreate",
    );
    set_body_schema(
        &mut paths["/v1/teams/{team_id}"]["patch"],
        "application/merge-patch+json",
        "TeamPatch",
    );
    set_body_schema(
        &mut paths["/v1/athletes/{athlete_id}"]["patch"],
        "application/merge-patch+json",
        "AthletePatch",
    );
    set_body_schema(
        &mut paths["/v1/sessions/{session_id}"]["patch"],
        "application/merge-patch+json",
        "SessionPatch",
    );
    cite_sources(doc);
}

/// A merge patch of an input: any subset of its fields; `null` removes an
/// optional field (a required one cannot be removed).
fn merge_patch_schema(input: &Value) -> Value {
    let mut patch = input.clone();
    let required: Vec<String> = patch["required"]
        .as_array()
        .map(|r| {
            r.iter()
                .filter_map(|v| v.as_str().map(str::to_owned))
                .collect()
        })
        .unwrap_or_default();
    if let Some(obj) = patch.as_object_mut() {
        obj.remove("required");
        obj.insert(
            "description".into(),
            "JSON merge patch (RFC 7396): the fields to change; `null` clears an optional field."
                .into(),
        );
        if let Some(props) = obj.get_mut("properties").and_then(Value::as_object_mut) {
            props.remove("initial_body_mass");
            for (name, p) in props.iter_mut() {
                // A required field can be changed but not removed; `null`
                // resets any other field to its default.
                if !required.contains(name) && !is_nullable(p) {
                    *p = serde_json::json!({"anyOf": [p.clone(), {"type": "null"}]});
                }
            }
        }
        obj.insert("additionalProperties".into(), false.into());
    }
    patch
}

/// `*` or a comma-separated list of entity tags (RFC 9110).
const ENTITY_TAGS: &str = "^(\\*|(W/)?\"[^\"]*\"(\\s*,\\s*(W/)?\"[^\"]*\")*)$";

fn mark_local_date_times(schema: &mut Value, pattern: &str) {
    match schema {
        Value::Object(map) => {
            if let Some(props) = map.get_mut("properties").and_then(Value::as_object_mut) {
                for (name, prop) in props.iter_mut() {
                    if !name.ends_with("_at") {
                        localise(prop, pattern);
                    }
                }
            }
            for key in ["oneOf", "anyOf", "allOf"] {
                if let Some(alts) = map.get_mut(key).and_then(Value::as_array_mut) {
                    alts.iter_mut()
                        .for_each(|a| mark_local_date_times(a, pattern));
                }
            }
        }
        Value::Array(items) => items
            .iter_mut()
            .for_each(|a| mark_local_date_times(a, pattern)),
        _ => {}
    }
}

fn localise(prop: &mut Value, pattern: &str) {
    if (prop["format"] == "date-time" || prop["pattern"] == LOCAL_DATE_TIME)
        && let Some(obj) = prop.as_object_mut()
    {
        obj.remove("format");
        obj.insert("pattern".into(), pattern.into());
    }
    if prop["items"].is_object() {
        localise(&mut prop["items"], pattern);
    }
    for key in ["oneOf", "anyOf"] {
        if let Some(alts) = prop.get_mut(key).and_then(Value::as_array_mut) {
            alts.iter_mut().for_each(|a| localise(a, pattern));
        }
    }
}

/// Names of the component schemas `$ref`erenced (directly or not) by `value`.
fn referenced(value: &Value, schemas: &Value, out: &mut std::collections::BTreeSet<String>) {
    match value {
        Value::Object(map) => {
            if let Some(name) = map
                .get("$ref")
                .and_then(Value::as_str)
                .and_then(|r| r.strip_prefix("#/components/schemas/"))
                && out.insert(name.to_owned())
            {
                referenced(&schemas[name], schemas, out);
            }
            map.values().for_each(|v| referenced(v, schemas, out));
        }
        Value::Array(items) => items.iter().for_each(|v| referenced(v, schemas, out)),
        _ => {}
    }
}

/// The schemas a client sends (request bodies, transitively).
fn request_schemas(doc: &Value) -> std::collections::BTreeSet<String> {
    let mut out = std::collections::BTreeSet::new();
    if let Some(paths) = doc["paths"].as_object() {
        for item in paths.values() {
            if let Some(ops) = item.as_object() {
                for op in ops.values() {
                    referenced(&op["requestBody"], &doc["components"]["schemas"], &mut out);
                }
            }
        }
    }
    out
}

/// Describes the sources rule of http/output.rs: a citation property
/// (`source`, a plain string) is sent as `source_id`, and every response
/// object that can hold one gets the top-level `sources` table.
fn cite_sources(doc: &mut Value) {
    use super::output::{SOURCE_FIELD, SOURCE_ID_FIELD, SOURCES_FIELD};
    let schemas = &mut doc["components"]["schemas"];
    let mut citing = std::collections::BTreeSet::new();
    if let Some(all) = schemas.as_object_mut() {
        for (name, schema) in all.iter_mut() {
            let Some(props) = schema.get_mut("properties").and_then(Value::as_object_mut) else {
                continue;
            };
            let plain_string = props
                .get(SOURCE_FIELD)
                .is_some_and(|p| p["type"] == "string" && p.get("enum").is_none());
            if !plain_string {
                continue;
            }
            props.remove(SOURCE_FIELD);
            props.insert(
                SOURCE_ID_FIELD.into(),
                serde_json::json!({
                    "type": "integer",
                    "minimum": 0,
                    "description": "The published source (or `common practice` / `from memory` label) of this value: an `id` in the response's top-level `sources`."
                }),
            );
            if let Some(required) = schema["required"].as_array_mut() {
                for r in required.iter_mut() {
                    if r == SOURCE_FIELD {
                        *r = SOURCE_ID_FIELD.into();
                    }
                }
            }
            citing.insert(name.clone());
        }
    }
    schemas[SOURCE_TABLE] = serde_json::json!({
        "type": "object",
        "description": "A published source, or the label `common practice` / `from memory`, listed once per response.",
        "required": ["id", "text"],
        "properties": {
            "id": {"type": "integer", "minimum": 0},
            "text": {"type": "string", "example": "Thomas, Erdman & Burke (2016)"}
        }
    });
    // Response bodies whose schema can reach a citation get the table.
    let mut roots = std::collections::BTreeSet::new();
    if let Some(paths) = doc["paths"].as_object() {
        for item in paths.values() {
            let Some(ops) = item.as_object() else {
                continue;
            };
            for op in ops.values() {
                let Some(responses) = op["responses"].as_object() else {
                    continue;
                };
                for response in responses.values() {
                    let Some(content) = response["content"].as_object() else {
                        continue;
                    };
                    for media in content.values() {
                        if let Some(name) = media["schema"]["$ref"]
                            .as_str()
                            .and_then(|r| r.strip_prefix("#/components/schemas/"))
                        {
                            let mut reach = std::collections::BTreeSet::new();
                            referenced(&media["schema"], &doc["components"]["schemas"], &mut reach);
                            if reach.iter().any(|n| citing.contains(n)) {
                                roots.insert(name.to_owned());
                            }
                        }
                    }
                }
            }
        }
    }
    let schemas = &mut doc["components"]["schemas"];
    for root in roots {
        if let Some(props) = schemas
            .get_mut(&root)
            .and_then(|s| s.get_mut("properties"))
            .and_then(Value::as_object_mut)
        {
            props.insert(
                SOURCES_FIELD.into(),
                serde_json::json!({
                    "type": "array",
                    "description": "Every source cited in this response, once; values refer to them by `source_id`. Absent when nothing is cited.",
                    "items": {"$ref": format!("#/components/schemas/{SOURCE_TABLE}")}
                }),
            );
        }
    }
}

const SOURCE_TABLE: &str = "CitedSource";

fn is_nullable(schema: &Value) -> bool {
    let null = Value::from("null");
    schema["type"] == null
        || schema["type"].as_array().is_some_and(|t| t.contains(&null))
        || ["oneOf", "anyOf"].iter().any(|k| {
            schema[*k]
                .as_array()
                .is_some_and(|alts| alts.iter().any(|a| a["type"] == null))
        })
}

fn set_body_schema(operation: &mut Value, content_type: &str, schema: &str) {
    if let Some(content) = operation["requestBody"]["content"].as_object_mut() {
        let example = content.values().find_map(|c| c.get("example").cloned());
        content.clear();
        let mut media =
            serde_json::json!({"schema": {"$ref": format!("#/components/schemas/{schema}")}});
        if let Some(example) = example {
            media["example"] = example;
        }
        content.insert(content_type.into(), media);
    }
}
