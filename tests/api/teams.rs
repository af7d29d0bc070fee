//! Teams: create, read, list with pages, change, delete, and their rules.

use reqwest::Method;
use serde_json::{Value, json};

use crate::helpers::*;

#[tokio::test]
async fn an_admin_creates_reads_changes_and_deletes_a_team() {
    let app = spawn_app().await;
    let res = app
        .post(
            "/v1/teams",
            &app.admin,
            &json!({"name": "  Harbour seniors  ", "time_zone": "Europe/Lisbon"}),
        )
        .await;
    let location = res.headers()["location"].to_str().unwrap().to_owned();
    let created = body(res, 201).await;
    let id = id_of(&created);
    assert_eq!(location, format!("/v1/teams/{id}"));
    assert_eq!(created["name"], "Harbour seniors", "name is trimmed");
    assert_eq!(created["version"], 1);

    let res = app.get(&location, &app.admin).await;
    assert_eq!(etag_of(&res), "\"v1\"");
    let read = body(res, 200).await;
    assert_eq!(read["time_zone"], "Europe/Lisbon");

    let res = app
        .patch(
            &location,
            &app.admin,
            &json!({"time_zone": "America/Sao_Paulo"}),
            Some("\"v1\""),
        )
        .await;
    assert_eq!(etag_of(&res), "\"v2\"");
    let changed = body(res, 200).await;
    assert_eq!(changed["time_zone"], "America/Sao_Paulo");
    assert_eq!(
        changed["name"], "Harbour seniors",
        "fields not in the patch are kept"
    );
    let stored = glycoweek::store::teams::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.time_zone, "America/Sao_Paulo");
    assert_eq!(stored.version, 2);

    let res = app.delete(&location, &app.admin, Some("\"v2\"")).await;
    assert_eq!(res.status(), 204);
    assert!(
        glycoweek::store::teams::get(&app.db, id)
            .await
            .unwrap()
            .is_none()
    );
    problem(app.get(&location, &app.admin).await, 404).await;
}

#[tokio::test]
async fn deleting_a_team_removes_its_athletes_sessions_and_tokens() {
    let app = spawn_app().await;
    let team = app.team("Gone").await;
    let athlete = app.athlete(team, "Ana").await;
    let session = app.session(team, "2026-12-08").await;
    let planner = app.token("planner", team).await;
    assert_eq!(
        app.delete(&format!("/v1/teams/{team}"), &app.admin, None)
            .await
            .status(),
        204
    );
    assert!(
        glycoweek::store::athletes::get(&app.db, athlete)
            .await
            .unwrap()
            .is_none()
    );
    assert!(
        glycoweek::store::sessions::get(&app.db, session)
            .await
            .unwrap()
            .is_none()
    );
    problem(app.get("/v1/teams", &planner).await, 401).await;
}

#[tokio::test]
async fn the_team_list_pages_with_a_cursor_without_gaps_or_repeats() {
    let app = spawn_app().await;
    let mut created = Vec::new();
    for i in 0..5 {
        created.push(app.team(&format!("Squad {i}")).await);
    }
    let first = body(app.get("/v1/teams?limit=2", &app.admin).await, 200).await;
    assert_eq!(first["items"].as_array().unwrap().len(), 2);
    assert!(first["next_cursor"].is_string());
    let (items, pages) = app.all_pages("/v1/teams?limit=2", &app.admin).await;
    assert_eq!(pages, 3);
    assert_eq!(
        ids(&items),
        created,
        "teams come in creation order, each once"
    );
    let all = body(app.get("/v1/teams", &app.admin).await, 200).await;
    assert_eq!(all["items"].as_array().unwrap().len(), 5);
    assert!(
        all.get("next_cursor").is_none_or(Value::is_null),
        "no cursor on the last page"
    );
}

#[tokio::test]
async fn a_team_with_an_unknown_time_zone_is_rejected_naming_the_field() {
    let app = spawn_app().await;
    let res = app
        .post(
            "/v1/teams",
            &app.admin,
            &json!({"name": "Tz", "time_zone": "Europe/Atlantis"}),
        )
        .await;
    let p = problem(res, 422).await;
    assert_eq!(p["type"], "/problems/validation");
    assert_eq!(fields(&p), vec!["time_zone"]);
    assert!(p["errors"][0]["reason"].as_str().unwrap().contains("IANA"));
    let list = body(app.get("/v1/teams", &app.admin).await, 200).await;
    assert!(
        list["items"].as_array().unwrap().is_empty(),
        "nothing stored"
    );
}

#[tokio::test]
async fn a_team_with_a_blank_name_and_a_bad_zone_reports_both_fields() {
    let app = spawn_app().await;
    let res = app
        .post(
            "/v1/teams",
            &app.admin,
            &json!({"name": "   ", "time_zone": "UTC+2"}),
        )
        .await;
    let p = problem(res, 422).await;
    assert_eq!(fields(&p), vec!["name", "time_zone"]);
}

#[tokio::test]
async fn an_invalid_time_zone_in_a_patch_is_rejected_and_the_team_is_unchanged() {
    let app = spawn_app().await;
    let team = app.team("Patch tz").await;
    let res = app
        .patch(
            &format!("/v1/teams/{team}"),
            &app.admin,
            &json!({"time_zone": "Mars/Olympus"}),
            None,
        )
        .await;
    assert_eq!(fields(&problem(res, 422).await), vec!["time_zone"]);
    let stored = glycoweek::store::teams::get(&app.db, team)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.time_zone, "Europe/London");
    assert_eq!(stored.version, 1);
}

#[tokio::test]
async fn a_second_team_with_the_same_name_is_a_conflict() {
    let app = spawn_app().await;
    app.team("Same").await;
    let res = app
        .post(
            "/v1/teams",
            &app.admin,
            &json!({"name": "Same", "time_zone": "UTC"}),
        )
        .await;
    let p = problem(res, 409).await;
    assert_eq!(p["type"], "/problems/conflict");
    let other = app.team("Other").await;
    let res = app
        .patch(
            &format!("/v1/teams/{other}"),
            &app.admin,
            &json!({"name": "Same"}),
            None,
        )
        .await;
    problem(res, 409).await;
}

#[tokio::test]
async fn a_merge_patch_that_sets_the_team_name_to_null_is_a_422() {
    let app = spawn_app().await;
    let team = app.team("Null name").await;
    let res = app
        .patch(
            &format!("/v1/teams/{team}"),
            &app.admin,
            &json!({"name": null}),
            None,
        )
        .await;
    let p = problem(res, 422).await;
    assert!(
        p["errors"][0]["reason"].as_str().unwrap().contains("name"),
        "{p}"
    );
    let stored = glycoweek::store::teams::get(&app.db, team)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.name, "Null name");
}

#[tokio::test]
async fn a_planner_sees_only_its_own_team_and_may_rename_it_but_not_delete_it() {
    let app = spawn_app().await;
    let mine = app.team("Mine").await;
    app.team("Theirs").await;
    let planner = app.token("planner", mine).await;
    let list = body(app.get("/v1/teams", &planner).await, 200).await;
    assert_eq!(ids(list["items"].as_array().unwrap()), vec![mine]);

    let res = app
        .patch(
            &format!("/v1/teams/{mine}"),
            &planner,
            &json!({"name": "Mine renamed"}),
            None,
        )
        .await;
    assert_eq!(body(res, 200).await["name"], "Mine renamed");

    let p = problem(
        app.delete(&format!("/v1/teams/{mine}"), &planner, None)
            .await,
        403,
    )
    .await;
    assert_eq!(p["type"], "/problems/forbidden");
    assert!(
        glycoweek::store::teams::get(&app.db, mine)
            .await
            .unwrap()
            .is_some()
    );
    problem(
        app.post(
            "/v1/teams",
            &planner,
            &json!({"name": "New", "time_zone": "UTC"}),
        )
        .await,
        403,
    )
    .await;
}

#[tokio::test]
async fn a_reader_cannot_rename_its_team() {
    let app = spawn_app().await;
    let team = app.team("Read only").await;
    let reader = app.token("reader", team).await;
    let res = app
        .req(Method::PATCH, &format!("/v1/teams/{team}"), Some(&reader))
        .json(&json!({"name": "Hijacked"}))
        .send()
        .await
        .unwrap();
    problem(res, 403).await;
    let stored = glycoweek::store::teams::get(&app.db, team)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.name, "Read only");
}
