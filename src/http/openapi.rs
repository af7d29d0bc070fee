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
    serde_json::from_value(value).unwrap_or(doc)
}

const LOCAL_TIME: &str = "^([01][0-9]|2[0-3]):[0-5][0-9](:[0-5][0-9])?$";
const LOCAL_DATE_TIME: &str =
    "^[0-9]{4}-[0-9]{2}-[0-9]{2}T([01][0-9]|2[0-3]):[0-5][0-9](:[0-5][0-9](\\.[0-9]+)?)?$";

fn refine(doc: &mut Value) {
    let schemas = &mut doc["components"]["schemas"];
    // Time zones are IANA names: list the ones this build knows.
    let zones: Vec<Value> = chrono_tz::TZ_VARIANTS
        .iter()
        .map(|tz| Value::from(tz.name()))
        .collect();
    schemas["TeamInput"]["properties"]["time_zone"]["enum"] = Value::Array(zones);
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
    // Local (zone-less) date-times: every date-time except the `..._at` instants.
    if let Some(all) = schemas.as_object_mut() {
        for schema in all.values_mut() {
            mark_local_date_times(schema);
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

fn mark_local_date_times(schema: &mut Value) {
    match schema {
        Value::Object(map) => {
            if let Some(props) = map.get_mut("properties").and_then(Value::as_object_mut) {
                for (name, prop) in props.iter_mut() {
                    if !name.ends_with("_at") {
                        localise(prop);
                    }
                }
            }
            for key in ["oneOf", "anyOf", "allOf"] {
                if let Some(alts) = map.get_mut(key).and_then(Value::as_array_mut) {
                    alts.iter_mut().for_each(mark_local_date_times);
                }
            }
        }
        Value::Array(items) => items.iter_mut().for_each(mark_local_date_times),
        _ => {}
    }
}

fn localise(prop: &mut Value) {
    if prop["format"] == "date-time"
        && let Some(obj) = prop.as_object_mut()
    {
        obj.remove("format");
        obj.insert("pattern".into(), LOCAL_DATE_TIME.into());
    }
    if prop["items"].is_object() {
        localise(&mut prop["items"]);
    }
    for key in ["oneOf", "anyOf"] {
        if let Some(alts) = prop.get_mut(key).and_then(Value::as_array_mut) {
            alts.iter_mut().for_each(localise);
        }
    }
}

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
