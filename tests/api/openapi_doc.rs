//! The committed OpenAPI document matches the code, and every request
//! example in it is accepted by the service.

use reqwest::Method;
use serde_json::Value;

use crate::helpers::*;

const COMMITTED: &str = concat!(env!("CARGO_MANIFEST_DIR"), "/openapi/openapi.json");

#[test]
fn the_committed_openapi_document_matches_the_code() {
    let generated = glycoweek::openapi().to_pretty_json().expect("serialise") + "\n";
    if std::env::var_os("UPDATE_OPENAPI").is_some() {
        std::fs::write(COMMITTED, &generated).expect("write openapi/openapi.json");
        return;
    }
    let committed = std::fs::read_to_string(COMMITTED).unwrap_or_default();
    assert!(
        committed == generated,
        "openapi/openapi.json is stale: run `UPDATE_OPENAPI=1 cargo test --test api openapi` and commit it"
    );
}

#[tokio::test]
async fn the_served_document_is_the_generated_one() {
    let app = spawn_app().await;
    let res = app
        .req(Method::GET, "/openapi.json", None)
        .send()
        .await
        .unwrap();
    assert_eq!(res.status(), 200);
    let served: Value = res.json().await.unwrap();
    let generated: Value = serde_json::to_value(glycoweek::openapi()).unwrap();
    assert_eq!(served, generated);
    assert_eq!(served["openapi"], "3.1.0");
}

/// Every request example in the document is sent to the service (path
/// parameters filled with records created for the purpose) and must be
/// accepted, so the documentation never shows an example the service refuses.
#[tokio::test]
async fn every_request_example_is_accepted() {
    let app = spawn_app().await;
    let team = app.team("Examples").await;
    let athlete = app.athlete(team, "Example Athlete").await;
    let session = app.session(team, "2026-12-08").await;
    let doc: Value = serde_json::to_value(glycoweek::openapi()).unwrap();
    let mut tried = 0;
    for (path, item) in doc["paths"].as_object().unwrap() {
        for (method, op) in item.as_object().unwrap() {
            let content = &op["requestBody"]["content"];
            let Some((content_type, example)) = content.as_object().and_then(|c| {
                c.iter()
                    .find_map(|(ct, v)| v.get("example").map(|e| (ct.clone(), e.clone())))
            }) else {
                continue;
            };
            let mut example = example;
            if path == "/v1/tokens" {
                example["team_id"] = Value::String(team.to_string());
            }
            let url = path
                .replace("{team_id}", &team.to_string())
                .replace("{athlete_id}", &athlete.to_string())
                .replace("{session_id}", &session.to_string())
                .replace("{date}", "2026-12-08");
            let method: Method = method.to_uppercase().parse().unwrap();
            let res = app
                .req(method.clone(), &url, Some(&app.admin))
                .header("content-type", content_type)
                .body(example.to_string())
                .send()
                .await
                .unwrap();
            let status = res.status();
            let body = res.text().await.unwrap();
            assert!(
                status.is_success(),
                "{method} {path} rejected its own example: {status} {body}"
            );
            tried += 1;
        }
    }
    assert!(tried >= 10, "only {tried} examples were tried");
}
