//! Optimistic concurrency (ETag / If-Match) and concurrent writers.

use std::sync::Arc;

use reqwest::Client;
use serde_json::{Value, json};

use crate::helpers::*;

/// PATCH with a stale tag is 412 and changes nothing; DELETE likewise; the
/// current tag succeeds. Returns nothing: asserts on `path` as it goes.
async fn check_if_match(app: &TestApp, path: &str, patch: &Value) {
    let current = etag_of(&app.get(path, &app.admin).await);
    let res = app.patch(path, &app.admin, patch, Some(&current)).await;
    let newer = etag_of(&res);
    assert_eq!(res.status(), 200, "{path}");
    assert_ne!(newer, current);

    let before = body(app.get(path, &app.admin).await, 200).await;
    let p = problem(
        app.patch(path, &app.admin, patch, Some(&current)).await,
        412,
    )
    .await;
    assert_eq!(p["type"], "/problems/stale-version");
    problem(
        app.patch(path, &app.admin, patch, Some("\"bogus\"")).await,
        412,
    )
    .await;
    problem(app.delete(path, &app.admin, Some(&current)).await, 412).await;
    assert_eq!(
        body(app.get(path, &app.admin).await, 200).await,
        before,
        "a stale write changes nothing"
    );

    let res = app.patch(path, &app.admin, patch, Some(&newer)).await;
    assert_eq!(res.status(), 200, "{path}");
    let latest = etag_of(&res);
    assert_eq!(
        app.delete(path, &app.admin, Some(&latest)).await.status(),
        204
    );
    problem(app.get(path, &app.admin).await, 404).await;
}

#[tokio::test]
async fn a_stale_if_match_on_a_team_is_412_and_the_current_etag_succeeds() {
    let app = spawn_app().await;
    let team = app.team("Versioned").await;
    check_if_match(
        &app,
        &format!("/v1/teams/{team}"),
        &json!({"time_zone": "Europe/Madrid"}),
    )
    .await;
}

#[tokio::test]
async fn a_stale_if_match_on_an_athlete_is_412_and_the_current_etag_succeeds() {
    let app = spawn_app().await;
    let team = app.team("Versioned").await;
    let athlete = app.athlete(team, "Versioned").await;
    check_if_match(
        &app,
        &format!("/v1/athletes/{athlete}"),
        &json!({"position_group": "wing"}),
    )
    .await;
}

#[tokio::test]
async fn a_stale_if_match_on_a_session_is_412_and_the_current_etag_succeeds() {
    let app = spawn_app().await;
    let team = app.team("Versioned").await;
    let session = app.session(team, "2026-12-08").await;
    check_if_match(
        &app,
        &format!("/v1/sessions/{session}"),
        &json!({"key_session": true}),
    )
    .await;
}

#[tokio::test]
async fn if_match_star_means_any_version() {
    let app = spawn_app().await;
    let team = app.team("Star").await;
    let session = app.session(team, "2026-12-08").await;
    let res = app
        .patch(
            &format!("/v1/sessions/{session}"),
            &app.admin,
            &json!({"title": "Any"}),
            Some("*"),
        )
        .await;
    assert_eq!(body(res, 200).await["version"], 2);
}

#[tokio::test]

async fn if_match_with_a_list_of_tags_succeeds_when_any_of_them_is_current() {
    let app = spawn_app().await;
    let team = app.team("Listed tags").await;
    let session = app.session(team, "2026-12-08").await;
    let path = format!("/v1/sessions/{session}");
    let res = app
        .patch(
            &path,
            &app.admin,
            &json!({"title": "Listed"}),
            Some("\"v7\", \"v1\""),
        )
        .await;
    assert_eq!(body(res, 200).await["version"], 2);
}

/// A client per task, as independent staff members would have.
fn clients(n: usize) -> Vec<Client> {
    (0..n).map(|_| Client::new()).collect()
}

#[tokio::test]
async fn fifty_staff_creating_sessions_in_the_same_week_all_succeed_and_all_are_stored() {
    let app = spawn_app().await;
    let team = app.team("Busy week").await;
    let planner = Arc::new(app.token("planner", team).await);
    let url = Arc::new(format!("{}/v1/teams/{team}/sessions", app.base));
    let mut tasks = Vec::new();
    for (i, client) in clients(50).into_iter().enumerate() {
        let (url, planner) = (url.clone(), planner.clone());
        tasks.push(tokio::spawn(async move {
            let date = format!("2026-12-{:02}", 7 + i % 7);
            let start = format!("{:02}:{:02}", 6 + i / 7, (i % 4) * 15);
            let mut s = session_body(&date, &start);
            s["title"] = json!(format!("Session {i}"));
            let res = client
                .post(url.as_str())
                .bearer_auth(planner.as_str())
                .json(&s)
                .send()
                .await
                .unwrap();
            (res.status().as_u16(), res.text().await.unwrap())
        }));
    }
    for task in tasks {
        let (status, text) = task.await.unwrap();
        assert_eq!(status, 201, "{text}");
    }
    let (stored, _) = app
        .all_pages(
            &format!("/v1/teams/{team}/sessions?from=2026-12-07&to=2026-12-13&limit=200"),
            &app.admin,
        )
        .await;
    assert_eq!(stored.len(), 50);
    let mut titles: Vec<String> = stored
        .iter()
        .map(|s| s["title"].as_str().unwrap().to_owned())
        .collect();
    titles.sort();
    titles.dedup();
    assert_eq!(titles.len(), 50, "each session stored once");
    let creates = app
        .audit(team)
        .await
        .iter()
        .filter(|e| e["entity_type"] == "session")
        .count();
    assert_eq!(creates, 50, "each creation audited");
}

#[tokio::test]
async fn fifty_concurrent_patches_of_one_session_without_if_match_all_succeed_with_final_version_51()
 {
    let app = spawn_app().await;
    let team = app.team("Hot session").await;
    let session = app.session(team, "2026-12-08").await;
    let url = Arc::new(format!("{}/v1/sessions/{session}", app.base));
    let admin = Arc::new(app.admin.clone());
    let mut tasks = Vec::new();
    for (i, client) in clients(50).into_iter().enumerate() {
        let (url, admin) = (url.clone(), admin.clone());
        tasks.push(tokio::spawn(async move {
            let res = client
                .patch(url.as_str())
                .bearer_auth(admin.as_str())
                .json(&json!({"notes": format!("edit {i}")}))
                .send()
                .await
                .unwrap();
            (res.status().as_u16(), res.text().await.unwrap())
        }));
    }
    let mut versions = Vec::new();
    for task in tasks {
        let (status, text) = task.await.unwrap();
        assert_eq!(status, 200, "no 503 or SQLITE_BUSY: {text}");
        versions.push(
            serde_json::from_str::<Value>(&text).unwrap()["version"]
                .as_i64()
                .unwrap(),
        );
    }
    versions.sort();
    assert_eq!(
        versions,
        (2..=51).collect::<Vec<i64>>(),
        "each patch got its own version"
    );
    let stored = glycoweek::store::sessions::get(&app.db, session)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.version, 51);
    assert!(stored.notes.unwrap().starts_with("edit "));
}

#[tokio::test]
async fn fifty_concurrent_patches_with_the_same_if_match_let_exactly_one_win() {
    let app = spawn_app().await;
    let team = app.team("Race").await;
    let session = app.session(team, "2026-12-08").await;
    let url = Arc::new(format!("{}/v1/sessions/{session}", app.base));
    let admin = Arc::new(app.admin.clone());
    let mut tasks = Vec::new();
    for (i, client) in clients(50).into_iter().enumerate() {
        let (url, admin) = (url.clone(), admin.clone());
        tasks.push(tokio::spawn(async move {
            let res = client
                .patch(url.as_str())
                .bearer_auth(admin.as_str())
                .header("if-match", "\"v1\"")
                .json(&json!({"title": format!("Title {i}")}))
                .send()
                .await
                .unwrap();
            res.status().as_u16()
        }));
    }
    let mut statuses = Vec::new();
    for task in tasks {
        statuses.push(task.await.unwrap());
    }
    assert_eq!(
        statuses.iter().filter(|s| **s == 200).count(),
        1,
        "{statuses:?}"
    );
    assert_eq!(
        statuses.iter().filter(|s| **s == 412).count(),
        49,
        "{statuses:?}"
    );
    let stored = glycoweek::store::sessions::get(&app.db, session)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(stored.version, 2);
}

#[tokio::test]

async fn concurrent_patches_of_different_fields_without_if_match_lose_no_update() {
    let app = spawn_app().await;
    let team = app.team("Merge").await;
    let url = Arc::new(app.base.clone());
    let admin = Arc::new(app.admin.clone());
    // Many sessions, each patched by four writers at once on four different fields.
    let mut sessions = Vec::new();
    for day in 7..=13 {
        sessions.push(app.session(team, &format!("2026-12-{day:02}")).await);
    }
    let patches = [
        json!({"title": "New title"}),
        json!({"notes": "new notes"}),
        json!({"start_time": "18:45"}),
        json!({"key_session": true}),
    ];
    let mut tasks = Vec::new();
    for session in &sessions {
        for patch in &patches {
            let (url, admin, patch, session) =
                (url.clone(), admin.clone(), patch.clone(), *session);
            tasks.push(tokio::spawn(async move {
                let res = Client::new()
                    .patch(format!("{url}/v1/sessions/{session}"))
                    .bearer_auth(admin.as_str())
                    .json(&patch)
                    .send()
                    .await
                    .unwrap();
                res.status().as_u16()
            }));
        }
    }
    for task in tasks {
        assert_eq!(task.await.unwrap(), 200);
    }
    for session in sessions {
        let s = glycoweek::store::sessions::get(&app.db, session)
            .await
            .unwrap()
            .unwrap();
        assert_eq!(s.version, 5);
        assert_eq!(
            (
                s.title.as_str(),
                s.notes.as_deref(),
                s.start_time.to_string().as_str(),
                s.key_session
            ),
            ("New title", Some("new notes"), "18:45:00", true),
            "session {session} lost an update"
        );
    }
}
