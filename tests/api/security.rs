//! Authentication, roles and team scope; tokens and the audit trail.

use reqwest::Method;
use serde_json::{Value, json};
use uuid::Uuid;

use crate::helpers::*;

#[tokio::test]
async fn a_request_without_a_token_is_401_problem_json() {
    let app = spawn_app().await;
    let team = app.team("Locked").await;
    for path in [
        "/v1/teams".to_owned(),
        format!("/v1/teams/{team}"),
        "/v1/tokens".to_owned(),
    ] {
        let res = app.req(Method::GET, &path, None).send().await.unwrap();
        let p = problem(res, 401).await;
        assert_eq!(p["type"], "/problems/unauthorized");
    }
    let res = app
        .req(Method::POST, &format!("/v1/teams/{team}/sessions"), None)
        .json(&session_body("2026-12-08", "10:00"))
        .send()
        .await
        .unwrap();
    problem(res, 401).await;
    let res = app
        .req(Method::GET, "/openapi.json", None)
        .send()
        .await
        .unwrap();
    assert_eq!(res.status(), 200, "the API description needs no token");
}

#[tokio::test]
async fn a_malformed_or_unknown_token_is_401() {
    let app = spawn_app().await;
    let headers = [
        "Bearer gwk_0000000000000000000000000000000000000000000000000000000000000000",
        "Bearer ",
        "Basic dXNlcjpwYXNz",
        &format!("Bearer {}", "a".repeat(300)),
        &format!("Token {}", app.admin),
        "bearer",
    ];
    for value in headers {
        let res = app
            .client
            .get(format!("{}/v1/teams", app.base))
            .header("authorization", value)
            .send()
            .await
            .unwrap();
        problem(res, 401).await;
    }
    let res = app
        .client
        .get(format!("{}/v1/teams", app.base))
        .header("authorization", format!("bearer {}", app.admin))
        .send()
        .await
        .unwrap();
    assert_eq!(res.status(), 200, "the scheme is case-insensitive");
}

#[tokio::test]
async fn a_revoked_token_is_refused_at_once() {
    let app = spawn_app().await;
    let team = app.team("Revoke").await;
    let created = body(
        app.post(
            "/v1/tokens",
            &app.admin,
            &json!({"label": "tablet", "role": "planner", "team_id": team}),
        )
        .await,
        201,
    )
    .await;
    let secret = created["secret"].as_str().unwrap().to_owned();
    let id = id_of(&created);
    assert_eq!(app.get("/v1/teams", &secret).await.status(), 200);
    let revoked = body(
        app.delete(&format!("/v1/tokens/{id}"), &app.admin, None)
            .await,
        200,
    )
    .await;
    assert!(revoked["revoked_at"].is_string());
    problem(app.get("/v1/teams", &secret).await, 401).await;
    problem(
        app.post(
            &format!("/v1/teams/{team}/sessions"),
            &secret,
            &session_body("2026-12-08", "10:00"),
        )
        .await,
        401,
    )
    .await;
    let stored = glycoweek::store::tokens::get(&app.db, id)
        .await
        .unwrap()
        .unwrap();
    assert!(stored.revoked_at.is_some());
    // Revoking twice is harmless and keeps the first time.
    let again = body(
        app.delete(&format!("/v1/tokens/{id}"), &app.admin, None)
            .await,
        200,
    )
    .await;
    assert_eq!(again["revoked_at"], revoked["revoked_at"]);
}

#[tokio::test]
async fn a_reader_token_reads_but_every_write_is_403() {
    let app = spawn_app().await;
    let team = app.team("Readers").await;
    let athlete = app.athlete(team, "Read").await;
    let session = app.session(team, "2026-12-08").await;
    let reader = app.token("reader", team).await;

    assert_eq!(
        app.get(&format!("/v1/teams/{team}/athletes"), &reader)
            .await
            .status(),
        200
    );
    assert_eq!(
        app.get(&format!("/v1/sessions/{session}"), &reader)
            .await
            .status(),
        200
    );
    assert_eq!(
        app.get(&format!("/v1/athletes/{athlete}/body-mass"), &reader)
            .await
            .status(),
        200
    );
    assert_eq!(
        app.get(&format!("/v1/sessions/{session}/participation"), &reader)
            .await
            .status(),
        200
    );

    let writes = [
        app.post(
            &format!("/v1/teams/{team}/sessions"),
            &reader,
            &session_body("2026-12-09", "10:00"),
        )
        .await,
        app.post(
            &format!("/v1/teams/{team}/sessions/import"),
            &reader,
            &json!({"sessions": [session_body("2026-12-09", "10:00")]}),
        )
        .await,
        app.patch(
            &format!("/v1/sessions/{session}"),
            &reader,
            &json!({"title": "x"}),
            None,
        )
        .await,
        app.delete(&format!("/v1/sessions/{session}"), &reader, None)
            .await,
        app.post(
            &format!("/v1/teams/{team}/athletes"),
            &reader,
            &athlete_body("New"),
        )
        .await,
        app.patch(
            &format!("/v1/athletes/{athlete}"),
            &reader,
            &json!({"height_cm": 170}),
            None,
        )
        .await,
        app.delete(&format!("/v1/athletes/{athlete}"), &reader, None)
            .await,
        app.post(
            &format!("/v1/athletes/{athlete}/body-mass"),
            &reader,
            &json!({"measured_on": "2026-11-20", "body_mass_kg": 60}),
        )
        .await,
        app.put(
            &format!("/v1/sessions/{session}/participation/{athlete}"),
            &reader,
            &json!({"mode": "skipped"}),
        )
        .await,
        app.post(
            "/v1/tokens",
            &reader,
            &json!({"label": "more", "role": "reader", "team_id": team}),
        )
        .await,
    ];
    for res in writes {
        let p = problem(res, 403).await;
        assert_eq!(p["type"], "/problems/forbidden");
    }
    let sessions = glycoweek::store::sessions::list(
        &app.db,
        team,
        ("2000-01-01".parse().unwrap(), "2100-12-31".parse().unwrap()),
        None,
        None,
        50,
    )
    .await
    .unwrap();
    assert_eq!(sessions.len(), 1);
    assert_eq!(sessions[0].title, "Pitch session");
    assert_eq!(sessions[0].version, 1);
    let a = glycoweek::store::athletes::get(&app.db, athlete)
        .await
        .unwrap()
        .unwrap();
    assert_eq!(a.version, 1);
}

#[tokio::test]
async fn a_planner_of_team_a_gets_404_for_every_team_b_resource() {
    let app = spawn_app().await;
    let team_a = app.team("A").await;
    let team_b = app.team("B").await;
    let athlete_b = app.athlete(team_b, "B athlete").await;
    let session_b = app.session(team_b, "2026-12-08").await;
    let reading_b = body(
        app.get(&format!("/v1/athletes/{athlete_b}/body-mass"), &app.admin)
            .await,
        200,
    )
    .await["items"][0]["id"]
        .as_str()
        .unwrap()
        .to_owned();
    let token_b = body(
        app.post(
            "/v1/tokens",
            &app.admin,
            &json!({"label": "b", "role": "reader", "team_id": team_b}),
        )
        .await,
        201,
    )
    .await;
    let token_b = id_of(&token_b);
    let planner_a = app.token("planner", team_a).await;

    let gets = [
        format!("/v1/teams/{team_b}"),
        format!("/v1/teams/{team_b}/athletes"),
        format!("/v1/teams/{team_b}/sessions"),
        format!("/v1/teams/{team_b}/audit"),
        format!("/v1/athletes/{athlete_b}"),
        format!("/v1/athletes/{athlete_b}/body-mass"),
        format!("/v1/athletes/{athlete_b}/body-mass/{reading_b}"),
        format!("/v1/sessions/{session_b}"),
        format!("/v1/sessions/{session_b}/participation"),
        format!("/v1/sessions/{session_b}/participation/{athlete_b}"),
        format!("/v1/tokens/{token_b}"),
    ];
    for path in &gets {
        let p = problem(app.get(path, &planner_a).await, 404).await;
        assert_eq!(p["type"], "/problems/not-found", "{path}");
    }
    // The answer is the same as for an id that does not exist.
    let absent = problem(
        app.get(&format!("/v1/sessions/{}", Uuid::now_v7()), &planner_a)
            .await,
        404,
    )
    .await;
    let foreign = problem(
        app.get(&format!("/v1/sessions/{session_b}"), &planner_a)
            .await,
        404,
    )
    .await;
    assert_eq!(absent["detail"], foreign["detail"]);

    let writes = [
        app.patch(
            &format!("/v1/teams/{team_b}"),
            &planner_a,
            &json!({"name": "Taken"}),
            None,
        )
        .await,
        app.delete(&format!("/v1/teams/{team_b}"), &planner_a, None)
            .await,
        app.post(
            &format!("/v1/teams/{team_b}/sessions"),
            &planner_a,
            &session_body("2026-12-09", "10:00"),
        )
        .await,
        app.post(
            &format!("/v1/teams/{team_b}/sessions/import"),
            &planner_a,
            &json!({"sessions": [session_body("2026-12-09", "10:00")]}),
        )
        .await,
        app.post(
            &format!("/v1/teams/{team_b}/athletes"),
            &planner_a,
            &athlete_body("Spy"),
        )
        .await,
        app.patch(
            &format!("/v1/athletes/{athlete_b}"),
            &planner_a,
            &json!({"height_cm": 170}),
            None,
        )
        .await,
        app.delete(&format!("/v1/athletes/{athlete_b}"), &planner_a, None)
            .await,
        app.delete(
            &format!("/v1/athletes/{athlete_b}/body-mass/{reading_b}"),
            &planner_a,
            None,
        )
        .await,
        app.patch(
            &format!("/v1/sessions/{session_b}"),
            &planner_a,
            &json!({"title": "x"}),
            None,
        )
        .await,
        app.delete(&format!("/v1/sessions/{session_b}"), &planner_a, None)
            .await,
        app.put(
            &format!("/v1/sessions/{session_b}/participation/{athlete_b}"),
            &planner_a,
            &json!({"mode": "skipped"}),
        )
        .await,
        app.delete(&format!("/v1/tokens/{token_b}"), &planner_a, None)
            .await,
    ];
    for res in writes {
        problem(res, 404).await;
    }
    assert!(
        glycoweek::store::teams::get(&app.db, team_b)
            .await
            .unwrap()
            .is_some()
    );
    assert!(
        glycoweek::store::athletes::get(&app.db, athlete_b)
            .await
            .unwrap()
            .unwrap()
            .version
            == 1
    );
    assert!(
        glycoweek::store::sessions::get(&app.db, session_b)
            .await
            .unwrap()
            .unwrap()
            .version
            == 1
    );
    assert!(
        glycoweek::store::tokens::get(&app.db, token_b)
            .await
            .unwrap()
            .unwrap()
            .revoked_at
            .is_none()
    );
    let list = body(app.get("/v1/tokens", &planner_a).await, 200).await;
    assert!(
        list["items"]
            .as_array()
            .unwrap()
            .iter()
            .all(|t| t["team_id"] == team_a.to_string())
    );
}

#[tokio::test]
async fn an_admin_creates_lists_reads_and_revokes_tokens_and_only_a_hash_is_stored() {
    let app = spawn_app().await;
    let team = app.team("Tokens").await;
    let res = app
        .post(
            "/v1/tokens",
            &app.admin,
            &json!({"label": "club app", "role": "reader", "team_id": team}),
        )
        .await;
    let created = body(res, 201).await;
    let id = id_of(&created);
    let secret = created["secret"].as_str().unwrap().to_owned();
    assert!(secret.starts_with("gwk_") && secret.len() > 40);
    assert_eq!(created["role"], "reader");
    assert_eq!(created["team_id"], team.to_string());
    assert!(created["revoked_at"].is_null());

    let stored: Vec<u8> = sqlx::query_scalar("SELECT token_hash FROM api_tokens WHERE id = ?")
        .bind(id.to_string())
        .fetch_one(&app.db.read)
        .await
        .unwrap();
    assert_eq!(stored, glycoweek::store::tokens::hash_secret(&secret));
    assert!(!String::from_utf8_lossy(&stored).contains(&secret));

    let read = body(app.get(&format!("/v1/tokens/{id}"), &app.admin).await, 200).await;
    assert_eq!(read["label"], "club app");
    assert!(
        read.get("secret").is_none(),
        "the secret is shown once only"
    );

    let admin2 = body(
        app.post(
            "/v1/tokens",
            &app.admin,
            &json!({"label": "ops", "role": "admin"}),
        )
        .await,
        201,
    )
    .await;
    let (all, _) = app.all_pages("/v1/tokens?limit=1", &app.admin).await;
    let listed = ids(&all);
    assert!(listed.contains(&id) && listed.contains(&id_of(&admin2)));
    assert_eq!(
        listed.len(),
        3,
        "the test admin, the reader and the second admin"
    );
    assert!(all.iter().all(|t| t.get("secret").is_none()));

    let revoked = body(
        app.delete(&format!("/v1/tokens/{id}"), &app.admin, None)
            .await,
        200,
    )
    .await;
    assert!(revoked["revoked_at"].is_string());
    problem(app.get("/v1/teams", &secret).await, 401).await;
    problem(
        app.get(&format!("/v1/tokens/{}", Uuid::now_v7()), &app.admin)
            .await,
        404,
    )
    .await;
}

#[tokio::test]
async fn a_planner_manages_its_own_team_tokens_but_never_admin_or_other_team_tokens() {
    let app = spawn_app().await;
    let team = app.team("Own").await;
    let other = app.team("Foreign").await;
    let planner = app.token("planner", team).await;
    let res = app
        .post(
            "/v1/tokens",
            &planner,
            &json!({"label": "tablet", "role": "reader", "team_id": team}),
        )
        .await;
    let reader = body(res, 201).await;
    let reader_secret = reader["secret"].as_str().unwrap().to_owned();
    assert_eq!(
        app.get(&format!("/v1/teams/{team}/sessions"), &reader_secret)
            .await
            .status(),
        200
    );

    problem(
        app.post(
            "/v1/tokens",
            &planner,
            &json!({"label": "root", "role": "admin"}),
        )
        .await,
        403,
    )
    .await;
    let res = app
        .post(
            "/v1/tokens",
            &planner,
            &json!({"label": "x", "role": "reader", "team_id": other}),
        )
        .await;
    assert_eq!(res.status(), 404);
    let admin_id = body(app.get("/v1/tokens", &app.admin).await, 200).await["items"]
        .as_array()
        .unwrap()
        .iter()
        .find(|t| t["role"] == "admin")
        .map(id_of)
        .unwrap();
    problem(
        app.get(&format!("/v1/tokens/{admin_id}"), &planner).await,
        404,
    )
    .await;
    problem(
        app.delete(&format!("/v1/tokens/{admin_id}"), &planner, None)
            .await,
        404,
    )
    .await;

    let list = body(app.get("/v1/tokens", &planner).await, 200).await;
    assert_eq!(
        list["items"].as_array().unwrap().len(),
        2,
        "the planner and the reader it made"
    );
    assert_eq!(
        body(
            app.delete(&format!("/v1/tokens/{}", id_of(&reader)), &planner, None)
                .await,
            200
        )
        .await["id"],
        reader["id"]
    );
    problem(app.get("/v1/teams", &reader_secret).await, 401).await;
    problem(app.get("/v1/tokens", &reader_secret).await, 401).await;
}

#[tokio::test]
async fn token_input_is_validated() {
    let app = spawn_app().await;
    let team = app.team("Token rules").await;
    let cases = [
        (
            json!({"label": "a", "role": "admin", "team_id": team}),
            "team_id",
        ),
        (json!({"label": "a", "role": "reader"}), "team_id"),
        (json!({"label": "", "role": "admin"}), "label"),
        (json!({"label": "a", "role": "owner"}), "role"),
        (
            json!({"label": "a", "role": "reader", "team_id": Uuid::now_v7()}),
            "team_id",
        ),
        (
            json!({"label": "a", "role": "reader", "team_id": "not-a-uuid"}),
            "team_id",
        ),
    ];
    for (input, field) in cases {
        let p = problem(app.post("/v1/tokens", &app.admin, &input).await, 422).await;
        assert_eq!(fields(&p), vec![field], "{input}");
    }
    let (all, _) = app.all_pages("/v1/tokens?limit=200", &app.admin).await;
    assert_eq!(all.len(), 1, "only the test admin exists");
}

#[tokio::test]
async fn the_audit_trail_records_who_changed_what_with_before_and_after_and_pages_by_seq() {
    let app = spawn_app().await;
    let team = app.team("Audited").await;
    let other = app.team("Unrelated").await;
    app.session(other, "2026-12-08").await;
    let planner = app.token("planner", team).await;
    let planner_id =
        body(app.get("/v1/tokens", &planner).await, 200).await["items"][0]["id"].clone();
    let res = app
        .post(
            &format!("/v1/teams/{team}/sessions"),
            &planner,
            &session_body("2026-12-08", "10:00"),
        )
        .await;
    let session = id_of(&body(res, 201).await);
    body(
        app.patch(
            &format!("/v1/sessions/{session}"),
            &planner,
            &json!({"title": "Renamed"}),
            None,
        )
        .await,
        200,
    )
    .await;
    assert_eq!(
        app.delete(&format!("/v1/sessions/{session}"), &planner, None)
            .await
            .status(),
        204
    );

    let trail = body(
        app.get(&format!("/v1/teams/{team}/audit"), &planner).await,
        200,
    )
    .await;
    let trail = trail["items"].as_array().unwrap();
    assert!(
        trail.iter().all(|e| e["team_id"] == team.to_string()),
        "only this team's entries"
    );
    let of_session: Vec<&Value> = trail
        .iter()
        .filter(|e| e["entity_id"] == session.to_string())
        .collect();
    let actions: Vec<&str> = of_session
        .iter()
        .map(|e| e["action"].as_str().unwrap())
        .collect();
    assert_eq!(actions, ["create", "update", "delete"]);
    assert!(
        of_session
            .iter()
            .all(|e| e["token_id"] == planner_id && e["entity_type"] == "session")
    );
    assert!(of_session[0]["before"].is_null());
    assert_eq!(of_session[0]["after"]["title"], "Pitch session");
    assert_eq!(of_session[1]["before"]["title"], "Pitch session");
    assert_eq!(of_session[1]["after"]["title"], "Renamed");
    assert_eq!(of_session[2]["before"]["title"], "Renamed");
    assert!(of_session[2]["after"].is_null());
    let seqs: Vec<i64> = trail.iter().map(|e| e["seq"].as_i64().unwrap()).collect();
    assert!(seqs.windows(2).all(|w| w[0] < w[1]), "oldest first");

    let first_two = body(
        app.get(&format!("/v1/teams/{team}/audit?limit=2"), &planner)
            .await,
        200,
    )
    .await;
    let after = first_two["items"][1]["seq"].as_i64().unwrap();
    let rest = body(
        app.get(&format!("/v1/teams/{team}/audit?after={after}"), &planner)
            .await,
        200,
    )
    .await;
    let mut joined = first_two["items"].as_array().unwrap().clone();
    joined.extend(rest["items"].as_array().unwrap().iter().cloned());
    assert_eq!(&joined, trail);
    // The cursor of the first page leads to the same rest.
    let cursor = first_two["next_cursor"].as_str().unwrap();
    let by_cursor = body(
        app.get(&format!("/v1/teams/{team}/audit?cursor={cursor}"), &planner)
            .await,
        200,
    )
    .await;
    assert_eq!(by_cursor["items"], rest["items"]);

    let reader = app.token("reader", team).await;
    problem(
        app.get(&format!("/v1/teams/{team}/audit"), &reader).await,
        403,
    )
    .await;
}
