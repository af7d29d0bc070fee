//! The squad board over HTTP: sessions, CSRF and read-only refusals, and
//! that the API keeps answering as before. (Rendering, numbers and the
//! browser flow are covered by tests/browser/board_test.py in Chromium.)

use reqwest::redirect::Policy;
use reqwest::{Client, StatusCode, header};
use serde_json::Value;

use crate::helpers::{TestApp, spawn_app};

fn browser() -> Client {
    Client::builder()
        .redirect(Policy::none())
        .build()
        .expect("client")
}

/// Signs in and returns the session cookie (`name=value`).
async fn sign_in(app: &TestApp, token: &str) -> reqwest::Response {
    browser()
        .post(format!("{}/board/sign-in", app.base))
        .header(header::ORIGIN, &app.base)
        .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
        .body(serde_urlencoded::to_string([("token", token), ("next", "/board")]).unwrap())
        .send()
        .await
        .expect("send")
}

async fn cookie(app: &TestApp, token: &str) -> String {
    let res = sign_in(app, token).await;
    assert_eq!(res.status(), StatusCode::SEE_OTHER);
    let set = res.headers()[header::SET_COOKIE]
        .to_str()
        .unwrap()
        .to_owned();
    assert!(
        set.contains("HttpOnly") && set.contains("SameSite=Strict"),
        "{set}"
    );
    set.split(';').next().unwrap().to_owned()
}

async fn get(app: &TestApp, cookie: &str, path: &str) -> reqwest::Response {
    browser()
        .get(format!("{}{path}", app.base))
        .header(header::COOKIE, cookie)
        .send()
        .await
        .expect("send")
}

fn csrf_of(html: &str) -> String {
    let at = html.find(r#"name="csrf" value=""#).expect("csrf field") + 19;
    html[at..at + 64].to_owned()
}

#[tokio::test]
async fn board_pages_need_a_sign_in_and_send_you_back_after_it() {
    let app = spawn_app().await;
    let team = app.team("Board FC").await;
    let res = get(&app, "", &format!("/board/teams/{team}")).await;
    assert_eq!(res.status(), StatusCode::SEE_OTHER);
    let to = res.headers()[header::LOCATION].to_str().unwrap();
    assert!(
        to.starts_with("/board/sign-in?next=%2Fboard%2Fteams%2F"),
        "{to}"
    );
    let res = get(&app, "", "/board/sign-in").await;
    assert_eq!(res.status(), 200);
    let csp = res.headers()[header::CONTENT_SECURITY_POLICY]
        .to_str()
        .unwrap();
    assert!(csp.contains("script-src 'self'") && csp.contains("frame-ancestors 'none'"));
}

#[tokio::test]
async fn a_wrong_token_does_not_sign_in_and_the_api_still_takes_bearer_tokens() {
    let app = spawn_app().await;
    let res = sign_in(&app, "gwk_not-a-token").await;
    assert_eq!(res.status(), StatusCode::UNAUTHORIZED);
    assert!(res.headers().get(header::SET_COOKIE).is_none());
    assert!(res.text().await.unwrap().contains("not valid"));
    let api = app.get("/v1/teams", &app.admin).await;
    assert_eq!(api.status(), 200);
    // Unknown routes outside the board still answer problem+json.
    let res = app.get("/v1/nothing-here", &app.admin).await;
    assert_eq!(res.status(), 404);
    assert_eq!(
        res.headers()[header::CONTENT_TYPE],
        "application/problem+json"
    );
}

#[tokio::test]
async fn a_sign_in_from_another_site_is_refused() {
    let app = spawn_app().await;
    let res = browser()
        .post(format!("{}/board/sign-in", app.base))
        .header(header::ORIGIN, "https://elsewhere.invalid")
        .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
        .body(serde_urlencoded::to_string([("token", app.admin.as_str())]).unwrap())
        .send()
        .await
        .unwrap();
    assert_eq!(res.status(), StatusCode::FORBIDDEN);
    assert!(res.headers().get(header::SET_COOKIE).is_none());
}

#[tokio::test]
async fn signing_out_or_revoking_the_token_ends_the_session_on_the_server() {
    let app = spawn_app().await;
    let team = app.team("Board FC").await;
    let planner = app.token("planner", team).await;
    let session = cookie(&app, &planner).await;
    let page = get(&app, &session, &format!("/board/teams/{team}")).await;
    assert_eq!(page.status(), 200);
    let html = page.text().await.unwrap();
    let res = browser()
        .post(format!("{}/board/sign-out", app.base))
        .header(header::COOKIE, &session)
        .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
        .body(serde_urlencoded::to_string([("csrf", csrf_of(&html))]).unwrap())
        .send()
        .await
        .unwrap();
    assert_eq!(res.status(), StatusCode::SEE_OTHER);
    let after = get(&app, &session, &format!("/board/teams/{team}")).await;
    assert_eq!(
        after.status(),
        StatusCode::SEE_OTHER,
        "the old cookie is dead"
    );

    // Revocation of the token ends its sessions at once.
    let session = cookie(&app, &planner).await;
    let tokens: Value = app
        .get("/v1/tokens", &app.admin)
        .await
        .json()
        .await
        .unwrap();
    let id = tokens["items"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["role"] == "planner")
        .unwrap()["id"]
        .as_str()
        .unwrap()
        .to_owned();
    let res = app
        .delete(&format!("/v1/tokens/{id}"), &app.admin, None)
        .await;
    assert!(res.status().is_success(), "{}", res.status());
    let after = get(&app, &session, &format!("/board/teams/{team}")).await;
    assert_eq!(after.status(), StatusCode::SEE_OTHER);
}

#[tokio::test]
async fn board_writes_need_the_csrf_token_and_a_writing_role() {
    let app = spawn_app().await;
    let team = app.team("Board FC").await;
    let session_id = app.session(team, "2026-12-08").await;
    let planner = cookie(&app, &app.token("planner", team).await).await;
    let reader = cookie(&app, &app.token("reader", team).await).await;
    let move_to = |cookie: &str, csrf: &str| {
        browser()
            .post(format!("{}/board/sessions/{session_id}/move", app.base))
            .header(header::COOKIE, cookie)
            .header(header::CONTENT_TYPE, "application/x-www-form-urlencoded")
            .body(
                serde_urlencoded::to_string([
                    ("csrf", csrf),
                    ("local_date", "2026-12-09"),
                    ("start_time", "16:00"),
                    ("version", "1"),
                ])
                .unwrap(),
            )
            .send()
    };
    // No CSRF token.
    let res = move_to(&planner, "").await.unwrap();
    assert_eq!(res.status(), StatusCode::FORBIDDEN);
    // A reader's own CSRF token: the API refuses the write.
    let page = get(&app, &reader, &format!("/board/sessions/{session_id}")).await;
    let html = page.text().await.unwrap();
    assert!(!html.contains("/move\""), "no move form for a reader");
    let res = move_to(&reader, &csrf_of(&html)).await.unwrap();
    assert_eq!(res.status(), StatusCode::FORBIDDEN);
    let stored: Value = app
        .get(&format!("/v1/sessions/{session_id}"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    assert_eq!(stored["local_date"], "2026-12-08", "nothing changed");
    // The planner with the token moves it, and lands on what changed.
    let page = get(&app, &planner, &format!("/board/sessions/{session_id}")).await;
    let csrf = csrf_of(&page.text().await.unwrap());
    let res = move_to(&planner, &csrf).await.unwrap();
    assert_eq!(res.status(), StatusCode::SEE_OTHER);
    let to = res.headers()[header::LOCATION].to_str().unwrap();
    assert!(to.contains("/changes?since="), "{to}");
    let stored: Value = app
        .get(&format!("/v1/sessions/{session_id}"), &app.admin)
        .await
        .json()
        .await
        .unwrap();
    assert_eq!(stored["local_date"], "2026-12-09");
    assert_eq!(stored["start_time"], "16:00");
    // The same stale version again: a 412 page, with the typed values kept.
    let res = move_to(&planner, &csrf).await.unwrap();
    assert_eq!(res.status(), StatusCode::PRECONDITION_FAILED);
    let html = res.text().await.unwrap();
    assert!(html.contains("Someone else changed this session"));
    assert!(html.contains(r#"value="16:00""#));
}

#[tokio::test]
async fn bad_board_addresses_get_pages_not_crashes() {
    let app = spawn_app().await;
    let team = app.team("Board FC").await;
    let planner = cookie(&app, &app.token("planner", team).await).await;
    for path in [
        "/board/teams/not-a-uuid",
        "/board/athletes/00000000-0000-0000-0000-000000000000",
        "/board/sessions/%ZZ",
        "/board/nothing",
        "/board/teams/{team}/changes",
    ] {
        let path = path.replace("{team}", &team.to_string());
        let res = get(&app, &planner, &path).await;
        assert!(res.status().is_client_error(), "{path}: {}", res.status());
        let ct = res.headers()[header::CONTENT_TYPE]
            .to_str()
            .unwrap()
            .to_owned();
        assert!(ct.starts_with("text/html"), "{path}: {ct}");
    }
    let res = get(
        &app,
        &planner,
        &format!("/board/teams/{team}?week=2026-W99"),
    )
    .await;
    assert_eq!(res.status(), StatusCode::UNPROCESSABLE_ENTITY);
}

#[tokio::test]
async fn the_athlete_page_shows_each_numbers_source_and_local_times_from_the_wire_shape() {
    // The API sends sources once per response (`source_id` + `sources`) and
    // local times with their offset; the page must still show both.
    let app = spawn_app().await;
    let team = app.team("Board FC").await;
    let athlete = app.athlete(team, "Ines Ilbery").await;
    app.session(team, "2026-12-08").await;
    let planner = cookie(&app, &app.token("planner", team).await).await;
    let plan: Value = app
        .get(
            &format!("/v1/athletes/{athlete}/plan?from=2026-12-07&to=2026-12-13"),
            &app.admin,
        )
        .await
        .json()
        .await
        .unwrap();
    let sources = plan["sources"].as_array().expect("sources table");
    assert!(!sources.is_empty());
    let page = get(
        &app,
        &planner,
        &format!("/board/athletes/{athlete}?week=2026-W50"),
    )
    .await;
    assert_eq!(page.status(), 200);
    let html = page.text().await.unwrap();
    let shown = sources
        .iter()
        .filter(|s| {
            let text = s["text"].as_str().unwrap();
            html.contains(
                &text
                    .replace('&', "&amp;")
                    .replace('<', "&lt;")
                    .replace('>', "&gt;")
                    .replace('"', "&quot;")
                    .replace('\'', "&#39;"),
            )
        })
        .count();
    assert!(shown > 0, "no source text of the plan is on the page");
    assert!(
        html.contains("10:00"),
        "the session's local start time is shown"
    );
}
