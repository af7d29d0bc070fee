//! The OpenAPI 3.1 document: base information, the bearer scheme, and the
//! problem+json responses every operation can give, added in one place.

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

/// Applies the shared responses to the final document.
pub fn finish(mut doc: OpenApiDoc) -> OpenApiDoc {
    Problems.modify(&mut doc);
    doc
}
